"""The page: a control column (composition, physics, map) beside the map and its readouts.

Built by functions, one per panel, so each panel's ids sit next to its controls.
"""

from __future__ import annotations

from dash import dcc, html

from .state import DEFAULT_VIEW


def _number(id_, value, step=0.01, min_=0.0, max_=1.0, label=""):
    return html.Label([html.Span(label, className="field-label"),
                       dcc.Input(id=id_, type="number", value=value, step=step, min=min_, max=max_,
                                 debounce=True, className="number-input")], className="field")


def composition_panel(view: dict) -> html.Div:
    return html.Section([
        html.H3("Composition"),
        html.P("Mass fractions of hydrogen (X), helium (Y) and metals (Z); they must add up to 1.",
               className="hint"),
        html.Div([_number("comp-X", view["X"], label="X"),
                  _number("comp-Y", view["Y"], label="Y"),
                  _number("comp-Z", view["Z"], label="Z")], className="field-row"),
        html.Div(id="comp-message", className="message", role="alert"),
        html.Div(id="comp-readout", className="readout"),
    ], className="panel", id="panel-composition")


def map_panel() -> html.Div:
    return html.Div([
        dcc.Loading(dcc.Graph(id="plane-graph", config={"displaylogo": False, "responsive": True},
                              style={"height": "74vh"}), type="circle", delay_show=250),
        html.Div(id="limits-note", className="limits", children=[
            "Exploration tool: ideal gas plus radiation in this version; no degeneracy, ionization, "
            "Coulomb or pair physics yet. Check results against a full tabulated equation of state "
            "before publishing them."]),
    ], className="main")


def build_layout():
    """Called per page load, so every visitor starts from the defaults (no server state)."""
    view = dict(DEFAULT_VIEW)
    return html.Div([
        html.Header([html.H1("Thermoplane"),
                     html.Span("the density–temperature plane of stellar matter", className="tagline")],
                    className="topbar"),
        html.Div([
            html.Aside([composition_panel(view)], className="controls", id="controls"),
            map_panel(),
        ], className="body"),
    ], className="page", id="page")
