"""Quintic Hermite interpolation on one cell, for the tables the compiled kernels read.

Given a function's value, first and second derivative at both ends of a cell of width h, the quintic that
matches all six is C2 across cells; its value and its first two derivatives at a point are returned
together, so a quantity and its derivatives always come from the same polynomial (the identities between
them hold to rounding). The basis is the standard one (e.g. Timmes & Swesty 2000, eq. 13, for the
two-dimensional version).
"""

from __future__ import annotations

from numba import njit

__all__ = ["quintic", "lookup"]


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
