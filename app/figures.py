"""Pure functions from numbers to plotly figures: no Dash, no server, testable alone."""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np
import plotly.graph_objects as go

__all__ = ["Line", "plane_figure", "place_labels", "graph_config", "LINE_STYLES", "COLOR_SCALES",
           "track_traces", "track_quantity_figure", "empty_figure", "TRACK_PARAMETER_SCALE"]

#: Colour scales offered for the shading: perceptually uniform sequential
#: scales and colour-blind-safe diverging scales (plotly's built-in names).
COLOR_SCALES = {
    "diverging: purple-orange": "PuOr_r",
    "diverging: blue-red": "RdBu_r",
    "sequential: viridis": "Viridis",
    "sequential: cividis": "Cividis",
    "sequential: magma": "Magma",
}
DEFAULT_DIVERGING = "diverging: purple-orange"
DEFAULT_SEQUENTIAL = "sequential: viridis"

#: How each kind of line is drawn (colour, dash). Our own choices; dark
#: enough to read over every colour scale above, told apart by dash as well
#: as colour for colour-blind readers.
LINE_STYLES = {
    "equality": ("#111111", "solid"),
    "degeneracy": ("#0b5394", "dash"),
    "relativistic": ("#0b5394", "dot"),
    "pairs": ("#7f0000", "dashdot"),
    "coupling": ("#38761d", "dash"),
    "crystallization": ("#38761d", "solid"),
    "quantum_ions": ("#7f6000", "dot"),
    "h_ionization": ("#674ea7", "dot"),
    "he_ionization": ("#674ea7", "dashdot"),
    "ignition": ("#b45f06", "longdash"),
    "mass": ("#444444", "longdashdot"),
    "nu_ignition": ("#990000", "solid"),
    "capture": ("#1c4587", "dashdot"),
    # one style per burning process (colour and dash both differ)
    "ignition_pp": ("#b45f06", "longdash"),
    "ignition_cno": ("#8e0152", "dash"),
    "ignition_triple_alpha": ("#7a5a00", "dashdot"),
    "ignition_carbon": ("#3d3d8f", "longdashdot"),
}
# styles for processes added later: dark colours the track palette never uses
_EXTRA_IGNITION = (("#5b3a29", "dot"), ("#1f5f5b", "longdash"), ("#6b2d5c", "dashdot"))


def ignition_style(process: str) -> str:
    """Key into :data:`LINE_STYLES` of a burning process's ignition contours (each its own style)."""
    key = f"ignition_{process}"
    if key not in LINE_STYLES:
        LINE_STYLES[key] = _EXTRA_IGNITION[sum(map(ord, process)) % len(_EXTRA_IGNITION)]
    return key


_SHORT = {"pp": "pp", "cno": "CNO", "triple_alpha": "3α", "carbon": "C+C"}
_SUPERSCRIPT = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


def level_text(level: float) -> str:
    """1, 10³, 2.5e+04 -> short text for a label."""
    e = np.log10(level)
    if e == round(e) and abs(e) >= 2:
        return "10" + str(int(round(e))).translate(_SUPERSCRIPT)
    return f"{level:g}"


def ignition_label(process: str, level: float) -> str:
    """"ε_pp = 10³" for an ignition contour of ``process`` at ``level`` erg g^-1 s^-1."""
    return f"ε_{_SHORT.get(process, process)} = {level_text(level)}"


@dataclass
class Line:
    """A line drawn over the map, labelled on the plot itself."""

    key: str
    label: str
    log_rho: np.ndarray
    log_T: np.ndarray
    style: str = ""                    # key into LINE_STYLES; defaults to key
    width: float = 2.0
    extra: dict = field(default_factory=dict)        # "label": annotation settings that replace the defaults


# Label boxes are placed in axis fractions (0..1) with a size estimated from
# the font, for a plot area of about this many pixels (the page's figure).
_PLOT_PX = (900.0, 560.0)
_CANDIDATES = (0.72, 0.5, 0.85, 0.3, 0.6, 0.15, 0.4, 0.92, 0.08)


def _label_box(fx, fy, text, font):
    w = (0.58 * font * len(text) + 6) / _PLOT_PX[0]
    h = (font + 8) / _PLOT_PX[1]
    return (fx - w / 2, fy - h / 2 + 12 / _PLOT_PX[1], fx + w / 2, fy + h / 2 + 12 / _PLOT_PX[1])


def _overlap(a, b) -> float:
    dx = min(a[2], b[2]) - max(a[0], b[0])
    dy = min(a[3], b[3]) - max(a[1], b[1])
    return max(dx, 0.0) * max(dy, 0.0)


def _edges(points) -> tuple[float, float]:
    """The first and last grid points (the plane's grid includes the ends of its ranges)."""
    c = np.asarray(points, dtype=float).ravel()
    return float(c[0]), float(c[-1])


def place_labels(lines, x_range, y_range, font: float, avoid=()) -> list[tuple[float, float] | None]:
    """A label point on each line, inside the view, avoiding earlier labels and the ``avoid`` points.

    Greedy: for each line in turn, the first candidate position along its
    visible part (72 %, 50 %, 85 %, ... of the way) whose estimated text box
    neither leaves the plot nor overlaps a label already placed or the box
    around a point of ``avoid`` ((log rho, log T) of track ends and crossing
    markers, with their text); if none is free, the candidate with the least
    overlap. None for a line not in view.
    """
    wx0 = x_range[1] - x_range[0]
    wy0 = y_range[1] - y_range[0]
    placed, out = [], []
    for ax, ay in avoid:
        if np.isfinite(ax) and np.isfinite(ay):
            fx, fy = (ax - x_range[0]) / wx0, (ay - y_range[0]) / wy0
            placed.append((fx - 40 / _PLOT_PX[0], fy - 14 / _PLOT_PX[1], fx + 40 / _PLOT_PX[0], fy + 34 / _PLOT_PX[1]))
    wx = x_range[1] - x_range[0]
    wy = y_range[1] - y_range[0]
    for line in lines:
        x = np.asarray(line.log_rho, dtype=float)
        y = np.asarray(line.log_T, dtype=float)
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(x) & np.isfinite(y)
            ok &= (x > x_range[0]) & (x < x_range[1]) & (y > y_range[0]) & (y < y_range[1])
        idx = np.flatnonzero(ok)
        if idx.size == 0:
            out.append(None)
            continue
        best, best_cost = None, np.inf
        last = idx.size - 1
        for frac in _CANDIDATES:
            i = idx[int(frac * last)]
            fx, fy = (float(x[i]) - x_range[0]) / wx, (float(y[i]) - y_range[0]) / wy
            box = _label_box(fx, fy, line.label, font)
            a0, a1, a2, a3 = box
            # the overlaps with the boxes placed, summed in order (what sum(_overlap(box, b) for b in placed)
            # gives, without a call per pair: ~1 ms a map)
            cost = 0.0
            for b0, b1, b2, b3 in placed:
                dx = (a2 if a2 <= b2 else b2) - (a0 if a0 >= b0 else b0)
                if dx > 0.0:
                    dy = (a3 if a3 <= b3 else b3) - (a1 if a1 >= b1 else b1)
                    if dy > 0.0:
                        cost += dx * dy
            cost += 10 * (max(0.0, -a0) + max(0.0, a2 - 1) + max(0.0, a3 - 1) + max(0.0, -a1))
            if cost < best_cost:
                best, best_cost = (float(x[i]), float(y[i]), box), cost
            if cost == 0:
                break
        placed.append(best[2])
        out.append(best[:2])
    return out


@functools.lru_cache(maxsize=64)
def named_scale(name: str) -> tuple:
    """plotly's colour scale ``name`` as ((position, colour), ...), looked up once (plotly's lookup builds
    its table of every named scale on each call: ~0.3 ms, twice a map)."""
    import plotly.colors as pc
    return tuple((pos, colour) for pos, colour in pc.get_colorscale(name))


def _scale_list(scale):
    """A colour scale as the list plotly.js draws ([[0, colour], ..., [1, colour]]) for a plotly name."""
    if isinstance(scale, str):
        return [list(pair) for pair in named_scale(scale)]
    return scale


def plane_figure(log_rho: np.ndarray, log_T: np.ndarray, z: np.ndarray, *, z_label: str,
                 colorscale: str = "PuOr_r", z_mid: float | None = 0.0,
                 z_range: tuple[float, float] | None = None,
                 lines: list[Line] = (), title: str = "", presentation: bool = False,
                 hover_text: np.ndarray | None = None,
                 categorical: list[tuple[str, str]] | None = None,
                 customdata: np.ndarray | None = None,
                 extra_traces=(), colorbar_ticks=None, colorbar_note: str = "", hover_value: bool = True,
                 unphysical: np.ndarray | None = None, unphysical_label: str = "no physical value",
                 plain: bool = False) -> go.Figure | dict:
    """The density–temperature map: a shaded field with labelled lines over it.

    Parameters
    ----------
    log_rho, log_T : 1-D arrays
        Axes (log10 g cm^-3, log10 K).
    z : 2-D array, shape (len(log_T), len(log_rho))
        The shaded quantity (or integer codes when ``categorical`` is given).
        Sent as float32 (a typed array), the largest part of the payload.
    z_label : str
        Colour-bar title.
    colorscale, z_mid, z_range
        Plotly colour scale name; centre of a diverging scale (None for none);
        fixed colour limits (None for the data's range).
    lines : list of Line
        Boundaries, ignition contours, mass lines; each labelled on the plot,
        the labels placed so that they do not overlap where it can be helped.
    categorical : list of (label, colour), optional
        Draw ``z`` as categories with a legend instead of a colour bar.
    customdata : 2-D int array, optional
        Small integer codes per pixel (the regime), sent as int8 for the hover readout.
    extra_traces : sequence of plotly traces
        Drawn over everything else (the hook for stellar tracks).
    presentation : bool
        Larger type and thicker lines, for a projector.
    colorbar_ticks : (values, texts), optional
        Where the colour bar's ticks go and what they say (signed-log scales, "≥ 3.2" at a clipped end).
    colorbar_note : str
        A second, smaller line under the colour bar's title ("colours clipped ...").
    hover_value : bool
        Show the shaded value in the plot's own hover box (False when ``z`` is transformed:
        the readout under the map shows the real value).
    unphysical : 2-D bool array, optional
        Pixels with no physical value, drawn grey on top with a legend entry ``unphysical_label``
        and a hover box that says why.
    plain : bool
        Return the figure as a plain dict ``{"data": [...], "layout": {...}}`` of plotly.js properties
        (numpy arrays kept), without building a plotly Figure: what the map callback sends
        (app.delta), which would otherwise deep-copy the Figure back into such a dict.
    """
    font = 20 if presentation else 13
    line_scale = 2.0 if presentation else 1.0
    # traces and annotations are collected and handed to plotly once: adding them one at a time
    # re-validates the growing lists (tens of ms per map)
    traces, notes = [], []
    heat = dict(x=np.asarray(log_rho, dtype=np.float32), y=np.asarray(log_T, dtype=np.float32),
                z=np.asarray(z, dtype=np.float32), zsmooth=False, name="map", meta="map")
    if categorical:
        n = len(categorical)
        scale = []
        for i, (_, colour) in enumerate(categorical):
            scale += [[i / n, colour], [(i + 1) / n, colour]]
        heat.update(colorscale=scale, zmin=-0.5, zmax=n - 0.5, showscale=False)
        for label, colour in categorical:        # legend entries for the categories
            traces.append(dict(type="scatter", x=[None], y=[None], mode="markers", name=label,
                               marker=dict(size=18 if presentation else 14, color=colour, symbol="square"),
                               showlegend=True, hoverinfo="skip"))
    else:
        bar_title = z_label + (f"<br><span style='font-size:0.8em'>{colorbar_note}</span>" if colorbar_note else "")
        bar = dict(title=dict(text=bar_title, side="right"), thickness=22 if presentation else 16)
        if colorbar_ticks is not None:
            bar.update(tickmode="array", tickvals=list(map(float, colorbar_ticks[0])),
                       ticktext=list(colorbar_ticks[1]))
        heat.update(colorscale=_scale_list(colorscale), colorbar=bar)
        if z_range is not None:
            heat.update(zmin=z_range[0], zmax=z_range[1])
        elif z_mid is not None:
            heat.update(zmid=z_mid)
    if customdata is not None:
        heat.update(customdata=np.asarray(customdata, dtype=np.int8))
    if hover_text is not None:
        heat.update(text=hover_text, hovertemplate="%{text}<extra></extra>")
    elif categorical:
        heat.update(hovertemplate="log ρ = %{x:.2f}<br>log T = %{y:.2f}<extra></extra>")
    elif hover_value:
        heat.update(hovertemplate="log ρ = %{x:.2f}<br>log T = %{y:.2f}<br>"
                    + z_label + " = %{z:.4g}<extra></extra>")
    else:
        heat.update(hovertemplate="log ρ = %{x:.2f}<br>log T = %{y:.2f}<br>" + z_label
                    + ": see the readout under the map<extra></extra>")
    traces.append(dict(type="heatmap", **heat))
    if unphysical is not None:
        grey = "#9e9e9e"
        # only the rows and columns that hold such pixels (often a corner of the plane): the rest would
        # be NaN sent for nothing. One pixel more on each side, so plotly sees at least two columns and
        # rows and gives the cells their true width.
        mask = np.asarray(unphysical, bool)
        rows, cols = np.flatnonzero(mask.any(axis=1)), np.flatnonzero(mask.any(axis=0))
        r = slice(max(rows[0] - 1, 0), rows[-1] + 2)
        c = slice(max(cols[0] - 1, 0), cols[-1] + 2)
        traces.append(dict(type="heatmap", x=heat["x"][c], y=heat["y"][r],
                           z=np.where(mask[r, c], 1.0, np.nan).astype(np.float32),
                           colorscale=[[0, grey], [1, grey]], showscale=False, zsmooth=False, hoverongaps=False,
                           name=unphysical_label, meta="unphysical",
                           hovertemplate="log ρ = %{x:.2f}<br>log T = %{y:.2f}<br>" + unphysical_label
                           + "<extra></extra>"))
        traces.append(dict(type="scatter", x=[None], y=[None], mode="markers", name=unphysical_label,
                           marker=dict(size=14, color=grey, symbol="square"), showlegend=True, hoverinfo="skip"))

    x_range = (float(np.min(log_rho)), float(np.max(log_rho)))
    y_range = (float(np.min(log_T)), float(np.max(log_T)))
    avoid = []
    for tr in extra_traces:                     # track ends and crossing markers keep their place
        meta = str(getattr(tr, "meta", None) or (tr.get("meta") if isinstance(tr, dict) else "") or "")
        if meta.endswith((":ends", ":crossings")):
            xs = np.asarray(tr["x"] if isinstance(tr, dict) else tr.x, dtype=float)
            ys = np.asarray(tr["y"] if isinstance(tr, dict) else tr.y, dtype=float)
            avoid += list(zip(xs, ys))
    spots = place_labels(lines, x_range, y_range, font, avoid=avoid)
    for line, where in zip(lines, spots):
        colour, dash = LINE_STYLES.get(line.style or line.key, ("#111111", "solid"))
        # float32: a ten-millionth of a decade is far below a pixel, and half the bytes
        x = np.asarray(line.log_rho, dtype=np.float32)
        y = np.asarray(line.log_T, dtype=np.float32)
        traces.append(dict(type="scatter", x=x, y=y, mode="lines", name=line.label, connectgaps=False,
                           line=dict(color=colour, dash=dash, width=line.width * line_scale),
                           hovertemplate=line.label + "<br>log ρ = %{x:.2f}, log T = %{y:.2f}<extra></extra>",
                           showlegend=False, meta=line.key))
        if where is not None:
            notes.append(dict(dict(x=where[0], y=where[1], text=line.label, showarrow=False,
                              font=dict(size=font - 1, color=colour),
                              bgcolor="rgba(255,255,255,0.85)", bordercolor=colour, borderwidth=1,
                              borderpad=2, yshift=12, name=f"label:{line.key}"), **line.extra.get("label", {})))
    traces.extend(extra_traces)
    axis = dict(showgrid=False, zeroline=False, ticks="outside", mirror=True, showline=True,
                linecolor="#000" if presentation else "#333", linewidth=2 if presentation else 1)
    layout = dict(
        annotations=notes,
        title=dict(text=title, x=0.01, font=dict(size=font + 2)),
        xaxis=dict(title=dict(text="log₁₀ ρ  [g cm⁻³]"), range=list(x_range), **axis),
        yaxis=dict(title=dict(text="log₁₀ T  [K]"), range=list(y_range), **axis),
        font=dict(size=font, family="Inter, Segoe UI, Helvetica, Arial, sans-serif",
                  color="#000" if presentation else "#1b1b1b"),
        margin=dict(l=80 if presentation else 70, r=20,
                    t=(50 if title else 20) + ((70 if presentation else 40) if categorical else 0),
                    b=70 if presentation else 60),
        plot_bgcolor="white", paper_bgcolor="white",
        # one legend row or two above the plot; with many tracks it scrolls instead of eating the map
        legend=dict(orientation="h", yanchor="bottom", y=1.02, x=0, bgcolor="rgba(255,255,255,0.8)",
                    font=dict(size=font - 4 if presentation else font - 1), maxheight=0.14, entrywidthmode="pixels",
                    itemwidth=30),
        # the plot keeps the user's zoom and legend clicks until the plane's ranges change (a zoom writes
        # the range boxes, so the new plane comes with its own ranges; the reset button and typed ranges
        # show); keyed on the ends of the grid, so a coarse preview and the full map share it
        uirevision="plane {:.6g} {:.6g} {:.6g} {:.6g}".format(*_edges(log_rho), *_edges(log_T)),
    )
    # Built once and not validated: plotly's validation of twenty traces and the layout took about 90 ms
    # per map (more than the physics of a 100 x 100 preview). Everything above is written in plotly.js's
    # own terms (colour scales as lists, titles as dicts); tests/app/test_figures.py validates the figures.
    if plain:
        # what a plotly Figure adds by itself: the default template (fonts, colour bar and hover styles)
        return {"data": traces, "layout": {**layout, "template": _default_template()}}
    return go.Figure(data=traces, layout=layout, _validate=False)


_TEMPLATES: dict = {}


def _default_template() -> dict:
    """plotly's default template as the plain dict a Figure puts under layout.template (kept per name)."""
    import plotly.io as pio
    name = pio.templates.default
    if name not in _TEMPLATES:
        _TEMPLATES[name] = go.Figure().to_plotly_json()["layout"].get("template", {})
    return _TEMPLATES[name]


def graph_config(filename: str = "thermoplane-map", scale: int = 3) -> dict:
    """dcc.Graph config: the camera button saves a PNG at ``scale`` times the screen size."""
    return {"displaylogo": False, "responsive": True,
            "toImageButtonOptions": {"format": "png", "filename": filename, "scale": scale},
            "modeBarButtonsToRemove": ["lasso2d", "select2d"]}


# ----------------------------------------------------------------------------
# stellar tracks
# ----------------------------------------------------------------------------
#: Colour scale for a track coloured by its parameter (perceptually uniform,
#: readable by colour-blind viewers; Nuñez, Anderton & Renslow 2018, PLoS ONE 13, e0199239).
TRACK_PARAMETER_SCALE = "Cividis"


def _legend_name(name: str, limit: int = 26) -> str:
    return name if len(name) <= limit else name[:limit - 1] + "…"


def track_traces(track_id: str, name: str, colour: str, d: dict, *, colour_by: bool = False,
                 presentation: bool = False, labelled: bool = True) -> list[go.Scatter]:
    """Traces of one track over the map: a white halo, the line, start and end, labelled crossings.

    Parameters
    ----------
    track_id, name, colour
        The track's id (in each trace's ``meta``: ``track:ID``), legend name and line colour.
    d : dict
        ``x``, ``y`` (log rho, log T; NaN on rows not evaluated), ``row``,
        ``age`` (or None), ``regime`` (words), ``beta``, ``eta`` per drawn
        point; ``crossings`` (records with label, short, row, row_after,
        log_rho, log_T, age, X, Y, Z, composition); ``age_name`` (the
        parameter's column, or None); ``composition`` (per drawn point text,
        or None when the track has no composition of its own).
    colour_by : bool
        Colour the points by the parameter (age, else row) with a colour bar
        (beside the map's own; one track at a time).
    presentation : bool
        Thicker lines, larger markers and text, like the map's lines in presentation mode.
    labelled : bool
        Write "start", "end" and the crossings' short labels on the map (markers and hover texts
        are drawn either way).
    """
    big = 1.8 if presentation else 1.0
    x = np.asarray(d["x"], dtype=float)
    y = np.asarray(d["y"], dtype=float)
    row = np.asarray(d["row"])
    age = d.get("age")
    has_age = age is not None
    age = np.asarray(age, dtype=float) if has_age else row.astype(float)
    custom = np.empty((x.size, 7), dtype=object)
    custom[:, 0] = row
    custom[:, 1] = np.where(np.isfinite(age), np.char.mod("%.5g", np.nan_to_num(age)), "—")
    with np.errstate(invalid="ignore"):
        custom[:, 2] = np.char.mod("%.4g", 10.0 ** np.nan_to_num(x))
        custom[:, 3] = np.char.mod("%.4g", 10.0 ** np.nan_to_num(y))
    custom[:, 4] = d["regime"]
    custom[:, 5] = [f"β = {b:.4f}, η = {e:.3g}" if np.isfinite(b) else "not evaluated"
                    for b, e in zip(np.asarray(d["beta"], float), np.asarray(d["eta"], float))]
    comp_rows = d.get("composition")
    custom[:, 6] = comp_rows if comp_rows is not None else ""
    age_word = d.get("age_name") or "parameter"
    hover = (f"<b>{name}</b><br>row %{{customdata[0]}}"
             + (f", {age_word} = %{{customdata[1]}}" if has_age else "")
             + "<br>ρ = %{customdata[2]} g cm⁻³, T = %{customdata[3]} K<br>%{customdata[4]}<br>%{customdata[5]}"
             + ("<br>own composition: %{customdata[6]}" if comp_rows is not None else "")
             + "<extra></extra>")
    meta = f"track:{track_id}"
    traces = [go.Scatter(x=x, y=y, mode="lines", line=dict(color="rgba(255,255,255,0.85)", width=6 * big),
                         hoverinfo="skip", showlegend=False, meta=meta + ":halo", connectgaps=False)]
    line = dict(x=x, y=y, name=_legend_name(name), meta=meta, customdata=custom, hovertemplate=hover,
                connectgaps=False, legendgroup=meta, showlegend=True)
    if colour_by:
        line.update(mode="lines+markers", line=dict(color=colour, width=1.5 * big),
                    marker=dict(size=5 * big, color=age, colorscale=TRACK_PARAMETER_SCALE, showscale=True,
                                colorbar=dict(title=dict(text=f"{_legend_name(name)}: {age_word if has_age else 'row'}",
                                                         side="right"),
                                              x=1.13, len=0.7, thickness=12)))
    else:
        line.update(mode="lines", line=dict(color=colour, width=2.5 * big))
    traces.append(go.Scatter(**line))
    ok = np.flatnonzero(np.isfinite(x) & np.isfinite(y))
    if ok.size:
        ends = [ok[0], ok[-1]]
        traces.append(go.Scatter(
            x=x[ends], y=y[ends], mode="markers+text" if labelled else "markers", text=["start", "end"],
            textposition="top center",
            textfont=dict(color=colour, size=12 * big), legendgroup=meta, showlegend=False, meta=meta + ":ends",
            marker=dict(symbol=["circle", "square"], size=11 * big, color=colour, line=dict(color="white", width=2)),
            hovertemplate=f"<b>{name}</b>: %{{text}} (row %{{customdata}})<extra></extra>",
            customdata=row[ends]))
    cr = d.get("crossings") or []
    if cr:
        def comp_text(c):
            if c.get("X") is None:
                return ""
            whose = "the track's own" if c.get("composition") == "track" else "the panel's"
            return f"<br>composition ({whose}): X = {c['X']:.3f}, Y = {c['Y']:.3f}, Z = {c['Z']:.3f}"

        traces.append(go.Scatter(
            x=[c["log_rho"] for c in cr], y=[c["log_T"] for c in cr], mode="markers+text" if labelled else "markers",
            legendgroup=meta,
            showlegend=False, meta=meta + ":crossings",
            text=[c.get("short") or c["label"] for c in cr],
            textposition=["middle right" if i % 2 == 0 else "middle left" for i in range(len(cr))],
            textfont=dict(color="#1b1b1b", size=11 * big),
            marker=dict(symbol="diamond", size=9 * big, color="white", line=dict(color=colour, width=2)),
            customdata=[[c["label"], f"{c['row']}–{c['row_after']}",
                         "" if c.get("age") is None else f", {age_word} = {c['age']:.5g}", comp_text(c)]
                        for c in cr],
            hovertemplate=f"<b>{name}</b> crosses %{{customdata[0]}}<br>between rows %{{customdata[1]}}"
                          "%{customdata[2]}<br>log ρ = %{x:.3f}, log T = %{y:.3f}%{customdata[3]}<extra></extra>"))
    return traces


def empty_figure(message: str) -> go.Figure:
    """A blank figure with a message in the middle (no axes)."""
    fig = go.Figure()
    fig.update_layout(xaxis=dict(visible=False), yaxis=dict(visible=False), plot_bgcolor="white",
                      paper_bgcolor="white", margin=dict(l=20, r=20, t=20, b=20),
                      annotations=[dict(text=message, showarrow=False, font=dict(size=14, color="#555"),
                                        xref="paper", yref="paper", x=0.5, y=0.5)] if message else [])
    return fig


def track_quantity_figure(series, *, y_label: str, x_label: str, log_y: bool = False) -> go.Figure:
    """A small plot of one quantity along each track: ``series`` = [(name, colour, x, y), ...]."""
    if not series:
        return empty_figure("No visible track")
    fig = go.Figure()
    for name, colour, x, y in series:
        fig.add_trace(go.Scatter(x=np.asarray(x, float), y=np.asarray(y, float), mode="lines", name=name,
                                 line=dict(color=colour, width=2), connectgaps=False,
                                 hovertemplate=f"{name}<br>%{{x:.5g}}: %{{y:.5g}}<extra></extra>"))
    axis = dict(showgrid=True, gridcolor="#e5e5e5", zeroline=False, ticks="outside", showline=True,
                linecolor="#333", mirror=True)
    fig.update_layout(xaxis=dict(title=x_label, **axis),
                      yaxis=dict(title=y_label, type="log" if log_y else "linear", **axis),
                      plot_bgcolor="white", paper_bgcolor="white", margin=dict(l=70, r=20, t=20, b=50),
                      font=dict(size=13, family="Inter, Segoe UI, Helvetica, Arial, sans-serif"),
                      legend=dict(orientation="h", yanchor="bottom", y=1.02, x=0), showlegend=len(series) > 1)
    return fig
