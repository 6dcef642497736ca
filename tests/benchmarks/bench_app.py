"""Benchmark of the dashboard through the real server, as ratios measured in one run.

Starts `thermoplane serve` on a free port (like tests/conftest.py), then times
POSTs to /_dash-update-component from this process (requests), with the JSON
body Dash expects built from app.callback_map:

(a) a composition change on a 300 x 300 map with the full physics (every call
    a new composition, so the plane is computed; target: median <= 300 ms,
    p95 <= 600 ms);
(a') the same while a slider is held (the coarse preview, at most 100 x 100);
(b) a change of shaded quantity, and of a layer (cached physics; target <= 100 ms);
(c) the figure payload in MB (target <= 1.5 MB);
each also as a ratio to a baseline: the request for the page layout (/_dash-layout).

Run: python tests/benchmarks/bench_app.py [--repeat N] [--gunicorn]
(--gunicorn: the Dockerfile's command, so the first map comes after the preload warm-up)
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import requests                                   # noqa: E402

from tests.conftest import free_port, start_process, stop_process   # noqa: E402


def map_request(app, values: dict, changed: str, held: bool = False) -> dict:
    """The body the browser sends for the map callback, for control values keyed like state.CONTROLS."""
    from thermoplane.app.state import CONTROLS
    key = next(k for k in app.callback_map if "plane-graph.figure" in k)
    spec = app.callback_map[key]
    outputs = []
    for part in key.strip(".").split("..."):
        cid, prop = part.rsplit(".", 1)
        outputs.append({"id": cid, "property": prop})
    by_id = {(cid, prop): name for name, (cid, prop) in CONTROLS.items()}
    extra = {("tracks-store", "data"): None, ("tracks-colour-by", "value"): None,    # no tracks loaded
             ("comp-drag", "data"): {"drag": held, "key": "X"}}                  # a slider held or not
    inputs = [{"id": i["id"], "property": i["property"],
               "value": values[by_id[(i["id"], i["property"])]] if (i["id"], i["property"]) in by_id
               else extra[(i["id"], i["property"])]}
              for i in spec["inputs"]]
    changed = [changed, "comp-drag.data"] if held else [changed]
    return {"output": key, "outputs": outputs, "inputs": inputs, "changedPropIds": changed, "state": []}


def timed(fn, n: int) -> list[float]:
    out = []
    for i in range(n):
        t0 = time.perf_counter()
        fn(i)
        out.append(time.perf_counter() - t0)
    return out


def summary(name: str, times: list[float], base: float, target: str) -> None:
    times = sorted(times)
    med = statistics.median(times)
    p95 = times[min(len(times) - 1, int(round(0.95 * (len(times) - 1))))]
    print(f"{name:<42} median {1e3 * med:8.1f} ms  p95 {1e3 * p95:8.1f} ms  "
          f"= {med / base:7.1f} x baseline   [{target}]")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=10)
    ap.add_argument("--gunicorn", action="store_true",
                    help="serve with the Dockerfile's gunicorn command (preload, two workers) instead")
    args = ap.parse_args()
    from thermoplane.app.main import create_app
    from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
    app = create_app()
    port = free_port()
    url = f"http://127.0.0.1:{port}/"
    (ROOT / ".pytest_cache").mkdir(exist_ok=True)
    if args.gunicorn:
        from tests.app.test_wsgi import dockerfile_command
        cmd = [c.replace("0.0.0.0:8050", f"127.0.0.1:{port}") for c in dockerfile_command()]
    else:
        cmd = [sys.executable, "-m", "thermoplane.app.cli", "serve", "--port", str(port)]
    print("server:", " ".join(cmd))
    proc = start_process(cmd, url, "bench_app.log")
    try:
        s = requests.Session()
        post = lambda body: s.post(url + "_dash-update-component", json=body, timeout=600)
        base_times = timed(lambda i: s.get(url + "_dash-layout", timeout=60), max(args.repeat, 10))
        base = statistics.median(base_times)
        print(f"baseline: GET /_dash-layout median {1e3 * base:.2f} ms")
        controls = view_to_controls(DEFAULT_VIEW)
        print("physics options:", {k: DEFAULT_VIEW[k] for k in ("electrons", "ionization", "coulomb", "pairs")},
              f"resolution {DEFAULT_VIEW['resolution']}")
        t0 = time.perf_counter()
        r = post(map_request(app, controls, "comp-X.value"))
        r.raise_for_status()
        first = time.perf_counter() - t0
        print(f"first map after start (cold caches: plane, boundaries, ignition, mass lines): {first:.2f} s")
        print(f"figure payload: {len(r.content) / 1e6:.3f} MB  [target <= 1.5 MB]")

        def composition(i):
            X = 0.70 - 0.001 * (i + 1)                    # a new composition every time
            post(map_request(app, {**controls, "X": round(X, 6), "Y": round(0.98 - X, 6)}, "comp-X.value"))
        later = timed(composition, args.repeat)
        summary("(a) composition change (new plane + lines)", later, base, "<= 300 ms median, <= 600 ms p95")
        print(f"first map / later map (median): {first / statistics.median(later):.2f}  [target <= 2]")

        def preview(i):
            X = 0.60 - 0.001 * (i + 1)                    # a new composition every time, slider held
            post(map_request(app, {**controls, "X": round(X, 6), "Y": round(0.98 - X, 6)}, "comp-X.value",
                             held=True))
        summary("(a') coarse preview while a slider moves", timed(preview, args.repeat), base,
                "at most 100 x 100 pixels")

        quantities = ["eta", "gamma1", "log_prad_pgas", "regime"]
        summary("(b) shaded quantity change", timed(
            lambda i: post(map_request(app, {**controls, "quantity": quantities[i % 4]}, "map-quantity.value")),
            args.repeat), base, "<= 100 ms")
        layers = [list(DEFAULT_VIEW["layers"]), ["equality"]]
        summary("(b) layer change", timed(
            lambda i: post(map_request(app, {**controls, "layers": layers[i % 2]}, "map-layers.value")),
            args.repeat), base, "<= 100 ms")
    finally:
        stop_process(proc)


if __name__ == "__main__":
    main()
