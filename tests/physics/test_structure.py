"""Tests of physics/structure.py: Lane–Emden polytropes, Eddington's quartic,
central lines of stars of given mass and polytrope profiles."""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermoplane.physics import Composition
from thermoplane.physics import constants as const
from thermoplane.physics.structure import (central_line, eddington_beta, eddington_coefficient, lane_emden,
                               polytrope_constants, polytrope_profile, temperature_for_pressure)

SOLAR_LIKE = Composition.from_xyz(0.70, 0.28, 0.02)
CLASSICAL = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)
# Degenerate electrons only, so the test isolates degeneracy from the other options.
FERMI = dict(electrons="fermi", ionization="full", coulomb=False, pairs=False)


def _fermi_electrons_available() -> bool:
    """True once electrons="fermi" really gives degenerate pressure.

    The option may exist before the Fermi–Dirac electrons are wired in; then
    it either raises ValueError or returns the classical n_e k T.
    """
    from thermoplane.physics import evaluate
    try:
        evaluate(1.0, 1e7, SOLAR_LIKE, electrons="fermi")
        s = evaluate(1e6, 1e4, SOLAR_LIKE, **FERMI)
    except ValueError:
        return False
    n_e = 1e6 / (SOLAR_LIKE.mu_e * const.m_u)
    return float(s.P_e) > 100.0 * n_e * const.k_B * 1e4


needs_fermi = pytest.mark.skipif(not _fermi_electrons_available(),
                                 reason='electrons="fermi" not yet wired into physics.eos.evaluate')


# -- Lane–Emden -------------------------------------------------------------

def test_n3_first_zero_and_omega():
    # xi_1 = 6.89685, omega_3 = 2.01824 (Chandrasekhar 1939, table; from memory)
    sol = lane_emden(3)
    assert sol.xi_1 == pytest.approx(6.89685, abs=2e-5)
    assert sol.omega_n == pytest.approx(2.01824, abs=2e-5)


def test_n1_analytic():
    sol = lane_emden(1, n_points=300)
    assert sol.xi_1 == pytest.approx(math.pi, rel=1e-9)
    xi = sol.xi[1:]
    np.testing.assert_allclose(sol.theta[1:], np.sin(xi) / xi, atol=1e-9)
    np.testing.assert_allclose(sol.dtheta[1:], (xi * np.cos(xi) - np.sin(xi)) / xi**2, atol=1e-9)
    assert sol.omega_n == pytest.approx(math.pi, rel=1e-9)      # -pi^2 * (-1/pi)


def test_n0_analytic():
    sol = lane_emden(0, n_points=100)
    assert sol.xi_1 == pytest.approx(math.sqrt(6.0), rel=1e-10)
    np.testing.assert_allclose(sol.theta, 1 - sol.xi**2 / 6, atol=1e-10)
    assert sol.omega_n == pytest.approx(6.0 ** 1.5 / 3, rel=1e-9)


def test_xi_max_truncates_and_starts_at_centre():
    sol = lane_emden(3, xi_max=2.0, n_points=11)
    assert sol.xi[0] == 0.0 and sol.xi[-1] == pytest.approx(2.0)
    assert sol.theta[0] == 1.0 and sol.dtheta[0] == 0.0
    assert np.all(np.diff(sol.theta) < 0)
    assert lane_emden(3, xi_max=50.0).xi[-1] == pytest.approx(6.89685, abs=2e-5)


def test_polytrope_constants_n3():
    pc = polytrope_constants(3)
    # W_3 = 0.3639 (from memory); rho_c/<rho> = 54.18 (Chandrasekhar 1939; from memory)
    assert pc.W_n == pytest.approx(0.3639, rel=1e-3)
    assert pc.rho_c_over_mean == pytest.approx(54.18, rel=1e-3)


def test_polytrope_constants_n1_analytic():
    # n = 1: omega = xi_1 = pi, so W_1 = (4 pi)^(1/3) / (2 pi^(2/3)) and rho_c/<rho> = pi^2/3
    pc = polytrope_constants(1)
    assert pc.W_n == pytest.approx((4 * math.pi) ** (1 / 3) / (2 * math.pi ** (2 / 3)), rel=1e-9)
    assert pc.rho_c_over_mean == pytest.approx(math.pi**2 / 3, rel=1e-9)


@pytest.mark.parametrize("n", [-1, 5, 6, float("nan"), "three"])
def test_bad_index(n):
    with pytest.raises(ValueError, match="polytropic index"):
        lane_emden(n)


# -- Eddington's quartic ------------------------------------------------------

def test_eddington_coefficient_value():
    # 0.00299 (Eddington 1926 standard model; from memory)
    assert eddington_coefficient() == pytest.approx(0.00299, rel=2e-3)


def test_eddington_beta_against_numpy_roots():
    masses = np.array([0.1, 1.0, 3.0, 10.0, 30.0, 100.0, 1000.0])
    mu = 0.61
    beta = eddington_beta(masses, mu)
    c = eddington_coefficient()
    for M, b in zip(masses, beta):
        roots = np.roots([c * mu**4 * M**2, 0.0, 0.0, 1.0, -1.0])
        real = roots[(abs(roots.imag) < 1e-12) & (roots.real > 0) & (roots.real <= 1)].real
        assert len(real) == 1
        assert b == pytest.approx(real[0], rel=1e-10)


def test_eddington_beta_broadcasts_and_limits():
    beta = eddington_beta(np.array([1.0, 10.0])[:, None], np.array([0.5, 1.0, 2.0])[None, :])
    assert beta.shape == (2, 3)
    assert np.all((beta > 0) & (beta <= 1))
    assert np.all(np.diff(beta, axis=1) < 0) and np.all(np.diff(beta, axis=0) < 0)
    with pytest.raises(ValueError, match="mass_msun"):
        eddington_beta(-1.0, 0.6)
    with pytest.raises(ValueError, match="mu"):
        eddington_beta(1.0, 0.0)


# -- central line -------------------------------------------------------------

def test_central_line_classical_ideal_gas_limit():
    # T_c = W_3 G M^(2/3) mu m_u rho_c^(1/3) / k for an ideal gas without
    # radiation (derived from P_c = W_3 G M^(2/3) rho_c^(4/3)); radiation is
    # ~1e-6 of the pressure at 0.05 M_sun, so agreement to 1e-3.
    rho_c = np.logspace(-2, 8, 41)
    M = 0.05
    T_c = central_line(M, SOLAR_LIKE, rho_c, **CLASSICAL)
    W3 = polytrope_constants(3).W_n
    expected = W3 * const.G * (M * const.M_sun) ** (2 / 3) * SOLAR_LIKE.mu * const.m_u * rho_c ** (1 / 3) / const.k_B
    np.testing.assert_allclose(T_c, expected, rtol=1e-3)


def test_central_line_reproduces_required_pressure():
    from thermoplane.physics import evaluate
    rho_c = np.array([1.0, 100.0, 1e4])
    T_c = central_line(1.0, SOLAR_LIKE, rho_c, **CLASSICAL)
    P = evaluate(rho_c, T_c, SOLAR_LIKE, **CLASSICAL).P
    W3 = polytrope_constants(3).W_n
    np.testing.assert_allclose(P, W3 * const.G * const.M_sun ** (2 / 3) * rho_c ** (4 / 3), rtol=1e-9)


def test_central_line_nan_when_out_of_bracket():
    # 1e-6 M_sun at rho_c = 1e-2: the required T_c is far below 1e3 K
    assert np.isnan(central_line(1e-6, SOLAR_LIKE, 1e-2, **CLASSICAL))


def test_central_line_bad_input():
    with pytest.raises(ValueError, match="mass_msun"):
        central_line(0.0, SOLAR_LIKE, 1.0)
    with pytest.raises(ValueError, match="rho_c"):
        central_line(1.0, SOLAR_LIKE, -1.0)
    with pytest.raises(ValueError, match="option"):
        central_line(1.0, SOLAR_LIKE, 1.0, electrons="quantum")


@needs_fermi
def test_low_mass_line_stays_cool_with_degenerate_electrons():
    rho_c = np.logspace(-2, 8, 121)
    low = central_line(0.05, SOLAR_LIKE, rho_c, **FERMI)
    sun = central_line(1.0, SOLAR_LIKE, rho_c, **FERMI)
    # far below: less than 1/5 (common practice, no source: brown dwarfs never
    # reach hydrogen ignition while solar-mass stars do)
    assert np.nanmax(low) < 0.2 * np.nanmax(sun)


@needs_fermi
def test_low_mass_line_has_interior_maximum():
    rho_c = np.logspace(-2, 8, 121)
    low = central_line(0.05, SOLAR_LIKE, rho_c, **FERMI)
    i = int(np.nanargmax(low))
    assert 0 < i < len(rho_c) - 1
    # beyond the maximum the line turns down; at the densest end T_c may fall
    # below the 1e3 K search floor (NaN) once cold degenerate pressure suffices
    assert np.isnan(low[-1]) or low[-1] < 0.5 * low[i]
    assert np.isfinite(low[0])


# -- profiles -------------------------------------------------------------------

def test_profile_centre_matches_central_line_and_rho_decreases():
    df = polytrope_profile(1.0, SOLAR_LIKE, 100.0, n_points=80, **CLASSICAL)
    assert list(df.columns) == ["r_frac", "m_frac", "rho", "T", "P"]
    assert len(df) == 80
    assert df["r_frac"].iloc[0] == 0.0 and df["m_frac"].iloc[0] == 0.0
    assert df["rho"].iloc[0] == pytest.approx(100.0)
    T_c = float(central_line(1.0, SOLAR_LIKE, 100.0, **CLASSICAL))
    assert df["T"].iloc[0] == pytest.approx(T_c, rel=1e-9)
    assert np.all(np.diff(df["rho"]) < 0)
    assert np.all(np.diff(df["P"]) < 0)
    assert np.all(np.diff(df["m_frac"]) > 0) and df["m_frac"].iloc[-1] < 1.0 + 1e-9
    assert df["r_frac"].iloc[-1] < 1.0


def test_temperature_for_pressure_inverts_eos():
    from thermoplane.physics import evaluate
    rho = np.array([1e-4, 1.0, 1e5])
    T = np.array([2e4, 3e6, 5e8])
    P = evaluate(rho, T, SOLAR_LIKE, **CLASSICAL).P
    np.testing.assert_allclose(temperature_for_pressure(rho, P, SOLAR_LIKE, **CLASSICAL), T, rtol=1e-9)
