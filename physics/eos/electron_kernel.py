"""The electron gas of the free energy, evaluated point by point inside the compiled equilibrium.

Question answered: at free-electron density n and temperature T, what are eta, P, E, S per volume and
their derivatives in ln n and ln T, without leaving a numba kernel?

This is the pair-free table of :mod:`thermoplane.physics.electron_table` (the Helmholtz free energy of
the Fermi-Dirac gas by biquintic Hermite interpolation, after Timmes & Swesty 2000), read cell by cell:
the same monomial coefficients and the same T = 0 part f_0(n) added back (:func:`degenerate_point`), the
same arithmetic, so it agrees with ``table_state(n, T, pairs=False)``
to rounding (tested). Below 1e4 cm^-3 (the table's lower edge) the gas is non-degenerate to far better
than 1e-12, so its free energy is that of the edge scaled exactly as a Boltzmann gas scales,
f(n, T) = (n/n0) f(n0, T) + n kT ln(n/n0), which keeps the relativistic temperature dependence of the
table (a plain Maxwell-Boltzmann gas is off by ~kT/m_e c^2). Points outside the table in T are flagged
for the numpy path (:func:`electron_point` returns False).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as const
from ..electron_table import _E_UNIT, _MC2, _SERIES, _SHIFT, _X0, _X_SERIES, TABLE_RANGE, _table

__all__ = ["electron_arrays", "electron_point", "classical_point", "pair_arrays", "pair_point"]

_K = const.k_B
_LN_NQ0 = math.log(2.0) + 1.5 * math.log(2.0 * math.pi * const.m_e * const.k_B / const.h**2)


def electron_arrays():
    """(coefficients per cell (cells, 36), u0, v0, hu, hv, nu, nv, ln n_min, ln T_min, ln T_max)."""
    tab = _table(False)
    lo_n, _, lo_T, hi_T = TABLE_RANGE
    return (np.ascontiguousarray(tab.CT.T), tab.u0, tab.v0, tab.hu, tab.hv, tab.nu, tab.nv,
            lo_n * math.log(10.0), lo_T * math.log(10.0), hi_T * math.log(10.0))


_NS = len(_SERIES)


@njit(cache=True, error_model="numpy")
def degenerate_point(n):
    """(f_0, f_0u, f_0uu) of physics.electron_table.degenerate_free_energy at one n, the same arithmetic."""
    x = _X0 * n ** (1.0 / 3.0)
    x2 = x * x
    eps = math.sqrt(1.0 + x2)
    if x < _X_SERIES:
        y = x * x
        ser = _SERIES[_NS - 1]
        for k in range(_NS - 2, -1, -1):
            ser = ser * y + _SERIES[k]
        f = ser * y * y * x
    else:
        f = 0.125 * (x * (2.0 * x * x + 1.0) * math.sqrt(1.0 + x * x) - math.asinh(x)) - x * x * x / 3.0
    mu0 = _MC2 * x2 / (1.0 + eps)
    return _E_UNIT * f, n * mu0, n * (mu0 + _MC2 * x2 / (3.0 * eps))


@njit(cache=True, error_model="numpy")
def classical_point(n, T, out):
    """Maxwell-Boltzmann electrons (non-relativistic, spin weight 2), the comparison option."""
    kT = _K * T
    eta = math.log(n) - _LN_NQ0 - 1.5 * math.log(T)
    out[0] = eta
    out[1] = 1.0
    out[2] = -1.5
    out[3] = n * kT
    out[4] = n * kT
    out[5] = n * kT
    out[6] = 1.5 * n * kT
    out[7] = 1.5 * n * kT
    out[8] = 1.5 * n * kT
    s = n * _K * (2.5 - eta)
    out[9] = s
    out[10] = s - n * _K
    out[11] = 1.5 * n * _K
    return True


@njit(cache=True, error_model="numpy")
def _biquintic(c, zu, zv, hu, hv):
    """(G, G_u, G_uu, G_v, G_uv, G_vv) of one cell's biquintic (36 monomial coefficients, row 6 l + k) at
    (zu, zv) in the unit cell, derivatives in u = ln n and v = ln T (the numpy reader's arithmetic)."""
    # v-contraction: a_q[k] = d^q/dzv^q sum_l C[6 l + k] zv^l, q = 0, 1, 2
    G = 0.0
    Gu = 0.0
    Guu = 0.0
    Gv = 0.0
    Guv = 0.0
    Gvv = 0.0
    for k in range(5, -1, -1):
        a0 = c[30 + k]
        a1 = 0.0
        a2 = 0.0
        for l in range(4, -1, -1):
            a2 = a2 * zv + 2.0 * a1
            a1 = a1 * zv + a0
            a0 = a0 * zv + c[6 * l + k]
        # u-contraction by Horner with derivatives
        Guu = Guu * zu + 2.0 * Gu
        Gu = Gu * zu + G
        G = G * zu + a0
        Guv = Guv * zu + Gv
        Gv = Gv * zu + a1
        Gvv = Gvv * zu + a2
    return G, Gu / hu, Guu / (hu * hu), Gv / hv, Guv / (hu * hv), Gvv / (hv * hv)


@njit(cache=True, error_model="numpy")
def electron_point(n, T, tab, out):
    """The electron gas at (n, T) into out (12 floats, layout of the equilibrium kernel); True if done.

    out = (eta, n deta/dn, T deta/dT, P, n dP/dn, T dP/dT, e, n de/dn, T de/dT, s, n ds/dn, T ds/dT),
    per volume, derivatives at fixed other variable.
    """
    CT, u0, v0, hu, hv, nu, nv, ln_nmin, ln_Tmin, ln_Tmax = tab
    u = math.log(n)
    v = math.log(T)
    if v < ln_Tmin - 1e-9 or v > ln_Tmax:
        return False
    below = u < ln_nmin
    ub = u
    if below:
        u = ln_nmin
    x = (u - u0) / hu
    y = (v - v0) / hv
    i = int(math.floor(x))
    j = int(math.floor(y))
    if i > nu - 2:
        return False
    if j > nv - 2:
        j = nv - 2
    if i < 0:
        i = 0
    if j < 0:
        j = 0
    G, Gu, Guu, Gv, Guv, Gvv = _biquintic(CT[i * (nv - 1) + j], x - i, y - j, hu, hv)
    # the table holds f - f_0(n) (physics.electron_table.degenerate_free_energy); add f_0 back
    f0, f0u, f0uu = degenerate_point(math.exp(u) if below else n)
    G += f0
    Gu += f0u
    Guu += f0uu
    kT = _K * T
    if below:
        # Boltzmann scaling from the edge n0: G = (n/n0) G0 + kT n (u - u0)
        r = math.exp(ub - u)
        d = ub - u
        nn = n
        G0n = G / math.exp(u)                            # G0 / n0
        G = r * G + kT * nn * d
        Gu = nn * (G0n + kT * (d + 1.0))
        Guu = nn * (G0n + kT * (d + 2.0))
        Guv = r * Gv + kT * nn * (d + 1.0)
        Gv = r * Gv + kT * nn * d
        Gvv = r * Gvv + kT * nn * d
    out[0] = Gu / (n * kT)
    out[1] = (Guu - Gu) / (n * kT)
    out[2] = (Guv - Gu) / (n * kT)
    out[3] = Gu - G
    out[4] = Guu - Gu
    out[5] = Guv - Gv
    out[6] = G - Gv
    out[7] = Gu - Guv
    out[8] = Gv - Gvv
    out[9] = -Gv / T
    out[10] = -Guv / T
    out[11] = (Gv - Gvv) / T
    return True


def pair_arrays(name):
    """The arrays :func:`pair_point` reads for a table with pairs (``True``: the main pair table, or the name
    of a pair-onset table of physics.electron_table.ONSET_TABLES): the cell coefficients, the grid, the
    zero-charge part (1-D quintic cells, step h0) and the ln n_plus bicubic (float32 values as doubles, as
    the numpy reader converts them)."""
    tab = _table(name)
    if not tab.pairs:
        raise ValueError(f"{name!r} is not a table with pairs")
    return (np.ascontiguousarray(tab.CT.T), tab.u0, tab.v0, tab.hu, tab.hv, tab.nu, tab.nv,
            np.ascontiguousarray(tab.C0), tab.h0, np.ascontiguousarray(tab.C3T.T, dtype=np.float64))


_LN10 = math.log(10.0)
_SHIFT_W = (_SHIFT[1] - _SHIFT[0]) * _LN10


@njit(cache=True, error_model="numpy")
def pair_point(n, T, tab, out):
    """The electron-positron gas at net density n and T from a table with pairs, into out (13 floats): the
    12 of :func:`electron_point` and n_plus. The numpy reader's formulas (physics.electron_table._evaluate):
    the table holds h = g + c(T) n over the zero-charge pair gas F0(T); cells are clipped to the grid (the
    caller sends only points inside the table)."""
    CT, u0, v0, hu, hv, nu, nv, C0, h0, C3 = tab
    u = math.log(n)
    v = math.log(T)
    x = (u - u0) / hu
    y = (v - v0) / hv
    i = min(max(int(math.floor(x)), 0), nu - 2)
    j = min(max(int(math.floor(y)), 0), nv - 2)
    zu = x - i
    zv = y - j
    cell = i * (nv - 1) + j
    G, Gu, Guu, Gv, Guv, Gvv = _biquintic(CT[cell], zu, zv, hu, hv)
    # the zero-charge part, a function of v alone on its finer grid (quintic, Horner with derivatives)
    y0 = (v - v0) / h0
    j0 = min(max(int(math.floor(y0)), 0), C0.shape[0] - 1)
    z0 = y0 - j0
    F0 = C0[j0, 5]
    F0v = 0.0
    F0vv = 0.0
    for k in range(4, -1, -1):
        F0vv = F0vv * z0 + 2.0 * F0v
        F0v = F0v * z0 + F0
        F0 = F0 * z0 + C0[j0, k]
    F0v /= h0
    F0vv /= h0 * h0
    # the rest-mass shift c(T) = m_e c^2 s(x) (physics.electron_table._rest_shift)
    xs = min(max((v - _SHIFT[0] * _LN10) / _SHIFT_W, 0.0), 1.0)
    c0 = _MC2 * (xs ** 4 * (35.0 - 84.0 * xs + 70.0 * xs * xs - 20.0 * xs ** 3))
    c1 = _MC2 * (140.0 * xs ** 3 * (1.0 - xs) ** 3 / _SHIFT_W)
    c2 = _MC2 * (420.0 * xs * xs * (1.0 - xs) ** 2 * (1.0 - 2.0 * xs) / (_SHIFT_W * _SHIFT_W))
    kT = _K * T
    Fv = Gv - c1 * n + F0v
    out[0] = (Gu / n - c0) / kT
    out[1] = (Guu - Gu) / (n * kT)
    out[2] = (Guv - Gu - (c1 - c0) * n) / (n * kT)
    out[3] = (Gu - G) - F0
    out[4] = Guu - Gu
    out[5] = Guv - Gv - F0v
    out[6] = (G - Gv) - (c0 - c1) * n + (F0 - F0v)
    out[7] = (Gu - Guv) - (c0 - c1) * n
    out[8] = -((Gvv - Gv) - (c2 - c1) * n + (F0vv - F0v))
    out[9] = -Fv / T
    out[10] = math.nan                      # (not formed: the map's state needs S alone)
    out[11] = math.nan
    # ln n_plus: bicubic, coefficients row 4 l + k
    c3 = C3[cell]
    t = 0.0
    for k in range(3, -1, -1):
        b = ((c3[12 + k] * zv + c3[8 + k]) * zv + c3[4 + k]) * zv + c3[k]
        t = t * zu + b
    out[12] = 0.0 if t < -690.0 else math.exp(t)
