"""The chemical picture (physics/eos: species, jets, equilibrium): one free energy, its identities and limits.

Experimental: ``ionization="chemical"`` is not the default yet. These tests pin what holds today; the
known gaps (the pressure-ionization band's stiffness, cold dense matter, speed) are listed in the README
and tested as what they are, so that closing them shows up here.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from thermoplane.physics.eos import atomic_data
from thermoplane.physics.eos.equilibrium import solve_equilibrium

COMPOSITIONS = {
    "solar-like": ph.Composition.from_xyz(0.70, 0.28, 0.02),
    "hydrogen": ph.Composition({"H-1": 1.0}),
    "carbon-oxygen": ph.Composition({"C-12": 0.5, "O-16": 0.5}),
}
# The default plane at coarse resolution; log T starts just above the electron table's lower edge
# (1e3 K), where the gas hands over to the numpy path (a seam of ~1e-10, see the README).
LOG_RHO = np.linspace(-10.0, 10.0, 41)
LOG_T = np.linspace(3.02, 10.0, 22)
H = 3e-4     # step in ln rho and ln T of the fourth-order differences: rounding ~ 1e-16 |E| / h, truncation ~ h^4


def known_gaps(L, T):
    """Where the chemical picture is known not to be done (README, "Known limits"): the pressure-ionization
    band of the excluded-volume model (stiff, with more than one root; for the K shells of C and O it
    reaches 1e3-1e4 g cm^-3 and 3e6 K) and cold dense matter (the liquid Coulomb fit far beyond
    crystallization, issue 12)."""
    band = (L > -0.6) & (L < 2.6) & (T < 5.5)
    cold_dense = (L > 2.6) & (T < 6.5)
    return band | cold_dense


def _evaluate(comp, lr, lt):
    return ph.evaluate(10.0**lr, 10.0**lt, comp, ionization="chemical")


@pytest.fixture(scope="module", params=list(COMPOSITIONS))
def plane(request):
    comp = COMPOSITIONS[request.param]
    L, T = np.meshgrid(LOG_RHO, LOG_T)
    d = H / math.log(10.0)
    steps = {"0": (0, 0)}
    for k in (1, 2):
        steps.update({f"r+{k}": (k * d, 0), f"r-{k}": (-k * d, 0), f"t+{k}": (0, k * d), f"t-{k}": (0, -k * d)})
    states = {key: _evaluate(comp, L + a, T + b) for key, (a, b) in steps.items()}
    return request.param, L, T, states


def _d(s, axis, field):
    """Fourth-order central difference of a field in ln rho ("r") or ln T ("t")."""
    f = lambda k: getattr(s[f"{axis}{k}"], field)  # noqa: E731
    return (8.0 * (f("+1") - f("-1")) - (f("+2") - f("-2"))) / (12.0 * H)


@pytest.mark.filterwarnings("ignore::RuntimeWarning")   # the ratios are NaN at the unsolved points
def test_identities_from_finite_differences_at_every_solved_point(plane):
    name, L, T, s = plane
    rho, temp = 10.0**L, 10.0**T
    s0 = s["0"]
    dE_drho = _d(s, "r", "E") / rho
    dP_drho = _d(s, "r", "P") / rho
    dP_dT = _d(s, "t", "P") / temp
    dE_dT = _d(s, "t", "E") / temp
    dS_dT = _d(s, "t", "S") / temp
    solved = np.all([np.isfinite(s[k].P) & np.isfinite(s[k].E) & np.isfinite(s[k].S) for k in s], axis=0)
    solved &= ~known_gaps(L, T)
    # rho^2 (dE/drho)_T = P - T (dP/dT)_rho, within 1e-8 of P
    maxwell = np.abs(rho**2 * dE_drho - (s0.P - temp * dP_dT)) / s0.P
    assert np.max(maxwell[solved]) < 1e-8, name
    # T (dS/dT)_rho = (dE/dT)_rho, within 1e-6 of c_V + P/(rho T) (n k: in degenerate matter c_V itself
    # is far below the rounding of dE/dT)
    scale = np.abs(dE_dT) + s0.P / (rho * temp)
    assert np.max((np.abs(temp * dS_dT - dE_dT) / scale)[solved]) < 1e-6, name
    # the reported gamma1 equals gamma1 rebuilt from P and E
    chi_rho = rho * dP_drho / s0.P
    chi_T = temp * dP_dT / s0.P
    # gamma1 = chi_rho c_P / c_V = chi_rho + P chi_T^2 / (rho T c_V) (no division by chi_rho, which the
    # differences give as 0 where radiation and pairs make P independent of rho)
    gamma1 = chi_rho + s0.P * chi_T**2 / (rho * temp * dE_dT)
    assert np.max((np.abs(gamma1 - s0.gamma1) / np.abs(s0.gamma1))[solved]) < 1e-6, name


def test_analytic_identity_holds_to_rounding(plane):
    name, L, T, s = plane
    s0 = s["0"]
    rho, temp = 10.0**L, 10.0**T
    ok = np.isfinite(s0.P)
    err = np.abs(rho**2 * s0.dE_drho - (s0.P - temp * s0.dP_dT)) / s0.P
    assert np.max(err[ok]) < 1e-11, name


def test_unsolved_points_only_in_the_known_gaps(plane):
    """Newton (two starts, then continuation down in T) fails only inside the known gaps, and rarely."""
    name, L, T, s = plane
    failed = ~np.isfinite(s["0"].P)
    assert np.all(known_gaps(L[failed], T[failed])), (name, L[failed], T[failed])
    assert failed.mean() < 0.02


def test_heat_capacity_positive_and_stable_outside_the_known_regions(plane):
    name, L, T, s = plane
    s0 = s["0"]
    ok = np.isfinite(s0.P)
    assert np.all(s0.c_V[ok] > 0)
    # chi_rho < 0 and gamma1 > 2 are left only inside the known gaps
    outside = ok & ~known_gaps(L, T)
    assert np.all(s0.chi_rho[outside] > 0), (name, L[outside & (s0.chi_rho <= 0)], T[outside & (s0.chi_rho <= 0)])
    assert np.all((s0.gamma1[outside] > 0) & (s0.gamma1[outside] < 2))


# ------------------------------------------------------------------------------------------- limits
def _saha_hydrogen(rho, T):
    """Ground-state Saha for pure H with non-degenerate, non-relativistic electrons (independent)."""
    chi = atomic_data.ionization_data(1)[0][0] * const.eV
    n = rho / (1.00782503 * const.m_u)
    # x^2 / (1 - x) = (g+/g0) (2 / n) (2 pi m_e k T / h^2)^(3/2) exp(-chi / kT), g+/g0 = 1/2, spin 2 for e
    K = (2.0 * math.pi * const.m_e * const.k_B * T / const.h**2) ** 1.5 * math.exp(-chi / (const.k_B * T)) / n
    return 0.5 * (-K + math.sqrt(K * K + 4.0 * K))


@pytest.mark.parametrize("T", [7e3, 1e4, 1.5e4, 3e4])
def test_hydrogen_follows_ground_state_saha_at_low_density(T):
    rho = 1e-10
    s = ph.evaluate(rho, T, COMPOSITIONS["hydrogen"], ionization="chemical")
    x = _saha_hydrogen(rho, T)
    assert float(s.ion_H) == pytest.approx(x, rel=1e-3)


def test_helium_follows_ground_state_saha_at_low_density():
    comp = ph.Composition({"He-4": 1.0})
    chi1, chi2 = (atomic_data.ionization_data(2)[0] * const.eV)
    for T in (1.5e4, 2.5e4, 4e4, 6e4):
        rho = 1e-10
        s = ph.evaluate(rho, T, comp, ionization="chemical")
        # independent: solve n_e from the two Saha ratios by bisection (g: He 1, He+ 2, He++ 1)
        n = rho / (4.00260325 * const.m_u)
        q = 2.0 * (2.0 * math.pi * const.m_e * const.k_B * T / const.h**2) ** 1.5
        r1 = lambda ne: 2.0 * q / ne * math.exp(-chi1 / (const.k_B * T))        # noqa: E731
        r2 = lambda ne: 0.5 * q / ne * math.exp(-chi2 / (const.k_B * T))        # noqa: E731
        lo, hi = 1e-30, 2.0 * n
        for _ in range(200):
            ne = math.sqrt(lo * hi)
            a, b = r1(ne), r1(ne) * r2(ne)
            free = n * (a + 2 * b) / (1 + a + b)
            lo, hi = (ne, hi) if free > ne else (lo, ne)
        a, b = r1(ne), r1(ne) * r2(ne)
        f1, f2 = a / (1 + a + b), b / (1 + a + b)
        assert float(s.ion_He1) == pytest.approx(f1 + f2, rel=1e-3, abs=1e-9)
        assert float(s.ion_He2) == pytest.approx(f2, rel=1e-3, abs=1e-9)


@pytest.mark.parametrize("element, A, Z, g0, g1", [("He-4", 4.00260325, 2, 1.0, 2.0), ("C-12", 12.0, 6, 1.0, 2.0)])
def test_cold_matter_of_one_element_keeps_its_few_free_electrons(element, A, Z, g0, g1):
    """At 1e3-2e3 K a pure element is neutral but for a share of its first ion far below e^-70 of the
    atoms; those ions still hold every free electron, so the first ion must never be left out of the
    sum (pure He had no root at all below ~2000 K when it was). Independent check: ideal ground-state
    Saha in logarithms, x^2 = K / n with K = (g1/g0) 2 (2 pi m_e k T / h^2)^(3/2) e^(-chi/kT),
    x = n_+/n << 1 (weights g of the ground levels: He 1S0 1, He+ 2S1/2 2; C 3P0 1, C+ 2P1/2 2; from memory)."""
    comp = ph.Composition({element: 1.0})
    chi1 = atomic_data.ionization_data(Z)[0][0] * const.eV
    rho = np.array([1e-10, 1e-6, 1e-3])
    for T in (1.0e3 * 1.0001, 1.5e3, 2.0e3):
        s = ph.evaluate(rho, np.full(rho.size, T), comp, ionization="chemical")
        assert np.all(np.isfinite(s.P)), (element, T)
        n = rho / (A * const.m_u)
        lnK = (math.log(2.0 * g1 / g0) + 1.5 * math.log(2.0 * math.pi * const.m_e * const.k_B * T / const.h**2)
               - chi1 / (const.k_B * T))
        ln_x = 0.5 * (lnK - np.log(n))
        ln_ne = np.log(np.asarray(s.ye, float) * rho / const.m_u)
        assert np.allclose(ln_ne, ln_x + np.log(n), atol=1e-3, rtol=0), (element, T, ln_ne - ln_x - np.log(n))


def test_hydrogen_ionized_at_the_solar_centre():
    # BSB05 centre, from memory: rho = 150 g cm^-3, T = 1.57e7 K, X = 0.35 (burnt) to 0.70 (initial)
    for X in (0.35, 0.70):
        s = ph.evaluate(150.0, 1.57e7, ph.Composition.from_xyz(X, 0.98 - X, 0.02), ionization="chemical")
        assert float(s.ion_H) >= 0.999


def test_free_electrons_of_a_cool_photosphere_come_from_the_metals():
    # a cool dwarf's photosphere, rho ~ 3e-7 g cm^-3, T ~ 4500 K (common practice, no source)
    comp = COMPOSITIONS["solar-like"]
    r = solve_equilibrium(np.array([3e-7]), np.array([4500.0]), comp)
    N_e = r.n_e[0] / 3e-7
    assert r.metal_electrons[0] / N_e > 0.5
    # and they are few: ~1e-4 per H nucleus (the metals' first ionizations; common practice, no source)
    per_H = N_e / (0.70 / (1.00782503 * const.m_u))
    assert 1e-6 < per_H < 1e-3


def test_h2_half_dissociated_where_an_independent_evaluation_says():
    """Pure H at 1e-8 g cm^-3: the kernel's T of 50 % H2 against the same physics written out here.

    Independent: n_H2 / n_H^2 = lambda_H^3 2^(3/2) (Z_int / 4) / g_H^2 exp(D0/kT), with Z_int summed
    directly over the bound levels of atomic_data.h2_levels with their Planck-Larkin weights,
    e^-E/kT - (1 + y) e^-D0/kT, y = (D0 - E)/kT (not the kernel's interpolation), and ionization
    neglected (x_H+ < 1e-5 there).
    """
    rho = 1e-8
    comp = COMPOSITIONS["hydrogen"]
    E_K, g, _, _ = atomic_data.h2_levels()
    m_H = 1.00782503 * const.m_u

    def f_h2_independent(T):
        kT = const.k_B * T
        D_K = atomic_data.H2_D0_EV * const.eV / const.k_B
        y = (D_K - np.asarray(E_K)) / T
        Z = float(np.sum(g * (np.exp(-np.asarray(E_K) / T) - (1.0 + y) * np.exp(-D_K / T))))
        lam3 = (const.h**2 / (2.0 * math.pi * m_H * kT)) ** 1.5
        K = lam3 * 2.0**1.5 * (Z / 4.0) / 4.0 * math.exp(atomic_data.H2_D0_EV * const.eV / kT)
        n = rho / m_H
        nH = (-1.0 + math.sqrt(1.0 + 8.0 * K * n)) / (4.0 * K)       # n = n_H + 2 K n_H^2
        return 2.0 * K * nH * nH / n

    def half(f):
        lo, hi = 1500.0, 6000.0
        for _ in range(60):
            mid = math.sqrt(lo * hi)
            lo, hi = (mid, hi) if f(mid) > 0.5 else (lo, mid)
        return mid

    T_code = half(lambda T: float(ph.evaluate(rho, T, comp, ionization="chemical").h2_fraction))
    T_ind = half(f_h2_independent)
    assert T_code == pytest.approx(T_ind, rel=2e-3)


def test_h2_dissociation_at_one_atmosphere_matches_a_published_value():
    """Hydrogen at 3000 K and 1 atm is dissociated to 7.85 % (degree of dissociation alpha: of the H2 molecules
    of the cold gas, the share split into atoms; Greenwood & Earnshaw, Chemistry of the Elements, 2nd ed. 1997,
    as quoted in reference works). The fraction of H nuclei in H2 is (1 - alpha) / (1 - alpha + alpha) =
    1 - alpha. The density is found so that the code's own P is 1 atm. Within 15 % of the published value."""
    comp = COMPOSITIONS["hydrogen"]
    T, P_atm = 3000.0, 1.01325e6
    rho = P_atm / (const.k_B * T) * 2.0 * 1.00782503 * const.m_u         # all H2, ideal: a start
    for _ in range(40):
        s = ph.evaluate(rho, T, comp, ionization="chemical")
        rho *= P_atm / float(s.P)
    assert float(s.P) == pytest.approx(P_atm, rel=1e-10)
    alpha = 1.0 - float(s.h2_fraction)
    assert alpha == pytest.approx(0.0785, rel=0.15)


def test_h2_gone_once_kT_exceeds_its_binding_even_in_dense_matter():
    """kT = 26 eV >> D0 = 4.5 eV at 3e5 K: with Planck-Larkin weights for its levels, H2 is a trace
    (< 1e-3 of H) at 1 g cm^-3 and gone at low density; the plain bound-level sum (~2700 levels) kept
    2.7 % at 3e5 K and 1e-6 up to ~3e6 K there."""
    comp = COMPOSITIONS["solar-like"]
    s = ph.evaluate(np.array([1e-2, 1.0, 1.0]), np.array([3e5, 3e5, 1e6]), comp, ionization="chemical")
    assert s.h2_fraction[0] < 1e-8 and s.h2_fraction[1] < 1e-3 and s.h2_fraction[2] < 1e-6


def test_fully_ionized_limit_equals_the_fully_ionized_equation_of_state():
    """Hot or dense matter with no bound state left: P and S equal those of fully ionized matter with the
    same physics: the Fermi-Dirac electron-positron gas, ideal ions, the liquid one-component-plasma
    Coulomb term of every ion and the electrons' exchange-correlation (physics.matter with
    ionization="full", physics.coulomb.coulomb_part, physics.eos.electron_xc, radiation). The chemical
    picture does not have the crystal, the quantum ions or the screening yet, so the default
    ``evaluate(ionization="full")`` (which has them) is not the reference here.

    E differs by a constant: the chemical picture counts energy from neutral atoms, so full ionization
    carries sum_i N_i E_Z(i) (every ionization energy of every nucleus), which the fully ionized option
    leaves out.
    """
    from thermoplane.physics.coulomb import coulomb_part
    from thermoplane.physics.matter import matter
    from thermoplane.physics.thermo import radiation
    comp = COMPOSITIONS["solar-like"]
    rho = np.array([1e-3, 1.0, 1e3, 1e5, 1e6])
    T = np.array([1e8, 3e8, 3e8, 1e9, 3e8])
    a = ph.evaluate(rho, T, comp, ionization="chemical")
    from thermoplane.physics.eos.electron_xc import electron_xc_free_energy
    ref = (matter(rho, T, comp, "fermi", "full", True).part + coulomb_part(rho, T, comp.X, comp.A, comp.Z)
           + radiation(rho, T, const.a_rad))
    # exchange-correlation of the net electrons, F = N_e kT f(ln n_e, ln T): P = n_e kT f_n,
    # E = -(n_e / rho) kT f_T, S = -(n_e / rho) k (f + f_T) per gram
    n_e = rho * float(np.sum(comp.X / (comp.A * const.m_u) * comp.Z))
    f, fn, fT = electron_xc_free_energy(n_e, T)[:3]
    P_ref = ref.P + n_e * const.k_B * T * fn
    E_ref = ref.E - n_e / rho * const.k_B * T * fT
    S_ref = ref.S - n_e / rho * const.k_B * (f + fT)
    assert np.allclose(a.P, P_ref, rtol=1e-6)
    assert np.allclose(a.S, S_ref, rtol=1e-6)
    offset = 0.0
    for name, X in comp.to_dict().items():
        nuc = ph.NUCLIDES[name]
        chi = atomic_data.ionization_data(nuc.Z)[0]
        offset += X / (nuc.A * const.m_u) * float(np.sum(chi)) * const.eV
    assert np.allclose(a.E - offset, E_ref, rtol=1e-6)
