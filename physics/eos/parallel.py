"""How the compiled kernels run in parallel over the cores: the threading layer and one lock.

The question this module answers: which numba threading layer do the ``parallel=True`` kernels of the
equation of state use, and how are they kept safe when a server forks workers and serves requests in
threads?

- Layer: ``workqueue`` (numba's own), unless the user set ``NUMBA_THREADING_LAYER``. The group server
  loads the kernels once and then forks its workers (gunicorn ``--preload``). GNU OpenMP, which numba
  picks by default on this kind of machine, aborts a child forked from a process that has used it (measured:
  the child is killed with "fork() called from a process already using GNU OpenMP"); the workqueue layer
  runs in the child. TBB would be safe on both counts but is a further package; not needed.
- Lock: the workqueue layer is not thread-safe (two threads launching parallel kernels at once abort the
  process), and the development server and the batch workers run callbacks in threads. Every Python
  function that launches a parallel kernel holds :data:`KERNEL_LOCK` (see :func:`serialized`), so
  launches from threads queue instead. A launch already uses every core, so little is lost.
"""

from __future__ import annotations

import functools
import os
import threading

import numba

__all__ = ["KERNEL_LOCK", "serialized"]

if "NUMBA_THREADING_LAYER" not in os.environ:
    numba.config.THREADING_LAYER = "workqueue"

#: held while a parallel kernel runs (re-entrant: a locked function may call another)
KERNEL_LOCK = threading.RLock()


def serialized(fn):
    """Run ``fn`` (a Python function that launches parallel kernels) under :data:`KERNEL_LOCK`."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with KERNEL_LOCK:
            return fn(*args, **kwargs)

    return wrapper
