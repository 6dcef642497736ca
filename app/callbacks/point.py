"""The point readout: click the map to pin a point and read its full state.

cgs inside; the SI switch converts at this display edge only.
"""

from __future__ import annotations

import csv
import io
import json
import logging
import math

from dash import Input, Output, html, no_update

from ... import physics as ph
from ...physics import neutrinos

from ..view import ViewError, parse_view, view_from_store

log = logging.getLogger(__name__)

__all__ = ["SI", "to_si", "point_values", "state_table", "state_grid", "unphysical_warning", "as_json", "as_csv",
           "cv_split", "pin_point", "register"]

#: cgs unit -> (SI unit, factor: value_SI = factor * value_cgs).
SI = {
    "": ("", 1.0), "K": ("K", 1.0),
    "g cm^-3": ("kg m^-3", 1e3),
    "dyn cm^-2": ("Pa", 0.1),
    "erg g^-1": ("J kg^-1", 1e-4),
    "erg g^-1 K^-1": ("J kg^-1 K^-1", 1e-4),
    "erg g^-1 K^-2": ("J kg^-1 K^-2", 1e-4),
    "cm s^-1": ("m s^-1", 1e-2),
    "dyn cm^-2 / (g cm^-3)": ("Pa / (kg m^-3)", 1e-4),
    "dyn cm^-2 K^-1": ("Pa K^-1", 0.1),
    "erg g^-1 / (g cm^-3)": ("J kg^-1 / (kg m^-3)", 1e-7),
    "cm^-3": ("m^-3", 1e6),
    "erg g^-1 s^-1": ("W kg^-1", 1e-4),
}


def to_si(value: float, unit: str) -> tuple[float, str]:
    """A cgs value and unit in SI; ValueError for a unit not in :data:`SI`."""
    if unit not in SI:
        raise ValueError(f"no SI conversion for unit {unit!r}")
    si_unit, factor = SI[unit]
    return value * factor, si_unit


def point_values(comp, opts: dict, log_rho: float, log_T: float) -> dict[str, float]:
    """Every ThermoState field at one point, cgs."""
    state = ph.evaluate(10.0 ** log_rho, 10.0 ** log_T, comp, **opts)
    return state.at(())


def neutrino_rows(comp, log_rho: float, log_T: float, units: str = "cgs") -> list[tuple[str, float, str, str]]:
    """Rows for the neutrino losses at one point: the total and each process (physics.neutrinos)."""
    parts = neutrinos.epsilon_parts(10.0 ** log_rho, 10.0 ** log_T, comp)
    out = []
    for name in ("total",) + neutrinos.PROCESSES:
        v, unit = float(parts[name]), "erg g^-1 s^-1"
        if units == "si":
            v, unit = to_si(v, unit)
        what = ("neutrino energy loss rate, all processes (Itoh et al. 1996 fits)" if name == "total"
                else f"neutrino losses by {neutrinos.PROCESS_LABELS[name]}")
        out.append(("eps_nu" if name == "total" else f"eps_nu_{name}", v, unit, what))
    return out


def rows(values: dict[str, float], units: str = "cgs") -> list[tuple[str, float, str, str]]:
    """(name, value, unit, description) for every field, in the units asked for."""
    out = []
    for name, v in values.items():
        unit = ph.FIELD_UNITS[name]
        if units == "si":
            v, unit = to_si(v, unit)
        out.append((name, v, unit, ph.FIELD_DESCRIPTIONS[name]))
    return out


def _fmt(v: float) -> str:
    return f"{v:.6g}" if math.isfinite(v) else str(v)


#: Columns of the pinned point's grid (AG Grid: sortable, saved as CSV by its button).
GRID_COLUMNS = [
    {"headerName": "quantity", "field": "quantity", "maxWidth": 140, "cellClass": "mono"},
    {"headerName": "value", "field": "value", "type": "numericColumn", "maxWidth": 170, "cellClass": "mono",
     "valueFormatter": {"function": "params.value == null ? '—' : Number(params.value).toPrecision(6)"}},
    {"headerName": "unit", "field": "unit", "maxWidth": 190},
    {"headerName": "meaning", "field": "meaning", "flex": 3},
]


def state_grid():
    """The pinned point's every quantity, as a sortable grid with a CSV button (filled by :func:`pin_point`)."""
    import dash_ag_grid as dag
    return html.Div([
        html.Div(html.Button("pinned point as CSV", id="point-state-table-csv", n_clicks=0, className="small"),
                 className="button-row grid-bar"),
        dag.AgGrid(id="point-state-table", columnDefs=GRID_COLUMNS, rowData=[], className="grid",
                   defaultColDef={"sortable": True, "resizable": True, "flex": 1, "minWidth": 80},
                   dashGridOptions={"theme": "themeBalham", "domLayout": "autoHeight", "suppressCellFocus": True},
                   csvExportParams={"fileName": "thermoplane-point.csv"}),
    ])


def state_table(table_rows) -> list[dict]:
    """Grid rows: quantity, value (None when not finite), unit, meaning."""
    return [{"quantity": n, "value": v if math.isfinite(v) else None, "unit": u or "—", "meaning": d}
            for n, v, u, d in table_rows]


def as_json(point: dict, table_rows, units: str) -> str:
    return json.dumps({**point, "units_system": units,
                       "state": {n: (v if math.isfinite(v) else None) for n, v, _, _ in table_rows},
                       "units": {n: u for n, _, u, _ in table_rows}}, indent=2)


def as_csv(table_rows) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["quantity", "value", "unit", "meaning"])
    for n, v, u, d in table_rows:
        w.writerow([n, repr(v), u, d])
    return buf.getvalue()


def unphysical_warning(values: dict, opts: dict, units: str = "cgs") -> str:
    """A warning when the pinned point has no physical value (P <= 0), else ""."""
    P = values.get("P", math.nan)
    if math.isfinite(P) and P > 0:
        return ""
    shown, unit = to_si(P, "dyn cm^-2") if units == "si" else (P, "dyn cm^-2")
    why = ("the Coulomb correction is larger than the ideal pressure"
           if opts.get("coulomb") else "the pressure is not positive")
    return (f"No physical value here: P = {shown:.3g} {unit} ≤ 0 with these options ({why}; "
            f"electrons = {opts.get('electrons')}, ionization = {opts.get('ionization')}). The numbers below are "
            "not physical: use Fermi–Dirac electrons with Saha ionization, or switch Coulomb off.")


def cv_split(values: dict[str, float]) -> str:
    """c_V in words: its ion, electron and radiation parts as fractions, and the ions' phase."""
    c = values["c_V"]
    if not (math.isfinite(c) and c != 0.0):
        return ""
    parts = ", ".join(f"{name} {100.0 * values[key] / c:.3g} %" for name, key in
                      (("ions", "c_V_ion"), ("electrons", "c_V_e"), ("radiation", "c_V_rad")))
    phase = "crystal" if values.get("crystallized", 0.0) > 0.5 else "liquid or gas"
    quantum = " (quantum, T < T_p)" if values["T"] < values["T_p"] else ""
    return f"c_V = {c:.4g} erg g⁻¹ K⁻¹: {parts}; ions: {phase}{quantum}"


def pin_point(click, units, store):
    """Callback body: (heading, grid rows, JSON text, CSV text, message)."""
    try:
        if not click or not click.get("points"):
            return "Click the map to pin a point.", [], "", "", ""
        pt = click["points"][0]
        if pt.get("x") is None or pt.get("y") is None:
            return no_update, no_update, no_update, no_update, ""
        log_rho, log_T = float(pt["x"]), float(pt["y"])
        view = view_from_store(store)
        comp, opts, _ = parse_view(view)
        values = point_values(comp, opts, log_rho, log_T)
        units = "si" if units == "si" else "cgs"
        table_rows = rows(values, units) + neutrino_rows(comp, log_rho, log_T, units)
        rho_text = (f"ρ = {10 ** (log_rho + 3):.4g} kg m⁻³" if units == "si"
                    else f"ρ = {10 ** log_rho:.4g} g cm⁻³")
        heading = (f"Pinned: log ρ = {log_rho:.3f}, log T = {log_T:.3f}  (log ρ in g cm⁻³; "
                   f"{rho_text}, T = {10 ** log_T:.4g} K)")
        heading = [heading, html.Br(), cv_split(values)]
        point = {"log_rho": log_rho, "log_T": log_T, "composition": comp.to_dict(), "options": opts}
        return (heading, state_table(table_rows), as_json(point, table_rows, units), as_csv(table_rows),
                unphysical_warning(values, opts, units))
    except (ViewError, ValueError) as err:
        return no_update, no_update, no_update, no_update, str(err)
    except Exception:
        log.exception("point readout failed")
        return no_update, no_update, no_update, no_update, "Something went wrong; the server log has the details."


def register(app) -> None:
    app.clientside_callback("function(n){ return n > 0; }", Output("point-state-table", "exportDataAsCsv"),
                            Input("point-state-table-csv", "n_clicks"), prevent_initial_call=True)
    app.callback(
        Output("point-heading", "children"), Output("point-state-table", "rowData"),
        Output("point-json", "value"), Output("point-csv", "value"), Output("point-message", "children"),
        Input("plane-graph", "clickData"), Input("point-units", "value"), Input("view-store", "data"),
    )(pin_point)
