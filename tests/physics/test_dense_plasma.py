"""Dense-plasma terms: ion liquid, bcc crystal, screening, electron exchange-correlation, and the mixture."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy import integrate, optimize, special

from thermoplane import physics as ph
from thermoplane.physics.eos import dense_plasma as dp
from thermoplane.physics.eos import electron_xc as xc
from thermoplane.physics.eos import ion_liquid as liq
from thermoplane.physics.eos import ion_solid as sol
from thermoplane.physics.eos import jet
from thermoplane.physics.eos import plasma_parameters as pp
from thermoplane.physics.eos import screening as scr

# cgs from scipy.constants (CODATA), independent of physics.constants
E2 = (sc.e * sc.c * 10.0) ** 2          # e^2, erg cm
K = sc.k * 1e7
HBAR = sc.hbar * 1e7
ME = sc.m_e * 1e3
C = sc.c * 1e2
MU = sc.physical_constants["atomic mass constant"][0] * 1e3

TERMS = {
    "liquid": liq.liquid_ion,
    "solid": sol.solid_ion,
    "screening": scr.screening_ion,
    "xc": xc.electron_xc,
}
POINTS = [(1e22, 1e6, 1.0, 1.0), (1e26, 3e6, 2.0, 4.0), (3e29, 1e7, 6.0, 12.0), (1e30, 2e5, 8.0, 16.0),
          (1e33, 1e8, 26.0, 56.0), (1e35, 1e9, 26.0, 56.0), (1e24, 1e4, 6.0, 12.0)]


def _fd(fun, n, T, Z, A, h=1e-4):
    """Central differences in ln n_e and ln T of the value and of the first derivatives."""
    g = lambda a, b: np.array(fun(n * math.exp(a), T * math.exp(b), Z, A))  # noqa: E731
    dn = (g(h, 0) - g(-h, 0)) / (2 * h)
    dT = (g(0, h) - g(0, -h)) / (2 * h)
    return dn, dT


@pytest.mark.parametrize("name", list(TERMS))
@pytest.mark.parametrize("n, T, Z, A", POINTS)
def test_analytic_derivatives_match_finite_differences(name, n, T, Z, A):
    fun = TERMS[name]
    f = np.array(fun(n, T, Z, A))
    dn, dT = _fd(fun, n, T, Z, A)
    scale = abs(f[0]) + abs(f[1]) + abs(f[2]) + 1e-300
    # first derivatives from f, second from the first derivatives (f_nT both ways)
    for got, want in [(f[1], dn[0]), (f[2], dT[0]), (f[3], dn[1]), (f[4], dT[1]), (f[4], dn[2]), (f[5], dT[2])]:
        assert abs(got - want) <= 1e-7 * scale + 1e-7 * abs(want), (name, got, want)


def test_no_warnings_and_finite_on_the_plane():
    n = np.logspace(14, 36, 89)[:, None]
    T = np.logspace(3, 10, 57)[None, :]
    with np.errstate(all="raise", under="ignore"):
        for Z, A in [(1, 1.008), (2, 4.0026), (6, 12.0), (26, 55.93)]:
            for f in (liq.liquid_ion_free_energy(n, T, Z, A), sol.solid_ion_free_energy(n, T, Z, A),
                      scr.screening_free_energy(n, T, Z, A), xc.electron_xc_free_energy(n, T)):
                assert np.all(np.isfinite(f))


# ---------------------------------------------------------------- the bcc lattice

def _ewald_bcc_madelung(alpha=2.0, nmax=6):
    """Madelung energy per ion of a bcc lattice of point charges in a uniform background, in units of
    Z^2 e^2 / a (a the ion-sphere radius), by Ewald summation (our own evaluation)."""
    L = 1.0
    V = L**3 / 2.0                                  # primitive cell: one ion
    a = (3.0 * V / (4.0 * math.pi)) ** (1.0 / 3.0)
    r = np.arange(-nmax, nmax + 1)
    i, j, k = np.meshgrid(r, r, r, indexing="ij")
    cubic = np.stack([i, j, k], -1).reshape(-1, 3).astype(float)
    R = np.concatenate([cubic, cubic + 0.5]) * L
    d = np.linalg.norm(R, axis=1)
    d = d[d > 0]
    real = 0.5 * np.sum(special.erfc(alpha * d) / d)
    G = cubic[(np.sum(cubic, axis=1) % 2 == 0)] * 2.0 * math.pi / L     # reciprocal of bcc: fcc
    g2 = np.sum(G**2, axis=1)
    g2 = g2[g2 > 0]
    recip = 2.0 * math.pi / V * np.sum(np.exp(-g2 / (4 * alpha**2)) / g2)
    return (real + recip - alpha / math.sqrt(math.pi) - math.pi / (2.0 * alpha**2 * V)) * a


def test_madelung_constant_by_ewald_summation():
    # our Ewald sum against the constant the module uses (Baiko, Potekhin & Yakovlev 2001: -0.895929255682,
    # from memory)
    assert _ewald_bcc_madelung() == pytest.approx(-0.895929255682, abs=1e-9)
    assert sol.MADELUNG_BCC == pytest.approx(_ewald_bcc_madelung(), abs=1e-9)


def _eta(v):
    return jet.loglin(v, 0.5, -1.0)


def test_harmonic_lattice_classical_limit_madelung_and_equipartition():
    # classical crystal: energy per ion = Madelung C_M Gamma kT + 3 kT (harmonic equipartition) + anharmonic;
    # the module's solid is an excess over the ideal gas (3/2 kT), so u_sol = C_M Gamma + 3/2 + u_anh
    A = 1e9                 # a very heavy ion makes T_p negligible: the classical limit
    n, Z = 1e24, 6.0
    for Gamma in (200.0, 1000.0, 5000.0):
        T = pp.coupling(n, 1.0, Z)[0] / Gamma
        f = sol.solid_ion(n, T, Z, A)
        u = -f[2]
        u_anh = 10.9 / Gamma + 247.0 / Gamma**2 + 1.765e5 / Gamma**3      # Farouki & Hamaguchi 1993 (from memory)
        assert (u - 1.5 - u_anh) / Gamma == pytest.approx(-0.895929255682, abs=2e-7)
        c_V = -(f[2] + f[5]) + 1.5                                        # ion c_V per ion / k
        # 3 k (harmonic) + anharmonic: F_k = -N k T A_k / (k Gamma^k) gives c_V,k = (k + 1) A_k / Gamma^k
        assert c_V == pytest.approx(3.0 + 2 * 10.9 / Gamma + 3 * 247.0 / Gamma**2 + 4 * 1.765e5 / Gamma**3,
                                    abs=1e-6)


def test_harmonic_lattice_zero_point_energy_from_phonon_moments():
    # eta >> 1: energy per ion -> (3/2) u_1 hbar omega_p, u_1 = 0.5113875 (BPY 2001, from memory)
    for eta in (300.0, 3000.0):
        f = sol.harmonic(_eta(eta))
        assert -f[2] / eta == pytest.approx(1.5 * 0.5113875, rel=1e-5)
    # eta << 1: the quantum correction is the Wigner-Kirkwood term eta^2 / 24 (exact: the three branches'
    # squared frequencies sum to omega_p^2, Kohn sum rule), and the energy is 3 kT
    for eta in (0.01, 0.1):
        q = sol.harmonic_quantum_correction(_eta(eta))
        assert q[0] == pytest.approx(eta**2 / 24.0, rel=2e-3)
    assert -sol.harmonic(_eta(1e-4))[2] == pytest.approx(3.0, rel=1e-4)


def _cv_lattice(n, T, Z, A):
    f = np.array(sol.solid_ion(n, T, Z, A))
    return -(f[2] + f[5]) + 1.5


def test_ion_heat_capacity_limits():
    # T >> T_p, still a crystal (Gamma > 175): 3 k per ion plus the small anharmonic part
    n, Z, A = 1e24, 26.0, 56.0
    T = 30 * pp.plasma_temperature(n, Z, A)
    G = pp.coupling(n, T, Z)[0]
    assert G > 175
    anh = 2 * 10.9 / G + 3 * 247.0 / G**2 + 4 * 1.765e5 / G**3
    assert _cv_lattice(n, T, Z, A) == pytest.approx(3.0 + anh, abs=0.01)     # quantum part -eta^2/... < 1 %
    n, Z, A = 1e30, 6.0, 12.0
    Tp = pp.plasma_temperature(n, Z, A)
    # T << T_p: Debye-like T^3 (halving T divides c_V by 8)
    lo = [_cv_lattice(n, Tp / r, Z, A) for r in (200.0, 400.0)]
    assert lo[0] / lo[1] == pytest.approx(8.0, rel=0.01)
    assert lo[0] < 1e-3


def test_third_law_lattice_entropy_vanishes():
    n, Z, A = 1e30, 8.0, 16.0
    Tp = pp.plasma_temperature(n, Z, A)
    S = []
    for r in (10.0, 100.0, 1000.0):
        f = np.array(sol.solid_ion(n, Tp / r, Z, A)) + np.array(pp.ideal_ion(n, Tp / r, Z, A))
        S.append(-(f[0] + f[2]))            # lattice entropy per ion / k
    assert S[0] > S[1] > S[2] > 0
    assert S[2] < 1e-6


# ---------------------------------------------------------------- melting

def _melting_gamma(A, n=1e24, Z=6.0):
    def diff(lnT):
        T = math.exp(lnT)
        return sol.solid_ion(n, T, Z, A)[0] - liq.liquid_ion(n, T, Z, A)[0]
    G1 = pp.coupling(n, 1.0, Z)[0]
    lnT = optimize.brentq(diff, math.log(G1 / 150.0), math.log(G1 / 200.0))
    return G1 / math.exp(lnT), math.exp(lnT)


def test_classical_melting_near_gamma_175():
    # Potekhin & Chabrier 2000: Gamma_m = 175.0 +- 0.4 for the classical one-component plasma
    Gm, Tm = _melting_gamma(A=1e9)
    assert Gm == pytest.approx(175.0, abs=1.0)
    # the mixture function picks the phase from the free energies on either side
    r = dp.mixture_free_energy(1e24, np.array([Tm * 1.02, Tm / 1.02]), [6.0], [1e9], [1.0])
    assert list(r["crystallized"]) == [False, True]
    # latent heat: the liquid's energy exceeds the solid's at the melting point
    u_l = -liq.liquid_ion(1e24, Tm, 6.0, 1e9)[2]
    u_s = -sol.solid_ion(1e24, Tm, 6.0, 1e9)[2]
    assert 0.3 < u_l - u_s < 1.5


# ---------------------------------------------------------------- the quantum liquid

def _liquid_at(G, eta, Z=1.0, A=1.0):
    """liquid_ion at given Gamma and eta = T_p/T (n_e and T solved from the two power laws)."""
    # Gamma ∝ n^(1/3)/T, eta ∝ n^(1/2)/T: eta/Gamma ∝ n^(1/6)
    r1 = pp.quantum(1.0, 1.0, Z, A)[0] / pp.coupling(1.0, 1.0, Z)[0]
    n = (eta / G / r1) ** 6
    T = pp.coupling(n, 1.0, Z)[0] / G
    return np.array(liq.liquid_ion(n, T, Z, A))


def test_quantum_liquid_heat_capacity_non_negative():
    # ion c_V per ion / k = 3/2 (ideal) - (f_T + f_TT) >= 0 for Gamma <= 300 and eta / Gamma <= 1.6 (hydrogen
    # up to ~1.3e10 g/cm^3; 1.55 at the default plane's 1e10 g/cm^3); the faded form alone reached -2 k
    cv = [1.5 - (f[2] + f[5]) for f in (_liquid_at(10**lg, r * 10**lg)
                                        for lg in np.linspace(-2, math.log10(300), 60)
                                        for r in np.logspace(-4, math.log10(1.6), 30))]
    assert min(cv) >= -1e-9


def test_quantum_liquid_limits():
    # Wigner-Kirkwood: f_liq - f_OCP -> eta^2 / 24 (Hansen & Vieillefosse 1975; exact for the OCP), with the
    # next order ~eta^4
    for G in (0.5, 10.0, 150.0):
        for eta in (0.02, 0.05):
            f = _liquid_at(G, eta)
            ocp = liq.ocp_liquid(jet.loglin(G, 1 / 3, -1.0))[0]
            assert f[0] - ocp == pytest.approx(eta**2 / 24, rel=0.01)
    # T -> 0 at fixed density: the liquid's entropy (ideal + excess) -> 0 and c_V -> 0 like the quantum
    # lattice (the liquid's classical excess over the lattice fades)
    n, Z, A = 1e33, 1.0, 1.0
    Tp = pp.plasma_temperature(n, Z, A)
    S = []
    for ratio in (30.0, 300.0):
        T = Tp / ratio
        f = np.array(liq.liquid_ion(n, T, Z, A)) + np.array(pp.ideal_ion(n, T, Z, A))
        S.append(-(f[0] + f[2]))
    assert 0 < S[1] < 1e-4 and S[1] < S[0] / 100


def test_mixture_is_the_number_weighted_sum_with_screening():
    n, T = np.array([1e30]), np.array([1e6])
    Z, A, x = [6.0, 8.0], [12.0, 16.0], [0.6, 0.4]
    r = dp.mixture_free_energy(n, T, Z, A, x)
    want = sum(xi * (sol.solid_ion(1e30, 1e6, Zi, Ai)[0] + scr.screening_ion(1e30, 1e6, Zi, Ai)[0])
               for Zi, Ai, xi in zip(Z, A, x))
    assert r["solid"][0, 0] == pytest.approx(want, rel=1e-12)
    assert r["ion"][0, 0] == pytest.approx(min(r["solid"][0, 0], r["liquid"][0, 0]), rel=1e-12)


def test_mixture_rejects_bad_species():
    with pytest.raises(ValueError, match="Z, A, x"):
        dp.mixture_free_energy(1e24, 1e6, [6.0, 0.0], [12.0, 16.0], [0.5, 0.5])


# ---------------------------------------------------------------- electrons

def test_exchange_non_relativistic_limit_hartree_fock():
    # -(3/4) (3/pi)^(1/3) e^2 n^(1/3) per electron (Hartree-Fock, degenerate non-relativistic gas; textbook)
    for n in (1e18, 1e21, 1e24):
        want = -0.75 * (3.0 / math.pi) ** (1.0 / 3.0) * E2 * n ** (1.0 / 3.0)
        x = HBAR * (3 * math.pi**2 * n) ** (1 / 3) / (ME * C)
        assert xc.exchange_T0(n)[0] == pytest.approx(want, rel=x * x)       # relativistic corrections O(x^2)


def test_exchange_ultra_relativistic_limit():
    # x >> 1: E_x / V -> +e^2 (p_F/hbar)^4 / (8 pi^3) (Salpeter 1961; Akhiezer & Berestetskii; our own
    # evaluation of the Hartree-Fock integral with the relativistic interaction gives the same limit)
    n = 1e39
    pF = HBAR * (3 * math.pi**2 * n) ** (1 / 3)
    want = E2 * (pF / HBAR) ** 4 / (8 * math.pi**3) / n
    assert xc.exchange_T0(n)[0] == pytest.approx(want, rel=1e-3)


def _relativistic_exchange_quadrature(x):
    """E_x / V at T = 0 in units of e^2 (m c / hbar)^4, by quadrature of the first-order exchange with the
    one-photon (Coulomb + transverse, Feynman gauge) interaction, spin-summed (our own derivation):
    E_x/V = -(1/2) 4 pi int int d3p d3p'/(2 pi)^6 (m^2 - D + p p' c) / (E E' (D - p p' c)), D = E E' - m^2."""
    def inner(p, q):
        E, Eq = math.sqrt(1 + p * p), math.sqrt(1 + q * q)
        EE1 = (p * p + q * q + p * p * q * q) / (E * Eq + 1.0)              # E E' - 1 without cancellation
        # (D + p q) / (D - p q), D - p q = (p - q)^2 / (E E' + 1 + p q)
        ratio = (EE1 + p * q) * (E * Eq + 1.0 + p * q) / (p - q) ** 2
        ang = -2.0 + (1.0 / (p * q)) * math.log(ratio)                      # int_-1^1 dc
        return p * p * q * q * ang / (E * Eq)
    def row(p):      # the log singularity on the diagonal p = q is integrable; split the q range there
        return integrate.quad(lambda q: inner(p, q) if q != p else 0.0, 0, x, points=[p], limit=200,
                              epsabs=0, epsrel=1e-10)[0]
    val = integrate.quad(row, 0, x, limit=200, epsabs=0, epsrel=1e-9)[0]
    return -(0.5) * 4 * math.pi * (4 * math.pi) * (2 * math.pi) * val / (2 * math.pi) ** 6


@pytest.mark.parametrize("x", [0.05, 1.0, 10.0])
def test_relativistic_exchange_formula_against_quadrature(x):
    n = (ME * C / HBAR) ** 3 * x**3 / (3 * math.pi**2)
    want = _relativistic_exchange_quadrature(x) * E2 * (ME * C / HBAR) ** 4 / n
    assert xc.exchange_T0(n)[0] == pytest.approx(want, rel=1e-5)


def _hartree_fock_exchange_finite_T(n, T):
    """Per electron, non-relativistic first-order exchange free energy (= <H_x> of the ideal Fermi gas at
    the same n, T), by quadrature (our own evaluation)."""
    p_T = math.sqrt(2 * ME * K * T)

    def dens(eta):
        um = math.sqrt(max(eta, 0)) + 10
        return 8 * math.pi * p_T**3 * integrate.quad(lambda u: u * u * special.expit(eta - u * u), 0, um,
                                                     limit=200)[0] / (2 * math.pi * HBAR) ** 3
    eta = optimize.brentq(lambda e: dens(e) - n, -60, 1e6)
    f = lambda u: special.expit(eta - u * u)  # noqa: E731
    um = math.sqrt(max(eta, 0)) + 10

    def inner(u):
        return integrate.quad(lambda v: v * f(v) * math.log(abs((u + v) / (u - v))) if v != u else 0.0,
                              0, um, points=[u], limit=200)[0]
    I = integrate.quad(lambda u: u * f(u) * inner(u), 0, um, limit=200)[0]
    return -4 * math.pi * E2 * HBAR**2 * 8 * math.pi**2 * p_T**4 * I / (2 * math.pi * HBAR) ** 6 / n


@pytest.mark.parametrize("theta, tol", [(0.03, 0.01), (0.3, 0.2), (1.0, 0.15), (10.0, 0.01)])
def test_finite_temperature_exchange_interpolation(theta, tol):
    # the tanh interpolation against the Hartree-Fock quadrature: exact limits, within 17 % between
    n = 1e24
    T = theta * HBAR**2 * (3 * math.pi**2 * n) ** (2 / 3) / (2 * ME) / K
    fx = xc.exchange_T0(n)[0] * math.tanh(4.0 / (9.0 * theta))
    assert fx == pytest.approx(_hartree_fock_exchange_finite_T(n, T), rel=tol)


def test_xc_classical_limit_is_debye_huckel_of_the_electrons():
    n, T = 1e18, 1e8
    Gamma_e = E2 / ((3 / (4 * math.pi * n)) ** (1 / 3) * K * T)
    f = xc.electron_xc(n, T, 1.0, 1.0)[0]
    assert f == pytest.approx(-Gamma_e**1.5 / math.sqrt(3.0), rel=2e-3)


def test_screening_reproduces_debye_huckel_with_electrons():
    # F = -kT V kappa^3 / (12 pi), kappa^2 = 4 pi e^2 (n_i Z^2 + n_e) / kT (non-degenerate electrons);
    # the electron-ion part = total - ion-ion - electron-electron, per ion
    for Z in (1.0, 2.0, 6.0):
        n_e, T = 1e16, 1e7
        n_i = n_e / Z
        k2i = 4 * math.pi * E2 * n_i * Z * Z / (K * T)
        k2e = 4 * math.pi * E2 * n_e / (K * T)
        want = -((k2i + k2e) ** 1.5 - k2i**1.5 - k2e**1.5) / (12 * math.pi) / n_i
        assert scr.screening_ion(n_e, T, Z, 2 * Z)[0] == pytest.approx(want, rel=2e-3)


def test_screening_strong_coupling_thomas_fermi_coefficient():
    # degenerate electrons, Gamma >> 1: f = -a_TF Z^(2/3) Gamma sqrt(1 + x^2) / x with a_TF = 0.00352
    # (Potekhin & Chabrier 2000, eq. 26, large-Z limit, from memory); ours is -(18/175) Gamma q^2 with the
    # saturation q^2 / (1 + q^2), q^2 = 2.44 Z^(2/3) r_s sqrt(1 + x^2): a few per cent here
    for n_e in (1e31, 1e33):
        Z, T = 6.0, 1e5
        G = pp.coupling(n_e, T, Z)[0]
        x = HBAR * (3 * math.pi**2 * n_e) ** (1 / 3) / (ME * C)
        r_s = (3 / (4 * math.pi * n_e)) ** (1 / 3) / (HBAR**2 / (ME * E2))
        q2 = 4 / math.pi * (9 * math.pi / 4) ** (1 / 3) * Z ** (2 / 3) * r_s * math.sqrt(1 + x * x)
        f = scr.screening_ion(n_e, T, Z, 12.0)[0]
        assert f == pytest.approx(-0.00352 * Z ** (2 / 3) * G * math.sqrt(1 + x * x) / x, rel=q2 + 0.005)
