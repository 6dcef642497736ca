"""Stellar tracks for the app and the command line: a mapped table in, the
enriched table, its crossings and the browser's compact copy out.

The question this module answers: given a user's table and how its columns
map to density and temperature, what is the state and the pressure regime of
every row, where does the track cross each regime boundary, and what small
part of it goes to the browser to be drawn and kept across reloads?

Shared by :mod:`thermoplane.app.cli` (``thermoplane track``) and
:mod:`app.callbacks.tracks`; no Dash import here, so everything is testable
as plain functions.

Limits (kept in the browser's local storage, which holds a few MB per site):

- :data:`MAX_STORED_ROWS` (20 000) rows per track: longer tracks are thinned
  with :func:`thermoplane.physics.tracks.downsample` to evenly spaced rows plus both
  rows of every crossing and the two ends. The full report (every row) is
  computed once at upload; its crossings are shown as long as the mapping,
  composition and physics options are those of the upload. After a change the
  crossings are found again on the rows kept (the ``thinned`` flag says so).
- :data:`MAX_STORED_CELLS` (120 000) numbers per track: the mapped columns
  are always kept; other numeric columns only while the total stays below it.
- Text cells are cut to :data:`MAX_TEXT` characters.
"""

from __future__ import annotations

import base64
import hashlib
import io
import json
from collections import OrderedDict
from dataclasses import asdict

import numpy as np
import pandas as pd

from ..physics import frontiers, regimes, structure
from ..physics.composition import Composition
from ..physics.tracks import TrackState, downsample, track_report

from .upload import ColumnMapping, TrackData, apply_mapping, detect_columns, read_table

__all__ = ["COMPUTED_COLUMNS", "ILLUSTRATIVE", "TRACK_COLOURS", "MAX_STORED_ROWS", "MAX_STORED_CELLS",
           "MAX_TEXT", "DRAW_POINTS", "enrich", "demo_tracks", "safe_cell", "safe_csv", "mapping_to_dict",
           "mapping_from_dict", "to_store", "from_store", "evaluate_stored", "cache_clear",
           "crossing_records", "read_upload"]

#: Columns added to the user's table, in this order.
COMPUTED_COLUMNS = ("P", "P_gas", "P_rad", "beta", "eta", "gamma1", "nabla_ad", "regime")
#: How the demo tracks are labelled wherever they are shown.
ILLUSTRATIVE = "illustrative, computed by Thermoplane"
#: Track colours: bright, saturated colours that no line of the map uses (the lines are dark:
#: app.figures.LINE_STYLES), so a track is never mistaken for a boundary; each is drawn over a
#: white halo. Our own choice, checked against the line colours in tests/app/test_figures.py.
TRACK_COLOURS = ("#E6007E", "#00A6D6", "#FF3B3B", "#7CC000", "#A05CFF", "#F5C400", "#00B3A1", "#FF6FAE",
                 "#00D084", "#6E7BFF", "#C000C0", "#FFB000")
#: Rows per track kept in the browser (see the module notes).
MAX_STORED_ROWS = 20_000
#: Numbers per track kept in the browser.
MAX_STORED_CELLS = 120_000
#: Longest text cell kept in the browser.
MAX_TEXT = 60
#: Points drawn per track (physics.tracks.downsample keeps every crossing on top).
DRAW_POINTS = 20_000

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


# ----------------------------------------------------------------------------
# enriching a table
# ----------------------------------------------------------------------------
def _regime(state_columns: pd.DataFrame, valid: np.ndarray) -> np.ndarray:
    state = TrackState({k: state_columns[k].to_numpy() for k in state_columns.columns})
    with np.errstate(invalid="ignore"):
        reg = regimes.classify(state).astype(object)
    reg[~valid] = ""
    return reg


def _computed_name(name: str, taken) -> str:
    """A computed column's name; ``P_computed`` when the user's table already has ``P``."""
    return name if name not in taken else f"{name}_computed"


def crossing_label(key: str) -> str:
    """Words for a crossing key: a regime line's label, or "ε_pp = 10³ erg g⁻¹ s⁻¹" for an ignition contour."""
    if key.startswith("ignition_"):
        process, _, level = key[len("ignition_"):].rpartition("_")
        try:
            from .figures import ignition_label
            return ignition_label(process, float(level)) + " erg g⁻¹ s⁻¹"
        except ValueError:
            return key
    return regimes.BOUNDARY_LABELS.get(key, key.replace("_", " "))


def short_label(key: str) -> str:
    """A few characters to write beside a crossing marker on the map: the symbol part of its label."""
    label = crossing_label(key)
    if key.startswith("ignition_"):
        return label.replace(" erg g⁻¹ s⁻¹", "")
    inner = label[label.find("(") + 1:label.rfind(")")] if "(" in label and label.endswith(")") else ""
    return inner or label


def track_composition(comp: Composition, data: TrackData) -> Composition:
    """The composition handed to the track's evaluation: the panel's, or (with nuclide columns)
    a carrier of the track's own metal mixture."""
    if data.metals:
        return Composition.from_xyz(0.0, 0.0, 1.0, metals=data.metals)
    return comp


def enrich(df: pd.DataFrame, mapping: ColumnMapping, comp: Composition, ignition=(), **physics_options):
    """The user's table with the state and regime of every row, and its crossings.

    Parameters
    ----------
    df : pandas.DataFrame
        From :func:`app.upload.read_table`.
    mapping : ColumnMapping
        Which columns are density, temperature, age, label, X, Y.
    comp : Composition
        Composition of every row (or the metal mixture when X/Y are mapped).
    ignition : iterable of (process, level)
        Ignition contours whose crossings are reported too (erg g^-1 s^-1).
    **physics_options
        Passed to :func:`thermoplane.physics.evaluate`.

    Returns
    -------
    enriched : pandas.DataFrame
        Every input column, then :data:`COMPUTED_COLUMNS` (named ``P_computed``
        etc. when the input already has that name). Bad rows keep their input
        cells and have NaN (regime ``""``) in the computed ones.
    crossings : pandas.DataFrame
        :func:`thermoplane.physics.tracks.find_crossings` columns plus ``label`` (the
        words of :data:`thermoplane.physics.regimes.BOUNDARY_LABELS`).
    data : TrackData
        The validated track (log rho, log T, age, bad rows and reasons).

    Raises
    ------
    TableError
        A mapping that does not fit the table, or no usable row.
    ValueError
        A bad physics option.
    """
    data = apply_mapping(df, mapping)
    state_columns, crossings = track_report(data.log_rho, data.log_T, track_composition(comp, data), age=data.age,
                                            valid=data.valid, X=data.X, Y=data.Y, ignition=ignition,
                                            frontiers=True, **physics_options)
    valid = np.isfinite(state_columns["P"].to_numpy())
    enriched = df.copy()
    enriched.attrs = {}
    for name in COMPUTED_COLUMNS:
        col = _computed_name(name, df.columns)
        enriched[col] = _regime(state_columns, valid) if name == "regime" else state_columns[name].to_numpy()
    crossings = crossings.copy()
    names = frontiers.labels(comp)
    crossings["label"] = [names.get(k) or crossing_label(k) for k in crossings["boundary"]]
    return enriched, crossings, data


def _finite(v):
    return None if v is None or not np.isfinite(v) else round(float(v), 6)


def composition_text(rec: dict) -> str:
    """"X = 0.70, Y = 0.28, Z = 0.02 (track row)" for a crossing record."""
    if rec.get("X") is None:
        return "—"
    where = "this track's own" if rec.get("composition") == "track" else "the panel's"
    return f"X = {rec['X']:.3f}, Y = {rec['Y']:.3f}, Z = {rec['Z']:.3f} ({where})"


def crossing_records(crossings: pd.DataFrame, rows=None) -> list[dict]:
    """Crossings as JSON-ready dicts; ``rows`` maps kept-row positions back to table rows."""
    out = []
    for rec in crossings.to_dict("records"):
        row, after = int(rec["row"]), int(rec["row_after"])
        if rows is not None:
            row, after = int(rows[row]), int(rows[after])
        age = rec.get("age")
        out.append({"boundary": rec["boundary"], "label": rec.get("label", rec["boundary"]),
                    "row": row, "row_after": after, "log_rho": float(rec["log_rho"]),
                    "log_T": float(rec["log_T"]),
                    "age": None if age is None or not np.isfinite(age) else float(age),
                    "direction": int(rec["direction"]),
                    "X": _finite(rec.get("X")), "Y": _finite(rec.get("Y")), "Z": _finite(rec.get("Z")),
                    "composition": rec.get("composition", "panel")})
    return out


# ----------------------------------------------------------------------------
# exporting
# ----------------------------------------------------------------------------
def safe_cell(cell):
    """A text cell a spreadsheet will not run as a formula (prefixed with '); numbers untouched.

    Text starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return is
    prefixed with a single quote (common practice against CSV formula
    injection, no source).
    """
    if isinstance(cell, str) and cell.startswith(_FORMULA_START):
        return "'" + cell
    return cell


def safe_csv(df: pd.DataFrame, comment: str = "") -> str:
    """The table as CSV text with every text cell and header neutralised by :func:`safe_cell`.

    Numbers are written so that they read back exactly (shortest round-trip
    form; whole-number float columns as integers); NaN is an empty cell. ``comment`` lines, when given, come first, each after ``# ``.
    """
    out = df.copy()
    out.columns = [safe_cell(str(c)) for c in out.columns]
    for col in out.columns:
        values = out[col]
        if not pd.api.types.is_numeric_dtype(values):
            out[col] = values.map(lambda v: safe_cell(v) if isinstance(v, str) else v)
        elif pd.api.types.is_float_dtype(values):
            v = values.to_numpy()
            fin = np.isfinite(v)
            if fin.any() and np.all(v[fin] == np.round(v[fin])) and np.all(np.abs(v[fin]) < 2**53) \
                    and np.all(np.isnan(v[~fin])):
                out[col] = values.astype("Int64")
    buf = io.StringIO()
    for line in comment.splitlines():
        buf.write(f"# {line}\n")
    out.to_csv(buf, index=False, na_rep="", lineterminator="\n")
    return buf.getvalue()


# ----------------------------------------------------------------------------
# demo tracks
# ----------------------------------------------------------------------------
#: Masses (M_sun) of the demo central lines.
DEMO_MASSES = (0.3, 1.0, 3.0, 15.0)
# Central density of an n = 3 polytrope of the Sun's mass and radius:
# rho_c = 54.18 mean density (Eddington's standard model; Chandrasekhar 1939,
# ch. IV, table 4), with the mean solar density 1.41 g cm^-3.
_SUN_RHO_C = 54.18 * 1.41


def demo_tracks(comp: Composition, n_points: int = 160, **physics_options) -> list[dict]:
    """Model stars computed here, labelled as illustrative.

    Parameters
    ----------
    comp : Composition
    n_points : int
        Rows per central line (log rho_c evenly spaced in [-1, 8]).
    **physics_options
        Passed to :func:`thermoplane.physics.structure.central_line` and
        :func:`thermoplane.physics.structure.polytrope_profile`.

    Returns
    -------
    list of dict
        Each with ``name``, ``label`` (:data:`ILLUSTRATIVE`), ``table``
        (pandas.DataFrame with linear ``rho`` in g cm^-3 and ``T`` in K) and
        ``mapping`` (ColumnMapping). Central lines for :data:`DEMO_MASSES`
        (rows where no temperature fits are dropped; parameter: log rho_c),
        then the n = 3 polytrope profile of 1 M_sun (parameter: r/R).

    Notes
    -----
    A central line is T_c(rho_c) of an n = 3 polytrope of fixed mass
    (:func:`thermoplane.physics.structure.central_line`), a quasi-static contraction
    sequence, not an evolved star. The profile is
    :func:`thermoplane.physics.structure.polytrope_profile` with rho_c = 54.18 x 1.41 g cm^-3.
    """
    log_rho_c = np.linspace(-1.0, 8.0, int(n_points))
    T = structure.central_line(np.asarray(DEMO_MASSES)[:, None], comp, 10.0 ** log_rho_c[None, :],
                               **physics_options)
    out = []
    for i, m in enumerate(DEMO_MASSES):
        ok = np.isfinite(T[i]) & (T[i] > 0)
        table = pd.DataFrame({"log_rho_c": log_rho_c[ok], "rho": 10.0 ** log_rho_c[ok], "T": T[i][ok]})
        out.append({"name": f"{m:g} M☉ central line (n = 3 polytrope)", "label": ILLUSTRATIVE, "table": table,
                    "mapping": ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False,
                                             age_col="log_rho_c")})
    prof = structure.polytrope_profile(1.0, comp, _SUN_RHO_C, n=3, n_points=120, **physics_options)
    prof = prof[np.isfinite(prof["T"]) & (prof["T"] > 0)].reset_index(drop=True)
    out.append({"name": "1 M☉ profile, centre to surface (n = 3 polytrope)", "label": ILLUSTRATIVE,
                "table": prof[["r_frac", "m_frac", "rho", "T"]].copy(),
                "mapping": ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False, age_col="r_frac")})
    return out


# ----------------------------------------------------------------------------
# the browser's copy
# ----------------------------------------------------------------------------
_MAPPING_FIELDS = ("rho_col", "T_col", "rho_log", "T_log", "units", "age_col", "label_col", "X_col", "Y_col",
                   "Z_col", "nuclide_cols")


def mapping_to_dict(mapping: ColumnMapping) -> dict:
    """A ColumnMapping as plain JSON (without its notes)."""
    d = asdict(mapping)
    return {k: d[k] for k in _MAPPING_FIELDS}


def mapping_from_dict(d: dict) -> ColumnMapping:
    """The inverse of :func:`mapping_to_dict`; unknown keys are ignored."""
    d = d or {}
    m = ColumnMapping()
    for k in _MAPPING_FIELDS:
        if k in d:
            setattr(m, k, d[k])
    m.rho_log, m.T_log = bool(m.rho_log), bool(m.T_log)
    m.nuclide_cols = dict(m.nuclide_cols or {})
    return m


def _b64(values: np.ndarray) -> str:
    return base64.b64encode(np.ascontiguousarray(values, dtype="<f8").tobytes()).decode("ascii")


def _unb64(text: str) -> np.ndarray:
    return np.frombuffer(base64.b64decode(text), dtype="<f8").copy()


def read_upload(data: bytes, filename: str, max_bytes: int | None = None, **read_options):
    """read_table (with the user's ``read_options``, see its keywords) + detect_columns:
    (table, mapping); TableError with a message."""
    kwargs = {} if max_bytes is None else {"max_bytes": max_bytes}
    df = read_table(data, filename, **kwargs, **read_options)
    return df, detect_columns(df)


def _options_key(opts: dict) -> list:
    return sorted([k, v] for k, v in opts.items())


def report_key(mapping: ColumnMapping, comp: Composition, opts: dict, ignition=()) -> str:
    """What a full report depends on, as text (the browser compares it, the server never keeps it)."""
    return json.dumps([mapping_to_dict(mapping), repr(comp.key()), _options_key(opts),
                       [[p, float(lv)] for p, lv in ignition]], sort_keys=True)


def to_store(df: pd.DataFrame, mapping: ColumnMapping, comp: Composition, *, name: str, filename: str = "",
             colour: str = TRACK_COLOURS[0], label: str = "", notes=(), ignition=(), **physics_options) -> dict:
    """Evaluate every row once, then keep a compact copy for the browser.

    Returns a JSON-ready dict: ``id`` (content hash), ``name``, ``filename``,
    ``colour``, ``visible``, ``label``, ``notes``, ``columns`` (every input
    column), ``kept`` (columns stored), ``numeric`` (column -> base64 float64),
    ``text`` (column -> list of str), ``rows`` (base64 of the table rows kept,
    or None for all), ``n_rows``, ``mapping``, ``report`` (``key``,
    ``crossings`` of every row, ``bad_rows`` count and the first reasons).

    Raises
    ------
    TableError, ValueError
        As :func:`enrich`.
    """
    ignition = tuple((p, float(lv)) for p, lv in ignition)
    _, crossings, data = enrich(df, mapping, comp, ignition=ignition, **physics_options)
    n = len(df)
    if n > MAX_STORED_ROWS:
        keep_idx = np.concatenate([crossings["row"].to_numpy(), crossings["row_after"].to_numpy()])
        rows = downsample(n, keep_idx, max_points=MAX_STORED_ROWS)
    else:
        rows = None
    sub = df if rows is None else df.iloc[rows]
    n_kept = len(sub)
    mapped = [c for c in (mapping.rho_col, mapping.T_col, mapping.age_col, mapping.label_col)
              if c is not None] + mapping.composition_cols
    numeric, text, kept = {}, {}, []
    cells = 0
    for col in mapped + [c for c in df.columns if c not in mapped]:
        if col in kept:
            continue
        is_num = pd.api.types.is_numeric_dtype(sub[col])
        if col not in mapped and cells + n_kept > MAX_STORED_CELLS:
            continue
        if is_num:
            numeric[col] = _b64(sub[col].to_numpy(dtype=float))
        else:
            text[col] = [str(v)[:MAX_TEXT] for v in sub[col].to_numpy()]
        cells += n_kept
        kept.append(col)
    digest = hashlib.sha1()
    digest.update(filename.encode("utf-8", "replace"))
    for col in kept:
        digest.update(col.encode("utf-8", "replace"))
        digest.update((numeric.get(col) or "\x00".join(text.get(col, []))).encode("utf-8", "replace"))
    return {
        "id": digest.hexdigest()[:16], "name": name, "filename": filename, "colour": colour, "visible": True,
        "label": label, "notes": list(notes),
        "columns": [str(c) for c in df.columns], "kept": kept, "numeric": numeric, "text": text,
        "rows": None if rows is None else base64.b64encode(rows.astype("<i8").tobytes()).decode("ascii"),
        "n_rows": n, "mapping": mapping_to_dict(mapping),
        "report": {"key": report_key(mapping, comp, physics_options, ignition),
                   "crossings": crossing_records(crossings),
                   "bad_rows": len(data.bad_rows),
                   "bad_examples": [data.bad_reasons[i] for i in data.bad_rows[:5]]},
    }


def stored_rows(track: dict) -> np.ndarray:
    """Table row numbers of the rows kept in the browser."""
    if track.get("rows"):
        return np.frombuffer(base64.b64decode(track["rows"]), dtype="<i8").copy()
    return np.arange(_n_kept(track), dtype=np.int64)


def _n_kept(track: dict) -> int:
    for v in track.get("numeric", {}).values():
        return len(base64.b64decode(v)) // 8
    for v in track.get("text", {}).values():
        return len(v)
    return 0


def from_store(track: dict) -> pd.DataFrame:
    """The kept rows and columns of a stored track as a table (in the input's column order)."""
    cols = {}
    for col in track["kept"]:
        if col in track["numeric"]:
            cols[col] = _unb64(track["numeric"][col])
        else:
            cols[col] = np.asarray(track["text"][col], dtype=object)
    order = [c for c in track["columns"] if c in cols]
    return pd.DataFrame(cols, columns=order)


# Evaluations of stored tracks, keyed by (track id, mapping, composition, options):
# switching the shaded quantity or toggling a layer costs no physics call.
_CACHE: OrderedDict = OrderedDict()
_CACHE_SIZE = 16


def cache_clear() -> None:
    _CACHE.clear()


def evaluate_stored(track: dict, comp: Composition, ignition=(), **physics_options) -> dict:
    """The state along a stored track for a composition, cached (bounded LRU of 16).

    Returns
    -------
    dict
        ``enriched`` (kept rows, input columns plus computed), ``data``
        (TrackData), ``rows`` (table row numbers), ``crossings`` (records, in
        table rows) and ``exact`` (True when the crossings are the upload's
        every-row report, False when found on the kept rows of a thinned track).

    Raises
    ------
    TableError, ValueError
        As :func:`enrich` (e.g. a mapping that names a column not kept).
    """
    mapping = mapping_from_dict(track["mapping"])
    ignition = tuple((p, float(lv)) for p, lv in ignition)
    key = (track["id"], json.dumps(track["mapping"], sort_keys=True), comp.key(),
           tuple(sorted(physics_options.items())), ignition)
    if key in _CACHE:
        _CACHE.move_to_end(key)
        return _CACHE[key]
    df = from_store(track)
    rows = stored_rows(track)
    enriched, crossings, data = enrich(df, mapping, comp, ignition=ignition, **physics_options)
    report = track.get("report") or {}
    thinned = bool(track.get("rows"))
    if report.get("key") == report_key(mapping, comp, physics_options, ignition):
        records, exact = report.get("crossings", []), True
    else:
        records, exact = crossing_records(crossings, rows), not thinned
    out = {"enriched": enriched, "data": data, "rows": rows, "crossings": records, "exact": exact}
    _CACHE[key] = out
    while len(_CACHE) > _CACHE_SIZE:
        _CACHE.popitem(last=False)
    return out


def draw_indices(n: int, crossing_positions) -> np.ndarray:
    """Positions (in the kept rows) to draw: at most DRAW_POINTS plus both rows of every crossing."""
    return downsample(n, crossing_positions, max_points=DRAW_POINTS)


__all__ += ["DEMO_MASSES", "report_key", "stored_rows", "draw_indices", "TrackData"]
