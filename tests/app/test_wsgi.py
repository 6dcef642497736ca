"""The Dockerfile's command, `gunicorn thermoplane.app.wsgi:server`, serves the page."""

from __future__ import annotations

import re
import urllib.request
from pathlib import Path

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
