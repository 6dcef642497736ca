"""Sharing: the whole view lives in the page URL; reset view; presentation mode.

The URL is read by one callback (page load, reset, presentation toggle) that
sets every control. It is written in the browser (history.replaceState) from
the checked view the map callback stores, so reading and writing never form a
loop and a link holds only views that drew a map.
"""

from __future__ import annotations

import logging

from dash import Input, Output, State, ctx, no_update

from ..state import CONTROLS, DEFAULT_VIEW, decode_view, view_to_controls

log = logging.getLogger(__name__)

__all__ = ["apply_url", "register"]


def apply_url(trigger, search, presentation) -> tuple[dict, str]:
    """Callback body: (control values keyed like state.CONTROLS, message).

    ``trigger`` is the id that fired: "reset-view" gives the default view
    (presentation mode kept), "presentation-toggle" flips presentation mode
    only, anything else reads ``search``.
    """
    if trigger == "presentation-toggle":
        out = {k: no_update for k in CONTROLS}
        out["presentation"] = not bool(presentation)
        return out, no_update
    if trigger == "reset-view":
        out = view_to_controls({**DEFAULT_VIEW, "presentation": bool(presentation)})
        return out, ""
    view, messages = decode_view(search)
    return view_to_controls(view), " ".join(messages)


def register(app) -> None:
    outputs = {k: Output(cid, prop) for k, (cid, prop) in CONTROLS.items()}

    @app.callback(output=[outputs, Output("share-message", "children")],
                  inputs=[Input("url", "search"), Input("reset-view", "n_clicks"),
                          Input("presentation-toggle", "n_clicks"), State("presentation-store", "data")])
    def _apply(search, _reset, _toggle, presentation):
        try:
            return list(apply_url(ctx.triggered_id, search, presentation))
        except Exception:                 # decode_view never raises; this is a last guard
            log.exception("reading the link failed")
            return [{k: no_update for k in CONTROLS}, "The link could not be read; showing the current view."]

    app.clientside_callback(
        "function(v){ return window.dash_clientside.thermoplane.writeUrl(v); }",
        Output("share-link", "value"), Input("view-store", "data"))
    app.clientside_callback(
        "function(p){ return p ? 'page presentation' : 'page'; }",
        Output("page", "className"), Input("presentation-store", "data"))
    app.clientside_callback(
        "function(p){ return p ? 'Leave presentation' : 'Presentation mode'; }",
        Output("presentation-toggle", "children"), Input("presentation-store", "data"))
