"""The parallel kernels under threads and after fork, as the servers run them (physics.eos.parallel)."""

import os
import threading

import numba
import numpy as np

from thermoplane import physics as ph

COMP = ph.Composition.from_xyz(0.70, 0.28, 0.02)
LR, LT = np.meshgrid(np.linspace(-10, 10, 60), np.linspace(3, 10, 40))
RHO, T = 10.0**LR, 10.0**LT


def test_layer_is_fork_safe_workqueue_unless_the_user_chose():
    ph.evaluate(RHO, T, COMP)
    if "NUMBA_THREADING_LAYER" not in os.environ:
        assert numba.threading_layer() == "workqueue"


def test_maps_from_several_threads_at_once_agree():
    ref = ph.evaluate(RHO, T, COMP).P
    out = [None] * 3

    def run(k):
        out[k] = ph.evaluate(RHO, T, COMP).P

    threads = [threading.Thread(target=run, args=(k,)) for k in range(3)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for p in out:
        np.testing.assert_array_equal(p, ref)


def test_a_forked_child_computes_the_same_map():
    # gunicorn --preload: kernels warmed in the parent, maps computed in forked workers
    ref = ph.evaluate(RHO, T, COMP).P
    pid = os.fork()
    if pid == 0:                                    # child: compute, report equality by exit code
        code = 3
        try:
            code = 0 if np.array_equal(ph.evaluate(RHO, T, COMP).P, ref) else 4
        finally:
            os._exit(code)
    _, status = os.waitpid(pid, 0)
    assert os.WIFEXITED(status) and os.WEXITSTATUS(status) == 0
