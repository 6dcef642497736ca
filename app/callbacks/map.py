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
from ..state import COLOR_CHOICES, CONTROLS, DEFAULT_VIEW, controls_to_view, encode_view
from ..view import (ViewError, _range, composition_from_inputs, jsonable, overlay_lines, parse_view,  # noqa: F401
                    physics_options, quantity, track_overlay, view_from_store)
from .composition import readout

log = logging.getLogger(__name__)

__all__ = ["MESSAGES", "ViewError", "parse_view", "physics_options", "map_figure", "update_map",
           "composition_from_inputs", "quantity", "register"]

#: Message areas, each next to the controls whose errors it shows.
MESSAGES = ("comp-message", "mix-message", "phys-message", "map-range-message", "map-levels-message",
            "map-masses-message", "map-message")
GENERIC_ERROR = "Something went wrong while drawing the map; the server log has the details."
_QUANTITY = {q.name: q for q in plane.QUANTITIES}


def _colours(q, choice: str):
    _, scale, diverging = COLOR_CHOICES[choice]
    if scale is None:                                   # automatic
        diverging = q.centre is not None
        scale = "PuOr_r" if diverging else "Viridis"
    return scale, (q.centre if diverging else None)


def build(comp, opts: dict, view: dict, extra_traces=()):
    """(figure, grid, messages) for a checked view; physics from the caches."""
    n = int(view["resolution"])
    grid = plane.plane_grid(comp, tuple(view["log_rho"]), tuple(view["log_T"]), n, n, **opts)
    q = quantity(view["quantity"])
    lines, messages = overlay_lines(grid, comp, view, opts)
    common = dict(lines=lines, presentation=bool(view.get("presentation")), customdata=grid.regime,
                  extra_traces=extra_traces)
    if q.categorical:
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
        fig, grid, messages = build(comp, opts, clean, track_overlay(tracks, track_colour_by, comp, opts, clean))
        out.update(messages)
        out["figure"] = fig
        out["view"] = {"view": jsonable(clean), "query": encode_view(clean)}
    except ViewError as err:
        out[err.where] = str(err)
    except ValueError as err:
        out["map-message"] = str(err)
    except Exception:                                  # never a traceback in the page
        log.exception("map callback failed")
        out["map-message"] = GENERIC_ERROR
    return out


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
