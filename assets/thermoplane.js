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
      if (q && q !== "regime" && p.z !== undefined && p.z !== null) {
        var z = Number(p.z);
        var names = labels.categories ? labels.categories[q] : null;
        parts.push((labels.quantities[q] || q) + " = " + (!isFinite(z) ? "—" : (names && names[Math.round(z)] !== undefined ? names[Math.round(z)] : z.toPrecision(4))));
      }
      if (code !== undefined && code !== null && labels.regimes[code] !== undefined) {
        parts.push("regime: " + labels.regimes[code]);
      }
      return parts.join("   ·   ");
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
