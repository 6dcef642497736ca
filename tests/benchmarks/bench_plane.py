"""Benchmark of the plane machinery, as ratios measured in one run on this machine.

(a) regimes.boundaries(n=400) against one evaluate() call on the 400 x 400
    grid it covers (target: ratio <= 3);
(b) plane.plane_grid(300 x 300), cost per grid point in units of one np.exp
    of a float64 (measured on an array of the same size), with the cost of
    evaluate() alone on that grid beside it (the rest: burning, regimes, float32).

Run: python tests/benchmarks/bench_plane.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from thermoplane import physics as ph                     # noqa: E402
from thermoplane.physics import plane, regimes       # noqa: E402


def best_of(fn, repeat: int = 3) -> float:
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main() -> None:
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    settings = {"default options": {},
                "every effect on": dict(electrons="fermi", ionization="saha", coulomb=True, pairs=True)}
    print("(a) boundaries(n=400) / evaluate(400 x 400 grid)   [target <= 3]")
    for name, opts in settings.items():
        R, T = np.meshgrid(np.logspace(-10, 10, 400), np.logspace(3, 10, 400))
        t_grid = best_of(lambda: ph.evaluate(R, T, comp, **opts))
        t_lines = best_of(lambda: regimes.boundaries(comp, n=400, **opts))
        print(f"    {name:16s}: grid {t_grid * 1e3:8.1f} ms, lines {t_lines * 1e3:8.1f} ms, "
              f"ratio {t_lines / t_grid:5.2f}")

    x = np.linspace(-5.0, 5.0, 300 * 300)
    t_exp = best_of(lambda: np.exp(x), repeat=20) / x.size
    print("(b) plane_grid(300 x 300), cost per point in units of np.exp")
    for name, opts in settings.items():
        def fresh():
            plane.clear_cache()
            plane.plane_grid(comp, n_rho=300, n_T=300, **opts)
        t_plane = best_of(fresh) / (300 * 300)
        t_hit = best_of(lambda: plane.plane_grid(comp, n_rho=300, n_T=300, **opts))
        lr, lt = np.linspace(-10, 10, 300), np.linspace(3, 10, 300)
        t_eos = best_of(lambda: ph.evaluate(10.0 ** lr[None, :], 10.0 ** lt[:, None], comp, **opts)) / (300 * 300)
        print(f"    {name:16s}: {t_plane / t_exp:8.1f} np.exp per point "
              f"(evaluate alone {t_eos / t_exp:.1f}; plane_grid / evaluate {t_plane / t_eos:.2f}; "
              f"np.exp {t_exp * 1e9:.2f} ns; cached call {t_hit * 1e6:.1f} us)")


if __name__ == "__main__":
    main()
