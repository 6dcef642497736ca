"""Tests of physics/burning.py: nuclear energy generation fits and ignition contours.

Coefficient check done before these tests were written (see the module
docstring): the pp, CNO and triple-alpha fit constants and the Caughlan &
Fowler (1988) C-12 + C-12 expression were compared with independent public
implementations and notes found by search; the formulas re-typed below are
those checked values, written out independently of the module.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from thermoplane.physics import Composition
from thermoplane.physics import constants as const
from thermoplane.physics.burning import (PROCESS_LABELS, PROCESSES, SCREENING_EXPONENT_CAP, IgnitionLine,
                             carbon_q_value, epsilon, ignition_contours, screening_factor)

SUN_CENTRE = Composition.from_xyz(0.34, 0.64, 0.02)
SOLAR_LIKE = Composition.from_xyz(0.70, 0.28, 0.02)
HELIUM = Composition({"He-4": 1.0})
CARBON_OXYGEN = Composition({"C-12": 0.5, "O-16": 0.5})


def salpeter(rho, T, comp, z1z2):
    """Weak screening exponent, written out again (Salpeter 1954)."""
    zeta = math.sqrt(sum(z * (z + 1) * x / a for z, x, a in zip(comp.Z, comp.X, comp.A)))
    return min(0.188 * z1z2 * zeta * math.sqrt(rho) * (T / 1e6) ** -1.5, SCREENING_EXPONENT_CAP)


def test_pp_at_solar_centre_within_factor_two_of_ssm():
    # Standard solar model centre (rho 150, T 1.57e7 K, X 0.34): central
    # epsilon ~ 17.5 erg/g/s (Bahcall, Pinsonneault & Basu 2001 SSM; from memory).
    eps = float(epsilon(150.0, 1.57e7, SUN_CENTRE, "pp"))
    assert 17.5 / 2 < eps < 17.5 * 2


def test_pp_matches_formula_written_out():
    rho, T = 80.0, 1.2e7
    T9 = T / 1e9
    g11 = 1 + 3.82 * T9 + 1.51 * T9**2 + 0.144 * T9**3 - 0.0114 * T9**4
    f = math.exp(salpeter(rho, T, SOLAR_LIKE, 1))
    X = 0.70
    expected = 2.57e4 * f * g11 * rho * X**2 * T9 ** (-2 / 3) * math.exp(-3.381 / T9 ** (1 / 3))
    assert float(epsilon(rho, T, SOLAR_LIKE, "pp")) == pytest.approx(expected, rel=1e-12)


def test_cno_matches_formula_written_out():
    rho, T = 30.0, 2.5e7
    T9 = T / 1e9
    g14 = 1 - 2.00 * T9 + 3.41 * T9**2 - 2.43 * T9**3
    f = math.exp(salpeter(rho, T, SOLAR_LIKE, 7))
    # solar-like metals: C-12 0.18, N-14 0.05, O-16 0.45 of Z (physics.composition)
    X_cno = 0.02 * (0.18 + 0.05 + 0.45)
    expected = (8.24e25 * f * g14 * X_cno * 0.70 * rho * T9 ** (-2 / 3)
                * math.exp(-15.231 * T9 ** (-1 / 3) - (T9 / 0.8) ** 2))
    assert float(epsilon(rho, T, SOLAR_LIKE, "cno")) == pytest.approx(expected, rel=1e-12)


def test_pp_cno_crossover_near_17_million_kelvin():
    # Crossover near 1.7e7 K for a solar-like mix (common practice, no source).
    T = np.logspace(math.log10(1.2e7), math.log10(2.5e7), 4001)
    ratio = epsilon(100.0, T, SOLAR_LIKE, "pp") / epsilon(100.0, T, SOLAR_LIKE, "cno")
    assert ratio[0] > 1 > ratio[-1]
    T_cross = T[np.argmax(ratio < 1)]
    assert 1.5e7 < T_cross < 2.0e7


def test_triple_alpha_independent_formula_and_a_few_erg():
    rho, T = 1e4, 1e8
    T8 = T / 1e8
    # screening of He-4 + He-4 (Z1 Z2 = 4) and Be-8 + He-4 (Z1 Z2 = 8)
    f = math.exp(salpeter(rho, T, HELIUM, 4) + salpeter(rho, T, HELIUM, 8))
    expected = 5.09e11 * f * rho**2 * 1.0**3 * T8**-3 * math.exp(-44.027 / T8)
    eps = float(epsilon(rho, T, HELIUM, "triple_alpha"))
    assert eps == pytest.approx(expected, rel=1e-12)
    assert 0.1 < eps < 100          # "a few erg/g/s" (common practice, no source)


def test_carbon_independent_evaluation():
    rho, T, X_C = 3e5, 7e8, 0.5
    T9 = T / 1e9
    T9a = T9 / (1 + 0.0396 * T9)
    rate = 4.27e26 * T9a ** (5 / 6) * T9**-1.5 * math.exp(-84.165 * T9a ** (-1 / 3) - 2.12e-3 * T9**3)
    n_C = rho * X_C / (12.0 * const.m_u)
    Q = 13.9336 * 1e6 * const.eV            # (2 M(C-12) - M(Mg-24)) c^2 (AME2020 masses)
    f = math.exp(salpeter(rho, T, CARBON_OXYGEN, 36))
    expected = Q * 0.5 * n_C**2 * (rate / const.N_A) / rho * f
    assert float(epsilon(rho, T, CARBON_OXYGEN, "carbon")) == pytest.approx(expected, rel=1e-4)


def test_carbon_q_value():
    # 13.93 MeV for 2 C-12 -> Mg-24 (AME2020 atomic masses, from memory)
    assert carbon_q_value() / (1e6 * const.eV) == pytest.approx(13.933, abs=2e-3)


def test_carbon_ignition_temperature_range():
    # Carbon burning sets in at a few 1e8 K (Kippenhahn, Weigert & Weiss 2012,
    # "T ~ 5-10 x 10^8 K"; from memory). With this fit and Q = 13.93 MeV the
    # 1e3 erg/g/s line sits at 5.0-5.5e8 K for rho = 1e5-1e6.
    line = ignition_contours(CARBON_OXYGEN, "carbon", (1e3,), log_rho=(5, 6), n=5)[0]
    T = 10.0**line.log_T
    assert np.all((4e8 < T) & (T < 8e8))
    assert np.all(np.diff(T) < 0)       # denser matter ignites cooler


@pytest.mark.parametrize("process", PROCESSES)
def test_ignition_contour_consistency(process):
    comp = {"pp": SOLAR_LIKE, "cno": SOLAR_LIKE, "triple_alpha": HELIUM, "carbon": CARBON_OXYGEN}[process]
    lines = ignition_contours(comp, process, n=60)
    assert [line.level for line in lines] == [1.0, 1e3]
    for line in lines:
        assert isinstance(line, IgnitionLine) and line.process == process
        ok = np.isfinite(line.log_T)
        assert ok.sum() > 10
        eps = epsilon(10.0 ** line.log_rho[ok], 10.0 ** line.log_T[ok], comp, process)
        np.testing.assert_allclose(eps, line.level, rtol=1e-6)


def test_ignition_labels_and_nan_outside():
    lines = ignition_contours(SOLAR_LIKE, "pp", n=20)
    assert lines[0].label == "pp chain: ε = 1 erg/g/s"
    assert lines[1].label == "pp chain: ε = 10^3 erg/g/s"
    # at rho = 1e-10 the pp chain cannot reach 1 erg/g/s below 1e10 K
    assert math.isnan(lines[0].log_T[0])
    assert set(PROCESS_LABELS) == set(PROCESSES)


def test_hotter_contour_for_higher_level():
    low, high = ignition_contours(HELIUM, "triple_alpha", n=40)
    both = np.isfinite(low.log_T) & np.isfinite(high.log_T)
    assert both.any()
    assert np.all(high.log_T[both] > low.log_T[both])


@pytest.mark.parametrize("process", PROCESSES)
def test_no_warnings_finite_nonnegative_everywhere(process):
    rho = np.logspace(-12, 12, 121)[:, None]
    T = np.logspace(3, 11, 121)[None, :]
    for comp in (SOLAR_LIKE, HELIUM, CARBON_OXYGEN, Composition({"H-1": 1.0})):
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            with np.errstate(all="raise"):
                eps = epsilon(rho, T, comp, process)
        assert eps.shape == (121, 121)
        assert np.all(np.isfinite(eps)) and np.all(eps >= 0)


def test_missing_fuel_gives_zero():
    assert float(epsilon(1e4, 1e8, HELIUM, "carbon")) == 0.0
    assert float(epsilon(100.0, 2e7, HELIUM, "pp")) == 0.0


def test_screening_factor_capped_and_at_least_one():
    f = screening_factor(np.logspace(-12, 12, 25), 1e3, HELIUM, 2, 2)
    assert np.all(f >= 1.0) and np.all(f <= math.exp(SCREENING_EXPONENT_CAP) * (1 + 1e-15))
    assert f[-1] == pytest.approx(math.exp(SCREENING_EXPONENT_CAP))


def test_screening_off():
    on = float(epsilon(1e4, 1e8, HELIUM, "triple_alpha"))
    off = float(epsilon(1e4, 1e8, HELIUM, "triple_alpha", screening=False))
    assert off == pytest.approx(5.09e11 * 1e8 * math.exp(-44.027), rel=1e-12)
    assert on > off


def test_broadcast_shape():
    eps = epsilon(np.array([1.0, 10.0, 100.0])[:, None], np.array([1e7, 2e7])[None, :], SOLAR_LIKE, "pp")
    assert eps.shape == (3, 2)


def test_bad_input():
    with pytest.raises(ValueError, match="pp, cno, triple_alpha, carbon"):
        epsilon(1.0, 1e7, SOLAR_LIKE, "neon")
    with pytest.raises(ValueError, match="rho"):
        epsilon(-1.0, 1e7, SOLAR_LIKE, "pp")
    with pytest.raises(ValueError, match="T"):
        epsilon(1.0, np.nan, SOLAR_LIKE, "pp")
    with pytest.raises(ValueError, match="level"):
        ignition_contours(SOLAR_LIKE, "pp", epsilon_levels=(0.0,))
    with pytest.raises(ValueError, match="log_rho"):
        ignition_contours(SOLAR_LIKE, "pp", log_rho=(5, 1))
    with pytest.raises(ValueError, match="unknown burning process"):
        ignition_contours(SOLAR_LIKE, "oxygen")
