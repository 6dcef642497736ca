"""`thermoplane batch`: the same crossings in-process, on a LocalCluster and on a separately started
scheduler with its workers (loopback); broken files reported while the rest complete; every process shut down."""

from __future__ import annotations

import csv
import gzip
import io
import json
import os
import socket
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import psutil
import pytest

from thermoplane import physics as ph
from thermoplane.app import batch, cli
from thermoplane.physics.tracks import track_report

ROOT = Path(__file__).resolve().parents[2]
# Textbook ideal gas plus radiation: no electron table to build in each fresh worker process.
CLASSICAL = {"electrons": "classical", "ionization": "full", "coulomb": False, "pairs": False}
CLASSICAL_ARGS = ["--electrons", "classical", "--ionization", "full", "--no-coulomb", "--no-pairs"]
COMP = ph.Composition.from_xyz(0.70, 0.28, 0.02)


def _track(n: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
    """A made-up path from hot thin gas into cold dense matter (illustrative): crosses several boundaries."""
    s = np.linspace(0.0, 1.0, n)
    return -6.0 + 14.0 * s + shift, 5.0 + 3.5 * s - 2.0 * s**2 + 0.3 * np.sin(9 * s) + shift / 4


@pytest.fixture(scope="module")
def grid(tmp_path_factory) -> Path:
    """Six good tracks in several formats, one binary file, one without a density column."""
    d = tmp_path_factory.mktemp("grid")
    for i in range(6):
        lr, lt = _track(300 + 40 * i, 0.2 * i)
        rows = "".join(f"{k},{k * 1e6:.6e},{a:.8f},{b:.8f}\n" for k, (a, b) in enumerate(zip(lr, lt)))
        text = "model,age,log_rho,log_T\n" + rows
        if i == 1:
            (d / f"run{i}.csv.gz").write_bytes(gzip.compress(text.encode()))
        elif i == 2:
            (d / f"run{i}.txt").write_text("# our own code, run 2\n" + text.replace(",", "  "))
        elif i == 3:                                     # linear columns, SI density, a bad row
            lines = [f"{10 ** a * 1000:.8e};{10 ** b:.8e};{k}" for k, (a, b) in enumerate(zip(lr, lt))]
            lines[7] = "oops;1e7;7"
            (d / f"run{i}.csv").write_text("density [kg/m3];temperature;model\n" + "\n".join(lines) + "\n")
        else:
            (d / f"run{i}.csv").write_text(text)
    (d / "broken_binary.csv").write_bytes(b"\x00\x01\x02\x03binary" * 50)
    (d / "broken_columns.csv").write_text("mass,radius\n1,2\n3,4\n")
    return d


def _stable(results):
    """Results without the directory part, for comparing runs made from different working trees."""
    return json.loads(json.dumps([{**r, "path": os.path.basename(r["path"])} for r in results]))


def _workers_left(timeout: float = 20.0) -> list:
    """Child processes still running, except multiprocessing's resource tracker (it lives as long as we do)."""
    def alive():
        out = []
        for k in psutil.Process().children(recursive=True):
            try:
                if k.status() != psutil.STATUS_ZOMBIE and "resource_tracker" not in " ".join(k.cmdline()):
                    out.append(k)
            except psutil.NoSuchProcess:
                pass
        return out
    deadline = time.monotonic() + timeout
    kids = alive()
    while kids and time.monotonic() < deadline:
        time.sleep(0.2)
        kids = alive()
    return kids


@pytest.fixture(scope="module")
def in_process(grid):
    job = batch.Job(comp=COMP, physics=CLASSICAL)
    return batch.run(batch.expand_paths([grid]), job, workers=1)


def test_in_process_results_match_track_report(grid, in_process):
    by_name = {os.path.basename(r["path"]): r for r in in_process}
    assert sorted(by_name) == sorted(p.name for p in grid.iterdir())
    for i in (0, 4, 5):
        lr, lt = _track(300 + 40 * i, 0.2 * i)
        lr = np.array([float(f"{v:.8f}") for v in lr])
        lt = np.array([float(f"{v:.8f}") for v in lt])
        age = np.arange(lr.size) * 1e6
        _, expected = track_report(lr, lt, COMP, age=age, **CLASSICAL)
        got = by_name[f"run{i}.csv"]
        assert got["error"] is None and got["rows"] == lr.size and got["bad_rows"] == []
        assert len(got["crossings"]) == len(expected) >= 3
        for c, (_, e) in zip(got["crossings"], expected.iterrows()):
            assert (c["boundary"], c["row"]) == (e["boundary"], e["row"])
            assert c["log_rho"] == pytest.approx(e["log_rho"], rel=1e-12)
            assert c["parameter"] == pytest.approx(e["age"], rel=1e-12)
            assert c["composition"] == batch.composition_text(COMP)
    assert by_name["run3.csv"]["bad_rows"] == [7]


def test_broken_files_report_their_error_while_the_rest_complete(in_process):
    by_name = {os.path.basename(r["path"]): r for r in in_process}
    assert "binary" in by_name["broken_binary.csv"]["error"]
    assert "density" in by_name["broken_columns.csv"]["error"]
    good = [r for n, r in by_name.items() if n.startswith("run")]
    assert len(good) == 6 and all(r["error"] is None and r["crossings"] for r in good)
    table = batch.summary_table(in_process)
    errors = table[table["error"].notna()]
    assert sorted(os.path.basename(f) for f in errors["file"]) == ["broken_binary.csv", "broken_columns.csv"]
    assert len(table) == 2 + sum(len(r["crossings"]) for r in good)


def test_local_cluster_gives_the_same_results(grid, in_process):
    # as a user runs it: the command, a LocalCluster of 2 worker processes, JSON and nothing on stderr
    r = subprocess.run([sys.executable, "-m", "thermoplane.app.cli", "batch", str(grid), *CLASSICAL_ARGS,
                        "--workers", "2", "--json"], capture_output=True, text=True, timeout=300, cwd=ROOT)
    assert r.returncode == 1 and r.stderr == "", r.stderr
    assert _stable(json.loads(r.stdout)["files"]) == _stable(in_process)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _descendants(proc: subprocess.Popen) -> list:
    try:
        return psutil.Process(proc.pid).children(recursive=True)
    except psutil.NoSuchProcess:
        return []


def test_separate_scheduler_and_worker_processes_give_the_same_results(grid, in_process, tmp_path):
    port = _free_port()
    address = f"tcp://127.0.0.1:{port}"
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    log = open(tmp_path / "dask.log", "w")
    scheduler = subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1",
                                  "--port", str(port), "--no-dashboard", "--no-show"],
                                 stdout=log, stderr=subprocess.STDOUT, env=env)
    worker = None
    procs = [scheduler]
    try:
        worker = subprocess.Popen([sys.executable, "-m", "distributed.cli.dask_worker", address, "--nworkers", "2",
                                   "--nthreads", "1", "--no-dashboard", "--host", "127.0.0.1"],
                                  stdout=log, stderr=subprocess.STDOUT, env=env)
        procs.append(worker)
        from distributed import Client
        deadline = time.monotonic() + 60
        while True:
            try:
                with Client(address, timeout=2) as c:
                    c.wait_for_workers(2, timeout=60)
                break
            except OSError:
                if time.monotonic() > deadline or scheduler.poll() is not None:
                    raise
                time.sleep(0.3)
        spawned = _descendants(worker) + _descendants(scheduler)
        out = tmp_path / "summary.csv"
        r = subprocess.run([sys.executable, "-m", "thermoplane.app.cli", "batch", str(grid), *CLASSICAL_ARGS,
                            "--scheduler", address, "--json", "-o", str(out)],
                           capture_output=True, text=True, timeout=300, cwd=ROOT)
        assert r.returncode == 1, r.stderr            # two files failed: exit status 1
        assert r.stderr == ""                         # --json is quiet
        remote = json.loads(r.stdout)["files"]
        assert _stable(remote) == _stable(in_process)
        assert out.read_text() == batch.summary_csv(in_process)
    finally:
        for p in reversed(procs):                     # workers first, then the scheduler
            p.terminate()
            try:
                p.wait(timeout=30)
            except subprocess.TimeoutExpired:
                p.kill()
                p.wait()
        log.close()
    assert worker.returncode is not None and scheduler.returncode is not None
    gone, alive = psutil.wait_procs(spawned, timeout=20)
    assert alive == [], f"worker processes left running: {alive}"


def test_summary_csv_columns_and_neutralised_text(in_process):
    rows = list(csv.DictReader(io.StringIO(batch.summary_csv(in_process))))
    assert list(rows[0]) == list(batch.SUMMARY_COLUMNS)
    crossing = next(r for r in rows if r["boundary"])
    assert crossing["error"] == "" and float(crossing["log_T"]) > 0 and crossing["composition"].startswith("H-1=")
    # a file name that a spreadsheet would run as a formula is quoted
    fake = [{"path": "=cmd|' /C calc'!A0", "rows": 0, "bad_rows": [], "crossings": [], "error": "boom"}]
    assert batch.summary_csv(fake).splitlines()[1].startswith("'=cmd")


def test_per_row_composition_is_reported(tmp_path):
    lr, lt = _track(200, 0.0)
    X = np.linspace(0.7, 0.1, lr.size)
    (tmp_path / "xy.csv").write_text("log_rho,log_T,X,Y\n" + "".join(
        f"{a:.8f},{b:.8f},{x:.6f},{0.98 - x:.6f}\n" for a, b, x in zip(lr, lt, X)))
    [r] = batch.run([str(tmp_path / "xy.csv")], batch.Job(comp=COMP, physics=CLASSICAL), workers=1)
    assert r["crossings"]
    for c in r["crossings"]:
        x = float(c["composition"].split(",")[0].removeprefix("X="))
        assert x == pytest.approx(X[c["row"]], abs=1e-6) and f"(row {c['row']})" in c["composition"]


# ----------------------------------------------------------------------------
# the command line: output and every error a user can cause
# ----------------------------------------------------------------------------
def test_cli_text_output_and_exit_status(grid, capsys, tmp_path):
    out = tmp_path / "s.csv"
    code = cli.main(["batch", str(grid / "run0.csv"), str(grid / "run*.txt"), *CLASSICAL_ARGS, "--workers", "1",
                     "-o", str(out)])
    text = capsys.readouterr().out
    assert code == 0
    assert "run0.csv: 300 rows, 0 bad" in text and "run2.txt: 380 rows" in text
    assert "2 file(s), 0 failed" in text and out.exists()


def _one_line_error(capsys, argv, fragment, code=2):
    assert cli.main(argv) == code
    err = capsys.readouterr().err.strip()
    assert fragment in err, err
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    return err


@pytest.mark.parametrize("argv, fragment", [
    (["batch", "/nonexistent/run.csv"], "no such file or directory"),
    (["batch", "/nonexistent/dir/*.csv"], "no file matches"),
    (["batch", "GRID/*.nothing"], "no file matches"),
    (["batch", "GRID/run0.csv", "--workers", "0"], "must be at least 1"),
    (["batch", "GRID/run0.csv", "--workers", "two"], "not a whole number"),
    (["batch", "GRID/run0.csv", "--workers", "2", "--scheduler", "tcp://127.0.0.1:1"], "not allowed with"),
    (["batch", "GRID/run0.csv", "--electrons", "quantum"], "invalid choice"),
    (["batch", "GRID/run0.csv", "--X", "0.9", "--Y", "0.3"], "between 0 and 1"),
    (["batch"], "required"),
])
def test_cli_user_errors_one_line_exit_2(grid, capsys, argv, fragment):
    argv = [a.replace("GRID", str(grid)) for a in argv]
    try:
        _one_line_error(capsys, argv, fragment)
    except SystemExit as exc:                    # argparse errors exit from inside main
        assert exc.code == 2
        err = capsys.readouterr().err.strip()
        assert fragment in err and len(err.splitlines()) == 1


@pytest.mark.parametrize("address", ["tcp://127.0.0.1:{port}", "not-an-address:::", " "])
def test_cli_bad_scheduler_address_one_line_exit_2(grid, capsys, monkeypatch, address):
    from thermoplane.app import cluster
    monkeypatch.setattr(cluster, "CONNECT_TIMEOUT", 1.0)
    address = address.format(port=_free_port())       # nothing listens there
    err = _one_line_error(capsys, ["batch", str(grid / "run0.csv"), "--scheduler", address], "scheduler")
    assert "Dask scheduler" in err or "needs an address" in err


def test_cli_empty_directory(tmp_path, capsys):
    (tmp_path / "empty").mkdir()
    _one_line_error(capsys, ["batch", str(tmp_path / "empty")], "holds no files")


@pytest.mark.parametrize("workers", [1, 2])
def test_local_clusters_listen_on_loopback_only(workers):
    from thermoplane.app import cluster
    with cluster.client(workers) as c:
        c.wait_for_workers(workers)
        procs = [psutil.Process()] + psutil.Process().children(recursive=True)
        listening = [conn.laddr.ip for p in procs for conn in p.net_connections(kind="inet")
                     if conn.status == psutil.CONN_LISTEN]
    assert listening and all(ip in ("127.0.0.1", "::1") for ip in listening), listening
    assert _workers_left() == []
