"""Tests of physics/neutrinos.py: thermal neutrino losses.

The fits of Itoh et al. (1996) were written down from memory. The paper's manuscript TeX is stored in the
search tool's "pages" corpus, but only its opening (title, authors, the first lines of the abstract) can be
read there: no equation, coefficient or table of the paper could be compared (see the module docstring).
These tests therefore check the fits against values derived here independently, from first principles
with scipy.constants:

- pair annihilation over the whole domain of the fit (any degeneracy, any relativity): the emission rate
  integrated here from Fermi–Dirac e⁻ and e⁺ with the standard-model cross-section (the tensor contraction
  is written out in ``pair_first_principles``), normalised by the threshold limit below;
- pair annihilation of non-relativistic, non-degenerate pairs: only the vector coupling survives at
  threshold, sigma v = G_F² (m_e c²)² c sum C_V² / (pi (hbar c)⁴)
  (the V–A limit gives Clayton's 4.9e18 T9³ exp(-11.86/T9) erg cm⁻³ s⁻¹,
  Principles of Stellar Evolution and Nucleosynthesis 1968; from memory);
- plasmon decay over the plasma-dominated region: the rate integrated over transverse and longitudinal
  plasmons with the dispersion relations of Braaten & Segel (1993; from memory), see
  ``plasma_braaten_segel``, normalised by the classical limit below;
- plasmon decay of classical plasmons (hbar omega_p << kT): Q = sum C_V² G_F²
  zeta(3) omega_p⁶ (kT)³ / (24 pi⁴ alpha) from the decay rate
  Gamma = C_V² G_F² omega_p⁶ / (48 pi² alpha omega) (Raffelt 1996, Stars as
  Laboratories for Fundamental Physics, ch. 6; from memory);
- the constants of the fits (lambda, the plasma frequency) against CODATA;
- the photo-neutrino coefficients by continuity across the temperature bands
  of the fit (each band was fitted separately by Itoh et al.);
- bremsstrahlung against the published 3.229e17 prefactor (Kaminker et al.
  1999, A&A 343, 1009; from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad
from scipy.optimize import brentq
from scipy.special import zeta

from thermoplane.physics import Composition, burning, neutrinos
from thermoplane.physics.neutrinos import PROCESSES, epsilon, epsilon_parts

CO = Composition({"C-12": 0.5, "O-16": 0.5})
HE = Composition({"He-4": 1.0})
FE = Composition({"Fe-56": 1.0})

# cgs constants straight from scipy (independent of physics.constants)
C = sc.c * 1e2
HBAR = sc.hbar * 1e7
K_B = sc.k * 1e7
M_E = sc.m_e * 1e3
M_U = sc.physical_constants["atomic mass constant"][0] * 1e3
ME_C2 = M_E * C * C
E2 = (sc.e * sc.c * 10.0) ** 2                  # e² in esu²
ALPHA = sc.alpha
G_F = sc.physical_constants["Fermi coupling constant"][0] / (1e9 * sc.eV * 1e7) ** 2 * (HBAR * C) ** 3
SIN2W = 0.2319
CV, CVP = 0.5 + 2 * SIN2W, 0.5 - 2 * SIN2W
SUM_CV2 = CV**2 + 2 * CVP**2                   # nu_e plus two other flavours


def plane(n=120):
    lr = np.linspace(-10, 10, n)
    lt = np.linspace(3, 10, n)
    return 10.0 ** lr[None, :], 10.0 ** lt[:, None]


def test_every_part_finite_non_negative_and_sum_rule_on_the_whole_plane():
    rho, T = plane(300)
    for comp in (CO, HE, FE, Composition.from_xyz(0.7, 0.28, 0.02)):
        parts = epsilon_parts(rho, T, comp)     # numpy warnings are errors under pytest
        for name, v in parts.items():
            assert v.shape == (300, 300)
            assert np.all(np.isfinite(v)) and np.all(v >= 0), name
        total = sum(parts[p] for p in PROCESSES)
        np.testing.assert_array_equal(parts["total"], total)
        np.testing.assert_array_equal(epsilon(rho, T, comp), parts["total"])
        for p in PROCESSES:
            np.testing.assert_array_equal(epsilon(rho, T, comp, p), parts[p])


def test_fit_constants_match_codata():
    # lambda = kT / m_e c², T = 5.9302e9 K lambda (Itoh et al. 1996)
    assert neutrinos.LAMBDA_TEMPERATURE == pytest.approx(ME_C2 / K_B, rel=1e-4)
    # gamma² = (hbar omega_p / kT)², omega_p² = 4 pi e² n_e / m_e, n_e = nu / m_u: the fit's 1.1095e11
    assert 4 * math.pi * E2 * HBAR**2 / (M_U * M_E * K_B**2) == pytest.approx(1.1095e11, rel=0.01)
    # the relativistic factor (1 + x_F²)^(-1/2), x_F² = (1.019e-6 nu)^(2/3): rho/mu_e at x_F = 1
    n_xf1 = 8 * math.pi / 3 * (M_E * C / (2 * math.pi * HBAR)) ** 3
    assert 1 / (n_xf1 * M_U) == pytest.approx(1.019e-6, rel=0.01)


def pair_limit(T):
    """Q_pair (erg cm^-3 s^-1) of non-relativistic, non-degenerate pairs, derived here."""
    n_q = (M_E * K_B * T / (2 * math.pi * HBAR**2)) ** 1.5     # n_± = 2 n_q exp(∓eta - m c²/kT)
    n_plus_n_minus = 4 * n_q**2 * math.exp(-2 * ME_C2 / (K_B * T))
    sigma_v = G_F**2 * ME_C2**2 * C * SUM_CV2 / (math.pi * (HBAR * C) ** 4)
    return n_plus_n_minus * sigma_v * 2 * ME_C2


def test_pair_process_tends_to_the_nonrelativistic_limit():
    rho = 1e-3                                   # non-degenerate at every T below
    for T in (3e7, 5e7):
        assert float(epsilon(rho, T, CO, "pair")) * rho == pytest.approx(pair_limit(T), rel=0.05)
    # at 1e8 K the first relativistic correction of the pair densities, (1 + 15 lambda / 8)², appears
    T = 1e8
    lam = K_B * T / ME_C2
    ratio = float(epsilon(rho, T, CO, "pair")) * rho / pair_limit(T)
    assert ratio == pytest.approx((1 + 15 * lam / 8) ** 2, rel=0.03)


def test_pair_process_per_volume_does_not_depend_on_density_while_non_degenerate():
    T = 2e9
    q = [float(epsilon(r, T, CO, "pair")) * r for r in (1e-6, 1e-3, 1.0)]
    assert q[1] == pytest.approx(q[0], rel=0.01) and q[2] == pytest.approx(q[0], rel=0.01)


CA, CAP = 0.5, -0.5
SUM_PLUS = (CV**2 + CA**2) + 2 * (CVP**2 + CAP**2)
SUM_MINUS = (CV**2 - CA**2) + 2 * (CVP**2 - CAP**2)
LAMBDA_C = HBAR / (M_E * C)                     # reduced Compton wavelength, cm


def _moment(phi, mu, theta, sign):
    """int_0^inf p² f(E) phi(p, E) dp, p in m_e c, E = sqrt(1 + p²), f the Fermi–Dirac occupation of
    electrons (sign +1, chemical potential mu with rest mass, in m_e c²) or positrons (sign -1)."""
    def g(p):
        e = math.sqrt(1.0 + p * p)
        x = (e - sign * mu) / theta
        return 0.0 if x > 700.0 else p * p / (math.exp(x) + 1.0) * phi(p, e)
    p_f = math.sqrt(mu * mu - 1.0) if mu > 1.0 else 0.0
    return quad(g, 0.0, p_f + 60.0 * theta + 5.0, points=[p_f] if p_f > 0 else None, limit=400,
                epsabs=0.0, epsrel=1e-10)[0]


def pair_first_principles(rho_over_mu_e, T):
    """Q_pair (erg cm^-3 s^-1) at any degeneracy and relativity, integrated here.

    e⁻(p1) e⁺(p2) -> nu nubar through the contact interaction (G_F/√2) [nubar γ^μ(1-γ5) nu]
    [ebar γ_μ(C_V - C_A γ5) e]. The neutrino phase space integrates to (q^μ q^ν - q² g^μν), q = p1 + p2
    (Lenard's identity); contracted with the electron traces 4 C_V² [p1p2 + p2p1 - g (P + m²)] and
    4 C_A² [... - g (P - m²)], P = p1·p2, it gives C_V² (8m⁴ + 12m²P + 4P²) + C_A² (4P² - 4m⁴), i.e.
    sigma v E1 E2 = G_F²/(12 pi) [S+ (m⁴ + 3m²P + 2P²) + 3 S- (m⁴ + m²P)], whose prefactor is fixed by the
    threshold limit of ``pair_limit`` (vector only, G_F² m² sum C_V² / pi). With isotropic distributions
    <P> = E1E2 and <P²> = E1²E2² + p1²p2²/3, so Q = (1/pi⁴) int int p1² p2² f- f+ (E1 + E2) sigma v
    separates into products of one-dimensional moments.
    """
    theta = K_B * T / ME_C2
    n_e = rho_over_mu_e / M_U * LAMBDA_C**3                   # net electrons per Compton volume
    one = lambda p, e: 1.0                                     # noqa: E731
    mu = brentq(lambda m: (_moment(one, m, theta, 1) - _moment(one, m, theta, -1)) / math.pi**2 - n_e,
                0.0, 2.0 + 40.0 * theta + 2.0 * (3 * math.pi**2 * n_e) ** (1 / 3), xtol=1e-14, rtol=1e-13)
    a, b = SUM_PLUS, 3.0 * SUM_MINUS
    # (coefficient, phi, phi/E): the polynomial a + b + (3a + b) E1E2 + 2a E1²E2² + (2a/3) p1²p2²,
    # times (E1 + E2)/(E1 E2) = 1/E1 + 1/E2
    terms = ((a + b, one, lambda p, e: 1.0 / e), (3 * a + b, lambda p, e: e, one),
             (2 * a, lambda p, e: e * e, lambda p, e: e), (2 * a / 3, lambda p, e: p * p, lambda p, e: p * p / e))
    s = sum(c * (_moment(phi_e, mu, theta, 1) * _moment(phi, mu, theta, -1)
                 + _moment(phi, mu, theta, 1) * _moment(phi_e, mu, theta, -1)) for c, phi, phi_e in terms)
    g_f_m2 = G_F / (HBAR * C) ** 3 * ME_C2**2                  # G_F m_e² (dimensionless)
    return g_f_m2**2 * ME_C2 / LAMBDA_C**3 * (ME_C2 / HBAR) * s / (12.0 * math.pi**5)


def test_pair_first_principles_reproduces_its_own_limits():
    # the integrator against the threshold limit (its normalisation) and the massless limit derived
    # separately: Q = G_F² S+ 7 zeta(5) (kT)⁹ / (12 pi) for massless e± at mu = 0 (natural units)
    for T in (3e7, 5e7):
        assert pair_first_principles(1e-3 / CO.mu_e, T) == pytest.approx(pair_limit(T), rel=0.02)
    T = 3e12                                                    # kT = 260 m_e c²: mass terms ~1e-5
    g_f_m2 = G_F / (HBAR * C) ** 3 * ME_C2**2
    theta = K_B * T / ME_C2
    massless = g_f_m2**2 * ME_C2 / LAMBDA_C**3 * (ME_C2 / HBAR) * SUM_PLUS * 7 * zeta(5) / (12 * math.pi) * theta**9
    assert pair_first_principles(1e-3, T) == pytest.approx(massless, rel=1e-3)


# (log10 T, log10 rho/mu_e) where the fit and the integral were compared; all have pair >= 50 % of the total
PAIR_POINTS = [(lt, lr) for lt in (8.7, 9.0, 9.3, 9.6, 9.9, 10.2, 10.5, 10.8, 11.0) for lr in (0.0, 3.0, 6.0, 8.0)]


def test_pair_fit_against_first_principles():
    # Measured on this grid (this test, 31 points): the fit / the integral lies in 0.86–1.11; the lowest
    # values are in the upper temperature band of the fit (T >= 1e10 K), 12–14 % low near 10^10.2 K.
    # Our tolerance: 15 %. Denser, where the pair share drops, the fit is worse: up to 1.41 at 1e10 K and
    # rho/mu_e = 10^9.5 (share 0.9), 0.5 at 10^10.9 K and rho/mu_e = 1e12 (also measured, not asserted).
    ratios = []
    for lt, lr in PAIR_POINTS:
        T, rho = 10.0**lt, 10.0**lr * CO.mu_e
        parts = epsilon_parts(rho, T, CO)
        if float(parts["pair"]) < 0.5 * float(parts["total"]):
            continue
        ratios.append(float(parts["pair"]) * rho / pair_first_principles(10.0**lr, T))
    assert len(ratios) >= 30
    assert min(ratios) > 0.85 and max(ratios) < 1.15


def test_plasma_process_classical_limit():
    # hbar omega_p << kT: rho = 1e-2, T = 1e8 K gives gamma ~ 2e-4
    rho, T = 1e-2, 1e8
    n_e = rho / CO.mu_e / M_U
    omega_p = math.sqrt(4 * math.pi * E2 * n_e / M_E)
    kT = K_B * T
    # natural-unit formula turned into cgs: energies in erg, divided by (hbar c)³ hbar
    q = SUM_CV2 * G_F**2 / (HBAR * C) ** 6 * zeta(3) * (HBAR * omega_p) ** 6 * kT**3 / (24 * math.pi**4 * ALPHA)
    q *= 1 / ((HBAR * C) ** 3 * HBAR) * (HBAR * C) ** 6
    assert float(epsilon(rho, T, CO, "plasma")) * rho == pytest.approx(q, rel=0.03)


def _atanh_ratio(x):
    """(1/2x) ln((1 + x)/(1 - x))."""
    return math.atanh(x) / x if x > 1e-4 else 1.0 + x * x / 3.0 + x**4 / 5.0


def plasma_braaten_segel(rho_over_mu_e, T):
    """Q_plasma (erg cm^-3 s^-1) integrated here over the plasmon spectrum, e± of any degeneracy and relativity.

    Dispersion of transverse and longitudinal plasmons from the self-energies of Braaten & Segel (1993,
    Phys. Rev. D 48, 1478; from memory):
    Pi_T = 3 wp²/(2 v²) [w²/k² - (w² - v²k²)/k² L], Pi_L = 3 wp²/v² [L - 1], L = (w/2vk) ln((w + vk)/(w - vk)),
    wp² = (4 alpha/pi) int p²/E (1 - v_e²/3) (f- + f+) dp, v² = w1²/wp², w1² = (4 alpha/pi) int p²/E
    (5 v_e²/3 - v_e⁴)(f- + f+) dp; poles w² = k² + Pi_T and k² = Pi_L. Each plasmon decays as a photon
    of mass² w² - k² with the vector coupling: per mode Gamma = C_V² G_F² Z (w² - k²)³ / (48 pi² alpha w)
    (the classical-limit rate of ``test_plasma_process_classical_limit``), Z the residue of the pole in the
    covariant normalisation (for L, Z_cov = Z w²/(w² - k²) with Z = 1/d_w²[w² - (w²/k²) Pi_L]). So
    Q = sum C_V² G_F² / (48 pi⁴ alpha) [int k² Z_T (w_T² - k²)³ n_B dk + 1/2 int_0^kmax k² Z_L w_L² (w_L² - k²)² n_B dk]
    (2 transverse modes, 1 longitudinal). Residues by central differences of the pole functions.
    """
    theta = K_B * T / ME_C2
    n_e = rho_over_mu_e / M_U * LAMBDA_C**3
    one = lambda p, e: 1.0                                     # noqa: E731
    mu = brentq(lambda m: (_moment(one, m, theta, 1) - _moment(one, m, theta, -1)) / math.pi**2 - n_e,
                0.0, 2.0 + 40.0 * theta + 2.0 * (3 * math.pi**2 * n_e) ** (1 / 3), xtol=1e-14, rtol=1e-13)

    def both(phi):
        return _moment(phi, mu, theta, 1) + _moment(phi, mu, theta, -1)

    wp2 = 4 * ALPHA / math.pi * both(lambda p, e: (1 - (p / e) ** 2 / 3) / e)
    v = math.sqrt(4 * ALPHA / math.pi * both(lambda p, e: (5 * (p / e) ** 2 / 3 - (p / e) ** 4) / e) / wp2)

    def d_t(w2, k):                                            # transverse pole function
        w = math.sqrt(w2)
        return w2 - k * k - 1.5 * wp2 / v**2 * (w2 / (k * k) - (w2 - v * v * k * k) / (k * k) * _atanh_ratio(v * k / w))

    def d_l(w2, k):                                            # longitudinal pole function
        return w2 - w2 / (k * k) * 3 * wp2 / v**2 * (_atanh_ratio(v * k / math.sqrt(w2)) - 1.0)

    def pole_and_residue(d, k, hi):
        w2 = brentq(lambda x: d(x, k), k * k * (1 + 1e-12), hi, xtol=1e-300, rtol=1e-13)
        h = 1e-6 * w2
        return w2, 2 * h / (d(w2 + h, k) - d(w2 - h, k))

    def n_b(w2):
        x = math.sqrt(w2) / theta
        return 0.0 if x > 700 else 1.0 / math.expm1(x)

    def transverse(k):
        if k == 0:
            return 0.0
        w2, z = pole_and_residue(d_t, k, k * k + 20 * wp2)
        return k * k * z * (w2 - k * k) ** 3 * n_b(w2)

    def longitudinal(k):
        if k == 0:
            return 0.0
        w2, z = pole_and_residue(d_l, k, max(10 * wp2, 4 * k * k))
        return k * k * z * w2 * (w2 - k * k) ** 2 * n_b(w2)

    wp = math.sqrt(wp2)
    k_max = math.sqrt(3 * wp2 / v**2 * (_atanh_ratio(v) - 1.0))   # where w_L = k
    i_t = quad(transverse, 0.0, 4 * wp + 60 * theta, limit=400, epsrel=1e-8)[0]
    i_l = quad(longitudinal, 0.0, k_max * (1 - 1e-9), limit=400, epsrel=1e-8)[0]
    g_f_m2 = G_F / (HBAR * C) ** 3 * ME_C2**2
    return (g_f_m2**2 * ME_C2 / LAMBDA_C**3 * (ME_C2 / HBAR) * SUM_CV2 / (48 * math.pi**4 * ALPHA)
            * (i_t + 0.5 * i_l))


def test_plasma_braaten_segel_reproduces_the_classical_limit():
    # the integrator's normalisation against the classical formula of test_plasma_process_classical_limit
    rho, T = 1e-2, 1e8
    n_e = rho / CO.mu_e / M_U
    omega_p = math.sqrt(4 * math.pi * E2 * n_e / M_E)
    q = (SUM_CV2 * G_F**2 / (HBAR * C) ** 6 * zeta(3) * (HBAR * omega_p) ** 6 * (K_B * T) ** 3
         / (24 * math.pi**4 * ALPHA) / ((HBAR * C) ** 3 * HBAR) * (HBAR * C) ** 6)
    assert plasma_braaten_segel(rho / CO.mu_e, T) == pytest.approx(q, rel=0.01)


# (log10 T, log10 rho/mu_e) where the plasma process gives >= 50 % of the losses
PLASMA_POINTS = [(7.0, 2.0), (7.0, 4.0), (7.5, 4.0), (7.5, 6.0), (8.0, 6.0), (8.5, 6.0), (8.5, 8.0), (9.0, 8.0),
                 (9.0, 10.0), (9.5, 10.0), (9.5, 12.0), (10.0, 10.0), (10.0, 12.0)]


def test_plasma_fit_against_braaten_segel_integration():
    # Measured (this test): fit / integral = 0.963-1.013 at these 13 points, gamma = hbar omega_p/kT from
    # 0.3 to 10.5, classical to relativistic degenerate electrons. Tolerance 5 %. Without the f_xy
    # correction of the fit, or with the longitudinal mode counted twice, it would fail.
    ratios = []
    for lt, lr in PLASMA_POINTS:
        T, rho = 10.0**lt, 10.0**lr * CO.mu_e
        parts = epsilon_parts(rho, T, CO)
        assert float(parts["plasma"]) >= 0.5 * float(parts["total"])
        ratios.append(float(parts["plasma"]) * rho / plasma_braaten_segel(10.0**lr, T))
    assert min(ratios) > 0.95 and max(ratios) < 1.05


def test_plasma_process_dies_where_the_plasma_frequency_exceeds_kT():
    rho = 1e6
    nu = rho / CO.mu_e
    x2 = (nu / 9.739e5) ** (2 / 3)
    omega_p = math.sqrt(4 * math.pi * E2 * nu / M_U / (M_E * math.sqrt(1 + x2)))
    T_p = HBAR * omega_p / K_B                                  # hbar omega_p = k T_p
    T = np.array([T_p / 3, T_p / 30, T_p / 60])
    eps = epsilon(rho, T, CO, "plasma")
    assert eps[1] < 1e-8 * eps[0] and eps[2] < 1e-10 * eps[1]
    # d ln eps / d ln T -> gamma (= T_p / T) as the exponential takes over
    for t in (T_p / 30, T_p / 60):
        slope = (math.log(float(epsilon(rho, t * 1.001, CO, "plasma")))
                 - math.log(float(epsilon(rho, t / 1.001, CO, "plasma")))) / (2 * math.log(1.001))
        assert slope == pytest.approx(T_p / t, rel=0.1)


def test_photo_coefficients_continuous_across_the_bands_of_the_fit():
    for rho in (1e-2, 1e2, 1e5, 1e7):
        below, above = epsilon(rho, np.array([1e9 * (1 - 1e-9), 1e9]), CO, "photo")
        assert above == pytest.approx(below, rel=5e-3)
        below, above = epsilon(rho, np.array([1e8 * (1 - 1e-9), 1e8]), CO, "photo")
        assert above == pytest.approx(below, rel=0.08)


def test_photo_process_scales_as_n_e_T8_when_cool_and_dilute():
    # non-degenerate, non-relativistic electrons: Q_photo ∝ n_e T^8 (Chiu & Stabler 1961; from memory)
    rho = 1.0
    eps = epsilon(rho, np.array([2e7, 4e7]), CO, "photo")
    assert math.log2(eps[1] / eps[0]) == pytest.approx(8.0, abs=0.6)
    assert float(epsilon(10 * rho, 3e7, CO, "photo")) == pytest.approx(float(epsilon(rho, 3e7, CO, "photo")),
                                                                       rel=0.05)


def test_bremsstrahlung_against_published_prefactor():
    # Q = 3.229e17 rho_12 (Z²/A) T9^6 L erg cm^-3 s^-1, L = 1 (Kaminker et al. 1999; from memory)
    rho, T = 1e9, 2e8
    expected = 3.229e17 * 1e-12 * 26**2 / 55.93493633 * (T / 1e9) ** 6
    assert float(epsilon(rho, T, FE, "bremsstrahlung")) == pytest.approx(expected, rel=0.01)
    # zero where electrons are not relativistic and degenerate (the formula's domain)
    assert float(epsilon(1e3, 1e6, FE, "bremsstrahlung")) == 0.0
    assert float(epsilon(1e9, 1e11, FE, "bremsstrahlung")) == 0.0     # kT > E_F ~ 4 MeV


def test_regions_of_dominance():
    # pairs at high T and low rho, photo in between, plasma at high rho, bremsstrahlung dense and cool
    # (the layout of Itoh et al. 1996 and of Haft, Raffelt & Weiss 1994, ApJ 425, 222, fig. 1; from memory)
    def winner(rho, T):
        return PROCESSES[int(neutrinos.dominant_process(epsilon_parts(rho, T, CO)))]
    assert winner(1.0, 3e9) == "pair"
    assert winner(1e4, 1e9) == "pair"
    assert winner(1e2, 1e8) == "photo"
    assert winner(1e6, 1e8) == "plasma"
    assert winner(1e8, 3e8) == "plasma"
    assert winner(1e10, 3e7) == "bremsstrahlung"
    # along T = 1e9 K with rising density the order is pair -> photo -> plasma
    lr = np.linspace(-4, 10, 281)
    codes = neutrinos.dominant_process(epsilon_parts(10.0**lr, 1e9, CO))
    seen = [PROCESSES[c] for i, c in enumerate(codes) if i == 0 or c != codes[i - 1]]
    assert seen == ["pair", "photo", "plasma"]


def _carbon_ignition_T(rho, comp):
    lt = np.linspace(8.5, 9.3, 801)
    T = 10.0**lt
    diff = np.log(burning.epsilon(rho, T, comp, "carbon")) - np.log(epsilon(rho, T, comp))
    i = np.flatnonzero((diff[:-1] < 0) & (diff[1:] >= 0))
    assert i.size == 1
    return T[i[0]]


def test_carbon_ignition_curve_against_published_value():
    # The Unified Astronomy Thesaurus of the AAS (concept 195, "Carbon burning"; read in the search
    # tool's pages corpus): in stars above about 8 solar masses "whose cores reach a temperature above
    # 5 x 10^8 K and density above 3 x 10^9 kg m^-3, carbon burning can begin". Our curve
    # eps_C+C = eps_nu for a C/O 50/50 core at 3e6 g cm^-3 must lie at or above that 5e8 K, and close
    # to it (within 30 %, our tolerance for a value given in round numbers): we find 5.6e8 K.
    T_ign = _carbon_ignition_T(3e6, CO)
    assert 5e8 <= T_ign < 6.5e8
    # Central carbon ignition of massive stars near T ~ 8e8 K at rho ~ 2e5 g cm^-3 (Woosley, Heger &
    # Weaver 2002, Rev. Mod. Phys. 74, 1015, table 1; from memory, not readable in the pages corpus):
    # the curve must lie between 5e8 and 1e9 K there (we find 6.4e8 K).
    assert 5e8 < _carbon_ignition_T(2e5, CO) < 1e9


def test_bad_input():
    with pytest.raises(ValueError, match="unknown neutrino process"):
        epsilon(1.0, 1e8, CO, "urca")
    with pytest.raises(ValueError, match="rho must be finite"):
        epsilon(-1.0, 1e8, CO)
    with pytest.raises(ValueError, match="T must be finite"):
        epsilon(1.0, np.nan, CO)
    with pytest.raises(ValueError, match="Composition"):
        epsilon(1.0, 1e8, {"He-4": 1.0})


def test_a_row_of_densities_and_a_column_of_temperatures_give_the_same_numbers_as_the_whole_plane():
    # a map passes rho as a row and T as a column; the factors of one of them are then computed once per
    # column or row: the result must be the same, bit for bit, as for the full arrays
    comp = Composition.from_xyz(0.7, 0.28, 0.02)
    rho = 10.0 ** np.linspace(-10, 12, 61)[None, :]
    T = 10.0 ** np.linspace(3, 11, 47)[:, None]
    split = epsilon_parts(rho, T, comp)
    whole = epsilon_parts(*np.broadcast_arrays(rho, T), comp)
    for name in (*PROCESSES, "total"):
        assert split[name].shape == (47, 61)
        assert np.array_equal(split[name], whole[name]), name
    for process in burning.PROCESSES:
        assert np.array_equal(burning.epsilon(rho, T, comp, process),
                              burning.epsilon(*np.broadcast_arrays(rho, T), comp, process)), process
    assert epsilon_parts(1e5, T, comp)["pair"].shape == (47, 1)
