"""Tests of physics/plane.py: the cached whole-plane grid."""

import threading

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import plane
from thermoplane.physics import regimes as rg

SOLAR = ph.Composition.from_xyz(0.70, 0.28, 0.02)
CLASSICAL = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)


@pytest.fixture(autouse=True)
def fresh_cache():
    plane.clear_cache()
    yield
    plane.clear_cache()


def test_shapes_and_metadata():
    g = plane.plane_grid(SOLAR, n_rho=30, n_T=20)
    assert g.log_rho.shape == (30,) and g.log_T.shape == (20,)
    assert g.regime.shape == (20, 30) and g.regime.dtype == np.int8
    names = {q.name for q in plane.QUANTITIES}
    assert names <= set(g.fields) | {"regime"}
    assert set(g.fields) - names == set(plane.LEVEL_FIELDS)        # fields only the lines use
    for name, arr in g.fields.items():
        assert arr.shape == (20, 30) and arr.dtype == np.float32, name
    assert g.log_rho[0] == -10 and g.log_rho[-1] == 10 and g.log_T[0] == 3 and g.log_T[-1] == 10
    centres = {q.name: q.centre for q in plane.QUANTITIES}
    assert centres["log_prad_pgas"] == 0 and centres["eta"] == 0 and centres["log_Gamma"] == 0
    assert centres["beta"] is None
    assert np.all((g.regime >= 0) & (g.regime < len(rg.REGIMES)))
    with pytest.raises(ValueError):
        g.get("temperature")


def test_values_equal_evaluate_at_sample_points():
    g = plane.plane_grid(SOLAR, log_rho=(-4, 8), log_T=(4, 9), n_rho=25, n_T=15)
    i = np.array([0, 3, 7, 14, 14])                 # rows (log T)
    j = np.array([0, 20, 12, 5, 24])                # columns (log rho)
    s = ph.evaluate(10.0 ** g.log_rho[j], 10.0 ** g.log_T[i], SOLAR)
    rtol = 1e-6                                      # float32 storage
    assert np.allclose(g.fields["beta"][i, j], s.beta, rtol=rtol)
    assert np.allclose(g.fields["eta"][i, j], s.eta, rtol=rtol, atol=1e-5)
    assert np.allclose(g.fields["gamma1"][i, j], s.gamma1, rtol=rtol)
    assert np.allclose(g.fields["nabla_ad"][i, j], s.nabla_ad, rtol=rtol)
    assert np.allclose(g.fields["log_prad_pgas"][i, j], np.log10(s.P_rad / s.P_gas), atol=1e-5)
    assert np.allclose(g.fields["log_Gamma"][i, j], np.log10(s.Gamma), atol=1e-5)
    assert np.allclose(g.fields["mean_ionization"][i, j], s.ye / SOLAR.ye, rtol=rtol)
    assert np.array_equal(g.regime[i, j], rg.classify_codes(s))


def test_burning_fields():
    try:
        from thermoplane.physics import burning
    except ModuleNotFoundError:
        pytest.skip("physics/burning.py is not there yet")
    g = plane.plane_grid(SOLAR, log_rho=(-4, 8), log_T=(6, 9.5), n_rho=12, n_T=11)
    assert g.unavailable == ()
    i, j = np.array([2, 6, 10]), np.array([8, 4, 11])
    for process in plane.BURNING_PROCESSES:
        eps = burning.epsilon(10.0 ** g.log_rho[j], 10.0 ** g.log_T[i], SOLAR, process)
        with np.errstate(divide="ignore"):
            ref = np.log10(eps)
        ref = np.where(ref >= plane.EPS_FLOOR, ref, np.nan)
        assert np.allclose(g.fields[f"eps_{process}"][i, j], ref, atol=1e-4, equal_nan=True), process
        f = g.fields[f"eps_{process}"]
        assert np.all(np.isnan(f) | (f >= plane.EPS_FLOOR))


def test_other_quantity_costs_no_physics_call():
    n0 = plane.evaluation_count()
    g1 = plane.plane_grid(SOLAR, n_rho=20, n_T=20)
    assert plane.evaluation_count() == n0 + 1
    g2 = plane.plane_grid(SOLAR, n_rho=20, n_T=20)
    _ = g2.get("eta"), g2.get("gamma1"), g2.get("regime")
    assert plane.evaluation_count() == n0 + 1 and g2 is g1
    # a key that differs only in an explicit default option is the same plane
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, **{k: v[0] for k, v in ph.OPTIONS.items()})
    assert plane.evaluation_count() == n0 + 1
    # any parameter that matters is a new plane
    plane.plane_grid(SOLAR, n_rho=21, n_T=20)
    plane.plane_grid(SOLAR, log_rho=(-9, 10), n_rho=20, n_T=20)
    plane.plane_grid(ph.Composition({"He-4": 1.0}), n_rho=20, n_T=20)
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, coulomb=not ph.OPTIONS["coulomb"][0])
    assert plane.evaluation_count() == n0 + 5
    assert plane.cache_info()[0] == 5


def test_cache_bound_evicts_least_recently_used(monkeypatch):
    one = plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=(3, 9)).nbytes
    plane.clear_cache()
    monkeypatch.setattr(plane, "CACHE_MB", 3.5 * one / 2**20)       # room for three planes
    keys = [(3, 9 + 0.1 * k) for k in range(8)]
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=keys[0])
    for k in keys[1:]:
        plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=k)
        plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=keys[0])      # keep the first one fresh
        entries, nbytes = plane.cache_info()
        assert entries <= 3 and nbytes <= 3.5 * one
    n0 = plane.evaluation_count()
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=keys[0])           # recently used: still there
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=keys[-1])          # newest: still there
    assert plane.evaluation_count() == n0
    plane.plane_grid(SOLAR, n_rho=20, n_T=20, log_T=keys[1])           # old: evicted
    assert plane.evaluation_count() == n0 + 1


def test_plane_larger_than_cache_is_not_kept(monkeypatch):
    monkeypatch.setattr(plane, "CACHE_MB", 1e-3)
    g = plane.plane_grid(SOLAR, n_rho=20, n_T=20)
    assert g.shape == (20, 20)
    assert plane.cache_info() == (0, 0)


def test_arrays_are_read_only():
    g = plane.plane_grid(SOLAR, n_rho=10, n_T=10)
    with pytest.raises(ValueError):
        g.fields["beta"][0, 0] = 0.0
    with pytest.raises(ValueError):
        g.regime[0, 0] = 1


def test_threads_share_one_cache():
    out = []
    def worker():
        out.append(plane.plane_grid(SOLAR, n_rho=30, n_T=30))
    threads = [threading.Thread(target=worker) for _ in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert len(out) == 4
    assert plane.cache_info()[0] == 1
    assert all(np.array_equal(g.fields["beta"], out[0].fields["beta"]) for g in out)


@pytest.mark.parametrize("kw, word", [
    (dict(n_rho=9), "n_rho"), (dict(n_T=1001), "n_T"), (dict(n_rho=50.0), "n_rho"), (dict(n_T=True), "n_T"),
    (dict(log_rho=(2, 1)), "log_rho"), (dict(log_rho=(-16, 0)), "log_rho"), (dict(log_T=(1, 5)), "log_T"),
    (dict(log_T=(3, np.nan)), "log_T"), (dict(log_T=(3, 13)), "log_T"), (dict(pairs="yes"), "pairs"),
])
def test_bad_input_raises_before_computing(kw, word):
    n0 = plane.evaluation_count()
    with pytest.raises(ValueError, match=word):
        plane.plane_grid(SOLAR, **kw)
    assert plane.evaluation_count() == n0


def test_bad_composition():
    with pytest.raises(ValueError, match="Composition"):
        plane.plane_grid({"H-1": 1.0})


def test_burning_and_neutrino_layers_are_computed_when_first_asked_for():
    g = plane.plane_grid(SOLAR, log_rho=(-4, 8), log_T=(6, 9.5), n_rho=12, n_T=11)
    lazy = {f"eps_{p}" for p in plane.BURNING_PROCESSES} | {"log_eps_nu", "nu_process"}
    assert lazy <= set(g.fields)                               # listed from the start
    assert not lazy & set(g.fields.computed())                 # but not computed
    # the cache counts every field from the start, so filling them in never breaks its bound
    assert g.nbytes == g.log_rho.nbytes + g.log_T.nbytes + g.regime.nbytes + 4 * 12 * 11 * len(g.fields)
    first = g.get("eps_pp")
    assert "eps_pp" in g.fields.computed() and "eps_cno" not in g.fields.computed()
    assert g.get("eps_pp") is first                            # computed once, then kept
    nu = g.get("nu_process")                                   # both neutrino fields in one go
    assert {"log_eps_nu", "nu_process"} <= set(g.fields.computed())
    assert nu.dtype == np.float32 and not nu.flags.writeable
    # the same numbers as the whole-plane arrays would give (physics.neutrinos on the broadcast grid)
    from thermoplane.physics import neutrinos
    rho, T = np.broadcast_arrays(10.0 ** g.log_rho[None, :], 10.0 ** g.log_T[:, None])
    parts = neutrinos.epsilon_parts(rho, T, SOLAR)
    with np.errstate(divide="ignore"):
        ref = np.log10(parts["total"])
    ref = np.where(ref >= plane.EPS_FLOOR, ref, np.nan).astype(np.float32)
    assert np.array_equal(g.get("log_eps_nu"), ref, equal_nan=True)


def test_lazy_layers_from_many_threads_are_computed_once():
    g = plane.plane_grid(SOLAR, n_rho=40, n_T=40)
    out = []
    threads = [threading.Thread(target=lambda: out.append(g.get("eps_triple_alpha"))) for _ in range(6)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert len(out) == 6 and all(a is out[0] for a in out)
