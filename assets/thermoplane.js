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
