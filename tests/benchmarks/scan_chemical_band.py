"""Measurement: how the chemical picture fares in its known gaps (the pressure-ionization band).

On a 0.1-dex grid over log rho -0.6..2.6, log T 3.02..5.5 (the band of tests/physics/test_chemical_picture.py's
known_gaps), for the solar-like mix, hydrogen and C/O, prints: points with no root at the point or its
finite-difference stencil, points where one of the identities fails (rho^2 dE/drho = P - T dP/dT within 1e-8
of P; T dS/dT = dE/dT within 1e-6; Gamma_1 from P and E within 1e-6; fourth-order differences as in the
test), chi_rho < 0 (or 0 outside two phases), Gamma_1 >= 2, and the two-phase points (physics/eos/coexistence.py). Asserts nothing.
Run: python tests/benchmarks/scan_chemical_band.py
"""

import math
import os
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from tests.physics import test_chemical_picture as t  # noqa: E402


def main():
    L, T = np.meshgrid(np.arange(-0.6, 2.61, 0.1), np.arange(3.02, 5.5, 0.1))
    d = t.H / math.log(10.0)
    steps = {"0": (0, 0)}
    for k in (1, 2):
        steps.update({f"r+{k}": (k * d, 0), f"r-{k}": (-k * d, 0), f"t+{k}": (0, k * d), f"t-{k}": (0, -k * d)})
    rho, temp = 10.0**L, 10.0**T
    for name, comp in t.COMPOSITIONS.items():
        s = {key: t._evaluate(comp, L + a, T + b) for key, (a, b) in steps.items()}
        s0 = s["0"]
        with np.errstate(all="ignore"):
            dE_drho, dP_drho = t._d(s, "r", "E") / rho, t._d(s, "r", "P") / rho
            dP_dT, dE_dT, dS_dT = t._d(s, "t", "P") / temp, t._d(s, "t", "E") / temp, t._d(s, "t", "S") / temp
            solved = np.all([np.isfinite(s[k].P) for k in s], axis=0)
            maxwell = np.abs(rho**2 * dE_drho - (s0.P - temp * dP_dT)) / s0.P
            heat = np.abs(temp * dS_dT - dE_dT) / (np.abs(dE_dT) + s0.P / (rho * temp))
            chi_rho, chi_T = rho * dP_drho / s0.P, temp * dP_dT / s0.P
            g1 = chi_rho + s0.P * chi_T**2 / (rho * temp * dE_dT)
            bad = solved & ((maxwell > 1e-8) | (heat > 1e-6) | (np.abs(g1 - s0.gamma1) > 1e-6 * np.abs(s0.gamma1)))
            print(f"{name}: {L.size} points; no root at the point or its stencil {np.sum(~solved)}; identities "
                  f"fail {bad.sum()}; chi_rho < 0 (or = 0 outside two phases) "
                  f"{np.sum(solved & ((s0.chi_rho < 0) | ((s0.chi_rho == 0) & (s0.coexistence != 1))))}; Gamma_1 >= 2 "
                  f"{np.sum(solved & (s0.gamma1 >= 2))}; two-phase {int(np.nansum(s0.coexistence))}")


if __name__ == "__main__":
    main()
