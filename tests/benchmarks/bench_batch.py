"""Benchmark of ``thermoplane batch``, as ratios measured in one run on this machine.

200 generated track files (illustrative: made-up paths through the plane,
written here by formula), 2000 rows each, the full default physics:

(a) batch.run with 1 worker (in this process) and with 2 worker processes
    (LocalCluster), wall time including starting and stopping the cluster;
    the ratio 1 worker / 2 workers. The time to start and stop an idle
    cluster whose workers have loaded the physics is printed beside it;
(b) the per-row cost: batch with 1 worker per row, against one evaluate()
    call on the same rows (every file's rows in one array), per row.

Run: python tests/benchmarks/bench_batch.py [n_files] [rows_per_file]
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from thermoplane import physics as ph            # noqa: E402
from thermoplane.app import batch, cluster       # noqa: E402


def write_files(folder: str, n_files: int, rows: int) -> tuple[np.ndarray, np.ndarray]:
    """Tracks from hot thin gas into dense matter, each shifted a little (illustrative)."""
    all_r, all_T = [], []
    s = np.linspace(0.0, 1.0, rows)
    for k in range(n_files):
        shift = 0.01 * k
        lr = np.round(-6.0 + 14.0 * s + shift, 8)
        lt = np.round(5.0 + 3.5 * s - 2.0 * s**2 + 0.3 * np.sin(9 * s + shift) + shift / 4, 8)
        body = "\n".join(f"{i},{a:.8f},{b:.8f}" for i, (a, b) in enumerate(zip(lr, lt)))
        Path(folder, f"run{k:04d}.csv").write_text("model,log_rho,log_T\n" + body + "\n")
        all_r.append(lr)
        all_T.append(lt)
    return np.concatenate(all_r), np.concatenate(all_T)


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def main(n_files: int = 200, rows: int = 2000) -> None:
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    job = batch.Job(comp=comp)
    ph.evaluate(1.0, 1e7, comp)                      # build the electron tables here once
    with tempfile.TemporaryDirectory() as tmp:
        log_rho, log_T = write_files(tmp, n_files, rows)
        paths = batch.expand_paths([tmp])

        t_eval, _ = timed(lambda: ph.evaluate(10.0 ** log_rho, 10.0 ** log_T, comp))
        t1, r1 = timed(lambda: batch.run(paths, job, workers=1))
        t2, r2 = timed(lambda: batch.run(paths, job, workers=2))

        def idle_cluster():
            with cluster.client(2) as c:
                c.run(ph.evaluate, 1.0, 1e7, comp)
        t_start2, _ = timed(idle_cluster)

    assert r1 == r2, "1 and 2 workers disagree"
    assert all(r["error"] is None for r in r1)
    n_rows = n_files * rows
    crossings = sum(len(r["crossings"]) for r in r1)
    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} (shared)")
    print(f"{n_files} files x {rows} rows = {n_rows} rows, {crossings} crossings")
    print(f"1 worker (in-process): {t1:.2f} s; 2 worker processes: {t2:.2f} s; ratio 1/2 = {t1 / t2:.2f}")
    print(f"start + warm up + stop of an idle 2-worker cluster: {t_start2:.2f} s; "
          f"ratio without it = {t1 / max(t2 - t_start2, 1e-9):.2f}")
    print(f"per row: batch (1 worker) {t1 / n_rows * 1e6:.1f} us, evaluate() on the same rows "
          f"{t_eval / n_rows * 1e6:.1f} us; ratio {t1 / t_eval:.2f}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
