"""Tests of physics.electrons: limits, identities and the neutrality solve."""

import warnings

import numpy as np
import pytest

from thermoplane.physics import constants as const
from thermoplane.physics.electrons import electron_gas, electron_state, solve_eta
from tests.physics.references import chandrasekhar_P

MC2 = const.m_e * const.c ** 2
NX = 8 * np.pi / 3 * (const.m_e * const.c / const.h) ** 3   # n at x_F = 1


@pytest.mark.parametrize("x", [0.1, 0.5, 1.0, 3.0, 10.0, 100.0])
def test_zero_temperature_pressure_chandrasekhar(x):
    n = NX * x ** 3
    s = electron_state(n, 1e3)            # kT / E_F < 4e-5: thermal part < 1e-8
    assert abs(float(s.gas.P) / chandrasekhar_P(x) - 1) < 1e-5


def _cold_P(x, T):
    theta = const.k_B * T / MC2
    eta = (np.sqrt(1 + x * x) - 1) / theta
    return float(electron_gas(eta, T, pairs=False).P), NX * x ** 3 * const.m_u


def test_polytropic_limits():
    P, rho_mue = _cold_P(1e-3, 1.0)
    assert abs(P / (1.0036e13 * rho_mue ** (5 / 3)) - 1) < 5e-5     # source: Chandrasekhar 1939
    P, rho_mue = _cold_P(1e4, 1e3)
    assert abs(P / (1.2435e15 * rho_mue ** (4 / 3)) - 1) < 5e-5     # source: Chandrasekhar 1939


def test_nondegenerate_ideal_gas():
    n, T = 1e10, np.array([1e4, 1e6, 1e8])
    s = electron_state(n, T, pairs=False)
    np.testing.assert_allclose(s.gas.P, n * const.k_B * T, rtol=1e-9)   # P = n k T, textbook


def test_hot_pairs_to_radiation_ratio():
    T = 1e12                                           # kT = 170 m_e c^2
    theta = const.k_B * T / MC2
    g = electron_gas(-1.0 / theta, T)                  # zero net charge: pure pairs
    P_rad = const.a_rad * T ** 4 / 3
    assert abs(float(g.P) / P_rad - 7 / 4) < 2e-3      # 7/4: two fermion species, 7/8 each (textbook)
    assert abs(float(g.n_net)) < 1e-12 * float(g.n_plus)


def test_positrons_vanish_at_low_temperature():
    s = electron_state(np.array([1e20, 1e26]), 1e7)
    assert np.all(s.gas.n_plus < 1e-100 * s.gas.n_minus)
    s = electron_state(1e20, 1e7, pairs=False)
    assert float(s.gas.n_plus) == 0.0


POINTS = [(-30.0, 1e6), (-2.0, 1e8), (0.5, 3e9), (8.0, 1e10), (40.0, 1e7), (3e3, 1e5), (-3.0, 1e11)]


@pytest.mark.parametrize("eta,T", POINTS)
def test_partials_match_central_differences(eta, T):
    g = electron_gas(eta, T)
    he = 1e-4 * max(1.0, abs(eta) / 30)   # step small against the e^eta scale
    hT = 1e-4 * T
    up, dn = electron_gas(eta + he, T), electron_gas(eta - he, T)
    upT, dnT = electron_gas(eta, T + hT), electron_gas(eta, T - hT)
    for q in ("n_net", "P", "E"):
        d_eta = {"n_net": g.dn_deta, "P": g.dP_deta, "E": g.dE_deta}[q]
        d_T = {"n_net": g.dn_dT, "P": g.dP_dT, "E": g.dE_dT}[q]
        fd_eta = (getattr(up, q) - getattr(dn, q)) / (2 * he)
        fd_T = (getattr(upT, q) - getattr(dnT, q)) / (2 * hT)
        scale = abs(getattr(g, q))
        assert abs(d_eta - fd_eta) < 1e-6 * max(abs(d_eta), scale / max(1.0, abs(eta))), (q, "eta")
        assert abs(d_T - fd_T) < 1e-6 * max(abs(d_T), scale / T), (q, "T")


NS = [(1e12, 1e4), (1e20, 1e6), (1e24, 1e7), (1e28, 1e8), (1e30, 3e9), (1e33, 1e9), (1e18, 1e10), (1e35, 1e11)]


@pytest.mark.parametrize("n,T", NS)
def test_energy_identity(n, T):
    # (d(E/n)/dn)_T = (P - T (dP/dT)_n) / n^2  (first law at fixed T; textbook)
    s = electron_state(n, T)
    lhs = float(s.dE_dn / n - s.gas.E / n ** 2)
    rhs = float((s.gas.P - T * s.dP_dT_n) / n ** 2)
    assert abs(lhs - rhs) < 1e-9 * max(abs(lhs), abs(float(s.gas.P / n ** 2)), abs(float(s.gas.E / n ** 2)))


@pytest.mark.parametrize("n,T", NS)
def test_entropy_is_minus_dF_dT(n, T):
    # per net electron: f = (E - T S)/n, S/n = -(df/dT)_n  (textbook)
    h = 1e-4 * T

    def f(TT):
        g = electron_state(n, TT).gas
        return float((g.E - TT * g.S) / n)

    s = electron_state(n, T).gas
    ref = -(f(T + h) - f(T - h)) / (2 * h)
    assert abs(float(s.S / n) - ref) < 1e-6 * abs(float(s.S / n)) + 1e-6 * abs(f(T)) / T


def test_solve_over_the_plane_without_warnings():
    lr, lT = np.meshgrid(np.linspace(-12, 12, 49), np.linspace(3, 11, 33))
    n, T = 10 ** lr / const.m_u, 10 ** lT
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        s = electron_state(n, T)
        eta = solve_eta(np.array([1e-14, 1e36]), np.array([1e3, 1e3]))
    np.testing.assert_allclose(s.gas.n_net, n, rtol=1e-12)
    assert np.all(np.isfinite(eta))
    # pair-dominated corner: net charge is a tiny part of the pairs but still exact
    assert float(s.gas.n_plus[-1, 0]) > 1e20 * float(n[-1, 0])
    np.testing.assert_allclose(electron_gas(eta, [1e3, 1e3]).n_net, [1e-14, 1e36], rtol=1e-12)


def test_entropy_formula_and_bad_input():
    g = electron_gas(np.array([-5.0, 2.0, 50.0]), 1e9)
    theta = const.k_B * 1e9 / MC2
    assert np.all(g.S > 0) and theta > 0
    with pytest.raises(ValueError, match="n_net"):
        electron_state(-1.0, 1e6)
    with pytest.raises(ValueError, match="T must"):
        solve_eta(1e20, 0.0)
    with pytest.raises(ValueError, match="eta"):
        electron_gas(np.inf, 1e6)
