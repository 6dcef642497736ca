"""Tracks and the map as a group uses them in a meeting (issue 14), in a real browser.

Files of our own, made up here (illustrative): a whitespace table whose header names carry units with
spaces, a spreadsheet export with semicolons and decimal commas, a central track whose X and Y change,
a file that needs the reader's choices, and many tracks at once on a small screen.
"""

from __future__ import annotations

import csv

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import DECODE, trace_values

pytestmark = pytest.mark.e2e

FAST = "?electrons=classical&ionization=full&coulomb=0&pairs=0&resolution=80"
TIMEOUT = 120000
EQUALITY_Y = trace_values("plane-graph", "equality", "y")
TRACKS = f"""() => {{ {DECODE}
  const gd = document.querySelector('#plane-graph .js-plotly-plot');
  if (!gd || !gd.data) return [];
  return gd.data.filter(d => typeof d.meta === 'string' && /^track:[^:]+$/.test(d.meta))
                .map(d => ({{n: decode(d.x).length, name: d.name, colour: d.line.color, width: d.line.width}})); }}"""
CROSSING_TEXT = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  return gd.data.filter(d => typeof d.meta === 'string' && d.meta.endsWith(':crossings'))
                .map(d => Array.from(d.text || [])); }"""

# log10 rho rises and X falls along the track: the centre of a made-up star burning hydrogen
UNITS_TRACK = "m/Msun   age [s]   log10(rho/g cm^-3)   log10(T/K)   central hydrogen   central helium\n" + "".join(
    f"{1.0:.2f} {1.21382e16 + 1e15 * i:.6e} {1.5 + 0.1 * i:.3f} {7.10 + 0.012 * i:.4f} {max(0.0, 0.70 - 0.02 * i):.3f} "
    f"{min(0.98, 0.28 + 0.02 * i):.3f}\n" for i in range(50))
SHEET = "sep=;\nage;rho;T;\n" + "".join(f"{i};{(10 ** (1 + 0.1 * i)):.6e};{(1e7 * 10 ** (0.01 * i)):.6e};\n"
                                        .replace(".", ",") for i in range(30))
ODD = "exported by my code, version 3\nlog_rho log_T\n" + "".join(
    f"{1.0 + 0.1 * i:.2f} {7.0 + 0.01 * i:.3f}" + (" junk" if i == 5 else "") + "\n" for i in range(20))


def _ready(pg):
    pg.wait_for_function(f"() => {{ const y = ({EQUALITY_Y})(); return y && y.length > 10; }}", timeout=TIMEOUT)


def _fresh(pg, url, query=FAST):
    pg.goto(url + query)
    _ready(pg)
    pg.evaluate("() => window.localStorage.clear()")
    pg.reload()
    _ready(pg)


def _tracks(pg, n):
    pg.wait_for_function(f"() => ({TRACKS})().length === {n}", timeout=TIMEOUT)
    return pg.evaluate(TRACKS)


def _choose(pg, dropdown_id, text):
    pg.click(f"#{dropdown_id}")
    pg.get_by_role("option", name=text, exact=True).click()


def _grid_rows(pg, grid_id):
    return pg.evaluate(f"""() => Array.from(document.querySelectorAll('#{grid_id} .ag-center-cols-container .ag-row'))
        .sort((a, b) => Number(a.getAttribute('row-index')) - Number(b.getAttribute('row-index')))
        .map(r => Array.from(r.querySelectorAll('.ag-cell')).map(c => c.innerText))""")


def test_units_header_decimal_commas_and_the_reader(server_url, page, tmp_path):
    _fresh(page, server_url)
    # item 3: a whitespace header whose names hold units with spaces
    units = tmp_path / "giant_centre.txt"
    units.write_text(UNITS_TRACK)
    page.set_input_files("#tracks-upload input", str(units))
    assert _tracks(page, 1)[0]["n"] == 50
    assert page.inner_text("#track-rho-col").strip().startswith("log10(rho/g cm^-3)")
    # item 4: a spreadsheet export with semicolons and decimal commas
    sheet = tmp_path / "sheet.csv"
    sheet.write_text(SHEET)
    page.set_input_files("#tracks-upload input", str(sheet))
    assert _tracks(page, 2)[1]["n"] == 30
    assert page.inner_text("#tracks-upload-message").strip() == ""
    # item 3: a file that still cannot be read shows its first lines and the reader's choices
    odd = tmp_path / "odd.txt"
    odd.write_text(ODD)
    page.set_input_files("#tracks-upload input", str(odd))
    page.wait_for_selector("#tracks-reader-lines:has-text('exported by my code')", timeout=TIMEOUT)
    assert page.is_visible("#tracks-reader") and "odd.txt" in page.inner_text("#tracks-upload-message")
    screenshot(page, "meeting_reader")
    page.fill("#tracks-reader-header", "2")
    page.press("#tracks-reader-header", "Enter")
    page.check("#tracks-reader-skip input")
    page.click("#tracks-reader-apply")
    assert _tracks(page, 3)[2]["n"] == 19
    page.wait_for_selector("#tracks-upload-message:has-text('skipped')", timeout=TIMEOUT)
    assert not page.is_visible("#tracks-reader")
    assert page.console_errors == []


def test_own_composition_crossings_grid_pin_and_exports(server_url, page, tmp_path):
    _fresh(page, server_url)
    units = tmp_path / "giant_centre.txt"
    units.write_text(UNITS_TRACK)
    page.set_input_files("#tracks-upload input", str(units))
    _tracks(page, 1)
    # item 1: the composition columns are detected and shown in the mapping
    assert page.inner_text("#track-X-col").strip() == "central hydrogen"
    assert page.inner_text("#track-Y-col").strip() == "central helium"
    page.wait_for_function("() => document.querySelectorAll('#tracks-crossings .ag-center-cols-container .ag-row')"
                           ".length > 0", timeout=TIMEOUT)
    rows = _grid_rows(page, "tracks-crossings")
    labels = [r[0] for r in rows]
    assert "electron degeneracy (η = 0)" in labels
    assert all("this track's own" in r[5] for r in rows)
    # item 8: a large parameter reads as 2.61382e+16, not as a string of digits
    assert all(r[4].endswith("e+16") and "000000" not in r[4] for r in rows)
    # item 2: ignition crossings at the map's levels are in the report
    assert any(label.startswith("ε_pp = 10³") for label in labels)
    # crossing markers are labelled on the track
    texts = page.evaluate(CROSSING_TEXT)[0]
    assert "η = 0" in texts and len(texts) == len(rows)
    # item 10: sorting by a column header, and the grid as CSV
    page.click("#tracks-crossings .ag-header-cell[col-id='log_T']")
    page.wait_for_timeout(300)
    logT = [float(r[3]) for r in _grid_rows(page, "tracks-crossings")]
    assert logT == sorted(logT)
    with page.expect_download(timeout=TIMEOUT) as dl:
        page.click("#tracks-crossings-csv")
    path = tmp_path / "crossings.csv"
    dl.value.save_as(path)
    with open(path, newline="", encoding="utf-8-sig") as fh:
        assert len(list(csv.DictReader(fh))) == len(rows)
    screenshot(page, "meeting_crossings")

    # item 1: click a point of the track: its row is pinned; the map takes that row's composition
    deg = [r for r in rows if r[0].startswith("electron degeneracy")][0]
    row = int(deg[1].split("–")[0])
    # clicking the crossing's marker on the map pins its row
    page.evaluate("() => window.scrollTo(0, 0)")
    box = page.locator("#plane-graph .nsewdrag").first.bounding_box()
    lr, lt = float(deg[2]), float(deg[3])
    page.mouse.click(box["x"] + (lr + 10) / 20 * box["width"], box["y"] + (1 - (lt - 3) / 7) * box["height"])
    page.wait_for_function(f"() => document.querySelector('#tracks-pin-row').value === '{row}'", timeout=TIMEOUT)
    page.click("#tracks-pin-apply")
    page.wait_for_selector("#tracks-pin-message:has-text('The map now uses row')", timeout=TIMEOUT)
    x_expected = max(0.0, 0.70 - 0.02 * row)
    page.wait_for_function(f"() => Math.abs(Number(document.querySelector('#comp-X').value) - {x_expected}) < 1e-6",
                           timeout=TIMEOUT)
    # the drawn eta = 0 line now passes by the crossing marker (same composition): within 0.05 dex in log T
    page.wait_for_timeout(1500)
    gap = page.evaluate(f"""() => {{ {DECODE}
        const gd = document.querySelector('#plane-graph .js-plotly-plot');
        const line = gd.data.find(d => d.meta === 'degeneracy');
        const cr = gd.data.find(d => typeof d.meta === 'string' && d.meta.endsWith(':crossings'));
        const i = Array.from(cr.text).indexOf('η = 0');
        const x0 = cr.x[i], y0 = cr.y[i]; const xs = decode(line.x), ys = decode(line.y);
        let best = 1e9; for (let k = 0; k + 1 < xs.length; k++) {{
          if (xs[k] === null || xs[k + 1] === null || !Number.isFinite(ys[k]) || !Number.isFinite(ys[k + 1])) continue;
          if ((xs[k] - x0) * (xs[k + 1] - x0) <= 0) {{
            const w = (x0 - xs[k]) / ((xs[k + 1] - xs[k]) || 1); best = Math.min(best, Math.abs(ys[k] + w * (ys[k + 1] - ys[k]) - y0)); }}
        }} return best; }}""")
    assert gap < 0.05
    page.evaluate("() => window.scrollTo(0, 0)")
    page.wait_for_timeout(300)
    screenshot(page, "meeting_pinned_row")

    # item 8: the HTML export carries the tracks
    with page.expect_download(timeout=TIMEOUT) as dl:
        page.click("#export-html")
    html = tmp_path / "map.html"
    dl.value.save_as(html)
    assert "track:" in html.read_text(encoding="utf-8")
    assert page.console_errors == []


def test_readable_maps_unphysical_region_and_messages(server_url, page):
    # item 5: classical electrons with Coulomb: a region with P <= 0
    page.goto(server_url + "?electrons=classical&ionization=full&coulomb=1&pairs=0&resolution=80&quantity=eta")
    _ready(page)
    bar = page.evaluate("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        const h = gd.data.find(d => d.type === 'heatmap'); return [h.colorbar.title.text, Array.from(h.colorbar.ticktext)]; }""")
    assert "signed-log" in bar[0] and "0" in bar[1]
    legend = page.text_content("#plane-graph .legend")
    assert "no physical value: P ≤ 0 with these options" in legend
    grey = page.evaluate("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        const t = gd.data.find(d => d.meta === 'unphysical'); const z = t.z; return !!t; }""")
    assert grey
    # hover and pin inside the grey region (cold and dense): the readout and the pinned point say so
    box = page.locator("#plane-graph .nsewdrag").first.bounding_box()
    # log rho ~ 5, clear of the vertical lines (x_F = 1 near 6.3, the H-1 capture threshold near 7.1)
    x, y = box["x"] + 0.75 * box["width"], box["y"] + 0.97 * box["height"]
    page.mouse.move(x, y)
    page.wait_for_function("() => document.querySelector('#hover-readout').innerText.includes('no physical value')",
                           timeout=TIMEOUT)
    page.mouse.click(x, y)
    page.wait_for_selector("#point-message:has-text('No physical value here')", timeout=TIMEOUT)
    page.wait_for_selector("#point-state-table .ag-row", timeout=TIMEOUT)
    # item 8: the heading follows SI
    page.click("#point-units label:has-text('SI')")
    page.wait_for_selector("#point-heading:has-text('kg m⁻³')", timeout=TIMEOUT)
    screenshot(page, "meeting_unphysical")
    # item 8: out-of-range values say the allowed range, not "empty"
    for sel, value, expect in (("#map-resolution", "100000", "between 20 and 600"),
                               ("#map-rho-lo", "-30", "between -15 and 15"), ("#comp-X", "-0.5", "between 0 and 1")):
        page.fill(sel, value)
        page.press(sel, "Enter")
        page.wait_for_function(f"() => document.body.innerText.includes({expect!r})", timeout=TIMEOUT)
        assert "is empty" not in page.inner_text("#controls")
    assert page.console_errors == []


def test_which_physics_matters_map(server_url, page):
    page.goto(server_url + "?resolution=60&quantity=impact_which")
    _ready(page)
    legend = page.text_content("#plane-graph .legend")
    for words in ("Coulomb", "Fermi–Dirac vs classical electrons", "Saha vs full ionization", "pairs",
                  "none above 1 %"):
        assert words in legend
    screenshot(page, "meeting_which_physics")
    _choose(page, "map-quantity", "Coulomb: % change in P")
    page.wait_for_function("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        const h = gd && gd.data.find(d => d.type === 'heatmap');
        return h && h.colorbar && h.colorbar.title.text.startsWith('Coulomb: % change in P'); }""", timeout=TIMEOUT)
    screenshot(page, "meeting_coulomb_impact")
    assert page.console_errors == []


def test_clutter_small_screen_many_tracks_presentation(server_url, browser, tmp_path):
    context = browser.new_context(viewport={"width": 1024, "height": 700})
    page = context.new_page()
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    _fresh(page, server_url)
    page.click("#tracks-demo")
    _tracks(page, 5)
    files = []
    for i in range(6):
        p = tmp_path / f"a rather long track file name from the cluster run {i}.csv"
        p.write_text("log_rho,log_T\n" + "".join(f"{-2 + 0.2 * k + 0.3 * i:.2f},{6.0 + 0.05 * k:.2f}\n"
                                                 for k in range(30)))
        files.append(str(p))
    page.set_input_files("#tracks-upload input", files)
    tracks = _tracks(page, 11)
    # item 7: the tracks' colours are not the lines' colours
    lines = page.evaluate("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        return gd.data.filter(d => d.type === 'scatter' && d.mode === 'lines' && typeof d.meta === 'string'
                                   && !d.meta.startsWith('track:')).map(d => d.line.color.toLowerCase()); }""")
    assert not {t["colour"].lower() for t in tracks} & set(lines)
    # the legend leaves the plot most of the figure
    sizes = page.evaluate("""() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
        const lg = gd.querySelector('.legend .bg').getBoundingClientRect(); const plot = gd.querySelector('.nsewdrag').getBoundingClientRect();
        return [lg.height, plot.height, gd.getBoundingClientRect().height]; }""")
    page.evaluate("() => window.scrollTo(0, 0)")
    page.wait_for_timeout(300)
    screenshot(page, "meeting_small_screen_legend")
    assert sizes[0] < 0.2 * sizes[2] and sizes[1] > 0.6 * sizes[2]
    # the hover readout sits clear of the next panel
    page.mouse.move(*_centre(page))
    page.wait_for_function("() => document.querySelector('#hover-readout').innerText.includes('log ρ')",
                           timeout=TIMEOUT)
    gap = page.evaluate("""() => document.querySelector('#panel-track-results').getBoundingClientRect().top
                                 - document.querySelector('#hover-readout').getBoundingClientRect().bottom""")
    assert gap >= 4
    page.evaluate("() => window.scrollTo(0, 0)")
    screenshot(page, "meeting_small_screen")
    # presentation mode enlarges the tracks and their labels too
    widths = [t["width"] for t in tracks]
    page.click("#presentation-toggle")
    page.wait_for_function(f"() => ({TRACKS})().length === 11 && ({TRACKS})()[0].width > {max(widths)}",
                           timeout=TIMEOUT)
    page.wait_for_timeout(500)
    screenshot(page, "meeting_presentation")
    assert errors == []
    context.close()


def _centre(pg):
    box = pg.locator("#plane-graph .nsewdrag").first.bounding_box()
    return box["x"] + 0.5 * box["width"], box["y"] + 0.5 * box["height"]
