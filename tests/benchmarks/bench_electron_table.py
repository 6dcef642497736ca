"""Benchmark: table_state on a 400 x 400 plane against np.exp and the exact electron_state.

Prints ratios measured in one run on this machine, and the accuracy on that plane; asserts nothing.
Run: python tests/benchmarks/bench_electron_table.py
"""

import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane.physics import constants as const  # noqa: E402
from thermoplane.physics.electron_table import table_state  # noqa: E402
from thermoplane.physics.electrons import electron_state  # noqa: E402
from tests.benchmarks.timing import best  # noqa: E402


def main():
    lr, lT = np.meshgrid(np.linspace(-12, 12, 400), np.linspace(3, 11, 400))
    n, T = 10 ** lr / const.m_u, 10 ** lT            # log (rho ye) in [-12, 12]
    x = np.random.default_rng(0).uniform(-5, 5, n.size)
    t0 = time.perf_counter()
    table_state(n[:5], T[:5])                        # first call loads the table
    t_load = time.perf_counter() - t0
    table_state(n[:5], T[:5], pairs=False)
    t_exp = best(lambda: np.exp(x), 50)
    t_tab = best(lambda: table_state(n, T), 5)
    t_tabn = best(lambda: table_state(n, T, pairs=False), 5)
    t0 = time.perf_counter()
    ex = electron_state(n, T)
    t_ex = time.perf_counter() - t0
    tb = table_state(n, T)
    print(f"points: {n.size}; np.exp on {n.size} doubles: {t_exp * 1e3:.3f} ms; table load {t_load:.2f} s")
    print(f"table_state (pairs on) : {t_tab * 1e3:.1f} ms = {t_tab / t_exp:.0f} exp-units (target ~500)")
    print(f"table_state (pairs off): {t_tabn * 1e3:.1f} ms = {t_tabn / t_exp:.0f} exp-units")
    print(f"electron_state (pairs on, one run): {t_ex:.2f} s = {t_ex / t_exp:.0f} exp-units; "
          f"table is {t_ex / t_tab:.0f}x faster")
    for name, a, b in (("P", tb.gas.P, ex.gas.P), ("E", tb.gas.E, ex.gas.E),
                       ("eta", tb.eta, ex.eta)):
        scale = np.maximum(np.abs(b), 1.0) if name == "eta" else np.abs(b)
        e = np.abs(a - b) / scale
        print(f"  {name:4s} rel. error on the plane: max {e.max():.2e}, 99th percentile {np.quantile(e, 0.99):.2e}")


if __name__ == "__main__":
    main()
