"""Electron screening (polarization of the electron background) corrections to the ion free energy.

The question this module answers: how much does the compressible electron gas, by bunching around each
ion, lower the ions' free energy, from Debye–Hückel plasmas to degenerate white-dwarf matter?

Free energy per ion over kT (same form in the liquid and the solid, see Notes):

    f_sc = (f_w + y f_s) / (1 + y),  y = (Gamma / Gamma_x)^4,
    f_w = -(1/9) [(3 Gamma + s^2)^(3/2) - (3 Gamma)^(3/2) - s^3],   f_s = -(18/175) Gamma s^2,
    s^2 = q^2 / (1 + q^2),  q = k_e a_i,  k_e^2 = 4 pi e^2 (dn_e / dmu_e),

Notes
-----
- Weak coupling: with s^2 -> q^2 = 3 Gamma / Z for non-degenerate electrons, f_sc is the electron-ion
  cross term of Debye–Hückel with electrons, F = -kT V kappa^3 / (12 pi), kappa^2 = kappa_i^2 + kappa_e^2,
  after the ion-ion part (in the ion OCP fit) and the electron-electron part (in physics.eos.electron_xc)
  are taken out. Chabrier & Potekhin (1998, Phys. Rev. E 58, 4941, eq. (19)) write the same limit as
  c_DH Gamma_e^(3/2), c_DH = (Z/sqrt3) [(1 + Z)^(3/2) - 1 - Z^(3/2)].
- Strong coupling, degenerate electrons: linear response in the ion sphere with Thomas–Fermi screening
  gives f_sc = -(18/175) Gamma q^2 (our derivation: -(q^2/2) int_0^1 (psi - <psi>)^2 s^2 ds over the
  ion-sphere potential; it equals the Thomas–Fermi coefficient a_TF = 0.00352 of Potekhin & Chabrier 2000,
  Phys. Rev. E 62, 8554, eq. (26), in the non-relativistic limit). Gamma_x = 7.877 is where the two
  small-q slopes, (sqrt3/6) Gamma^(1/2) and (18/175) Gamma, meet; the weight y is our interpolation. At
  large Gamma the remainder falls as Gamma^(-3), so F -> const + O(T^2) and S -> 0 in the crystal
  (the third law; a Gamma^(1/2) term there would leave an entropy diverging as T -> 0), and the
  remainder's (negative) entropy stays far below the degenerate electrons' own (linear in T).
- dn_e/dmu_e: n_e / kT_eff with kT_eff = sqrt((kT)^2 + E_d^2), E_d = p_F^2 c^2 / (3 mu_F) the exact
  T = 0 value (relativistic); exact in both limits, interpolated between (our choice).
- s^2 = q^2 / (1 + q^2) caps the screening where the screening length falls below the ion sphere (linear
  response fails there; our choice). The published fits (PC2000, eqs. (19) and (26)) add finite-wavelength
  and small-Z corrections (tens of per cent for Z <= 2, from memory) not reproduced here, and their solid
  fit differs slightly from the liquid; we use the ion-sphere result, the same for both phases.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as const
from . import jet
from .plasma_parameters import coupling

__all__ = ["screening_ion", "screening_core", "electron_q2", "degenerate_energy", "screening_free_energy", "GAMMA_X"]

#: Gamma at which the Debye–Hückel-like small-q slope and the ion-sphere slope (18/175) Gamma meet.
GAMMA_X = (175.0 * math.sqrt(3.0) / (6.0 * 18.0)) ** 2

_MC2 = const.m_e * const.c**2
_PF0 = const.hbar * (3.0 * math.pi**2) ** (1.0 / 3.0) / (const.m_e * const.c)   # x = _PF0 n^(1/3)
_LN_AI0 = math.log(3.0 / (4.0 * math.pi)) / 3.0


@njit(cache=True, error_model="numpy")
def degenerate_energy(n_e):
    """E_d = p_F^2 c^2 / (3 mu_F) at T = 0, erg, as a jet (n_e dependence only)."""
    x = jet.loglin(_PF0 * n_e ** (1.0 / 3.0), 1.0 / 3.0, 0.0)
    x2 = jet.mul(x, x)
    return jet.scale(jet.div(x2, jet.sqrt(jet.addc(x2, 1.0))), _MC2 / 3.0)


@njit(cache=True, error_model="numpy")
def screening_q2(n_e, T, Z):
    """q^2 = k_e^2 a_i^2 as a jet."""
    kT = jet.loglin(const.k_B * T, 0.0, 1.0)
    Ed = degenerate_energy(n_e)
    kT_eff = jet.sqrt(jet.add(jet.mul(kT, kT), jet.mul(Ed, Ed)))
    a2n = math.exp(2.0 * (_LN_AI0 + (math.log(Z) - math.log(n_e)) / 3.0)) * n_e   # a_i^2 n_e
    num = jet.loglin(4.0 * math.pi * const.e_esu**2 * a2n, 1.0 / 3.0, 0.0)
    return jet.div(num, kT_eff)


@njit(cache=True, inline="always", error_model="numpy")
def electron_q2(ln_n, T, Ed):
    """q^2 / Z^(2/3) (the species factor of a_i^2 taken out) as a jet, from ln n_e, T and
    :func:`degenerate_energy` (shared by every species at one point)."""
    kT = jet.loglin(const.k_B * T, 0.0, 1.0)
    kT_eff = jet.sqrt(jet.add(jet.sq(kT), jet.sq(Ed)))
    num = jet.loglin(4.0 * math.pi * const.e_esu**2 * math.exp(2.0 * _LN_AI0 + ln_n / 3.0), 1.0 / 3.0, 0.0)
    return jet.div(num, kT_eff)


@njit(cache=True, error_model="numpy")
def screening_core(G, q2):
    """f_sc from the jets Gamma and q^2.

    (3 Gamma + s^2)^(3/2) - (3 Gamma)^(3/2) is formed as s^2 (a^2 + a b + b^2) / (a + b),
    a = (3 Gamma + s^2)^(1/2), b = (3 Gamma)^(1/2): no cancellation where s^2 << 3 Gamma.
    """
    s2 = jet.div(q2, jet.addc(q2, 1.0))
    G3 = jet.scale(G, 3.0)
    a2 = jet.add(G3, s2)
    a = jet.sqrt(a2)
    b = jet.loglin(math.sqrt(G3[0]), 1.0 / 6.0, -0.5)                 # Gamma ∝ n_e^(1/3) / T
    d = jet.div(jet.mul(s2, jet.add(jet.add(a2, G3), jet.mul(a, b))), jet.add(a, b))
    fw = jet.scale(jet.sub(d, jet.pow15(s2)), -1.0 / 9.0)
    fs = jet.scale(jet.mul(G, s2), -18.0 / 175.0)
    g = G[0] / GAMMA_X
    g *= g
    y = jet.loglin(g * g, 4.0 / 3.0, -4.0)                             # (Gamma / Gamma_x)^4
    return jet.div(jet.add(fw, jet.mul(y, fs)), jet.addc(y, 1.0))


@njit(cache=True, error_model="numpy")
def screening_ion(n_e, T, Z, A):
    """Screening free energy per ion over kT; jet (f, f_n, f_T, f_nn, f_nT, f_TT) in ln n_e, ln T.

    ``A`` is unused (kept for the common interface).
    """
    return screening_core(coupling(n_e, T, Z), screening_q2(n_e, T, Z))


@njit(cache=True, error_model="numpy")
def _many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = screening_ion(n_e[i], T[i], Z, A)


def screening_free_energy(n_e, T, Z, A=1.0):
    """Vectorised :func:`screening_ion`. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
