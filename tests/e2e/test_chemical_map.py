"""The experimental chemical picture on the map, in a real browser: H2 shading, the H2 half-dissociation line and
the edges of the two-phase regions, with their words on the plot."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import annotation_texts, wait_for_line

pytestmark = pytest.mark.e2e

# the chemical picture costs far more per point than the default: a coarse grid keeps the test quick
VIEW = "?ionization=chemical&resolution=60&quantity=log_h2_fraction"
TIMEOUT = 300000
LABELS = annotation_texts("plane-graph")


def test_h2_shading_and_the_chemical_lines(server_url, page):
    page.goto(server_url + VIEW)
    wait_for_line(page, "plane-graph", "h2_dissociation", 10, TIMEOUT)
    wait_for_line(page, "plane-graph", "coexistence", 2, TIMEOUT)
    labels = " | ".join(page.evaluate(LABELS))
    assert "H₂ half dissociated" in labels and "two phases coexist" in labels
    assert page.locator("#phys-ionization input[value='chemical']").is_checked()
    screenshot(page, "chemical_picture_h2")
    assert page.console_errors == []
