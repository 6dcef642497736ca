"""The compiled parallel steps of the default equation of state agree with their numpy counterparts
(physics.electron_fast against electron_table.table_state; physics.saha_kernel against matter._solve_saha)."""

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from thermoplane.physics import matter as M
from thermoplane.physics.electron_fast import pair_free_state, pair_onset_state, pair_table_state
from thermoplane.physics.electron_table import ONSET_TABLES, onset_state, table_state
from thermoplane.physics.electrons import ElectronGas, ElectronState

LR, LT = np.meshgrid(np.linspace(-12, 12, 97), np.linspace(3, 11.5, 61))
RHO, T = (10.0**LR).ravel(), (10.0**LT).ravel()


def test_pair_free_state_matches_the_numpy_table_on_the_plane():
    n = RHO * 0.5 / const.m_u
    new, old = pair_free_state(n, T), table_state(n, T, pairs=False)
    for name in ("eta", "dP_dn", "dP_dT_n", "dE_dn", "dE_dT_n", "deta_dn", "deta_dT"):
        np.testing.assert_allclose(getattr(new, name), getattr(old, name), rtol=1e-9, atol=0, err_msg=name)
    for name in ("P", "E", "n_minus", "n_plus"):
        np.testing.assert_allclose(getattr(new.gas, name), getattr(old.gas, name), rtol=1e-9, atol=0, err_msg=name)
    # S cancels between its parts in extreme degeneracy (|S| far below n k): compare on the scale n k
    np.testing.assert_allclose(new.gas.S, old.gas.S, rtol=0, atol=1e-9 * float(np.max(n * const.k_B)))
    np.testing.assert_allclose(new.gas.S / (n * const.k_B), old.gas.S / (n * const.k_B), atol=1e-8)


def _same_state(new, old, rtol):
    for name in ElectronGas._fields:
        np.testing.assert_allclose(getattr(new.gas, name), getattr(old.gas, name), rtol=rtol, atol=0, err_msg=name)
    for name in ElectronState._fields[1:]:
        np.testing.assert_allclose(getattr(new, name), getattr(old, name), rtol=rtol, atol=0, err_msg=name)


def test_compiled_pair_tables_match_the_numpy_reader():
    # the hot pair plasma (main pair table) and the pair onset (fine tables; the quadrature outside them):
    # the same free energy and formulas, so every field to rounding (the largest differences, ~1e-10, are in
    # the derivatives formed as differences of the interpolant's, e.g. G_uu - G_u)
    rng = np.random.default_rng(7)
    n = 10.0 ** rng.uniform(3.0, 37.5, 20000)          # some below and above the table: the numpy path
    T = 10.0 ** rng.uniform(9.4, 11.6, 20000)
    _same_state(pair_table_state(n, T), table_state(n, T, pairs=True), 1e-9)
    lo = min(r[0] for _, r, _ in ONSET_TABLES)
    n = 10.0 ** rng.uniform(lo, 36.0, 20000)
    T = 10.0 ** rng.uniform(8.0, 9.7, 20000)
    _same_state(pair_onset_state(n, T), onset_state(n, T), 1e-9)
    assert np.any(pair_onset_state(n, T).gas.n_plus > 0)


def test_pair_free_state_hands_points_outside_the_table_to_the_numpy_path():
    n = np.array([1.0, 1e3, 1e20, 1e20])          # below the table in n; and T below / above it
    T = np.array([1e5, 1e6, 5e2, 1e12])
    new, old = pair_free_state(n, T), table_state(n, T, pairs=False)
    np.testing.assert_array_equal(new.eta, old.eta)
    np.testing.assert_array_equal(new.gas.P, old.gas.P)


@pytest.mark.parametrize("X, Y", [(0.70, 0.28), (1.0, 0.0), (0.0, 0.98)])
def test_compiled_saha_root_matches_the_numpy_root(X, Y):
    comp = ph.Composition.from_xyz(X, Y, 1.0 - X - Y)
    saha, fixed = M._saha_elements(comp, "saha")
    n_full = RHO * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    n_c, ok = M.solve_saha_compiled(n_full, RHO, T, saha, fixed, M.ELEMENTS, True)
    n_p = M._solve_saha(n_full, RHO, T, saha, fixed, "fermi", True)
    # handed back to the numpy path: the roots below the table (1e4 cm^-3) and the points whose positrons
    # are not negligible at the root
    back = ~ok & (n_p >= 1e4)
    eta_back = M._eta_at(n_p[back], T[back], "fermi", False)[0]
    assert np.all(M._positron_bound(eta_back, T[back]) > 0.5 * M.NEGLIGIBLE_POSITRONS * n_p[back])
    assert ok.mean() > 0.5
    assert np.all(n_c[ok] >= 1e4)
    # both stop at |y - ln n_free| < 1e-13
    np.testing.assert_allclose(np.log(n_c[ok]), np.log(n_p[ok]), atol=1e-11, rtol=0)
    # charge neutrality at the compiled root, checked with the numpy stage fractions: phi = y - ln n_free
    # within 1e-11 of its slope dphi/dy (>= 1; ~100 in cold matter across pressure ionization, eta ~ 200,
    # where the solver stops once its step is below rounding in y)
    eta, deta_dn = M._eta_at(n_c[ok], T[ok], "fermi", False)
    st = M._stages(saha, eta, T[ok], n_full[ok])
    n_free, nf_eta = M._free_electrons(st, saha, fixed, RHO[ok])[:2]
    slope = 1.0 - nf_eta / n_free * deta_dn * n_c[ok]
    assert np.all(slope >= 1.0 - 1e-9)
    assert np.all(np.abs(np.log(n_c[ok]) - np.log(n_free)) <= 1e-11 * slope)


@pytest.mark.parametrize("X, Y", [(0.70, 0.28), (1.0, 0.0), (0.0, 0.98)])
def test_fused_saha_state_matches_the_numpy_passes(X, Y):
    """solve_saha_state (one compiled pass: gas at n_full, completeness, root, gas at the root) against the
    numpy passes of matter._saha_density and the numpy pair-free table at the same n_e."""
    from thermoplane.physics.electron_fast import state_from_points
    from thermoplane.physics.saha_kernel import solve_saha_state

    comp = ph.Composition.from_xyz(X, Y, 1.0 - X - Y)
    saha, fixed = M._saha_elements(comp, "saha")
    n_full = RHO * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    n_e, buf, ok = solve_saha_state(n_full, RHO, T, saha, fixed, M.ELEMENTS, True)
    n_p = M._saha_density(n_full, RHO, T, saha, fixed, "fermi", True)[0]
    assert ok.mean() > 0.5
    # complete ionization gives n_full exactly on both paths (bar points at the 1e-13 completeness threshold)
    same = n_p == n_full
    assert np.mean(n_e[ok & same] == n_full[ok & same]) > 0.99
    np.testing.assert_allclose(np.log(n_e[ok]), np.log(n_p[ok]), atol=1e-12, rtol=0)
    # handed back: outside the table, below its lowest density, or positrons not negligible at n_e
    back = ~ok & (n_p >= 1e4) & (T < 10.0**11.5) & (T >= 1e3) & (n_p < 1e37)
    eta_back = M._eta_at(n_p[back], T[back], "fermi", False)[0]
    assert np.all(M._positron_bound(eta_back, T[back]) > 0.5 * M.NEGLIGIBLE_POSITRONS * n_p[back])
    # the gas returned at n_e is the numpy table's there
    new, old = state_from_points(n_e[ok], T[ok], buf[ok]), table_state(n_e[ok], T[ok], pairs=False)
    for name in ("eta", "dP_dn", "dP_dT_n", "dE_dn", "dE_dT_n", "deta_dn", "deta_dT"):
        np.testing.assert_allclose(getattr(new, name), getattr(old, name), rtol=1e-9, atol=0, err_msg=name)
    np.testing.assert_allclose(new.gas.P, old.gas.P, rtol=1e-9, atol=0)


def _natural_scales(part, comp, rho, T):
    """Scales of P, E, S and their partials for a tolerance where a quantity crosses zero or cancels (E_rho
    of a classical gas is ~0 against E / rho): P / rho, P / T, |E| / rho, |E| / T, max(|S|, N k) / rho, ..."""
    S = np.maximum(np.abs(part.S), float(np.sum(comp.X / (comp.A * const.m_u))) * const.k_B)
    P, E = np.abs(part.P), np.abs(part.E)
    return {"P": P, "E": E, "S": S, "P_rho": P / rho, "P_T": P / T, "E_rho": E / rho, "E_T": E / T,
            "S_rho": S / rho, "S_T": S / T}


@pytest.mark.parametrize("X, Y", [(0.70, 0.28), (1.0, 0.0), (0.0, 1.0)])
def test_compiled_post_root_pass_matches_the_numpy_pass(X, Y):
    """matter() with the compiled pass after the Saha root (physics.matter_kernel) against matter(compiled=False)
    (the numpy passes of matter._post_root at the same root) on a plane over the default range: every output
    within 1e-12 of its value, or of its natural scale where it crosses zero or cancels."""
    from thermoplane.physics.matter_kernel import FIELDS, matter_at_root
    from thermoplane.physics.saha_kernel import solve_saha_state

    comp = ph.Composition.from_xyz(X, Y, 1.0 - X - Y)
    new = M.matter(RHO, T, comp, "fermi", "saha", True)
    old = M.matter(RHO, T, comp, "fermi", "saha", True, compiled=False)
    # the compiled pass is what matter() returned where the compiled Saha pass solved the point (most points)
    saha, fixed = M._saha_elements(comp, "saha")
    n_e, buf, ok = solve_saha_state(new.n_full, RHO, T, saha, fixed, M.ELEMENTS, True)
    assert ok.mean() > 0.5
    out = dict(zip(FIELDS, matter_at_root(RHO, T, new.n_full, n_e, buf, ok, comp, saha, fixed, M.ELEMENTS)))
    np.testing.assert_array_equal(new.part.S[ok], out["S"][ok])
    np.testing.assert_array_equal(new.part.E_T[ok], out["E_T"][ok])
    for name, scale in _natural_scales(old.part, comp, RHO, T).items():
        a, b = getattr(new.part, name), getattr(old.part, name)
        assert np.all(np.isfinite(a)), name
        err = np.abs(a - b)
        assert np.all(err <= 1e-12 * np.abs(b) + 1e-12 * scale), (name, float(np.max(err / (np.abs(b) + scale))))
    # the same root and gas: identical
    for name in ("P_e", "P_ion", "eta", "n_net", "n_minus", "n_plus", "n_full"):
        np.testing.assert_array_equal(getattr(new, name), getattr(old, name), err_msg=name)
    for name in ("ion_H", "ion_He1", "ion_He2", "mean_Z"):
        np.testing.assert_allclose(getattr(new, name), getattr(old, name), rtol=1e-12, atol=1e-14, err_msg=name)


@pytest.mark.skipif(np.finfo(np.longdouble).eps >= np.finfo(float).eps, reason="no extended precision here")
@pytest.mark.parametrize("X, Y", [(0.70, 0.28), (1.0, 0.0), (0.0, 1.0)])
def test_compiled_and_numpy_post_root_passes_are_both_accurate_to_rounding(X, Y):
    """The tolerance above is rounding: both passes stay within 1e-12 (natural scales) of the numpy pass run in
    extended precision (np.longdouble, ~19 digits) on the same electron gas. Cold matter through pressure
    ionization is the hard case (partials of ~C/kT^2 size cancel there)."""
    from thermoplane.physics.electron_fast import state_from_points
    from thermoplane.physics.matter_kernel import FIELDS, matter_at_root
    from thermoplane.physics.saha_kernel import solve_saha_state

    comp = ph.Composition.from_xyz(X, Y, 1.0 - X - Y)
    saha, fixed = M._saha_elements(comp, "saha")
    n_full = RHO * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    n_e, buf, ok = solve_saha_state(n_full, RHO, T, saha, fixed, M.ELEMENTS, True)
    r, t, nf, n, b = RHO[ok], T[ok], n_full[ok], n_e[ok], buf[ok]
    compiled = dict(zip(FIELDS, matter_at_root(r, t, nf, n, b, np.ones(r.size, bool), comp, saha, fixed,
                                               M.ELEMENTS)))
    numpy_pass = M._post_root(r, t, nf, n, state_from_points(n, t, b), comp, saha, fixed)
    L = np.longdouble
    exact = M._post_root(r.astype(L), t.astype(L), nf.astype(L), n.astype(L),
                         state_from_points(n.astype(L), t.astype(L), b.astype(L)), comp, saha, fixed)
    assert exact["E_T"].dtype == L
    scales = _natural_scales(M.Part(*(numpy_pass[f] for f in M.Part.__dataclass_fields__)), comp, r, t)
    for name, scale in scales.items():
        for label, got in (("compiled", compiled), ("numpy", numpy_pass)):
            err = (np.abs(got[name] - exact[name]) / (np.abs(exact[name]) + scale)).astype(float)
            assert err.max() <= 1e-12, (name, label, float(err.max()))
    for name in ("ion_H", "ion_He1", "ion_He2", "mean_Z"):
        np.testing.assert_allclose(compiled[name], exact[name].astype(float), rtol=1e-12, atol=1e-14, err_msg=name)
