"""The Coulomb term of the free energy for the chemical picture: charged species in their own plasma.

Question answered: how much does the plasma around an ion of charge z lower its free energy, as a
function of the free-electron density n_e and T? Every ion species j contributes
F_j = N_j kT f_j(ln n_e, ln T); because F depends on the charged species' numbers, dF/dN_j enters
each ionization balance (the plasma itself lowers the ionization potentials) and dF/dN_e adds
kT c, c = sum_j N_j (df_j/d ln n_e) / N_e, to the electron chemical potential.

Model: linear mixing (each ion species a one-component plasma at the same n_e, Gamma_j =
z^(5/3) Gamma_e, Gamma_e = e^2 (4 pi n_e / 3)^(1/3) / kT), with the liquid one-component-plasma fit
of Potekhin & Chabrier (2000, Phys. Rev. E 62, 8554, eqs. 16-17), which reduces to Debye-Hückel
(f = -Gamma^(3/2)/sqrt 3) at weak coupling. Coefficients as in :mod:`thermoplane.physics.coulomb`.
The interface, f and its first and second partials in (ln n_e, ln T), is the one the dense-plasma
terms (quantum ions, the crystal, screening) plug into.

Speed: f depends on ln Gamma alone, so the kernels read it from a quintic Hermite table in ln Gamma
(nodes 0.01 apart, holding f, Gamma f' and Gamma (Gamma f')'): a C2 interpolant whose derivatives are
exact derivatives of the interpolated f (so the identities hold to rounding), within 1e-12 of the fit.
Below ln Gamma = -25 the Debye-Hückel limit f = -Gamma^(3/2)/sqrt 3 is used (the fit's own limit;
f < 1e-16 there), above ln Gamma = 12 the fit itself.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import constants as _c
from ..coulomb import A1, A2, A3, B1, B2, B3, B4
from .hermite import quintic

__all__ = ["ion_coulomb", "GAMMA_E_COEFF"]

#: Gamma_e = GAMMA_E_COEFF * n_e^(1/3) / T  (e^2 (4 pi / 3)^(1/3) / k)
GAMMA_E_COEFF = _c.e_esu**2 * (4.0 * math.pi / 3.0) ** (1.0 / 3.0) / _c.k_B


@njit(cache=True, error_model="numpy")
def _ocp(G):
    """f, u = G f', v = G u' of the liquid OCP fit at coupling G (> 0)."""
    rg = math.sqrt(G)
    f = (A1 * (math.sqrt(G * (A2 + G)) - A2 * math.asinh(rg / math.sqrt(A2)))
         + 2.0 * A3 * (rg - math.atan(rg))
         + B1 * (G - B2 * math.log1p(G / B2)) + 0.5 * B3 * math.log1p(G * G / B4))
    u = G * rg * (A1 / math.sqrt(A2 + G) + A3 / (1.0 + G)) + B1 * G * G / (B2 + G) + B3 * G * G / (B4 + G * G)
    du = (A1 * (1.5 * rg / math.sqrt(A2 + G) - 0.5 * G * rg / (A2 + G) ** 1.5)
          + A3 * (1.5 * rg / (1.0 + G) - G * rg / (1.0 + G) ** 2)
          + B1 * (2.0 * G / (B2 + G) - G * G / (B2 + G) ** 2)
          + B3 * 2.0 * G * B4 / (B4 + G * G) ** 2)
    return f, u, G * du


_LG0, _LG1, _HG = -25.0, 12.0, 0.01


def _ocp_table():
    lg = np.arange(_LG0, _LG1 + 0.5 * _HG, _HG)
    f = np.empty_like(lg)
    u = np.empty_like(lg)
    v = np.empty_like(lg)
    for k, x in enumerate(lg):
        f[k], u[k], v[k] = _ocp(math.exp(x))
    return lg, f, u, v


_TAB_LG, _TAB_F, _TAB_U, _TAB_V = _ocp_table()


@njit(cache=True, error_model="numpy")
def _ocp_lookup(lnG, tf, tu, tv):
    """f, u, v at ln Gamma from the quintic Hermite table (see the module notes)."""
    if lnG < _LG0:
        G15 = math.exp(1.5 * lnG) / math.sqrt(3.0)
        return -G15, -1.5 * G15, -2.25 * G15
    if lnG >= _LG1:
        return _ocp(math.exp(lnG))
    x = (lnG - _LG0) / _HG
    i = int(x)
    if i > tf.size - 2:
        i = tf.size - 2
    return quintic(tf[i], tu[i], tv[i], tf[i + 1], tu[i + 1], tv[i + 1], x - i, _HG)


@njit(cache=True, error_model="numpy")
def ion_coulomb(z, ln_ne, lnT):
    """Excess free energy per ion of charge z over kT, with partials in ln n_e and ln T.

    Returns
    -------
    (f, f_n, f_T, f_nn, f_nT, f_TT)
        f = F/(N kT) and its first and second partial derivatives with respect to ln n_e and ln T.
        Zero for z = 0.
    """
    if z <= 0.0:
        return 0.0, 0.0, 0.0, 0.0, 0.0, 0.0
    lnG = math.log(GAMMA_E_COEFF) + ln_ne / 3.0 - lnT + (5.0 / 3.0) * math.log(z)
    f, u, v = _ocp_lookup(lnG, _TAB_F, _TAB_U, _TAB_V)
    # lnG = ln_ne/3 - lnT + const: d/dln_ne = 1/3 d/dlnG, d/dlnT = -d/dlnG
    return f, u / 3.0, -u, v / 9.0, -v / 3.0, v
