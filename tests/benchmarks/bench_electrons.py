"""Benchmark: electron_state on a 400 x 400 plane against np.exp and a per-point baseline.

Prints ratios measured in one run on this machine; asserts nothing.
Run: python tests/benchmarks/bench_electrons.py
"""

import os
import sys
import time

import numpy as np
from scipy.integrate import quad
from scipy.optimize import brentq

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane.physics import constants as const  # noqa: E402
from thermoplane.physics.electrons import electron_state  # noqa: E402
from tests.benchmarks.timing import best  # noqa: E402

MC2 = const.m_e * const.c ** 2
CN = 8 * np.pi * np.sqrt(2) * (const.m_e * const.c / const.h) ** 3


def naive_point(n, T):
    """Per-point baseline: scipy quad for n_- - n_+ and brentq for eta (pairs on)."""
    th = const.k_B * T / MC2

    def F(k, eta):
        g = lambda x: x ** k * np.sqrt(1 + th * x / 2) * np.exp(-np.logaddexp(0.0, x - eta))  # noqa: E731
        top = max(eta, 0.0) + 60.0
        return quad(g, 0, top, points=[max(eta, 0.0)] if eta > 0 else None, limit=200)[0]

    def nnet(eta):
        ep = -eta - 2 / th
        return CN * th ** 1.5 * ((F(0.5, eta) + th * F(1.5, eta)) - (F(0.5, ep) + th * F(1.5, ep)))

    lo, hi = -1 / th, 1e10
    eta = brentq(lambda e: np.log(max(nnet(e), 1e-300)) - np.log(n), lo + 1e-12, min(hi, 1e4 / th), xtol=1e-12)
    for k in (1.5, 2.5):                    # the P and E integrals a full state also needs
        F(k, eta)
    return eta


def main():
    lr, lT = np.meshgrid(np.linspace(-12, 12, 400), np.linspace(3, 11, 400))
    n, T = 10 ** lr / const.m_u, 10 ** lT
    x = np.random.default_rng(0).uniform(-5, 5, n.size)
    electron_state(n[:5], T[:5])            # warm up
    t_exp = best(lambda: np.exp(x), 50)
    t_es = best(lambda: electron_state(n, T), 3)
    t_np = best(lambda: electron_state(n, T, pairs=False), 3)
    rng = np.random.default_rng(1)
    idx = rng.choice(n.size, 12, replace=False)
    # baseline on moderate points where the naive solver's bracket is reliable
    sub = [(n.ravel()[i], T.ravel()[i]) for i in idx]
    t0 = time.perf_counter()
    done = 0
    for nn, TT in sub:
        try:
            naive_point(nn, TT)
            done += 1
        except (ValueError, RuntimeError):
            pass
    t_naive = (time.perf_counter() - t0) / max(done, 1) * n.size
    print(f"points: {n.size}; np.exp on {n.size} doubles: {t_exp * 1e3:.3f} ms")
    print(f"electron_state (pairs on)  : {t_es:.3f} s = {t_es / t_exp:.0f} exp-units (budget ~600)")
    print(f"electron_state (pairs off) : {t_np:.3f} s = {t_np / t_exp:.0f} exp-units")
    print(f"naive quad+brentq per point: {t_naive:.1f} s scaled from {done} points "
          f"= {t_naive / t_exp:.2e} exp-units; speed-up {t_naive / t_es:.0f}x")


if __name__ == "__main__":
    main()
