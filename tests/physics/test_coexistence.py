"""Two-phase coexistence of the chemical picture (physics/eos/coexistence.py): the common tangent where the
isotherms have a van der Waals loop (hydrogen's plasma phase transition in this model)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics.eos.coexistence import binodal
from thermoplane.physics.eos.equilibrium import solve_equilibrium

H_ONLY = ph.Composition({"H-1": 1.0})
TEMPS = np.array([1.5e4, 2e4, 3e4, 4e4, 5e4])   # the loop closes between 5e4 and 6e4 K


def _chem(rho, T, comp=H_ONLY):
    return ph.evaluate(rho, T, comp, ionization="chemical")


@pytest.fixture(scope="module")
def curve():
    ra, rb, P = binodal(TEMPS, H_ONLY)
    return ra[:, 0], rb[:, 0], P[:, 0]


def test_loops_are_found_and_close_below_1e5_K(curve):
    ra, rb, P = curve
    assert np.all(np.isfinite(ra)) and np.all(ra < rb)
    # the gap closes towards the critical point: the coexisting densities approach each other as T rises
    assert np.all(np.diff(np.log(rb / ra)) < 0)
    ra2, _, _ = binodal(np.array([1.2e5, 3e5]), H_ONLY)
    assert np.all(np.isnan(ra2))


def test_coexisting_phases_have_equal_pressure_and_gibbs_energy(curve):
    # checked with the one-phase solver directly, independently of the construction's own bookkeeping
    ra, rb, P = curve
    a = solve_equilibrium(ra, TEMPS, H_ONLY)
    b = solve_equilibrium(rb, TEMPS, H_ONLY)
    np.testing.assert_allclose(a.P, b.P, rtol=1e-11)
    g = lambda s, r: s.E - TEMPS * s.S + s.P / r  # noqa: E731
    np.testing.assert_allclose(g(a, ra), g(b, rb), rtol=0, atol=1e-10 * np.max(a.P / ra))
    # each phase is mechanically stable at its end of the tie line
    assert np.all(a.P_lnrho > 0) and np.all(b.P_lnrho > 0)


def test_inside_the_pressure_is_flat_and_the_free_energy_below_the_one_phase_branch(curve):
    ra, rb, P = curve
    for k in (0, 3):
        T = TEMPS[k]
        rho = np.geomspace(ra[k], rb[k], 41)[1:-1]
        s = _chem(rho, np.full_like(rho, T))
        assert np.all(s.coexistence == 1.0)
        np.testing.assert_allclose(s.P_gas, P[k], rtol=1e-12)
        assert np.all(s.chi_rho == 0.0) and np.all(np.isfinite(s.gamma1)) and np.all(s.gamma1 > 0)
        one = solve_equilibrium(rho, np.full_like(rho, T), H_ONLY)
        fin = np.isfinite(one.P)
        # gas free energy per gram: radiation's is -P_rad / rho (E = a T^4 / rho, S = 4 a T^3 / (3 rho))
        f_two = s.E - T * s.S + s.P_rad / rho
        f_one = one.E - T * one.S
        assert np.all(f_two[fin] < f_one[fin])
        # just outside the tie line the one-phase state continues it: P matches P* to first order
        out = _chem(np.array([ra[k] * (1 - 1e-7), rb[k] * (1 + 1e-7)]), np.array([T, T]))
        assert np.all(out.coexistence == 0.0)
        np.testing.assert_allclose(out.P_gas, P[k], rtol=1e-5)


def _fd4(f, x, h):
    return (8 * (f(x * math.exp(h)) - f(x * math.exp(-h))) - (f(x * math.exp(2 * h)) - f(x * math.exp(-2 * h)))) / (12 * h)


@pytest.mark.parametrize("k", [1, 3, 4])
def test_identities_hold_inside_the_two_phase_region(curve, k):
    ra, rb, _ = curve
    T = TEMPS[k]
    h = 3e-4
    for rho in np.geomspace(ra[k], rb[k], 5)[1:-1]:
        s = _chem(rho, T)
        assert float(s.coexistence) == 1.0
        P, E_r = float(s.P), _fd4(lambda r: float(_chem(r, T).E), rho, h)            # d E / d ln rho
        P_t = _fd4(lambda t: float(_chem(rho, t).P), T, h)                          # d P / d ln T
        S_t = _fd4(lambda t: float(_chem(rho, t).S), T, h)
        E_t = _fd4(lambda t: float(_chem(rho, t).E), T, h)
        # rho^2 (dE/drho)_T = P - T (dP/dT)_rho, within 1e-8 of P
        assert abs(rho * E_r - (P - P_t)) < 1e-8 * P
        # T (dS/dT)_rho = (dE/dT)_rho, within 1e-6
        assert T * S_t == pytest.approx(E_t, rel=1e-6)
        # the reported slopes are those of the construction (Clapeyron's dP*/dT)
        assert float(s.dP_dT) * T == pytest.approx(P_t, rel=1e-6)
        assert float(s.c_V) * T == pytest.approx(E_t, rel=1e-6)
        # Gamma_1 from P and E (chi_rho = 0 here)
        g1 = (P_t / P) ** 2 * P / (rho * E_t)
        assert float(s.gamma1) == pytest.approx(g1, rel=1e-6)


@pytest.mark.parametrize("T", [2e4, 5e4])
def test_isotherm_scan_at_a_thousandth_of_a_dex_never_has_pressure_falling(T):
    lr = np.arange(-0.5, 1.5, 0.001)
    s = _chem(10.0**lr, np.full_like(lr, T))
    ok = np.isfinite(s.P)
    assert ok.mean() > 0.99
    assert np.all(s.chi_rho[ok] >= 0.0)
    assert np.all(np.diff(s.P[ok]) >= -1e-12 * s.P[ok][1:])
    assert np.any(s.coexistence == 1.0)


@pytest.mark.parametrize("T", [1e4, 3e4, 1e5])
def test_solar_like_scans_at_a_thousandth_of_a_dex_are_solved_and_never_have_pressure_falling(T):
    """The issue's scans: 1e4, 3e4 and 1e5 K across the pressure-ionization band of a solar-like mix, log rho
    -1 to 2.5 every 0.001 dex. Every point solved, P never falls (chi_rho >= 0), and the narrow helium loop
    (~0.03 dex at 1e5 K, less than the coarse scan's step) is constructed, not left as a falling P.
    Gamma_1 and nabla_ad do jump at the edges of the two-phase regions (a first-order transition)."""
    solar = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    lr = np.arange(-1.0, 2.5, 0.001)
    s = _chem(10.0**lr, np.full_like(lr, T), solar)
    assert np.all(np.isfinite(s.P))
    assert np.all(s.chi_rho >= 0.0)
    assert np.all(np.diff(s.P) >= -1e-12 * s.P[1:])
    assert np.any(s.coexistence[lr > 1.5] == 1.0)                  # the helium loop
    assert np.all(s.gamma1 > 0.0)


def test_the_flag_and_the_words_for_a_point_inside(curve):
    from thermoplane.physics.regimes import describe, flags
    ra, rb, _ = curve
    s = _chem(math.sqrt(ra[1] * rb[1]), TEMPS[1])
    assert bool(flags(s, H_ONLY)["two_phase"])
    assert any("two phases coexist" in m for m in describe(s, H_ONLY)[1])
    # the default options never flag it
    assert not bool(flags(ph.evaluate(math.sqrt(ra[1] * rb[1]), TEMPS[1], H_ONLY), H_ONLY)["two_phase"])


def test_the_command_line_says_it_in_words(curve, capsys):
    from thermoplane.app.cli import main
    ra, rb, _ = curve
    code = main(["point", "--rho", f"{math.sqrt(ra[1] * rb[1]):.6g}", "--T", f"{TEMPS[1]:g}", "--X", "1", "--Y", "0",
                 "--Z", "0", "--ionization", "chemical"])
    out = capsys.readouterr().out
    assert code in (0, None) and "two phases coexist" in out


def test_a_solar_like_mix_has_a_hydrogen_and_a_helium_loop_and_carbon_oxygen_its_own():
    # the helium loop is narrower than the coarse scan's step (~0.03 dex at 1e5 K): it is found from the dip
    # of chi_rho; the K shells of C and O give two loops near 3.5e3-4.3e3 and 9e3-1.04e4 g/cm^3
    solar = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    ra, rb, _ = binodal(np.array([5e4, 1e5]), solar)
    found = np.sort(ra[0][np.isfinite(ra[0])])
    assert found.size == 2
    assert 2.0 < found[0] < 6.0 and 30.0 < found[1] < 100.0      # g/cm^3: the H and the He loop
    assert 30.0 < np.nanmin(ra[1]) < 100.0                          # at 1e5 K the He loop only
    co = ph.Composition({"C-12": 0.5, "O-16": 0.5})
    ra, rb, _ = binodal(np.array([3e4, 1e5, 2e6]), co)
    for row in ra[:2]:
        loops = np.sort(row[np.isfinite(row)])
        assert loops.size == 2 and np.all(np.diff(np.log10(loops)) > 0.1)    # two loops, none counted twice
    assert np.isnan(ra[2]).all()


def test_the_plane_offers_h2_and_metal_electrons_and_draws_the_chemical_lines():
    from thermoplane.physics import contours, plane
    solar = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    g = plane.plane_grid(solar, log_rho=(-10.0, 3.0), log_T=(3.0, 5.5), n_rho=40, n_T=30, ionization="chemical")
    h2 = g.get("log_h2_fraction")
    assert np.nanmax(h2) > -0.01                     # molecular hydrogen in the cool corner
    me = g.get("metal_electron_fraction")
    assert np.nanmax(me) > 0.9 and np.nanmin(me) < 0.1    # metals give the electrons of cool gas only
    lines = {key: (xs, ys) for key, _, xs, ys in contours.grid_boundaries(g, solar, ionization="chemical")}
    assert lines["h2_dissociation"][0].size > 0
    xs, ys = lines["coexistence"]
    on = np.isfinite(xs) & np.isfinite(ys)
    assert on.sum() >= 4
    assert ys[on].min() > 3.9 and ys[on].max() < 5.5 and xs[on].min() > 0.0      # 1e4-3e5 K, above 1 g/cm^3
    # the default physics has neither line, and no H2 to shade
    d = plane.plane_grid(solar, log_rho=(-10.0, 3.0), log_T=(3.0, 5.5), n_rho=40, n_T=30)
    assert np.all(np.isnan(d.get("log_h2_fraction")))
    keys = {key for key, *_ in contours.grid_boundaries(d, solar)}
    assert not keys & {"h2_dissociation", "coexistence"}


def test_half_dissociation_line_follows_the_state():
    solar = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    b = {x.key: x for x in ph.boundaries(solar, log_rho=(-10.0, -4.0), log_T=(3.0, 4.0), n=12,
                                         ionization="chemical")}
    line = b["h2_dissociation"]
    ok = np.isfinite(line.log_T)
    assert ok.sum() >= 6
    s = ph.evaluate(10.0 ** line.log_rho[ok], 10.0 ** line.log_T[ok], solar, ionization="chemical")
    np.testing.assert_allclose(s.h2_fraction, 0.5, atol=1e-3)
