"""Benchmark: physics.evaluate (full physics) on a 400 x 400 plane against np.exp and a per-point baseline.

Prints, from one run on this machine, the time per point of evaluate in units of np.exp on the same
number of doubles, for ionization="full" and "saha" (electrons="fermi", pairs and Coulomb on), and
the ratio against a direct per-point electron solve (scipy quad + brentq, scaled from a few points;
the baseline of bench_electrons.py). With the dense-plasma terms (physics.eos.dense_plasma) it also times
those terms alone against the previous ion-only OCP term (physics.coulomb.coulomb_part) on the same grid.
Asserts nothing.
Run: python tests/benchmarks/bench_eos.py
"""

import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane import physics as ph  # noqa: E402
from thermoplane.physics import constants as const  # noqa: E402
from tests.benchmarks.bench_electrons import best, naive_point  # noqa: E402

TARGETS = {"full": 1500, "saha": 4000}     # exp-units per point (the performance issue)


def main():
    lr, lT = np.meshgrid(np.linspace(-12, 12, 400), np.linspace(3, 11, 400))
    rho, T = 10.0 ** lr, 10.0 ** lT
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    x = np.random.default_rng(0).uniform(-5, 5, rho.size)
    t0 = time.perf_counter()
    for ion in TARGETS:                      # loads every table (the pair-onset band is on the plane)
        ph.evaluate(rho, T, comp, ionization=ion)
    t_load = time.perf_counter() - t0
    t_exp = best(lambda: np.exp(x), 50)
    print(f"points: {rho.size}; np.exp on {rho.size} doubles: {t_exp * 1e3:.3f} ms; "
          f"first calls (table loads) {t_load:.2f} s")
    times = {}
    for ion, target in TARGETS.items():
        times[ion] = best(lambda: ph.evaluate(rho, T, comp, ionization=ion), 5)
        print(f"evaluate ionization={ion!r:7s}: {times[ion] * 1e3:.1f} ms = "
              f"{times[ion] / t_exp:.0f} exp-units per point (target <= {target})")
    try:
        from thermoplane.physics.coulomb import coulomb_part
        from thermoplane.physics.eos.dense_plasma import dense_parts
    except ImportError:          # an older tree without the dense-plasma terms
        dense_parts = None
    if dense_parts is not None:
        dense_parts(rho[:2, :2], T[:2, :2], comp.X, comp.A, comp.Z)          # compile / load the numba cache
        t_new = best(lambda: dense_parts(rho, T, comp.X, comp.A, comp.Z), 5)
        t_old = best(lambda: coulomb_part(rho, T, comp.X, comp.A, comp.Z), 5)
        print(f"dense-plasma terms alone ({comp.Z.size} nuclides, traces merged; liquid or solid + screening + xc): "
              f"{t_new * 1e3:.1f} ms = {t_new / t_exp:.0f} exp-units per point; previous ion-only OCP term: "
              f"{t_old * 1e3:.1f} ms = {t_old / t_exp:.0f} exp-units; ratio {t_new / t_old:.1f}")
    rng = np.random.default_rng(1)
    n = (rho * 0.85 / const.m_u).ravel()
    idx = rng.choice(n.size, 12, replace=False)
    t0 = time.perf_counter()
    done = 0
    for i in idx:
        try:
            naive_point(n[i], T.ravel()[i])
            done += 1
        except (ValueError, RuntimeError):
            pass
    t_naive = (time.perf_counter() - t0) / max(done, 1) * n.size
    print(f"per-point quad+brentq electrons alone: {t_naive:.1f} s scaled from {done} points "
          f"= {t_naive / t_exp:.2e} exp-units; evaluate is {t_naive / times['full']:.0f}x (full) and "
          f"{t_naive / times['saha']:.0f}x (saha) faster")


if __name__ == "__main__":
    main()
