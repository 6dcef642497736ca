"""Tests for physics/eos/atomic_data.py: ionization energies, ground levels, and the H2 partition function."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from thermoplane.physics.eos import atomic_data as ad

RYDBERG_EV = 13.605693122990   # R_inf h c in eV (CODATA 2018, from memory; scipy gives the same below)
ALPHA = sc.fine_structure
HC_OVER_K = sc.h * sc.c / sc.k * 100.0   # cm K


def test_rydberg_value_matches_scipy():
    assert sc.physical_constants["Rydberg constant times hc in eV"][0] == pytest.approx(RYDBERG_EV, rel=1e-10)


# Spot values (eV). "NIST ASD" = Kramida, Ralchenko, Reader & NIST ASD Team, values as printed there; the second
# number is an independent page with its own precision: chemlin.org IE table, X-ray Data Booklet (LBL) Table 1-4,
# chemlin.org iron page.
SPOT = [
    # Z, j, NIST ASD, independent page value, its relative precision
    (1, 0, 13.598434599702, 13.598433, 1e-6),   # chemlin IE1
    (2, 0, 24.587389011, 24.587387, 1e-6),      # chemlin IE1
    (2, 1, 54.4177655282, 54.41776, 1e-6),      # chemlin IE2
    (6, 0, 11.260288, 11.2603, 1e-5),           # chemlin IE1
    (6, 5, 489.99320779, 490.0, 1e-4),          # LBL Table 1-4, H-like C
    (8, 0, 13.618055, 13.61805, 1e-6),          # chemlin IE1
    (8, 7, 871.4099138, 871.4, 1e-4),           # LBL Table 1-4, H-like O
    (26, 0, 7.9024681, 7.9024, 1e-5),           # chemlin iron page IE1
    (26, 25, 9277.6886, 9277.69, 1e-6),         # H-like Fe, NIST ASD only; second value the same rounded
]


@pytest.mark.parametrize("Z, j, nist, page, precision", SPOT)
def test_spot_ionization_energies(Z, j, nist, page, precision):
    chi, _ = ad.ionization_data(Z)
    assert chi[j] == pytest.approx(nist, rel=1e-9)       # table rounded to 10 significant digits
    assert chi[j] == pytest.approx(page, rel=precision)


def test_fe_ii_uses_the_2013_ionization_limit():
    # Nave & Johansson 2013 (ApJS), NIST publication page: 130655.4 cm^-1
    chi, _ = ad.ionization_data(26)
    assert chi[1] == pytest.approx(130655.4 * sc.h * sc.c * 100.0 / sc.eV, abs=1e-4)


@pytest.mark.parametrize("Z", range(1, 31))
def test_shapes_and_types(Z):
    chi, g = ad.ionization_data(Z)
    assert chi.shape == (Z,) and g.shape == (Z + 1,)
    assert chi.dtype == float and g.dtype == float
    assert len(ad.IONIZATION_TABLE[Z][2]) == Z and len(ad.IONIZATION_TABLE[Z][4]) == Z


@pytest.mark.parametrize("Z", range(1, 31))
def test_last_stage_near_hydrogenic_dirac(Z):
    # 1s binding of a point nucleus, Dirac energy expanded to (Z alpha)^2: Z^2 R_inf hc (1 + (Z alpha)^2 / 4).
    # Neglected: reduced mass (5e-4 for H, < 3e-4 beyond), Lamb shift and finite nuclear size (< 1e-4 here).
    chi, _ = ad.ionization_data(Z)
    hydrogenic = Z ** 2 * RYDBERG_EV * (1.0 + (Z * ALPHA) ** 2 / 4.0)
    assert abs(chi[-1] / hydrogenic - 1.0) < 0.01


@pytest.mark.parametrize("Z", range(2, 31))
def test_chi_increases_with_stage(Z):
    chi, _ = ad.ionization_data(Z)
    assert np.all(np.diff(chi) > 0.0)


@pytest.mark.parametrize("Z", range(1, 31))
def test_ground_weights_positive_integers(Z):
    _, g = ad.ionization_data(Z)
    assert np.all(g >= 1.0) and np.all(g == np.round(g))
    assert g[-1] == 1.0


# The isoelectronic rule with its 3d-shell exceptions, written out independently of the module (from memory of
# the NIST ASD ground levels): neutral-atom 2J+1 for N = 1..30 electrons, then the exceptions by N and charge.
NEUTRAL_G = {1: 2, 2: 1, 3: 2, 4: 1, 5: 2, 6: 1, 7: 4, 8: 5, 9: 4, 10: 1, 11: 2, 12: 1, 13: 2, 14: 1, 15: 4,
             16: 5, 17: 4, 18: 1, 19: 2, 20: 1, 21: 4, 22: 5, 23: 4, 24: 7, 25: 6, 26: 9, 27: 10, 28: 9, 29: 2,
             30: 1}


def expected_g(Z, q):
    N = Z - q
    if N == 0:
        return 1
    if q >= 2 and N == 19:      # Sc III 3d 2D3/2 onward
        return 4
    if q >= 1 and N == 20:      # Sc II 3d4s 3D1, then 3d2 3F2
        return 3 if q == 1 else 5
    if q >= 1 and N in (22, 23, 25, 27, 28):   # 3d4 5D0, 3d5 6S5/2, 4F9/2 or 6D9/2, 3d9 2D5/2, 3d10 1S0
        return {22: 1, 23: 6, 25: 10, 27: 6, 28: 1}[N]
    if q >= 2 and N == 24:      # Fe III 3d6 5D4 onward
        return 9
    return NEUTRAL_G[N]


@pytest.mark.parametrize("Z", range(1, 31))
def test_ground_weights_follow_isoelectronic_rule(Z):
    _, g = ad.ionization_data(Z)
    assert g.tolist() == [expected_g(Z, q) for q in range(Z + 1)]
    assert g.tolist() == [ad.ground_level_rule(Z, q) for q in range(Z + 1)]


def test_ground_weight_spot_values():
    _, g = ad.ionization_data(26)
    assert g[0] == 9    # Fe I 3d6 4s2 5D4 (webelements.com iron page)
    assert g[1] == 10   # Fe II 3d6 4s a6D9/2 (NIST Fe II multiplet papers, a6D9/2 ground)
    _, g = ad.ionization_data(1)
    assert g.tolist() == [2, 1]   # H 2S1/2, bare proton


@pytest.mark.parametrize("Z", [0, 31, -1, 2.0, True, "6"])
def test_bad_atomic_number(Z):
    with pytest.raises(ValueError, match="atomic number"):
        ad.ionization_data(Z)


def test_flags_are_consistent():
    assert ad.FROM_MEMORY == frozenset()
    assert not ad.SEMIEMPIRICAL & ad.THEORETICAL
    for Z, j in ad.SEMIEMPIRICAL | ad.THEORETICAL:
        assert 1 <= Z <= 30 and 0 <= j < Z
    assert all(set(row[4]) <= set("mst") for row in ad.IONIZATION_TABLE.values())
    # every hydrogen-like ion is a QED calculation in the compilation
    assert all((Z, Z - 1) in ad.THEORETICAL for Z in range(1, 31))
    # a semi-empirical value carries a larger uncertainty than the measured first ionization energy
    unc = ad.IONIZATION_TABLE[26][2]
    assert unc[12] > 100 * unc[0] and (26, 12) in ad.SEMIEMPIRICAL


# --- H2 -------------------------------------------------------------------------------------------------------

def test_h2_d0_against_cheng_2018():
    # D0(N=1) = 35999.582894 cm^-1 (Cheng et al. 2018) plus the (v=0, J=1) term 118.49 cm^-1 (from memory)
    d0_eV = (35999.582894 + 118.49) * sc.h * sc.c * 100.0 / sc.eV
    assert ad.H2_CONSTANTS["D0_eV"] == pytest.approx(d0_eV, abs=2e-4)


def test_h2_levels_are_bound_and_counted_from_ground():
    E, w, v, J = ad.h2_levels()
    D0_K = ad.H2_CONSTANTS["D0_eV"] * sc.eV / sc.k
    assert E.min() == 0.0 and np.all(E < D0_K)
    assert v.max() == 13 and J.min() == 0
    assert np.all(w == (2 * J + 1) * np.where(J % 2 == 0, 1, 3))
    # E(1, 0) - E(0, 0) = omega_e - 2 omega_e x_e (the fundamental, 4158.5 cm^-1; observed 4161, CCCBDB)
    c = ad.H2_CONSTANTS
    fundamental = E[(v == 1) & (J == 0)][0] / HC_OVER_K
    assert fundamental == pytest.approx(c["omega_e"] - 2 * c["omega_e_x_e"], rel=1e-12)
    assert fundamental == pytest.approx(4161.0, rel=2e-3)


def own_rotational_sum(T, B, D=0.0, J_max=3000):
    """Direct sum over rotational levels of one vibrational level, in plain Python (independent of the module)."""
    total = 0.0
    for J in range(J_max + 1):
        x = J * (J + 1.0)
        if D > 0.0 and x > B / (2.0 * D):
            break
        E = (B * x - D * x * x) * HC_OVER_K
        total += (1 if J % 2 == 0 else 3) * (2 * J + 1) * math.exp(-E / T)
    return total


@pytest.mark.parametrize("T_over_theta", [30.0, 100.0, 1000.0])
def test_rigid_rotor_high_T_limit(T_over_theta):
    # Rigid rotor with nuclear spin: Z_rot -> 4 T / (2 theta_rot) (even J weight 1, odd J weight 3), with the
    # Euler-Maclaurin correction factor (1 + theta/(3T)) (common practice, no source); checked on levels fed
    # to partition_from_levels and against the plain-Python sum.
    B = ad.H2_CONSTANTS["B_e"]
    theta = HC_OVER_K * B
    T = T_over_theta * theta
    J = np.arange(0, 4001)
    E = theta * J * (J + 1.0)
    w = (2 * J + 1) * np.where(J % 2 == 0, 1, 3)
    lnZ, _, _ = ad.partition_from_levels(T, E, w)
    classical = 4.0 * T / (2.0 * theta)
    assert math.exp(lnZ) == pytest.approx(own_rotational_sum(T, B), rel=1e-12)
    assert abs(math.exp(lnZ) / classical - 1.0) < 1.0 / T_over_theta
    corrected = classical * (1.0 + 1.0 / (3.0 * T_over_theta))
    assert math.exp(lnZ) / corrected == pytest.approx(1.0, abs=0.02 / T_over_theta)


def test_h2_rotational_regime_matches_own_sum():
    # At 300 K vibration is frozen (exp(-4158 hc/kT) ~ 2e-9): Z_int is the v = 0 rotational sum with B_0, D_e.
    c = ad.H2_CONSTANTS
    B0 = c["B_e"] - 0.5 * c["alpha_e"]
    for T in (150.0, 300.0):
        lnZ, _, _ = ad.h2_internal_partition(T)
        assert float(lnZ) == pytest.approx(math.log(own_rotational_sum(T, B0, c["D_e"])), abs=1e-8)


def test_h2_low_T_limit():
    # Para ground state (v=0, J=0), weight 1: Z -> 1; first correction the ortho J=1 level, weight 3 x 3.
    lnZ, d1, d2 = ad.h2_internal_partition(np.array([1.0, 5.0, 20.0]))
    assert lnZ[0] == 0.0 and d1[0] < 1e-60 and abs(d2[0]) < 1e-60
    c = ad.H2_CONSTANTS
    E1 = (2.0 * (c["B_e"] - 0.5 * c["alpha_e"]) - 4.0 * c["D_e"]) * HC_OVER_K
    for T, value in zip((5.0, 20.0), lnZ[1:]):
        assert value == pytest.approx(math.log1p(9.0 * math.exp(-E1 / T)), rel=1e-6)


def test_h2_saturates_at_very_high_T():
    _, w, _, _ = ad.h2_levels()
    lnZ, d1, _ = ad.h2_internal_partition(1e9)
    assert float(lnZ) == pytest.approx(math.log(w.sum()), abs=1e-4)
    assert 0.0 < float(d1) < 1e-4


def test_h2_derivatives_match_finite_differences():
    T = np.logspace(0.5, 7.0, 60)
    h = 1e-4
    lnZ_p, d1_p, _ = ad.h2_internal_partition(T * math.exp(h))
    lnZ_m, d1_m, _ = ad.h2_internal_partition(T * math.exp(-h))
    _, d1, d2 = ad.h2_internal_partition(T)
    np.testing.assert_allclose(d1, (lnZ_p - lnZ_m) / (2 * h), rtol=0, atol=1e-7)
    np.testing.assert_allclose(d2, (d1_p - d1_m) / (2 * h), rtol=0, atol=1e-6)


def test_h2_vectorised_no_warnings_and_chunking():
    T = np.logspace(0.0, 9.0, 20001).reshape(3, -1)     # more than one block of temperatures
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with np.errstate(all="raise", under="ignore"):
            lnZ, d1, d2 = ad.h2_internal_partition(T)
    assert lnZ.shape == T.shape and np.all(np.isfinite(lnZ)) and np.all(np.isfinite(d1)) and np.all(np.isfinite(d2))
    single = np.array([ad.h2_internal_partition(t)[0] for t in T.ravel()[::997]])
    np.testing.assert_allclose(lnZ.ravel()[::997], single, rtol=0, atol=1e-13)
    assert np.all(np.diff(lnZ.ravel()) >= -1e-13)    # Z_int rises with T (all weights positive)


def test_h2_planck_larkin_sum_equals_the_plain_sum_while_cold():
    # each level of weight g loses g (1 + y) e^-D0/kT <= g (1 + D0/kT) e^-D0/kT (y = (D0 - E)/kT <= D0/kT),
    # so Z_plain - Z_PL <= (sum g) (1 + D0/kT) e^-D0/kT: a bound from the level count alone
    _, w, _, _ = ad.h2_levels()
    D = ad.H2_D0_EV * ad.const.eV / ad.const.k_B
    T = np.array([10.0, 300.0, 1000.0, 2000.0, 3000.0])
    plain, _, _ = ad.h2_internal_partition(T)
    pl, _, _ = ad.h2_bound_partition(T)
    loss = np.exp(plain) - np.exp(pl)
    assert np.all(loss >= 0.0)
    assert np.all(loss <= w.sum() * (1.0 + D / T) * np.exp(-D / T) * (1.0 + 1e-12) + 1e-300)
    np.testing.assert_allclose(pl[:3], plain[:3], rtol=0, atol=1e-12)


def test_h2_planck_larkin_sum_falls_as_T_to_the_minus_2_when_hot():
    # kT >> D0: e^y - 1 - y -> y^2/2 and e^-D0/kT -> 1, so Z -> sum g (D0 - E)^2 / (2 T^2) (own expansion,
    # next order ~ D0/T); the plain sum instead saturates at the total weight of the levels (~2700 / 4)
    E, w, _, _ = ad.h2_levels()
    D = ad.H2_D0_EV * ad.const.eV / ad.const.k_B
    T = np.array([1e8, 1e9])
    lnZ, d1, _ = ad.h2_bound_partition(T)
    expect = np.log(np.sum(w[:, None] * (D - E[:, None]) ** 2, axis=0) / (2.0 * T**2))
    np.testing.assert_allclose(lnZ, expect, rtol=0, atol=3.0 * D / T[0])
    np.testing.assert_allclose(d1, -2.0, rtol=0, atol=3.0 * D / T[0])


def test_h2_planck_larkin_derivatives_match_finite_differences():
    T = np.logspace(0.5, 8.0, 80)
    h = 1e-4
    lnZ_p, d1_p, _ = ad.h2_bound_partition(T * math.exp(h))
    lnZ_m, d1_m, _ = ad.h2_bound_partition(T * math.exp(-h))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        _, d1, d2 = ad.h2_bound_partition(T)
    np.testing.assert_allclose(d1, (lnZ_p - lnZ_m) / (2 * h), rtol=0, atol=1e-7)
    np.testing.assert_allclose(d2, (d1_p - d1_m) / (2 * h), rtol=0, atol=1e-6)


@pytest.mark.parametrize("T", [0.0, -5.0, np.nan, np.inf])
def test_h2_bad_temperature(T):
    with pytest.raises(ValueError, match="temperature"):
        ad.h2_internal_partition(np.array([300.0, T]))


def test_h2_constant_names():
    assert ad.H2_D0_EV == ad.H2_CONSTANTS["D0_eV"]
    assert set(ad.H2_FROM_MEMORY) <= set(ad.H2_CONSTANTS)
