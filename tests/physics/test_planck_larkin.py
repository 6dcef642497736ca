"""The Planck-Larkin weight of bound states (physics.planck_larkin) and what it does to the default Saha."""

import math

import mpmath
import numpy as np
import pytest
from scipy import constants as sc
from scipy.optimize import brentq

from thermoplane import physics as ph
from thermoplane.physics.planck_larkin import planck_larkin, stage_sums

mpmath.mp.dps = 40


def _phi_mp(x):
    """ln(e^x - 1 - x) - x, the Planck-Larkin sum's logarithm less the Boltzmann exponent, in mpmath."""
    x = mpmath.mpf(x)
    return mpmath.log(mpmath.exp(x) - 1 - x) - x


@pytest.mark.parametrize("x", [1e-5, 3e-3, 0.1, 0.79, 1.0, 5.0, 20.0, 39.9, 40.1, 80.0])
def test_planck_larkin_and_its_log_T_derivatives_against_mpmath(x):
    # the definition (Planck 1924; Larkin 1960; Ebeling, Kraeft & Kremp 1976), differentiated by mpmath:
    # x = chi / kT, so d/d ln T = -x d/dx. phi is a logarithm added to ln w: it is needed to an absolute
    # 1e-15 (near phi = 0, at x >~ 20, ln(1 - tiny) carries that much rounding), relative 1e-9 elsewhere
    phi, d1, d2 = planck_larkin(x)
    f = lambda lnT: _phi_mp(mpmath.mpf(x) * mpmath.exp(-lnT))  # noqa: E731
    ref = [float(mpmath.diff(f, 0, n)) for n in (0, 1, 2)]
    for got, want in zip((phi, d1, d2), ref):
        assert got == pytest.approx(want, rel=1e-9, abs=1e-15)


def test_stage_sums_add_the_factors_of_the_electrons_a_stage_still_holds():
    # helium: stage 0 holds both electrons (chi_0 and chi_1), stage 1 one (chi_1), the nucleus none
    He = ph.ionization.ELEMENTS[2]
    C = He.cumulative_erg
    T = np.array([3e4, 1e5, 1e6])
    out = stage_sums(T, 2, C)
    kT = sc.k * 1e7 * T
    for i in range(T.size):
        a = planck_larkin(He.energies_eV[0] * sc.eV * 1e7 / kT[i])
        b = planck_larkin(He.energies_eV[1] * sc.eV * 1e7 / kT[i])
        assert out[:, 0, i] == pytest.approx([a[k] + b[k] for k in range(3)], rel=1e-13)
        assert out[:, 1, i] == pytest.approx(b, rel=1e-13)
        assert np.all(out[:, 2, i] == 0.0)


def _saha_neutral_fraction(rho, T, with_pl):
    """Our own Saha for pure hydrogen, non-degenerate electrons (scipy constants, cgs), brentq on the ionized
    fraction: x^2 / (1 - x) = (2 pi m_e k T / h^2)^(3/2) (2 g_1 / g_0) e^(-chi/kT) [/ PL factor] / n_H."""
    k = sc.k * 1e7
    m_e = sc.m_e * 1e3
    h = sc.h * 1e7
    chi = 13.598434 * sc.eV * 1e7
    n_H = rho / (1.00782503 * sc.atomic_mass * 1e3)
    x = chi / (k * T)
    K = (2.0 * math.pi * m_e * k * T / h**2) ** 1.5 * (2.0 * 1.0 / 2.0) * math.exp(-x) / n_H
    if with_pl:
        K /= 1.0 - (1.0 + x) * math.exp(-x)
    f = brentq(lambda y: y * y / (1.0 - y) - K, 1e-300, 1.0 - 1e-16, xtol=1e-300, rtol=1e-15)
    return 1.0 - f


@pytest.mark.parametrize("rho, T", [(1e-6, 2e5), (1e-4, 1e5), (1e-9, 2e4)])
def test_hot_dilute_hydrogen_follows_saha_with_the_planck_larkin_weight(rho, T):
    # where the pressure-ionization rule is inactive and the electrons are far from degenerate, the default's
    # neutral fraction is that of Saha with the Planck-Larkin weight; at 2e5 K (chi / kT = 0.79) that weight
    # removes ~80 % of the bound state, so plain Saha is off by a factor ~5 there. Tolerance: the default's
    # electrons are Fermi-Dirac, which moves n_e(eta) by ~e^eta / 2^(3/2) from the Boltzmann gas of our Saha
    # (1.4e-4 at 1e-4 g/cm^3 and 1e5 K)
    s = ph.evaluate(rho, T, ph.Composition({"H-1": 1.0}))
    got = 1.0 - float(s.ion_H)
    want = _saha_neutral_fraction(rho, T, True)
    assert got == pytest.approx(want, rel=5e-4)
    if T >= 1e5:
        assert abs(got / _saha_neutral_fraction(rho, T, False) - 1.0) > 0.3


def test_hydrogen_is_ionized_through_a_sun_like_interior():
    # (log rho, log T) from the centre to the base of the convection zone of a standard solar model, rounded
    # (from memory, for orientation); ground-state Saha alone leaves 2-4 % of the hydrogen neutral at
    # r ~ 0.5-0.7 R_sun, the Planck-Larkin weight removes that (the chemical picture agrees: 0.99997)
    L = np.array([2.18, 1.95, 1.55, 1.10, 0.62, 0.15, -0.30, -0.70])
    T = np.array([7.19, 7.12, 6.97, 6.82, 6.69, 6.58, 6.48, 6.36])
    s = ph.evaluate(10.0**L, 10.0**T, ph.Composition.from_xyz(0.70, 0.28, 0.02))
    assert np.all(s.ion_H > 0.9999)
    assert float(s.ion_H[0]) > 0.999            # issue 11: at the centre of the present-day Sun
