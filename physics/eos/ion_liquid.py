"""The ions as a Coulomb liquid: classical one-component-plasma fit plus quantum corrections.

The question this module answers: what is the excess free energy of the ion liquid, from weak coupling
(Debye–Hückel) to the melting point, including the quantum effects that appear as T approaches the ion
plasma temperature T_p?

Free energy per ion over kT, as an excess over the classical ideal ion gas:

    f_liq = f_OCP(Gamma) + f_q(eta) + (D(eta) - 1) [f_OCP(Gamma) - f_lat,cl(Gamma, eta)]

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
- The last term is ours. Alone, f_q removes the classical harmonic 3 k of heat capacity per ion, while the
  classical liquid has only 3/2 k (ideal) plus its excess: the quantum liquid's c_V and (dP/dT) would go
  negative for T << T_p (measured: c_V ~ -0.3 k per ion for hydrogen at 1e8 g/cm^3, 2.5e6 K). With
  D(eta) = 1 / (1 + (eta/3)^4) the liquid's classical excess over the classical harmonic lattice,
  f_OCP - [C_M Gamma + 3 ln eta + 3 <ln(omega/omega_p)> - f_id], fades as the ions turn quantum, so the
  quantum liquid tends to the quantum harmonic lattice (c_V >= 0, S -> 0). D - 1 = O(eta^4) keeps the
  exact Wigner–Kirkwood term; in the classical limit f_liq is the OCP fit. The crystal-liquid difference
  then fades too, so the latent heat vanishes for eta >> 3 (quantum melting is not modelled).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .ion_solid import HARMONIC_CLASSICAL, MADELUNG_BCC, harmonic_quantum_correction
from ..coulomb import A1, A2, A3, B1, B2, B3, B4   # the liquid fit's coefficients, kept in one place
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["ocp_liquid", "liquid_ion", "liquid_ion_free_energy"]

#: eta at which the liquid's classical excess over the lattice is halved (our choice; see above)
ETA_FADE = 3.0
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
def liquid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the ion liquid, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    G = coupling(n_e, T, Z)
    eta = quantum(n_e, T, Z, A)
    f_ocp = ocp_liquid(G)
    if eta[0] < ETA_SERIES:
        # classical ions: the quantum correction is the Wigner–Kirkwood term (next term ~ eta^4, below
        # 1e-12 kT here) and the fade term is O(eta^4) too; skipping them saves most of the cost
        return jet.add(f_ocp, jet.scale(jet.mul(eta, eta), 1.0 / 24.0))
    f = jet.add(f_ocp, harmonic_quantum_correction(eta))
    lattice_cl = jet.sub(jet.addc(jet.add(jet.scale(G, MADELUNG_BCC), jet.scale(jet.log(eta), 3.0)),
                                  HARMONIC_CLASSICAL), ideal_ion(n_e, T, Z, A))
    e4 = jet.pow_(jet.scale(eta, 1.0 / ETA_FADE), 4.0)
    d_minus_1 = jet.scale(jet.div(e4, jet.addc(e4, 1.0)), -1.0)
    return jet.add(f, jet.mul(d_minus_1, jet.sub(f_ocp, lattice_cl)))


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
