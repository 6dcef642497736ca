"""The Planck–Larkin weight of a bound state: how much of it a hot plasma still counts as bound.

The question this module answers: a level bound by chi, at temperature T, enters a partition function
with the Boltzmann weight e^x (x = chi / kT); how much of that survives once the scattering states near
the continuum are counted with the free particles?

The Planck–Larkin sum keeps of each level only e^x - 1 - x = e^x (1 - (1 + x) e^-x) (Planck 1924; Larkin
1960; Ebeling, Kraeft & Kremp 1976, "Theory of bound states and ionization equilibrium in plasmas and
solids"). Written as a factor on the Boltzmann weight, ln of it is

    phi(x) = ln(1 - (1 + x) e^-x),

0 while kT << chi (Saha comes back), and ~ 2 ln x - ln 2 once kT >> chi (the level fades out as x^2 / 2):
hot matter is fully ionized without a rule made by hand. A stage j of an element keeps its Z - j bound
electrons, each bound by its own ionization energy chi_k once the lower ones are gone, so its factor is
Phi_j = sum_{k = j}^{Z - 1} phi(chi_k / kT) (the convention of the chemical picture, which counts the
ground level of every stage this way).

Used by the chemical picture (:mod:`thermoplane.physics.eos.equilibrium`) and by the default Saha
equilibrium (:mod:`thermoplane.physics.ionization` and its compiled kernels).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import constants as const

__all__ = ["planck_larkin", "stage_sums"]


@njit(cache=True, error_model="numpy")
def planck_larkin(x):
    """phi(x) = ln(1 - (1 + x) e^-x) and its first two derivatives in ln T (x = chi / kT, so d/d ln T =
    -x d/dx): (phi, phi_1, phi_2)."""
    if x > 40.0:
        e = (1.0 + x) * math.exp(-x)
        # phi ~ -e, d/dlnT = -x dphi/dx with dphi/dx ~ x e^-x
        d1 = -x * x * math.exp(-x)
        return -e, d1, x * x * math.exp(-x) * (2.0 - x)
    if x < 1e-4:
        q = x * x * (0.5 - x / 3.0 + x * x / 8.0)
    else:
        q = -math.expm1(-x) - x * math.exp(-x)
    q1 = x * math.exp(-x)               # dq/dx
    q2 = (1.0 - x) * math.exp(-x)       # d2q/dx2
    p1 = q1 / q                         # dphi/dx
    p2 = q2 / q - p1 * p1               # d2phi/dx2
    return math.log(q), -x * p1, x * p1 + x * x * p2


@njit(cache=True, error_model="numpy")
def stage_sums_point(T, Zi, C, out):
    """Phi_j and its first two ln T derivatives for the stages j = 0..Zi of one element at one T, into
    out[0:3, 0:Zi+1] (row 0 Phi, row 1 d/d ln T, row 2 d2/d ln T2; the bare nucleus has 0). C: the
    cumulative ionization energies C_j (erg) of the stages, C_0 = 0."""
    kT = const.k_B * T
    out[0, Zi] = 0.0
    out[1, Zi] = 0.0
    out[2, Zi] = 0.0
    for j in range(Zi - 1, -1, -1):
        a0, a1, a2 = planck_larkin((C[j + 1] - C[j]) / kT)
        out[0, j] = out[0, j + 1] + a0
        out[1, j] = out[1, j + 1] + a1
        out[2, j] = out[2, j + 1] + a2


@njit(cache=True, error_model="numpy")
def _many(T, Zi, C, out):
    tmp = np.empty((3, Zi + 1))
    for i in range(T.size):
        stage_sums_point(T[i], Zi, C, tmp)
        for r in range(3):
            for j in range(Zi + 1):
                out[r, j, i] = tmp[r, j]


def stage_sums(T, Zi: int, C) -> np.ndarray:
    """Phi_j(T) of every stage of an element with charge Zi and cumulative energies C (erg), with its first
    two ln T derivatives, over an array T: shape (3, Zi + 1) + T.shape (see :func:`stage_sums_point`)."""
    T = np.asarray(T, dtype=float)
    out = np.empty((3, Zi + 1, T.size))
    _many(np.ascontiguousarray(T).ravel(), int(Zi), np.ascontiguousarray(C, dtype=float), out)
    return out.reshape((3, Zi + 1) + T.shape)
