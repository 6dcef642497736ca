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
from ..electron_table import _E_UNIT, _MC2, _SERIES, _X0, _X_SERIES, TABLE_RANGE, _table

__all__ = ["electron_arrays", "electron_point", "classical_point"]

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
    zu = x - i
    zv = y - j
    c = CT[i * (nv - 1) + j]
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
    Gu /= hu
    Guu /= hu * hu
    Gv /= hv
    Guv /= hu * hv
    Gvv /= hv * hv
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
