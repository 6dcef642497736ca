"""The ions as a Coulomb liquid: classical one-component-plasma fit plus quantum corrections.

The question this module answers: what is the excess free energy of the ion liquid, from weak coupling
(Debye–Hückel) to the melting point, including the quantum effects that appear as T approaches the ion
plasma temperature T_p?

Free energy per ion over kT, as an excess over the classical ideal ion gas:

    f_liq = f_qlat(Gamma, eta) + (T_eff / T) Delta(Gamma T / T_eff)      (-> f_OCP + f_q as eta -> 0)

- f_OCP: the analytic fit of Potekhin & Chabrier (2000, Phys. Rev. E 62, 8554, eqs. (16)-(17); the form
  goes back to Chabrier & Potekhin 1998, Phys. Rev. E 58, 4941), A1 = -0.9070, A2 = 0.62954,
  A3 = -sqrt(3)/2 - A1/sqrt(A2), B1 = 0.00456, B2 = 211.6, B3 = -1e-4, B4 = 0.00462 (from memory; the
  tests check the Debye–Hückel limit and that the classical melting point comes out near Gamma = 175).
- f_q: the quantum correction. Potekhin & Chabrier (2010, Contrib. Plasma Phys. 50, 82, arXiv:1001.0690,
  sec. 3) take the liquid's quantum correction from the harmonic lattice: the quantum part of the harmonic
  free energy, f_harm(eta) - [3 ln eta + 3 <ln(omega/omega_p)>], which starts as the exact Wigner–Kirkwood
  term eta^2 / 24 (Hansen & Vieillefosse 1975) and grows to the zero-point energy (3/2) u_1 eta at
  eta >> 1. We use that form with the bcc phonon spectrum of physics.eos.ion_solid (our reading of their
  prescription; their fit adds a correction for the liquid's different frequency moments, not reproduced).
- The liquid's classical excess over the classical harmonic lattice is ours to treat. Written
  f_OCP + f_q = f_qlat + Delta(Gamma), with f_qlat = C_M Gamma + f_harm(eta) - f_id the quantum harmonic
  lattice and Delta(Gamma) = f_OCP - [C_M Gamma + 1.5 ln Gamma + c] the classical liquid's excess over the
  classical lattice (a function of Gamma alone: 3 ln eta - f_id = 1.5 ln Gamma + const). Delta holds the
  liquid's extra configurational freedom; alone it would keep its entropy as T -> 0, and adding the full
  quantum correction to a liquid that has less classical heat capacity than the lattice drives c_V < 0
  (measured with our previous fade, D(eta) = 1/(1 + (eta/3)^4) on Delta: c_V down to -2 k per ion for
  hydrogen at Gamma ~ 2, eta ~ 3.5, i.e. rho ~ 1e9 g/cm^3, T ~ 1e8 K). Here Delta freezes below
  T_0 = T_p / ETA_FADE: it is the classical free energy of that freedom at the effective temperature
  T_eff = (T^4 + T_0^4)^(1/4), plus a density-only term that keeps the frozen excess >= 0:

      f_liq = f_qlat + r Delta(Gamma / r) + (eta / ETA_FADE)^4 r^-3 h(Gamma_0),   r = T_eff / T = (1 + (eta / ETA_FADE)^4)^(1/4),
      h = m w(Gamma_0) - min_s(Delta(Gamma_0), 0),   w = Gamma_0^4 / (Gamma_0^4 + 20^4),  m = 0.5,

  with Gamma_0 = ETA_FADE Gamma / eta the coupling at T_0 (density alone; smoothly capped at 300) and min_s
  a min smoothed over 0.1. As T -> 0 the liquid's free energy tends to the lattice's plus N k T_0 [max_s(Delta(Gamma_0), 0) + m w]
  >= 0: without h, Delta(Gamma_0) < 0 (6 <~ Gamma_0 < 175, white-dwarf densities) would freeze in an
  advantage and no quantum crystal would form; m w (ours) lets the crystal win by T ~ T_p/10 there, and
  fades out where Gamma_0 is small (light ions at high density, where the c_V bound below needs it).
  In F the last term is N k T_0 h (1 + (T/T_0)^4)^(-3/4): N k T_0 h + O(T^4) for T << T_0 (no entropy left),
  O(T_0^4 / T^3) for T >> T_0.

  Classical limit: r - 1 and the last term are O(eta^4), so the exact Wigner–Kirkwood term eta^2/24 is kept and f_liq
  is the OCP fit as eta -> 0. Quantum limit: the second term tends to a constant plus O(T^4), so S -> 0
  (third law) and the liquid tends to the quantum harmonic lattice plus the frozen excess energy, which
  is then the latent heat (quantum melting itself is not modelled). The ion c_V is >= 0 wherever
  eta / Gamma <= 1.7 for Gamma <= GAMMA_LIQUID_MAX (measured on a grid, tests/physics/test_dense_plasma.py):
  eta / Gamma ∝ n_e^(1/6) is 1.55 for hydrogen in H-rich matter at 1e10 g/cm^3, the top of the default
  plane; beyond ~2e10 g/cm^3 hydrogen's c_V dips below 0 near Gamma ~ 1.6 (-0.19 k per ion at
  eta / Gamma = 2, ~6e10 g/cm^3, measured; ion exchange, not modelled, matters
  there). Our construction, not a published fit: Potekhin & Chabrier (2010) give no form for the
  quantum liquid's heat capacity beyond the Wigner–Kirkwood order that we could check.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .ion_solid import HARMONIC_CLASSICAL, MADELUNG_BCC, harmonic
from ..coulomb import A1, A2, A3, B1, B2, B3, B4   # the liquid fit's coefficients, kept in one place
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["ocp_liquid", "liquid_ion", "liquid_ion_free_energy"]

#: T_0 = T_p / ETA_FADE: the liquid's classical excess over the lattice freezes below T_0 (our choice)
ETA_FADE = 3.0
#: the frozen excess: smoothing of min(Delta, 0), margin and the Gamma_0 above which the margin applies
FROZEN_SMOOTH = 0.1
FROZEN_MARGIN = 0.5
FROZEN_GAMMA = 20.0
FROZEN_CAP = 300.0
#: ln(eta^3 / (n lambda^3)) - 1.5 ln Gamma: the classical lattice's 3 ln eta - f_id = 1.5 ln Gamma + this + 1
_LN_ETA3_NL3 = math.log(4.0 * math.pi / 3.0) + 1.5 * math.log(3.0 / (2.0 * math.pi))
#: below this eta the quantum correction is its Wigner–Kirkwood term alone
ETA_SERIES = 1e-3


@njit(cache=True)
def ocp_liquid(G):
    """Classical OCP liquid excess free energy per ion over kT, f(Gamma), Gamma as a jet.

    f = A1 [sqrt(Gamma (A2 + Gamma)) - A2 ln(sqrt(Gamma/A2) + sqrt(1 + Gamma/A2))]
        + 2 A3 [sqrt(Gamma) - arctan(sqrt(Gamma))] + B1 [Gamma - B2 ln(1 + Gamma/B2)]
        + (B3/2) ln(1 + Gamma^2/B4)                       (PC2000 eq. 17)
    """
    rg = jet.sqrt(G)
    t1 = jet.sub(jet.sqrt(jet.mul(G, jet.addc(G, A2))), jet.scale(jet.asinh(jet.scale(rg, 1.0 / math.sqrt(A2))), A2))
    t2 = jet.sub(rg, jet.atan(rg))
    t3 = jet.sub(G, jet.scale(jet.log1p(jet.scale(G, 1.0 / B2)), B2))
    t4 = jet.log1p(jet.scale(jet.mul(G, G), 1.0 / B4))
    return jet.add(jet.add(jet.scale(t1, A1), jet.scale(t2, 2.0 * A3)),
                   jet.add(jet.scale(t3, B1), jet.scale(t4, 0.5 * B3)))


@njit(cache=True)
def _excess_over_lattice(G):
    """Delta(Gamma) = f_OCP - [C_M Gamma + 1.5 ln Gamma + c], the classical liquid over the classical harmonic
    lattice (both as excesses over the ideal gas), Gamma a jet."""
    lattice = jet.addc(jet.add(jet.scale(G, MADELUNG_BCC), jet.scale(jet.log(G), 1.5)),
                       _LN_ETA3_NL3 + 1.0 + HARMONIC_CLASSICAL)
    return jet.sub(ocp_liquid(G), lattice)


@njit(cache=True)
def liquid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the ion liquid, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    G = coupling(n_e, T, Z)
    eta = quantum(n_e, T, Z, A)
    if eta[0] < ETA_SERIES:
        # classical ions: the quantum correction is the Wigner–Kirkwood term (next term ~ eta^4, below
        # 1e-12 kT here) and the freezing of Delta is O(eta^4) too; skipping them saves most of the cost
        return jet.add(ocp_liquid(G), jet.scale(jet.mul(eta, eta), 1.0 / 24.0))
    # the quantum harmonic lattice, excess over the ideal gas
    qlat = jet.sub(jet.add(jet.scale(G, MADELUNG_BCC), harmonic(eta)), ideal_ion(n_e, T, Z, A))
    # T_eff / T = (1 + (eta / ETA_FADE)^4)^(1/4); Delta at T_eff, times T_eff / T (a free energy over kT)
    r = jet.pow_(jet.addc(jet.pow_(jet.scale(eta, 1.0 / ETA_FADE), 4.0), 1.0), 0.25)
    f = jet.add(qlat, jet.mul(r, _excess_over_lattice(jet.div(G, r))))
    # the frozen excess kept >= 0: (eta/ETA_FADE)^4 r^-3 h(Gamma_0), Gamma_0 = Gamma at T_0 (density alone)
    G0 = jet.scale(jet.div(G, eta), ETA_FADE)
    # capped at ~FROZEN_CAP: beyond it T_0 lies far below the classical melting point and the liquid fit
    # would be read far outside its range (Delta ~ -0.01 Gamma); the cap keeps h bounded, the term O(eta^4)
    G0 = jet.mul(G0, jet.pow_(jet.addc(jet.pow_(jet.scale(G0, 1.0 / FROZEN_CAP), 4.0), 1.0), -0.25))
    D0 = _excess_over_lattice(G0)
    d_minus = jet.scale(jet.sub(D0, jet.sqrt(jet.addc(jet.mul(D0, D0), FROZEN_SMOOTH**2))), 0.5)
    g4 = jet.pow_(jet.scale(G0, 1.0 / FROZEN_GAMMA), 4.0)
    h = jet.sub(jet.scale(jet.div(g4, jet.addc(g4, 1.0)), FROZEN_MARGIN), d_minus)
    e4 = jet.pow_(jet.scale(eta, 1.0 / ETA_FADE), 4.0)
    return jet.add(f, jet.mul(jet.div(e4, jet.mul(r, jet.mul(r, r))), h))


@njit(cache=True)
def _liquid_many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = liquid_ion(n_e[i], T[i], Z, A)


def liquid_ion_free_energy(n_e, T, Z, A):
    """Vectorised :func:`liquid_ion`: arrays n_e (cm^-3), T (K); scalars Z, A. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _liquid_many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
