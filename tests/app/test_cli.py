"""The command line as a user calls it: subprocesses, exit codes, one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest


def run(*args):
    return subprocess.run([sys.executable, "-m", "thermoplane.app.cli", *args], capture_output=True, text=True, timeout=120)


@pytest.mark.parametrize("args", [["--help"], ["serve", "--help"], ["point", "--help"], ["map", "--help"]])
def test_help(args):
    r = run(*args)
    assert r.returncode == 0
    assert "usage: thermoplane" in r.stdout


def test_point_json_has_every_state_field():
    from thermoplane import physics as ph
    r = run("point", "--rho", "1", "--T", "1e7", "--X", "0.7", "--Y", "0.28", "--Z", "0.02", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    state = out["state"]
    expected = ph.evaluate(1.0, 1e7, ph.Composition.from_xyz(0.7, 0.28, 0.02))
    assert set(state) == set(expected.as_dict())
    assert state["P"] == pytest.approx(float(expected.P), rel=1e-12)
    assert out["units"]["P"] == "dyn cm^-2"


@pytest.mark.parametrize("args, fragment", [
    (["point", "--rho", "-1", "--T", "1e7"], "must be a finite number > 0"),
    (["point", "--rho", "1", "--T", "1e7", "--X", "0.7", "--Y", "0.5", "--Z", "0.1"], "must be 1"),
    (["point", "--rho", "1", "--T", "1e7", "--mix", "Xx-9=1"], "unknown nuclide"),
    (["point", "--rho", "1", "--T", "nan"], "must be a finite number"),
])
def test_errors_are_one_line_exit_2(args, fragment):
    r = run(*args)
    assert r.returncode == 2
    assert fragment in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1
    assert "Traceback" not in r.stderr


def test_map_writes_standalone_html(tmp_path):
    out = tmp_path / "map.html"
    r = run("map", "--X", "0.7", "--Y", "0.28", "-o", str(out))
    assert r.returncode == 0, r.stderr
    text = out.read_text()
    assert "plotly" in text.lower() and "P_rad = P_gas" in text
