"""Lines of constant value read off an evaluated plane, with no further physics.

The question this module answers: given a :class:`~thermoplane.physics.plane.PlaneGrid`
already computed for a map, where do the regime boundaries, the ignition
contours and the central lines of stars run on it? Every line is a level set
of a field the grid holds, found column by column (or row by row for the
nearly vertical x_F = 1 line) by linear interpolation between neighbouring
pixels — vectorised over the whole grid. :func:`thermoplane.physics.regimes.boundaries`
refines the same lines to 1e-6 dex with extra equation-of-state calls; the
lines here are as fine as the map's pixels (a tenth of a pixel or better where
the field is smooth), which is what a drawn map needs, at a cost of a few
array passes.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from . import constants as const
from .regimes import (BOUNDARY_LABELS, COUPLING_GAMMA, DEGENERACY_ETA,
                      HALF_IONIZATION, PAIR_ONSET, RELATIVISTIC_XF, _active_keys)

__all__ = ["level_line", "grid_boundaries", "grid_ignition", "grid_mass_lines", "MAX_PIECES"]

#: At most this many crossings per column are kept (pieces of one line).
MAX_PIECES = 4



def level_line(x: np.ndarray, y: np.ndarray, field: np.ndarray, level: float, along: str = "y"):
    """Where ``field`` (shape (len(y), len(x))) crosses ``level``: a polyline per crossing rank.

    Parameters
    ----------
    x, y : 1-D arrays
        Axes of the grid (log rho, log T).
    field : 2-D array
        Values on the grid, rows along y.
    level : float, or 1-D array of one level per column (``along="y"`` only)
    along : {"y", "x"}
        Scan each column along y (the line is a function of x) or each row along x.

    Returns
    -------
    (xs, ys) : 1-D arrays
        The k-th crossing of every column forms piece k; pieces are joined with NaN between them.
        Empty arrays when the field never crosses the level.
    """
    field = np.asarray(field)
    if field.dtype not in (np.float32, np.float64):
        field = field.astype(float)
    if along == "x":
        if np.ndim(level):
            raise ValueError("a level per column needs along='y'")
        ys, xs = level_line(y, x, field.T, level, along="y")
        return xs, ys
    y = np.ascontiguousarray(y, dtype=float)
    levels = np.ascontiguousarray(np.broadcast_to(np.asarray(level, dtype=float), (field.shape[1],)))
    pieces, used = _column_crossings(field, levels, y, MAX_PIECES)
    if used == 0:
        return np.array([]), np.array([])
    xs = np.concatenate([np.append(x, np.nan) for _ in range(used)])
    ys = np.concatenate([np.append(p, np.nan) for p in pieces[:used]])
    return xs[:-1], ys[:-1]


@njit(cache=True)
def _column_crossings(field, levels, y, max_pieces):
    """One pass over the grid: the k-th crossing of its column's level (``levels[j]``) down each column
    (k < max_pieces), placed by linear interpolation in y, and how many ranks occur. A crossing is a sign
    change of field - level between two finite neighbours."""
    n_y, n_x = field.shape
    pieces = np.full((max_pieces, n_x), np.nan)
    rank = np.zeros(n_x, dtype=np.int64)
    lo = np.empty(n_x)
    for j in range(n_x):
        lo[j] = float(field[0, j]) - levels[j]
    for i in range(n_y - 1):                        # row by row: the grid is read in memory order
        for j in range(n_x):
            hi = float(field[i + 1, j]) - levels[j]
            a = lo[j]
            # the sign test first: it is false almost everywhere, and the finiteness tests behind it
            # then cost nothing (a third of the pass's time when they came first)
            if (a < 0) != (hi < 0):
                if np.isfinite(a) and np.isfinite(hi) and rank[j] < max_pieces:
                    w = a / (a - hi)
                    pieces[rank[j], j] = y[i] + w * (y[i + 1] - y[i])
                    rank[j] += 1
            lo[j] = hi
    used = 0
    for j in range(n_x):
        used = max(used, rank[j])
    return pieces, used


def grid_boundaries(grid, comp, keys=None, **physics_options):
    """The regime boundaries on a computed plane: list of (key, label, log_rho, log_T).

    Same keys, levels and labels as :func:`thermoplane.physics.regimes.boundaries`.
    """
    from .eos import validate_options
    opts = validate_options(**physics_options)
    active = _active_keys(comp, opts)
    keys = active if keys is None else [k for k in active if k in keys]
    x, y = grid.log_rho, grid.log_T

    def log_ne():                                   # log10 of rho Y_e, whose level is x_F = 1
        return x[None, :] + np.log10(np.maximum(grid.get("mean_ionization") * comp.ye, 1e-300))

    levels = {
        "equality": ("log_prad_pgas", 0.0, "y"),
        "degeneracy": ("eta", DEGENERACY_ETA, "y"),
        "relativistic": (log_ne, np.log10(const.n_e_relativistic * const.m_u * RELATIVISTIC_XF**3), "x"),
        "pairs": ("log_pair_fraction", np.log10(PAIR_ONSET), "y"),
        "coupling": ("log_Gamma", np.log10(COUPLING_GAMMA), "y"),
        "crystallization": ("melt_margin", 0.0, "y"),
        "quantum_ions": ("log_T_Tp", 0.0, "y"),
        "h_ionization": ("ion_H", HALF_IONIZATION, "y"),
        "he_ionization": ("ion_He2", HALF_IONIZATION, "y"),
        "h2_dissociation": ("h2_fraction", 0.5, "y"),
        "coexistence": ("coexistence", 0.5, "x"),
    }
    out = []
    for key in keys:
        name, level, along = levels[key]
        field = name() if callable(name) else grid.get(name)
        xs, ys = level_line(x, y, np.broadcast_to(field, grid.shape), level, along=along)
        out.append((key, BOUNDARY_LABELS[key], xs, ys))
    return out


def grid_ignition(grid, process: str, level: float):
    """Where log10 epsilon of ``process`` equals log10 ``level`` on the plane: (log_rho, log_T)."""
    return level_line(grid.log_rho, grid.log_T, grid.get(f"eps_{process}"), np.log10(level))


def grid_mass_lines(grid, masses):
    """Central lines of n = 3 polytropes read off the plane: P = W_3 G M^(2/3) rho^(4/3).

    Returns a list of (mass, log_rho, log_T); the lowest-T crossing per column
    (the same root as :func:`thermoplane.physics.structure.central_line`) forms the line.
    """
    from .structure import polytrope_constants
    W3 = polytrope_constants(3).W_n
    out = []
    for m in masses:
        need = np.log10(W3 * const.G * (m * const.M_sun) ** (2.0 / 3.0)) + (4.0 / 3.0) * grid.log_rho
        xs, ys = level_line(grid.log_rho, grid.log_T, grid.get("log_P"), need)
        if xs.size:
            first = np.flatnonzero(np.isnan(xs))
            end = first[0] if first.size else xs.size
            xs, ys = xs[:end], ys[:end]
        out.append((m, xs, ys))
    return out
