"""Ionization of hydrogen and helium: Saha equilibrium with the electron
chemical potential, and a pressure-ionization rule.

The question this module answers: at given electron degeneracy eta,
temperature T and density, what fraction of each element sits in each
ionization stage, and how do those fractions respond to eta, T and rho?
The equation of state (:mod:`thermoplane.physics.eos`) closes the system by charge
neutrality.

Model
-----
Stage j of an element has ground-state weight g_j, cumulative ionization
energy C_j (from the neutral atom) and occupation probability w_j. The
relative populations are

    q_j = g_j w_j exp(-j eta - C_j / kT),    f_j = q_j / sum_k q_k,

which is the Saha equation written with the electron chemical potential
(eta = (mu_e - m_e c^2)/kT) instead of its non-degenerate value, so it stays
right when the electrons degenerate (e.g. Cox & Giuli 1968, ch. 15).

Pressure ionization: Saha alone recombines matter at high density, because
the bound states it counts cannot exist once the particles crowd closer than
their size. Occupation probabilities w_j (Hummer & Mihalas 1988, ApJ 331,
794) take the destroyed states out of the partition functions. Their
published hard-sphere form depends on density only, and no density-only w can
beat the factor exp(-eta) of degenerate electrons as T -> 0 (complete
ionization at rho >= 10 g cm^-3 would then need w = 0 exactly, which makes
the ionization jump). We therefore use a rule of our own in that spirit:

    ln w_j = -D_j b(s) / (1 - b(s)),   D_j = (C_Z - C_j)/kT + (Z - j) (softplus(eta) + 12),

with s = (4 pi / 3) n_e,full a_0^3 + (T / 1.35e8 K)^4: the packing fraction of
Bohr spheres at the electron density of fully ionized matter, plus a thermal
term (our own) that completes the ionization above ~2e8 K, where the
ground-state-only Saha equation would otherwise recombine hydrogen in the
dense electron–positron plasma (kT >> chi there). b(s) is a smooth step
(infinitely differentiable) rising from 0 at s <= 0.3 to 1 at s >= 1.8
(rho ~ 0.8–10 g cm^-3 depending on the composition). D_j is the depth at
which the fully ionized stage outweighs stage j by e^12 per missing electron
at any T and eta; it is reached half-way through the band (b = 1/2), and
beyond the band (b = 1) the bound states are gone: H and He are completely
ionized at rho >= 10 g cm^-3, and the transition is smooth at every temperature.
Because w depends on T and eta, the rule is not derived from a free energy:
inside the band 0.3 < s < 1.8, where matter is not already ionized
thermally, the thermodynamic identities hold only approximately (outside
it, exactly). No pressure term is attached to w, so
the pressure rises monotonically through pressure ionization.

Metals are treated as fully ionized at every (rho, T). Only ground states
are counted (no excited levels, no molecules, no H-).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import constants as const

__all__ = ["Element", "ELEMENTS", "BOHR_RADIUS", "ionization_stages", "StageState", "S_ONSET", "S_COMPLETE"]

#: Bohr radius, cm (from scipy.constants via hbar^2 / (m_e e^2))
BOHR_RADIUS = const.hbar**2 / (const.m_e * const.e_esu**2)


@dataclass(frozen=True)
class Element:
    """An element treated with Saha ionization: ground-state data of its stages."""

    Z: int
    weights: tuple          # g_j, j = 0..Z
    energies_eV: tuple      # chi_j, ionization energy of stage j -> j+1, eV

    @property
    def cumulative_erg(self) -> np.ndarray:
        return np.concatenate([[0.0], np.cumsum(self.energies_eV)]) * const.eV


# Ionization energies: NIST Atomic Spectra Database (H 13.598 eV; He 24.587, 54.418 eV).
# Ground-state weights: H (2, 1); He (1, 2, 1).
ELEMENTS = {
    1: Element(Z=1, weights=(2.0, 1.0), energies_eV=(13.598434,)),
    2: Element(Z=2, weights=(1.0, 2.0, 1.0), energies_eV=(24.587389, 54.417765)),
}



@dataclass
class StageState:
    """Stage fractions of one element and their partial derivatives.

    ``f[j]`` has the broadcast shape; ``f_eta[j]``, ``f_T[j]``, ``f_lnrho[j]``
    are partials at fixed other two of (eta, T, ln rho). ``ln_f_gw[j]`` is
    ln(f_j / (g_j w_j)) = -j eta - C_j/kT - ln sum q, finite even where a state
    is destroyed (it enters the entropy). ``ln_w[j]`` and its partials ``ln_w_eta``, ``ln_w_T``, ``ln_w_lnrho``.
    """

    f: list
    ln_f_gw: list
    f_eta: list
    f_T: list
    f_lnrho: list
    ln_w: list
    ln_w_eta: list
    ln_w_T: list
    ln_w_lnrho: list
    cumulative: np.ndarray

    @property
    def mean_charge(self) -> np.ndarray:
        return sum(j * fj for j, fj in enumerate(self.f))

    def mean_charge_partials(self):
        """d zbar / d(eta, T, ln rho)."""
        d = [sum(j * g[j] for j in range(len(self.f))) for g in (self.f_eta, self.f_T, self.f_lnrho)]
        return tuple(d)


#: The pressure-ionization step b(s) rises from 0 at S_ONSET to 1 at S_COMPLETE.
S_ONSET = 0.3
S_COMPLETE = 1.8
#: Margin (per missing electron, in ln) by which full ionization wins once b = 1.
MARGIN = 12.0
#: Temperature scale of the thermal term of the destruction parameter (s grows as (T / this)^4).
THERMAL_DESTRUCTION_T = 1.35e8
#: ln w of a destroyed state: exp() gives exactly 0, quietly, whatever eta is.
_DESTROYED = -1.0e300


def _smooth_step(s: np.ndarray):
    """b(s) from 0 to 1 in ln s between S_ONSET and S_COMPLETE, C-infinity; and db / d ln s."""
    width = np.log(S_COMPLETE / S_ONSET)
    t = np.clip(np.log(np.maximum(s, 1e-300) / S_ONSET) / width, 0.0, 1.0)
    inside = (t > 0.0) & (t < 1.0)
    ti = np.where(inside, t, 0.5)
    a = np.exp(-1.0 / ti)
    c = np.exp(-1.0 / (1.0 - ti))
    b = np.where(inside, a / (a + c), np.where(t >= 1.0, 1.0, 0.0))
    db_dt = (a / ti**2 * c + a * c / (1.0 - ti) ** 2) / (a + c) ** 2
    return b, np.where(inside, db_dt / width, 0.0)


def _softplus(x):
    """ln(1 + e^x) and its derivative, without overflow."""
    return np.maximum(x, 0.0) + np.log1p(np.exp(-np.abs(x))), 0.5 * (1.0 + np.tanh(0.5 * x))


def ionization_stages(element: Element, eta: np.ndarray, T: np.ndarray, n_e_full: np.ndarray,
                      pressure_ionization: bool = True) -> StageState:
    """Saha stage fractions of ``element`` at (eta, T) with pressure ionization.

    Parameters
    ----------
    element : Element
    eta : array_like
        Electron degeneracy parameter (chemical potential without rest mass over kT).
    T : array_like
        Temperature, K.
    n_e_full : array_like
        Electron density of the fully ionized matter, cm^-3 (sets the
        occupation probabilities; proportional to rho).
    pressure_ionization : bool
        Apply the occupation probabilities (True) or plain Saha (False).

    Returns
    -------
    StageState

    Notes
    -----
    ln q_j = ln g_j + ln w_j - j eta - C_j / kT and f_j = q_j / sum q, computed
    with the largest ln q subtracted so nothing overflows;
    d f_j / dy = f_j (d ln q_j/dy - sum_k f_k d ln q_k/dy).
    """
    kT = const.k_B * T
    C = element.cumulative_erg
    Z = element.Z
    n_stages = Z + 1
    shape = np.broadcast(eta, T, n_e_full).shape
    if pressure_ionization:
        # packing of Bohr spheres, plus a thermal term that completes ionization above ~2e8 K, where
        # the ground-state-only Saha equation would recombine H in the dense electron-positron plasma
        s_rho = (4.0 * np.pi / 3.0) * n_e_full * BOHR_RADIUS**3
        s_T = (T / THERMAL_DESTRUCTION_T) ** 4
        s = s_rho + s_T
        b, db_dlns = _smooth_step(s)
        db_dln = db_dlns * s_rho / s               # d b / d ln rho
        db_dlnT = db_dlns * 4.0 * s_T / s          # d b / d ln T
    else:
        b = db_dln = db_dlnT = np.zeros(shape)
    sp, dsp = _softplus(eta)
    # g = b / (1 - b) runs from 0 to infinity across the band: beyond it the bound states are gone
    gone = b >= 1.0 - 1e-12
    one_minus = np.where(gone, 1.0, 1.0 - b)
    g = np.where(gone, 0.0, b / one_minus)
    dg_dln = np.where(gone, 0.0, db_dln / one_minus**2)
    dg_dlnT = np.where(gone, 0.0, db_dlnT / one_minus**2)
    zero = np.zeros(shape)
    ln_q, ln_w, w_eta, w_T, w_ln = [], [], [], [], []
    for j in range(n_stages):
        if j == Z:                     # the bare nucleus is never destroyed
            ln_w.append(zero); w_eta.append(zero); w_T.append(zero); w_ln.append(zero)
        else:
            depth = (C[Z] - C[j]) / kT + (Z - j) * (sp + MARGIN)
            ln_w.append(np.where(gone, _DESTROYED, -g * depth))
            w_eta.append(-g * (Z - j) * dsp)
            w_T.append(g * (C[Z] - C[j]) / (kT * T) - dg_dlnT * depth / T)
            w_ln.append(-dg_dln * depth)
        ln_q.append(np.log(element.weights[j]) + ln_w[j] - j * eta - C[j] / kT)
    top = np.maximum.reduce(ln_q)
    ln_sum = top + np.log(sum(np.exp(lq - top) for lq in ln_q))
    f = [np.exp(lq - ln_sum) for lq in ln_q]
    ln_f_gw = [-j * eta - C[j] / kT - ln_sum for j in range(n_stages)]
    # partials of ln q_j: eta -> -j; T -> C_j / (k T^2); ln rho -> d ln w_j / d ln rho = -h_j
    d_eta = [w_eta[j] - j for j in range(n_stages)]
    d_T = [C[j] / (kT * T) + w_T[j] for j in range(n_stages)]
    d_ln = w_ln

    def partial(d):
        mean = sum(fj * dj for fj, dj in zip(f, d))
        return [fj * (dj - mean) for fj, dj in zip(f, d)]

    return StageState(f=f, ln_f_gw=ln_f_gw, f_eta=partial(d_eta), f_T=partial(d_T), f_lnrho=partial(d_ln),
                      ln_w=ln_w, ln_w_eta=w_eta, ln_w_T=w_T, ln_w_lnrho=w_ln, cumulative=C)
