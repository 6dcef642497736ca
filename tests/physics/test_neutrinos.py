"""Tests of physics/neutrinos.py: thermal neutrino losses.

The fits of Itoh et al. (1996) were written down from memory (only the opening
of the paper was retrievable); these tests check them against values derived
here independently, from first principles with scipy.constants:

- pair annihilation of non-relativistic, non-degenerate pairs: only the vector
  coupling survives at threshold, sigma v = G_F² (m_e c²)² c sum C_V² / (pi (hbar c)⁴)
  (the V–A limit gives Clayton's 4.9e18 T9³ exp(-11.86/T9) erg cm⁻³ s⁻¹,
  Principles of Stellar Evolution and Nucleosynthesis 1968; from memory);
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


def test_carbon_ignition_curve_against_published_value():
    # Central carbon ignition of massive stars near T ~ 8e8 K at rho ~ 2e5 g cm^-3 (Woosley, Heger &
    # Weaver 2002, Rev. Mod. Phys. 74, 1015, table 1; from memory). Our curve eps_C+C = eps_nu for a
    # C/O 50/50 core must lie between 5e8 and 1e9 K there.
    lt = np.linspace(8.5, 9.3, 801)
    rho = 2e5
    T = 10.0**lt
    diff = np.log(burning.epsilon(rho, T, CO, "carbon")) - np.log(epsilon(rho, T, CO))
    i = np.flatnonzero((diff[:-1] < 0) & (diff[1:] >= 0))
    assert i.size == 1
    T_ign = T[i[0]]
    assert 5e8 < T_ign < 1e9


def test_bad_input():
    with pytest.raises(ValueError, match="unknown neutrino process"):
        epsilon(1.0, 1e8, CO, "urca")
    with pytest.raises(ValueError, match="rho must be finite"):
        epsilon(-1.0, 1e8, CO)
    with pytest.raises(ValueError, match="T must be finite"):
        epsilon(1.0, np.nan, CO)
    with pytest.raises(ValueError, match="Composition"):
        epsilon(1.0, 1e8, {"He-4": 1.0})
