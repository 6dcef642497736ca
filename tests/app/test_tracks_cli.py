"""`thermoplane track` as a user calls it: subprocesses, every format, JSON, CSV, one-line errors."""

from __future__ import annotations

import csv
import gzip
import json
import math
import subprocess
import sys
from pathlib import Path

import pytest
import scipy.constants as sc

from thermoplane import physics as ph
from thermoplane.physics import regimes
from thermoplane.physics.tracks import BOUNDARY_FIELDS

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "assets" / "examples"
COMPUTED = ["P", "P_gas", "P_rad", "beta", "eta", "gamma1", "nabla_ad", "regime"]
# Textbook ideal gas plus radiation: fast, and the crossings have closed forms.
CLASSICAL = ["--electrons", "classical", "--ionization", "full", "--no-coulomb", "--no-pairs"]


def run(*args):
    return subprocess.run([sys.executable, "-m", "thermoplane.app.cli", *map(str, args)], capture_output=True, text=True,
                          timeout=300, cwd=ROOT)


def track_json(*args):
    r = run("track", *args, "--json")
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def read_csv(path):
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_help_lists_track():
    r = run("track", "--help")
    assert r.returncode == 0
    assert "usage: thermoplane track" in r.stdout
    for flag in ("--rho-col", "--T-col", "--log", "--linear", "--units", "--age-col", "--json", "--max-mb", "-o"):
        assert flag in r.stdout
    assert "track" in run("--help").stdout


@pytest.mark.parametrize("name, rows", [("example_central_track.csv", 60), ("example_profile.tsv", 41),
                                        ("example_whitespace.txt", 30)])
def test_every_example_file_json_shape_and_csv(tmp_path, name, rows):
    out = tmp_path / "out.csv"
    data = track_json(EXAMPLES / name, *CLASSICAL, "-o", out)
    assert set(data) == {"rows", "bad_rows", "composition_columns", "crossings"}
    assert data["rows"] == rows and data["bad_rows"] == []
    for c in data["crossings"]:
        assert set(c) == {"boundary", "label", "row", "log_rho", "log_T", "age", "X", "Y", "Z", "composition"}
        assert c["boundary"] in BOUNDARY_FIELDS or c["boundary"].startswith(("ignition_", "nu_ignition_", "capture_"))
        assert 0 <= c["row"] < rows
        assert math.isfinite(c["log_rho"]) and math.isfinite(c["log_T"])
    table = read_csv(out)
    assert len(table) == rows
    assert list(table[0])[-len(COMPUTED):] == COMPUTED
    assert all(r["regime"] in regimes.REGIME_KEYS for r in table)


def test_formats_semicolon_gzip_fortran_and_si_agree(tmp_path):
    # the same two states written four ways must give the same pressures
    rho, T = [1.0, 100.0], [1e7, 3e7]
    plain = "rho;T\n" + "".join(f"{r};{t}\n" for r, t in zip(rho, T))
    (tmp_path / "semi.csv").write_text(plain)
    (tmp_path / "gz.csv.gz").write_bytes(gzip.compress(plain.replace(";", ",").encode()))
    (tmp_path / "fortran.txt").write_text("rho T\n" + "".join(f"{r:.6E}  {t:.6E}\n".replace("E", "D")
                                                               for r, t in zip(rho, T)))
    (tmp_path / "si.csv").write_text("density,temperature\n" + "".join(f"{r * 1000},{t}\n" for r, t in zip(rho, T)))
    pressures = []
    for name, extra in (("semi.csv", []), ("gz.csv.gz", []), ("fortran.txt", []), ("si.csv", ["--units", "si"])):
        out = tmp_path / (name + ".out.csv")
        r = run("track", tmp_path / name, *CLASSICAL, "--linear", *extra, "-o", out)
        assert r.returncode == 0, r.stderr
        pressures.append([float(row["P"]) for row in read_csv(out)])
    for p in pressures[1:]:
        assert p == pytest.approx(pressures[0], rel=1e-12)
    # ideal gas plus radiation (textbook): P = rho k T / (mu m_u) + a T^4 / 3, mu from the composition
    mu = ph.Composition.from_xyz(0.70, 0.28, 0.02).mu
    a = 4 * sc.Stefan_Boltzmann / sc.c * 10.0           # J m^-3 K^-4 -> erg cm^-3 K^-4 (1e7 / 1e6)
    for r, t, p in zip(rho, T, pressures[0]):
        expected = r * sc.k * 1e7 * t / (mu * sc.atomic_mass * 1e3) + a * t**4 / 3
        assert p == pytest.approx(expected, rel=1e-6)


def test_equality_crossing_against_closed_form(tmp_path):
    # P_rad = P_gas for ideal gas + radiation (textbook): a T^3 / 3 = rho k / (mu m_u)
    comp = ph.Composition({"H-1": 1.0})
    lines = ["log_rho,log_T,age"] + [f"0.0,{6 + 0.1 * i:.1f},{10.0 * i}" for i in range(21)]
    f = tmp_path / "line.csv"
    f.write_text("\n".join(lines) + "\n")
    data = track_json(f, "--mix", "H-1=1", *CLASSICAL)
    eq = [c for c in data["crossings"] if c["boundary"] == "equality"]
    assert len(eq) == 1
    a = 4 * sc.Stefan_Boltzmann / sc.c * 10.0
    T_eq = (3 * sc.k * 1e7 / (comp.mu * sc.atomic_mass * 1e3 * a)) ** (1 / 3)
    assert eq[0]["log_T"] == pytest.approx(math.log10(T_eq), abs=1e-9)   # the field is linear in log T
    assert eq[0]["log_rho"] == 0.0
    # age interpolated with the same weight: age = 100 (log T - 6)
    assert eq[0]["age"] == pytest.approx(100 * (math.log10(T_eq) - 6), rel=1e-9)


def test_overrides_and_bad_rows_kept(tmp_path):
    f = tmp_path / "odd.csv"
    f.write_text("a,b,when\n1.0,1e7,0\n-2,1e7,1\n10,abc,2\n100,2e7,3\n")
    r = run("track", f)
    assert r.returncode == 2 and len(r.stderr.strip().splitlines()) == 1
    assert "--rho-col" in r.stderr
    out = tmp_path / "out.csv"
    data = track_json(f, "--rho-col", "a", "--T-col", "b", "--linear", "--age-col", "when", *CLASSICAL, "-o", out)
    assert data["rows"] == 4 and data["bad_rows"] == [1, 2]
    table = read_csv(out)
    assert [float(row["a"]) for row in table] == [1.0, -2.0, 10.0, 100.0]      # nothing the user gave is lost
    assert table[2]["b"] == "abc"
    for i in (1, 2):
        assert all(table[i][k] == "" for k in COMPUTED)
    assert float(table[0]["P"]) > 0 and table[3]["regime"] == "ideal_gas"


def test_human_summary_names_the_boundaries():
    r = run("track", EXAMPLES / "example_central_track.csv", *CLASSICAL)
    assert r.returncode == 0, r.stderr
    assert "60 rows, 0 bad" in r.stdout
    assert "electron degeneracy" in r.stdout and "crossing" in r.stdout


def test_csv_cells_are_neutralised(tmp_path):
    f = tmp_path / "inject.csv"
    f.write_text("label,log_rho,log_T\n=SUM(A1),1,7\n+cmd,2,7.1\n-x,3,7.2\n@evil,4,7.3\nplain,5,7.4\n")
    out = tmp_path / "out.csv"
    r = run("track", f, *CLASSICAL, "-o", out)
    assert r.returncode == 0, r.stderr
    table = read_csv(out)
    assert [row["label"] for row in table] == ["'=SUM(A1)", "'+cmd", "'-x", "'@evil", "plain"]
    assert table[0]["log_rho"] == "1" and float(table[0]["eta"]) < 0       # numbers untouched (negative eta too)
    assert table[0]["eta"].startswith("-")


@pytest.mark.parametrize("content, args, fragment", [
    (b"", [], "empty"),
    (b"\x00\x01\x02binary\x00" * 20, [], "binary"),
    (b"mass,radius\n1,2\n", [], "density"),
    (b"rho,T\n" + b"1,1e7\n" * 2000, ["--max-mb", "0.001"], "limit"),
    (b"rho,T\n1,1e7\n", ["--units", "furlongs"], "invalid choice"),
])
def test_bad_files_one_line_exit_2(tmp_path, content, args, fragment):
    f = tmp_path / "bad.csv"
    f.write_bytes(content)
    r = run("track", f, *args)
    assert r.returncode == 2
    assert fragment in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1
    assert "Traceback" not in r.stderr


def test_missing_file_one_line_exit_2():
    r = run("track", "/nonexistent/track.csv")
    assert r.returncode == 2 and "No such file" in r.stderr and len(r.stderr.strip().splitlines()) == 1


# -- issue 14: composition columns, ignition crossings, headers with units, decimal commas ------------
UNITS_TABLE = """model   age    log10(rho/g cm^-3)   log10(T/K)   hydrogen   helium
1 0 1.9 7.15 0.70 0.28
2 1e9 2.5 7.2 0.50 0.48
3 2e9 4.0 7.4 0.0 0.98
4 3e9 5.5 7.7 0.0 0.98
"""


def test_track_composition_columns_and_which_composition_each_crossing_used(tmp_path):
    path = tmp_path / "units.txt"
    path.write_text(UNITS_TABLE)
    data = track_json(path, *CLASSICAL)
    assert data["composition_columns"]["X"] == "hydrogen" and data["composition_columns"]["Y"] == "helium"
    deg = [c for c in data["crossings"] if c["boundary"] == "degeneracy"]
    assert len(deg) == 1 and deg[0]["composition"] == "track"
    assert 0.0 < deg[0]["X"] < 0.7 and deg[0]["X"] + deg[0]["Y"] + deg[0]["Z"] == pytest.approx(1.0)
    # the crossing is where eta = 0 for that composition: classical electrons, eta = ln(n_e lambda^3 / 2)
    comp = ph.Composition.from_xyz(deg[0]["X"], deg[0]["Y"], deg[0]["Z"])
    s = ph.evaluate(10 ** deg[0]["log_rho"], 10 ** deg[0]["log_T"], comp, electrons="classical",
                    ionization="full", coulomb=False, pairs=False)
    assert abs(float(s.eta)) < 0.1
    # --X-col '' --Y-col '' : the panel's composition for every row, and the report says so
    data = track_json(path, *CLASSICAL, "--X-col", "", "--Y-col", "")
    assert all(c["composition"] == "panel" for c in data["crossings"])
    r = run("track", path, *CLASSICAL)
    assert r.returncode == 0 and "the track's own, per row (columns hydrogen, helium)" in r.stdout
    assert "(this track's own)" in r.stdout
    r = run("track", path, "--X-col", "nope")
    assert r.returncode == 2 and "'nope' is not in the table" in r.stderr and "Traceback" not in r.stderr


def test_track_ignition_crossings_default_levels_and_eps_levels(tmp_path):
    lT = [6.6 + 0.02 * i for i in range(60)]
    path = tmp_path / "hot.csv"
    path.write_text("log_rho,log_T\n" + "".join(f"2.0,{t:.3f}\n" for t in lT))
    data = track_json(path, *CLASSICAL)
    keys = {c["boundary"] for c in data["crossings"]}
    assert {"ignition_pp_1", "ignition_pp_1000"} <= keys                 # the map's default levels
    data = track_json(path, *CLASSICAL, "--eps-levels", "10", "--processes", "pp")
    assert {c["boundary"] for c in data["crossings"] if c["boundary"].startswith("ignition")} == {"ignition_pp_10"}
    (row,) = [c for c in data["crossings"] if c["boundary"] == "ignition_pp_10"]
    # check: epsilon of the same fit at the reported crossing is the asked level (to the row spacing)
    from thermoplane.physics import burning
    eps = float(burning.epsilon(100.0, 10 ** row["log_T"], ph.Composition.from_xyz(0.7, 0.28, 0.02), "pp"))
    assert math.log10(eps) == pytest.approx(1.0, abs=0.01)
    for bad in ("x", "-1", "0"):
        r = run("track", path, "--eps-levels", bad)
        assert r.returncode == 2 and "--eps-levels" in r.stderr and "Traceback" not in r.stderr
    r = run("track", path, "--processes", "fusion")
    assert r.returncode == 2 and "unknown burning process" in r.stderr


def test_track_reads_decimal_commas(tmp_path):
    path = tmp_path / "sheet.csv"
    path.write_bytes("sep=;\nage;rho;T;\n0;1,5E+02;1,2E+07;\n1;2,818383e+04;2,0e+07;\n".encode())
    data = track_json(path, *CLASSICAL)
    assert data["rows"] == 2 and data["bad_rows"] == []
