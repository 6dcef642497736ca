/* Thermoplane: small browser-side helpers (hover readout, URL, image export). */
window.dash_clientside = Object.assign({}, window.dash_clientside, {
  thermoplane: {
    hover: function (h, store, labels) {
      if (!h || !h.points || !h.points.length || !labels) { return "Hover over the map to read a point."; }
      var p = h.points[0];
      if (p.x === undefined || p.y === undefined) { return window.dash_clientside.no_update; }
      var parts = ["log ρ = " + Number(p.x).toFixed(2), "log T = " + Number(p.y).toFixed(2),
                   "ρ = " + Math.pow(10, p.x).toPrecision(3) + " g cm⁻³", "T = " + Math.pow(10, p.y).toPrecision(3) + " K"];
      var q = store && store.view ? store.view.quantity : null;
      var code = p.customdata;
      if (code === undefined || code === null) {
        var gd = document.querySelector("#plane-graph .js-plotly-plot");
        var t = gd && gd._fullData ? gd._fullData.find(function (d) { return d.type === "heatmap"; }) : null;
        var pn = p.pointNumber;
        if (t && t.customdata && Array.isArray(pn) && t.customdata[pn[0]]) { code = t.customdata[pn[0]][pn[1]]; }
      }
      var gdh = document.querySelector("#plane-graph .js-plotly-plot");
      var tr = gdh && gdh.data ? gdh.data[p.curveNumber] : null;
      if (tr && tr.meta === "unphysical") {
        parts.push("no physical value here: P ≤ 0 with these options (the Coulomb term exceeds the ideal pressure)");
        return parts.join("   ·   ");
      }
      if (q === "impact_which" && p.z !== undefined && p.z !== null && labels.impact_categories) {
        var k = Number(p.z);
        parts.push("matters most: " + (isFinite(k) && labels.impact_categories[k] !== undefined ? labels.impact_categories[k] : "—"));
      } else if (q && q !== "regime" && p.z !== undefined && p.z !== null) {
        var z = Number(p.z);
        var names = labels.categories ? labels.categories[q] : null;
        var unit = labels.asinh ? labels.asinh[q] : undefined;
        if (unit !== undefined && isFinite(z)) { z = unit * Math.sinh(z); }
        parts.push((labels.quantities[q] || q) + " = " + (!isFinite(z) ? "—" : (names && names[Math.round(z)] !== undefined ? names[Math.round(z)] : z.toPrecision(4))));
      }
      if (code !== undefined && code !== null && labels.regimes[code] !== undefined) {
        parts.push("regime: " + labels.regimes[code]);
      }
      return parts.join("   ·   ");
    },
    pinTrackRow: function (click) {
      var nu = window.dash_clientside.no_update;
      if (!click || !click.points || !click.points.length) { return [nu, nu]; }
      var p = click.points[0];
      var gd = document.querySelector("#plane-graph .js-plotly-plot");
      var t = gd && gd.data ? gd.data[p.curveNumber] : null;
      var meta = t && typeof t.meta === "string" ? t.meta : "";
      if (meta.indexOf("track:") !== 0) { return [nu, nu]; }
      var parts = meta.split(":"), id = parts[1], kind = parts[2] || "line", row = null, c = p.customdata;
      if (kind === "line" && Array.isArray(c)) { row = Number(c[0]); }
      else if (kind === "ends") { row = Number(c); }
      else if (kind === "crossings" && Array.isArray(c)) { row = parseInt(String(c[1]), 10); }
      if (row === null || !isFinite(row)) { return [nu, nu]; }
      return [row, id];
    },
    /* Sliders beside the X, Y, Z boxes. The boxes are the source of truth (the view and the URL read
       them). sliderToBox: while the hand moves, a slider's drag_value goes into the "comp-drag" store only
       ({drag: true, key, value}); the map callback draws a coarse preview for that value (one request,
       which waits for no other callback). On release, the slider's value writes its box and ends the drag,
       so the map draws at full resolution and the URL follows. boxToSlider: a box typed by hand moves its
       slider (not while that slider's hand is moving). Two callbacks, never a loop: each writes only what
       differs from what is there.
       Flow control: at most PREVIEW_SLOTS previews in flight, each on its own server callback (the map's,
       fed by the store "comp-drag", and a second one, "comp-drag-b"): a newer request for the same callback
       makes Dash drop the answer of the one in flight, so one callback can have only one; with two, the
       server computes the next preview while the page draws the last. The newest position waits in
       window.__tpDrag; mapDrawn (on each new map the plot has drawn: plotly_afterplot) sends it at once. */
    sliderToBox: function (dx, dy, dz, sx, sy, sz, bx, by, bz, drag, zauto) {
      var nu = window.dash_clientside.no_update;
      var tp = window.dash_clientside.thermoplane;
      var keys = ["X", "Y", "Z"], boxes = [bx, by, bz], drags = [dx, dy, dz], sliders = [sx, sy, sz];
      var out = [nu, nu, nu, nu];
      var trig = (window.dash_clientside.callback_context.triggered || []).map(function (t) { return t.prop_id; });
      var dragging = !!(drag && drag.drag);
      var st = tp.dragState();
      var k, i;
      /* release first: the slider may report its last drag_value together with its value */
      for (i = 0; i < 3; i++) {
        k = keys[i];
        if (trig.indexOf("comp-" + k + "-slider.value") >= 0 && typeof sliders[i] === "number") {
          /* the slider following a box typed by hand (boxToSlider, clamped to 0..1) is no release: a typed
             -0.5 stays in its box, where the map's message says what is allowed */
          var typed = Number(boxes[i]);
          if (!(dragging && drag.key === k) && boxes[i] !== null && boxes[i] !== "" && isFinite(typed)
              && tp.same(Math.min(Math.max(typed, 0), 1), sliders[i])) { return out; }
          var held = dragging || st.slots.length > 0;
          st.latest = null; st.sent = null; st.slots = [];
          /* a preview of the second callback still on its way is dropped: that callback is asked again */
          if (held) { window.dash_clientside.set_props("comp-drag-b", {data: {drag: false, key: k, t: Date.now()}}); }
          if (!tp.same(tp.tidy(sliders[i]), boxes[i])) { out[i] = tp.tidy(sliders[i]); }
          /* with "Z = 1 − X − Y" ticked, Z goes with X or Y (as the rule on the server would write it), so
             the map is drawn once, for both */
          var auto = (zauto || []).indexOf("auto") >= 0;
          if (auto && out[i] !== nu && k !== "Z") {
            var x = i === 0 ? out[0] : Number(bx), y = i === 1 ? out[1] : Number(by);
            var z = Math.round((1 - x - y) * 1e10) / 1e10;
            if (isFinite(z) && z >= 0 && !tp.same(z, Number(bz))) { out[2] = z; }
          }
          if (dragging || out[i] !== nu) { out[3] = {drag: false, key: k, t: Date.now()}; }
          return out;
        }
      }
      for (i = 0; i < 3; i++) {
        k = keys[i];
        if (trig.indexOf("comp-" + k + "-slider.drag_value") >= 0 && typeof drags[i] === "number") {
          /* a drag_value equal to the slider's value is the release echoed (or a box typed), not a hand */
          if (tp.same(drags[i], sliders[i]) && !(dragging && drag.key === k)) { return out; }
          st.latest = {key: k, value: tp.tidy(drags[i])};
          tp.watchMap();
          var next = tp.nextPreview();
          if (next && next.store === "comp-drag") { out[3] = next.data; }
          else if (next) { window.dash_clientside.set_props(next.store, {data: next.data}); }
          return out;
        }
      }
      return out;
    },
    /* The drag's memory in this page: the newest position (latest), the last one asked for (sent) and the
       previews on their way (slots: {store, t}, oldest first). */
    dragState: function () {
      if (!window.__tpDrag) { window.__tpDrag = {latest: null, sent: null, slots: []}; }
      return window.__tpDrag;
    },
    same: function (a, b) { return typeof a === "number" && typeof b === "number" && Math.abs(a - b) < 1e-12; },
    tidy: function (v) { return Math.round(v * 1e6) / 1e6; },       /* 0.30000000000000004 -> 0.3 */
    PREVIEW_SLOTS: 2,
    PREVIEW_STORES: ["comp-drag", "comp-drag-b"],
    /* {store, data} that asks for the next preview, or null: nothing new, or every slot busy (an answer
       lost or refused frees its slot after PREVIEW_WAIT ms). */
    PREVIEW_WAIT: 3000,
    nextPreview: function () {
      var tp = window.dash_clientside.thermoplane, st = tp.dragState(), now = Date.now();
      st.slots = st.slots.filter(function (s) { return now - s.t < tp.PREVIEW_WAIT; });
      var l = st.latest;
      if (!l || st.slots.length >= tp.PREVIEW_SLOTS) { return null; }
      if (st.sent && st.sent.key === l.key && tp.same(st.sent.value, l.value)) { return null; }
      var busy = st.slots.map(function (s) { return s.store; });
      var store = tp.PREVIEW_STORES.filter(function (name) { return busy.indexOf(name) < 0; })[0];
      st.sent = l;
      st.slots.push({store: store, t: now});
      return {store: store, data: {drag: true, key: l.key, value: l.value, t: now}};
    },
    /* A new map was drawn (or the map's messages arrived): the oldest slot is free; if the hand moved since,
       ask for its newest position now (set_props: the drag stores are inputs of the map callbacks, so no
       callback may output them here). */
    mapDrawn: function () {
      var tp = window.dash_clientside.thermoplane, st = tp.dragState();
      st.slots.shift();
      var next = tp.nextPreview();
      if (next) { window.dash_clientside.set_props(next.store, {data: next.data}); }
      return window.dash_clientside.no_update;
    },
    /* Listen to the plot itself for new maps (once per plot): a Dash callback on the figure would cost the
       page a pass over every component for each preview. Only a new shaded trace counts (a zoom or a
       legend click redraws the same map). */
    watchMap: function () {
      var gd = document.querySelector("#plane-graph .js-plotly-plot");
      if (!gd || gd.__tpWatched || typeof gd.on !== "function") { return; }
      gd.__tpWatched = true;
      var heat = function () { return gd.data ? gd.data.find(function (d) { return d.type === "heatmap"; }) : null; };
      gd.__tpShown = heat();
      gd.on("plotly_afterplot", function () {
        var t = heat();
        if (t && t !== gd.__tpShown) { gd.__tpShown = t; window.dash_clientside.thermoplane.mapDrawn(); }
      });
    },
    boxToSlider: function (bx, by, bz, sx, sy, sz, drag) {
      var nu = window.dash_clientside.no_update;
      var keys = ["X", "Y", "Z"], boxes = [bx, by, bz], sliders = [sx, sy, sz];
      var out = [nu, nu, nu];
      var dragging = !!(drag && drag.drag);
      for (var i = 0; i < 3; i++) {
        if (dragging && drag.key === keys[i]) { continue; }   /* the box follows this slider's hand */
        var v = Number(boxes[i]);
        if (boxes[i] !== null && boxes[i] !== "" && isFinite(v)) {
          v = Math.min(Math.max(v, 0), 1);
          if (!(typeof sliders[i] === "number" && Math.abs(v - sliders[i]) < 1e-12)) { out[i] = v; }
        }
      }
      return out;
    },
    writeUrl: function (store) {
      if (!store || store.query === undefined) { return window.dash_clientside.no_update; }
      var url = window.location.pathname + store.query;
      if (window.location.search !== store.query) { window.history.replaceState(null, "", url); }
      return window.location.origin + url;
    },
    image: function (n, fmt) {
      var gd = document.querySelector("#plane-graph .js-plotly-plot");
      if (!n || !gd || !window.Plotly) { return window.dash_clientside.no_update; }
      window.Plotly.downloadImage(gd, {format: fmt, scale: 3, filename: "thermoplane-map",
                                       width: gd.clientWidth, height: gd.clientHeight});
      return "saved as " + fmt.toUpperCase();
    }
  }
});
