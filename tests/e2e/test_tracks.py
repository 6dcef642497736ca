"""Stellar tracks in a real browser: upload, map columns, crossings, CSV, a broken file, reload."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import DECODE, trace_values

pytestmark = pytest.mark.e2e

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "assets" / "examples"
# Textbook physics and a coarse grid keep the browser quick; the full physics goes
# through the same functions (tests/app/test_tracks_app.py).
FAST = "?electrons=classical&ionization=full&coulomb=0&pairs=0&resolution=80"
TIMEOUT = 120000
EQUALITY_Y = trace_values("plane-graph", "equality", "y")
# (number of drawn points, meta) of every track line on the map
TRACK_LINES = f"""() => {{ {DECODE}
  const gd = document.querySelector('#plane-graph .js-plotly-plot');
  if (!gd || !gd.data) return [];
  return gd.data.filter(d => typeof d.meta === 'string' && /^track:[^:]+$/.test(d.meta))
                .map(d => [decode(d.x).length, d.meta, d.name]); }}"""


def _ready(pg):
    pg.wait_for_function(f"() => {{ const y = ({EQUALITY_Y})(); return y && y.length > 10; }}", timeout=TIMEOUT)


def _tracks(pg):
    return pg.evaluate(TRACK_LINES)


def _wait_tracks(pg, n):
    pg.wait_for_function(f"() => ({TRACK_LINES})().length === {n}", timeout=TIMEOUT)
    return _tracks(pg)


def _choose(pg, dropdown_id, text):
    pg.click(f"#{dropdown_id}")
    pg.get_by_role("option", name=text, exact=True).click()


def test_upload_map_download_broken_file_and_reload(server_url, page, tmp_path):
    page.goto(server_url + FAST)
    _ready(page)
    page.evaluate("() => window.localStorage.clear()")
    page.reload()
    _ready(page)
    assert _tracks(page) == []

    page.set_input_files("#tracks-upload input", str(EXAMPLES / "example_central_track.csv"))
    lines = _wait_tracks(page, 1)
    assert lines[0][0] == 60 and lines[0][2] == "example_central_track.csv"     # every row drawn (60 < 20k)
    page.wait_for_selector("#tracks-crossings .ag-row", timeout=TIMEOUT)
    table = page.inner_text("#tracks-crossings")
    assert "electron degeneracy" in table
    assert "60 rows, 0 bad; parameter: age_yr" in page.inner_text("#tracks-info")
    screenshot(page, "tracks_uploaded")

    # the column mapping is pre-filled and can be changed: age -> model number
    assert page.inner_text("#track-rho-col") .strip().startswith("log_rho_c")
    _choose(page, "track-age-col", "model")
    page.wait_for_function("() => document.querySelector('#tracks-info').innerText.includes('parameter: model')",
                           timeout=TIMEOUT)
    first_param = page.locator("#tracks-crossings .ag-center-cols-container .ag-row[row-index='0'] "
                               ".ag-cell[col-id='age']").inner_text()
    assert 1 <= float(first_param) <= 60                                        # a model number, not an age

    # switching the shaded quantity redraws the map: the track stays on it
    page.click("#map-quantity")
    page.get_by_role("option").nth(2).click()
    page.wait_for_timeout(500)
    _ready(page)
    assert len(_wait_tracks(page, 1)) == 1

    # the enriched table as CSV
    with page.expect_download(timeout=TIMEOUT) as dl:
        page.click("#tracks-download-button")
    path = tmp_path / "track.csv"
    dl.value.save_as(path)
    assert dl.value.suggested_filename == "example_central_track-thermoplane.csv"
    with open(path, newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == 60
    assert list(rows[0])[-8:] == ["P", "P_gas", "P_rad", "beta", "eta", "gamma1", "nabla_ad", "regime"]

    # a broken file: its message next to the upload, the first track stays
    broken = tmp_path / "broken.csv"
    broken.write_bytes(b"\x00\x01\x02 not a table \x00" * 10)
    page.set_input_files("#tracks-upload input", str(broken))
    page.wait_for_selector("#tracks-upload-message:has-text('broken.csv')", timeout=TIMEOUT)
    assert "binary" in page.inner_text("#tracks-upload-message")
    assert len(_tracks(page)) == 1
    assert "electron degeneracy" in page.inner_text("#tracks-crossings")
    screenshot(page, "tracks_broken_upload")

    # a second good file: two tracks, each its own colour
    page.set_input_files("#tracks-upload input", str(EXAMPLES / "example_profile.tsv"))
    lines = _wait_tracks(page, 2)
    colours = page.evaluate("""() => Array.from(document.querySelectorAll('#tracks-list .swatch'))
                                   .map(s => s.style.background)""")
    assert len(set(colours)) == 2

    # a reload keeps both tracks (local storage)
    page.reload()
    _ready(page)
    assert len(_wait_tracks(page, 2)) == 2
    assert page.locator("#tracks-list .track-row").count() == 2
    screenshot(page, "tracks_after_reload")

    # hide one, then remove it
    page.locator("#tracks-list .track-row").nth(1).locator("input[type=checkbox]").uncheck()
    _wait_tracks(page, 1)
    page.locator("#tracks-list .track-row").nth(1).get_by_role("button", name="remove").click()
    page.wait_for_function("() => document.querySelectorAll('#tracks-list .track-row').length === 1",
                           timeout=TIMEOUT)
    assert [t[2] for t in _tracks(page)] == ["example_central_track.csv"]
    assert page.console_errors == []


def test_demo_tracks_and_colour_by_parameter(server_url, page):
    page.goto(server_url + FAST)
    _ready(page)
    page.evaluate("() => window.localStorage.clear()")
    page.reload()
    _ready(page)
    page.click("#tracks-demo")
    lines = _wait_tracks(page, 5)
    assert any("central line" in t[2] for t in lines) and any("profile" in t[2] for t in lines)
    assert "illustrative, computed by Thermoplane" in page.inner_text("#tracks-list")
    page.check("#tracks-colour-by input")
    page.wait_for_function("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        return gd && gd.data.filter(d => d.meta && d.meta.startsWith('track:') && d.marker
                                                && d.marker.showscale).length === 1; }""", timeout=TIMEOUT)
    page.evaluate("() => window.scrollTo(0, 0)")
    page.wait_for_timeout(300)
    screenshot(page, "tracks_demo_coloured")
    assert page.console_errors == []
