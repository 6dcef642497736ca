"""First-order jets for the compiled equilibrium kernels: a value and its gradient in 6 seeds.

A jet is a tuple (v, d1, ..., d6) of floats. The seeds are the four equilibrium unknowns
(y1 = ln n_e', y2 = zeta, y3 = c, y4 = ln n_h'; see :mod:`thermoplane.physics.eos.equilibrium`) and the
state variables (ln rho, ln T) as seeds 5 and 6. Forward-mode differentiation with tuples keeps every
operation in registers inside numba kernels (no allocation): the Jacobian of the equilibrium
conditions and the partial derivatives of P, E and S come from one evaluation of plain-looking code.

The rules are the chain rule, written out; nothing here is specific to the physics.
"""

from __future__ import annotations

import math

from numba import njit

__all__ = ["const", "seed", "add", "sub", "mul", "div", "scale", "shift", "jexp", "jlog", "jsqrt",
           "logaddexp", "lin", "grad", "N_SEEDS", "SEED_LNRHO", "SEED_LNT"]

N_SEEDS = 6
#: seed numbers of ln rho and ln T
SEED_LNRHO = 5
SEED_LNT = 6


@njit(cache=True, inline="always", error_model="numpy")
def const(v):
    return (v, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0)


@njit(cache=True, inline="always", error_model="numpy")
def seed(v, i):
    """The jet of seed variable number i (1..6) with value v."""
    return (v, 1.0 if i == 1 else 0.0, 1.0 if i == 2 else 0.0, 1.0 if i == 3 else 0.0, 1.0 if i == 4 else 0.0, 1.0 if i == 5 else 0.0, 1.0 if i == 6 else 0.0)


@njit(cache=True, inline="always", error_model="numpy")
def grad(v, g):
    """A jet from a value and a gradient tuple of 6 floats."""
    return (v, g[0], g[1], g[2], g[3], g[4], g[5])


@njit(cache=True, inline="always", error_model="numpy")
def add(a, b):
    return (a[0] + b[0], a[1] + b[1], a[2] + b[2], a[3] + b[3], a[4] + b[4], a[5] + b[5], a[6] + b[6])


@njit(cache=True, inline="always", error_model="numpy")
def sub(a, b):
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2], a[3] - b[3], a[4] - b[4], a[5] - b[5], a[6] - b[6])


@njit(cache=True, inline="always", error_model="numpy")
def scale(a, c):
    """c * a for a float c."""
    return (c * a[0], c * a[1], c * a[2], c * a[3], c * a[4], c * a[5], c * a[6])


@njit(cache=True, inline="always", error_model="numpy")
def shift(a, c):
    """a + c for a float c."""
    return (a[0] + c, a[1], a[2], a[3], a[4], a[5], a[6])


@njit(cache=True, inline="always", error_model="numpy")
def lin(a, ca, b, cb):
    """ca * a + cb * b for floats ca, cb."""
    return (ca * a[0] + cb * b[0], ca * a[1] + cb * b[1], ca * a[2] + cb * b[2], ca * a[3] + cb * b[3], ca * a[4] + cb * b[4], ca * a[5] + cb * b[5], ca * a[6] + cb * b[6])


@njit(cache=True, inline="always", error_model="numpy")
def mul(a, b):
    return (a[0] * b[0], a[0] * b[1] + a[1] * b[0], a[0] * b[2] + a[2] * b[0], a[0] * b[3] + a[3] * b[0], a[0] * b[4] + a[4] * b[0], a[0] * b[5] + a[5] * b[0], a[0] * b[6] + a[6] * b[0])


@njit(cache=True, inline="always", error_model="numpy")
def _chain(a, v, d):
    """The jet of g(a) given g(a0) = v and g'(a0) = d."""
    return (v, d * a[1], d * a[2], d * a[3], d * a[4], d * a[5], d * a[6])


@njit(cache=True, inline="always", error_model="numpy")
def div(a, b):
    q = a[0] / b[0]
    ib = 1.0 / b[0]
    return (q, (a[1] - q * b[1]) * ib, (a[2] - q * b[2]) * ib, (a[3] - q * b[3]) * ib, (a[4] - q * b[4]) * ib, (a[5] - q * b[5]) * ib, (a[6] - q * b[6]) * ib)


@njit(cache=True, inline="always", error_model="numpy")
def jexp(a):
    e = math.exp(a[0])
    return _chain(a, e, e)


@njit(cache=True, inline="always", error_model="numpy")
def jlog(a):
    x = a[0] if a[0] > 1e-300 else 1e-300       # a guard for trial steps that empty a sum
    return _chain(a, math.log(x), 1.0 / x)


@njit(cache=True, inline="always", error_model="numpy")
def jsqrt(a):
    r = math.sqrt(a[0])
    return _chain(a, r, 0.5 / r)


@njit(cache=True, inline="always", error_model="numpy")
def logaddexp(a, b):
    """ln(e^a + e^b) without overflow."""
    m = a[0] if a[0] > b[0] else b[0]
    ea = math.exp(a[0] - m)
    eb = math.exp(b[0] - m)
    s = ea + eb
    wa = ea / s
    wb = eb / s
    return (m + math.log(s), wa * a[1] + wb * b[1], wa * a[2] + wb * b[2], wa * a[3] + wb * b[3], wa * a[4] + wb * b[4], wa * a[5] + wb * b[5], wa * a[6] + wb * b[6])
