"""Benchmark: the experimental chemical picture (ionization="chemical") against np.exp and the default.

Prints, from one run on this machine, the time per point of evaluate on the default plane (log rho -10..10,
log T 3..10) in units of np.exp on the same number of doubles, for ionization="chemical", "saha" (the
default) and "full", and how the chemical points were solved (full ionization at once, Newton from full
ionization, from ideal Saha, continuation in T, the numpy path for positrons, unsolved); for the chemical
picture also the first map of a composition, which builds the two-phase tie lines. Asserts nothing.
Run: python tests/benchmarks/bench_chemical.py [N]   (an N x N plane, default 200)
"""

import os
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane import physics as ph  # noqa: E402
from thermoplane.physics.eos.equilibrium import solve_equilibrium  # noqa: E402
from tests.benchmarks.timing import best  # noqa: E402

STATUS = {0: "fully ionized at once", 1: "Newton from full ionization", 2: "Newton from ideal Saha",
          3: "numpy path (positrons)", 4: "continuation down in T", -1: "no root (NaN)"}


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    lr, lT = np.meshgrid(np.linspace(-10, 10, n), np.linspace(3, 10, n))
    rho, T = 10.0 ** lr, 10.0 ** lT
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    for ion in ("chemical", "saha", "full"):          # compile, load tables
        ph.evaluate(rho[:3, :3], T[:3, :3], comp, ionization=ion)
    x = np.random.default_rng(0).uniform(-5, 5, rho.size)
    t_exp = best(lambda: np.exp(x), 50)
    print(f"points: {rho.size}; np.exp on as many doubles: {t_exp * 1e3:.3f} ms")
    t_first = best(lambda: ph.evaluate(rho, T, comp, ionization="chemical"), 1)
    print(f"evaluate ionization='chemical', first map of the composition (tie lines of the two-phase regions "
          f"built and cached): {t_first:.2f} s = {t_first / t_exp:.0f} exp-units per point")
    for ion, repeat in (("chemical", 1), ("saha", 3), ("full", 3)):
        t = best(lambda: ph.evaluate(rho, T, comp, ionization=ion), repeat)
        print(f"evaluate ionization={ion!r:10s}: {t:.2f} s = {t / t_exp:.0f} exp-units per point")
        if ion == "chemical":
            print(f"  first map / later map: {t_first / t:.1f}")
    r = solve_equilibrium(rho.ravel(), T.ravel(), comp)
    codes, counts = np.unique(r.status, return_counts=True)
    for c, k in zip(codes, counts):
        print(f"  {STATUS.get(int(c), c)}: {k} points ({100.0 * k / rho.size:.1f} %)")


if __name__ == "__main__":
    main()
