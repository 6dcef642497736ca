"""Ionization of hydrogen, helium and the metals: Saha equilibrium with the electron chemical potential,
and a pressure-ionization rule.

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
published hard-sphere form comes with a pressure term that makes the
pressure fall through pressure ionization (a van der Waals loop, see the
chemical picture in :mod:`thermoplane.physics.eos.equilibrium`); the default
uses a rule of our own in that spirit, written as a free energy at fixed
density. Stage j carries

    F_w,j = G(s) D_j,   D_j = (C_Z - C_j) + (Z - j) E_F,   ln w_j = -F_w,j / kT,

with E_F the kinetic Fermi energy of the electrons of fully ionized matter
(a function of density only), s = (4 pi / 3) n_e,full a_0^3 + (T / 1.35e8 K)^4
the packing fraction of Bohr spheres at that electron density plus a thermal
term (our own) that completes the ionization above ~2e8 K, where the
ground-state-only Saha equation would otherwise recombine hydrogen in the
dense electron–positron plasma (kT >> chi there), and G = b / (1 - b) with
b(s) a smooth step (infinitely differentiable) rising from 0 at s <= 0.3 to 1
at s >= 1.8 (rho ~ 0.8–10 g cm^-3 depending on the composition). D_j is the
energy that lifts stage j to the fully ionized stage with its electrons at
the Fermi level of fully ionized matter: where G = 1 the fully ionized stage
wins at any T (the degenerate electrons' factor exp(-eta) cannot beat it,
since their chemical potential is below E_F), and beyond the band (b = 1) the
bound states are gone: H and He are completely ionized at rho >= 10 g cm^-3,
smoothly at every temperature.

Because w_j depends on (rho, T) only, the Saha equation with w_j is the exact
minimum of F_ideal + sum_j N_j F_w,j at fixed (rho, T): the entropy
S = -dF/dT and the energy follow from it, each stage adding
E_w,j = F_w,j - T dF_w,j/dT and S_w,j = E_w,j / T - F_w,j / T, so
T (dS/dT)_rho = (dE/dT)_rho holds through the band. The pressure of F_w,j
(rho^2 dF_w/drho, which would make the pressure fall through pressure
ionization) is left out, so the pressure rises monotonically: inside the band
0.3 < s < 1.8, where matter is not already ionized thermally, the identity
rho^2 (dE/drho)_T = P - T (dP/dT)_rho holds only approximately (outside it,
exactly).

Planck-Larkin weight (physics.planck_larkin): of the Boltzmann factor e^x
(x = chi/kT) of a bound level only e^x - 1 - x counts as bound (Planck 1924;
Larkin 1960; Ebeling, Kraeft & Kremp 1976), as in the chemical picture. Stage
j keeps its Z - j electrons, so ln w_j gains Phi_j(T) = sum_{k >= j}
ln(1 - (1 + x_k) e^-x_k), a function of T alone: a free energy -kT Phi_j per
bound particle, whose energy kT dPhi_j/dln T joins E_w,j. Nothing changes
while kT << chi; as kT grows past chi the bound state fades out, so hot dense
hydrogen (a Sun-like interior) is ionized where ground-state Saha alone left
a few per cent neutral.

Metals (Li..Zn, every stage from the NIST compilation in :mod:`thermoplane.physics.eos.atomic_data`) follow
the same equations when the equation of state asks for them (``physics.matter.METAL_IONIZATION``, default
"full": metals fully ionized). Their stages are destroyed by the same rule, with one change (ours): stage j
packs spheres of its own size, s_j = (r_j / a_0)^3 s_rho + s_T, r_j = (j + 1) (Ry / chi_j) a_0 (the
hydrogenic orbit of the outermost electron, :func:`stage_radius3`), so that inner shells survive to
their own densities (the K shells of C and O to ~1e3-1e4 g cm^-3) instead of going with hydrogen at
~1 g cm^-3. H and He keep a_0 for every bound stage. The rule's pressure is left out for the metals too,
so rho^2 (dE/drho)_T = P - T (dP/dT)_rho fails inside each metal stage's band where that stage is
populated (measured in the README); it is why the metals stay fully ionized by default.
Only ground states are counted (no excited levels, no molecules, no H-).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import constants as const
from .eos.atomic_data import Z_MAX, ionization_data
from .planck_larkin import stage_sums

__all__ = ["Element", "ELEMENTS", "BOHR_RADIUS", "RYDBERG_EV", "stage_radius3", "ionization_stages", "StageState", "S_ONSET", "S_COMPLETE",
           "ALL_DESTROYED_T"]

#: Bohr radius, cm (from scipy.constants via hbar^2 / (m_e e^2))
BOHR_RADIUS = const.hbar**2 / (const.m_e * const.e_esu**2)


@dataclass(frozen=True)
class Element:
    """An element treated with Saha ionization: ground-state data of its stages.

    ``radius3[j]`` is (r_j / a_0)^3, the cube of the size of stage j's outermost bound electron in Bohr radii,
    which scales the packing of the pressure-ionization rule for that stage (1 for H and He; for metals see
    :func:`stage_radius3`); the bare nucleus's entry is unused.
    """

    Z: int
    weights: tuple          # g_j, j = 0..Z
    energies_eV: tuple      # chi_j, ionization energy of stage j -> j+1, eV
    radius3: tuple = ()     # (r_j / a_0)^3, j = 0..Z; empty means 1 for every stage

    @property
    def cumulative_erg(self) -> np.ndarray:
        return np.concatenate([[0.0], np.cumsum(self.energies_eV)]) * const.eV

    @property
    def radius3_array(self) -> np.ndarray:
        return np.array(self.radius3, dtype=float) if self.radius3 else np.ones(self.Z + 1)


#: Rydberg energy, eV (from scipy.constants via m_e e^4 / (2 hbar^2))
RYDBERG_EV = const.m_e * const.e_esu**4 / (2.0 * const.hbar**2) / const.eV


def stage_radius3(energies_eV) -> np.ndarray:
    """(r_j / a_0)^3 of each stage of a metal from its ionization energies (bare nucleus: 0).

    The outermost electron of the ion of charge j sees the charge j + 1; written as a hydrogenic orbit with
    the effective principal quantum number n*_j defined by chi_j = (j + 1)^2 Ry / n*_j^2 (the quantum-defect
    convention, e.g. Bethe & Salpeter 1957, Quantum Mechanics of One- and Two-Electron Atoms, sec. 3; from
    memory), its radius is the Bohr-model n*^2 a_0 / (j + 1):

        r_j = (j + 1) (Ry / chi_j) a_0.

    This gives a_0 for H, 1.2 a_0 for neutral C, 1.7 a_0 for neutral Fe and a_0 / 26 for the H-like Fe ion.
    Using this size for the stage's destruction is our own choice (an estimate, not a fitted radius): it
    makes each shell come apart where its own orbits overlap the volume per electron, K shells of C and O at
    ~1e3-1e4 g cm^-3 rather than with hydrogen at ~1 g cm^-3.
    """
    chi = np.asarray(energies_eV, dtype=float)
    r = (np.arange(chi.size) + 1.0) * RYDBERG_EV / chi
    return np.concatenate([r**3, [0.0]])


def _metal(Z: int) -> Element:
    chi, g = ionization_data(Z)
    return Element(Z=Z, weights=tuple(float(x) for x in g), energies_eV=tuple(float(x) for x in chi),
                   radius3=tuple(float(x) for x in stage_radius3(chi)))


# Ionization energies: NIST Atomic Spectra Database (H 13.598 eV; He 24.587, 54.418 eV).
# Ground-state weights: H (2, 1); He (1, 2, 1). H and He keep the Bohr radius for every bound stage (the rule
# as it was built for them). Metals Li..Zn (Z = 3..30): every stage from the compilation of
# :mod:`thermoplane.physics.eos.atomic_data` (NIST ASD ionization energies and ground levels), each stage
# destroyed at its own size (:func:`stage_radius3`). Heavier nuclides stay fully ionized.
ELEMENTS = {
    1: Element(Z=1, weights=(2.0, 1.0), energies_eV=(13.598434,)),
    2: Element(Z=2, weights=(1.0, 2.0, 1.0), energies_eV=(24.587389, 54.417765)),
    **{Z: _metal(Z) for Z in range(3, Z_MAX + 1)},
}


@dataclass
class StageState:
    """Stage fractions of one element and their partial derivatives.

    ``f[j]`` has the broadcast shape; ``f_eta[j]``, ``f_T[j]``, ``f_lnrho[j]``
    are partials at fixed other two of (eta, T, ln rho). ``ln_f_gw[j]`` is
    ln(f_j / (g_j w_j)) = -j eta - C_j/kT - ln sum q, finite even where a state
    is destroyed (it enters the entropy). ``ln_w[j]`` and its partials ``ln_w_eta`` (zero: w depends on
    (rho, T) only), ``ln_w_T``, ``ln_w_lnrho``. ``e_w[j]`` is the energy of the rule's free energy,
    E_w,j = F_w,j - T dF_w,j/dT (erg per particle; 0 where the state is destroyed), with its partials
    ``e_w_T`` (d/dT) and ``e_w_lnrho`` (d/d ln rho).
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
    e_w: list
    e_w_T: list
    e_w_lnrho: list
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
#: Temperature scale of the thermal term of the destruction parameter (s grows as (T / this)^4).
THERMAL_DESTRUCTION_T = 1.35e8
#: At and above this temperature the thermal term alone completes the step (b = 1) at any density: every
#: bound state of H and He is gone and the Saha equilibrium is full ionization exactly (a margin of 1e-6
#: over the point where (T / THERMAL_DESTRUCTION_T)^4 = S_COMPLETE, so rounding cannot leave b below 1)
ALL_DESTROYED_T = THERMAL_DESTRUCTION_T * S_COMPLETE**0.25 * (1.0 + 1e-6)
#: ln w of a destroyed state: exp() gives exactly 0, quietly, whatever eta is.
_DESTROYED = -1.0e300


def _smooth_step(s: np.ndarray):
    """b(s) from 0 to 1 in ln s between S_ONSET and S_COMPLETE, C-infinity; db / d ln s and d2b / d(ln s)^2.

    b = 1 / (1 + e^-h) with h = 1/(1 - t) - 1/t, t = ln(s / S_ONSET) / ln(S_COMPLETE / S_ONSET) in (0, 1).
    """
    width = np.log(S_COMPLETE / S_ONSET)
    t = np.clip(np.log(np.maximum(s, 1e-300) / S_ONSET) / width, 0.0, 1.0)
    inside = (t > 0.0) & (t < 1.0)
    ti = np.where(inside, t, 0.5)
    h = 1.0 / (1.0 - ti) - 1.0 / ti
    e = np.exp(-np.abs(h))
    b_in = np.where(h >= 0.0, 1.0 / (1.0 + e), e / (1.0 + e))
    h_t = 1.0 / ti**2 + 1.0 / (1.0 - ti) ** 2
    h_tt = 2.0 / (1.0 - ti) ** 3 - 2.0 / ti**3
    bb = b_in * (1.0 - b_in)
    b = np.where(inside, b_in, np.where(t >= 1.0, 1.0, 0.0))
    db = np.where(inside, bb * h_t / width, 0.0)
    d2b = np.where(inside, bb * ((1.0 - 2.0 * b_in) * h_t**2 + h_tt) / width**2, 0.0)
    return b, db, d2b


def _rule_of_stage(s_rho, s_T):
    """G = b / (1 - b) of one stage at packing s = s_rho + s_T with its partials in ln rho and ln T
    (G_r, G_t, G_rt, G_tt), and the mask where the stage is gone (b = 1)."""
    s = s_rho + s_T
    b, db, d2b = _smooth_step(s)
    a_rho, a_T = s_rho / s, s_T / s                     # d ln s / d ln rho and d ln s / d ln T over 4
    # G runs from 0 to infinity across the band: beyond it the bound state is gone. Its partials in u = ln s,
    # then in ln rho (u_r = a_rho) and ln T (u_t = 4 a_T), first and second
    gone = b >= 1.0 - 1e-12
    om = np.where(gone, 1.0, 1.0 - b)
    G = np.where(gone, 0.0, b / om)
    G_u = np.where(gone, 0.0, db / om**2)
    G_uu = np.where(gone, 0.0, d2b / om**2 + 2.0 * db**2 / om**3)
    u_r, u_t = a_rho, 4.0 * a_T
    G_r, G_t = G_u * u_r, G_u * u_t
    G_rt = G_uu * u_r * u_t - G_u * a_rho * u_t            # d2u / dln rho dln T = -4 a_rho a_T
    G_tt = G_uu * u_t**2 + 4.0 * G_u * u_t * a_rho          # d2u / dln T^2 = 16 a_T a_rho
    return G, G_r, G_t, G_rt, G_tt, gone


def fermi_energy(n_e: np.ndarray):
    """Kinetic Fermi energy of an electron gas of density n_e (cm^-3) at T = 0, with relativity, and its
    derivative in ln n_e: E_F = m c^2 (sqrt(1 + x^2) - 1), x = hbar (3 pi^2 n_e)^(1/3) / (m c)."""
    x = const.hbar * np.cbrt(3.0 * np.pi**2 * n_e) / (const.m_e * const.c)
    root = np.sqrt(1.0 + x * x)
    return const.m_e_c2 * x * x / (root + 1.0), const.m_e_c2 * x * x / (3.0 * root)


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
    r3 = element.radius3_array
    shape = np.broadcast(eta, T, n_e_full).shape
    zero = np.zeros(shape)
    if pressure_ionization:
        # packing of the stage's own spheres (Bohr spheres for H and He), plus a thermal term that completes
        # ionization above ~2e8 K, where the ground-state-only Saha equation would recombine H in the dense
        # electron-positron plasma
        s_rho = (4.0 * np.pi / 3.0) * n_e_full * BOHR_RADIUS**3
        s_T = (T / THERMAL_DESTRUCTION_T) ** 4 + zero
        E_F, E_F_ln = fermi_energy(n_e_full)
    else:
        E_F = E_F_ln = zero
    # the Planck-Larkin factor of every bound stage (physics.planck_larkin): Phi_j(T) and its ln T partials
    pl = stage_sums(np.broadcast_to(T, shape), Z, C) if pressure_ionization else np.zeros((3, n_stages) + shape)
    ln_q, ln_w, w_T, w_ln, e_w, e_T, e_ln = [], [], [], [], [], [], []
    for j in range(n_stages):
        if j == Z or not pressure_ionization:     # the bare nucleus is never destroyed
            for lst in (ln_w, w_T, w_ln, e_w, e_T, e_ln):
                lst.append(zero)
        else:
            G, G_r, G_t, G_rt, G_tt, gone = _rule_of_stage(r3[j] * s_rho, s_T)
            D = C[Z] - C[j] + (Z - j) * E_F                      # F_w = G D - kT Phi_j, erg per particle
            D_r = (Z - j) * E_F_ln
            p0, p1, p2 = pl[0, j], pl[1, j], pl[2, j]
            ln_w.append(np.where(gone, _DESTROYED, -G * D / kT + p0))
            w_T.append(((G - G_t) * D / kT + p1) / T)            # d ln w / dT at fixed rho
            w_ln.append(-(G_r * D + G * D_r) / kT)
            # E_w = F_w - T dF_w/dT = D (G - G_t) + kT Phi_j', its partials; 0 where the state is gone
            e_w.append(np.where(gone, 0.0, D * (G - G_t) + kT * p1))
            e_T.append(np.where(gone, 0.0, D * (G_t - G_tt) / T + const.k_B * (p1 + p2)))
            e_ln.append(D_r * (G - G_t) + D * (G_r - G_rt))
        ln_q.append(np.log(element.weights[j]) + ln_w[j] - j * eta - C[j] / kT)
    top = np.maximum.reduce(ln_q)
    # f_j = q_j / sum q with q_j scaled by the largest: the f_j sum to 1 within rounding, which the partials
    # below need (sum_j f_j (d_j - mean) = 0; d_j ~ C_j / kT^2 is large in cold matter)
    q = [np.exp(lq - top) for lq in ln_q]
    tot = sum(q)
    ln_sum = top + np.log(tot)
    f = [qj / tot for qj in q]
    ln_f_gw = [-j * eta - C[j] / kT - ln_sum for j in range(n_stages)]
    # partials of ln q_j: eta -> -j; T -> C_j / (k T^2) + d ln w_j / dT; ln rho -> d ln w_j / d ln rho
    d_eta = [-float(j) + zero for j in range(n_stages)]
    d_T = [C[j] / (kT * T) + w_T[j] for j in range(n_stages)]
    d_ln = w_ln

    def partial(d):
        mean = sum(fj * dj for fj, dj in zip(f, d))
        return [fj * (dj - mean) for fj, dj in zip(f, d)]

    return StageState(f=f, ln_f_gw=ln_f_gw, f_eta=partial(d_eta), f_T=partial(d_T), f_lnrho=partial(d_ln),
                      ln_w=ln_w, ln_w_eta=[zero] * n_stages, ln_w_T=w_T, ln_w_lnrho=w_ln, e_w=e_w, e_w_T=e_T,
                      e_w_lnrho=e_ln, cumulative=C)
