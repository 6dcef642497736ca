"""Tests for physics/tracks.py: the state along a track and its boundary crossings."""

import math
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thermoplane.physics import Composition, constants as const, equality_temperature, evaluate
from thermoplane.physics.tracks import (BOUNDARY_FIELDS, COMPOSITION_COLUMNS, CROSSING_COLUMNS, PAIR_ONSET,
                                        RHO_YE_RELATIVISTIC, ignition_key,
                            boundary_fields, downsample, evaluate_track, find_crossings, track_report)

CLASSICAL = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)
SUN = Composition.from_xyz(0.70, 0.28, 0.02)
GRID = np.arange(-20, 81) / 10.0          # log rho from -2 to 8 in exact tenths


# --------------------------------------------------------------------------- constants
def test_relativistic_density():
    # rho / mu_e = 9.74e5 x^3 g cm^-3 (Chandrasekhar 1939, as in PHYSICS.md)
    assert RHO_YE_RELATIVISTIC == pytest.approx(9.74e5, rel=1e-3)


def test_boundary_table():
    assert set(BOUNDARY_FIELDS) == {"equality", "degeneracy", "relativistic", "pairs", "coupling",
                                    "crystallization", "quantum_ions", "h_ionization", "he_ionization"}
    # levels: melting where the crystal and liquid free energies are equal; quantum ions at T = T_p
    assert BOUNDARY_FIELDS["crystallization"][1] == 0.0
    assert BOUNDARY_FIELDS["quantum_ions"][1] == 0.0
    assert BOUNDARY_FIELDS["relativistic"][1] == 1.0
    assert BOUNDARY_FIELDS["pairs"][1] == PAIR_ONSET


def test_physics_does_not_import_app():
    code = "import sys, thermoplane.physics.tracks; print('thermoplane.app' in sys.modules or 'dash' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


# --------------------------------------------------------------------------- crossings
def test_straight_track_across_analytic_line():
    # track log T = 6 + 0.2 log rho; boundary log T = log rho / 3 + 5.9:
    # they meet where 0.1 = (1/3 - 0.2) log rho, log rho = 0.75 (analytic), between rows 27 and 28
    lr = GRID
    lT = 6.0 + 0.2 * lr
    f = lT - (lr / 3.0 + 5.9)
    age = 2.0 * np.arange(lr.size)
    out = find_crossings({"line": f}, {"line": 0.0}, lr, lT, age=age)
    assert list(out.columns) == CROSSING_COLUMNS and len(out) == 1
    c = out.iloc[0]
    assert (c.boundary, c.row, c.row_after, c.direction) == ("line", 27, 28, -1)
    assert c.fraction == pytest.approx(0.5, abs=1e-9)
    assert c.log_rho == pytest.approx(0.75, abs=1e-9)
    assert c.log_T == pytest.approx(6.15, abs=1e-9)
    assert c.age == pytest.approx(55.0, abs=1e-8)


def test_level_is_subtracted():
    lr = GRID
    out = find_crossings({"a": lr}, {"a": 0.75}, lr, lr)
    assert len(out) == 1 and out.log_rho.iloc[0] == pytest.approx(0.75, abs=1e-12)
    assert out.direction.iloc[0] == 1 and math.isnan(out.age.iloc[0])


def test_invalid_rows_are_skipped():
    lr = GRID
    lT = 6.0 + 0.2 * lr
    f = lT - (lr / 3.0 + 5.9)
    f_bad = f.copy()
    f_bad[[27, 28]] = [-5.0, 5.0]          # garbage on invalid rows must not create crossings
    f_bad[40] = np.nan                     # a non-finite field value is skipped too
    valid = np.ones(lr.size, bool)
    valid[[27, 28]] = False
    out = find_crossings({"line": f_bad}, {"line": 0.0}, lr, lT, valid=valid)
    assert len(out) == 1
    c = out.iloc[0]
    assert (c.row, c.row_after) == (26, 29)
    assert c.log_rho == pytest.approx(0.75, abs=1e-9)     # the field is linear: still exact


def test_exact_zero_counted_once():
    lr = GRID
    out = find_crossings({"a": lr - 1.0}, {"a": 0.0}, lr, lr)
    assert len(out) == 1
    assert (out.row.iloc[0], out.row_after.iloc[0], out.fraction.iloc[0]) == (30, 31, 0.0)
    assert out.log_rho.iloc[0] == 1.0


@pytest.mark.parametrize("values,rows", [
    ([-1, 0, 0, 0, 2], [1]),         # a run of zeros between signs: one crossing at its first row
    ([1, 0, 1], []),                 # a touch is not a crossing
    ([0, 0, 1, 2], []),              # starting on the boundary is not a crossing
    ([1, 2, 0], []),                 # nor is ending on it
    ([1, 0, -1, 0, 1], [1, 3]),
    ([1, -1, 1, -1], [0, 1, 2]),
    ([3.0], []), ([], []),
])
def test_zero_patterns(values, rows):
    f = np.asarray(values, dtype=float)
    x = np.arange(f.size, dtype=float)
    out = find_crossings({"k": f}, {"k": 0.0}, x, x)
    assert out.row.tolist() == rows
    assert ((out.fraction >= 0) & (out.fraction < 1)).all()


def test_several_boundaries_in_track_order():
    x = np.arange(10, dtype=float) + 0.5
    out = find_crossings({"late": x - 7.0, "early": x - 2.0}, {"late": 0.0, "early": 0.0}, x, x)
    assert out.boundary.tolist() == ["early", "late"]
    assert out.log_rho.tolist() == pytest.approx([2.0, 7.0])


def test_crossings_errors():
    x = np.arange(5.0)
    with pytest.raises(ValueError, match="no level"):
        find_crossings({"a": x}, {}, x, x)
    with pytest.raises(ValueError, match="rows"):
        find_crossings({"a": x}, {"a": 0}, x, x[:3])
    with pytest.raises(ValueError, match="valid"):
        find_crossings({"a": x}, {"a": 0}, x, x, valid=[True])
    with pytest.raises(ValueError, match="finite"):
        find_crossings({"a": x}, {"a": np.nan}, x, x)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.sampled_from([-2.0, -1.0, -0.5, 0.0, 0.5, 1.0, 3.0]), max_size=40),
       st.lists(st.booleans(), min_size=40, max_size=40))
def test_count_matches_slow_reference(values, valid):
    # independent reference: walk the usable rows, count sign changes of the non-zero values
    f = np.asarray(values, dtype=float)
    mask = np.asarray(valid[:f.size], dtype=bool)
    signs = [np.sign(v) for v, ok in zip(f, mask) if ok and v != 0]
    expected = sum(1 for a, b in zip(signs, signs[1:]) if a != b)
    x = np.arange(f.size, dtype=float)
    out = find_crossings({"k": f}, {"k": 0.0}, x, x, valid=mask)
    assert len(out) == expected
    if expected:
        assert mask[out.row].all() and mask[out.row_after].all()
        assert (out.row < out.row_after).all()
        # the interpolated point lies on the boundary where the field is linear between the rows
        w = out.fraction.to_numpy()
        g = f[out.row] + w * (f[out.row_after] - f[out.row])
        exact_zero = f[out.row] == 0
        assert np.allclose(g[~exact_zero], 0.0, atol=1e-12)


# --------------------------------------------------------------------------- downsample
def test_downsample_keeps_ends_and_kept_rows():
    keep = [5, 7, 12345, 99998]
    idx = downsample(100_000, keep, max_points=100)
    assert idx[0] == 0 and idx[-1] == 99_999
    assert set(keep) <= set(idx.tolist())
    assert np.all(np.diff(idx) > 0)
    assert len(idx) <= 100 + len(keep)
    gaps = np.diff(np.setdiff1d(idx, keep))
    assert gaps.max() - gaps.min() <= 1        # evenly spaced apart from the kept rows


def test_downsample_short_track_keeps_everything():
    assert downsample(7, [3], max_points=100).tolist() == list(range(7))
    assert downsample(0, []).tolist() == []


def test_downsample_errors():
    with pytest.raises(ValueError, match="outside"):
        downsample(10, [10])
    with pytest.raises(ValueError, match="max_points"):
        downsample(10, [], max_points=1)


# --------------------------------------------------------------------------- evaluation
def test_evaluate_track_matches_evaluate_and_nan_on_invalid():
    lr = np.linspace(-2, 6, 9)
    lT = np.linspace(6, 8.5, 9)
    valid = np.ones(9, bool)
    valid[3] = False
    lT_bad = lT.copy()
    lT_bad[5] = np.nan                      # non-finite rows are skipped even if marked valid
    s = evaluate_track(lr, lT_bad, SUN, valid=valid, **CLASSICAL)
    ref = evaluate(10.0 ** lr, 10.0 ** lT, SUN, **CLASSICAL)
    ok = valid.copy()
    ok[5] = False
    assert s.valid.tolist() == ok.tolist()
    for name in ("P", "P_gas", "eta", "Gamma", "gamma1", "ye"):
        assert np.allclose(s[name][ok], getattr(ref, name)[ok], rtol=1e-12)
        assert np.all(np.isnan(s[name][~ok]))


def test_evaluate_track_default_physics_matches_evaluate():
    lr = np.array([0.0, 2.0, 5.0])
    lT = np.array([7.0, 7.5, 8.0])
    s = evaluate_track(lr, lT, SUN)
    ref = evaluate(10.0 ** lr, 10.0 ** lT, SUN)
    assert np.allclose(s.P, ref.P, rtol=1e-12) and np.allclose(s.eta, ref.eta, rtol=1e-12, atol=1e-12)


def test_evaluate_track_per_row_composition():
    lr = np.array([1.0, 1.0, 2.0, 2.0, 3.0])
    lT = np.array([7.0, 7.1, 7.2, 7.3, 7.4])
    X = np.array([0.70, 0.70004, 0.35, 0.0, 1.5])     # the last is not a mass fraction
    Y = np.array([0.28, 0.28, 0.63, 0.98, 0.0])
    s = evaluate_track(lr, lT, SUN, X=X, Y=Y, **CLASSICAL)
    assert s.valid.tolist() == [True, True, True, True, False]
    metals = {n: x / SUN.metals for n, x, z in zip(SUN.names, SUN.X, SUN.Z) if z > 2}
    for i, (x, y) in enumerate([(0.70, 0.28), (0.70, 0.28), (0.35, 0.63), (0.0, 0.98)]):
        comp = Composition.from_xyz(x, y, 1 - x - y, metals=metals)
        ref = evaluate(10.0 ** lr[i], 10.0 ** lT[i], comp, **CLASSICAL)
        assert s.P[i] == pytest.approx(float(ref.P), rel=1e-12)
        assert s.ye_full[i] == pytest.approx(comp.ye, rel=1e-12)
    assert np.isnan(s.P[4])
    # only X given: Y = 1 - X - Z of comp
    s2 = evaluate_track(lr[:1], lT[:1], SUN, X=[0.5], **CLASSICAL)
    comp = Composition.from_xyz(0.5, 1 - 0.5 - SUN.metals, SUN.metals, metals=metals)
    assert s2.ye_full[0] == pytest.approx(comp.ye, rel=1e-9)


def test_evaluate_track_errors():
    with pytest.raises(ValueError, match="rows"):
        evaluate_track([1.0, 2.0], [7.0], SUN)
    with pytest.raises(ValueError, match="Composition"):
        evaluate_track([1.0], [7.0], {"H-1": 1.0})
    with pytest.raises(ValueError, match="option"):
        evaluate_track([1.0], [7.0], SUN, flavour="x")


def test_boundary_fields_from_state():
    s = evaluate(np.array([1.0, 1e6]), np.array([1e7, 1e7]), SUN, **CLASSICAL)
    f = boundary_fields(s, SUN)
    assert set(f) == set(BOUNDARY_FIELDS)
    assert np.allclose(f["equality"], np.log10(s.P_rad / s.P_gas))
    # x_F^3 = rho ye / 9.74e5 (Chandrasekhar 1939)
    assert f["relativistic"][1] ** 3 == pytest.approx(1e6 * SUN.ye / 9.74e5, rel=2e-3)
    # classical options: no Coulomb terms, so no melting margin (NaN); T_p is a property of the ions
    assert np.all(np.isnan(f["crystallization"]))
    assert np.allclose(f["quantum_ions"], np.log10(s.T_p / s.T))
    d = evaluate(np.array([1e8]), np.array([1e6]), SUN)
    assert np.allclose(boundary_fields(d, SUN)["crystallization"], -d.melt_margin)
    assert np.allclose(boundary_fields(s, 0.5)["relativistic"] ** 3, np.array([1.0, 1e6]) * 0.5 / RHO_YE_RELATIVISTIC)


def test_equality_crossing_classical_analytic():
    # non-degenerate fully ionized gas: P_rad = P_gas at T^3 = 3 k rho / (a mu m_u) (PHYSICS.md);
    # log(P_rad/P_gas) is linear in log T at fixed rho, so interpolation is exact
    lT = np.arange(600, 901) / 100.0
    lr = np.zeros_like(lT)
    _, cr = track_report(lr, lT, SUN, boundaries=["equality"], **CLASSICAL)
    expected = math.log10((3 * const.k_B * 1.0 / (const.a_rad * SUN.mu * const.m_u)) ** (1 / 3))
    assert len(cr) == 1 and cr.direction.iloc[0] == 1
    assert cr.log_T.iloc[0] == pytest.approx(expected, abs=1e-9)
    # and the rounded coefficient of PHYSICS.md: T = 3.21e7 K (rho/mu)^(1/3)
    assert 10 ** cr.log_T.iloc[0] == pytest.approx(3.21e7 * (1 / SUN.mu) ** (1 / 3), rel=2e-3)


def test_equality_crossing_lies_on_equality_default_physics():
    # whatever the default physics, the interpolated crossing must sit where P_rad = P_gas
    # (to the interpolation error of a 0.01 dex step), and near the classical value at this density
    lT = np.arange(700, 801) / 100.0
    lr = np.full_like(lT, -1.0)
    _, cr = track_report(lr, lT, SUN, boundaries=["equality"])
    assert len(cr) == 1
    s = evaluate(0.1, 10 ** cr.log_T.iloc[0], SUN)
    assert float(s.P_rad / s.P_gas) == pytest.approx(1.0, rel=1e-3)
    classical = float(equality_temperature(0.1, SUN, **CLASSICAL))
    assert cr.log_T.iloc[0] == pytest.approx(math.log10(classical), abs=0.05)


def test_degeneracy_crossing_classical_analytic():
    # Maxwell–Boltzmann electrons: eta = ln(n_e lambda^3 / 2), lambda = h / sqrt(2 pi m_e k T);
    # eta = 0 at rho = 2 m_u / (ye lambda^3); eta is linear in ln rho, so interpolation is exact
    T = 1e7
    lr = np.arange(-100, 101) / 20.0
    lT = np.full_like(lr, 7.0)
    _, cr = track_report(lr, lT, SUN, age=np.arange(lr.size) * 1e3, boundaries=["degeneracy"], **CLASSICAL)
    lam = const.h / math.sqrt(2 * math.pi * const.m_e * const.k_B * T)
    expected = math.log10(2 * const.m_u / (SUN.ye * lam**3))
    assert len(cr) == 1 and cr.log_rho.iloc[0] == pytest.approx(expected, abs=1e-9)
    assert cr.age.iloc[0] == pytest.approx(1e3 * (expected + 5) * 20, rel=1e-9)


def test_relativistic_crossing():
    lr = np.arange(400, 801) / 100.0
    lT = np.full_like(lr, 7.0)
    _, cr = track_report(lr, lT, SUN, boundaries=["relativistic"], **CLASSICAL)
    # rho / mu_e = 9.74e5 g cm^-3 at x_F = 1 (Chandrasekhar 1939)
    assert len(cr) == 1
    assert cr.log_rho.iloc[0] == pytest.approx(math.log10(9.74e5 * SUN.mu_e), abs=1e-3)


def test_coupling_crossing_lies_on_gamma_one():
    lr = np.linspace(-2, 8, 201)
    lT = np.full_like(lr, 6.0)
    _, cr = track_report(lr, lT, SUN, boundaries=["coupling"], **CLASSICAL)
    assert len(cr) == 1
    # Gamma is a power law in rho at fixed T, so log10 Gamma is linear in log rho: exact on the line
    gamma = evaluate(10 ** cr.log_rho.iloc[0], 1e6, SUN, **CLASSICAL).Gamma
    assert float(gamma) == pytest.approx(1.0, rel=1e-9)


def test_track_report_shapes_and_errors():
    lr = np.linspace(-2, 8, 50)
    lT = np.linspace(6, 9, 50)
    valid = np.ones(50, bool)
    valid[10] = False
    cols, cr = track_report(lr, lT, SUN, valid=valid, **CLASSICAL)
    assert len(cols) == 50 and {"P", "eta", "Gamma", "x_F", "ye_full"} <= set(cols.columns)
    assert np.isnan(cols.P.iloc[10]) and not np.isnan(cols.P.iloc[11])
    assert list(cr.columns) == CROSSING_COLUMNS + COMPOSITION_COLUMNS and set(cr.boundary) <= set(BOUNDARY_FIELDS)
    assert 10 not in set(cr.row) | set(cr.row_after)
    with pytest.raises(ValueError, match="unknown boundary"):
        track_report(lr, lT, SUN, boundaries=["nope"])


def test_empty_crossings_frame():
    out = find_crossings({"a": np.ones(3)}, {"a": 0.0}, np.zeros(3), np.zeros(3))
    assert isinstance(out, pd.DataFrame) and list(out.columns) == CROSSING_COLUMNS and len(out) == 0


def test_crossings_say_which_composition_they_used():
    lr = np.linspace(-2.0, 6.0, 41)
    lT = np.full(41, 7.0)
    X = np.linspace(0.7, 0.0, 41)
    Y = 0.98 - X
    _, cr = track_report(lr, lT, SUN, X=X, Y=Y, boundaries=["degeneracy"], **CLASSICAL)
    assert len(cr) == 1 and cr.composition.iloc[0] == "track"
    r, ra, w = int(cr.row.iloc[0]), int(cr.row_after.iloc[0]), float(cr.fraction.iloc[0])
    assert cr.X.iloc[0] == pytest.approx(X[r] + w * (X[ra] - X[r]))
    assert cr.X.iloc[0] + cr.Y.iloc[0] + cr.Z.iloc[0] == pytest.approx(1.0)
    # the crossing sits where eta = 0 for that row's own composition (independent evaluation)
    comp = Composition.from_xyz(float(cr.X.iloc[0]), float(cr.Y.iloc[0]), float(cr.Z.iloc[0]))
    s = evaluate(10.0 ** cr.log_rho.iloc[0], 1e7, comp, **CLASSICAL)
    assert abs(float(s.eta)) < 0.05
    _, cr2 = track_report(lr, lT, SUN, boundaries=["degeneracy"], **CLASSICAL)
    assert cr2.composition.iloc[0] == "panel" and cr2.X.iloc[0] == pytest.approx(SUN.hydrogen)


def test_ignition_crossings_at_given_levels():
    from thermoplane.physics import burning
    lT = np.linspace(6.5, 8.5, 201)
    lr = np.full(201, 2.0)
    _, cr = track_report(lr, lT, SUN, boundaries=[], ignition=[("pp", 1.0), ("pp", 1e3)], **CLASSICAL)
    assert list(cr.boundary) == [ignition_key("pp", 1.0), ignition_key("pp", 1e3)]
    for level, t in zip((1.0, 1e3), cr.log_T):
        eps = float(burning.epsilon(100.0, 10.0 ** t, SUN, "pp"))
        assert np.log10(eps) == pytest.approx(np.log10(level), abs=0.02)
    with pytest.raises(ValueError, match="> 0"):
        track_report(lr, lT, SUN, ignition=[("pp", -1.0)])
    with pytest.raises(ValueError, match="unknown burning process"):
        track_report(lr, lT, SUN, ignition=[("fusion", 1.0)])


def test_report_is_generic_over_the_lines_regimes_defines(monkeypatch):
    from thermoplane.physics import regimes, tracks
    monkeypatch.setattr(regimes, "BOUNDARY_KEYS", regimes.BOUNDARY_KEYS + ("hot",))
    monkeypatch.setitem(regimes._FIELDS, "hot", lambda s: np.log10(s.T) - 7.0)
    assert "hot" in tracks.track_boundaries()
    _, cr = track_report(np.full(11, 1.0), np.linspace(6.5, 7.5, 11), SUN, **CLASSICAL)
    assert "hot" in set(cr.boundary)
