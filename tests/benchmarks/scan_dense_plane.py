"""Scan of the default plane for the dense-plasma conditions (not collected by pytest; not a timing).

    python -m tests.benchmarks.scan_dense_plane      (from the repository root)

Prints, per composition, the points of the default plane (log rho -10..10 in 141 columns, log T 3..10 in
71 rows, the grid of tests/physics/test_dense_eos.py) where S <= 0, split by cause (fully ionized with the
electrons' eta above or below 1e5; partially ionized), and where the ion c_V is negative beyond rounding;
with some of the points.
"""

from __future__ import annotations

import numpy as np

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from tests.physics.test_dense_eos import _screening_heat_capacity

COMPOSITIONS = {
    "H-rich": ph.Composition.from_xyz(X=0.70, Y=0.28, Z=0.02),
    "He-4": ph.Composition({"He-4": 1.0}),
    "C/O": ph.Composition({"C-12": 0.5, "O-16": 0.5}),
    "Fe-56": ph.Composition({"Fe-56": 1.0}),
}


def main():
    lr = np.linspace(-10, 10, 141)
    lT = np.linspace(3, 10, 71)
    R, T = np.meshgrid(lr, lT)
    for name, comp in COMPOSITIONS.items():
        s = ph.evaluate(10.0 ** lr[None, :], 10.0 ** lT[:, None], comp)
        full = np.sum(comp.X * comp.Z / comp.A) / np.sum(comp.X / comp.A)
        ionized = s.mean_Z >= full * (1 - 1e-6)
        bad = s.S <= 0
        # the ion c_V is 1.5 k per ion (ideal) plus the excess's, which cancels it in a cold crystal; the
        # excess's jet rounds at eps of its largest terms (Madelung ~ Gamma, zero-point ~ T_p/T, per ion)
        k_ion = const.k_B * float(np.sum(comp.X / (comp.A * const.m_u)))
        floor = 16 * np.finfo(float).eps * k_ion * (s.Gamma + s.T_p / s.T + 20.0)
        # the ions' own c_V: the screening term's (the degenerate electrons' polarization, negative and
        # linear in T, outweighed by the electrons' own c_V) taken out, as in tests/physics/test_dense_eos.py
        own = s.c_V_ion - _screening_heat_capacity(s, comp)
        cv_round = (own < 0) & (own >= -floor)
        cv_bad = own < -floor
        print(f"{name}: S <= 0 at {bad.sum()} of {bad.size} points "
              f"(ionized, eta > 1e5: {np.sum(bad & ionized & (s.eta > 1e5))}; ionized, eta <= 1e5: "
              f"{np.sum(bad & ionized & (s.eta <= 1e5))}; partly ionized: {np.sum(bad & ~ionized)}); "
              f"ions' own c_V < 0 at {cv_bad.sum()} (and within rounding of 0 at {cv_round.sum()}); c_V_ion "
              f"readout < 0 at {np.sum(s.c_V_ion < 0)}")
        for mask, what in ((bad, "S<=0"), (cv_bad, "c_V_ion<0")):
            idx = np.argwhere(mask)
            for i, j in idx[:: max(1, len(idx) // 8)][:8]:
                print(f"   {what}: log rho {R[i, j]:6.2f} log T {T[i, j]:5.2f} S {s.S[i, j]: .3e} "
                      f"eta {s.eta[i, j]:.2e} mean_Z {s.mean_Z[i, j]:.3f} c_V_ion {s.c_V_ion[i, j]: .3e} "
                      f"T/T_p {s.T[i, j] / s.T_p[i, j]:.2e} Gamma {s.Gamma[i, j]:.2e}")


if __name__ == "__main__":
    main()
