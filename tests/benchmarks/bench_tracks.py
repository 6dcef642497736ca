"""Benchmark of track evaluation, as ratios measured in one run on this machine.

(a) physics.tracks.track_report on a one-million-row track (the state at every
    row and every crossing of every boundary) against one physics.evaluate()
    call on the same million points (target: ratio <= 2);
(b) the same through app.tracks.enrich (table in, enriched table, regime per
    row and crossings out, as the CLI and the app use it), against evaluate();
(c) the browser's share: physics.tracks.downsample to 20k points keeping every
    crossing, against evaluate().

The track is a smooth path that crosses several boundaries: log rho from -8
to 9 and log T wandering between 4 and 9.5 (centre-of-a-star-like plus
oscillations, so that there are crossings to find). Options: the defaults
and the textbook ideal gas plus radiation. Best of two runs each.

Run: python tests/benchmarks/bench_tracks.py [n_rows]
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from thermoplane import physics as ph                                  # noqa: E402
from thermoplane.physics import tracks                            # noqa: E402
from thermoplane.app import tracks as app_tracks                  # noqa: E402
from thermoplane.app.upload import ColumnMapping                  # noqa: E402


def best_of(fn, repeat: int = 2):
    best, out = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def synthetic_track(n: int):
    s = np.linspace(0.0, 1.0, n)
    log_rho = -8.0 + 17.0 * s
    log_T = 4.0 + 5.0 * s + 0.5 * np.sin(40 * np.pi * s) * np.exp(-3 * s)
    age = 1e10 * s
    return log_rho, np.minimum(log_T, 9.5), age


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    log_rho, log_T, age = synthetic_track(n)
    rho, T = 10.0 ** log_rho, 10.0 ** log_T
    df = pd.DataFrame({"age": age, "log_rho": log_rho, "log_T": log_T})
    mapping = ColumnMapping(rho_col="log_rho", T_col="log_T", age_col="age")
    settings = {"default options": {},
                "ideal gas + radiation": dict(electrons="classical", ionization="full", coulomb=False, pairs=False)}
    print(f"track of {n:,} rows; ratios against physics.evaluate on the same {n:,} points")
    for name, opts in settings.items():
        t_eval, _ = best_of(lambda: ph.evaluate(rho, T, comp, **opts))
        t_report, (_, crossings) = best_of(lambda: tracks.track_report(log_rho, log_T, comp, age=age, **opts))
        t_enrich, _ = best_of(lambda: app_tracks.enrich(df, mapping, comp, **opts))
        keep = np.concatenate([crossings["row"].to_numpy(), crossings["row_after"].to_numpy()])
        t_down, idx = best_of(lambda: tracks.downsample(n, keep, max_points=20_000))
        print(f"  {name}: evaluate {t_eval:7.2f} s; {len(crossings)} crossings")
        print(f"    (a) track_report / evaluate = {t_report / t_eval:5.2f}   [target <= 2]  ({t_report:.2f} s)")
        print(f"    (b) enrich       / evaluate = {t_enrich / t_eval:5.2f}                ({t_enrich:.2f} s)")
        print(f"    (c) downsample   / evaluate = {t_down / t_eval:7.4f}  ({len(idx):,} points drawn)")


if __name__ == "__main__":
    main()
