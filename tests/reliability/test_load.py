"""Load and fault tests against gunicorn with 2 workers on loopback.

Client threads send callback requests built from ``/_dash-dependencies``:
map changes (the callback that draws ``plane-graph.figure``, with varying
composition, range, resolution and quantity), point readouts (the callback
that takes ``plane-graph.clickData``) and track uploads (the callback that
takes ``tracks-upload.contents``). No request may get a 5xx answer.

Counts: ``THERMOPLANE_LOAD_REQUESTS`` (default 300 here; 2000 for the full
run, see DEVELOPERS.md) and ``THERMOPLANE_LOAD_THREADS`` (default 16). Every
request has a 60 s timeout and the whole run a budget, so a stuck server
fails the test instead of hanging it.
"""

from __future__ import annotations

import os
import random
import signal
import threading
import time
from concurrent.futures import ThreadPoolExecutor, as_completed

import numpy as np
import pytest
import requests

from tests.reliability import dash_client as dc
from tests.reliability.conftest import wait_for_workers, worker_pids

N_REQUESTS = int(os.environ.get("THERMOPLANE_LOAD_REQUESTS", "300"))
N_THREADS = int(os.environ.get("THERMOPLANE_LOAD_THREADS", "16"))
TIMEOUT = 60.0
BUDGET = float(os.environ.get("THERMOPLANE_LOAD_BUDGET", str(max(240.0, N_REQUESTS * 0.5))))

# A few compositions: each new one costs the worker its boundary lines once (seconds), as for a user.
COMPOSITIONS = [(0.70, 0.28, 0.02), (0.0, 0.98, 0.02), (0.50, 0.48, 0.02)]
RESOLUTIONS = [20, 30, 40]
RANGES = [(-10.0, 10.0, 3.0, 10.0), (-5.0, 5.0, 4.0, 8.0), (-8.0, 6.0, 3.5, 9.0)]


class Plan:
    """Everything the clients need, discovered from the running server."""

    def __init__(self, url: str):
        self.url = url
        s = requests.Session()
        self.deps = s.get(url + "_dash-dependencies", timeout=TIMEOUT).json()
        self.values = dc.layout_values(s.get(url + "_dash-layout", timeout=TIMEOUT).json())
        self.values[("map-resolution", "value")] = RESOLUTIONS[0]
        self.map = dc.find(self.deps, "plane-graph", "figure")
        self.point = next((d for d in dc.server_callbacks(self.deps)
                           if any(i["id"] == "plane-graph" and i["property"] == "clickData" for i in d["inputs"])),
                          None)
        self.upload = next((d for d in dc.server_callbacks(self.deps)
                            if any(i["id"] == "tracks-upload" and i["property"] == "contents"
                                   for i in d["inputs"])), None)
        assert self.map is not None, "no callback draws plane-graph.figure"
        quantities = self.values.get(("map-quantity", "options")) or []
        self.quantities = [q["value"] if isinstance(q, dict) else q for q in quantities] or \
            [self.values.get(("map-quantity", "value"))]
        # the view store the map writes feeds the readout and the uploads
        r = s.post(url + dc.UPDATE.lstrip("/"), data=dc.encode(dc.body(self.map, self.values)),
                   headers={"Content-Type": "application/json"}, timeout=TIMEOUT)
        assert r.status_code == 200, r.text[:300]
        self.view = dc.response_value(r.json(), "view-store", "data")
        self.kinds = ["map"] * 5 + (["point"] * 3 if self.point else []) + (["upload"] * 2 if self.upload else [])

    def missing(self) -> list[str]:
        return [name for name, dep in (("point readout", self.point), ("track upload", self.upload)) if dep is None]

    def make(self, rng: random.Random) -> tuple[str, dict]:
        kind = rng.choice(self.kinds)
        if kind == "map":
            X, Y, Z = rng.choice(COMPOSITIONS)
            rlo, rhi, tlo, thi = rng.choice(RANGES)
            over = {("comp-X", "value"): X, ("comp-Y", "value"): Y, ("comp-Z", "value"): Z,
                    ("map-rho-lo", "value"): rlo, ("map-rho-hi", "value"): rhi,
                    ("map-T-lo", "value"): tlo, ("map-T-hi", "value"): thi,
                    ("map-resolution", "value"): rng.choice(RESOLUTIONS),
                    ("map-quantity", "value"): rng.choice(self.quantities)}
            return kind, dc.body(self.map, self.values, over)
        if kind == "point":
            click = {"points": [{"x": rng.uniform(-9.0, 9.0), "y": rng.uniform(3.5, 9.5)}]}
            return kind, dc.body(self.point, self.values, {("plane-graph", "clickData"): click,
                                                           ("view-store", "data"): self.view})
        n = rng.randint(10, 60)
        log_T = np.linspace(rng.uniform(6.8, 7.2), rng.uniform(7.5, 8.5), n)
        log_rho = np.linspace(rng.uniform(0.5, 2.0), rng.uniform(2.5, 5.0), n)
        text = "model,log_rho,log_T\n" + "".join(f"{i},{r:.5f},{t:.5f}\n"
                                                 for i, (r, t) in enumerate(zip(log_rho, log_T)))
        import base64
        url = "data:text/csv;base64," + base64.b64encode(text.encode()).decode()
        return kind, dc.body(self.upload, self.values,
                             {("tracks-upload", "contents"): [url], ("tracks-upload", "filename"): ["load.csv"],
                              ("view-store", "data"): self.view}, changed=["tracks-upload.contents"])


_local = threading.local()


def send(url: str, kind: str, body: dict) -> dict:
    """One request; the outcome with its timing. Never raises."""
    s = getattr(_local, "session", None)
    if s is None:
        s = _local.session = requests.Session()
    t0 = time.monotonic()
    try:
        r = s.post(url + dc.UPDATE.lstrip("/"), data=dc.encode(body), timeout=TIMEOUT,
                   headers={"Content-Type": "application/json"})
        status, err = r.status_code, None
        if "Traceback" in r.text:
            err = "traceback in body"
    except requests.RequestException as exc:
        status, err = None, type(exc).__name__
    return {"kind": kind, "status": status, "error": err, "t0": t0, "t1": time.monotonic()}


def run(url: str, jobs: list[tuple[str, dict]], threads: int, on_done=None) -> list[dict]:
    deadline = time.monotonic() + BUDGET
    results = []
    with ThreadPoolExecutor(max_workers=threads) as pool:
        futures = [pool.submit(send, url, kind, body) for kind, body in jobs]
        for fut in as_completed(futures, timeout=BUDGET + TIMEOUT):
            results.append(fut.result())
            if on_done is not None:
                on_done(len(results))
            if time.monotonic() > deadline:
                for f in futures:
                    f.cancel()
                pytest.fail(f"load run over its {BUDGET:.0f} s budget after {len(results)} of {len(jobs)} requests")
    return results


def summary(results: list[dict], title: str) -> str:
    lines = [f"{title}: {len(results)} requests"]
    for kind in sorted({r["kind"] for r in results}) + ["all"]:
        sel = [r for r in results if kind in ("all", r["kind"])]
        ok = [r for r in sel if r["status"] is not None]
        lat = np.array([r["t1"] - r["t0"] for r in ok]) * 1000.0
        if lat.size:
            lines.append(f"  {kind:<7} n={len(sel):<5} p50={np.percentile(lat, 50):8.1f} ms  "
                         f"p95={np.percentile(lat, 95):8.1f} ms  max={lat.max():8.1f} ms")
    codes: dict = {}
    for r in results:
        codes[r["status"] or r["error"]] = codes.get(r["status"] or r["error"], 0) + 1
    lines.append(f"  outcomes: {codes}")
    return "\n".join(lines)


@pytest.fixture(scope="module")
def plan(gunicorn_server):
    return Plan(gunicorn_server.url)


@pytest.mark.slow
def test_load_two_workers_no_server_errors(gunicorn_server, plan):
    rng = random.Random(20240601)
    jobs = [plan.make(rng) for _ in range(N_REQUESTS)]
    t0 = time.monotonic()
    results = run(gunicorn_server.url, jobs, N_THREADS)
    wall = time.monotonic() - t0
    print("\n" + summary(results, f"load, {N_THREADS} threads, 2 gunicorn workers, {wall:.1f} s wall"))
    if plan.missing():
        print(f"  not in the app, so not sent: {', '.join(plan.missing())}")
    assert len(results) == N_REQUESTS
    five = [r for r in results if r["status"] is not None and r["status"] >= 500]
    assert not five, f"{len(five)} server errors: {five[:5]}"
    bad = [r for r in results if r["status"] not in (200, 204) or r["error"]]
    assert not bad, f"{len(bad)} failed requests: {bad[:5]}"
    assert {r["kind"] for r in results} == set(plan.kinds)
    assert len(gunicorn_server.workers()) == 2           # no worker died under load


def _cpu_ticks(pid: int) -> int:
    try:
        with open(f"/proc/{pid}/stat") as fh:
            stat = fh.read()
    except OSError:
        return -1
    fields = stat[stat.rindex(")") + 2:].split()
    return int(fields[11]) + int(fields[12])             # utime + stime


@pytest.mark.slow
def test_killed_worker_is_replaced_and_requests_keep_succeeding(gunicorn_server, plan):
    master = gunicorn_server.master_pid
    before = wait_for_workers(master, 2)
    victim = before[0]
    rng = random.Random(7)
    n_during = max(120, N_REQUESTS // 2)
    jobs = [plan.make(rng) for _ in range(n_during)]
    killed = {}

    def maybe_kill(done: int) -> None:
        if not killed and done >= n_during // 3:
            killed["t"] = time.monotonic()
            os.kill(victim, signal.SIGKILL)

    during = run(gunicorn_server.url, jobs, N_THREADS, on_done=maybe_kill)
    assert killed, "the worker was never killed"

    # the master forks a replacement
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        now = worker_pids(master)
        if len(now) == 2 and victim not in now:
            break
        time.sleep(0.2)
    now = worker_pids(master)
    assert victim not in now and len(now) == 2, (before, now)
    replacement = (set(now) - set(before)).pop()

    ticks0 = _cpu_ticks(replacement)
    n_after = max(60, N_REQUESTS // 5)
    after = run(gunicorn_server.url, [plan.make(rng) for _ in range(n_after)], N_THREADS)
    ticks1 = _cpu_ticks(replacement)

    failed = [r for r in during if r["status"] is None]
    print("\n" + summary(during, f"fault: worker {victim} SIGKILLed after {n_during // 3} of {n_during}"))
    print(f"  in-flight failures at the kill: {len(failed)} ({sorted({r['error'] for r in failed})})")
    print(summary(after, f"after the restart (workers {before} -> {now})"))
    print(f"  replacement worker {replacement}: {max(ticks1 - ticks0, 0)} CPU ticks during the after phase")

    # a killed sync worker drops the one connection it holds: never a 5xx
    assert not [r for r in during + after if r["status"] is not None and r["status"] >= 500]
    # only requests in flight at the kill may fail, and only a few (one per worker connection at most
    # per client thread)
    assert all(r["t0"] <= killed["t"] + 1.0 and r["t1"] >= killed["t"] for r in failed), failed
    assert len(failed) <= N_THREADS
    assert all(r["status"] in (200, 204) and not r["error"] for r in after), \
        [r for r in after if r["status"] not in (200, 204)][:5]
    assert len(after) == n_after
