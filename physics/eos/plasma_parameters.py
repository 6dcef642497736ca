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

from numba import njit

from .. import constants as const
from . import jet

__all__ = ["coupling", "quantum", "ideal_ion", "plasma_temperature"]

_LN_GAMMA0 = math.log(const.e_esu**2 / const.k_B) + math.log(4.0 * math.pi / 3.0) / 3.0
_LN_ETA0 = math.log(const.hbar / const.k_B) + 0.5 * math.log(4.0 * math.pi * const.e_esu**2 / const.m_u)
# ln(lambda^3) per ion of mass A m_u: lambda = h / sqrt(2 pi A m_u k T)
_LN_LAM3_0 = 1.5 * math.log(const.h**2 / (2.0 * math.pi * const.m_u * const.k_B))


@njit(cache=True)
def coupling(n_e, T, Z):
    """Gamma_i = Gamma_e Z^(5/3) as a jet (Gamma ∝ n_e^(1/3) / T)."""
    v = math.exp(_LN_GAMMA0 + math.log(n_e) / 3.0 - math.log(T) + (5.0 / 3.0) * math.log(Z))
    return jet.loglin(v, 1.0 / 3.0, -1.0)


@njit(cache=True)
def quantum(n_e, T, Z, A):
    """eta = T_p / T as a jet (T_p ∝ (n_e Z / A)^(1/2))."""
    v = math.exp(_LN_ETA0 + 0.5 * (math.log(n_e) + math.log(Z) - math.log(A)) - math.log(T))
    return jet.loglin(v, 0.5, -1.0)


@njit(cache=True)
def plasma_temperature(n_e, Z, A):
    """Ion plasma temperature T_p = hbar omega_p / k, K."""
    return math.exp(_LN_ETA0 + 0.5 * (math.log(n_e) + math.log(Z) - math.log(A)))


@njit(cache=True)
def ideal_ion(n_e, T, Z, A):
    """Classical ideal-gas (Sackur–Tetrode) free energy per ion over kT: ln(n_i lambda^3) - 1, as a jet.

    The solid's lattice free energy replaces this term, so the solid module returns its excess over it.
    """
    v = math.log(n_e) - math.log(Z) + _LN_LAM3_0 - 1.5 * math.log(A) - 1.5 * math.log(T) - 1.0
    return jet.lin(v, 1.0, -1.5)
