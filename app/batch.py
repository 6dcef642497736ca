"""Many track files at once: one Dask task per file, one summary of every crossing.

The question this module answers: a modeller has a grid of hundreds of runs;
which regime boundaries does each one cross, where and when, and which files
could not be read and why? ``thermoplane batch`` is this module behind the
command line; :mod:`app.cluster` says where the tasks run.

Each file is read (:func:`app.localfiles.read_local`, any size), mapped
(detected columns, overridden by the same options as ``thermoplane track``),
evaluated and searched for crossings (:func:`thermoplane.physics.tracks.track_report`)
inside one task, :func:`process_file`, which never raises: a file that fails
comes back with its message, and every other file completes.
"""

from __future__ import annotations

import glob
import math
import os
import uuid
from dataclasses import dataclass, field

import pandas as pd

from ..physics.composition import Composition
from ..physics.eos import validate_options
from ..physics.tracks import track_report
from . import cluster, localfiles
from .tracks import safe_csv
from .upload import ColumnMapping, apply_mapping, detect_columns

__all__ = ["Columns", "Job", "SUMMARY_COLUMNS", "expand_paths", "process_file", "run", "summary_table",
           "composition_text", "summary_csv", "json_ready"]

#: Columns of the summary CSV, one row per crossing (and one per failed file).
SUMMARY_COLUMNS = ("file", "boundary", "row", "log_rho", "log_T", "parameter", "composition", "error")
_GLOB_CHARS = set("*?[")


@dataclass(frozen=True)
class Columns:
    """The column choices of ``thermoplane track``; None keeps what was detected."""

    rho_col: str | None = None
    T_col: str | None = None
    scale: str | None = None          # "log" or "linear" for both columns
    units: str | None = None          # "cgs" or "si"
    age_col: str | None = None        # "" for the row number
    X_col: str | None = None          # mass-fraction columns per row ("" for none)
    Y_col: str | None = None
    Z_col: str | None = None

    def apply(self, mapping: ColumnMapping) -> ColumnMapping:
        if self.rho_col is not None:
            mapping.rho_col = self.rho_col
        if self.T_col is not None:
            mapping.T_col = self.T_col
        if self.scale is not None:
            mapping.rho_log = mapping.T_log = self.scale == "log"
        if self.units is not None:
            mapping.units = self.units
        if self.age_col is not None:
            mapping.age_col = self.age_col or None
        for role in ("X", "Y", "Z"):
            value = getattr(self, f"{role}_col")
            if value is not None:
                setattr(mapping, f"{role}_col", value or None)
                mapping.nuclide_cols = {}             # X/Y/Z columns chosen: they give the composition
        return mapping

    @classmethod
    def from_args(cls, args) -> "Columns":
        """The choices of the command line's column options (see cli._add_columns)."""
        return cls(args.rho_col, args.T_col, args.scale, args.units, args.age_col, args.X_col, args.Y_col,
                   args.Z_col)


@dataclass(frozen=True)
class Job:
    """Everything a task needs besides the file's path (sent to the workers once per task)."""

    comp: Composition
    physics: dict = field(default_factory=dict)
    columns: Columns = Columns()
    max_bytes: int | None = None


def expand_paths(patterns) -> list[str]:
    """Files named by paths, directories and glob patterns, in a stable order, without repeats.

    A directory gives its regular files (not hidden ones, not recursively);
    a pattern with ``*``, ``?`` or ``[`` gives its matches (``**`` recurses),
    directories among them expanded the same way. Paths are made absolute so
    that workers on other machines see the same names on a shared filesystem.

    Raises
    ------
    ValueError
        A path that does not exist, a pattern that matches nothing, or a
        directory with no files (one line naming it).
    """
    out: list[str] = []

    def from_dir(d: str) -> list[str]:
        names = sorted(n for n in os.listdir(d) if not n.startswith("."))
        return [os.path.join(d, n) for n in names if os.path.isfile(os.path.join(d, n))]

    for pattern in patterns:
        text = os.path.expanduser(str(pattern))
        if any(c in _GLOB_CHARS for c in text) and not os.path.exists(text):
            matches = sorted(glob.glob(text, recursive=True))
            if not matches:
                raise ValueError(f"no file matches {pattern!r}")
            found = []
            for m in matches:
                found.extend(from_dir(m) if os.path.isdir(m) else [m])
        elif os.path.isdir(text):
            found = from_dir(text)
            if not found:
                raise ValueError(f"the directory {pattern!r} holds no files")
        elif os.path.exists(text):
            found = [text]
        else:
            raise ValueError(f"no such file or directory: {pattern!r}")
        out.extend(os.path.abspath(f) for f in found)
    return list(dict.fromkeys(out))


def composition_text(comp: Composition) -> str:
    """A composition as --mix text (nuclide=mass fraction, comma separated)."""
    return ",".join(f"{name}={x:.6g}" for name, x in comp.to_dict().items())


def _number(x) -> float | None:
    return float(x) if x is not None and math.isfinite(x) else None


def process_file(path: str, job: Job) -> dict:
    """Read, evaluate and report one file; never raises.

    Returns
    -------
    dict
        ``path``, ``rows``, ``bad_rows`` (row indices, as ``track --json``),
        ``crossings`` (each ``boundary``, ``row``, ``log_rho``, ``log_T``,
        ``parameter`` (the age or model column at the crossing, None without
        one), ``composition`` (as --mix text; with X/Y columns the X, Y, Z of
        that row)), ``error`` (None, or the message when the file failed).
    """
    out = {"path": path, "rows": 0, "bad_rows": [], "crossings": [], "error": None}
    try:
        df = localfiles.read_local(path, max_bytes=job.max_bytes)
        mapping = job.columns.apply(detect_columns(df))
        if mapping.rho_col is None or mapping.T_col is None:
            notes = "; ".join(mapping.ambiguous) or "no density or temperature column found"
            raise ValueError(f"{notes}; give --rho-col and --T-col (columns: {', '.join(map(str, df.columns))})")
        data = apply_mapping(df, mapping)
        _, crossings = track_report(data.log_rho, data.log_T, job.comp, age=data.age, valid=data.valid,
                                    X=data.X, Y=data.Y, **job.physics)
        out["rows"] = len(df)
        out["bad_rows"] = [int(i) for i in data.bad_rows]
        fixed = composition_text(job.comp)
        per_row = data.X is not None or data.Y is not None
        for rec in crossings.to_dict("records"):
            row = int(rec["row"])
            if per_row:
                Z = job.comp.metals
                X = data.X[row] if data.X is not None else 1.0 - data.Y[row] - Z
                Y = data.Y[row] if data.Y is not None else 1.0 - data.X[row] - Z
                comp_used = f"X={X:.6g},Y={Y:.6g},Z={1.0 - X - Y:.6g} (row {row})"
            else:
                comp_used = fixed
            out["crossings"].append({"boundary": rec["boundary"], "row": row, "log_rho": float(rec["log_rho"]),
                                     "log_T": float(rec["log_T"]), "parameter": _number(rec["age"]),
                                     "composition": comp_used})
    except MemoryError:
        out["error"] = "not enough memory to read this file"
    except Exception as exc:   # noqa: BLE001 - a task reports its file's failure, whatever it is
        message = " ".join(str(exc).split()) or type(exc).__name__
        if not isinstance(exc, (ValueError, OSError)):
            message = f"{type(exc).__name__}: {message}"
        out.update(rows=0, bad_rows=[], crossings=[], error=message)
    return out


def run(paths, job: Job, workers: int | None = None, scheduler: str | None = None,
        progress: bool = False) -> list[dict]:
    """Every file as its own Dask task; results in the order of ``paths``.

    Parameters
    ----------
    paths : list of str
        Files (see :func:`expand_paths`).
    job : Job
    workers, scheduler
        Where to run (see :func:`app.cluster.client`).
    progress : bool
        Draw a progress bar on stderr as files finish.

    Raises
    ------
    ValueError
        A bad physics option, or an unreachable scheduler (before any file is read).
    """
    from distributed import as_completed

    validate_options(**job.physics)
    paths = list(paths)
    results: list[dict | None] = [None] * len(paths)
    with cluster.client(workers, scheduler) as c:
        [job_future] = c.scatter([job], broadcast=True)
        run_id = uuid.uuid4().hex[:12]      # keys unique on a scheduler that other runs share
        futures = [c.submit(process_file, p, job_future, key=f"thermoplane-file-{run_id}-{i}", pure=False,
                            retries=0) for i, p in enumerate(paths)]
        index = {f.key: i for i, f in enumerate(futures)}
        if progress:
            cluster.progress_line(0, len(paths), "files")
        for done, fut in enumerate(as_completed(futures), start=1):
            i = index[fut.key]
            try:
                results[i] = fut.result()
            except Exception as exc:   # noqa: BLE001 - a lost worker or an unpicklable result
                results[i] = {"path": paths[i], "rows": 0, "bad_rows": [], "crossings": [],
                              "error": f"the task failed: {type(exc).__name__}: {' '.join(str(exc).split())}"}
            fut.release()
            if progress:
                cluster.progress_line(done, len(paths), "files")
    return results


def summary_table(results: list[dict]) -> pd.DataFrame:
    """One row per crossing, and one row (with ``error``) per file that failed; :data:`SUMMARY_COLUMNS`."""
    rows = []
    for r in results:
        if r["error"] is not None:
            rows.append({"file": r["path"], "error": r["error"]})
        for c in r["crossings"]:
            rows.append({"file": r["path"], **{k: c[k] for k in SUMMARY_COLUMNS[1:7]}})
    table = pd.DataFrame(rows, columns=list(SUMMARY_COLUMNS))
    table["row"] = table["row"].astype("Int64")
    for col in ("log_rho", "log_T", "parameter"):
        table[col] = pd.to_numeric(table[col]).astype(float)
    return table


def summary_csv(results: list[dict]) -> str:
    """The summary as CSV text (text cells neutralised against spreadsheet formulas)."""
    return safe_csv(summary_table(results))


def json_ready(results: list[dict]) -> dict:
    """``{"files": [...]}`` as ``batch --json`` prints it (NaN never appears: missing is null)."""
    return {"files": [{k: r[k] for k in ("path", "rows", "bad_rows", "crossings", "error")} for r in results]}

