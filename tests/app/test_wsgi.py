"""The Dockerfile's command, `gunicorn thermoplane.app.wsgi:server`, serves the page."""

from __future__ import annotations

import re
import urllib.request
from pathlib import Path

import pytest

from tests.conftest import ROOT, free_port, start_process, stop_process


def dockerfile_command() -> list[str]:
    text = (ROOT / "Dockerfile").read_text()
    m = re.search(r'^CMD\s+\[(.*)\]\s*$', text, re.M)
    assert m, "Dockerfile has no exec-form CMD"
    return [part.strip().strip('"') for part in m.group(1).split(",")]


def test_dockerfile_runs_gunicorn_as_non_root():
    text = (ROOT / "Dockerfile").read_text()
    assert re.search(r"^USER\s+(?!root)\S+", text, re.M)
    cmd = dockerfile_command()
    assert cmd[0] == "gunicorn" and "thermoplane.app.wsgi:server" in cmd
    assert "--preload" in cmd               # the app (and its warm-up) loads once, before the workers fork
    assert "0.0.0.0:8050" in " ".join(cmd)


def test_gunicorn_serves_the_page():
    cmd = dockerfile_command()
    port = free_port()
    # Same command as the image, bound to loopback on a free port for the test.
    cmd = [c.replace("0.0.0.0:8050", f"127.0.0.1:{port}") for c in cmd]
    url = f"http://127.0.0.1:{port}/"
    (Path(ROOT) / ".pytest_cache").mkdir(exist_ok=True)
    proc = start_process(cmd, url, "gunicorn.log")
    try:
        with urllib.request.urlopen(url, timeout=10) as r:
            body = r.read().decode()
        assert "Thermoplane" in body
        with urllib.request.urlopen(url + "_dash-layout", timeout=10) as r:
            assert b"plane-graph" in r.read()
    finally:
        stop_process(proc)


def test_warm_up_draws_a_tiny_default_map(caplog):
    from thermoplane.app.main import WARM_UP_RESOLUTION, warm_up
    from thermoplane.app.state import UI_RESOLUTION
    assert UI_RESOLUTION[0] <= WARM_UP_RESOLUTION          # a resolution the map callback accepts
    with caplog.at_level("WARNING"):
        seconds = warm_up()
    assert seconds > 0 and "warm-up map failed" not in caplog.text


def _dockerfile_lines() -> list[str]:
    return [line.strip() for line in (ROOT / "Dockerfile").read_text().splitlines()
            if line.strip() and not line.strip().startswith("#")]


#: Python run in a second process after the image's warm-up: the warm-up again, then numba's own counters
#: of every compiled kernel loaded: cache hits and misses (a miss is a compile).
_CACHE_COUNTS = """
import gc, json
from numba.core.registry import CPUDispatcher
from thermoplane.app.main import warm_up
warm_up()
hits = misses = kernels = 0
for obj in gc.get_objects():
    if isinstance(obj, CPUDispatcher) and (obj.__module__ or "").startswith("thermoplane"):
        kernels += 1
        hits += sum(obj.stats.cache_hits.values())
        misses += sum(obj.stats.cache_misses.values())
print(json.dumps({"kernels": kernels, "hits": hits, "misses": misses}))
"""


@pytest.mark.slow
def test_image_builds_the_compile_cache_for_its_user(tmp_path):
    """The Dockerfile points numba's cache at a directory of the server's user and fills it at build time,
    as that user; run here with the same command and a fresh cache directory, a second process loads every
    kernel from it (no Docker engine on the development machines)."""
    import json
    import os
    import shlex
    import subprocess
    import sys
    import time
    lines = _dockerfile_lines()
    env = dict(re.findall(r"(\w+)=(\S+)", " ".join(line[4:] for line in lines if line.startswith("ENV "))))
    user = next(line.split()[1] for line in lines if line.startswith("USER "))
    home = f"/home/{user}"
    assert "--create-home" in " ".join(lines) and env["NUMBA_CACHE_DIR"].startswith(home + "/")
    after_user = lines[next(i for i, line in enumerate(lines) if line.startswith("USER ")):]
    (warm,) = [line[4:] for line in after_user if line.startswith("RUN ") and "warm_up" in line]
    cmd = shlex.split(warm)
    assert cmd[0] == "python"
    run_env = {**os.environ, "NUMBA_CACHE_DIR": str(tmp_path / "cache")}
    t0 = time.perf_counter()
    first = subprocess.run([sys.executable, *cmd[1:]], env=run_env, capture_output=True, text=True, timeout=1200)
    t_first = time.perf_counter() - t0
    assert first.returncode == 0, first.stderr[-2000:]
    assert "kernels compiled in" in first.stdout
    index = sorted((tmp_path / "cache").rglob("*.nbi"))
    assert index, "the warm-up wrote no numba cache index"
    stamps = {p: p.stat().st_mtime_ns for p in (tmp_path / "cache").rglob("*") if p.is_file()}
    t0 = time.perf_counter()
    second = subprocess.run([sys.executable, "-c", _CACHE_COUNTS], env=run_env, capture_output=True, text=True,
                            timeout=1200)
    t_second = time.perf_counter() - t0
    assert second.returncode == 0, second.stderr[-2000:]
    counts = json.loads(second.stdout.strip().splitlines()[-1])
    print(f"\nwarm-up with an empty cache {t_first:.1f} s, from the cache {t_second:.1f} s "
          f"(ratio {t_first / t_second:.1f}); {len(index)} kernel index files; second process {counts}")
    assert counts["hits"] > 0 and counts["misses"] == 0          # every kernel came from the cache
    assert {p: p.stat().st_mtime_ns for p in stamps} == stamps   # and nothing was written again
