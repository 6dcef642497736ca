"""The full equation of state: limits, Saha, consistency and the domain, each against an outside value."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from thermoplane import physics as ph

SUN_LIKE = ph.Composition.from_xyz(0.70, 0.28, 0.02)

k_cgs = sc.k * 1e7
m_e_cgs = sc.m_e * 1e3
h_cgs = sc.h * 1e7
eV_cgs = sc.eV * 1e7


def test_defaults_are_the_full_physics():
    assert {k: v[0] for k, v in ph.OPTIONS.items()} == dict(electrons="fermi", ionization="saha",
                                                             coulomb=True, pairs=True)


def test_standard_solar_model_centre():
    # Bahcall, Serenelli & Basu 2005 (from memory): rho = 153, T = 1.57e7 K, X = 0.346, Z = 0.02,
    # P = 2.34e17 dyn cm^-2; the full physics within 3 %
    comp = ph.Composition.from_xyz(0.346, 0.634, 0.02)
    s = ph.evaluate(153.0, 1.57e7, comp)
    assert float(s.P) == pytest.approx(2.34e17, rel=0.03)
    assert float(s.ion_H) > 0.999 and float(s.beta) > 0.99


@pytest.mark.parametrize("rho, T, g1, nab, tol", [
    # ideal gas; a trace of neutral H (1 %) and Debye-Hueckel with the electrons (Gamma = 0.1: ions,
    # electron screening and electron correlation together, about 3 times the ion-only term) lower nabla_ad
    (1e-2, 5e5, 5 / 3, 0.4, 1e-2),
    (1e-9, 1e8, 4 / 3, 0.25, 1e-8),    # radiation (no pairs at 1e8 K)
])
def test_pure_limits_full_physics(rho, T, g1, nab, tol):
    # ideal gas 5/3, 2/5; radiation 4/3, 1/4 (Chandrasekhar 1939), for pure hydrogen with the full physics
    s = ph.evaluate(rho, T, ph.Composition({"H-1": 1.0}))
    assert float(s.gamma1) == pytest.approx(g1, rel=tol)
    assert float(s.nabla_ad) == pytest.approx(nab, rel=tol)


def test_gas_plus_radiation_full_physics_against_chandrasekhar():
    # Chandrasekhar (1939) formulas in beta; the full physics in fully ionized, non-degenerate,
    # weakly coupled matter agrees to the size of its Coulomb and degeneracy corrections
    rho = np.logspace(-6, -2, 9)
    T = ph.equality_temperature(rho, SUN_LIKE) * np.linspace(0.4, 2.5, 9)
    s = ph.evaluate(rho, T, SUN_LIKE)
    b, g = s.beta, 5 / 3
    np.testing.assert_allclose(s.gamma1, b + (4 - 3 * b) ** 2 * (g - 1) / (b + 12 * (g - 1) * (1 - b)), rtol=2e-3)
    np.testing.assert_allclose(s.nabla_ad, (8 - 6 * b) / (32 - 24 * b - 3 * b**2), rtol=2e-3)


def test_saha_pure_hydrogen_low_density():
    # x^2/(1-x) = (1/n_H) (2 pi m_e k T / h^2)^(3/2) exp(-chi/kT), g0 = 2, g+ = 1 (Saha 1920),
    # solved here by the quadratic formula; chi_H = 13.598434 eV (NIST ASD)
    comp = ph.Composition({"H-1": 1.0})
    rho = 1e-9
    T = np.linspace(7e3, 2e4, 14)
    s = ph.evaluate(rho, T, comp, coulomb=False)
    n_H = rho / (1.00782503223 * sc.physical_constants["atomic mass constant"][0] * 1e3)
    K = (2 * np.pi * m_e_cgs * k_cgs * T / h_cgs**2) ** 1.5 * np.exp(-13.598434 * eV_cgs / (k_cgs * T)) / n_H
    x = (-K + np.sqrt(K * K + 4 * K)) / 2
    np.testing.assert_allclose(s.ion_H, x, rtol=1e-5)
    assert x.min() < 0.05 and x.max() > 0.95          # the test spans the whole ionization


def test_pressure_ionization_completes_above_10_g_cc():
    # PHYSICS.md requirement: H and He more than 99 % ionized at rho >= 10 g cm^-3 at every T
    for comp in (SUN_LIKE, ph.Composition({"He-4": 1.0}), ph.Composition({"H-1": 1.0})):
        rho = np.logspace(1, 4, 13)[None, :]
        T = np.logspace(3, 6, 31)[:, None]
        s = ph.evaluate(rho, T, comp)
        if comp.hydrogen:
            assert s.ion_H.min() > 0.99
        if comp.helium:
            assert s.ion_He2.min() > 0.99


def test_ionization_is_continuous_across_pressure_ionization():
    # no jump: on a 1e-4 dex density line through pressure ionization the ionized fractions change by
    # small steps at 1e4 and 1e5 K; at 1e3 K the crossover is steep (the log of the Saha ratio must climb
    # from about -1500 to +12) but still continuous: refining the grid 100x around the steepest step
    # shrinks it well below the coarse step
    rho = np.logspace(-1, 1.2, 22001)
    for T in (1e4, 1e5):
        s = ph.evaluate(rho, T, SUN_LIKE)
        assert np.max(np.abs(np.diff(s.ion_H))) < 0.03
        assert np.max(np.abs(np.diff(s.ion_He2))) < 0.03
    s = ph.evaluate(rho, 1e3, SUN_LIKE)
    assert s.ion_H[0] < 0.5 < s.ion_H[-1] and s.ion_He2[0] < 0.5 < s.ion_He2[-1]
    for name in ("ion_H", "ion_He2"):
        steps = np.abs(np.diff(getattr(s, name)))
        i = int(np.argmax(steps))
        fine = ph.evaluate(np.geomspace(rho[i], rho[i + 1], 101), 1e3, SUN_LIKE)
        assert np.max(np.abs(np.diff(getattr(fine, name)))) < steps[i] / 10


# One point in each regime: ideal gas, radiation, degenerate, relativistic degenerate, pairs,
# partial H ionization, He II zone, strong coupling (log rho, log T)
REGIME_POINTS = [(0.0, 7.0), (-8.0, 8.0), (6.0, 6.0), (9.0, 7.0), (-6.0, 9.5), (-8.0, 4.0),
                 (-6.0, 4.7), (5.0, 5.0), (-3.0, 6.0), (2.0, 7.3)]


@pytest.mark.parametrize("log_rho, log_T", REGIME_POINTS)
def test_thermodynamic_consistency_in_every_regime(log_rho, log_T):
    # (dE/drho)_T = (P - T (dP/dT)_rho) / rho^2 and (dS/dT)_rho = c_V / T (thermodynamic identities)
    s = ph.evaluate(10.0**log_rho, 10.0**log_T, SUN_LIKE)
    rhs = (s.P - s.T * s.dP_dT) / s.rho**2
    scale = abs(s.E / s.rho) + abs(s.P / s.rho**2)
    assert abs(float(s.dE_drho - rhs)) / float(scale) < 1e-8
    assert float(s.dS_dT) == pytest.approx(float(s.c_V / s.T), rel=1e-8)


# The Coulomb correction is scaled by the square of the ionized fraction, held fixed in the
# derivatives (physics/eos.py): where ionization is partial and coupling not negligible, the
# response functions differ from the slope of P by up to ~1e-3; elsewhere they are exact.
PARTIAL_WITH_COULOMB = {(-8.0, 4.0), (-6.0, 4.7), (0.0, 7.0)}
# (the non-ideal terms now include electron screening and exchange-correlation, about three times the
# ion-only Debye-Hueckel term at weak coupling, so the held-fixed scale costs up to ~2e-3 there)
DEGENERATE = {(6.0, 6.0), (9.0, 7.0), (5.0, 5.0)}


@pytest.mark.parametrize("log_rho, log_T", REGIME_POINTS)
@pytest.mark.parametrize("coulomb", [False, True])
def test_derivatives_match_finite_differences_of_the_code(log_rho, log_T, coulomb):
    # the analytic derivatives against central differences of P_gas and E (a check of the chain rules)
    rho, T = 10.0**log_rho, 10.0**log_T
    tol = 5e-3 if coulomb and (log_rho, log_T) in PARTIAL_WITH_COULOMB else 1e-5
    if (log_rho, log_T) in DEGENERATE:
        tol = 3e-4        # the tabulated electron free energy gives c_V of degenerate matter to ~3e-5
    ev = lambda r, t: ph.evaluate(r, t, SUN_LIKE, coulomb=coulomb)  # noqa: E731
    s = ev(rho, T)
    h = 1e-6
    sp, sm = ev(rho * (1 + h), T), ev(rho * (1 - h), T)
    if float(s.dP_drho * rho / s.P_gas) > 1e-6:     # in pair plasma P_gas hardly depends on rho at all
        assert float(s.dP_drho) == pytest.approx(float((sp.P_gas - sm.P_gas) / (2 * h * rho)), rel=tol)
    tp, tm = ev(rho, T * (1 + h)), ev(rho, T * (1 - h))
    assert float(s.dP_dT) == pytest.approx(float((tp.P - tm.P) / (2 * h * T)), rel=tol)
    # the electron table's c_V error (~1e-5 of the electrons' own c_V where degenerate) sets the scale: with
    # quantum ions the total c_V can be a small difference of ion and electron parts
    assert float(s.c_V) == pytest.approx(float((tp.E - tm.E) / (2 * h * T)), abs=tol * abs(float(s.c_V_e)),
                                         rel=tol)


def test_domain_every_point_is_physical():
    # finite positive P, real sound speed (gamma1 > 0), 0 <= beta <= 1, no numpy warnings
    rho = np.logspace(-12, 12, 121)[None, :]
    T = np.logspace(3, 11, 81)[:, None]
    with np.errstate(all="raise", under="ignore"):
        s = ph.evaluate(rho, T, SUN_LIKE)
    for name, value in s.as_dict().items():
        assert np.all(np.isfinite(value)), name
    assert np.all(s.P > 0) and np.all(s.gamma1 > 0)
    assert np.all((s.beta >= 0) & (s.beta <= 1))
    assert np.all(s.chi_rho > 0)
    # chi_T > 0; in the extreme-degeneracy corner (eta > 3e4: a quantum crystal in a degenerate electron
    # gas) the thermal pressure is below 1e-8 of P, under the electron table's noise (measured: chi_T down
    # to -8e-9 there)
    # Left out as well: weakly coupled quantum ions (liquid, T < T_p/2, Gamma < 10: fully ionized hydrogen
    # above ~1e9 g/cm^3), which no term of the model describes (README, limits); measured chi_T >= -0.008
    weak_quantum = (s.crystallized == 0) & (s.T < 0.5 * s.T_p) & (s.Gamma < 10)
    assert np.all((s.chi_T > 0) | ((s.eta > 3e4) & (s.chi_T > -1e-7)) | weak_quantum)


@settings(max_examples=40, deadline=None)
@given(log_rho=st.floats(-12, 11.9), log_T=st.floats(3, 10.9), X=st.floats(0, 1))
def test_pressure_increases_with_density_and_temperature(log_rho, log_T, X):
    comp = ph.Composition.from_xyz(X * 0.98, (1 - X) * 0.98, 0.02)
    rho, T = 10.0**log_rho, 10.0**log_T
    s = ph.evaluate(np.array([rho, rho * 1.01, rho]), np.array([T, T, T * 1.01]), comp)
    # Where the non-ideal correction is more than half the pressure (helium- and metal-rich matter below
    # ~3e3 K inside the pressure-ionization band, where the Coulomb term follows the ionized fraction) the
    # default model is outside its validity and P can fall, or go negative: README, "Known limits", and the
    # free-energy issue. Measured, not hidden: tests/physics/test_eos.py::test_the_known_non_monotonic_corner.
    assume(not np.any(np.abs(s.P_coul) > 0.5 * np.abs(s.P)))
    assert s.P[1] >= s.P[0] * (1 - 1e-12)
    if not (s.crystallized[0] == 0 and s.T[0] < 0.5 * s.T_p[0] and s.Gamma[0] < 10):
        # (weakly coupled quantum ions, fully ionized H above ~1e9 g/cm^3, are outside the model: README)
        assert s.P[2] >= s.P[0] * (1 - 1e-10)  # a quantum crystal's thermal pressure can be < 1e-10 P


def test_the_known_non_monotonic_corner():
    # helium-rich matter at 1e3 K across pressure ionization: P falls with density and turns negative
    # (the Coulomb term scaled by the square of the ionized fraction; README "Known limits"). This pins the
    # defect so that the free-energy work shows when it is gone.
    comp = ph.Composition.from_xyz(0.0, 0.98, 0.02)
    rho = 10.0 ** np.array([0.59375, 0.59375 + np.log10(1.01)])
    s = ph.evaluate(rho, np.full(2, 1e3), comp)
    assert s.P[1] < s.P[0] and s.P[1] < 0 and np.abs(s.P_coul[1]) > 0.5 * abs(s.P[1])


@pytest.mark.parametrize("rho, T, fragment", [(-1.0, 1e7, "rho"), (1.0, -5.0, "T"), (np.inf, 1e7, "rho")])
def test_bad_input(rho, T, fragment):
    with pytest.raises(ValueError, match=fragment):
        ph.evaluate(rho, T, SUN_LIKE)


def test_hot_matter_stays_ionized_in_the_pair_plasma():
    # kT >> chi: H and He are fully ionized above a few 1e8 K at any density (common practice, no source);
    # ground-state Saha alone would recombine H where the pair plasma makes exp(-eta) of order 1
    s = ph.evaluate(np.logspace(-12, 6, 19)[None, :], np.logspace(8.5, 11, 11)[:, None], SUN_LIKE)
    assert s.ion_H.min() > 0.999 and s.ion_He2.min() > 0.999
