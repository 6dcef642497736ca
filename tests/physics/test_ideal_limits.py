"""The ideal gas plus radiation (electrons="classical", ionization="full", no Coulomb, no pairs)."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc

from thermoplane import physics as ph

CLASSICAL = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)


def test_hand_computation_solar_centre_like_point():
    # rho = 160 g cm^-3, T = 1.5e7 K, X = 0.34, Y = 0.64, Z = 0.02:
    # P_rad = a T^4 / 3 = 1.28e14 dyn cm^-2 with a = 7.5657e-15 (common practice, no source)
    comp = ph.Composition.from_xyz(0.34, 0.64, 0.02)
    s = ph.evaluate(160.0, 1.5e7, comp, **CLASSICAL)
    assert float(s.P_rad) == pytest.approx(7.5657e-15 * 1.5e7**4 / 3, rel=1e-4)
    assert float(s.P_rad) == pytest.approx(1.28e14, rel=0.01)
    # P_gas = rho k T / (mu m_u), recomputed here from scipy.constants (SI -> cgs)
    k = sc.k * 1e7
    m_u = sc.physical_constants["atomic mass constant"][0] * 1e3
    assert float(s.P_gas) == pytest.approx(160.0 * k * 1.5e7 / (comp.mu * m_u), rel=1e-12)
    assert float(s.P_gas) == pytest.approx(2.3e17, rel=0.02)


@pytest.mark.parametrize("rho, T, beta_expected", [(1e3, 1e6, 1.0), (1e-10, 1e9, 0.0)])
def test_adiabatic_exponents_in_the_pure_limits(rho, T, beta_expected):
    # ideal gas 5/3, 2/5; radiation 4/3, 1/4 (Chandrasekhar 1939)
    s = ph.evaluate(rho, T, ph.Composition({"He-4": 1.0}), **CLASSICAL)
    assert float(s.beta) == pytest.approx(beta_expected, abs=1e-6)
    g1, nab = (5 / 3, 0.4) if beta_expected == 1.0 else (4 / 3, 0.25)
    assert float(s.gamma1) == pytest.approx(g1, rel=1e-5)
    assert float(s.nabla_ad) == pytest.approx(nab, rel=1e-5)


def test_gas_plus_radiation_against_chandrasekhar():
    # Gamma_1 = beta + (4 - 3 beta)^2 (gamma - 1)/(beta + 12 (gamma - 1)(1 - beta)),
    # nabla_ad = (8 - 6 beta)/(32 - 24 beta - 3 beta^2)  (Chandrasekhar 1939)
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    rho = np.logspace(-8, 2, 21)
    T = ph.equality_temperature(rho, comp, **CLASSICAL) * np.linspace(0.3, 3, 21)
    s = ph.evaluate(rho, T, comp, **CLASSICAL)
    b, g = s.beta, 5 / 3
    np.testing.assert_allclose(s.gamma1, b + (4 - 3 * b) ** 2 * (g - 1) / (b + 12 * (g - 1) * (1 - b)), rtol=1e-10)
    np.testing.assert_allclose(s.nabla_ad, (8 - 6 * b) / (32 - 24 * b - 3 * b**2), rtol=1e-10)


def test_equality_temperature_textbook_line():
    # T = 3.21e7 K (rho/mu)^(1/3) for a non-degenerate, fully ionized gas (Kippenhahn, Weigert & Weiss 2012)
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    rho = np.logspace(-8, 4, 7)
    T = ph.equality_temperature(rho, comp, **CLASSICAL)
    np.testing.assert_allclose(T, 3.21e7 * (rho / comp.mu) ** (1 / 3), rtol=3e-3)
    s = ph.evaluate(rho, T, comp, **CLASSICAL)
    np.testing.assert_allclose(s.P_rad, s.P_gas, rtol=1e-9)


@pytest.mark.parametrize("rho, T, fragment", [(-1.0, 1e7, "rho"), (1.0, np.nan, "T"), (1.0, 0.0, "T")])
def test_bad_input_names_the_value(rho, T, fragment):
    with pytest.raises(ValueError, match=fragment):
        ph.evaluate(rho, T, ph.Composition({"H-1": 1.0}))


def test_unknown_option():
    with pytest.raises(ValueError, match="unknown physics option"):
        ph.evaluate(1.0, 1e7, ph.Composition({"H-1": 1.0}), magnetism=True)
    with pytest.raises(ValueError, match="not allowed"):
        ph.evaluate(1.0, 1e7, ph.Composition({"H-1": 1.0}), electrons="quantum")


def test_broadcast_shape():
    s = ph.evaluate(np.ones((3, 1)), np.full((1, 4), 1e7), ph.Composition({"H-1": 1.0}))
    assert s.P.shape == (3, 4) and s.gamma1.shape == (3, 4)
