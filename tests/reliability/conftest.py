"""A gunicorn server with 2 workers on loopback, and helpers to find and kill its workers."""

from __future__ import annotations

import os
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from tests.conftest import ROOT, free_port, start_process, stop_process


def worker_pids(master_pid: int) -> list[int]:
    """Pids of the processes whose parent is ``master_pid`` (gunicorn's workers), from /proc."""
    pids = []
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/stat") as fh:
                stat = fh.read()
        except OSError:
            continue
        # field 4 (after the parenthesised command name, which may hold spaces) is the parent pid
        fields = stat[stat.rindex(")") + 2:].split()
        if int(fields[1]) == master_pid and fields[0] != "Z":
            pids.append(int(entry))
    return sorted(pids)


def wait_for_workers(master_pid: int, n: int, timeout: float = 60.0) -> list[int]:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        pids = worker_pids(master_pid)
        if len(pids) >= n:
            return pids
        time.sleep(0.2)
    raise RuntimeError(f"gunicorn master {master_pid} has {worker_pids(master_pid)} workers, wanted {n}")


class Gunicorn:
    def __init__(self, url: str, proc):
        self.url = url
        self.proc = proc

    @property
    def master_pid(self) -> int:
        return self.proc.pid

    def workers(self) -> list[int]:
        return worker_pids(self.proc.pid)


@pytest.fixture(scope="package")
def gunicorn_server():
    """``gunicorn --workers 2 --bind 127.0.0.1:PORT`` on the hardened app; both workers up."""
    (Path(ROOT) / ".pytest_cache").mkdir(exist_ok=True)
    port = free_port()
    url = f"http://127.0.0.1:{port}/"
    cmd = [sys.executable, "-m", "gunicorn", "--workers", "2", "--timeout", "120",
           "--bind", f"127.0.0.1:{port}", "thermoplane.app.wsgi:server"]
    proc = start_process(cmd, url, "gunicorn-reliability.log")
    try:
        wait_for_workers(proc.pid, 2)
        # every worker imports the app at start; one page fetch per worker is not needed
        with urllib.request.urlopen(url + "_dash-dependencies", timeout=30) as r:
            assert r.status == 200
        yield Gunicorn(url, proc)
    finally:
        stop_process(proc)
