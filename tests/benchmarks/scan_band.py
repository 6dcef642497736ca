"""Measurement: 1-D scans across the pressure-ionization band, and the ionization of a Sun-like interior.

Issue 11 asks that nothing steps: scans at 0.001 dex in log rho across the band at 1e4, 3e4 and 1e5 K show
P, Gamma_1 and nabla_ad varying smoothly. For the solar-like mix, hydrogen and helium, over log rho -3..2,
this prints per scan: whether P rises monotonically, the largest change of log P's second difference, of
Gamma_1 and of nabla_ad between neighbouring points (0.001 dex apart), and the ranges of Gamma_1 and
nabla_ad. ``--table FILE`` also writes the scans as CSV (log_rho, T, composition, P, gamma1, nabla_ad,
ion_H) for a figure.

Then, along a present-day-Sun-like interior (a handful of (log rho, log T) pairs from centre to the base
of the convection zone; rounded values of a standard solar model, from memory, for orientation only), the
hydrogen ionization and Gamma_1 (a fully ionized ideal gas has ion_H = 1 and Gamma_1 = 5/3 minus Coulomb
corrections of order 1e-3).
Asserts nothing. Run: python tests/benchmarks/scan_band.py [--ionization saha|chemical] [--table FILE]
"""

import argparse
import csv
import os
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", ".."))

from thermoplane import physics as ph  # noqa: E402

COMPOSITIONS = {
    "solar-like": ph.Composition.from_xyz(0.70, 0.28, 0.02),
    "hydrogen": ph.Composition({"H-1": 1.0}),
    "helium": ph.Composition({"He-4": 1.0}),
}
#: (r / R_sun, log rho, log T): rounded, from memory (standard solar model), for orientation only
SUN_LIKE = ((0.0, 2.18, 7.19), (0.1, 1.95, 7.12), (0.2, 1.55, 6.97), (0.3, 1.10, 6.82), (0.4, 0.62, 6.69),
            (0.5, 0.15, 6.58), (0.6, -0.30, 6.48), (0.7, -0.70, 6.36))


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--ionization", default="saha", choices=("saha", "chemical"))
    ap.add_argument("--table", default=None, help="write the scans to this CSV file")
    args = ap.parse_args()
    lr = np.round(np.arange(-3.0, 2.0 + 5e-4, 0.001), 3)
    rows = []
    for name, comp in COMPOSITIONS.items():
        for T in (1e4, 3e4, 1e5):
            s = ph.evaluate(10.0**lr, np.full(lr.size, T), comp, ionization=args.ionization)
            ok = np.isfinite(s.P)
            lp = np.log10(np.where(ok, s.P, np.nan))
            with np.errstate(invalid="ignore"):
                d2 = np.abs(np.diff(lp, 2))
                dg = np.abs(np.diff(s.gamma1))
                dn = np.abs(np.diff(s.nabla_ad))
                rising = bool(np.all(np.diff(lp)[np.isfinite(np.diff(lp))] > 0))
            i, j, k = np.nanargmax(d2), np.nanargmax(dg), np.nanargmax(dn)
            print(f"{name:10s} T = {T:.0e} K: P rises {rising}; max |d2 log P| {d2[i]:.2e} (log rho {lr[i + 1]:.3f}); "
                  f"Gamma_1 {np.nanmin(s.gamma1):.3f}..{np.nanmax(s.gamma1):.3f}, max step {dg[j]:.2e} "
                  f"(log rho {lr[j]:.3f}); nabla_ad {np.nanmin(s.nabla_ad):.4f}..{np.nanmax(s.nabla_ad):.4f}, "
                  f"max step {dn[k]:.2e} (log rho {lr[k]:.3f}); unsolved {np.sum(~ok)}")
            rows += [(f"{x:.3f}", f"{T:.0f}", name, f"{p:.9e}", f"{g:.9f}", f"{n:.9f}", f"{h:.9f}")
                     for x, p, g, n, h in zip(lr, s.P, s.gamma1, s.nabla_ad, s.ion_H)]
    comp = COMPOSITIONS["solar-like"]
    r, L, T = (np.array(v) for v in zip(*SUN_LIKE))
    s = ph.evaluate(10.0**L, 10.0**T, comp, ionization=args.ionization)
    print("Sun-like interior (X = 0.70; r/R_sun, log rho, log T: ion_H, Gamma_1):")
    for k in range(r.size):
        print(f"  {r[k]:.1f}  {L[k]:5.2f}  {T[k]:.2f}:  {s.ion_H[k]:.5f}  {s.gamma1[k]:.4f}")
    if args.table:
        with open(args.table, "w", newline="") as fh:
            w = csv.writer(fh)
            w.writerow(("log_rho", "T", "composition", "P", "gamma1", "nabla_ad", "ion_H"))
            w.writerows(rows)
        print(f"scans written to {args.table}")


if __name__ == "__main__":
    main()
