"""`thermoplane track` lists crossings of the ignition curves and capture thresholds, in words."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
MIX = "C-12=0.3,O-16=0.5,Ne-20=0.15,Mg-24=0.05"


def test_track_cli_lists_ignition_and_capture_crossings(tmp_path):
    path = tmp_path / "core.csv"
    path.write_text("# illustrative track of our own (made up)\nlog_rho,log_T,age\n4.0,8.0,0\n5.0,8.5,1\n"
                    "5.5,8.8,2\n6.0,9.0,3\n7.0,9.1,4\n8.0,9.1,5\n9.0,9.0,6\n9.7,8.9,7\n", encoding="utf-8")
    run = lambda *a: subprocess.run([sys.executable, "-m", "thermoplane.app.cli", "track", str(path),  # noqa: E731
                                     "--mix", MIX, "--log", *a], capture_output=True, text=True, timeout=300)
    r = run()
    assert r.returncode == 0, r.stderr
    assert "carbon ignition (ε_nuc = ε_ν)" in r.stdout and "e⁻ capture on ²⁴Mg" in r.stdout
    r = run("--json")
    keys = [c["boundary"] for c in json.loads(r.stdout)["crossings"]]
    assert "nu_ignition_carbon" in keys and "capture_Mg-24" in keys


def test_point_cli_shows_neutrino_losses():
    r = subprocess.run([sys.executable, "-m", "thermoplane.app.cli", "point", "--rho", "1e6", "--T", "3e8",
                        "--mix", MIX, "--json"], capture_output=True, text=True, timeout=300)
    assert r.returncode == 0, r.stderr
    nu = json.loads(r.stdout)["neutrino_losses"]
    assert nu["total"] == sum(nu[p] for p in ("pair", "photo", "plasma", "bremsstrahlung"))
    assert nu["plasma"] > nu["pair"]
    r = subprocess.run([sys.executable, "-m", "thermoplane.app.cli", "point", "--rho", "1e6", "--T", "3e8",
                        "--mix", MIX], capture_output=True, text=True, timeout=300)
    assert "eps_nu_plasma" in r.stdout
