"""The dense-plasma lines in a real browser: melting and quantum ions on the map, the c_V split on a pin."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import annotation_texts, wait_for_line

pytestmark = pytest.mark.e2e

# full physics (Coulomb terms on), carbon-oxygen, a coarse grid to keep the test quick
VIEW = "?mix=C-12%3D0.5%2CO-16%3D0.5&mix_on=1&resolution=120"
TIMEOUT = 180000
LABELS = annotation_texts("plane-graph")


def test_melting_and_quantum_ion_lines_and_cv_split(server_url, page):
    page.goto(server_url + VIEW)
    wait_for_line(page, "plane-graph", "crystallization", 10, TIMEOUT)
    wait_for_line(page, "plane-graph", "quantum_ions", 10, TIMEOUT)
    labels = " | ".join(page.evaluate(LABELS))
    assert "melting" in labels and "quantum ions" in labels
    screenshot(page, "dense_plasma_lines")
    # pin a point in the cold, dense corner: a crystal of quantum ions
    box = page.locator("#plane-graph .nsewdrag").first.bounding_box()
    # (x at 0.80: clear of the vertical capture line of H-1 near log rho 7.1, which takes the click)
    page.mouse.click(box["x"] + 0.80 * box["width"], box["y"] + 0.85 * box["height"])
    page.wait_for_function("() => document.querySelector('#point-heading').innerText.includes('c_V')",
                           timeout=TIMEOUT)
    heading = page.inner_text("#point-heading")
    assert "c_V" in heading and "ions" in heading and "electrons" in heading and "crystal" in heading
    assert "c_V_ion" in page.inner_text("#point-state-table")
    screenshot(page, "dense_plasma_pinned")
    assert page.console_errors == []
