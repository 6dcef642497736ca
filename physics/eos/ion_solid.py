"""The ions as a bcc Coulomb crystal: Madelung energy, harmonic phonons with zero-point motion, anharmonic
corrections.

The question this module answers: what is the free energy of the ions once they have frozen into a
lattice, from the classical crystal (c_V = 3k per ion) down to the quantum crystal (c_V ∝ T^3, S -> 0)?

Free energy per ion over kT, as an excess over the classical ideal ion gas (the equation of state keeps the
Sackur–Tetrode term of physics.matter and adds this):

    f_sol = C_M Gamma + f_harm(eta) + f_anh(Gamma, eta) - f_id

- Madelung constant of the bcc lattice, C_M = -0.895929255682 (Baiko, Potekhin & Yakovlev 2001,
  Phys. Rev. E 64, 057402, Table I; value from memory).
- Harmonic lattice with quantum phonons, the published fit of Baiko, Potekhin & Yakovlev (2001), eqs. (12)-(13)
  (coefficients for bcc from memory of that paper, checked in the tests through the limits they must obey:
  the classical limit 3 ln eta + 3 <ln(omega/omega_p)>, the Wigner–Kirkwood term eta^2/24 from the Kohn sum
  rule, and the zero-point energy (3/2) u_1 hbar omega_p, u_1 = 0.5113875):

      f_harm = (3/2) u_1 eta + sum_{k=1..3} ln(1 - exp(-alpha_k eta)) - A(eta) / B(eta),
      A = sum_{n=0..8} a_n eta^n,  B = sum_{n=0..7} b_n eta^n + alpha_6 a_6 eta^9 + alpha_8 a_8 eta^11.

- Anharmonic corrections, classical: f_anh = -(A_1 / Gamma + A_2 / (2 Gamma^2) + A_3 / (3 Gamma^3)),
  A_1 = 10.9, A_2 = 247, A_3 = 1.765e5 (Farouki & Hamaguchi 1993, as used by Potekhin & Chabrier 2000,
  eq. (21); from memory). Quantum suppression: Potekhin & Chabrier (2010, Contrib. Plasma Phys. 50, 82)
  fade the classical anharmonic term where zero-point motion dominates; we multiply it by exp(-eta^2)
  (our choice of damping; their quantum anharmonic fit is not reproduced here). The factor keeps the third
  law and the T^3 heat capacity of the harmonic quantum crystal.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["MADELUNG_BCC", "U1_BCC", "harmonic", "solid_ion", "solid_ion_free_energy"]

#: Madelung constant of the bcc Coulomb lattice (Baiko, Potekhin & Yakovlev 2001; from memory).
MADELUNG_BCC = -0.895929255682
#: First phonon frequency moment <omega / omega_p> of bcc (Baiko, Potekhin & Yakovlev 2001; from memory).
U1_BCC = 0.5113875

_ALPHA = (0.932446, 0.334547, 0.265764)
_ALPHA6 = 4.757014e-3
_ALPHA8 = 4.7770935e-3
_A = (1.0, 0.1839, 0.593586, 0.0054814, 5.01813e-4, 0.0, 3.9247e-7, 0.0, 5.8356e-11)
_B = (261.66, 0.0, 7.07997, 0.0, 0.0409484, 3.97355e-4, 5.11148e-5, 2.19749e-6)
_ANH = (10.9, 247.0, 1.765e5)

#: Classical limit of f_harm - 3 ln eta = 3 <ln(omega / omega_p)> as given by the fit itself.
HARMONIC_CLASSICAL = math.log(_ALPHA[0] * _ALPHA[1] * _ALPHA[2]) - 1.0 / _B[0]


@njit(cache=True)
def _poly(x, c, n):
    # Horner on a jet; c are plain coefficients, highest first handled by the loop
    p = jet.const(c[n - 1])
    for k in range(n - 2, -1, -1):
        p = jet.addc(jet.mul(p, x), c[k])
    return p


@njit(cache=True)
def harmonic(eta):
    """f_harm(eta) of the bcc harmonic lattice (BPY 2001 fit), eta given as a jet."""
    f = jet.scale(eta, 1.5 * U1_BCC)
    for k in range(3):
        # ln(1 - exp(-alpha eta)) = ln(-expm1(-alpha eta))
        f = jet.add(f, jet.log(jet.scale(jet.expm1(jet.scale(eta, -_ALPHA[k])), -1.0)))
    A = _poly(eta, _A, 9)
    e2 = jet.mul(eta, eta)
    e9 = jet.mul(jet.mul(jet.mul(e2, e2), jet.mul(e2, e2)), eta)
    B = jet.add(_poly(eta, _B, 8), jet.add(jet.scale(e9, _ALPHA6 * _A[6]),
                                           jet.scale(jet.mul(e9, e2), _ALPHA8 * _A[8])))
    return jet.sub(f, jet.div(A, B))


@njit(cache=True)
def harmonic_quantum_correction(eta):
    """f_harm(eta) - (3 ln eta + 3 <ln(omega/omega_p)>): the quantum part of the harmonic lattice.

    -> eta^2 / 24 as eta -> 0 (Wigner–Kirkwood; sum of the squared frequencies of the three branches is
    omega_p^2, the Kohn sum rule).
    """
    return jet.addc(jet.sub(harmonic(eta), jet.scale(jet.log(eta), 3.0)), -HARMONIC_CLASSICAL)


@njit(cache=True)
def anharmonic(G, eta):
    """Classical anharmonic correction faded by exp(-eta^2) (see the module docstring)."""
    iG = jet.inv(G)
    iG2 = jet.mul(iG, iG)
    f = jet.add(jet.scale(iG, -_ANH[0]), jet.add(jet.scale(iG2, -_ANH[1] / 2.0),
                                                 jet.scale(jet.mul(iG2, iG), -_ANH[2] / 3.0)))
    return jet.mul(f, jet.exp(jet.scale(jet.mul(eta, eta), -1.0)))


@njit(cache=True)
def solid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the bcc crystal, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    G = coupling(n_e, T, Z)
    eta = quantum(n_e, T, Z, A)
    f = jet.add(jet.scale(G, MADELUNG_BCC), harmonic(eta))
    f = jet.add(f, anharmonic(G, eta))
    return jet.sub(f, ideal_ion(n_e, T, Z, A))


@njit(cache=True)
def _solid_many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = solid_ion(n_e[i], T[i], Z, A)


def solid_ion_free_energy(n_e, T, Z, A):
    """Vectorised :func:`solid_ion`: arrays n_e (cm^-3), T (K); scalars Z, A. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _solid_many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
