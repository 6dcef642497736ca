"""Export: PNG and SVG of the figure (in the browser, 3x screen size), a standalone
interactive HTML file (plotly.js inlined: opens offline) and the shaded grid as CSV.
"""

from __future__ import annotations

import io
import logging

import numpy as np
from dash import Input, Output, State, dcc, no_update

from ...physics import neutrinos, regimes

from ..view import ViewError, parse_view, quantity, track_overlay, view_from_store
from .map import build

log = logging.getLogger(__name__)

__all__ = ["spreadsheet_safe", "grid_csv", "html_export", "csv_export", "register"]

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_safe(cell):
    """A text cell that a spreadsheet will not run as a formula ('-prefixed); numbers untouched."""
    if isinstance(cell, str) and cell.startswith(_FORMULA_START):
        return "'" + cell
    return cell


def _header(text: str) -> str:
    return str(spreadsheet_safe(text)).replace(",", ";").replace("\n", " ")


def grid_csv(grid, name: str, label: str) -> str:
    """The shaded grid, one row per pixel: log_rho, log_T, value (empty where NaN), regime."""
    lr, lt = np.meshgrid(grid.log_rho, grid.log_T)
    values = np.asarray(grid.get(name), dtype=float)
    regime_names = np.asarray([spreadsheet_safe(r.key) for r in regimes.REGIMES], dtype=object)
    buf = io.StringIO()
    buf.write(f"# {_header(label)}\n")
    buf.write(f"log_rho,log_T,{_header(name)},regime\n")
    if name == "regime":
        col = regime_names[grid.regime.ravel()]
        text = np.char.mod("%.6f", np.column_stack([lr.ravel(), lt.ravel()]))
        rows = [f"{a},{b},{c},{c}" for (a, b), c in zip(text, col)]
    else:
        v = values.ravel()
        vt = np.where(np.isfinite(v), np.char.mod("%.7g", np.nan_to_num(v)), "")
        if name == "nu_process":                 # the dominant neutrino process by name, not its code
            names = np.asarray(neutrinos.PROCESSES + ("",), dtype=object)
            vt = names[np.where(np.isfinite(v), v, len(neutrinos.PROCESSES)).astype(int)]
        a = np.char.mod("%.6f", lr.ravel())
        b = np.char.mod("%.6f", lt.ravel())
        col = regime_names[grid.regime.ravel()]
        rows = [f"{x},{y},{z},{c}" for x, y, z, c in zip(a, b, vt, col)]
    buf.write("\n".join(rows))
    buf.write("\n")
    return buf.getvalue()


def _checked(store):
    view = view_from_store(store)
    comp, opts, clean = parse_view(view)
    return comp, opts, clean


def html_export(n, store, tracks=None, colour_by=None):
    """Callback body: dict for dcc.Download with the standalone HTML figure (tracks included), and a message."""
    if not n:
        return no_update, ""
    try:
        comp, opts, view = _checked(store)
        fig, _, _ = build(comp, opts, view, track_overlay(tracks, colour_by, comp, opts, view))
        html = fig.to_html(include_plotlyjs=True, full_html=True,
                           config={"displaylogo": False,
                                   "toImageButtonOptions": {"format": "png", "scale": 3}})
        return dcc.send_string(html, "thermoplane-map.html"), ""
    except (ViewError, ValueError) as err:
        return no_update, str(err)
    except Exception:
        log.exception("HTML export failed")
        return no_update, "The export failed; the server log has the details."


def csv_export(n, store):
    """Callback body: dict for dcc.Download with the shaded grid as CSV, and a message."""
    if not n:
        return no_update, ""
    try:
        from ...physics import plane
        comp, opts, view = _checked(store)
        q = quantity(view["quantity"])
        k = int(view["resolution"])
        grid = plane.plane_grid(comp, tuple(view["log_rho"]), tuple(view["log_T"]), k, k, **opts)
        return dcc.send_string(grid_csv(grid, q.name, q.label), f"thermoplane-{q.name}.csv"), ""
    except (ViewError, ValueError) as err:
        return no_update, str(err)
    except Exception:
        log.exception("CSV export failed")
        return no_update, "The export failed; the server log has the details."


def register(app) -> None:
    app.callback(Output("download-html", "data"), Output("export-message", "children", allow_duplicate=True),
                 Input("export-html", "n_clicks"), State("view-store", "data"), State("tracks-store", "data"),
                 State("tracks-colour-by", "value"), prevent_initial_call=True)(html_export)
    app.callback(Output("download-csv", "data"), Output("export-message", "children", allow_duplicate=True),
                 Input("export-csv", "n_clicks"), State("view-store", "data"),
                 prevent_initial_call=True)(csv_export)
    for fmt in ("png", "svg"):
        app.clientside_callback(
            f"function(n){{ return window.dash_clientside.thermoplane.image(n, '{fmt}'); }}",
            Output(f"export-{fmt}", "title"), Input(f"export-{fmt}", "n_clicks"), prevent_initial_call=True)
