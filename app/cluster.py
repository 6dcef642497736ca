"""Where the batch and table commands run: a Dask cluster, chosen on the command line.

The question this module answers: given ``--workers N`` or ``--scheduler
ADDRESS``, which dask.distributed client do the work go through? Nothing here
schedules anything itself; it only opens and closes Dask's own clusters.

- ``--workers 1``: one worker thread inside this process (no subprocess, no
  network; easiest to debug).
- ``--workers N`` (default: the number of cores): a ``LocalCluster`` of N
  worker processes with one thread each, started here and shut down on exit.
- ``--scheduler tcp://HOST:PORT``: a running scheduler and its workers, started
  with Dask's own commands or deployment tools (see the README). Its workers
  need Thermoplane installed and must see the files named on the command line.
"""

from __future__ import annotations

import logging
import os
import sys
from contextlib import contextmanager

__all__ = ["CONNECT_TIMEOUT", "default_workers", "client", "progress_line"]

#: Seconds to wait for a scheduler given by --scheduler before giving up.
CONNECT_TIMEOUT = 10.0


def default_workers() -> int:
    """Worker processes of the default local cluster: one per core."""
    return max(1, os.cpu_count() or 1)


@contextmanager
def client(workers: int | None = None, scheduler: str | None = None):
    """A dask.distributed Client for the duration of a ``with`` block, closed (with its cluster) after.

    Parameters
    ----------
    workers : int, optional
        Worker processes of a local cluster (1: in this process). Default
        :func:`default_workers`. Ignored when ``scheduler`` is given.
    scheduler : str, optional
        Address of a running scheduler, e.g. ``tcp://10.0.0.5:8786``.

    Raises
    ------
    ValueError
        ``workers`` < 1, or the scheduler cannot be reached within
        :data:`CONNECT_TIMEOUT` seconds (one line naming the address).
    """
    from distributed import Client, LocalCluster

    quiet = logging.CRITICAL       # a worker losing its scheduler at shutdown is not news for the user
    if scheduler is not None:
        address = scheduler.strip()
        if not address:
            raise ValueError("--scheduler needs an address such as tcp://127.0.0.1:8786")
        try:
            c = Client(address, timeout=CONNECT_TIMEOUT)
        except Exception as exc:   # distributed raises OSError, TimeoutError or ValueError by transport
            reason = " ".join(str(exc).split()) or type(exc).__name__
            raise ValueError(f"cannot reach the Dask scheduler at {address!r} within {CONNECT_TIMEOUT:g} s "
                             f"({reason[:200]}); start one with 'dask scheduler' or check the address") from None
        try:
            yield c
        finally:
            c.close()
        return
    n = default_workers() if workers is None else int(workers)
    if n < 1:
        raise ValueError(f"--workers must be at least 1, got {n}")
    # loopback only, and Dask's HTTP endpoints on a free port (no clash with a cluster already on 8787)
    where = {"host": "127.0.0.1"} if n > 1 else {}           # in-process workers talk over inproc://
    cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=n > 1, dashboard_address="127.0.0.1:0",
                           worker_dashboard_address="127.0.0.1:0",
                           silence_logs=quiet, **where)
    try:
        c = Client(cluster)
        try:
            yield c
        finally:
            c.close()
    finally:
        cluster.close()


def progress_line(done: int, total: int, what: str, width: int = 30, stream=None) -> None:
    """Redraw a one-line progress bar on a terminal (``\\r``, no newline until the end)."""
    stream = sys.stderr if stream is None else stream
    frac = done / total if total else 1.0
    bar = "#" * int(width * frac)
    stream.write(f"\r[{bar:<{width}}] {done}/{total} {what}")
    if done >= total:
        stream.write("\n")
    stream.flush()
