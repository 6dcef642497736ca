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

Speed: e_x0, epsilon_F and e_c0 (and the screening's E_d) depend on n_e alone; the kernels read them from one
quintic Hermite table in ln n_e (:func:`zero_T_energies`, n_e = 1e10 to 1e40 cm^-3, the formulas outside)
and form f_xc from them with T (:func:`electron_xc_T0`); :func:`electron_xc_direct` is the formula without
the table.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as const
from . import jet
from .ion_liquid import ocp_liquid
from .hermite import cell_coefficients, locate_cell, taylor_cell
from .plasma_parameters import coupling
from .screening import degenerate_energy

__all__ = ["exchange_energy_T0", "exchange_T0", "electron_xc", "electron_xc_core", "electron_xc_direct",
           "electron_xc_T0", "zero_T_jets", "zero_T_energies", "electron_xc_free_energy"]

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
def zero_T_jets(n_e):
    """The electrons' T = 0 energies per electron, erg, as jets in (ln n_e, ln T) (functions of n_e alone):
    (e_x0, epsilon_F, e_c0, E_d): exchange, kinetic Fermi energy, correlation (as in :func:`electron_xc_core`)
    and the screening's E_d (physics.eos.screening.degenerate_energy)."""
    x = jet.loglin(_PF0 * n_e ** (1.0 / 3.0), 1.0 / 3.0, 0.0)
    x2 = jet.sq(x)
    eps = jet.sqrt(jet.addc(x2, 1.0))
    eF = jet.scale(jet.div(x2, jet.addc(eps, 1.0)), _MC2)
    ex0 = jet.scale(jet.div(_phi_shared(x, x2, eps), jet.mul(x2, x)),
                    -(3.0 / (4.0 * math.pi)) * const.e_esu**2 * _KC)
    irs = jet.loglin(x[0] * _IRS_X, 1.0 / 3.0, 0.0)
    ec0 = jet.scale(jet.log1p(jet.scale(jet.add(irs, jet.sq(irs)), _CB)), _CA * _HARTREE)
    Ed = degenerate_energy(n_e)
    return ex0, eF, ec0, Ed


# The four T = 0 energies as quintic Hermite tables in ln n_e (physics.eos.hermite, per-cell Taylor form,
# the four functions of one cell side by side): nodes _LN_STEP apart from n_e = 1e10 to 1e40 cm^-3, each
# holding the value and its first two derivatives in ln n_e from zero_T_jets. Within ~1e-12 (relative) of the
# formulas (tests/physics/test_dense_tables.py), C2, their derivatives those of the interpolant. Outside the
# table the formulas.
_LN0, _LN_STEP = math.log(1e10), 0.025
_LN_N = int(round((math.log(1e40) - _LN0) / _LN_STEP)) + 1
_LN1 = _LN0 + (_LN_N - 1) * _LN_STEP


@njit(cache=True, error_model="numpy")
def _zero_T_nodes(a0, h, n):
    out = np.empty((4, 3, n))
    for k in range(n):
        ex0, eF, ec0, Ed = zero_T_jets(math.exp(a0 + k * h))
        out[0, 0, k], out[0, 1, k], out[0, 2, k] = ex0[0], ex0[1], ex0[3]
        out[1, 0, k], out[1, 1, k], out[1, 2, k] = eF[0], eF[1], eF[3]
        out[2, 0, k], out[2, 1, k], out[2, 2, k] = ec0[0], ec0[1], ec0[3]
        out[3, 0, k], out[3, 1, k], out[3, 2, k] = Ed[0], Ed[1], Ed[3]
    return out


_ZERO_T_NODES = _zero_T_nodes(_LN0, _LN_STEP, _LN_N)
_ZERO_T_CELLS = np.ascontiguousarray(np.concatenate(
    [cell_coefficients(*_ZERO_T_NODES[j], _LN_STEP) for j in range(4)], axis=1))


@njit(cache=True, inline="always", error_model="numpy")
def zero_T_energies(ln_n):
    """(e_x0, epsilon_F, e_c0, E_d) at ln n_e, each as (value, d/d ln n_e, d2/d ln n_e^2), erg: from the
    table inside its range, else from :func:`zero_T_jets`."""
    if _LN0 <= ln_n < _LN1:
        i, s = locate_cell(ln_n, _LN0, _LN_STEP, _ZERO_T_CELLS.shape[0])
        return (taylor_cell(_ZERO_T_CELLS, i, 0, s, _LN_STEP), taylor_cell(_ZERO_T_CELLS, i, 6, s, _LN_STEP),
                taylor_cell(_ZERO_T_CELLS, i, 12, s, _LN_STEP), taylor_cell(_ZERO_T_CELLS, i, 18, s, _LN_STEP))
    ex0, eF, ec0, Ed = zero_T_jets(math.exp(ln_n))
    return ((ex0[0], ex0[1], ex0[3]), (eF[0], eF[1], eF[3]), (ec0[0], ec0[1], ec0[3]), (Ed[0], Ed[1], Ed[3]))


@njit(cache=True, inline="always", error_model="numpy")
def _over_kT(X, ikT):
    """X(ln n_e) / kT as a jet, from X's (value, d/d ln n_e, d2/d ln n_e^2) and 1 / kT."""
    v = X[0] * ikT
    d = X[1] * ikT
    return (v, d, -v, X[2] * ikT, -d, v)


@njit(cache=True, inline="always", error_model="numpy")
def electron_xc_T0(ex0, eF, ec0, T, f_cl):
    """f_xc (as :func:`electron_xc_core`) from the T = 0 energies of :func:`zero_T_energies`, T and
    f_cl = f_OCP(Gamma_e) as a jet: f_x = (e_x0 / kT) tanh((4/9) epsilon_F / kT),
    f_c = w f_cl + (1 - w) e_c0 / kT with w = theta^2 / (1 + theta^2) = 1 / (1 + tau^2), tau = 1 / theta."""
    ikT = 1.0 / (const.k_B * T)
    tau = _over_kT(eF, ikT)
    fx = jet.mul(_over_kT(ex0, ikT), jet.tanh(jet.scale(tau, 4.0 / 9.0)))
    t2 = jet.sq(tau)
    w = jet.inv(jet.addc(t2, 1.0))
    fc = jet.add(jet.mul(w, f_cl), jet.mul(jet.mul(t2, w), _over_kT(ec0, ikT)))
    return jet.add(fx, fc)


@njit(cache=True, error_model="numpy")
def electron_xc(n_e, T, Z, A):
    """Exchange-correlation free energy per electron over kT; jet (f, f_n, f_T, f_nn, f_nT, f_TT).

    ``Z`` and ``A`` are unused (kept for the common interface). The T = 0 energies come from the table of
    :func:`zero_T_energies` (as in the dense-plasma mixture); :func:`electron_xc_core` is the same formula
    read directly.
    """
    ex0, eF, ec0, Ed = zero_T_energies(math.log(n_e))
    return electron_xc_T0(ex0, eF, ec0, T, ocp_liquid(coupling(n_e, T, 1.0)))


@njit(cache=True, error_model="numpy")
def electron_xc_direct(n_e, T):
    """:func:`electron_xc` without the table (the reference the table is tested against)."""
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
