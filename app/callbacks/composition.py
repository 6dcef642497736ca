"""The composition panel: X, Y, Z (with the sum rule), metal mixture, any mixture of nuclides.

The sum rule: X, Y and Z must add up to 1. Either tick "Z = 1 − X − Y" (Z then
follows X and Y), or edit all three and press "normalise" to rescale them to a
sum of 1. While the sum is off, a message says so and the last good map stays.
A non-empty nuclide table that is switched on replaces X, Y, Z and the metals.
"""

from __future__ import annotations

import math

from dash import Input, Output, State, ctx, no_update

from ... import physics as ph

__all__ = ["CompositionError", "MixError", "number", "composition_from_view", "apply_rules",
           "add_mix_row", "register"]


class CompositionError(ValueError):
    """A problem with X, Y, Z or the metal mixture (shown next to those fields)."""


class MixError(ValueError):
    """A problem with the nuclide table (shown next to the table)."""


def number(value, name: str, lo: float | None = None, hi: float | None = None) -> float:
    """A finite float from a browser field; ValueError naming the field otherwise."""
    if value is None or (isinstance(value, str) and not value.strip()):
        raise ValueError(f"{name} is empty; enter a number")
    if isinstance(value, bool):
        raise ValueError(f"{name} = {value!r} is not a number")
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} = {value!r} is not a number") from None
    if not math.isfinite(x):
        raise ValueError(f"{name} = {value!r} is not a finite number")
    if lo is not None and x < lo or hi is not None and x > hi:
        raise ValueError(f"{name} = {x:g} must be between {lo:g} and {hi:g}")
    return x


def _mix_composition(rows) -> ph.Composition:
    fractions: dict[str, float] = {}
    for i, (name, frac) in enumerate(rows, start=1):
        if name not in ph.NUCLIDES:
            raise MixError(f"row {i}: choose a nuclide (one of {', '.join(ph.NUCLIDES)})")
        try:
            f = number(frac, f"row {i} ({name}) fraction", 0.0, 1.0)
        except ValueError as err:
            raise MixError(str(err)) from None
        fractions[name] = fractions.get(name, 0.0) + f
    total = sum(fractions.values())
    if abs(total - 1.0) > 1e-6:
        raise MixError(f"the table's fractions add up to {total:.6g}; they must be 1 "
                       "(press “normalise” to rescale them)")
    try:
        return ph.Composition(fractions)
    except ValueError as err:
        raise MixError(str(err)) from None


def composition_from_view(view: dict) -> ph.Composition:
    """The composition a view asks for.

    Raises
    ------
    MixError
        The nuclide table is on and not empty, and it is not a valid mixture.
    CompositionError
        X, Y, Z empty, outside [0, 1], not summing to 1, or an unknown metal mixture.
    """
    rows = view.get("mix") or ()
    if view.get("mix_on") and rows:
        return _mix_composition(rows)
    try:
        X = number(view.get("X"), "X", 0.0, 1.0)
        Y = number(view.get("Y"), "Y", 0.0, 1.0)
        if view.get("zauto"):
            Z = 1.0 - X - Y
            if Z < -1e-9:
                raise ValueError(f"X + Y = {X + Y:.6g} is more than 1, so Z = 1 − X − Y would be negative")
            Z = max(Z, 0.0)
        else:
            Z = number(view.get("Z"), "Z", 0.0, 1.0)
            total = X + Y + Z
            if abs(total - 1.0) > 1e-6:
                raise ValueError(f"X + Y + Z = {total:.6g}; the sum must be 1. Tick “Z = 1 − X − Y” "
                                 "or press “normalise”")
        metals = view.get("metals")
        if metals not in ph.METAL_MIXTURES:
            raise ValueError(f"unknown metal mixture {metals!r}; choose one of {', '.join(ph.METAL_MIXTURES)}")
        return ph.Composition.from_xyz(X, Y, Z, metals=metals)
    except CompositionError:
        raise
    except ValueError as err:
        raise CompositionError(str(err)) from None


def readout(comp: ph.Composition) -> str:
    """The live mean molecular weights."""
    return f"μ = {comp.mu:.4f}   μ_e = {comp.mu_e:.4f}   μ_ion = {comp.mu_ion:.4f}"


def apply_rules(trigger, X, Y, Z, zauto, rows):
    """Keep X, Y, Z consistent: Z follows X and Y when "auto" is ticked; "normalise" rescales.

    Returns (X, Y, Z, Z disabled, table rows, message); a value that should
    not change is ``no_update``. Normalising rescales the nuclide table when
    it has rows and is switched on (``rows`` is then a list), else X, Y, Z.
    """
    auto = "auto" in (zauto or ())
    try:
        if trigger == "comp-normalise":
            if rows is not None:
                fracs = [number(r.get("fraction"), f"row {i} fraction", 0.0)
                         for i, r in enumerate(rows, start=1)]
                total = sum(fracs)
                if total <= 0:
                    raise ValueError("the table's fractions add up to 0; enter some fractions first")
                new = [{**r, "fraction": round(f / total, 10)} for r, f in zip(rows, fracs)]
                return no_update, no_update, no_update, auto, new, ""
            x, y = number(X, "X", 0.0), number(Y, "Y", 0.0)
            z = 0.0 if auto else number(Z, "Z", 0.0)
            total = x + y + z
            if total <= 0:
                raise ValueError("X + Y + Z is 0; enter some mass fractions first")
            x, y, z = (round(v / total, 10) for v in (x, y, z))
            if auto:
                z = round(max(1.0 - x - y, 0.0), 10)
            return x, y, z, auto, no_update, ""
        if auto:
            x, y = number(X, "X", 0.0, 1.0), number(Y, "Y", 0.0, 1.0)
            z = round(1.0 - x - y, 10)
            # Z already there (a released slider writes X and Z together): no second map for the same Z
            same = isinstance(Z, (int, float)) and not isinstance(Z, bool) and abs(z - Z) < 1e-12
            return no_update, no_update, (z if z >= 0 and not same else no_update), True, no_update, no_update
        return no_update, no_update, no_update, False, no_update, no_update
    except ValueError as err:
        return no_update, no_update, no_update, auto, no_update, str(err)


def _clean_row(row: dict) -> dict:
    """A table row as the table writes it: a nuclide name and a fraction (text or number)."""
    def cell(v):
        if v is None or isinstance(v, str):
            return v
        if isinstance(v, (int, float)) and not isinstance(v, bool) and abs(v) < 1e300:
            return float(v)
        return str(v)
    return {"nuclide": cell(row.get("nuclide")), "fraction": cell(row.get("fraction"))}


def add_mix_row(rows):
    """One more empty row in the nuclide table."""
    rows = [_clean_row(r) for r in rows if isinstance(r, dict)] if isinstance(rows, list) else []
    if len(rows) >= 30:
        return rows
    return rows + [{"nuclide": None, "fraction": None}]


def register(app) -> None:
    @app.callback(
        Output("comp-X", "value", allow_duplicate=True), Output("comp-Y", "value", allow_duplicate=True),
        Output("comp-Z", "value", allow_duplicate=True), Output("comp-Z", "disabled"),
        Output("comp-mix-table", "data", allow_duplicate=True),
        Output("comp-rule-message", "children"), Output("comp-Z-slider", "disabled"),
        Input("comp-X", "value"), Input("comp-Y", "value"), Input("comp-zauto", "value"),
        Input("comp-normalise", "n_clicks"),
        State("comp-Z", "value"), State("comp-mix-table", "data"), State("comp-mix-on", "value"),
        prevent_initial_call=True,
    )
    def _rules(X, Y, zauto, _n, Z, rows, mix_on):
        try:
            table = rows if ("on" in (mix_on or ()) and rows) else None
            out = apply_rules(ctx.triggered_id, X, Y, Z, zauto, table)
            return (*out, out[3])              # the Z slider is disabled with the Z box
        except Exception:                      # never a traceback in the page
            import logging
            logging.getLogger(__name__).exception("composition rule failed")
            return (no_update, no_update, no_update, no_update, no_update,
                    "Something went wrong; see the server log.", no_update)

    # Sliders beside the X, Y, Z boxes, synced in the browser (no round trip while the hand moves):
    # while it moves only the drag store changes (the map's preview reads the value from it); on release
    # the box takes the value and the map is drawn in full (assets/thermoplane.js, sliderToBox).
    app.clientside_callback(
        "function(){ return window.dash_clientside.thermoplane.sliderToBox.apply(null, arguments); }",
        *(Output(f"comp-{k}", "value", allow_duplicate=True) for k in "XYZ"),
        Output("comp-drag", "data"),
        *(Input(f"comp-{k}-slider", "drag_value") for k in "XYZ"),
        *(Input(f"comp-{k}-slider", "value") for k in "XYZ"),
        *(State(f"comp-{k}", "value") for k in "XYZ"),
        State("comp-drag", "data"), State("comp-zauto", "value"),
        prevent_initial_call=True,
    )
    # The map's messages arrived (a preview that could not be drawn): the next preview may go. A drawn map
    # says so from the plot itself (watchMap in assets/thermoplane.js: no callback on the figure).
    app.clientside_callback(
        "function(){ return window.dash_clientside.thermoplane.mapDrawn.apply(null, arguments); }",
        Output("map-drawn", "data"),
        Input("map-message", "children"), Input("comp-message", "children"), Input("phys-message", "children"),
        prevent_initial_call=True,
    )
    app.clientside_callback(
        "function(){ return window.dash_clientside.thermoplane.boxToSlider.apply(null, arguments); }",
        *(Output(f"comp-{k}-slider", "value") for k in "XYZ"),
        *(Input(f"comp-{k}", "value") for k in "XYZ"),
        *(State(f"comp-{k}-slider", "value") for k in "XYZ"),
        State("comp-drag", "data"),
    )

    @app.callback(Output("comp-mix-table", "data", allow_duplicate=True),
                  Input("comp-mix-add", "n_clicks"), State("comp-mix-table", "data"),
                  prevent_initial_call=True)
    def _add(_n, rows):
        return add_mix_row(rows)
