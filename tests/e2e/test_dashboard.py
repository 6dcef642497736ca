"""The dashboard in a real browser: composition, shading, pinning, sharing, export, presentation."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot
from thermoplane import physics as ph
from tests.e2e.plotly_js import trace_values

pytestmark = pytest.mark.e2e

# Textbook physics and a coarser grid keep the browser tests quick; the full
# physics goes through the same callbacks (tests/app/test_callbacks.py).
FAST = "?electrons=classical&ionization=full&coulomb=0&pairs=0&resolution=120"
TIMEOUT = 120000
EQUALITY_Y = trace_values("plane-graph", "equality", "y")
HEAT_META = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  if (!gd || !gd.data) return null; const t = gd.data.find(d => d.type === 'heatmap');
  return t ? (t.colorbar && t.colorbar.title ? t.colorbar.title.text : 'categorical') : null; }"""


def _ready(pg):
    pg.wait_for_function(f"() => {{ const y = ({EQUALITY_Y})(); return y && y.length > 10; }}", timeout=TIMEOUT)
    pg.wait_for_function("() => document.querySelector('#share-link').value.includes('resolution=')",
                         timeout=TIMEOUT)


def _set(pg, selector, value):
    pg.fill(selector, str(value))
    pg.press(selector, "Enter")


def _choose(pg, dropdown_id, text):
    pg.click(f"#{dropdown_id}")
    pg.get_by_role("option", name=text, exact=True).click()


def _plot_point(pg, fx, fy):
    box = pg.locator("#plane-graph .nsewdrag").first.bounding_box()
    return box["x"] + fx * box["width"], box["y"] + (1 - fy) * box["height"]


def test_composition_quantity_and_pinned_point(server_url, page):
    page.goto(server_url + FAST)
    _ready(page)
    screenshot(page, "dashboard_default")
    before = page.evaluate(EQUALITY_Y)
    assert page.inner_text("#comp-readout").startswith("μ = 0.62")

    page.check("#comp-zauto input")                       # Z follows X and Y
    _set(page, "#comp-X", 0.2)                            # now Y=0.28, Z=0.52
    page.wait_for_function(f"(p) => {{ const y = ({EQUALITY_Y})(); return y && Math.abs(y[0] - p) > 1e-3; }}",
                           arg=before[0], timeout=TIMEOUT)
    assert page.input_value("#comp-Z") == "0.52"
    # the link is written by its own callback, which may land after the map under load
    page.wait_for_function("() => document.querySelector('#share-link').value.includes('X=0.2')", timeout=TIMEOUT)

    _choose(page, "map-quantity", "electron degeneracy η")
    page.wait_for_function(f"() => String(({HEAT_META})()).startsWith('electron degeneracy η')", timeout=TIMEOUT)
    x, y = _plot_point(page, 0.75, 0.2)                   # dense and cool: degenerate
    page.mouse.move(x, y)
    page.wait_for_function("() => document.querySelector('#hover-readout').innerText.includes('regime:')",
                           timeout=TIMEOUT)
    assert "electron degeneracy η" in page.inner_text("#hover-readout")
    page.mouse.click(x, y)
    page.wait_for_selector("#point-state-table .ag-row", timeout=TIMEOUT)
    # every state field and the neutrino losses (pair, photo, plasma, bremsstrahlung, total)
    n_rows = len(ph.FIELD_UNITS) + 5
    assert page.evaluate("() => document.querySelector('#point-state-table').innerText.length") > 0
    assert page.locator("#point-state-table .ag-center-cols-container .ag-row").count() >= min(n_rows, 20)
    assert "dyn cm^-2" in page.inner_text("#point-state-table")
    page.click("#point-units label:has-text('SI')")
    page.wait_for_selector("#point-state-table:has-text('kg m^-3')", timeout=TIMEOUT)
    assert "g cm^-3" not in page.inner_text("#point-state-table")
    screenshot(page, "dashboard_pinned")
    assert page.console_errors == []


def test_bad_sum_shows_a_message_and_keeps_the_map(server_url, page):
    page.goto(server_url + FAST)
    _ready(page)
    _set(page, "#comp-Y", 0.5)
    page.wait_for_selector("#comp-message:has-text('must be 1')", timeout=TIMEOUT)
    assert page.evaluate(EQUALITY_Y)                     # the last good map stays
    screenshot(page, "dashboard_bad_sum")
    assert page.console_errors == []


def test_share_link_restores_the_view(server_url, page, browser):
    page.goto(server_url + FAST + "&quantity=gamma1&colorscale=magma&layers=equality,coupling&log_T=4,9")
    _ready(page)
    _set(page, "#comp-Y", 0.3)
    _set(page, "#comp-X", 0.68)
    page.wait_for_function("() => document.querySelector('#share-link').value.includes('X=0.68')",
                           timeout=TIMEOUT)
    link = page.input_value("#share-link")
    other = browser.new_context(viewport={"width": 1400, "height": 900}).new_page()
    errors = []
    other.on("pageerror", lambda e: errors.append(str(e)))
    other.goto(link)
    _ready(other)
    assert other.input_value("#comp-X") == "0.68" and other.input_value("#map-T-lo") == "4"
    assert other.evaluate(HEAT_META).startswith("Γ₁")
    lines = other.evaluate("""() => document.querySelector('#plane-graph .js-plotly-plot').data
                               .filter(d => d.type === 'scatter' && d.meta).map(d => d.meta)""")
    assert "equality" in lines and "coupling" in lines and "degeneracy" not in lines
    assert other.evaluate(EQUALITY_Y) == page.evaluate(EQUALITY_Y)
    screenshot(other, "dashboard_shared")
    other.context.close()
    assert errors == [] and page.console_errors == []


def test_broken_link_falls_back_with_a_message(server_url, page):
    page.goto(server_url + FAST + "&X=banana&quantity=nothing")
    _ready(page)
    assert "banana" in page.inner_text("#share-message")
    assert page.input_value("#comp-X") == "0.7"
    assert page.console_errors == []


def test_export_png_and_csv(server_url, page):
    page.goto(server_url + FAST)
    _ready(page)
    with page.expect_download(timeout=TIMEOUT) as png:
        page.click("#export-png")
    assert png.value.suggested_filename == "thermoplane-map.png"
    with page.expect_download(timeout=TIMEOUT) as csv:
        page.click("#export-csv")
    path = csv.value.path()
    with open(path) as f:
        assert f.readlines()[1].startswith("log_rho,log_T,")
    assert page.console_errors == []


def test_presentation_mode(server_url, page):
    page.goto(server_url + FAST)
    _ready(page)
    assert page.is_visible("#controls")
    page.click("#presentation-toggle")
    page.wait_for_selector("#page.presentation", timeout=TIMEOUT)
    page.wait_for_function("() => document.querySelector('#plane-graph .js-plotly-plot')._fullLayout.font.size >= 20",
                           timeout=TIMEOUT)
    assert not page.is_visible("#controls")
    assert "presentation=1" in page.evaluate("location.search")
    screenshot(page, "dashboard_presentation")
    page.click("#presentation-toggle")
    page.wait_for_selector("#page:not(.presentation)", timeout=TIMEOUT)
    assert page.is_visible("#controls")
    assert page.console_errors == []
