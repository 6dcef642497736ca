"""Dimensionless parameters of an ion species in a fully ionized plasma, as jets in (ln n_e, ln T).

The question this module answers: how strongly coupled (Gamma) and how quantum (eta = T_p / T) are the
ions of charge Z and mass A at free-electron density n_e and temperature T?

Linear mixing: every species is treated as a one-component plasma at the same n_e, so its ion density is
n_i = n_e / Z, its ion-sphere radius a_i = (3 Z / (4 pi n_e))^(1/3), Gamma_i = Z^2 e^2 / (a_i k T)
= Gamma_e Z^(5/3), and its plasma temperature T_p = hbar omega_p / k with
omega_p^2 = 4 pi n_i Z^2 e^2 / m_i (Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554, sec. II).
The ion mass is m_i = A m_u with A the atomic mass in u, as in the ideal-ion term of physics.matter.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as const
from . import jet

__all__ = ["coupling", "quantum", "ideal_ion", "plasma_temperature", "point_scales", "species_constants",
           "species_jets"]

_LN_GAMMA0 = math.log(const.e_esu**2 / const.k_B) + math.log(4.0 * math.pi / 3.0) / 3.0
_LN_ETA0 = math.log(const.hbar / const.k_B) + 0.5 * math.log(4.0 * math.pi * const.e_esu**2 / const.m_u)
# ln(lambda^3) per ion of mass A m_u: lambda = h / sqrt(2 pi A m_u k T)
_LN_LAM3_0 = 1.5 * math.log(const.h**2 / (2.0 * math.pi * const.m_u * const.k_B))


@njit(cache=True, error_model="numpy")
def coupling(n_e, T, Z):
    """Gamma_i = Gamma_e Z^(5/3) as a jet (Gamma ∝ n_e^(1/3) / T)."""
    v = math.exp(_LN_GAMMA0 + math.log(n_e) / 3.0 - math.log(T) + (5.0 / 3.0) * math.log(Z))
    return jet.loglin(v, 1.0 / 3.0, -1.0)


@njit(cache=True, error_model="numpy")
def quantum(n_e, T, Z, A):
    """eta = T_p / T as a jet (T_p ∝ (n_e Z / A)^(1/2))."""
    v = math.exp(_LN_ETA0 + 0.5 * (math.log(n_e) + math.log(Z) - math.log(A)) - math.log(T))
    return jet.loglin(v, 0.5, -1.0)


@njit(cache=True, error_model="numpy")
def plasma_temperature(n_e, Z, A):
    """Ion plasma temperature T_p = hbar omega_p / k, K."""
    return math.exp(_LN_ETA0 + 0.5 * (math.log(n_e) + math.log(Z) - math.log(A)))


@njit(cache=True, error_model="numpy")
def ideal_ion(n_e, T, Z, A):
    """Classical ideal-gas (Sackur–Tetrode) free energy per ion over kT: ln(n_i lambda^3) - 1, as a jet.

    The solid's lattice free energy replaces this term, so the solid module returns its excess over it.
    """
    v = math.log(n_e) - math.log(Z) + _LN_LAM3_0 - 1.5 * math.log(A) - 1.5 * math.log(T) - 1.0
    return jet.lin(v, 1.0, -1.5)


# The same three jets for many species at one point, sharing the logarithms and exponentials (the dense-plasma
# mixture): Gamma_i = Gamma_1 Z^(5/3), eta_i = eta_1 (Z / A)^(1/2), f_id,i = ln n_e - 1.5 ln T + c_i.


@njit(cache=True, error_model="numpy")
def point_scales(n_e, T):
    """(ln n_e, ln T, Gamma_1, eta_1, ln Gamma_1, ln eta_1) at one point: Gamma and eta = T_p / T of a species
    with Z = A = 1, and their logarithms."""
    ln_n = math.log(n_e)
    ln_T = math.log(T)
    lg = _LN_GAMMA0 + ln_n / 3.0 - ln_T
    le = _LN_ETA0 + 0.5 * ln_n - ln_T
    return (ln_n, ln_T, math.exp(lg), math.exp(le), lg, le)


@njit(cache=True, error_model="numpy")
def species_constants(Z, A):
    """Per-species factors, shape (9, n): Z^(5/3), (Z / A)^(1/2), the constant of ln(n_i lambda^3) - 1,
    Z^(2/3) (the screening's a_i^2 over a_e^2), the logarithms of the first two, Z^(5/6), Z^(-5/6) and
    Z^(-5/3) (the screening's (3 Gamma)^(1/2), its reciprocal and 1 / Gamma from those of Z = 1)."""
    out = np.empty((9, Z.size))
    for i in range(Z.size):
        lz = math.log(Z[i])
        out[0, i] = math.exp((5.0 / 3.0) * lz)
        out[1, i] = math.exp(0.5 * (lz - math.log(A[i])))
        out[2, i] = -lz + _LN_LAM3_0 - 1.5 * math.log(A[i]) - 1.0
        out[3, i] = math.exp((2.0 / 3.0) * lz)
        out[4, i] = (5.0 / 3.0) * lz
        out[5, i] = 0.5 * (lz - math.log(A[i]))
        out[6, i] = math.exp((5.0 / 6.0) * lz)
        out[7, i] = 1.0 / out[6, i]
        out[8, i] = 1.0 / out[0, i]
    return out


@njit(cache=True, inline="always", error_model="numpy")
def species_jets(scales, sc, i):
    """(Gamma, eta, f_id) of species i as jets, from :func:`point_scales` and :func:`species_constants`;
    equal to :func:`coupling`, :func:`quantum` and :func:`ideal_ion` to rounding."""
    ln_n, ln_T, g1, e1 = scales[0], scales[1], scales[2], scales[3]
    return (jet.loglin(g1 * sc[0, i], 1.0 / 3.0, -1.0), jet.loglin(e1 * sc[1, i], 0.5, -1.0),
            jet.lin(ln_n - 1.5 * ln_T + sc[2, i], 1.0, -1.5))
