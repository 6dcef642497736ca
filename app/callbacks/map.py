"""The map panel: the whole view in, shaded plane with its lines out.

Thin: :func:`parse_view` checks the controls (ValueError with a message for the
control that caused it), :func:`map_figure` asks the cached physics for the
plane and the lines, and :mod:`app.figures` draws them.
"""

from __future__ import annotations

import logging

import numpy as np
from dash import Input, Output, State, no_update

from ... import physics as ph
from ...physics import eos, plane, regimes

from .. import figures
from ..state import COLOR_CHOICES, CONTROLS, DEFAULT_VIEW, QUANTITY_NAMES, UI_RESOLUTION, controls_to_view, \
    encode_view, parse_number_list
from . import layers
from .composition import CompositionError, MixError, composition_from_view, number, readout

log = logging.getLogger(__name__)

__all__ = ["MESSAGES", "ViewError", "parse_view", "physics_options", "map_figure", "update_map",
           "composition_from_inputs", "quantity", "register"]

#: Message areas, each next to the controls whose errors it shows.
MESSAGES = ("comp-message", "mix-message", "phys-message", "map-range-message", "map-levels-message",
            "map-masses-message", "map-message")
GENERIC_ERROR = "Something went wrong while drawing the map; the server log has the details."
_QUANTITY = {q.name: q for q in plane.QUANTITIES}


class ViewError(ValueError):
    """A bad control value, with the id of the message area next to it."""

    def __init__(self, where: str, message: str):
        super().__init__(message)
        self.where = where


def composition_from_inputs(X, Y, Z) -> ph.Composition:
    """X, Y, Z from the browser -> Composition (solar-like metals); ValueError with a message."""
    return composition_from_view({"X": X, "Y": Y, "Z": Z, "metals": DEFAULT_VIEW["metals"]})


def physics_options(view: dict) -> dict:
    """The equation-of-state options of a view, checked by physics.eos.validate_options."""
    try:
        return eos.validate_options(electrons=view["electrons"], ionization=view["ionization"],
                                    coulomb=bool(view["coulomb"]), pairs=bool(view["pairs"]))
    except ValueError as err:
        raise ViewError("phys-message", str(err)) from None


def quantity(name: str):
    """The plane.Quantity of a name; ViewError for an unknown one."""
    if name not in _QUANTITY:
        raise ViewError("map-message", f"unknown shaded quantity {name!r}; choose one of {', '.join(QUANTITY_NAMES)}")
    return _QUANTITY[name]


def _range(pair, name: str, limits) -> tuple[float, float]:
    try:
        lo = number(pair[0], f"{name} from", *limits)
        hi = number(pair[1], f"{name} to", *limits)
    except ValueError as err:
        raise ViewError("map-range-message", str(err)) from None
    if not lo < hi:
        raise ViewError("map-range-message", f"{name}: 'from' ({lo:g}) must be below 'to' ({hi:g})")
    return lo, hi


def parse_view(view: dict):
    """Check a view; returns (comp, options, view with numbers in place).

    Raises
    ------
    ViewError
        With ``where`` = the message area of the control at fault.
    """
    try:
        comp = composition_from_view(view)
    except MixError as err:
        raise ViewError("mix-message", str(err)) from None
    except CompositionError as err:
        raise ViewError("comp-message", str(err)) from None
    opts = physics_options(view)
    lr = _range(view["log_rho"], "log ρ", plane.LOG_RHO_LIMITS)
    lt = _range(view["log_T"], "log T", plane.LOG_T_LIMITS)
    try:
        n = number(view["resolution"], "resolution", *UI_RESOLUTION)
    except ValueError as err:
        raise ViewError("map-range-message", str(err)) from None
    if n != int(n):
        raise ViewError("map-range-message", f"resolution = {n:g} must be a whole number")
    quantity(view["quantity"])
    if view.get("colorscale") not in COLOR_CHOICES:
        raise ViewError("map-message", f"unknown colour scale {view.get('colorscale')!r}")
    clean = {**view, "log_rho": lr, "log_T": lt, "resolution": int(n)}
    return comp, opts, clean


def _colours(q, choice: str):
    _, scale, diverging = COLOR_CHOICES[choice]
    if scale is None:                                   # automatic
        diverging = q.centre is not None
        scale = "PuOr_r" if diverging else "Viridis"
    return scale, (q.centre if diverging else None)


def overlay_lines(grid, comp, view: dict, opts: dict) -> tuple[list, dict]:
    """Every line the view asks for, and messages for the list fields that could not be read."""
    lines = layers.boundary_lines(grid, comp, opts, set(view["layers"]))
    messages = {}
    if view.get("ignition") and view.get("processes"):
        try:
            levels = parse_number_list(view.get("levels"), "ε levels")
            lines += layers.ignition_lines(grid, view["processes"], levels)
        except ValueError as err:
            messages["map-levels-message"] = str(err)
    lines += layers.frontier_lines(grid, comp, view)
    if view.get("mass_lines"):
        try:
            masses = parse_number_list(view.get("masses"), "masses")
            if any(m > 1e4 or m < 1e-3 for m in masses):
                raise ValueError("masses must be between 0.001 and 10000 M☉")
            lines += layers.mass_lines(grid, masses)
        except ValueError as err:
            messages["map-masses-message"] = str(err)
    return lines, messages


def build(comp, opts: dict, view: dict, extra_traces=()):
    """(figure, grid, messages) for a checked view; physics from the caches."""
    n = int(view["resolution"])
    grid = plane.plane_grid(comp, tuple(view["log_rho"]), tuple(view["log_T"]), n, n, **opts)
    q = quantity(view["quantity"])
    lines, messages = overlay_lines(grid, comp, view, opts)
    common = dict(lines=lines, presentation=bool(view.get("presentation")), customdata=grid.regime,
                  extra_traces=extra_traces)
    if q.categorical and q.name != "regime":
        fig = figures.plane_figure(grid.log_rho, grid.log_T, grid.get(q.name), z_label=q.label,
                                   categorical=layers.categories(q.name), **common)
    elif q.categorical:
        fig = figures.plane_figure(grid.log_rho, grid.log_T, grid.regime, z_label=q.label,
                                   categorical=[(r.label, r.colour) for r in regimes.REGIMES], **common)
    else:
        scale, mid = _colours(q, view.get("colorscale", "auto"))
        z = grid.get(q.name)
        if not np.any(np.isfinite(z)):
            messages["map-message"] = f"{q.label} is not available for this plane (no value anywhere in view)"
        z_range = None
        if mid is not None and np.any(np.isfinite(z)):
            # symmetric about the centre and clipped to where most of the map lies, so the colours
            # still separate near the centre (log P_rad/P_gas spans 60 dex across the default plane)
            half = float(np.nanpercentile(np.abs(z - mid), 90))
            half = max(half, 1e-6)
            z_range = (mid - half, mid + half)
        fig = figures.plane_figure(grid.log_rho, grid.log_T, z, z_label=q.label, colorscale=scale,
                                   z_mid=mid, z_range=z_range, **common)
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


def _empty_messages() -> dict:
    return {m: "" for m in MESSAGES}


def track_overlay(tracks_data, colour_by, comp, opts) -> list:
    """Traces of the visible stellar tracks (app.callbacks.tracks), from its cache."""
    if not tracks_data or not tracks_data.get("tracks"):
        return []
    from .tracks import overlay_traces
    try:
        return overlay_traces(tracks_data, comp, opts, colour_by)
    except Exception:                                  # a track never takes the map down
        log.exception("track overlay failed")
        return []


def update_map(tracks=None, track_colour_by=None, **controls) -> dict:
    """Callback body: control values (keyed like state.CONTROLS) -> outputs dict.

    ``tracks`` is the tracks store (drawn over the map, so they survive every
    redraw) and ``track_colour_by`` the "colour by parameter" choice.

    Outputs: "figure" (or no_update: the last good map stays), "readout",
    "view" (the checked view with its URL query, for sharing and export) and
    one text per message area of :data:`MESSAGES`.
    """
    out = {"figure": no_update, "readout": no_update, "view": no_update, **_empty_messages()}
    try:
        view = controls_to_view(**controls)
        comp, opts, clean = parse_view(view)
        out["readout"] = readout(comp)
        fig, grid, messages = build(comp, opts, clean, track_overlay(tracks, track_colour_by, comp, opts))
        out.update(messages)
        out["figure"] = fig
        out["view"] = {"view": _jsonable(clean), "query": encode_view(clean)}
    except ViewError as err:
        out[err.where] = str(err)
    except ValueError as err:
        out["map-message"] = str(err)
    except Exception:                                  # never a traceback in the page
        log.exception("map callback failed")
        out["map-message"] = GENERIC_ERROR
    return out


def _json_safe(v):
    """Values a browser store can hold: huge integers and non-finite floats become text."""
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return v
    if isinstance(v, int):
        return v if abs(v) < 2**53 else str(v)
    if isinstance(v, float):
        return v if np.isfinite(v) else str(v)
    if isinstance(v, (list, tuple)):
        return [_json_safe(x) for x in v]
    return str(v)


def _jsonable(view: dict) -> dict:
    return {k: _json_safe(v) for k, v in view.items()}


def view_from_store(data) -> dict:
    """The view kept in the browser by :func:`update_map` (tuples restored)."""
    v = dict((data or {}).get("view") or DEFAULT_VIEW)
    for k in ("log_rho", "log_T", "layers", "processes"):
        v[k] = tuple(v.get(k) or ())
    v["mix"] = tuple(tuple(r) for r in v.get("mix") or ())
    return {**DEFAULT_VIEW, **v}


def register(app) -> None:
    outputs = {"figure": Output("plane-graph", "figure"), "readout": Output("comp-readout", "children"),
               "view": Output("view-store", "data"),
               **{m: Output(m, "children") for m in MESSAGES}}
    inputs = {k: Input(cid, prop) for k, (cid, prop) in CONTROLS.items()}
    inputs["tracks"] = Input("tracks-store", "data")
    inputs["track_colour_by"] = Input("tracks-colour-by", "value")
    app.callback(output=outputs, inputs=inputs)(update_map)

    # Hover readout, in the browser: value, (rho, T) and regime name of the pixel.
    app.clientside_callback(
        "function(h, v, labels){ return window.dash_clientside.thermoplane.hover(h, v, labels); }",
        Output("hover-readout", "children"), Input("plane-graph", "hoverData"),
        State("view-store", "data"), State("labels-store", "data"))
