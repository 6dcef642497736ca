"""Stellar tracks on the density–temperature plane: the state along a track
and where the track crosses each regime boundary.

The question this module answers: a model star's centre moves through the
(log rho, log T) plane as it evolves (or a profile runs from centre to
surface); what is the thermodynamic state at every row, and at which rows
(and when) does it pass from gas- to radiation-dominated pressure, become
degenerate, relativistic, strongly coupled, and so on?

Pure numpy/pandas; the table reading and validation live in ``app.upload``.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from . import constants as const
from .composition import NUCLIDES, Composition
from .eos import ThermoState, evaluate, validate_options
from . import regimes
from .regimes import (COUPLING_GAMMA, DEGENERACY_ETA, HALF_IONIZATION, PAIR_ONSET,
                      RELATIVISTIC_XF)

__all__ = ["PAIR_ONSET", "RHO_YE_RELATIVISTIC", "BOUNDARY_FIELDS", "CROSSING_COLUMNS", "TrackState",
           "boundary_fields", "find_crossings", "downsample", "evaluate_track", "track_report", "ignition_key",
           "COMPOSITION_COLUMNS"]


#: rho * ye (g cm^-3) at which the electron Fermi momentum equals m_e c
#: (x_F = 1), fully degenerate electrons: n_e = rho ye / m_u =
#: (8 pi / 3) (m_e c / h)^3 x_F^3 (Chandrasekhar 1939, An Introduction to the
#: Study of Stellar Structure, ch. X). With CODATA 2018 constants it is
#: 9.7393e5 g cm^-3 (often quoted as 9.74e5).
RHO_YE_RELATIVISTIC = const.n_e_relativistic * const.m_u

#: Boundary key -> (field whose crossing of ``level`` marks the boundary, level).
#: The fields are computed by :func:`boundary_fields`.
BOUNDARY_FIELDS: dict[str, tuple[str, float]] = {
    "equality": ("log10(P_rad / P_gas)", 0.0),
    "degeneracy": ("eta", DEGENERACY_ETA),
    "relativistic": ("x_F = (rho ye / RHO_YE_RELATIVISTIC)^(1/3)", RELATIVISTIC_XF),
    "pairs": ("n_plus / n_minus", PAIR_ONSET),
    "coupling": ("log10(Gamma)", float(np.log10(COUPLING_GAMMA))),
    "crystallization": ("f_liquid - f_crystal per ion over kT (minus melt_margin)", 0.0),
    "quantum_ions": ("log10(T_p / T)", 0.0),
    "h_ionization": ("ion_H", HALF_IONIZATION),
    "he_ionization": ("ion_He2", HALF_IONIZATION),
}

#: Columns :func:`track_report` adds to the crossings: the composition the crossing was found with.
COMPOSITION_COLUMNS = ["X", "Y", "Z", "composition"]

#: Columns of the DataFrame returned by :func:`find_crossings`.
CROSSING_COLUMNS = ["boundary", "row", "row_after", "fraction", "log_rho", "log_T", "age", "direction"]

# Rows with per-row composition are grouped by (X, Y) rounded to this step.
_COMPOSITION_STEP = 1e-4
# 10**x must stay a finite, non-zero double
_LOG_LIMIT = 300.0


class TrackState(dict):
    """Per-row state along a track: field name -> full-length array (NaN on invalid rows).

    A dict whose entries are also attributes (``state.P_rad`` is
    ``state["P_rad"]``), so :func:`boundary_fields` takes it like a ThermoState.
    Besides the :class:`~thermoplane.physics.eos.ThermoState` fields it holds ``ye_full``,
    the electrons per nucleon of the full-ionization composition (1/mu_e) of
    each row, and ``valid``, the mask of evaluated rows.
    """

    def __getattr__(self, name):
        try:
            return self[name]
        except KeyError:
            raise AttributeError(name) from None


def _as_1d(name: str, value, n: int | None = None) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.ndim != 1:
        raise ValueError(f"{name} must be one-dimensional, got shape {arr.shape}")
    if n is not None and arr.shape[0] != n:
        raise ValueError(f"{name} has {arr.shape[0]} rows but log_rho has {n}; give one value per row")
    return arr


def _valid_mask(valid, n: int) -> np.ndarray:
    if valid is None:
        return np.ones(n, dtype=bool)
    mask = np.asarray(valid)
    if mask.shape != (n,):
        raise ValueError(f"valid must be a boolean array of {n} rows, got shape {mask.shape}")
    return mask.astype(bool)


def find_crossings(fields: dict[str, np.ndarray], levels: dict[str, float], log_rho, log_T,
                   age=None, valid=None) -> pd.DataFrame:
    """Where each field crosses its level along a track.

    Parameters
    ----------
    fields : dict of str -> array_like
        Boundary key -> field value at each row.
    levels : dict of str -> float
        Boundary key -> the level whose crossing marks the boundary; every key
        of ``fields`` must be here.
    log_rho, log_T : array_like
        log10 density (g cm^-3) and temperature (K) at each row.
    age : array_like, optional
        Age (any unit) at each row; the output age is NaN without it.
    valid : array_like of bool, optional
        Rows to use; invalid rows (and rows where a field is not finite) are
        skipped, so "consecutive" means consecutive among the usable rows.

    Returns
    -------
    pandas.DataFrame
        Columns ``boundary, row, row_after, fraction, log_rho, log_T, age,
        direction``, one line per crossing, in track order (by row, then
        fraction). ``row`` and ``row_after`` are the usable rows on either
        side; ``fraction`` in [0, 1) is the interpolation weight from ``row``
        to ``row_after``; ``direction`` is +1 when the field rises through
        the level, -1 when it falls.

    Raises
    ------
    ValueError
        Arrays of different lengths, a field without a level, or a non-finite level.

    Notes
    -----
    With g = field - level on the usable rows, a crossing lies between
    consecutive rows j, k with g_j g_k < 0, at weight w = g_j / (g_j - g_k)
    (linear in the field value); log rho, log T and age are interpolated
    with the same w. Exact zeros: a run of rows with g = 0 between a
    negative and a positive row is one crossing, placed at the first zero
    row (fraction 0, ``row`` that zero row); a zero between two rows of the
    same sign is a touch, not a crossing; zeros at the ends of the track
    (no sign on one side) are not crossings.

    Examples
    --------
    >>> x = np.array([0.0, 1.0, 2.0, 3.0])
    >>> out = find_crossings({"line": x}, {"line": 1.5}, log_rho=x, log_T=7 + x)
    >>> out[["boundary", "row", "row_after", "fraction", "log_T", "direction"]].to_dict("records")
    [{'boundary': 'line', 'row': 1, 'row_after': 2, 'fraction': 0.5, 'log_T': 8.5, 'direction': 1}]
    """
    log_rho = _as_1d("log_rho", log_rho)
    n = log_rho.shape[0]
    log_T = _as_1d("log_T", log_T, n)
    age_arr = _as_1d("age", age, n) if age is not None else np.full(n, np.nan)
    mask = _valid_mask(valid, n)

    parts = []
    for key, values in fields.items():
        if key not in levels:
            raise ValueError(f"no level given for boundary {key!r}; levels were given for {', '.join(levels)}")
        level = float(levels[key])
        if not math.isfinite(level):
            raise ValueError(f"level of {key!r} must be finite, got {level}")
        f = _as_1d(f"fields[{key!r}]", values, n)
        usable = mask & np.isfinite(f)
        idx = np.nonzero(usable)[0]
        g = f[idx] - level
        s = np.sign(g)
        nz = np.nonzero(s)[0]                       # positions (in idx) of non-zero g
        if nz.size < 2:
            continue
        change = np.nonzero(s[nz[:-1]] * s[nz[1:]] < 0)[0]
        a, b = nz[change], nz[change + 1]
        adjacent = b == a + 1
        # adjacent non-zeros: interpolate; otherwise a run of zeros sits between: first zero row
        pos = np.where(adjacent, a, a + 1)
        pos_after = pos + 1
        with np.errstate(invalid="ignore", divide="ignore"):
            w = np.where(adjacent, g[a] / (g[a] - g[b]), 0.0)
        row, row_after = idx[pos], idx[pos_after]

        def lerp(x):
            return x[row] + w * (x[row_after] - x[row])

        parts.append(pd.DataFrame({
            "boundary": key, "row": row, "row_after": row_after, "fraction": w,
            "log_rho": lerp(log_rho), "log_T": lerp(log_T), "age": lerp(age_arr),
            "direction": s[b].astype(int),
        }))
    if not parts:
        return pd.DataFrame({"boundary": pd.Series([], dtype=object), "row": pd.Series([], dtype=np.int64),
                             "row_after": pd.Series([], dtype=np.int64),
                             "fraction": pd.Series([], dtype=float), "log_rho": pd.Series([], dtype=float),
                             "log_T": pd.Series([], dtype=float), "age": pd.Series([], dtype=float),
                             "direction": pd.Series([], dtype=np.int64)})
    out = pd.concat(parts, ignore_index=True)
    out = out.sort_values(["row", "fraction"], kind="stable").reset_index(drop=True)
    out["row"] = out["row"].astype(np.int64)
    out["row_after"] = out["row_after"].astype(np.int64)
    out["direction"] = out["direction"].astype(np.int64)
    return out[CROSSING_COLUMNS]


def downsample(n_rows: int, keep_idx=(), max_points: int = 20000) -> np.ndarray:
    """Row indices to draw a long track with at most ``max_points`` (plus kept) points.

    Parameters
    ----------
    n_rows : int
        Number of rows in the track.
    keep_idx : array_like of int
        Rows that must be kept (e.g. ``row`` and ``row_after`` of every crossing).
    max_points : int
        Number of evenly spaced rows, >= 2.

    Returns
    -------
    numpy.ndarray of int
        Sorted unique indices: evenly spaced rows including the first and last,
        plus every index of ``keep_idx``; at most ``max_points + len(keep_idx)``.

    Raises
    ------
    ValueError
        Negative ``n_rows``, ``max_points`` < 2, or a kept index outside [0, n_rows).

    Examples
    --------
    >>> downsample(10, [4], max_points=4).tolist()
    [0, 3, 4, 6, 9]
    """
    n_rows = int(n_rows)
    if n_rows < 0:
        raise ValueError(f"n_rows must be >= 0, got {n_rows}")
    if int(max_points) < 2:
        raise ValueError(f"max_points must be at least 2, got {max_points}")
    keep = np.asarray(keep_idx, dtype=np.int64).ravel()
    if keep.size and (keep.min() < 0 or keep.max() >= n_rows):
        bad = keep[(keep < 0) | (keep >= n_rows)][0]
        raise ValueError(f"kept row {bad} is outside the track's rows 0..{n_rows - 1}")
    if n_rows == 0:
        return np.zeros(0, dtype=np.int64)
    even = np.unique(np.round(np.linspace(0, n_rows - 1, min(n_rows, int(max_points)))).astype(np.int64))
    return np.union1d(even, keep).astype(np.int64)


def _metal_mixture(comp: Composition) -> str | dict[str, float]:
    """The metal mixture of ``comp`` as fractions of Z, or the default when it has none."""
    metals = {n: float(x) for n, x, z in zip(comp.names, comp.X, comp.Z) if z > 2}
    total = sum(metals.values())
    if total <= 0 or any(n not in NUCLIDES for n in metals):
        return "solar-like"
    return {n: x / total for n, x in metals.items()}


def evaluate_track(log_rho, log_T, comp: Composition, X=None, Y=None, valid=None, *,
                   composition_step: float = _COMPOSITION_STEP, processes=(), **physics_options) -> TrackState:
    """The full thermodynamic state at every row of a track.

    Parameters
    ----------
    log_rho, log_T : array_like
        log10 density (g cm^-3) and temperature (K) per row.
    comp : Composition
        Composition of every row, or the metal mixture and fallback when X/Y are given.
    X, Y : array_like, optional
        Hydrogen and helium mass fractions per row. With only one given, the
        other is 1 - (given) - Z of ``comp``.
    valid : array_like of bool, optional
        Rows to evaluate; the others are NaN in the output.
    composition_step : float
        Per-row (X, Y) are rounded to this step before grouping (1e-4).
    processes : iterable of str
        Burning processes (:data:`thermoplane.physics.burning.PROCESSES`) whose
        energy generation rate ``eps_<process>`` (erg g^-1 s^-1) is added, with
        each row's own composition.
    **physics_options
        Passed to :func:`thermoplane.physics.eos.evaluate`.

    Returns
    -------
    TrackState
        Every ThermoState field as a full-length array (NaN on rows not
        evaluated), plus ``ye_full`` and ``valid``.

    Raises
    ------
    ValueError
        Arrays of different lengths, an unknown physics option, a bad ``comp``.

    Notes
    -----
    A row is evaluated when it is valid, log rho and log T are finite with
    |log| <= 300, and (with per-row composition) X, Y are in [0, 1] with
    X + Y <= 1 + step. Per-row composition: rows are grouped by (X, Y)
    rounded to ``composition_step``; each group gets
    ``Composition.from_xyz(X, Y, 1 - X - Y)`` with the metals in the mixture
    of ``comp`` (the default "solar-like" mixture when ``comp`` has no
    metals), and one vectorised :func:`evaluate` call. Limit: a track whose
    composition changes smoothly has up to one group per 1e-4 step in X and
    in Y, so the cost grows with the number of distinct rounded pairs (a few
    thousand at most for a full main sequence), not with the number of rows.
    """
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    validate_options(**physics_options)        # fail early even when no row is valid
    log_rho = _as_1d("log_rho", log_rho)
    n = log_rho.shape[0]
    log_T = _as_1d("log_T", log_T, n)
    ok = _valid_mask(valid, n) & np.isfinite(log_rho) & np.isfinite(log_T)
    ok &= (np.abs(np.nan_to_num(log_rho)) <= _LOG_LIMIT) & (np.abs(np.nan_to_num(log_T)) <= _LOG_LIMIT)

    per_row = X is not None or Y is not None
    ye_full = np.full(n, comp.ye)
    if per_row:
        step = float(composition_step)
        if not (step > 0 and math.isfinite(step)):
            raise ValueError(f"composition_step must be a positive number, got {composition_step}")
        Zc = comp.metals
        Xa = _as_1d("X", X, n) if X is not None else None
        Ya = _as_1d("Y", Y, n) if Y is not None else None
        if Xa is None:
            Xa = 1.0 - Ya - Zc
        if Ya is None:
            Ya = 1.0 - Xa - Zc
        Xr = np.round(Xa / step) * step
        Yr = np.round(Ya / step) * step
        with np.errstate(invalid="ignore"):
            ok &= np.isfinite(Xr) & np.isfinite(Yr) & (Xr >= -step) & (Yr >= -step) & (Xr + Yr <= 1 + step)
        Xr = np.clip(Xr, 0.0, 1.0)
        Yr = np.clip(Yr, 0.0, 1.0)
        total = Xr + Yr
        scale = np.where(total > 1.0, total, 1.0)   # rounding may push X + Y just above 1
        Xr, Yr = Xr / scale, Yr / scale

    processes = tuple(processes or ())
    if processes:
        from . import burning
        for p in processes:
            if p not in burning.PROCESSES:
                raise ValueError(f"unknown burning process {p!r}; choose from {', '.join(burning.PROCESSES)}")
    out = {name: np.full(n, np.nan) for name in ThermoState.__dataclass_fields__}
    for p in processes:
        out[f"eps_{p}"] = np.full(n, np.nan)
    idx = np.nonzero(ok)[0]
    if idx.size:
        if not per_row:
            groups = [(comp, idx)]
        else:
            mixture = _metal_mixture(comp)
            pairs, inverse = np.unique(np.column_stack([Xr[idx], Yr[idx]]), axis=0, return_inverse=True)
            inverse = inverse.ravel()
            order = np.argsort(inverse, kind="stable")
            bounds = np.searchsorted(inverse[order], np.arange(pairs.shape[0] + 1))
            groups = []
            for k, (x, y) in enumerate(pairs):       # one evaluate() per distinct composition
                group_comp = Composition.from_xyz(float(x), float(y), max(0.0, 1.0 - x - y), metals=mixture)
                groups.append((group_comp, idx[order[bounds[k]:bounds[k + 1]]]))
        for group_comp, rows in groups:
            state = evaluate(10.0 ** log_rho[rows], 10.0 ** log_T[rows], group_comp, **physics_options)
            for name, values in state.as_dict().items():
                out[name][rows] = np.broadcast_to(values, rows.shape)
            for p in processes:
                out[f"eps_{p}"][rows] = burning.epsilon(10.0 ** log_rho[rows], 10.0 ** log_T[rows], group_comp, p)
            ye_full[rows] = group_comp.ye
    ye_full[~ok] = np.nan
    result = TrackState(out)
    result["ye_full"] = ye_full
    result["valid"] = ok
    return result


def boundary_fields(state, comp_or_ye=None) -> dict[str, np.ndarray]:
    """The field of every boundary in :data:`BOUNDARY_FIELDS` from a state.

    Parameters
    ----------
    state : ThermoState or TrackState
        Anything with attributes P_rad, P_gas, eta, rho, ye, n_plus, n_minus,
        Gamma, ion_H, ion_He2, T, T_p, melt_margin.
    comp_or_ye : Composition, float or array_like, optional
        Electrons per nucleon for the relativity parameter: a Composition
        gives its fully ionized ye = 1/mu_e; a number or array is used as is;
        None uses ``state.ye_full`` when present, else ``state.ye``.

    Returns
    -------
    dict of str -> numpy.ndarray

    Notes
    -----
    x_F = p_F / (m_e c) of a fully degenerate electron gas with
    n_e = rho ye / m_u = (8 pi / 3) (m_e c / h)^3 x_F^3, i.e.
    x_F = (rho ye / 9.7393e5 g cm^-3)^(1/3) (Chandrasekhar 1939). The ratios
    are NaN where they are undefined (0/0); log10 of a non-positive value is NaN.
    """
    if isinstance(comp_or_ye, Composition):
        ye = comp_or_ye.ye
    elif comp_or_ye is None:
        ye = getattr(state, "ye_full", None)
        ye = state.ye if ye is None else ye
    else:
        ye = np.asarray(comp_or_ye, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.asarray(state.P_rad, dtype=float) / np.asarray(state.P_gas, dtype=float)
        Gamma = np.asarray(state.Gamma, dtype=float)
        pos = lambda v: np.where(v > 0, v, np.nan)    # noqa: E731 - log10 of positive part only
        return {
            "equality": np.log10(pos(ratio)),
            "degeneracy": np.asarray(state.eta, dtype=float),
            "relativistic": np.cbrt(np.asarray(state.rho, dtype=float) * ye / RHO_YE_RELATIVISTIC),
            "pairs": np.asarray(state.n_plus, dtype=float) / np.asarray(state.n_minus, dtype=float),
            "coupling": np.log10(pos(Gamma)),
            "crystallization": -np.asarray(getattr(state, "melt_margin", np.full(Gamma.shape, np.nan)), dtype=float),
            "quantum_ions": np.log10(pos(np.asarray(state.T_p, dtype=float) / np.asarray(state.T, dtype=float))),
            "h_ionization": np.asarray(state.ion_H, dtype=float),
            "he_ionization": np.asarray(state.ion_He2, dtype=float),
        }


def ignition_key(process: str, level: float) -> str:
    """Crossing key of an ignition contour: ``ignition_<process>_<level>`` (level in erg g^-1 s^-1)."""
    return f"ignition_{process}_{float(level):g}"


def _line_fields(state, keys) -> dict[str, tuple[np.ndarray, float]]:
    """(field, level) of every boundary key: :data:`BOUNDARY_FIELDS` first, then any further line
    :mod:`thermoplane.physics.regimes` defines (its field's zero is the line), so new lines join."""
    known = boundary_fields(state)
    out = {}
    for key in keys:
        if key in BOUNDARY_FIELDS:
            out[key] = (known[key], BOUNDARY_FIELDS[key][1])
        else:
            with np.errstate(divide="ignore", invalid="ignore"):
                out[key] = (np.asarray(regimes._FIELDS[key](state), dtype=float), 0.0)
    return out


def track_boundaries() -> tuple[str, ...]:
    """Every boundary a track report can look for: the lines of :mod:`thermoplane.physics.regimes`."""
    extra = [k for k in getattr(regimes, "BOUNDARY_KEYS", ()) if k not in BOUNDARY_FIELDS and k in regimes._FIELDS]
    return tuple(BOUNDARY_FIELDS) + tuple(extra)


def track_report(log_rho, log_T, comp: Composition, age=None, valid=None, X=None, Y=None,
                 boundaries=None, ignition=(), frontiers: bool = False,
                 **physics_options) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Evaluate a track and find where it crosses each boundary.

    Parameters
    ----------
    log_rho, log_T, age, valid, X, Y
        As in :func:`evaluate_track` and :func:`find_crossings` (e.g. the
        fields of an uploaded track).
    comp : Composition
    boundaries : iterable of str, optional
        Keys of :func:`track_boundaries` to look for (default: all, including
        any line added to :mod:`thermoplane.physics.regimes`).
    ignition : iterable of (process, level)
        Ignition contours to look for: where log10 eps_process crosses
        log10 level (erg g^-1 s^-1); keys from :func:`ignition_key`.
    frontiers : bool
        Also list crossings of the ignition curves eps_nuc = eps_nu and of the
        electron-capture thresholds (keys and fields of
        :func:`thermoplane.physics.frontiers.track_fields`; the app and the
        CLI ask for them).
    **physics_options
        Passed to :func:`thermoplane.physics.eos.evaluate`.

    Returns
    -------
    state_columns : pandas.DataFrame
        One row per track row: every ThermoState field, ``ye_full`` and the
        relativity parameter ``x_F`` (NaN on rows not evaluated).
    crossings : pandas.DataFrame
        As from :func:`find_crossings`, plus :data:`COMPOSITION_COLUMNS`: X,
        Y, Z at the crossing (interpolated between the two rows like log rho)
        and ``composition`` = "track" (the track's own per-row composition) or
        "panel" (``comp``, the same for every row).

    Raises
    ------
    ValueError
        An unknown boundary key or process, a level that is not > 0, or any
        error of :func:`evaluate_track`.
    """
    allowed = track_boundaries()
    keys = list(allowed) if boundaries is None else list(boundaries)
    for key in keys:
        if key not in allowed:
            raise ValueError(f"unknown boundary {key!r}; boundaries are {', '.join(allowed)}")
    ignition = [(str(p), float(lv)) for p, lv in (ignition or ())]
    for p, lv in ignition:
        if not (math.isfinite(lv) and lv > 0):
            raise ValueError(f"ignition level of {p!r} must be a number > 0 (erg g^-1 s^-1), got {lv}")
    processes = tuple(dict.fromkeys(p for p, _ in ignition))
    state = evaluate_track(log_rho, log_T, comp, X=X, Y=Y, valid=valid, processes=processes, **physics_options)
    lines = _line_fields(state, keys)
    with np.errstate(divide="ignore", invalid="ignore"):
        for p, lv in ignition:
            eps = state[f"eps_{p}"]
            lines[ignition_key(p, lv)] = (np.log10(np.where(eps > 0, eps, np.nan)), math.log10(lv))
    columns = {name: state[name] for name in ThermoState.__dataclass_fields__}
    columns["ye_full"] = state["ye_full"]
    columns["x_F"] = boundary_fields(state)["relativistic"]
    for p in processes:
        columns[f"eps_{p}"] = state[f"eps_{p}"]
    crossings = find_crossings({k: v[0] for k, v in lines.items()}, {k: v[1] for k, v in lines.items()},
                               log_rho, log_T, age=age, valid=state["valid"])
    if frontiers:
        from .frontiers import track_fields
        more = find_crossings(*track_fields(log_rho, log_T, comp, valid=state["valid"]),
                              log_rho, log_T, age=age, valid=state["valid"])
        if len(more):
            both = [c for c in (crossings, more) if len(c)]
            crossings = pd.concat(both, ignore_index=True).sort_values(
                ["row", "fraction"], kind="stable").reset_index(drop=True)
    crossings = _with_composition(crossings, comp, X, Y, len(state["valid"]))
    return pd.DataFrame(columns), crossings


def _with_composition(crossings: pd.DataFrame, comp: Composition, X, Y, n: int) -> pd.DataFrame:
    """X, Y, Z of each crossing: the rows' own (interpolated) or the panel's."""
    out = crossings.copy()
    if X is None and Y is None:
        out["X"], out["Y"], out["Z"] = comp.hydrogen, comp.helium, comp.metals
        out["composition"] = "panel"
        return out
    Xa = _as_1d("X", X, n) if X is not None else 1.0 - _as_1d("Y", Y, n) - comp.metals
    Ya = _as_1d("Y", Y, n) if Y is not None else 1.0 - Xa - comp.metals
    r, ra, w = out["row"].to_numpy(), out["row_after"].to_numpy(), out["fraction"].to_numpy()
    xs = Xa[r] + w * (Xa[ra] - Xa[r]) if len(out) else np.zeros(0)
    ys = Ya[r] + w * (Ya[ra] - Ya[r]) if len(out) else np.zeros(0)
    out["X"], out["Y"], out["Z"] = xs, ys, 1.0 - xs - ys
    out["composition"] = "track"
    return out
