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

__all__ = ["screening_ion", "screening_core", "screening_given", "electron_q2", "degenerate_energy", "screening_free_energy", "GAMMA_X"]

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


@njit(cache=True, inline="always", error_model="numpy")
def screening_core(G, q2):
    """f_sc from the jets Gamma and q^2 (:func:`screening_given`, its square root and reciprocals formed here)."""
    b = math.sqrt(3.0 * G[0])
    return screening_given(G, q2, b, 1.0 / b, 1.0 / G[0])


@njit(cache=True, inline="always", error_model="numpy")
def screening_given(G, q2, b, ib, ig):
    """f_sc from the jets Gamma and q^2, given b = (3 Gamma)^(1/2), 1 / b and 1 / Gamma (the dense-plasma mixture
    forms them once per point and scales them per species).

    f_sc is a function of two numbers, Gamma and s^2 = q^2 / (1 + q^2): its partials in (Gamma, s^2) are
    formed by hand and carried to (ln n_e, ln T) by one chain rule on the two jets (no division of jets).
    Every difference that would cancel where s^2 << 3 Gamma is written without it (a = (3 Gamma + s^2)^(1/2),
    b = (3 Gamma)^(1/2), r = s):
      a^3 - b^3 = s^2 (a^2 + a b + b^2) / (a + b),  d/dGamma = (9/2) s^2 / (a + b),
      d2/dGamma2 = -(27/4) s^2 / (a b (a + b)),  d/ds^2 = (3/2) a,  d2/dGamma ds^2 = (9/4) / a,
      d2/d(s^2)^2 = (3/4) / a;  and for f_w's s^2 partials, a - r = 3 Gamma / (a + r).
    """
    g = G[0]
    q = q2[0]
    iq = 1.0 / (1.0 + q)
    sig = q * iq                                                       # s^2
    S = jet.fun(q2, sig, iq * iq, -2.0 * iq * iq * iq)
    g3 = 3.0 * g
    a2 = g3 + sig
    a = math.sqrt(a2)
    r = math.sqrt(sig)
    # 1 / a, 1 / r, 1 / (a + b), 1 / (a + r) from one division
    pb = a + b
    pr = a + r
    ar = a * r
    pbr = pb * pr
    inv = 1.0 / (ar * pbr)
    ia = r * pbr * inv
    ir = a * pbr * inv
    iab = ar * pr * inv
    iar = ar * pb * inv
    # f_w = -(1/9) [a^3 - b^3 - s^3]
    fw = -(sig * (a2 + g3 + a * b) * iab - sig * r) * (1.0 / 9.0)
    fw_g = -0.5 * sig * iab
    fw_s = -0.5 * g * iar                                              # -(1/6)(a - r)
    fw_gg = 0.75 * sig * iab * ia * ib
    fw_gs = -0.25 * ia
    fw_ss = 0.25 * g * iar * ia * ir                                   # (1/12)(1/r - 1/a)
    # f_s = -(18/175) Gamma s^2
    k = 18.0 / 175.0
    fs = -k * g * sig
    # weights Y0 = 1 / (1 + y), Y1 = y / (1 + y), y = (Gamma / Gamma_x)^4: Y1' = -Y0' = 4 y Y0^2 / Gamma,
    # Y1'' = (4 y Y0^2 / Gamma^2)(3 - 8 y Y0)
    y = g / GAMMA_X
    y *= y
    y *= y
    Y0 = 1.0 / (1.0 + y)
    Y1 = y * Y0
    w1 = 4.0 * Y1 * Y0 * ig
    w2 = w1 * ig * (3.0 - 8.0 * Y1)
    d = fs - fw
    f = Y0 * fw + Y1 * fs
    f_g = Y0 * fw_g + Y1 * (-k * sig) + w1 * d
    f_s = Y0 * fw_s + Y1 * (-k * g)
    f_gg = Y0 * fw_gg + 2.0 * w1 * (-k * sig - fw_g) + w2 * d
    f_gs = Y0 * fw_gs + Y1 * (-k) + w1 * (-k * g - fw_s)
    f_ss = Y0 * fw_ss
    # chain rule: f(Gamma(a, b), s^2(a, b)), a = ln n_e, b = ln T
    return (f,
            f_g * G[1] + f_s * S[1],
            f_g * G[2] + f_s * S[2],
            f_gg * G[1] * G[1] + 2.0 * f_gs * G[1] * S[1] + f_ss * S[1] * S[1] + f_g * G[3] + f_s * S[3],
            f_gg * G[1] * G[2] + f_gs * (G[1] * S[2] + G[2] * S[1]) + f_ss * S[1] * S[2] + f_g * G[4] + f_s * S[4],
            f_gg * G[2] * G[2] + 2.0 * f_gs * G[2] * S[2] + f_ss * S[2] * S[2] + f_g * G[5] + f_s * S[5])


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
