"""Tests of physics/frontiers.py: ignition curves eps_nuc = eps_nu and capture lines on the plane and along tracks."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from thermoplane.physics import Composition, burning, captures, frontiers, neutrinos, plane
from thermoplane.physics.tracks import track_report

ONEMG = Composition({"C-12": 0.3, "O-16": 0.5, "Ne-20": 0.15, "Mg-24": 0.05})
FAST = {"electrons": "classical", "ionization": "full", "coulomb": False, "pairs": False}


def test_carbon_ignition_line_on_the_plane_matches_a_root_solve():
    grid = plane.plane_grid(ONEMG, n_rho=200, n_T=200, **FAST)
    lines = {k: (x, y) for k, _, x, y, _ in frontiers.grid_lines(grid, ONEMG, ("carbon",))}
    x, y = lines["nu_ignition_carbon"]
    for log_rho in (3.0, 5.0, 7.0):
        j = np.nanargmin(np.abs(x - log_rho))
        f = lambda lt: (np.log(burning.epsilon(10**x[j], 10**lt, ONEMG, "carbon"))          # noqa: E731
                        - np.log(neutrinos.epsilon(10**x[j], 10**lt, ONEMG)))
        root = brentq(f, 8.3, 9.5)
        # the plane's pixels are 0.035 dex in log T; linear interpolation between them
        assert y[j] == pytest.approx(root, abs=0.01)


def test_capture_lines_are_vertical_at_the_threshold_densities():
    grid = plane.plane_grid(ONEMG, n_rho=50, n_T=50, **FAST)
    lines = {k: (x, y) for k, _, x, y, kind in frontiers.grid_lines(grid, ONEMG, (), ignition=False)}
    assert set(lines) == {"capture_Mg-24", "capture_Ne-20"}           # O-16 and C-12 lie above 1e10
    x, y = lines["capture_Mg-24"]
    assert np.all(x == np.log10(captures.threshold_density("Mg-24", ONEMG)))
    assert y[0] == grid.log_T[0] and y[-1] == grid.log_T[-1]


def test_track_report_lists_the_new_crossings():
    # illustrative track of our own: compression and heating of an O-Ne-Mg core (made up)
    log_rho = np.array([4.0, 5.0, 5.5, 6.0, 7.0, 8.0, 9.0, 9.7])
    log_T = np.array([8.0, 8.5, 8.8, 9.0, 9.1, 9.1, 9.0, 8.9])
    _, crossings = track_report(log_rho, log_T, ONEMG, age=np.arange(8.0), frontiers=True, **FAST)
    by_key = {r["boundary"]: r for r in crossings.to_dict("records")}
    assert "nu_ignition_carbon" in by_key and by_key["nu_ignition_carbon"]["direction"] == 1
    assert 8.6 < by_key["nu_ignition_carbon"]["log_T"] < 9.0
    cap = by_key["capture_Mg-24"]
    assert cap["log_rho"] == pytest.approx(np.log10(captures.threshold_density("Mg-24", ONEMG)), abs=1e-12)
    assert "capture_Ne-20" not in by_key                                # 10^9.79 is beyond the track
    _, without = track_report(log_rho, log_T, ONEMG, **FAST)
    assert not without["boundary"].str.startswith(("nu_", "capture_")).any()


def test_labels_in_words():
    words = frontiers.labels(ONEMG)
    assert words["nu_ignition_carbon"] == "carbon ignition (ε_nuc = ε_ν)"
    assert words["capture_Ne-20"] == "e⁻ capture on ²⁰Ne"
