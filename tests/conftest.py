"""Shared fixtures: a real server process and a headless Chromium driven by Playwright."""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def wait_for_http(url: str, proc: subprocess.Popen, timeout: float = 60.0) -> None:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise RuntimeError(f"server exited early with status {proc.returncode}")
        try:
            with urllib.request.urlopen(url, timeout=2) as r:
                if r.status == 200:
                    return
        except OSError:
            time.sleep(0.3)
    raise RuntimeError(f"server did not answer at {url} within {timeout} s")


def start_process(cmd: list[str], url: str, log_name: str):
    log = open(ROOT / ".pytest_cache" / log_name, "w") if (ROOT / ".pytest_cache").is_dir() else subprocess.DEVNULL
    proc = subprocess.Popen(cmd, cwd=ROOT, stdout=log, stderr=subprocess.STDOUT,
                            env={**os.environ, "PYTHONUNBUFFERED": "1"})
    try:
        wait_for_http(url, proc)
    except Exception:
        proc.kill()
        raise
    return proc


def stop_process(proc: subprocess.Popen) -> None:
    proc.terminate()
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()


@pytest.fixture(scope="session")
def server_url():
    """`thermoplane serve` on a free loopback port, as a user starts it."""
    (ROOT / ".pytest_cache").mkdir(exist_ok=True)
    port = free_port()
    url = f"http://127.0.0.1:{port}/"
    proc = start_process([sys.executable, "-m", "thermoplane.app.cli", "serve", "--port", str(port)], url, "serve.log")
    yield url
    stop_process(proc)


@pytest.fixture(scope="session")
def browser():
    """Headless Chromium from the distribution. Skips (with the reason) only outside CI."""
    if not (os.path.exists(CHROMIUM) or shutil.which("chromium")):
        if os.environ.get("CI"):
            pytest.fail(f"CI is set but no Chromium at {CHROMIUM}: .ci/run should have installed it")
        pytest.skip(f"no Chromium at {CHROMIUM}; install Debian's chromium package to run browser tests")
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM if os.path.exists(CHROMIUM) else shutil.which("chromium"),
                              args=CHROMIUM_ARGS)
        yield b
        b.close()


@pytest.fixture
def page(browser):
    context = browser.new_context(viewport={"width": 1400, "height": 900}, accept_downloads=True)
    pg = context.new_page()
    pg.console_errors = []
    pg.on("console", lambda m: pg.console_errors.append(m.text) if m.type == "error" else None)
    pg.on("pageerror", lambda e: pg.console_errors.append(str(e)))
    yield pg
    context.close()


SCREENSHOTS = ROOT / "tests" / "e2e" / "screenshots"


def screenshot(pg, name: str) -> Path:
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    path = SCREENSHOTS / f"{name}.png"
    pg.screenshot(path=str(path))
    return path
