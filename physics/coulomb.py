"""Coulomb interactions of the ions: coupling parameter, excess free energy,
and the corrections they make to pressure, energy and entropy.

The question this module answers: how strongly do the ions feel each other
(Gamma), and how much does that lower the pressure and energy of the gas?

Model
-----
The ions form a one-component plasma (OCP) in a uniform electron background.
Its excess free energy per ion in units of kT, f(Gamma), is the analytic fit
to Monte Carlo results of Potekhin & Chabrier (2000, Phys. Rev. E 62, 8554,
their eqs. 16–17; the form goes back to Chabrier & Potekhin 1998, Phys. Rev. E
58, 4941), which reduces to Debye–Hückel, f = -Gamma^(3/2)/sqrt(3), as
Gamma -> 0 and is valid for the liquid up to crystallization at
Gamma = 175 (beyond it the liquid fit is extrapolated; the solid's lattice
energy differs by well under 1 %). Mixtures follow the linear mixing rule:
Gamma_i = Gamma_e Z_i^(5/3), Gamma_e = e^2 / (a_e k T),
a_e = (3 / (4 pi n_e))^(1/3). Electron screening (polarization of the
background) is left out.

The coefficients A1, A2, B1..B4 were written down from memory of that paper:
A1 = -0.9070, A2 = 0.62954, A3 = -sqrt(3)/2 - A1/sqrt(A2), B1 = 0.00456,
B2 = 211.6, B3 = -1e-4, B4 = 0.00462. The tests check the limits they must
obey (Debye–Hückel; the Madelung-like slope u/Gamma -> -0.9 at strong
coupling) and that f, u and du/dGamma agree with each other.
"""

from __future__ import annotations

import numpy as np

from . import constants as const
from .thermo import Part

__all__ = ["ocp_free_energy", "ocp_energy", "ocp_energy_slope", "coupling_parameter",
           "coulomb_part", "CRYSTALLIZATION_GAMMA"]

A1 = -0.9070
A2 = 0.62954
A3 = -np.sqrt(3.0) / 2.0 - A1 / np.sqrt(A2)
B1 = 0.00456
B2 = 211.6
B3 = -1.0e-4
B4 = 0.00462

#: Potekhin & Chabrier (2000): the OCP crystallizes at Gamma = 175.
CRYSTALLIZATION_GAMMA = 175.0


def ocp_energy(Gamma):
    """Excess internal energy per ion over kT, u(Gamma) = Gamma df/dGamma.

    Notes
    -----
    u = Gamma^(3/2) [A1 / sqrt(A2 + Gamma) + A3 / (1 + Gamma)]
        + B1 Gamma^2 / (B2 + Gamma) + B3 Gamma^2 / (B4 + Gamma^2)
    (Potekhin & Chabrier 2000, eq. 16).

    Examples
    --------
    >>> round(float(ocp_energy(1e-6) / -(np.sqrt(3) / 2 * 1e-9)), 4)
    1.0
    """
    G = np.asarray(Gamma, dtype=float)
    g32 = G * np.sqrt(G)
    return g32 * (A1 / np.sqrt(A2 + G) + A3 / (1.0 + G)) + B1 * G**2 / (B2 + G) + B3 * G**2 / (B4 + G**2)


def ocp_free_energy(Gamma):
    """Excess free energy per ion over kT, f(Gamma) = int_0^Gamma u(g)/g dg.

    Notes
    -----
    f = A1 [sqrt(Gamma (A2 + Gamma)) - A2 asinh(sqrt(Gamma / A2))]
        + 2 A3 [sqrt(Gamma) - arctan(sqrt(Gamma))]
        + B1 [Gamma - B2 ln(1 + Gamma / B2)] + (B3 / 2) ln(1 + Gamma^2 / B4)
    (Potekhin & Chabrier 2000, eq. 17).
    """
    G = np.asarray(Gamma, dtype=float)
    rg = np.sqrt(G)
    return (A1 * (np.sqrt(G * (A2 + G)) - A2 * np.arcsinh(rg / np.sqrt(A2)))
            + 2.0 * A3 * (rg - np.arctan(rg))
            + B1 * (G - B2 * np.log1p(G / B2)) + 0.5 * B3 * np.log1p(G**2 / B4))


def ocp_energy_slope(Gamma):
    """v(Gamma) = Gamma du/dGamma, needed for the second derivatives."""
    G = np.asarray(Gamma, dtype=float)
    rg = np.sqrt(G)
    du = (A1 * (1.5 * rg / np.sqrt(A2 + G) - 0.5 * G * rg / (A2 + G) ** 1.5)
          + A3 * (1.5 * rg / (1.0 + G) - G * rg / (1.0 + G) ** 2)
          + B1 * (2.0 * G / (B2 + G) - G**2 / (B2 + G) ** 2)
          + B3 * 2.0 * G * B4 / (B4 + G**2) ** 2)
    return G * du


def coupling_parameter(rho, T, X, A, Z):
    """Ion coupling parameter of the fully ionized mixture, linear mixing.

    Gamma = <Z^(5/3)> Gamma_e, with Gamma_e = e^2/(a_e k T) from the electron
    density of the fully ionized matter and <.> the number average over nuclei.

    Returns
    -------
    Gamma_e : ndarray
        Electron coupling parameter.
    Gamma : ndarray
        Mean ion coupling parameter.
    """
    per_mass = X / (A * const.m_u)
    n_e = rho * float(np.sum(per_mass * Z))
    a_e = (3.0 / (4.0 * np.pi * n_e)) ** (1.0 / 3.0)
    Gamma_e = const.e_esu**2 / (a_e * const.k_B * T)
    z53 = float(np.sum(per_mass * Z ** (5.0 / 3.0)) / np.sum(per_mass))
    return Gamma_e, Gamma_e * z53


def coulomb_part(rho, T, X, A, Z, scale=1.0) -> Part:
    """Coulomb corrections of the ion mixture as a :class:`~thermoplane.physics.thermo.Part`.

    Parameters
    ----------
    rho, T : ndarray
        Density (g cm^-3) and temperature (K).
    X, A, Z : ndarray
        Mass fractions, atomic masses (u) and charges of the nuclides.
    scale : ndarray or float
        Factor multiplying the whole correction, held fixed in the
        derivatives (the equation of state passes the square of the ionized
        fraction, see :mod:`thermoplane.physics.eos`).

    Notes
    -----
    Per gram, with N_i nuclei of kind i and u_i = u(Gamma_i):
    F = kT sum N_i f_i, E = kT sum N_i u_i, S = k sum N_i (u_i - f_i),
    P = (rho kT / 3) sum N_i u_i (= U / 3V). Gamma_i ∝ rho^(1/3) / T gives
    the partials in closed form (v_i = Gamma du/dGamma):
    dP/drho = (kT/3) sum N_i (u_i + v_i/3), dP/dT = (rho k/3) sum N_i (u_i - v_i),
    dE/drho = kT sum N_i v_i / (3 rho), dE/dT = k sum N_i (u_i - v_i).
    """
    k = const.k_B
    Gamma_e, _ = coupling_parameter(rho, T, X, A, Z)
    per_mass = X / (A * const.m_u)
    sum_u = np.zeros_like(Gamma_e)
    sum_f = np.zeros_like(Gamma_e)
    sum_v = np.zeros_like(Gamma_e)
    for N_i, Z_i in zip(per_mass, Z):        # a loop over nuclides, not points
        if Z_i <= 0:
            continue
        G = Gamma_e * Z_i ** (5.0 / 3.0)
        sum_u += N_i * ocp_energy(G)
        sum_f += N_i * ocp_free_energy(G)
        sum_v += N_i * ocp_energy_slope(G)
    sum_u *= scale; sum_f *= scale; sum_v *= scale
    return Part(P=rho * k * T * sum_u / 3.0, E=k * T * sum_u, S=k * (sum_u - sum_f),
                P_rho=k * T * (sum_u + sum_v / 3.0) / 3.0, P_T=rho * k * (sum_u - sum_v) / 3.0,
                E_rho=k * T * sum_v / (3.0 * rho), E_T=k * (sum_u - sum_v),
                S_rho=k * (sum_v - sum_u) / (3.0 * rho), S_T=k * (sum_u - sum_v) / T)
