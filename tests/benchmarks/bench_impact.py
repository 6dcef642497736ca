"""Benchmark of the "which physics matters" maps, as ratios measured in one run on this machine.

(a) impact_categories on a 300 x 300 plane (every ingredient on against off: one
    plane per option set, cached) against one plane_grid of the same plane with the
    view's options, both from an empty cache;
(b) a second impact map of the same plane (caches warm) against the same baseline:
    what switching between impact maps costs.

Run: python tests/benchmarks/bench_impact.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from thermoplane import physics as ph                     # noqa: E402
from thermoplane.physics import impact, plane             # noqa: E402


def timed(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def main() -> None:
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    n = 300
    plane.plane_grid(ph.Composition.from_xyz(0.6, 0.38, 0.02), n_rho=20, n_T=20)   # warm the compiled kernels
    plane.clear_cache()
    base = timed(lambda: plane.plane_grid(comp, n_rho=n, n_T=n))
    plane.clear_cache()
    cold = timed(lambda: impact.impact_categories(comp, n=n))
    warm = timed(lambda: impact.impact_percent(comp, "coulomb", "gamma1", n=n))
    print(f"plane_grid {n} x {n}, default options: {base:.3f} s (baseline)")
    print(f"(a) impact_categories, empty cache: {cold:.3f} s = {cold / base:.2f} x baseline "
          f"({len(impact.ingredients())} ingredients, {len(impact.ingredients()) + 1} option sets)")
    print(f"(b) one more impact map, caches warm: {warm:.4f} s = {warm / base:.3f} x baseline")


if __name__ == "__main__":
    main()
