"""`thermoplane table`: the table read back with xarray is evaluate() at every point; attributes; chunked
computation (one evaluate per chunk, bounded memory); NetCDF and Zarr; every error a user can cause."""

from __future__ import annotations

import json
import tracemalloc
from importlib import metadata

import numpy as np
import pytest
import xarray as xr

from thermoplane import physics as ph
from thermoplane.app import cli, eostable

CLASSICAL = {"electrons": "classical", "ionization": "full", "coulomb": False, "pairs": False}
CLASSICAL_ARGS = ["--electrons", "classical", "--ionization", "full", "--no-coulomb", "--no-pairs"]


def _at_random_points(ds, comp, options, n=40, seed=1):
    rng = np.random.default_rng(seed)
    i = rng.integers(0, ds.sizes["log_rho"], n)
    j = rng.integers(0, ds.sizes["log_T"], n)
    lr, lt = ds["log_rho"].values[i], ds["log_T"].values[j]
    state = ph.evaluate(10.0 ** lr, 10.0 ** lt, comp, **options)     # the same points, one call, no grid
    return i, j, state


def test_netcdf_table_equals_evaluate_at_random_points(tmp_path, capsys):
    # the full default physics, in this process
    out = tmp_path / "table.nc"
    code = cli.main(["table", "--X", "0.7", "--Y", "0.28", "--log-rho", "-6", "6", "37", "--log-T", "4", "9", "29",
                     "--chunk", "16", "--workers", "1", "-o", str(out)])
    assert code == 0 and "wrote" in capsys.readouterr().err
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    with xr.open_dataset(out, engine="h5netcdf") as ds:
        assert set(ds.data_vars) == set(eostable.FIELDS)
        assert ds["P"].dims == ("log_rho", "log_T") and ds["P"].shape == (37, 29)
        np.testing.assert_allclose(ds["log_rho"].values, np.linspace(-6, 6, 37), rtol=0, atol=0)
        i, j, state = _at_random_points(ds, comp, {})
        # to rounding: 1e-10, since a chunk and a handful of points take different vectorised paths and a
        # response function near zero (chi_T ~ 1e-6 where radiation dominates) keeps ~1e-12 of its size;
        for name in eostable.FIELDS:
            got = ds[name].values[i, j]
            want = getattr(state, name) * np.ones_like(got)
            # differences of large terms (the melting margin: two free energies of ~Gamma per ion) keep
            # rounding of their parts' size, not of their own
            scale = 1e-10 * max(1.0, float(np.nanmax(np.abs(want)))) if name == "melt_margin" else 0.0
            np.testing.assert_allclose(got, want, rtol=1e-10, atol=scale, err_msg=name)
        # units and words from the physics tables; the run's composition, options and version
        assert ds["P"].attrs == {"units": ph.FIELD_UNITS["P"], "description": ph.FIELD_DESCRIPTIONS["P"]}
        assert ds["c_V"].attrs["units"] == "erg g^-1 K^-1"
        assert ds.attrs["composition"].startswith("H-1=0.7,He-4=0.28")
        assert ds.attrs["physics_electrons"] == "fermi" and ds.attrs["physics_coulomb"] == "true"
        assert json.loads(ds.attrs["physics"]) == {"electrons": "fermi", "ionization": "saha", "coulomb": True,
                                                   "pairs": True}
        assert ds.attrs["thermoplane_version"] == metadata.version("thermoplane")
        assert ds.attrs["mu"] == pytest.approx(comp.mu)
    assert not list(tmp_path.glob(".*partial*"))


def test_zarr_on_a_local_cluster_equals_evaluate(tmp_path):
    comp = ph.parse_mix("He-4=0.98,C-12=0.02")
    ds = eostable.build(comp, np.linspace(-2, 8, 30), np.linspace(5, 9.5, 25), fields=["P", "eta", "gamma1"],
                        chunk=10, **CLASSICAL)
    out = tmp_path / "t.zarr"
    assert eostable.write(ds, out, workers=2) == "zarr"
    back = xr.open_zarr(out).load()
    assert sorted(back.data_vars) == ["P", "eta", "gamma1"]
    i, j, state = _at_random_points(back, comp, CLASSICAL, seed=7)
    for name in ("P", "eta", "gamma1"):
        np.testing.assert_allclose(back[name].values[i, j], getattr(state, name), rtol=1e-10, atol=0)
    assert back.attrs["physics_electrons"] == "classical" and back.attrs["composition"].startswith("He-4=0.98")
    # writing again replaces the old store
    small = eostable.build(comp, [0.0, 1.0], [7.0], fields=["P"], **CLASSICAL)
    eostable.write(small, out, workers=1)
    assert xr.open_zarr(out)["P"].shape == (2, 1)


def test_one_evaluate_per_chunk_and_fields_are_slices_of_it(monkeypatch, tmp_path):
    calls = []
    real = eostable.evaluate

    def counting(rho, T, comp, **kw):
        calls.append(np.broadcast_shapes(np.shape(rho), np.shape(T)))
        return real(rho, T, comp, **kw)

    monkeypatch.setattr(eostable, "evaluate", counting)
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    ds = eostable.build(comp, np.linspace(-4, 4, 25), np.linspace(4, 8, 12), chunk=10, **CLASSICAL)
    assert calls == []                                   # lazy until computed
    expected = sorted([(a, b) for a in (10, 10, 5) for b in (10, 2)])       # 3 x 2 chunks, once each
    ds.compute(scheduler="synchronous")
    assert sorted(calls) == expected
    calls.clear()
    eostable.write(ds, tmp_path / "t.nc", workers=1)     # the writer too: all 32 fields from one call per chunk
    assert sorted(calls) == expected


def test_memory_stays_a_few_chunks_while_writing(tmp_path):
    # 480 x 480 points x 32 fields = 59 MB of table; chunks of 80 x 80 points are 1.6 MB each
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    n, chunk = 480, 80
    ds = eostable.build(comp, np.linspace(-8, 8, n), np.linspace(3, 9, n), chunk=chunk, **CLASSICAL)
    full = n * n * len(eostable.FIELDS) * 8
    block = chunk * chunk * len(eostable.FIELDS) * 8
    tracemalloc.start()
    try:
        eostable.write(ds, tmp_path / "big.nc", workers=1)       # the worker thread runs in this process
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    print(f"peak traced memory {peak / 2**20:.1f} MB for a {full / 2**20:.0f} MB table "
          f"({block / 2**20:.1f} MB per chunk)")
    assert peak < 0.25 * full and peak < 12 * block


# ----------------------------------------------------------------------------
# every error a user can cause: one line, exit 2
# ----------------------------------------------------------------------------
GRID = ["--log-rho", "0", "1", "3", "--log-T", "6", "7", "3"]


@pytest.mark.parametrize("argv, fragment", [
    (["-o", "OUT/t.csv"], "must end in .nc"),
    (["-o", "OUT/missing/t.nc"], "does not exist"),
    (["-o", "OUT/plain_dir.zarr"], "not a Zarr store"),
    (["-o", "OUT/plain_dir.zarr/"], "not a Zarr store"),
    (["--log-rho", "0", "1", "x", "-o", "OUT/t.nc"], "whole number"),
    (["--log-rho", "1", "0", "3", "-o", "OUT/t.nc"], "LO must be below HI"),
    (["--log-T", "nan", "7", "3", "-o", "OUT/t.nc"], "finite"),
    (["--log-T", "a", "7", "3", "-o", "OUT/t.nc"], "must be numbers"),
    (["--log-T", "6", "7", "0", "-o", "OUT/t.nc"], "between 1 and"),
    (["--log-T", "6", "7", "1", "-o", "OUT/t.nc"], "LO = HI"),
    (["--fields", "P", "pressure", "-o", "OUT/t.nc"], "invalid choice"),
    (["--chunk", "0", "-o", "OUT/t.nc"], "at least 1"),
    (["--mix", "H-1=0.5,Xx-9=0.5", "-o", "OUT/t.nc"], "Xx-9"),
    (["-o", "OUT/t.nc", "--scheduler", "tcp://127.0.0.1:PORT"], "Dask scheduler"),
    (["-o", "OUT/t.nc", "--workers", "0"], "at least 1"),
    (["--log-rho", "0", "1", "-o", "OUT/t.nc"], "expected 3 arguments"),
])
def test_cli_user_errors_one_line_exit_2(tmp_path, capsys, monkeypatch, argv, fragment):
    from thermoplane.app import cluster
    from tests.app.test_batch import _free_port
    monkeypatch.setattr(cluster, "CONNECT_TIMEOUT", 1.0)
    (tmp_path / "plain_dir.zarr").mkdir()
    (tmp_path / "plain_dir.zarr" / "notes.txt").write_text("mine")
    argv = [a.replace("OUT", str(tmp_path)).replace("PORT", str(_free_port())) for a in argv]
    given = {a for a in argv if a.startswith("--log")}
    full = ["table", *CLASSICAL_ARGS] + [x for k in range(0, len(GRID), 4) if GRID[k] not in given
                                         for x in GRID[k:k + 4]] + argv
    try:
        code = cli.main(full)
    except SystemExit as exc:                                # argparse's own errors
        code = exc.code
    err = capsys.readouterr().err.strip()
    assert code == 2 and fragment in err, err
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    assert (tmp_path / "plain_dir.zarr" / "notes.txt").read_text() == "mine"      # nothing of the user's lost
    assert not list(tmp_path.glob("*.nc")) and not list(tmp_path.glob(".*partial*"))


def test_a_dataset_changed_after_build_writes_its_own_values(tmp_path):
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    ds = eostable.build(comp, np.linspace(-4, 4, 21), np.linspace(4, 8, 9), chunk=8, **CLASSICAL)
    part = ds[["P", "S"]].isel(log_rho=slice(3, 17))
    eostable.write(part, tmp_path / "part.nc", workers=1)
    with xr.open_dataset(tmp_path / "part.nc", engine="h5netcdf") as back:
        assert sorted(back.data_vars) == ["P", "S"] and back["P"].shape == (14, 9)
        np.testing.assert_array_equal(back["P"].values, part["P"].values)
        np.testing.assert_array_equal(back["log_rho"].values, np.linspace(-4, 4, 21)[3:17])


def test_two_tables_in_one_dask_session_do_not_share_chunks():
    from thermoplane.app import cluster
    grid = (np.linspace(0, 2, 5), np.linspace(6, 7, 4))
    hydrogen = eostable.build(ph.parse_mix("H-1=1"), *grid, fields=["P"], **CLASSICAL)
    helium = eostable.build(ph.parse_mix("He-4=1"), *grid, fields=["P"], **CLASSICAL)
    with cluster.client(1):
        p_h, p_he = hydrogen["P"].values, helium["P"].values
    assert np.all(p_h > 1.5 * p_he)          # mu = 1/2 against 4/3: the gas pressures differ
