"""The map panel: composition in, shaded plane with its lines out."""

from __future__ import annotations

import numpy as np
from dash import Input, Output, html

import physics as ph

from .. import figures
from ..state import DEFAULT_VIEW


def composition_from_inputs(X, Y, Z) -> ph.Composition:
    """X, Y, Z from the browser -> Composition; ValueError with a message for the user."""
    values = []
    for name, v in (("X", X), ("Y", Y), ("Z", Z)):
        if v is None or v == "":
            raise ValueError(f"{name} is empty; enter a mass fraction between 0 and 1")
        try:
            v = float(v)
        except (TypeError, ValueError):
            raise ValueError(f"{name} = {v!r} is not a number") from None
        values.append(v)
    return ph.Composition.from_xyz(*values)


def map_figure(comp: ph.Composition, view: dict = DEFAULT_VIEW):
    n = int(view["resolution"])
    log_rho = np.linspace(*view["log_rho"], n)
    log_T = np.linspace(*view["log_T"], n)
    s = ph.evaluate(10.0 ** log_rho[None, :], 10.0 ** log_T[:, None], comp)
    z = np.log10(s.P_rad / s.P_gas)
    T_eq = ph.equality_temperature(10.0 ** log_rho, comp)
    lines = [figures.Line("equality", "P_rad = P_gas", log_rho, np.log10(T_eq))]
    return figures.plane_figure(log_rho, log_T, z, z_label="log₁₀ P_rad/P_gas", lines=lines,
                                colorscale="PuOr_r", z_mid=0.0)


def update_map(X, Y, Z):
    """Callback body: returns (figure or no_update, message, readout)."""
    from dash import no_update
    try:
        comp = composition_from_inputs(X, Y, Z)
    except ValueError as err:
        return no_update, str(err), no_update
    readout = html.Span(f"μ = {comp.mu:.4f}   μ_e = {comp.mu_e:.4f}   μ_ion = {comp.mu_ion:.4f}")
    return map_figure(comp), "", readout


def register(app) -> None:
    app.callback(
        Output("plane-graph", "figure"),
        Output("comp-message", "children"),
        Output("comp-readout", "children"),
        Input("comp-X", "value"), Input("comp-Y", "value"), Input("comp-Z", "value"),
    )(update_map)
