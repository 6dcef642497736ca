"""Tests of thermoplane.physics.fermi_integrals (ph.fermi_dirac) against mpmath quadrature and polylogarithms."""

import warnings

import mpmath as mp
import numpy as np
import pytest

from thermoplane.physics.fermi_integrals import fermi_dirac, fermi_dirac_set

mp.mp.dps = 30
KS = (0.5, 1.5, 2.5)


def _mp_quad(fun, eta):
    """mpmath quadrature split where the integrand changes (source: mpmath quadrature)."""
    eta = mp.mpf(eta)
    if eta > 0:
        pts = [0, max(eta - 40, 0) / 2, max(eta - 40, 0), max(eta - 8, 0), eta, eta + 8, eta + 40, eta + 120]
    else:
        pts = [0, 0.25, 1, 2, 4, 8, 16, 32, 64, 128]
    pts = sorted(set(mp.mpf(p) for p in pts)) + [mp.inf]
    return mp.quad(fun, pts, maxdegree=10)


def mp_F(k, eta, theta, kind="F"):
    """Reference F_k and its partials (source: mpmath quadrature of the defining integrals)."""
    k, eta, theta = mp.mpf(k), mp.mpf(eta), mp.mpf(theta)

    def f(x):
        return 1 / (mp.exp(x - eta) + 1)

    if kind == "F":
        fun = lambda x: x ** k * mp.sqrt(1 + theta * x / 2) * f(x)  # noqa: E731
    elif kind == "eta":
        fun = lambda x: x ** k * mp.sqrt(1 + theta * x / 2) * f(x) * (1 - f(x))  # noqa: E731
    else:
        fun = lambda x: x ** (k + 1) / (4 * mp.sqrt(1 + theta * x / 2)) * f(x)  # noqa: E731
    return _mp_quad(fun, eta)


@pytest.mark.parametrize("eta", [-100.0, -20.0, -2.0, 0.0, 1.0, 5.0, 12.0, 25.0, 60.0, 500.0, 1e4])
def test_complete_integrals_against_polylog(eta):
    # F_k(eta, 0) = -Gamma(k+1) Li_{k+1}(-e^eta)  (source: mpmath polylog)
    got = fermi_dirac_set(eta, 0.0).F
    for i, k in enumerate(KS):
        ref = -mp.gamma(k + 1) * mp.polylog(k + 1, -mp.exp(eta))
        assert abs(float(got[i]) / float(mp.re(ref)) - 1) < 1e-9, (k, eta)


POINTS = [(-100.0, 100.0), (-100.0, 1e-3), (-10.0, 30.0), (-1.0, 3.0), (0.0, 100.0), (2.0, 0.3),
          (8.0, 10.0), (20.0, 100.0), (30.0, 1.0), (45.0, 0.03), (150.0, 100.0), (1e3, 1e-6),
          (1e4, 100.0), (1e4, 1.0), (3e3, 30.0)]


@pytest.mark.parametrize("eta,theta", POINTS)
def test_generalized_against_mpmath(eta, theta):
    s = fermi_dirac_set(eta, theta)
    for i, k in enumerate(KS):
        ref = float(mp_F(k, eta, theta))   # source: mpmath quadrature
        assert abs(float(s.F[i]) / ref - 1) < 1e-9, (k, eta, theta)
        assert abs(float(fermi_dirac(k, eta, theta)) / ref - 1) < 1e-9


@pytest.mark.parametrize("eta,theta", [(-5.0, 2.0), (0.5, 0.01), (6.0, 50.0), (40.0, 0.5), (2e3, 3.0)])
def test_derivatives_against_mpmath(eta, theta):
    s = fermi_dirac_set(eta, theta, second=True)
    for i, k in enumerate(KS):
        # source: mpmath quadrature of the differentiated integrands
        assert abs(float(s.F_eta[i]) / float(mp_F(k, eta, theta, "eta")) - 1) < 1e-8
        assert abs(float(s.F_theta[i]) / float(mp_F(k, eta, theta, "theta")) - 1) < 1e-8
        # second derivative against mpmath numerical differentiation of the first
        ref2 = mp.diff(lambda e: mp_F(k, e, theta, "eta"), eta)
        assert abs(float(s.F_eta2[i]) / float(ref2) - 1) < 1e-5


def test_broadcasting_and_extremes_without_warnings():
    eta = np.array([[-1e4], [-745.0], [0.0], [1e5]])
    theta = np.array([0.0, 1e-8, 1.0, 100.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        s = fermi_dirac_set(eta, theta)
        F = fermi_dirac(1.5, eta, theta)
    assert s.F.shape == (3, 4, 4) and F.shape == (4, 4)
    assert np.all(np.isfinite(s.F)) and np.all(np.isfinite(s.F_eta)) and np.all(np.isfinite(s.F_theta))
    assert np.all(s.F[:, 0] == 0.0)            # e^-1e4: true value below 1e-300
    # degenerate limit: F_1/2(eta, 0) -> (2/3) eta^1.5 (Sommerfeld, from memory)
    assert abs(F[3, 0] / (0.4 * 1e5 ** 2.5) - 1) < 1e-8


def test_bad_input_raises():
    with pytest.raises(ValueError, match="theta"):
        fermi_dirac(0.5, 0.0, -1.0)
    with pytest.raises(ValueError, match="k must be"):
        fermi_dirac(-1.0, 0.0, 0.0)
    with pytest.raises(ValueError, match="eta"):
        fermi_dirac_set(np.nan, 0.0)
