"""Benchmark of ``thermoplane table``: peak memory and time while writing a large table.

A 2000 x 2000 table of every field (32 x 4 million float64 = 1.02 GB of data)
with the full default physics, written to NetCDF:

(a) with 2 worker processes (LocalCluster): the peak resident memory (RSS) of
    this process plus every worker, sampled every 50 ms, against the size of
    the whole table and of one chunk;
(b) the wall time against evaluate() in this process on a chunk's worth of
    points spread over the whole grid, scaled to the table and divided by the
    workers: the cost of Dask, transfer and writing (and of the machine's
    other load, printed).

Run: python tests/benchmarks/bench_table.py [n_points_per_axis] [workers] [chunk]
"""

from __future__ import annotations

import os
import sys
import tempfile
import threading
import time
from pathlib import Path

import numpy as np
import psutil

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from thermoplane import physics as ph            # noqa: E402
from thermoplane.app import eostable             # noqa: E402


class RssSampler:
    """Peak of the summed RSS of this process and all its descendants."""

    def __init__(self, interval: float = 0.05):
        self.interval, self.peak, self._stop = interval, 0, threading.Event()
        self.per_process: dict[str, int] = {}
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _total(self) -> int:
        me = psutil.Process()
        total = 0
        for proc in [me] + me.children(recursive=True):
            try:
                rss = proc.memory_info().rss
            except psutil.NoSuchProcess:
                continue
            total += rss
            key = "this process" if proc.pid == me.pid else "a worker"
            self.per_process[key] = max(self.per_process.get(key, 0), rss)
        return total

    def _run(self):
        while not self._stop.is_set():
            self.peak = max(self.peak, self._total())
            time.sleep(self.interval)

    def __enter__(self):
        self.start = self._total()
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()


def main(n: int = 2000, workers: int = 2, chunk: int = eostable.DEFAULT_CHUNK) -> None:
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    log_rho, log_T = np.linspace(-10, 10, n), np.linspace(3, 10, n)
    ds = eostable.build(comp, log_rho, log_T, chunk=chunk)
    table_mb = n * n * len(eostable.FIELDS) * 8 / 2**20
    chunk_mb = chunk * chunk * len(eostable.FIELDS) * 8 / 2**20
    n_chunks = int(np.ceil(n / chunk)) ** 2

    # baseline: evaluate() here on one chunk's worth of points spread evenly over the whole grid (every
    # n/256-th row and column), after a first call that builds the electron tables; its RSS rise is the
    # working memory of one chunk's evaluation
    ph.evaluate(1.0, 1e7, comp)
    step = max(1, n // chunk)
    sub_r, sub_T = log_rho[::step][:chunk], log_T[::step][:chunk]
    with RssSampler(0.01) as one:
        t0 = time.perf_counter()
        ph.evaluate(10.0 ** sub_r[:, None], 10.0 ** sub_T[None, :], comp)
        one_chunk = (time.perf_counter() - t0) * n * n / (sub_r.size * sub_T.size) / n_chunks
    one_mb = (one.peak - one.start) / 2**20

    # the same cluster idle, each worker warmed up (physics imported, all electron tables built): the memory
    # every worker process has before it holds any chunk
    from thermoplane.app import cluster
    with cluster.client(workers) as c:
        # the whole plane once (coarsely): every lazily built electron table is in place
        c.run(ph.evaluate, 10.0 ** sub_r[::8, None], 10.0 ** sub_T[None, ::8], comp)
        time.sleep(1.0)
        with RssSampler() as idle:
            time.sleep(1.0)
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "table.nc")
        with RssSampler() as rss:
            t0 = time.perf_counter()
            eostable.write(ds, out, workers=workers)
            wall = time.perf_counter() - t0
        size_mb = os.path.getsize(out) / 2**20
    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f}")
    print(f"table {n} x {n} x {len(eostable.FIELDS)} fields = {table_mb:.0f} MB; chunk {chunk} x {chunk} = "
          f"{chunk_mb:.1f} MB; {n_chunks} chunks; file {size_mb:.0f} MB")
    print(f"{workers} workers: wall {wall:.1f} s")
    rise = (rss.peak - idle.peak) / 2**20
    print("largest single-process RSS while writing (idle, warmed up): " + "; ".join(
        f"{k} {v / 2**20:.0f} MB ({idle.per_process.get(k, 0) / 2**20:.0f} MB)" for k, v in rss.per_process.items()))
    print(f"peak RSS of this process + workers while writing: {rss.peak / 2**20:.0f} MB; the same cluster idle "
          f"and warmed up: {idle.peak / 2**20:.0f} MB")
    print(f"rise while writing: {rise:.0f} MB = {rise / table_mb:.3f} of the table = {rise / chunk_mb:.1f} chunks")
    print(f"RSS rise of one evaluate() on one chunk's worth of points in this process: {one_mb:.0f} MB "
          f"(the working memory of a chunk on a worker)")
    print(f"wall / (one chunk evaluated here x {n_chunks} chunks / {workers} workers): "
          f"{wall / (one_chunk * n_chunks / workers):.2f}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:4]))
