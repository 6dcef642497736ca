"""Benchmark: h2_internal_partition against np.exp on as many doubles, measured in one run.

(a) N distinct temperatures (the worst case: every T summed over all bound levels);
(b) a 400 x 400 (rho, T) plane whose T varies along one axis only (each distinct T summed once).
Prints ratios; asserts nothing.
Run: python tests/benchmarks/bench_atomic_data.py
"""

import os
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane.physics.eos.atomic_data import h2_internal_partition, h2_levels  # noqa: E402
from tests.benchmarks.timing import best  # noqa: E402

n_levels = h2_levels()[0].size
T = np.logspace(0.0, 9.0, 100_000)
x = np.linspace(-5.0, 5.0, T.size)
t_exp = best(lambda: np.exp(x), 20)
t_h2 = best(lambda: h2_internal_partition(T), 3)
print(f"(a) {T.size} distinct T, {n_levels} levels: h2_internal_partition {t_h2 * 1e3:.1f} ms, "
      f"np.exp on {T.size} doubles {t_exp * 1e3:.2f} ms, ratio {t_h2 / t_exp:.0f} "
      f"(ratio per level {t_h2 / t_exp / n_levels:.2f})")
plane = np.broadcast_to(np.logspace(2.0, 6.0, 400)[:, None], (400, 400))
x2 = np.linspace(-5.0, 5.0, plane.size)
t_exp2 = best(lambda: np.exp(x2), 20)
t_plane = best(lambda: h2_internal_partition(plane), 5)
print(f"(b) 400 x 400 plane, T along one axis: {t_plane * 1e3:.1f} ms, np.exp on {plane.size} doubles "
      f"{t_exp2 * 1e3:.2f} ms, ratio {t_plane / t_exp2:.1f}")
