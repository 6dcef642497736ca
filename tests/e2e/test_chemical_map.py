"""The experimental chemical picture on the map, in a real browser: H2 shading, the H2 half-dissociation line and
the edges of the two-phase regions, with their words on the plot."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import annotation_texts, trace_values

pytestmark = pytest.mark.e2e

# the chemical picture costs far more per point than the default: a coarse grid keeps the test quick
VIEW = "?ionization=chemical&resolution=60&quantity=log_h2_fraction"
TIMEOUT = 300000
H2_X = trace_values("plane-graph", "h2_dissociation", "x")
COEX_X = trace_values("plane-graph", "coexistence", "x")
LABELS = annotation_texts("plane-graph")


def test_h2_shading_and_the_chemical_lines(server_url, page):
    page.goto(server_url + VIEW)
    page.wait_for_function(f"() => {{ const x = ({H2_X})(); return x && x.length > 10; }}", timeout=TIMEOUT)
    page.wait_for_function(f"() => {{ const x = ({COEX_X})(); return x && x.filter(v => v !== null).length > 2; }}",
                           timeout=TIMEOUT)
    labels = " | ".join(page.evaluate(LABELS))
    assert "H₂ half dissociated" in labels and "two phases coexist" in labels
    assert page.locator("#phys-ionization input[value='chemical']").is_checked()
    screenshot(page, "chemical_picture_h2")
    assert page.console_errors == []
