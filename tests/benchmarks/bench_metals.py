"""Benchmark: what the metals' Saha stages cost, in one run.

Prints, for a solar-like mix (X = 0.70, Y = 0.28, Z = 0.02) and for C/O, the time per point of
physics.evaluate (default options) on the 400 x 400 default plane with the metals fully ionized (the default,
physics.matter.METAL_IONIZATION = "full") and with their Saha stages ("saha"), timed alternately, in units of
np.exp on as many doubles; and the same for the two compiled passes (the Saha root with the electron gas,
physics.saha_kernel.solve_saha_state, and the pass after it, physics.matter_kernel.matter_at_root).
Asserts nothing. ``--clock cpu --threads 1`` gives steadier single-core figures on a shared machine.
Run: python tests/benchmarks/bench_metals.py [--repeat N] [--threads N] [--clock wall|cpu]
"""

import argparse
import os
import sys
import time

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
sys.path.insert(0, ROOT)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--threads", type=int, default=0, help="numba threads (default: all)")
    ap.add_argument("--clock", choices=("wall", "cpu"), default="wall")
    args = ap.parse_args()
    if args.threads:
        os.environ["NUMBA_NUM_THREADS"] = str(args.threads)
    import numpy as np

    from thermoplane import physics as ph
    from thermoplane.physics import constants as const
    from thermoplane.physics import matter as M
    from thermoplane.physics.matter_kernel import matter_at_root
    from thermoplane.physics.saha_kernel import solve_saha_state

    clock = time.perf_counter if args.clock == "wall" else time.process_time
    lr, lT = np.linspace(-10, 10, 400), np.linspace(3, 10, 400)
    R, T = np.meshgrid(10.0**lr, 10.0**lT)
    r, t = R.ravel(), T.ravel()
    x = np.random.default_rng(0).random(r.size)
    comps = {"X=0.70 Y=0.28 Z=0.02": ph.Composition.from_xyz(0.70, 0.28, 0.02),
             "C/O": ph.Composition({"C-12": 0.5, "O-16": 0.5})}
    for name, comp in comps.items():
        n_full = r * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
        calls = {}
        for metals in ("full", "saha"):
            saha, fixed = M._saha_elements(comp, "saha", metals)
            below = metals == "saha"

            def evaluate(metals=metals):
                M.METAL_IONIZATION = metals
                try:
                    ph.evaluate(R, T, comp)
                finally:
                    M.METAL_IONIZATION = "full"

            calls[metals] = {"evaluate": evaluate}
            if saha:                    # no Saha element (C/O with metals fully ionized): no compiled passes
                state = solve_saha_state(n_full, r, t, saha, fixed, M.ELEMENTS, True, below_table=below)
                calls[metals]["Saha root"] = lambda saha=saha, fixed=fixed, below=below: solve_saha_state(
                    n_full, r, t, saha, fixed, M.ELEMENTS, True, below_table=below)
                calls[metals]["after the root"] = lambda saha=saha, fixed=fixed, st=state: matter_at_root(
                    r, t, n_full, st[0], st[1], st[2], comp, saha, fixed, M.ELEMENTS)
            for f in calls[metals].values():          # compile, load tables
                f()
        best = {(m, k): np.inf for m in calls for k in calls[m]}
        exp_best = np.inf
        for _ in range(args.repeat):
            for key in calls["saha"]:
                for metals in ("full", "saha"):
                    if key not in calls[metals]:
                        continue
                    t0 = clock()
                    calls[metals][key]()
                    best[metals, key] = min(best[metals, key], clock() - t0)
            for _ in range(10):
                t0 = clock()
                np.exp(x)
                exp_best = min(exp_best, clock() - t0)
        print(f"{name}: exp-units per point ({args.clock} clock), metals fully ionized against metals by Saha")
        for key in calls["saha"]:
            b = best["saha", key] / exp_best
            if key in calls["full"]:
                a = best["full", key] / exp_best
                print(f"  {key:15s} full {a:7.0f}   saha {b:7.0f}   ratio {b / a:5.2f}")
            else:
                print(f"  {key:15s} full       -   saha {b:7.0f}")


if __name__ == "__main__":
    main()
