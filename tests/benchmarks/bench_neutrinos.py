"""Benchmark of the neutrino losses, as ratios measured in one run on this machine.

(a) physics.neutrinos.epsilon_parts (pair, photo, plasma, bremsstrahlung and the
    total in one call) on a 400 x 400 plane, in units of np.exp on as many doubles;
(b) the same against one plane_grid (the full equation of state and every shaded
    field, neutrinos included) on the same grid, uncached: the neutrinos' share of a map;
(c) physics.frontiers.track_fields on a 10^6-row track against np.exp on 10^6 doubles.

Run: python tests/benchmarks/bench_neutrinos.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from tests.benchmarks.timing import best                          # noqa: E402
from thermoplane import physics as ph                              # noqa: E402
from thermoplane.physics import frontiers, neutrinos, plane        # noqa: E402

N = 400
comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
lr = np.linspace(-10, 10, N)
lt = np.linspace(3, 10, N)
rho = np.broadcast_to(10.0 ** lr[None, :], (N, N)).copy()
T = np.broadcast_to(10.0 ** lt[:, None], (N, N)).copy()
x = np.linspace(-5.0, 5.0, N * N)

t_exp = best(lambda: np.exp(x), 20)
t_nu = best(lambda: neutrinos.epsilon_parts(rho, T, comp), 3)
print(f"(a) epsilon_parts on {N}x{N}: {t_nu * 1e3:.1f} ms = {t_nu / t_exp:.0f} x np.exp on {N * N} doubles "
      f"({t_exp * 1e3:.2f} ms)")


def fresh_plane():
    plane.clear_cache()
    plane.plane_grid(comp, n_rho=N, n_T=N)


t_plane = best(fresh_plane, 2)
print(f"(b) plane_grid {N}x{N} (uncached, full physics): {t_plane * 1e3:.0f} ms; neutrinos are "
      f"{t_nu / t_plane:.1%} of it")

n = 1_000_000
log_rho = np.linspace(-2, 9.5, n)
log_T = 7 + 2.2 * np.sin(np.linspace(0, 3, n)) ** 2
x1 = np.linspace(-5.0, 5.0, n)
t_exp1 = best(lambda: np.exp(x1), 10)
t_tr = best(lambda: frontiers.track_fields(log_rho, log_T, comp), 2)
print(f"(c) track_fields on {n} rows: {t_tr * 1e3:.0f} ms = {t_tr / t_exp1:.0f} x np.exp on as many doubles")
