"""Pure functions from numbers to plotly figures: no Dash, no server, testable alone."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import plotly.graph_objects as go

__all__ = ["Line", "plane_figure", "LINE_STYLES", "COLOR_SCALES"]

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
    "h_ionization": ("#674ea7", "dot"),
    "he_ionization": ("#674ea7", "dashdot"),
    "ignition": ("#b45f06", "longdash"),
    "mass": ("#444444", "longdashdot"),
}


@dataclass
class Line:
    """A line drawn over the map, labelled on the plot itself."""

    key: str
    label: str
    log_rho: np.ndarray
    log_T: np.ndarray
    style: str = ""                    # key into LINE_STYLES; defaults to key
    width: float = 2.0
    extra: dict = field(default_factory=dict)


def _label_position(x: np.ndarray, y: np.ndarray, x_range, y_range):
    """A point on the line inside the view, away from the edges, for its label."""
    ok = np.isfinite(x) & np.isfinite(y)
    ok &= (x > x_range[0]) & (x < x_range[1]) & (y > y_range[0]) & (y < y_range[1])
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        return None
    i = idx[int(0.72 * (idx.size - 1))]
    return float(x[i]), float(y[i])


def plane_figure(log_rho: np.ndarray, log_T: np.ndarray, z: np.ndarray, *, z_label: str,
                 colorscale: str = "PuOr_r", z_mid: float | None = 0.0,
                 z_range: tuple[float, float] | None = None,
                 lines: list[Line] = (), title: str = "", presentation: bool = False,
                 hover_text: np.ndarray | None = None,
                 categorical: list[tuple[str, str]] | None = None) -> go.Figure:
    """The density–temperature map: a shaded field with labelled lines over it.

    Parameters
    ----------
    log_rho, log_T : 1-D arrays
        Axes (log10 g cm^-3, log10 K).
    z : 2-D array, shape (len(log_T), len(log_rho))
        The shaded quantity (or integer codes when ``categorical`` is given).
    z_label : str
        Colour-bar title.
    colorscale, z_mid, z_range
        Plotly colour scale name; centre of a diverging scale (None for none);
        fixed colour limits (None for the data's range).
    lines : list of Line
        Boundaries, ignition contours, mass lines; each labelled on the plot.
    categorical : list of (label, colour), optional
        Draw ``z`` as categories with a legend instead of a colour bar.
    """
    font = 20 if presentation else 13
    line_scale = 2.0 if presentation else 1.0
    fig = go.Figure()
    heat = dict(x=np.asarray(log_rho, dtype=np.float32), y=np.asarray(log_T, dtype=np.float32),
                z=np.asarray(z, dtype=np.float32), zsmooth=False, name="map")
    if categorical:
        n = len(categorical)
        scale = []
        for i, (_, colour) in enumerate(categorical):
            scale += [[i / n, colour], [(i + 1) / n, colour]]
        heat.update(colorscale=scale, zmin=-0.5, zmax=n - 0.5, showscale=False)
        for label, colour in categorical:        # legend entries for the categories
            fig.add_trace(go.Scatter(x=[None], y=[None], mode="markers", name=label,
                                     marker=dict(size=14, color=colour, symbol="square"),
                                     showlegend=True, hoverinfo="skip"))
    else:
        heat.update(colorscale=colorscale,
                    colorbar=dict(title=dict(text=z_label, side="right"), thickness=16))
        if z_range is not None:
            heat.update(zmin=z_range[0], zmax=z_range[1])
        elif z_mid is not None:
            heat.update(zmid=z_mid)
    if hover_text is not None:
        heat.update(text=hover_text, hovertemplate="%{text}<extra></extra>")
    else:
        heat.update(hovertemplate="log ρ = %{x:.2f}<br>log T = %{y:.2f}<br>"
                    + z_label + " = %{z:.3g}<extra></extra>")
    fig.add_trace(go.Heatmap(**heat))

    x_range = (float(np.min(log_rho)), float(np.max(log_rho)))
    y_range = (float(np.min(log_T)), float(np.max(log_T)))
    for line in lines:
        colour, dash = LINE_STYLES.get(line.style or line.key, ("#111111", "solid"))
        x = np.asarray(line.log_rho, dtype=float)
        y = np.asarray(line.log_T, dtype=float)
        fig.add_trace(go.Scatter(x=x, y=y, mode="lines", name=line.label, connectgaps=False,
                                 line=dict(color=colour, dash=dash, width=line.width * line_scale),
                                 hovertemplate=line.label + "<br>log ρ = %{x:.2f}, log T = %{y:.2f}<extra></extra>",
                                 showlegend=False, meta=line.key))
        where = _label_position(x, y, x_range, y_range)
        if where is not None:
            fig.add_annotation(x=where[0], y=where[1], text=line.label, showarrow=False,
                               font=dict(size=font - 1, color=colour),
                               bgcolor="rgba(255,255,255,0.78)", borderpad=2, yshift=12)
    fig.update_layout(
        title=dict(text=title, x=0.01, font=dict(size=font + 2)),
        xaxis=dict(title="log₁₀ ρ  [g cm⁻³]", range=list(x_range), showgrid=False, zeroline=False,
                   ticks="outside", mirror=True, showline=True, linecolor="#333"),
        yaxis=dict(title="log₁₀ T  [K]", range=list(y_range), showgrid=False, zeroline=False,
                   ticks="outside", mirror=True, showline=True, linecolor="#333"),
        font=dict(size=font, family="Inter, Segoe UI, Helvetica, Arial, sans-serif", color="#1b1b1b"),
        margin=dict(l=70, r=20, t=50 if title else 20, b=60),
        plot_bgcolor="white", paper_bgcolor="white",
        legend=dict(orientation="h", yanchor="bottom", y=1.01, x=0, bgcolor="rgba(255,255,255,0.8)"),
        uirevision="plane",
    )
    return fig
