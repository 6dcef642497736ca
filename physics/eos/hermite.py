"""Quintic Hermite interpolation on one cell, for the tables the compiled kernels read.

Given a function's value, first and second derivative at both ends of a cell of width h, the quintic that
matches all six is C2 across cells; its value and its first two derivatives at a point are returned
together, so a quantity and its derivatives always come from the same polynomial (the identities between
them hold to rounding). The basis is the standard one (e.g. Timmes & Swesty 2000, eq. 13, for the
two-dimensional version).

For the hot loops the same interpolant is also stored per cell in Taylor form about the cell's left end,
p(s) = f0 + d0 s + (c0 / 2) s^2 + a3 s^3 + a4 s^4 + a5 s^5 (:func:`cell_coefficients`, built once), so that
a lookup (:func:`taylor_lookup`) is three Horner sums: the same polynomial, to rounding, at a fraction of
the operations of :func:`quintic`.
"""

from __future__ import annotations

import numpy as np
from numba import njit

__all__ = ["quintic", "lookup", "cell_coefficients", "locate_cell", "taylor_lookup", "taylor_cell"]


@njit(cache=True, error_model="numpy")
def quintic(f0, g0, k0, f1, g1, k1, s, h):
    """Value and first two derivatives at s in [0, 1] of the cell [x0, x0 + h] (s = (x - x0) / h).

    f, g, k: the value and the first and second derivatives in x at the cell's two ends.
    """
    d0, d1 = g0 * h, g1 * h
    c0, c1 = k0 * h * h, k1 * h * h
    s2 = s * s
    s3 = s2 * s
    s4 = s3 * s
    s5 = s4 * s
    v = (f0 * (1 - 10 * s3 + 15 * s4 - 6 * s5) + d0 * (s - 6 * s3 + 8 * s4 - 3 * s5)
         + c0 * 0.5 * (s2 - 3 * s3 + 3 * s4 - s5) + c1 * 0.5 * (s3 - 2 * s4 + s5)
         + d1 * (-4 * s3 + 7 * s4 - 3 * s5) + f1 * (10 * s3 - 15 * s4 + 6 * s5))
    dv = (f0 * (-30 * s2 + 60 * s3 - 30 * s4) + d0 * (1 - 18 * s2 + 32 * s3 - 15 * s4)
          + c0 * 0.5 * (2 * s - 9 * s2 + 12 * s3 - 5 * s4) + c1 * 0.5 * (3 * s2 - 8 * s3 + 5 * s4)
          + d1 * (-12 * s2 + 28 * s3 - 15 * s4) + f1 * (30 * s2 - 60 * s3 + 30 * s4)) / h
    ddv = (f0 * (-60 * s + 180 * s2 - 120 * s3) + d0 * (-36 * s + 96 * s2 - 60 * s3)
           + c0 * 0.5 * (2 - 18 * s + 36 * s2 - 20 * s3) + c1 * 0.5 * (6 * s - 24 * s2 + 20 * s3)
           + d1 * (-24 * s + 84 * s2 - 60 * s3) + f1 * (60 * s - 180 * s2 + 120 * s3)) / (h * h)
    return v, dv, ddv


@njit(cache=True, inline="always", error_model="numpy")
def lookup(x, x0, h, tf, tg, tk):
    """Value and first two derivatives at x of the table with nodes x0 + k h holding the value ``tf``, the first
    ``tg`` and the second derivative ``tk`` (x0 <= x <= x0 + (n - 1) h; the caller checks the range)."""
    t = (x - x0) / h
    i = int(t)
    if i > tf.size - 2:
        i = tf.size - 2
    return quintic(tf[i], tg[i], tk[i], tf[i + 1], tg[i + 1], tk[i + 1], t - i, h)


def cell_coefficients(f, g, k, h):
    """Per-cell Taylor coefficients (f0, d0, c0 / 2, a3, a4, a5) of the quintic Hermite interpolant, shape
    (n - 1, 6), from node values f, first derivatives g and second derivatives k (in x, nodes h apart).

    With d = g h, c = k h^2 and the remainders D = f1 - f0 - d0 - c0 / 2, D' = d1 - d0 - c0, D'' = c1 - c0,
    the conditions p(1) = f1, p'(1) = d1, p''(1) = c1 give a3 = 10 D - 4 D' + D'' / 2,
    a4 = -15 D + 7 D' - D'', a5 = 6 D - 3 D' + D'' / 2 (our algebra; the interpolant is that of
    :func:`quintic`).
    """
    f, g, k = (np.asarray(a, float) for a in (f, g, k))
    d0, d1 = g[:-1] * h, g[1:] * h
    c0, c1 = k[:-1] * h * h, k[1:] * h * h
    D = f[1:] - f[:-1] - d0 - 0.5 * c0
    D1 = d1 - d0 - c0
    D2 = c1 - c0
    return np.ascontiguousarray(np.stack([f[:-1], d0, 0.5 * c0, 10.0 * D - 4.0 * D1 + 0.5 * D2,
                                          -15.0 * D + 7.0 * D1 - D2, 6.0 * D - 3.0 * D1 + 0.5 * D2], axis=1))


@njit(cache=True, inline="always", error_model="numpy")
def locate_cell(x, x0, h, n_cells):
    """(cell i, position s in [0, 1]) of x in cells of width h from x0 (the last cell takes x at its end; the
    caller checks that x0 <= x <= x0 + n_cells h)."""
    t = (x - x0) / h
    i = int(t)
    if i > n_cells - 1:
        i = n_cells - 1
    return i, t - i


@njit(cache=True, inline="always", error_model="numpy")
def taylor_lookup(x, x0, h, cf):
    """Value and first two derivatives at x of the interpolant stored by :func:`cell_coefficients` (cells
    from x0, width h; the caller checks that x0 <= x <= x0 + n h)."""
    i, s = locate_cell(x, x0, h, cf.shape[0])
    return taylor_cell(cf, i, 0, s, h)


@njit(cache=True, inline="always", error_model="numpy")
def taylor_cell(cf, i, o, s, h):
    """As :func:`taylor_lookup` for cell i, position s in [0, 1], of a table whose rows hold several
    functions side by side: the one whose six coefficients start at column o."""
    c0, c1, c2, c3, c4, c5 = cf[i, o], cf[i, o + 1], cf[i, o + 2], cf[i, o + 3], cf[i, o + 4], cf[i, o + 5]
    v = c0 + s * (c1 + s * (c2 + s * (c3 + s * (c4 + s * c5))))
    dv = c1 + s * (2.0 * c2 + s * (3.0 * c3 + s * (4.0 * c4 + s * 5.0 * c5)))
    ddv = 2.0 * c2 + s * (6.0 * c3 + s * (12.0 * c4 + s * 20.0 * c5))
    return v, dv / h, ddv / (h * h)
