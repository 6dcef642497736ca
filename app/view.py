"""The checked view and what is drawn over the map: one module that the map, tracks, point and
export callbacks all use, so none of them imports another.

:func:`parse_view` checks the controls (a :class:`ViewError` names the message
area of the control at fault); :func:`overlay_lines` gives the lines a view
asks for, read off the cached plane; :func:`overlay_traces` gives the visible
stellar tracks as plotly traces; :func:`view_from_store` reads back the view
the map callback keeps in the browser.
"""

from __future__ import annotations

import logging

import numpy as np

from .. import physics as ph
from ..physics import eos, plane, regimes

from . import figures
from . import tracks as tk
from .callbacks import layers
from .callbacks.composition import CompositionError, MixError, composition_from_view, number
from .state import COLOR_CHOICES, DEFAULT_VIEW, MAP_QUANTITIES, QUANTITY_NAMES, UI_RESOLUTION, parse_number_list
from .upload import TableError

log = logging.getLogger(__name__)

__all__ = ["ViewError", "parse_view", "physics_options", "quantity", "composition_from_inputs", "overlay_lines",
           "view_from_store", "jsonable", "comp_and_options", "stored_tracks", "overlay_traces", "track_overlay",
           "ignition_of", "ignition_from_store"]

_QUANTITY = {q.name: q for q in MAP_QUANTITIES}
#: Shadings drawn on a signed-log scale, asinh(value / unit): the unit is where the scale turns from
#: linear to logarithmic. η runs from -30 to 1e8 on the default plane; the impacts from 1e-6 to 100 %.
ASINH_SCALES = {"eta": 1.0, **{q.name: 1.0 for q in MAP_QUANTITIES if q.name.startswith("impact_")
                                and not q.categorical}}
_REGIME_LABEL = {r.key: r.label for r in regimes.REGIMES}
_REGIME_LABEL[""] = "not evaluated"


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
    """The plane.Quantity of a name (the plane's or an impact map); ViewError for an unknown one."""
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


def stored_tracks(store) -> list[dict]:
    """The tracks in a browser store; anything that is not a well-formed track is ignored."""
    tracks = store.get("tracks") if isinstance(store, dict) else None
    if not isinstance(tracks, list):
        return []
    return [t for t in tracks if isinstance(t, dict) and isinstance(t.get("id"), str)
            and isinstance(t.get("colour"), str) and isinstance(t.get("name", ""), str)]


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


def jsonable(view: dict) -> dict:
    return {k: _json_safe(v) for k, v in view.items()}


def view_from_store(data) -> dict:
    """The view kept in the browser by :func:`update_map` (tuples restored)."""
    v = dict((data or {}).get("view") or DEFAULT_VIEW)
    for k in ("log_rho", "log_T", "layers", "processes"):
        v[k] = tuple(v.get(k) or ())
    v["mix"] = tuple(tuple(r) for r in v.get("mix") or ())
    return {**DEFAULT_VIEW, **v}


def comp_and_options(view_data):
    """Composition and physics options of the checked view the map stored (defaults when none)."""
    try:
        comp, opts, _ = parse_view(view_from_store(view_data))
    except ValueError:
        comp, opts, _ = parse_view(view_from_store(None))
    return comp, opts


def ignition_of(view: dict) -> tuple[tuple[str, float], ...]:
    """The (process, level) pairs of the ignition contours a view draws; () when off or unreadable.

    The track report looks for crossings of exactly these, so the report and the map agree.
    """
    if not view.get("ignition") or not view.get("processes"):
        return ()
    try:
        levels = parse_number_list(view.get("levels"), "ε levels")
    except ValueError:
        return ()
    return tuple((p, float(lv)) for p in view["processes"] for lv in levels)


def ignition_from_store(view_data) -> tuple[tuple[str, float], ...]:
    """:func:`ignition_of` the view the map stored."""
    try:
        return ignition_of(view_from_store(view_data))
    except (TypeError, ValueError, AttributeError):
        return ()


def _positions(rows: np.ndarray, table_rows) -> np.ndarray:
    pos = np.searchsorted(rows, np.asarray(table_rows, dtype=np.int64))
    return np.clip(pos, 0, max(len(rows) - 1, 0))


def _drawable(track, comp, opts, ignition=()):
    ev = tk.evaluate_stored(track, comp, ignition=ignition, **opts)
    data, rows, enriched = ev["data"], ev["rows"], ev["enriched"]
    keep = np.concatenate([[c["row"], c["row_after"]] for c in ev["crossings"]]) if ev["crossings"] else []
    idx = tk.draw_indices(len(rows), _positions(rows, keep) if len(keep) else [])
    regime_col = [c for c in enriched.columns if c.startswith("regime")][-1]
    beta_col = "beta" if "beta" in enriched.columns and enriched["beta"].dtype.kind == "f" else "beta_computed"
    eta_col = "eta" if "eta" in enriched.columns and enriched["eta"].dtype.kind == "f" else "eta_computed"
    ok = data.valid[idx]
    age = data.age[idx] if data.age is not None else None
    return {"x": np.where(ok, data.log_rho[idx], np.nan), "y": np.where(ok, data.log_T[idx], np.nan),
            "row": rows[idx], "age": age,
            "regime": [_REGIME_LABEL.get(r, r) for r in enriched[regime_col].to_numpy()[idx]],
            "beta": enriched[beta_col].to_numpy()[idx], "eta": enriched[eta_col].to_numpy()[idx],
            "crossings": [{**c, "short": tk.short_label(c["boundary"])} for c in ev["crossings"]],
            "age_name": track["mapping"].get("age_col"), "composition": _composition_rows(data, idx)}


def _composition_rows(data, idx):
    """Per drawn point "X = 0.700, Y = 0.280" when the track carries its own composition, else None."""
    if data.X is None or data.Y is None:
        return None
    X, Y = data.X[idx], data.Y[idx]
    return [f"X = {x:.3f}, Y = {y:.3f}, Z = {1 - x - y:.3f}" if np.isfinite(x) and np.isfinite(y) else ""
            for x, y in zip(X, Y)]


def overlay_traces(store, comp, opts: dict, colour_by=(), *, presentation: bool = False, ignition=()) -> list:
    """Plotly traces of every visible track for the map (drawn downsampled, at most 20k points each).

    A track that cannot be evaluated is left out (the tracks panel says why).
    ``ignition`` (process, level) pairs are looked for as crossings too.
    """
    traces = []
    visible = [t for t in stored_tracks(store) if t.get("visible")]
    selected = (store or {}).get("selected")
    for track in visible:
        try:
            d = _drawable(track, comp, opts, ignition)
        except (TableError, ValueError):
            continue
        except Exception:
            log.exception("drawing track %r failed", track.get("name"))
            continue
        traces += figures.track_traces(track["id"], track["name"], track["colour"], d,
                                       colour_by="age" in (colour_by or ()) and track["id"] == selected,
                                       presentation=presentation,
                                       # words on the map for the selected track only: with many tracks,
                                       # the others keep their markers (and hover texts) but no labels
                                       labelled=len(visible) == 1 or track["id"] == selected)
    return traces


def track_overlay(tracks_data, colour_by, comp, opts, view: dict | None = None) -> list:
    """Traces of the visible stellar tracks, from the tracks' cache; ``view`` gives the
    presentation mode and the ignition levels (the crossings looked for)."""
    if not isinstance(tracks_data, dict) or not tracks_data.get("tracks"):
        return []
    view = view or {}
    try:
        return overlay_traces(tracks_data, comp, opts, colour_by, presentation=bool(view.get("presentation")),
                              ignition=ignition_of(view))
    except Exception:                                  # a track never takes the map down
        log.exception("track overlay failed")
        return []


