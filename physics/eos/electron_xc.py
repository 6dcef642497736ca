"""Electron exchange and correlation at any degeneracy, with the relativistic exchange of the degenerate gas.

The question this module answers: how much do the electrons' own exchange and correlation lower their free
energy, from the classical plasma to relativistic white-dwarf matter?

Free energy per electron over kT, f_xc = f_x + f_c:

- Exchange at T = 0, any relativity (Hartree–Fock with the relativistic electron-electron interaction;
  Salpeter 1961, ApJ 134, 669; Akhiezer & Berestetskii, Quantum Electrodynamics; formula from memory and
  checked in the tests against our own quadrature of the Hartree–Fock double integral):

      E_x / V = -(e^2 / (4 pi^3)) (m_e c / hbar)^4 [x^4 - (3/2) (x eps - asinh x)^2],  eps = sqrt(1 + x^2),

  x = p_F / (m_e c). Non-relativistic limit: -(3/4)(3/pi)^(1/3) e^2 n_e^(1/3) per electron; ultra-relativistic
  limit: +e^2 (p_F / hbar)^4 / (8 pi^3) per volume (the transverse interaction of the currents wins).
- Exchange at T > 0: f_x = (e_x0 / kT) tanh(4 / (9 theta)), theta = kT / epsilon_F (kinetic Fermi energy).
  Degenerate: the T = 0 value; non-degenerate: -n_e e^2 lambda_e^2 / 4 per electron, the exact first-order
  exchange of the Boltzmann gas (lambda_e = h / sqrt(2 pi m_e k T); derived in the tests). The tanh joining
  them follows the shape of Perrot & Dharma-wardana (1984, Phys. Rev. A 30, 2619) but is our interpolation;
  the tests measure it against the finite-temperature Hartree–Fock quadrature.
- Correlation: at T = 0 the fit of Chachiyo (2016, J. Chem. Phys. 145, 021101),
  e_c = a ln(1 + b / r_s + b / r_s^2) hartree, a = (ln 2 - 1) / (2 pi^2), b = 20.4562557 (from memory); in the
  classical limit the electron one-component-plasma fit (Debye–Hückel -Gamma_e^(3/2)/sqrt3 at weak
  coupling); joined by the weight w = theta^2 / (1 + theta^2) (our choice).

What the fit covers: exact limits of exchange (degenerate at any relativity, non-degenerate
non-relativistic) and of correlation (T = 0 non-relativistic, classical); in between an interpolation.
It is not one of the published finite-temperature exchange-correlation fits (Ichimaru, Iyetomi & Tanaka
1987; Karasiev et al. 2014), whose coefficients we could not check. Relativistic corrections to
correlation and to the non-degenerate exchange (kT > m_e c^2) are left out: there exchange is a tiny
fraction of the electron free energy.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as const
from . import jet
from .ion_liquid import ocp_liquid
from .plasma_parameters import coupling

__all__ = ["exchange_energy_T0", "exchange_T0", "electron_xc", "electron_xc_core", "electron_xc_free_energy"]

_MC2 = const.m_e * const.c**2
_KC = const.m_e * const.c / const.hbar
_PF0 = const.hbar * (3.0 * math.pi**2) ** (1.0 / 3.0) / (const.m_e * const.c)
_BOHR = const.hbar**2 / (const.m_e * const.e_esu**2)
_HARTREE = const.e_esu**2 / _BOHR
_CA = (math.log(2.0) - 1.0) / (2.0 * math.pi**2)
_CB = 20.4562557
#: 1 / r_s over x: r_s = (3 / (4 pi n_e))^(1/3) / a_0 and x = _PF0 n_e^(1/3)
_IRS_X = _BOHR / ((3.0 / (4.0 * math.pi)) ** (1.0 / 3.0) * _PF0)


@njit(cache=True, error_model="numpy")
def _phi_shared(x, x2, eps):
    """x^4 - (3/2)(x eps - asinh x)^2 as a jet, given x, x^2 and eps = sqrt(1 + x^2) as jets; series for
    small x (cancellation)."""
    x4 = jet.sq(x2)
    if x[0] < 1e-2:
        x3 = jet.mul(x2, x)
        d = jet.mul(x3, jet.addc(jet.mul(x2, jet.addc(jet.scale(x2, 0.10714285714285714), -0.2)), 2.0 / 3.0))
    else:
        d = jet.sub(jet.mul(x, eps), jet.asinh(x))
    return jet.sub(x4, jet.scale(jet.sq(d), 1.5))


@njit(cache=True, error_model="numpy")
def _phi(x):
    """x^4 - (3/2)(x eps - asinh x)^2 as a jet; series for small x (cancellation)."""
    x2 = jet.mul(x, x)
    return _phi_shared(x, x2, jet.sqrt(jet.addc(x2, 1.0)))


@njit(cache=True, error_model="numpy")
def exchange_T0(n_e):
    """T = 0 exchange energy per electron, erg, as a jet in (ln n_e, ln T)."""
    x = jet.loglin(_PF0 * n_e ** (1.0 / 3.0), 1.0 / 3.0, 0.0)
    # per electron: E_x/V / n_e, n_e = (m_e c/hbar)^3 x^3 / (3 pi^2)
    x3 = jet.mul(jet.mul(x, x), x)
    return jet.scale(jet.div(_phi(x), x3), -(3.0 / (4.0 * math.pi)) * const.e_esu**2 * _KC)


def exchange_energy_T0(n_e):
    """Vectorised T = 0 exchange energy per electron, erg (for tests and readouts)."""
    n_e = np.asarray(n_e, float)
    return np.vectorize(lambda n: exchange_T0(n)[0])(n_e)


@njit(cache=True, error_model="numpy")
def electron_xc_core(x, x2, eps, kT, f_cl):
    """f_xc from the jets x = p_F / (m_e c), x^2, eps = sqrt(1 + x^2), kT and f_cl = f_OCP(Gamma_e) (the
    classical electron one-component plasma, Gamma_e the coupling with Z = 1), each a function of
    (ln n_e, ln T) already formed (the dense-plasma mixture shares them)."""
    eF = jet.scale(jet.div(x2, jet.addc(eps, 1.0)), _MC2)   # kinetic Fermi energy
    theta = jet.div(kT, eF)
    # T = 0 exchange per electron (exchange_T0): E_x/V / n_e, n_e = (m_e c/hbar)^3 x^3 / (3 pi^2)
    ex0 = jet.scale(jet.div(_phi_shared(x, x2, eps), jet.mul(x2, x)),
                    -(3.0 / (4.0 * math.pi)) * const.e_esu**2 * _KC)
    ex = jet.div(ex0, kT)
    fx = jet.mul(ex, jet.tanh(jet.scale(jet.inv(theta), 4.0 / 9.0)))
    # correlation; 1 / r_s = x / (_PF0 (3 / (4 pi))^(1/3) / _BOHR) ∝ n_e^(1/3)
    irs = jet.loglin(x[0] * _IRS_X, 1.0 / 3.0, 0.0)
    ec0 = jet.scale(jet.log1p(jet.scale(jet.add(irs, jet.sq(irs)), _CB)), _CA * _HARTREE)
    th2 = jet.sq(theta)
    w = jet.div(th2, jet.addc(th2, 1.0))
    fc = jet.add(jet.mul(w, f_cl), jet.mul(jet.addc(jet.scale(w, -1.0), 1.0), jet.div(ec0, kT)))
    return jet.add(fx, fc)


@njit(cache=True, error_model="numpy")
def electron_xc(n_e, T, Z, A):
    """Exchange-correlation free energy per electron over kT; jet (f, f_n, f_T, f_nn, f_nT, f_TT).

    ``Z`` and ``A`` are unused (kept for the common interface).
    """
    x = jet.loglin(_PF0 * n_e ** (1.0 / 3.0), 1.0 / 3.0, 0.0)
    x2 = jet.sq(x)
    return electron_xc_core(x, x2, jet.sqrt(jet.addc(x2, 1.0)), jet.loglin(const.k_B * T, 0.0, 1.0),
                            ocp_liquid(coupling(n_e, T, 1.0)))


@njit(cache=True, error_model="numpy")
def _many(n_e, T, out):
    for i in range(n_e.size):
        out[:, i] = electron_xc(n_e[i], T[i], 1.0, 1.0)


def electron_xc_free_energy(n_e, T):
    """Vectorised :func:`electron_xc`. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), out)
    return out.reshape((6,) + n_e.shape)
