"""The map panel: the whole view in, shaded plane with its lines out.

Thin: :func:`parse_view` checks the controls (ValueError with a message for the
control that caused it), :func:`map_figure` asks the cached physics for the
plane and the lines, and :mod:`app.figures` draws them.
"""

from __future__ import annotations

import logging

import numpy as np
from dash import Input, Output, State, ctx, no_update

from ... import physics as ph
from ...physics import impact, plane, regimes

from .. import delta, figures
from ..state import COLOR_CHOICES, CONTROLS, DEFAULT_VIEW, controls_to_view, encode_view
from ..view import (ASINH_SCALES, ViewError, _range, composition_from_inputs, jsonable, overlay_lines, parse_view,  # noqa: F401
                    physics_options, quantity, track_overlay, view_from_store)
from . import layers
from .composition import number, readout

log = logging.getLogger(__name__)

__all__ = ["MESSAGES", "ViewError", "parse_view", "physics_options", "map_figure", "update_map", "is_preview",
           "PREVIEW_RESOLUTION", "zoom_ranges", "dragged_controls", "map_answer", "preview_answer", "NO_PREVIEW",
           "composition_from_inputs", "quantity", "register"]

#: Message areas, each next to the controls whose errors it shows.
MESSAGES = ("comp-message", "mix-message", "phys-message", "map-range-message", "map-levels-message",
            "map-masses-message", "map-message")
GENERIC_ERROR = "Something went wrong while drawing the map; the server log has the details."
#: Legend words for the grey region where no value is physical.
UNPHYSICAL_LABEL = "no physical value: P ≤ 0 with these options"


def _colours(q, choice: str):
    _, scale, diverging = COLOR_CHOICES[choice]
    if scale is None:                                   # automatic
        diverging = q.centre is not None
        scale = "PuOr_r" if diverging else "Viridis"
    return scale, (q.centre if diverging else None)


#: Colour range of a sequential map: these percentiles of its pixels, so one spike (Γ₁ next to the
#: pressure-ionization band) does not turn the whole map one colour. Our choice; common practice.
ROBUST_PERCENTILES = (1.0, 99.0)


def _centred_scale(name: str, lo: float, hi: float, centre: float) -> list:
    """A diverging colour scale stretched so that its middle colour sits at ``centre`` in [lo, hi]."""
    f0 = min(max((centre - lo) / (hi - lo), 0.02), 0.98)
    out = []
    for pos, colour in figures.named_scale(name):
        out.append([pos * 2 * f0 if pos <= 0.5 else f0 + (pos - 0.5) * 2 * (1 - f0), colour])
    return out

_IMPACT_COLOURS = ("#d9d9d9", "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442")


def _shading(comp, opts, view, grid, q):
    """The values to shade for quantity ``q`` (the plane's field, or an impact map)."""
    if not q.name.startswith("impact_"):
        return grid.get(q.name)
    n = int(view["resolution"])
    lr, lt = tuple(view["log_rho"]), tuple(view["log_T"])
    if q.categorical:
        which, _ = impact.impact_categories(comp, lr, lt, n, **opts)
        return which
    rest = q.name[len("impact_"):]
    field = next(f for f in impact.IMPACT_FIELDS if rest.endswith("_" + f))
    return impact.impact_percent(comp, rest[:-len(field) - 1], field, lr, lt, n, **opts)


def _nice_ticks(lo: float, hi: float, n: int = 6) -> np.ndarray:
    span = hi - lo
    raw = span / max(n - 1, 1)
    mag = 10.0 ** np.floor(np.log10(raw))
    step = mag * min((1, 2, 2.5, 5, 10), key=lambda m: abs(m * mag - raw))
    ticks = np.arange(np.ceil(lo / step) * step, hi + 1e-9 * span, step)
    return ticks[(ticks - lo > 0.25 * step) & (hi - ticks > 0.25 * step)]


def _fmt_tick(v: float) -> str:
    return f"{v:.4g}"


def _asinh_ticks(lo: float, hi: float, unit: float):
    """Tick positions (in asinh units) and texts (in the quantity's units) for a signed-log colour bar:
    0 and powers of ten, outward from 0, none closer to the last than a twelfth of the bar."""
    gap = (hi - lo) / 12.0
    pos, vals = [], []
    if lo <= 0 <= hi:
        pos.append(0.0)
        vals.append(0.0)
    for sign in (1, -1):
        last = 0.0
        for k in range(-6, 16):
            v = sign * unit * 10.0 ** k
            p = float(np.arcsinh(v / unit))
            if lo + 0.5 * gap <= p <= hi - 0.5 * gap and abs(p - last) >= gap:
                pos.append(p)
                vals.append(v)
                last = p
    order = np.argsort(pos)
    return np.asarray(pos)[order], [f"{vals[i]:g}" for i in order]


def _colour_range(z, q, mid, transform_unit):
    """(z to draw, zmin, zmax, tick values, tick texts, clipped (low, high))."""
    finite = z[np.isfinite(z)]
    if transform_unit is not None:
        with np.errstate(invalid="ignore"):
            z = np.arcsinh(z / transform_unit)
        finite = np.arcsinh(finite / transform_unit)
    if finite.size == 0:
        return z, None, None, None, None, (False, False)
    if mid is not None:
        # robust on each side of the centre separately: η runs from -30 to 1e8, and a symmetric
        # range would spend half the colours on values that do not occur
        c = mid if transform_unit is None else 0.0
        below, above = finite[finite < c], finite[finite > c]
        lo = float(np.percentile(below, ROBUST_PERCENTILES[0])) if below.size else c
        hi = float(np.percentile(above, ROBUST_PERCENTILES[1])) if above.size else c
        span = max(hi - lo, 1e-6)
        lo, hi = min(lo, c - 0.05 * span), max(hi, c + 0.05 * span)
    else:
        lo, hi = (float(v) for v in np.percentile(finite, ROBUST_PERCENTILES))
        if not hi > lo:
            lo, hi = lo - 0.5, hi + 0.5
    clipped = (bool(finite.min() < lo - 1e-9 * abs(lo)), bool(finite.max() > hi + 1e-9 * abs(hi)))
    if transform_unit is not None:
        vals, texts = _asinh_ticks(lo, hi, transform_unit)
    else:
        vals = _nice_ticks(lo, hi)
        texts = [_fmt_tick(v) for v in vals]
    vals, texts = list(vals), list(texts)
    # the ends of the colour bar say where the colours stop: "≤ lo", "≥ hi" when the data go beyond
    span = hi - lo
    for end, where, mark in ((lo, 0, "≤ "), (hi, None, "≥ ")):
        value = end if transform_unit is None else transform_unit * np.sinh(end)
        # an end within a millionth of the bar's span of zero is zero (a log fraction of -9.5e-12 reads 0)
        if transform_unit is None and abs(value) < 1e-6 * span:
            value = 0.0
        label = _fmt_tick(value)
        is_clipped = clipped[0] if mark == "≤ " else clipped[1]
        if where == 0:
            vals.insert(0, lo)
            texts.insert(0, (mark if is_clipped else "") + label)
        else:
            vals.append(hi)
            texts.append((mark if is_clipped else "") + label)
    return z, lo, hi, vals, texts, clipped


def build(comp, opts: dict, view: dict, extra_traces=(), plain: bool = False):
    """(figure, grid, messages) for a checked view; physics from the caches. ``plain``: the figure as a
    plain dict (:func:`app.figures.plane_figure`), for :func:`app.delta.figure_update`."""
    n = int(view["resolution"])
    grid = plane.plane_grid(comp, tuple(view["log_rho"]), tuple(view["log_T"]), n, n, **opts)
    q = quantity(view["quantity"])
    lines, messages = overlay_lines(grid, comp, view, opts)
    # where P <= 0 (the Coulomb term beyond the ideal pressure under comparison options) no value is
    # physical: drawn grey with a legend entry, never shaded as if it were a regime
    unphysical = ~np.isfinite(np.asarray(grid.get("log_P"), dtype=float))
    common = dict(lines=lines, presentation=bool(view.get("presentation")), customdata=grid.regime,
                  extra_traces=extra_traces,
                  unphysical=unphysical if unphysical.any() else None,
                  unphysical_label=UNPHYSICAL_LABEL, plain=plain)
    if q.categorical and q.name not in ("regime",) and not q.name.startswith("impact_"):
        fig = figures.plane_figure(grid.log_rho, grid.log_T, grid.get(q.name), z_label=q.label,
                                   categorical=layers.categories(q.name), **common)
    elif q.categorical and q.name == "regime":
        fig = figures.plane_figure(grid.log_rho, grid.log_T, grid.regime, z_label=q.label,
                                   categorical=[(r.label, r.colour) for r in regimes.REGIMES], **common)
    elif q.categorical:
        which = _shading(comp, opts, view, grid, q).astype(float)
        which[which < 0] = np.nan
        labels = impact.category_labels()
        fig = figures.plane_figure(grid.log_rho, grid.log_T, which, z_label=q.label,
                                   categorical=[(lab, _IMPACT_COLOURS[i % len(_IMPACT_COLOURS)])
                                                for i, lab in enumerate(labels)], **common)
    else:
        scale, mid = _colours(q, view.get("colorscale", "auto"))
        z = np.asarray(_shading(comp, opts, view, grid, q), dtype=float)
        if not np.any(np.isfinite(z)):
            messages["map-message"] = f"{q.label} is not available for this plane (no value anywhere in view)"
        unit = ASINH_SCALES.get(q.name)
        z, lo, hi, vals, texts, clipped = _colour_range(z, q, mid, unit)
        notes = []
        if any(clipped):
            notes.append(f"colours clipped to the {ROBUST_PERCENTILES[0]:g}–{ROBUST_PERCENTILES[1]:g} % range")
        if mid is not None and lo is not None:
            scale = _centred_scale(scale, lo, hi, mid if unit is None else 0.0)
        if unit is not None:
            notes.append("signed-log scale")
        if q.name.startswith("eps_"):
            notes.append(f"blank below 10^{plane.EPS_FLOOR:g} erg/g/s")
        fig = figures.plane_figure(grid.log_rho, grid.log_T, z, z_label=q.label, colorscale=scale,
                                   z_mid=None if lo is not None else mid,
                                   z_range=(lo, hi) if lo is not None else None,
                                   colorbar_ticks=(vals, texts) if vals is not None else None,
                                   colorbar_note="; ".join(notes), hover_value=unit is None, **common)
    return fig, grid, messages


def map_figure(comp: ph.Composition, view: dict = DEFAULT_VIEW, extra_traces=()):
    """The map figure of a composition for a view (defaults filled in); ValueError on a bad view.

    ``extra_traces`` (plotly traces) are drawn on top: the hook for tracks.
    """
    view = {**DEFAULT_VIEW, **view}
    opts = physics_options(view)
    lr = _range(view["log_rho"], "log ρ", plane.LOG_RHO_LIMITS)
    lt = _range(view["log_T"], "log T", plane.LOG_T_LIMITS)
    view = {**view, "log_rho": lr, "log_T": lt}
    fig, _, _ = build(comp, opts, view, extra_traces)
    return fig


#: Pixels per side of the coarse map drawn while a composition slider moves (the chosen resolution if lower).
PREVIEW_RESOLUTION = 100
#: The only changes a preview may answer: the drag itself and the X, Y, Z boxes.
PREVIEW_TRIGGERS = frozenset({"comp-drag.data", "comp-X.value", "comp-Y.value", "comp-Z.value"})


def is_preview(drag, triggered) -> bool:
    """Whether this redraw is a coarse preview: a composition slider is held (the "comp-drag" store says
    so) and nothing but the drag and the boxes changed. Any other control draws in full."""
    held = isinstance(drag, dict) and bool(drag.get("drag"))
    triggered = set(triggered or ())
    return held and bool(triggered) and triggered <= PREVIEW_TRIGGERS


def dragged_controls(drag, controls: dict) -> dict:
    """The controls with the value of the slider in the hand (the "comp-drag" store: ``key`` X, Y or Z and
    ``value``) in place of its box. While the hand moves, the browser writes only that store (the boxes
    follow on release), so each preview is one request and waits for no other callback; with
    "Z = 1 − X − Y" ticked, Z follows from X and Y as for a typed value."""
    if not isinstance(drag, dict) or drag.get("key") not in ("X", "Y", "Z"):
        return controls
    value = drag.get("value")
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0.0 <= value <= 1.0:
        return controls
    return {**controls, drag["key"]: float(value)}


def _empty_messages() -> dict:
    return {m: "" for m in MESSAGES}


def update_map(tracks=None, track_colour_by=None, preview=False, plain=False, **controls) -> dict:
    """Callback body: control values (keyed like state.CONTROLS) -> outputs dict.

    ``tracks`` is the tracks store (drawn over the map, so they survive every
    redraw) and ``track_colour_by`` the "colour by parameter" choice.

    Outputs: "figure" (or no_update: the last good map stays), "readout",
    "view" (the checked view with its URL query, for sharing and export) and
    one text per message area of :data:`MESSAGES`.

    ``preview`` (a slider is moving): the map is drawn with at most :data:`PREVIEW_RESOLUTION` pixels per
    side and the view (URL, point, tracks readouts) is left alone until the full map follows.

    ``plain``: the figure as a plain dict of plotly.js properties instead of a plotly Figure (what
    :func:`map_answer` hands to app.delta).
    """
    out = {"figure": no_update, "readout": no_update, "view": no_update, **_empty_messages()}
    try:
        view = controls_to_view(**controls)
        comp, opts, clean = parse_view(view)
        out["readout"] = readout(comp)
        drawn = {**clean, "resolution": min(int(clean["resolution"]), PREVIEW_RESOLUTION)} if preview else clean
        fig, grid, messages = build(comp, opts, drawn, track_overlay(tracks, track_colour_by, comp, opts, drawn),
                                    plain=plain)
        out.update(messages)
        out["figure"] = fig
        if not preview:
            out["view"] = {"view": jsonable(clean), "query": encode_view(clean)}
    except ViewError as err:
        out[err.where] = str(err)
    except ValueError as err:
        out["map-message"] = str(err)
    except Exception:                                  # never a traceback in the page
        log.exception("map callback failed")
        out["map-message"] = GENERIC_ERROR
    return out


#: Decimals kept of a zoomed range (the URL stays readable; 1e-4 in log is far below a pixel).
ZOOM_DECIMALS = 4


def _axis_range(relayout: dict, axis: str):
    """(lo, hi) a relayout event gives for ``axis`` ("xaxis"/"yaxis"), "auto" for an autorange, or None."""
    if relayout.get(f"{axis}.autorange"):
        return "auto"
    pair = relayout.get(f"{axis}.range")
    if not isinstance(pair, (list, tuple)) or len(pair) != 2:
        pair = (relayout.get(f"{axis}.range[0]"), relayout.get(f"{axis}.range[1]"))
    if pair[0] is None or pair[1] is None:
        return None
    lo, hi = sorted(number(v, axis) for v in pair)
    return lo, hi


def zoom_ranges(relayout) -> tuple:
    """Callback body: a zoom or pan on the map -> (log ρ from, to, log T from, to, message).

    The range boxes are the view (and the URL), so writing them recomputes the plane at full resolution for
    the new ranges. A range beyond the allowed limits is clamped to them and the message says so, in the
    words of the range check; an autorange (double click) goes back to the ranges in the boxes, so it
    changes nothing. Untouched values are ``no_update``.
    """
    out = [no_update] * 4 + [no_update]
    if not isinstance(relayout, dict):
        return tuple(out)
    notes = []
    try:
        for i, (axis, name, limits) in enumerate((("xaxis", "log ρ", plane.LOG_RHO_LIMITS),
                                                  ("yaxis", "log T", plane.LOG_T_LIMITS))):
            r = _axis_range(relayout, axis)
            if r is None or r == "auto":
                continue
            lo, hi = (round(v, ZOOM_DECIMALS) for v in r)
            for which, v in (("from", lo), ("to", hi)):
                if not limits[0] <= v <= limits[1]:
                    notes.append(f"{name} {which} = {v:g} must be between {limits[0]:g} and {limits[1]:g}; "
                                 "the zoom stops there")
            lo, hi = min(max(lo, limits[0]), limits[1]), min(max(hi, limits[0]), limits[1])
            if not hi > lo:
                notes.append(f"{name}: the zoomed range is too narrow; the map stays")
                continue
            out[2 * i], out[2 * i + 1] = lo, hi
    except ValueError as err:
        return tuple([no_update] * 4 + [str(err)])
    out[4] = " ".join(notes)
    return tuple(out)


#: Said instead of a preview when the physics is too slow to follow a slider.
NO_PREVIEW = "The chemical picture is too slow to follow the hand: the map redraws when you let go."


def map_answer(drag, shape, triggered, **controls) -> dict:
    """The map callback's answer: a coarse preview while a slider is held (none for the chemical picture,
    whose first map of each composition also builds its two-phase lines: seconds to tens of seconds), else
    the full map; a new figure goes as a Patch of the one shown when it can (app.delta)."""
    preview = is_preview(drag, triggered)
    if preview and controls.get("ionization") == "chemical":
        out = {key: no_update for key in ("figure", "readout", "view", "shape", *MESSAGES)}
        out["phys-message"] = NO_PREVIEW
        return out
    if not preview:
        out = update_map(plain=True, **controls)
        out["shape"] = no_update
        if out["figure"] is not no_update:
            out["figure"], out["shape"] = delta.figure_update(out["figure"], shape)
        return out
    # A preview leaves the tracks where the browser shows them (delta.figure_update, keep_tracks): drawing
    # them costs more than the map (each is evaluated again for the composition, and hashed), ~0.9 s a
    # preview for a 20,000-row track; the full map on release draws them for the new composition. Only
    # where the map's own structure changes (a line appears or goes) is the whole figure sent, tracks drawn.
    dragged = dragged_controls(drag, controls)
    out = update_map(preview=True, plain=True, **{**dragged, "tracks": None})
    out["shape"] = no_update
    if out["figure"] is not no_update:
        out["figure"], out["shape"] = delta.figure_update(out["figure"], shape, keep_tracks=True)
        if isinstance(out["figure"], dict) and controls.get("tracks"):
            out = update_map(preview=True, plain=True, **dragged)
            out["figure"], out["shape"] = delta.figure_update(out["figure"], shape)
    # while the hand moves, an empty message is not sent again (each output costs the browser a
    # pass over the page's components); the full map on release writes them all
    out.update({m: no_update for m in MESSAGES if out[m] == ""})
    return out


#: Outputs of the second preview callback (the map callback's, but the view: a preview leaves it alone).
PREVIEW_OUTPUTS = ("figure", "readout", "shape", *MESSAGES)


def preview_answer(drag, shape, **controls) -> dict:
    """The second preview callback's answer (store "comp-drag-b"): a coarse preview while a slider is held,
    else nothing (the page writes that store when the hand lets go, so that Dash drops a preview still on
    its way). The page keeps one preview in flight on this callback and one on the map callback's, so the
    server computes the next while the browser draws the last (assets/thermoplane.js)."""
    if not (isinstance(drag, dict) and drag.get("drag")):
        return {key: no_update for key in PREVIEW_OUTPUTS}
    out = map_answer(drag, shape, ["comp-drag.data"], **controls)
    return {key: out[key] for key in PREVIEW_OUTPUTS}


def register(app) -> None:
    outputs = {"figure": Output("plane-graph", "figure"), "readout": Output("comp-readout", "children"),
               "view": Output("view-store", "data"),
               **{m: Output(m, "children") for m in MESSAGES}}
    inputs = {k: Input(cid, prop) for k, (cid, prop) in CONTROLS.items()}
    inputs["tracks"] = Input("tracks-store", "data")
    inputs["track_colour_by"] = Input("tracks-colour-by", "value")
    inputs["drag"] = Input("comp-drag", "data")
    # the fingerprint of the figure the browser shows: a new map goes as a Patch of it when it can (app.delta)
    outputs["shape"] = Output("map-shape", "data")
    inputs["shape"] = State("map-shape", "data")

    def _map(drag=None, shape=None, **controls):
        return map_answer(drag, shape, ctx.triggered_prop_ids, **controls)

    app.callback(output=outputs, inputs=inputs)(_map)

    # The second preview callback: the same outputs (allow_duplicate), the controls as State, its own drag store.
    b_outputs = {key: Output(outputs[key].component_id, outputs[key].component_property, allow_duplicate=True)
                 for key in PREVIEW_OUTPUTS}
    b_inputs = {k: State(cid, prop) for k, (cid, prop) in CONTROLS.items()}
    b_inputs.update(tracks=State("tracks-store", "data"), track_colour_by=State("tracks-colour-by", "value"),
                    drag=Input("comp-drag-b", "data"), shape=State("map-shape", "data"))

    def _preview(drag=None, shape=None, **controls):
        return preview_answer(drag, shape, **controls)

    app.callback(output=b_outputs, inputs=b_inputs, prevent_initial_call=True)(_preview)

    # Zoom and pan recompute the plane: the new ranges go into the range boxes (the view and the URL).
    app.callback(Output("map-rho-lo", "value", allow_duplicate=True), Output("map-rho-hi", "value", allow_duplicate=True),
                 Output("map-T-lo", "value", allow_duplicate=True), Output("map-T-hi", "value", allow_duplicate=True),
                 Output("map-zoom-message", "children"),
                 Input("plane-graph", "relayoutData"), prevent_initial_call=True)(zoom_ranges)

    # Hover readout, in the browser: value, (rho, T) and regime name of the pixel.
    app.clientside_callback(
        "function(h, v, labels){ return window.dash_clientside.thermoplane.hover(h, v, labels); }",
        Output("hover-readout", "children"), Input("plane-graph", "hoverData"),
        State("view-store", "data"), State("labels-store", "data"))
