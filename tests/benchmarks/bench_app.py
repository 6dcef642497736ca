"""Benchmark of the dashboard through the real server, as ratios measured in one run.

Starts `thermoplane serve` on a free port (like tests/conftest.py), then POSTs to /_dash-update-component from
this process (requests, gzip accepted like a browser), with the JSON body Dash expects built from
app.callback_map, each request carrying the fingerprint of the figure "shown" (the previous answer), so a map
goes as a Patch where the browser would get one. Baseline: np.exp on as many doubles as the map has pixels,
timed in this process in the same run; a time t is given as t / (time of np.exp on N doubles), i.e. np.exp
calls per pixel of the N-pixel map.

(a) the full 300 x 300 map after a composition change (new plane + lines): median and p95
    [target p95 <= 1000 exp per pixel], with the server's CPU time per change (from /proc: a wall time
    far above it is time spent waiting for a core);
(a') the coarse preview while a slider is held (100 x 100), per pixel of the full map it stands for
    [target <= 200], and per pixel of its own;
(b) the first map after start over the median later one [target <= 2];
(c) bytes per composition change: on the wire (gzip) and as JSON [target <= 0.5 MB], and for a whole figure;
(d) a change of shaded quantity and of a layer (cached physics).

Run: python tests/benchmarks/bench_app.py [--repeat N] [--gunicorn] [--baseline REV] | [--stages]
(--gunicorn: the Dockerfile's command, so the first map comes after the preload warm-up; --baseline REV: a second
server runs git revision REV and every request alternates between the two, so that the comparison holds on a
loaded machine: the baseline's first map compiles its kernels into .pytest_cache once, ~1-2 minutes;
--stages: no server, the time of each stage of a map request in this process)
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import numpy as np                                # noqa: E402
import requests                                   # noqa: E402

from tests.app.dash_requests import map_request, response_parts   # noqa: E402
from tests.conftest import free_port, start_process, stop_process   # noqa: E402


def exp_time(n: int, repeat: int = 200) -> float:
    """Median seconds of np.exp on n doubles (the unit of every ratio)."""
    x = np.random.default_rng(1).uniform(-5.0, 5.0, n)
    out = np.empty_like(x)
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        np.exp(x, out=out)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def server_cpu(pid: int) -> float:
    """CPU seconds (user + system) the server process has used so far, every thread counted (also threads
    that have ended: each request runs in its own thread). 10 ms resolution (clock ticks)."""
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def p50_p95(times):
    times = sorted(times)
    return statistics.median(times), times[min(len(times) - 1, int(round(0.95 * (len(times) - 1))))]


def load_revision(rev: str) -> Path:
    """A folder holding git revision ``rev`` of the package as ``thermoplane/{physics,app}`` (put it first on a
    server's PYTHONPATH to serve that revision). Kept in .pytest_cache per commit, so that its compiled
    kernels (numba's cache beside the sources) are built once."""
    import subprocess
    sha = subprocess.run(["git", "-C", str(ROOT), "rev-parse", rev], check=True, capture_output=True,
                         text=True).stdout.strip()
    top = ROOT / ".pytest_cache" / f"bench_app_{sha[:12]}"
    pkg = top / "thermoplane"
    if not (pkg / "app" / "assets").exists():
        pkg.mkdir(parents=True, exist_ok=True)
        archive = subprocess.run(["git", "-C", str(ROOT), "archive", sha, "physics", "app", "assets"], check=True,
                                 capture_output=True)
        subprocess.run(["tar", "-x", "-C", str(pkg)], input=archive.stdout, check=True)
        (pkg / "assets").rename(pkg / "app" / "assets")        # as pyproject.toml maps it
    return top


class Server:
    """One running server and the browser state this script keeps for it (the fingerprint of the figure shown)."""

    def __init__(self, cmd, url, log, env_path=None):
        self.url = url
        saved = os.environ.get("PYTHONPATH")
        if env_path is not None:
            os.environ["PYTHONPATH"] = str(env_path)
        try:
            self.proc = start_process(cmd, url, log)
        finally:
            if env_path is not None:
                if saved is None:
                    os.environ.pop("PYTHONPATH", None)
                else:
                    os.environ["PYTHONPATH"] = saved
        self.session = requests.Session()
        self.shape = None

    def post(self, body):
        r = self.session.post(self.url + "_dash-update-component", json=body, timeout=900,
                              headers={"Accept-Encoding": "gzip"})
        r.raise_for_status()
        parts = response_parts(r.json())
        if parts.get("map-shape.data"):
            self.shape = parts["map-shape.data"]
        return r

    def timed(self, body_of_shape):
        """(wall seconds, response, server CPU seconds) of one request built for the figure shown."""
        body = body_of_shape(self.shape)
        c0 = server_cpu(self.proc.pid)
        t0 = time.perf_counter()
        r = self.post(body)
        return time.perf_counter() - t0, r, server_cpu(self.proc.pid) - c0


def stages(repeat: int) -> None:
    """Where a map request's time goes, in this process (Flask test client, no HTTP): median wall ms of each
    stage over ``repeat`` composition changes, full map and preview. Each stage is timed by wrapping the
    function that does it (nested stages are indented and included in the one above)."""
    import gzip
    import json

    import dash._callback as dash_callback

    from thermoplane.app import compress, delta, figures
    from thermoplane.app.callbacks import map as map_cb
    from thermoplane.app.main import create_app
    from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
    from thermoplane.physics import burning, contours, eos, neutrinos, plane

    spent: dict[str, float] = {}

    def wrap(module, name, label):
        original = getattr(module, name)

        def timed(*args, **kwargs):
            t0 = time.perf_counter()
            try:
                return original(*args, **kwargs)
            finally:
                spent[label] = spent.get(label, 0.0) + time.perf_counter() - t0
        setattr(module, name, timed)

    order = []
    for module, name, label in (
            (plane, "_compute", "plane (equation of state and the fields kept)"),
            (eos, "evaluate", "  physics.evaluate"),
            (map_cb, "overlay_lines", "lines (and the layers they need)"),
            (neutrinos, "epsilon_parts", "  neutrino losses"),
            (burning, "epsilon", "  burning rates"),
            (contours, "_column_crossings", "  compiled column passes"),
            (map_cb, "_colour_range", "colour range"),
            (figures, "plane_figure", "figure"),
            (delta, "figure_update", "fingerprint and Patch"),
            (dash_callback, "to_json", "Dash's JSON"),
            (compress, "gzip_json", "gzip")):
        wrap(module, name, label)
        order.append(label)
    app = create_app()
    client = app.server.test_client()
    controls = view_to_controls(DEFAULT_VIEW)
    shape = [None]

    def post(body):
        r = client.post("/_dash-update-component", json=body, headers={"Accept-Encoding": "gzip"})
        assert r.status_code == 200, r.status_code
        data = r.get_data()
        if r.headers.get("Content-Encoding") == "gzip":
            data = gzip.decompress(data)
        parts = response_parts(json.loads(data))
        if parts.get("map-shape.data"):
            shape[0] = parts["map-shape.data"]

    def full(i):
        X = round(0.70 - 0.003 * (i + 1), 6)
        return map_request(app, {**controls, "X": X, "Y": round(0.98 - X, 6)}, "comp-X.value", shape=shape[0])

    def preview(i):
        X = round(0.60 - 0.003 * (i + 1), 6)
        return map_request(app, {**controls, "Y": 0.28, "Z": 0.02, "zauto": ["auto"]}, "comp-drag.data",
                           held=True, drag_value=X, shape=shape[0])

    post(map_request(app, controls, "comp-X.value"))
    for title, make in (("full map after a composition change", full), ("coarse preview", preview)):
        for i in range(2):
            post(make(100 + i))                       # warm: tables, compiled kernels
        times: dict[str, list] = {}
        for i in range(repeat):
            body = make(i)
            spent.clear()
            c0, t0 = time.thread_time(), time.perf_counter()
            post(body)
            spent["request (this thread's CPU)"] = time.thread_time() - c0
            spent["request"] = time.perf_counter() - t0
            for k, v in spent.items():
                times.setdefault(k, []).append(v)
        print(f"{title}: median ms of {repeat}, in process")
        for k in order + ["request (this thread's CPU)", "request"]:
            if k in times:
                print(f"    {k:48s} {1e3 * statistics.median(times[k]):7.1f}")
        rest = [t - e for t, e in zip(times["request"], times["  physics.evaluate"])]
        print(f"    {'request without physics.evaluate':48s} {1e3 * statistics.median(rest):7.1f}")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=12)
    ap.add_argument("--gunicorn", action="store_true",
                    help="serve with the Dockerfile's gunicorn command (preload, two workers) instead")
    ap.add_argument("--baseline", metavar="REV",
                    help="also serve git revision REV and alternate every request between the two servers "
                         "(the ratio of the two is what a shared machine's load cannot skew)")
    ap.add_argument("--stages", action="store_true",
                    help="no server: where a map request's time goes, stage by stage, in this process")
    args = ap.parse_args()
    if args.stages:
        stages(args.repeat)
        return
    from thermoplane.app.callbacks.map import PREVIEW_RESOLUTION
    from thermoplane.app.main import create_app
    from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
    app = create_app()
    (ROOT / ".pytest_cache").mkdir(exist_ok=True)

    def command(port):
        if args.gunicorn:
            from tests.app.test_wsgi import dockerfile_command
            return [c.replace("0.0.0.0:8050", f"127.0.0.1:{port}") for c in dockerfile_command()]
        return [sys.executable, "-m", "thermoplane.app.cli", "serve", "--port", str(port)]

    port = free_port()
    cmd = command(port)
    print("server:", " ".join(cmd))
    servers = [Server(cmd, f"http://127.0.0.1:{port}/", "bench_app.log")]
    if args.baseline:
        port_b = free_port()
        servers.append(Server(command(port_b), f"http://127.0.0.1:{port_b}/", "bench_app_baseline.log",
                              env_path=load_revision(args.baseline)))
    n = int(DEFAULT_VIEW["resolution"])
    try:
        controls = view_to_controls(DEFAULT_VIEW)
        print("physics options:", {k: DEFAULT_VIEW[k] for k in ("electrons", "ionization", "coulomb", "pairs")},
              f"resolution {n} x {n}, preview {PREVIEW_RESOLUTION} x {PREVIEW_RESOLUTION}")
        t0 = time.perf_counter()
        r = servers[0].post(map_request(app, controls, "comp-X.value"))
        first = time.perf_counter() - t0
        whole = (int(r.headers.get("Content-Length", len(r.content))), len(r.content))
        print(f"first map after start: {first:.2f} s")
        for other in servers[1:]:
            t0 = time.perf_counter()
            other.post(map_request(app, controls, "comp-X.value"))     # may compile that revision's kernels once
            print(f"baseline {args.baseline}: first map after start {time.perf_counter() - t0:.2f} s (not compared)")

        def composition(i):
            X = round(0.70 - 0.003 * (i + 1), 6)        # a new composition every time
            return lambda shape: map_request(app, {**controls, "X": X, "Y": round(0.98 - X, 6)}, "comp-X.value",
                                             shape=shape)

        def preview(i):
            X = round(0.60 - 0.003 * (i + 1), 6)        # a new composition every time, slider held
            return lambda shape: map_request(app, {**controls, "Y": 0.28, "Z": 0.02, "zauto": ["auto"]},
                                             "comp-drag.data", held=True, drag_value=X, shape=shape)

        quantities = ["eta", "gamma1", "log_prad_pgas", "regime"]
        layers = [list(DEFAULT_VIEW["layers"]), ["equality"]]
        runs = {"later": composition, "previews": preview,
                "back": lambda i: (lambda shape: map_request(app, controls, "comp-X.value", shape=shape)),
                "qtimes": lambda i: (lambda shape: map_request(app, {**controls, "quantity": quantities[i % 4]},
                                                               "map-quantity.value", shape=shape)),
                "ltimes": lambda i: (lambda shape: map_request(app, {**controls, "layers": layers[i % 2]},
                                                               "map-layers.value", shape=shape))}
        # every request goes to each server in turn, so that both see the same load
        results = [{k: [] for k in runs} | {"cpu": [], "sizes": []} for _ in servers]
        for name, make in runs.items():
            for i in range(1 if name == "back" else args.repeat):
                for server, res in zip(servers, results):
                    t, r, c = server.timed(make(i))
                    res[name].append(t)
                    if name == "later":
                        res["cpu"].append(c)
                        res["sizes"].append((int(r.headers.get("Content-Length", len(r.content))), len(r.content),
                                             "operations" in r.json()["response"]["plane-graph"]["figure"]))
        later, cpu, sizes, previews, qtimes, ltimes = (results[0][k] for k in
                                                       ("later", "cpu", "sizes", "previews", "qtimes", "ltimes"))

        e_full, e_prev = exp_time(n * n), exp_time(PREVIEW_RESOLUTION ** 2)
        print(f"baseline: np.exp on {n * n} doubles {1e3 * e_full:.3f} ms "
              f"(on {PREVIEW_RESOLUTION ** 2}: {1e3 * e_prev:.3f} ms), median of 200, same run")
        med, p95 = p50_p95(later)
        print(f"(a) full map after a composition change: median {1e3 * med:.0f} ms = {med / e_full:.0f} exp/pixel, "
              f"p95 {1e3 * p95:.0f} ms = {p95 / e_full:.0f} exp/pixel   [target p95 <= 1000]")
        cm, cp = p50_p95(cpu)
        print(f"    the server's CPU time for it (all its threads): median {1e3 * cm:.0f} ms, p95 {1e3 * cp:.0f} ms; "
              f"wall over CPU: median {med / max(cm, 1e-9):.2f}, p95 {p95 / max(cp, 1e-9):.2f} "
              "(above 1: waiting for a core, e.g. other processes on the machine)")
        pm, pp = p50_p95(previews)
        print(f"(a') coarse preview: median {1e3 * pm:.0f} ms = {pm / e_full:.0f} exp per full-map pixel "
              f"(p95 {pp / e_full:.0f})   [target <= 200]; = {pm / e_prev:.0f} exp per preview pixel")
        print(f"(b) first map / later map (median): {first / med:.2f}   [target <= 2]")
        wire = [w for w, _, p in sizes if p]
        js = [j for _, j, p in sizes if p]
        if wire:
            print(f"(c) bytes per composition change (a Patch, {len(wire)} of {len(sizes)}): "
                  f"{statistics.median(wire) / 1e6:.3f} MB sent, max {max(wire) / 1e6:.3f} MB "
                  f"({statistics.median(js) / 1e6:.3f} MB of JSON before gzip)   [target <= 0.5 MB]")
        print(f"    a whole figure (the first map): {whole[0] / 1e6:.3f} MB sent ({whole[1] / 1e6:.3f} MB of JSON)")
        for name, times in (("(d) shaded quantity change", qtimes), ("(d) layer change", ltimes)):
            m, p = p50_p95(times)
            print(f"{name}: median {1e3 * m:.0f} ms = {m / e_full:.0f} exp/pixel, p95 {1e3 * p:.0f} ms")
        if args.baseline:
            base = results[1]
            print(f"against revision {args.baseline}, every request alternated between the two servers:")
            for label, key in (("full map", "later"), ("preview", "previews"), ("shaded quantity change", "qtimes"),
                               ("layer change", "ltimes")):
                (m, p), (bm, bp) = p50_p95(results[0][key]), p50_p95(base[key])
                print(f"    {label}: median {1e3 * m:.0f} ms (baseline {1e3 * bm:.0f}), p95 {1e3 * p:.0f} ms "
                      f"(baseline {1e3 * bp:.0f}); median ratio baseline/now {bm / m:.2f}")
            (cm, _), (bcm, _) = p50_p95(cpu), p50_p95(base["cpu"])
            bw = [w for w, _, p in base["sizes"] if p]
            print(f"    full map, server CPU: median {1e3 * cm:.0f} ms (baseline {1e3 * bcm:.0f}); sent "
                  f"{statistics.median([w for w, _, p in sizes if p] or [0]) / 1e6:.3f} MB "
                  f"(baseline {statistics.median(bw or [0]) / 1e6:.3f} MB)")
    finally:
        for server in servers:
            stop_process(server.proc)


if __name__ == "__main__":
    main()
