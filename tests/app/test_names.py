"""One import name: the wheel installs only `thermoplane`, and a user's own physics.py or app/ cannot hide it."""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

from tests.conftest import ROOT

from thermoplane import physics as ph


def readme_python_snippet() -> str:
    text = (ROOT / "README.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", text, re.S)
    assert blocks, "README has no Python snippet"
    return blocks[0]


def test_wheel_top_level_is_only_thermoplane(tmp_path):
    if shutil.which("git") is None:
        pytest.skip("git is needed to copy the tracked sources")
    # Build from a copy of the tracked sources, so that no build/ or egg-info of the checkout leaks in.
    src = tmp_path / "src"
    files = subprocess.run(["git", "ls-files"], cwd=ROOT, capture_output=True, text=True, check=True).stdout.split()
    for name in files:
        if name.startswith(("physics/", "app/", "assets/")) or name in ("pyproject.toml", "README.md"):
            (src / name).parent.mkdir(parents=True, exist_ok=True)
            shutil.copy2(ROOT / name, src / name)
    out = tmp_path / "wheel"
    built = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w",
                            str(out), str(src)], capture_output=True, text=True, timeout=600)
    assert built.returncode == 0, built.stderr[-3000:]
    (wheel,) = out.glob("thermoplane-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    top = {n.split("/")[0] for n in names if not n.split("/")[0].endswith((".dist-info", ".data"))}
    assert top == {"thermoplane"}
    assert "thermoplane/physics/__init__.py" in names and "thermoplane/app/wsgi.py" in names
    assert "thermoplane/app/assets/thermoplane.css" in names
    assert any(n.startswith("thermoplane/physics/data/") and n.endswith(".npz") for n in names)


def test_public_api_is_what_all_says():
    expected = {"Composition", "evaluate", "ThermoState", "equality_temperature", "fermi_dirac", "boundaries",
                "classify", "flags", "parse_mix", "NUCLIDES", "METAL_MIXTURES", "FIELD_UNITS",
                "FIELD_DESCRIPTIONS", "OPTIONS"}
    assert set(ph.__all__) == expected
    assert callable(ph.fermi_dirac) and callable(ph.boundaries) and callable(ph.classify) and callable(ph.flags)
    # F_1/2(0, 0) = -Gamma(3/2) Li_{3/2}(-1) = 0.678093895 (mpmath: 0.5*sqrt(pi)*(1-2**-0.5)*zeta(1.5))
    assert ph.fermi_dirac(0.5, 0.0, 0.0) == pytest.approx(0.678093895, rel=1e-8)
    import thermoplane.physics.regimes  # noqa: F401  the submodules stay importable by their full names
    assert ph.fermi_dirac is sys.modules["thermoplane.physics.fermi_integrals"].fermi_dirac


@pytest.fixture
def decoy_folder(tmp_path):
    """A folder such as a physicist's working directory: its own physics.py and a web project's app/."""
    (tmp_path / "physics.py").write_text("raise ImportError('this is the user\\'s own physics.py')\n")
    (tmp_path / "app").mkdir()
    (tmp_path / "app" / "__init__.py").write_text("NAME = 'the user\\'s own app'\n")
    return tmp_path


def test_readme_snippet_runs_beside_decoys(decoy_folder):
    code = readme_python_snippet() + "\nprint(repr(float(s.P)))\n"
    out = subprocess.run([sys.executable, "-c", code], cwd=decoy_folder, capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert float(out.stdout.strip().splitlines()[-1]) > 0


def test_cli_point_json_beside_decoys(decoy_folder):
    exe = shutil.which("thermoplane")
    cmd = [exe] if exe else [sys.executable, "-m", "thermoplane.app.cli"]
    out = subprocess.run([*cmd, "point", "--rho", "1e8", "--T", "1e6", "--json"], cwd=decoy_folder,
                         capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    assert data["regime"] == "relativistic degenerate electrons"
    assert "strongly coupled ions (Γ > 1)" in data["modifiers"]
    # fractions print without float noise (0.009, not 0.009000000000000001)
    assert data["composition"]["O-16"] == 0.009 and '"O-16": 0.009,' in out.stdout


def test_wsgi_import_beside_decoys(decoy_folder):
    code = "import thermoplane.app.wsgi as w; print(type(w.server).__name__)"
    out = subprocess.run([sys.executable, "-c", code], cwd=decoy_folder, capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "Flask"


def test_readme_group_command_matches_dockerfile():
    readme = (ROOT / "README.md").read_text()
    docker = (ROOT / "Dockerfile").read_text()
    cmd = re.search(r'^CMD\s+\[(.*)\]\s*$', docker, re.M).group(1)
    words = " ".join(part.strip().strip('"') for part in cmd.split(","))
    assert words in readme
