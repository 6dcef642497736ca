"""Benchmark: physics.evaluate (full physics) on a 400 x 400 plane against np.exp and a per-point baseline.

Prints, from one run on this machine, the time per point of evaluate in units of np.exp on the same
number of doubles, for ionization="full" and "saha" (electrons="fermi", pairs and Coulomb on), and
the ratio against a direct per-point electron solve (scipy quad + brentq, scaled from a few points;
the baseline of bench_electrons.py), and the compiled parallel steps (pair-free electron gas, Saha root,
dense-plasma terms) against their numpy implementation or one thread, in the same run. With the dense-plasma terms (physics.eos.dense_plasma) it also times
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

TARGETS = {"full": 800, "saha": 1500}      # exp-units per point: fully ionized, and the full physics (the free-energy issue)


def main():
    lr, lT = np.meshgrid(np.linspace(-10, 10, 400), np.linspace(3, 10, 400))
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
    compiled_against_previous(rho.ravel(), T.ravel(), comp, t_exp)


def compiled_against_previous(rho, T, comp, t_exp):
    """The compiled parallel parts against the numpy (previous) implementation of the same step, one run."""
    import numba

    from thermoplane.physics import matter as M
    from thermoplane.physics.electron_fast import pair_free_state
    from thermoplane.physics.electron_table import table_state
    from thermoplane.physics.eos.dense_plasma import dense_parts

    n_full = rho * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    saha, fixed = M._saha_elements(comp, "saha")
    rows = [("pair-free electron gas at n_full", lambda: table_state(n_full, T, pairs=False),
             lambda: pair_free_state(n_full, T)),
            ("Saha root n_e (all points)", lambda: M._solve_saha(n_full, rho, T, saha, fixed, "fermi", True),
             lambda: M.solve_saha_compiled(n_full, rho, T, saha, fixed, M.ELEMENTS, True))]
    for name, old, new in rows:
        new()
        t_old, t_new = best(old, 3), best(new, 3)
        print(f"{name}: numpy {t_old / t_exp:.0f}, compiled {t_new / t_exp:.0f} exp-units per point; "
              f"ratio {t_old / t_new:.1f}")
    threads = numba.get_num_threads()
    dense = lambda: dense_parts(rho, T, comp.X, comp.A, comp.Z)  # noqa: E731
    numba.set_num_threads(1)
    t_one = best(dense, 3)
    numba.set_num_threads(threads)
    t_all = best(dense, 3)
    print(f"dense-plasma terms on 1 thread {t_one / t_exp:.0f}, on {threads} threads {t_all / t_exp:.0f} "
          f"exp-units per point; ratio {t_one / t_all:.2f}")


if __name__ == "__main__":
    main()
