"""Neutrino losses and capture thresholds in a real browser: shading, dominant-process map, lines, readout."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import trace_values

pytestmark = pytest.mark.e2e

TIMEOUT = 120000
# an O-Ne-Mg-like mixture with carbon, carbon burning chosen; textbook EOS keeps it quick
VIEW = ("?electrons=classical&ionization=full&coulomb=0&pairs=0&resolution=150"
        "&mix_on=1&mix=C-12%3D0.3%2CO-16%3D0.5%2CNe-20%3D0.15%2CMg-24%3D0.05&processes=carbon")
HEAT_TITLE = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  if (!gd || !gd.data) return null; const t = gd.data.find(d => d.type === 'heatmap');
  return t ? (t.colorbar && t.colorbar.title ? t.colorbar.title.text : 'categorical') : null; }"""
LABELS = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  return gd && gd.layout && gd.layout.annotations ? gd.layout.annotations.map(a => a.text) : []; }"""
LEGEND = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  return gd && gd.data ? gd.data.filter(d => d.showlegend && d.type === 'scatter').map(d => d.name) : []; }"""


def _choose(pg, dropdown_id, text):
    pg.click(f"#{dropdown_id}")
    pg.get_by_role("option", name=text, exact=True).click()


def test_neutrino_shading_lines_and_dominant_process(server_url, page):
    page.goto(server_url + VIEW)
    ignition_y = trace_values("plane-graph", "nu_ignition_carbon", "y")
    page.wait_for_function(f"() => {{ const y = ({ignition_y})(); return y && y.length > 10; }}", timeout=TIMEOUT)

    _choose(page, "map-quantity", "log₁₀ ε_ν neutrino losses (erg g⁻¹ s⁻¹)")
    page.wait_for_function(f"() => String(({HEAT_TITLE})()).startsWith('log₁₀ ε_ν neutrino losses (erg g⁻¹ s⁻¹)')",
                           timeout=TIMEOUT)
    labels = page.evaluate(LABELS)
    assert "carbon ignition (ε_nuc = ε_ν)" in labels
    assert "e⁻ capture on ²⁴Mg" in labels and "e⁻ capture on ²⁰Ne" in labels
    y = page.evaluate(ignition_y)
    assert 8.3 < min(y) < 9.0 and max(y) <= 10.0          # coolest near 10^8.6 K (dense end), hotter when dilute
    x = page.evaluate(trace_values("plane-graph", "capture_Mg-24", "x"))
    assert x and abs(x[0] - 9.5) < 0.1                  # rho_thr = 3.2e9 g cm^-3 for mu_e = 2
    assert "log_eps_nu" in page.input_value("#share-link")
    screenshot(page, "neutrino_losses")

    _choose(page, "map-quantity", "dominant neutrino process")
    page.wait_for_function(f"() => String(({HEAT_TITLE})()).startsWith('categorical')", timeout=TIMEOUT)
    assert page.evaluate(LEGEND) == ["pair annihilation", "photo-neutrino", "plasmon decay", "bremsstrahlung"]
    box = page.locator("#plane-graph .nsewdrag").first.bounding_box()
    # log rho = -5, log T = 9.7 (hot and dilute): pairs
    page.mouse.move(box["x"] + 0.25 * box["width"], box["y"] + (1 - 6.7 / 7) * box["height"])
    page.wait_for_function("() => document.querySelector('#hover-readout').innerText.includes('pair annihilation')",
                           timeout=TIMEOUT)
    # pin a point: the readout lists eps_nu and its parts
    page.mouse.click(box["x"] + 0.8 * box["width"], box["y"] + (1 - 5.5 / 7) * box["height"])
    page.wait_for_selector("#point-state-table:has-text('eps_nu_plasma')", timeout=TIMEOUT)
    assert "erg g^-1 s^-1" in page.inner_text("#point-state-table")
    screenshot(page, "neutrino_dominant_process")

    page.uncheck("#map-overlays input[value='captures']")
    page.wait_for_function("() => !(" + LABELS + ")().includes('e⁻ capture on ²⁴Mg')", timeout=TIMEOUT)
    assert page.console_errors == []
