"""The map keeps up with the hand: dragging the X slider redraws the map while it moves (coarse), then in
full on release; zooming into a box recomputes the plane for the new ranges and the URL follows."""

from __future__ import annotations

import time

import pytest

from tests.conftest import screenshot
from tests.e2e.plotly_js import DECODE

pytestmark = pytest.mark.e2e

#: JS: (number of x values, first x, last x, number of y values) of the shaded heatmap, or null.
HEATMAP = f"""() => {{ {DECODE}
  const gd = document.querySelector('#plane-graph .js-plotly-plot');
  if (!gd || !gd.data) return null;
  const t = gd.data.find(d => d.type === 'heatmap');
  if (!t) return null;
  const x = decode(t.x), y = decode(t.y);
  return [x.length, x[0], x[x.length - 1], y.length, y[0], y[y.length - 1]];
}}"""

#: JS: count every redraw of the map (a new figure from the server): poll the heatmap trace every 15 ms and
#: note when it is a new object, with its number of x values.
COUNT_REDRAWS = """() => {
  window.__redraws = [];
  let last = null;
  const size = (v) => v === undefined || v === null ? 0 :
      (v.bdata !== undefined ? atob(v.bdata).length / {f8: 8, f4: 4}[v.dtype] : v.length);
  window.__poll = setInterval(() => {
    const gd = document.querySelector('#plane-graph .js-plotly-plot');
    const t = gd && gd.data ? gd.data.find(d => d.type === 'heatmap') : null;
    if (!t) return;
    if (last === null) { last = t; return; }
    if (t !== last) { last = t; window.__redraws.push([performance.now(), size(t.x)]); }
  }, 15);
}"""


def _full_map(pg, n=300, timeout=60000):
    pg.wait_for_function(f"() => {{ const h = ({HEATMAP})(); return h && h[0] === {n}; }}", timeout=timeout)
    return pg.evaluate(HEATMAP)


def _grab_X(pg, to: float):
    """Tick "Z = 1 − X − Y" (every X keeps the sum 1), start counting redraws, press the X slider's thumb;
    returns (x of the thumb, x at fraction ``to`` of the slider's track, y of both)."""
    pg.check("#comp-zauto input")
    pg.wait_for_function("() => document.querySelector('#comp-Z').disabled")
    pg.evaluate(COUNT_REDRAWS)
    track = pg.locator("#comp-X-slider .dash-slider-track").bounding_box()
    box = pg.locator("#comp-X-slider [role=slider]").bounding_box()
    x0, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
    pg.mouse.move(x0, y)
    pg.mouse.down()
    return x0, track["x"] + to * track["width"], y


def test_dragging_X_redraws_while_the_hand_moves(server_url, page):
    page.goto(server_url)
    _full_map(page)
    screenshot(page, "drag_before")
    x0, x1, y = _grab_X(page, 0.3)
    t0 = time.monotonic()
    # from X = 0.7 down to about 0.3: a new hand position every ~60 ms (faster than the map can follow, so
    # the redraw rate measures the map, not the hand; each move also waits for the page to take it)
    steps = 48
    for i in range(1, steps + 1):
        page.mouse.move(x0 + (x1 - x0) * i / steps, y)
        page.wait_for_timeout(60)
    screenshot(page, "drag_during")
    page.mouse.up()
    during = time.monotonic() - t0
    # the full map follows the last preview (maps drawn before the first preview are the tick's)
    page.wait_for_function("""() => { const r = window.__redraws, i = r.findIndex(e => e[1] < 300);
                                      return i >= 0 && r[r.length - 1][1] === 300 && r.length > i + 1; }""",
                           timeout=60000)
    page.wait_for_timeout(500)
    redraws = page.evaluate("window.__redraws")
    redraws = redraws[next(i for i, r in enumerate(redraws) if r[1] < 300):]
    coarse = [r for r in redraws if r[1] < 300]
    span = (coarse[-1][0] - coarse[0][0]) / 1000 if len(coarse) > 1 else during
    print(f"\nX drag at 300 x 300: the hand moved {steps} times ({steps / during:.1f} per second); "
          f"{len(coarse)} coarse (100 x 100) redraws in {during:.2f} s of dragging, "
          f"{(len(coarse) - 1) / max(span, 1e-9):.1f} per second between the first and the last, then "
          f"{len(redraws) - len(coarse)} full, {(redraws[-1][0] - coarse[-1][0]) / 1000:.2f} s after the last preview")
    assert len(coarse) > 1                                # the map followed the hand, coarse
    assert redraws[-1][1] == 300                          # and the last map is at full resolution
    screenshot(page, "drag_after")
    text = page.input_value("#comp-X")
    X = float(text)
    assert 0.25 < X < 0.4
    assert abs(float(page.get_attribute("#comp-X-slider [role=slider]", "aria-valuenow")) - X) < 1e-9
    assert abs(float(page.input_value("#comp-Z")) - (1 - X - 0.28)) < 1e-9     # the sum rule followed
    page.wait_for_function(f"() => new URLSearchParams(window.location.search).get('X') === '{text}'",
                           timeout=10000)
    # the final map is the map of the final X: the readout (drawn with the map) gives this composition's μ
    from thermoplane import physics as ph
    comp = ph.Composition.from_xyz(X, 0.28, 1 - X - 0.28, metals="solar-like")
    assert page.inner_text("#comp-readout").split()[2] == f"{comp.mu:.4f}"
    assert page.console_errors == []


def test_zooming_into_a_box_recomputes_the_plane(server_url, page):
    page.goto(server_url)
    before = _full_map(page)
    area = page.locator("#plane-graph .nsewdrag").first.bounding_box()
    # drag a box over the middle of the plot with the mouse (plotly's zoom)
    x0, y0 = area["x"] + 0.40 * area["width"], area["y"] + 0.30 * area["height"]
    x1, y1 = area["x"] + 0.70 * area["width"], area["y"] + 0.60 * area["height"]
    page.mouse.move(x0, y0)
    page.mouse.down()
    page.mouse.move((x0 + x1) / 2, (y0 + y1) / 2, steps=4)
    page.mouse.move(x1, y1, steps=4)
    page.mouse.up()
    page.wait_for_function("() => Number(document.querySelector('#map-rho-lo').value) > -9")
    lo, hi = float(page.input_value("#map-rho-lo")), float(page.input_value("#map-rho-hi"))
    tlo, thi = float(page.input_value("#map-T-lo")), float(page.input_value("#map-T-hi"))
    # the box was 40–70 % across and 40–70 % up the old ranges (-10..10, 3..10)
    assert abs(lo - (-10 + 0.4 * 20)) < 0.3 and abs(hi - (-10 + 0.7 * 20)) < 0.3
    assert abs(tlo - (3 + 0.4 * 7)) < 0.2 and abs(thi - (3 + 0.7 * 7)) < 0.2
    # the plane is recomputed for the new ranges at full resolution (not the old pixels stretched)
    page.wait_for_function(f"""() => {{ const h = ({HEATMAP})();
        return h && h[0] === 300 && Math.abs(h[1] - {lo}) < 1e-4 && Math.abs(h[2] - {hi}) < 1e-4
               && Math.abs(h[4] - {tlo}) < 1e-4 && Math.abs(h[5] - {thi}) < 1e-4; }}""", timeout=60000)
    after = page.evaluate(HEATMAP)
    assert after[0] == before[0] == 300 and after[3] == 300
    page.wait_for_function(f"""() => new URLSearchParams(window.location.search).get('log_rho') === '{lo:g},{hi:g}'
                                     && new URLSearchParams(window.location.search).get('log_T') === '{tlo:g},{thi:g}'""",
                           timeout=10000)
    screenshot(page, "zoom_box")
    # zooming out beyond the allowed ranges stops at the limits and says so
    page.evaluate("""() => window.Plotly.relayout(document.querySelector('#plane-graph .js-plotly-plot'),
                                                  {'xaxis.range[0]': -30, 'xaxis.range[1]': 5})""")
    page.wait_for_selector("#map-zoom-message:has-text('must be between')")
    page.wait_for_function("() => Number(document.querySelector('#map-rho-lo').value) < -9")
    assert page.console_errors == []


def _graph_png(pg) -> bytes:
    pg.mouse.move(5, 5)                                   # no hover box over the map
    pg.wait_for_timeout(300)
    return pg.locator("#plane-graph .js-plotly-plot").screenshot()


#: JS: the share of pixels that differ by more than 8 in a colour channel between two PNGs of one size
#: (decoded by the browser), or null when the sizes differ.
PNG_DIFF = """async ([a, b]) => {
  const load = async (b64) => { const r = await fetch('data:image/png;base64,' + b64);
                                return await createImageBitmap(await r.blob()); };
  const [ia, ib] = [await load(a), await load(b)];
  if (ia.width !== ib.width || ia.height !== ib.height) return null;
  const px = (im) => { const c = new OffscreenCanvas(im.width, im.height); const g = c.getContext('2d');
                       g.drawImage(im, 0, 0); return g.getImageData(0, 0, im.width, im.height).data; };
  const [da, db] = [px(ia), px(ib)];
  let n = 0;
  for (let i = 0; i < da.length; i += 4) {
    if (Math.abs(da[i] - db[i]) > 8 || Math.abs(da[i + 1] - db[i + 1]) > 8 || Math.abs(da[i + 2] - db[i + 2]) > 8) n++;
  }
  return n / (da.length / 4);
}"""


def test_a_patched_map_looks_like_the_same_map_sent_whole(server_url, page, browser):
    """A composition change arrives as a Patch of the map shown; the page then shows what a fresh page with
    that composition shows (the figure sent whole)."""
    import base64
    page.goto(server_url)
    _full_map(page)
    patches = []
    page.on("response", lambda r: patches.append(b"__dash_patch_update" in r.body())
            if "_dash-update-component" in r.url and b"plane-graph" in (r.request.post_data_buffer or b"")[:200]
            else None)
    page.fill("#comp-X", "0.6")
    page.fill("#comp-Y", "0.38")
    page.press("#comp-Y", "Enter")
    page.wait_for_function("() => new URLSearchParams(window.location.search).get('Y') === '0.38'", timeout=60000)
    page.wait_for_timeout(1000)
    assert patches and patches[-1], "the new map did not come as a Patch"
    patched = _graph_png(page)
    screenshot(page, "patched_composition")
    query = page.evaluate("window.location.search")
    fresh = browser.new_context(viewport={"width": 1400, "height": 900}).new_page()
    fresh.goto(server_url + query)
    _full_map(fresh)
    fresh.wait_for_timeout(1000)
    whole = _graph_png(fresh)
    screenshot(fresh, "whole_composition")
    fresh.context.close()
    share = page.evaluate(PNG_DIFF, [base64.b64encode(patched).decode(), base64.b64encode(whole).decode()])
    assert share is not None, "the two maps differ in size"
    print(f"\npatched vs whole: {share * 100:.3f} % of the map's pixels differ")
    assert share < 1e-3
    assert page.console_errors == []


#: JS: the number of track traces on the map (-1 before the plot exists).
TRACK_TRACES = """() => { const gd = document.querySelector('#plane-graph .js-plotly-plot');
  return gd && gd.data ? gd.data.filter(d => String(d.meta || '').startsWith('track:')).length : -1; }"""


def test_tracks_stay_on_the_map_while_a_slider_moves(server_url, page):
    # a preview leaves the tracks as drawn (it does not evaluate them again): they stay while the hand moves
    page.goto(server_url)
    _full_map(page)
    page.click("#tracks-demo")
    page.wait_for_function(f"() => ({TRACK_TRACES})() > 0", timeout=60000)
    n = page.evaluate(TRACK_TRACES)
    x0, x1, y = _grab_X(page, 0.5)
    for i in range(1, 13):
        page.mouse.move(x0 + (x1 - x0) * i / 12, y)
        page.wait_for_timeout(80)
    page.wait_for_function("() => window.__redraws.some(e => e[1] < 300)", timeout=30000)
    assert page.evaluate(TRACK_TRACES) == n                 # during the drag: a coarse map, the tracks kept
    screenshot(page, "drag_tracks_during")
    page.mouse.up()
    page.wait_for_function("() => { const r = window.__redraws; return r.length && r[r.length - 1][1] === 300; }",
                           timeout=60000)
    page.wait_for_timeout(300)
    assert page.evaluate(TRACK_TRACES) == n                 # and after it, drawn for the new composition
    screenshot(page, "drag_tracks_after")
    assert page.console_errors == []
