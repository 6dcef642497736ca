"""Second-order derivative jets in two variables, for numba kernels.

The question this module answers: how do the dense-plasma kernels carry a free energy and its first and
second partial derivatives in (ln n_e, ln T) through a formula without writing each derivative by hand?

A jet is a tuple ``(v, a, b, aa, ab, bb)``: a value v and its partials with respect to a = ln n_e and
b = ln T. Every operation applies the chain rule exactly (forward-mode differentiation), so the
derivatives are the analytic ones to rounding. Tuples of floats live on the stack in numba: no heap
allocation in the per-point loops. Every function here is ``@njit(cache=True)`` and callable from other
numba kernels.
"""

from __future__ import annotations

import math

from numba import njit

__all__ = ["const", "loglin", "add", "sub", "mul", "div", "scale", "addc", "fun", "exp", "log", "sqrt",
           "pow_", "atan", "asinh", "log1p", "expm1", "tanh", "inv", "lin", "sq", "pow15", "root4"]


@njit(cache=True, inline="always", error_model="numpy")
def const(c):
    return (c, 0.0, 0.0, 0.0, 0.0, 0.0)


@njit(cache=True, inline="always", error_model="numpy")
def lin(v, da, db):
    """A quantity linear in (ln n_e, ln T): v + da ln n_e + db ln T (value v given)."""
    return (v, da, db, 0.0, 0.0, 0.0)


@njit(cache=True, inline="always", error_model="numpy")
def loglin(v, da, db):
    """v = C n_e^da T^db: a power law, given its value."""
    return (v, v * da, v * db, v * da * da, v * da * db, v * db * db)


@njit(cache=True, inline="always", error_model="numpy")
def add(x, y):
    return (x[0] + y[0], x[1] + y[1], x[2] + y[2], x[3] + y[3], x[4] + y[4], x[5] + y[5])


@njit(cache=True, inline="always", error_model="numpy")
def sub(x, y):
    return (x[0] - y[0], x[1] - y[1], x[2] - y[2], x[3] - y[3], x[4] - y[4], x[5] - y[5])


@njit(cache=True, inline="always", error_model="numpy")
def scale(x, c):
    return (c * x[0], c * x[1], c * x[2], c * x[3], c * x[4], c * x[5])


@njit(cache=True, inline="always", error_model="numpy")
def addc(x, c):
    return (x[0] + c, x[1], x[2], x[3], x[4], x[5])


@njit(cache=True, inline="always", error_model="numpy")
def mul(x, y):
    return (x[0] * y[0],
            x[1] * y[0] + x[0] * y[1],
            x[2] * y[0] + x[0] * y[2],
            x[3] * y[0] + 2.0 * x[1] * y[1] + x[0] * y[3],
            x[4] * y[0] + x[1] * y[2] + x[2] * y[1] + x[0] * y[4],
            x[5] * y[0] + 2.0 * x[2] * y[2] + x[0] * y[5])


@njit(cache=True, inline="always", error_model="numpy")
def fun(x, f0, f1, f2):
    """g(x) from g, g' and g'' at x[0] (chain rule to second order)."""
    return (f0, f1 * x[1], f1 * x[2],
            f1 * x[3] + f2 * x[1] * x[1],
            f1 * x[4] + f2 * x[1] * x[2],
            f1 * x[5] + f2 * x[2] * x[2])


@njit(cache=True, inline="always", error_model="numpy")
def inv(x):
    r = 1.0 / x[0]
    return fun(x, r, -r * r, 2.0 * r * r * r)


@njit(cache=True, inline="always", error_model="numpy")
def div(x, y):
    return mul(x, inv(y))


@njit(cache=True, inline="always", error_model="numpy")
def exp(x):
    e = math.exp(x[0])
    return fun(x, e, e, e)


@njit(cache=True, inline="always", error_model="numpy")
def expm1(x):
    e = math.exp(x[0])
    return fun(x, math.expm1(x[0]), e, e)


@njit(cache=True, inline="always", error_model="numpy")
def log(x):
    r = 1.0 / x[0]
    return fun(x, math.log(x[0]), r, -r * r)


@njit(cache=True, inline="always", error_model="numpy")
def log1p(x):
    r = 1.0 / (1.0 + x[0])
    return fun(x, math.log1p(x[0]), r, -r * r)


@njit(cache=True, inline="always", error_model="numpy")
def sqrt(x):
    s = math.sqrt(x[0])
    return fun(x, s, 0.5 / s, -0.25 / (s * x[0]))


@njit(cache=True, inline="always", error_model="numpy")
def pow_(x, p):
    v = x[0] ** p
    return fun(x, v, p * v / x[0], p * (p - 1.0) * v / (x[0] * x[0]))


@njit(cache=True, inline="always", error_model="numpy")
def atan(x):
    r = 1.0 / (1.0 + x[0] * x[0])
    return fun(x, math.atan(x[0]), r, -2.0 * x[0] * r * r)


@njit(cache=True, inline="always", error_model="numpy")
def asinh(x):
    r = 1.0 / math.sqrt(1.0 + x[0] * x[0])
    return fun(x, math.asinh(x[0]), r, -x[0] * r * r * r)


@njit(cache=True, inline="always", error_model="numpy")
def tanh(x):
    t = math.tanh(x[0])
    s = 1.0 - t * t
    return fun(x, t, s, -2.0 * t * s)


@njit(cache=True, inline="always", error_model="numpy")
def sq(x):
    """x * x (as :func:`mul` (x, x), with fewer operations)."""
    return (x[0] * x[0],
            2.0 * x[0] * x[1],
            2.0 * x[0] * x[2],
            2.0 * (x[1] * x[1] + x[0] * x[3]),
            2.0 * (x[1] * x[2] + x[0] * x[4]),
            2.0 * (x[2] * x[2] + x[0] * x[5]))


@njit(cache=True, inline="always", error_model="numpy")
def pow15(x):
    """x^(3/2) by one square root (``pow_(x, 1.5)`` to rounding, without the pow call)."""
    s = math.sqrt(x[0])
    return fun(x, x[0] * s, 1.5 * s, 0.75 / s)


@njit(cache=True, inline="always", error_model="numpy")
def root4(x):
    """x^(1/4) by two square roots (``pow_(x, 0.25)`` to rounding)."""
    s = math.sqrt(x[0])
    q = math.sqrt(s)
    return fun(x, q, 0.25 * q / x[0], -0.1875 * q / (x[0] * x[0]))
