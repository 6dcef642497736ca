"""The ions as a Coulomb liquid: classical one-component-plasma fit plus quantum corrections.

The question this module answers: what is the excess free energy of the ion liquid, from weak coupling
(Debye–Hückel) to the melting point, including the quantum effects that appear as T approaches the ion
plasma temperature T_p?

Free energy per ion over kT, as an excess over the classical ideal ion gas:

    f_liq = f_qlat(Gamma, eta) + [Delta(Gamma), faded or frozen as T -> 0]     (-> f_OCP + f_q as eta -> 0)

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
  classical lattice (a function of Gamma alone: 3 ln eta - f_id = 1.5 ln Gamma + const). Alone, Delta would
  keep its entropy as T -> 0; it is made to vanish in one of two ways, weighted by a function of density
  alone (so that c_V is the weighted sum of the two c_V, no cross terms):

      f_liq = f_qlat + W(Gamma_0) Delta_frozen + (1 - W(Gamma_0)) Delta_faded,   W = 1 / (1 + (Gamma_0 / 5)^4),

  Gamma_0 = ETA_FADE Gamma / eta the coupling at T_0 = T_p / ETA_FADE (a function of density).
  * faded (strong coupling, heavy ions): Delta_faded = D(eta) Delta(Gamma), D = 1 / (1 + (eta / 3)^4). The
    quantum liquid tends to the quantum lattice and the latent heat vanishes for eta >> 3 (quantum melting
    is not modelled). Alone it gives c_V < 0 in weakly coupled quantum matter (light ions, Gamma < 10,
    T < 0.4 T_p: down to -1.2 k per ion for hydrogen at 10^8.3-10^10 g/cm^3 on the default plane,
    measured): the harmonic quantum correction removes up to 3 k, more than the weakly coupled liquid has.
  * frozen (weak coupling, light ions at high density): the excess freezes below T_0, evaluated as the
    classical free energy at T_eff = (T^4 + T_0^4)^(1/4), minus its T -> 0 limit with a tail that starts
    at T_1 = 4 T_0 (all ours):

        Delta_frozen = r Delta(Gamma / r) - (eta / 3) (1 + (T / T_1)^4)^(-3/4) Delta(Gamma_0),
        r = T_eff / T = (1 + (eta / 3)^4)^(1/4),

    Gamma_0 smoothly capped near 300 in the last term (the fit read far outside its range otherwise).
    It tends to 0 like the faded form as T -> 0, so the melting line stays where the free energies cross.
  Both forms: r - 1, D - 1 and the tail are O(eta^4) at high T, so the exact Wigner–Kirkwood term eta^2/24 is
  kept and f_liq is the OCP fit as eta -> 0; S -> 0 as T -> 0 (third law). Measured: the ions' own c_V >= 0
  on the whole default plane for hydrogen-rich, helium, C/O and iron matter (tests/physics/test_dense_eos.py);
  the liquid alone keeps c_V >= 0 for Gamma <= 300 and eta / Gamma <= 1.6 (1.55 for hydrogen at 1e10 g/cm^3;
  tests/physics/test_dense_plasma.py), and dips to -0.04 k per ion at eta / Gamma = 1.7 (hydrogen near
  2e10 g/cm^3), where ion exchange, not modelled, matters too. Our construction, not a published fit:
  Potekhin & Chabrier (2010) give no form for the quantum liquid's heat capacity beyond the
  Wigner–Kirkwood order that we could check.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .ion_solid import HARMONIC_CLASSICAL, MADELUNG_BCC, harmonic
from ..coulomb import A1, A2, A3, B1, B2, B3, B4   # the liquid fit's coefficients, kept in one place
from .coulomb_term import _LG0, _LG1, _TAB_F, _TAB_U, _TAB_V, _ocp_lookup
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["ocp_liquid", "ocp_scalar", "liquid_ion", "liquid_core", "liquid_ion_free_energy"]

#: T_0 = T_p / ETA_FADE: the liquid's classical excess over the lattice freezes below T_0 (our choice)
ETA_FADE = 3.0
#: Gamma_0 (the coupling at T_0 = T_p / ETA_FADE) at which the frozen and the faded excess weigh equally
GAMMA_FROZEN = 5.0
#: the frozen excess's T -> 0 limit is taken off below T_1 = FROZEN_TAIL T_0; Gamma_0 is capped near FROZEN_CAP
FROZEN_TAIL = 4.0
FROZEN_CAP = 300.0
#: ln(eta^3 / (n lambda^3)) - 1.5 ln Gamma: the classical lattice's 3 ln eta - f_id = 1.5 ln Gamma + this + 1
_LN_ETA3_NL3 = math.log(4.0 * math.pi / 3.0) + 1.5 * math.log(3.0 / (2.0 * math.pi))
#: below this eta the quantum correction is its Wigner–Kirkwood term alone
ETA_SERIES = 1e-3


@njit(cache=True, error_model="numpy")
def ocp_scalar(g):
    """f_OCP(Gamma) at Gamma = g and its first two derivatives in Gamma: (f, f', f'').

    f = A1 [sqrt(Gamma (A2 + Gamma)) - A2 ln(sqrt(Gamma/A2) + sqrt(1 + Gamma/A2))]
        + 2 A3 [sqrt(Gamma) - arctan(sqrt(Gamma))] + B1 [Gamma - B2 ln(1 + Gamma/B2)]
        + (B3/2) ln(1 + Gamma^2/B4)                       (PC2000 eq. 17)
    f' = A1 sqrt(Gamma / (A2 + Gamma)) + A3 sqrt(Gamma) / (1 + Gamma) + B1 Gamma / (B2 + Gamma)
         + B3 Gamma / (B4 + Gamma^2)                      (our differentiation)
    f'' = A1 A2 / (2 sqrt(Gamma) (A2 + Gamma)^(3/2)) + A3 (1 - Gamma) / (2 sqrt(Gamma) (1 + Gamma)^2)
          + B1 B2 / (B2 + Gamma)^2 + B3 (B4 - Gamma^2) / (B4 + Gamma^2)^2
    """
    lnG = math.log(g)
    if _LG0 <= lnG < _LG1:
        # the same fit read from its quintic Hermite table in ln Gamma (physics.eos.coulomb_term: within
        # 1e-12 of the formulas, C2, its derivatives those of the interpolant): one log and a polynomial
        # instead of three square roots, asinh, atan and two log1p
        f, u, v = _ocp_lookup(lnG, _TAB_F, _TAB_U, _TAB_V)
        return f, u / g, (v - u) / (g * g)
    rg = math.sqrt(g)
    sa = math.sqrt(g + A2)
    t1 = math.sqrt(g * (g + A2)) - A2 * math.asinh(rg / math.sqrt(A2))
    t2 = rg - math.atan(rg)
    t3 = g - B2 * math.log1p(g / B2)
    t4 = math.log1p(g * g / B4)
    f = (A1 * t1 + 2.0 * A3 * t2) + (B1 * t3 + 0.5 * B3 * t4)
    u = 1.0 + g
    b2 = B2 + g
    b4 = B4 + g * g
    f1 = A1 * rg / sa + A3 * rg / u + B1 * g / b2 + B3 * g / b4
    f2 = (A1 * A2 / (2.0 * rg * sa * sa * sa) + A3 * (1.0 - g) / (2.0 * rg * u * u)
          + B1 * B2 / (b2 * b2) + B3 * (B4 - g * g) / (b4 * b4))
    return f, f1, f2


@njit(cache=True, error_model="numpy")
def ocp_liquid(G):
    """Classical OCP liquid excess free energy per ion over kT, f(Gamma), Gamma as a jet (:func:`ocp_scalar`)."""
    f, f1, f2 = ocp_scalar(G[0])
    return jet.fun(G, f, f1, f2)


@njit(cache=True, error_model="numpy")
def _excess_given_ocp(G, ocp):
    """Delta(Gamma) from Gamma and f_OCP(Gamma) (both jets)."""
    lattice = jet.addc(jet.add(jet.scale(G, MADELUNG_BCC), jet.scale(jet.log(G), 1.5)),
                       _LN_ETA3_NL3 + 1.0 + HARMONIC_CLASSICAL)
    return jet.sub(ocp, lattice)


@njit(cache=True, error_model="numpy")
def _excess_over_lattice(G):
    """Delta(Gamma) = f_OCP - [C_M Gamma + 1.5 ln Gamma + c], the classical liquid over the classical harmonic
    lattice (both as excesses over the ideal gas), Gamma a jet: one chain rule on the scalar derivatives."""
    f, f1, f2 = ocp_scalar(G[0])
    g = G[0]
    return jet.fun(G, f - (MADELUNG_BCC * g + 1.5 * math.log(g) + _LN_ETA3_NL3 + 1.0 + HARMONIC_CLASSICAL),
                   f1 - (MADELUNG_BCC + 1.5 / g), f2 + 1.5 / (g * g))


@njit(cache=True, inline="always", error_model="numpy")
def _quarter_power_loglin(v, da, db):
    """(1 + v)^(1/4) as a jet for v a power law n_e^da T^db given its value (two square roots)."""
    return jet.root4(jet.addc(jet.loglin(v, da, db), 1.0))


@njit(cache=True, error_model="numpy")
def liquid_core(G, eta, f_id, harm, ocp):
    """f_liq from the jets Gamma, eta (power laws in n_e and T, as :func:`coupling` and :func:`quantum` give
    them), the ideal-ion term f_id, f_harm(eta) (``harm``, shared with the solid; not read where
    eta < ETA_SERIES) and f_OCP(Gamma) (``ocp``: the electron correlation of physics.eos.electron_xc reads the
    same function at Gamma_e, which is hydrogen's Gamma). Every power below is formed by products and square
    roots."""
    if eta[0] < ETA_SERIES:
        # classical ions: the quantum correction is the Wigner–Kirkwood term (next term ~ eta^4, below
        # 1e-12 kT here) and the freezing of Delta is O(eta^4) too; skipping them saves most of the cost
        return jet.add(ocp, jet.scale(jet.sq(eta), 1.0 / 24.0))
    Gv = G[0]
    ev = eta[0]
    # the quantum harmonic lattice, excess over the ideal gas
    qlat = jet.sub(jet.add(jet.scale(G, MADELUNG_BCC), harm), f_id)
    delta = _excess_given_ocp(G, ocp)
    # (a) frozen: Delta at T_eff = (T^4 + T_0^4)^(1/4), times T_eff / T; r = (1 + (eta / ETA_FADE)^4)^(1/4)
    e3 = ev / ETA_FADE
    e3 *= e3
    r4 = jet.addc(jet.loglin(e3 * e3, 2.0, -4.0), 1.0)                         # r^4 = 1 + (eta / ETA_FADE)^4
    r = jet.root4(r4)
    frozen = jet.mul(r, _excess_over_lattice(jet.div(G, r)))
    # the frozen liquid's limit as T -> 0, N k T_0 Delta(Gamma_0) relative to the lattice, taken off again
    # with a tail that starts at T_1 = FROZEN_TAIL T_0: - N k T_0 Delta(Gamma_0) (1 + (T/T_1)^4)^(-3/4).
    # Gamma / eta ∝ n_e^(-1/6) depends on density alone
    g_e = Gv / ev
    g0 = ETA_FADE * g_e
    c = g0 / FROZEN_CAP
    c *= c
    G0 = jet.div(jet.loglin(g0, -1.0 / 6.0, 0.0), _quarter_power_loglin(c * c, -2.0 / 3.0, 0.0))
    t1 = ETA_FADE / (FROZEN_TAIL * ev)
    t1 *= t1
    p = _quarter_power_loglin(t1 * t1, -2.0, 4.0)                                # (1 + (T / T_1)^4)^(1/4)
    tail = jet.div(jet.loglin(ev / ETA_FADE, 0.5, -1.0), jet.mul(jet.sq(p), p))
    frozen = jet.sub(frozen, jet.mul(tail, _excess_over_lattice(G0)))
    # (b) faded: D(eta) Delta, D = 1 / (1 + (eta / ETA_FADE)^4) = r^-4
    faded = jet.div(delta, r4)
    # weight of (a), a function of density alone: Gamma_0 = ETA_FADE Gamma / eta, the coupling at T_0
    g4 = g_e * (ETA_FADE / GAMMA_FROZEN)
    g4 *= g4
    w = jet.inv(jet.addc(jet.loglin(g4 * g4, -2.0 / 3.0, 0.0), 1.0))
    return jet.add(qlat, jet.add(jet.mul(w, frozen), jet.mul(jet.addc(jet.scale(w, -1.0), 1.0), faded)))


@njit(cache=True, error_model="numpy")
def liquid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the ion liquid, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    G = coupling(n_e, T, Z)
    eta = quantum(n_e, T, Z, A)
    if eta[0] < ETA_SERIES:
        return liquid_core(G, eta, jet.const(0.0), jet.const(0.0), ocp_liquid(G))
    return liquid_core(G, eta, ideal_ion(n_e, T, Z, A), harmonic(eta), ocp_liquid(G))


@njit(cache=True, error_model="numpy")
def _liquid_many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = liquid_ion(n_e[i], T[i], Z, A)


def liquid_ion_free_energy(n_e, T, Z, A):
    """Vectorised :func:`liquid_ion`: arrays n_e (cm^-3), T (K); scalars Z, A. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _liquid_many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
