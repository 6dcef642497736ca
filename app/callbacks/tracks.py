"""The tracks panel: upload tables, map their columns, see each track on the
map with its crossings, a second plot along the track, and the enriched CSV.

Uploaded data lives only in the browser (``dcc.Store(storage_type="local")``,
see :mod:`app.tracks` for what is kept and the limits); the server keeps
nothing per user but a bounded cache of evaluations keyed by
(track id, mapping, composition, options).

One callback (:func:`tracks_callback`) owns everything that writes the store
and the mapping controls, so no chain of callbacks can loop; the map, the
results and the download only read the store.
"""

from __future__ import annotations

import base64
import binascii
import json
import logging
import numpy as np
import pandas as pd
import dash_ag_grid as dag
from dash import ALL, Input, Output, State, ctx, dcc, html, no_update

from .. import figures
from .. import tracks as tk
from ..upload import DELIMITERS, MAX_BYTES, LayoutError, TableError, nuclide_of, preview_lines
from ..view import comp_and_options, ignition_from_store, overlay_traces, stored_tracks  # noqa: F401

log = logging.getLogger(__name__)

__all__ = ["tracks_panel", "tracks_results", "EXAMPLES", "QUANTITIES", "add_files", "add_demo", "remove",
           "set_visible", "rename", "remap", "mapping_controls", "track_list", "tracks_callback",
           "comp_and_options", "overlay_traces", "results", "download", "register"]

#: Example files in assets/examples, served by Dash at /assets/examples/NAME.
EXAMPLES = (("example_central_track.csv", "centre of a star over time (CSV, log10 columns, age)"),
            ("example_profile.tsv", "one profile, centre to surface (TSV, linear cgs)"),
            ("example_whitespace.txt", "whitespace separated, Fortran D exponents, X and Y columns"))
#: Quantities offered in the plot along the track: column -> (label, log axis).
QUANTITIES = {"beta": ("β = P_gas / P", False), "eta": ("η (electron degeneracy)", False),
              "gamma1": ("Γ₁", False), "nabla_ad": ("∇_ad", False), "P": ("P, dyn cm⁻²", True),
              "P_gas": ("P_gas, dyn cm⁻²", True), "P_rad": ("P_rad, dyn cm⁻²", True)}
#: Tracks kept at once (each is at most a few hundred kB in the browser).
MAX_TRACKS = 12
#: Largest store (JSON characters) kept in local storage: browsers allow about
#: 5 MB per site, and the page needs some room for itself.
MAX_STORE_CHARS = 4_000_000
GENERIC_ERROR = "Something went wrong with this track; the server log has the details."
_ROW = "__row__"
_NONE = "__none__"


# ----------------------------------------------------------------------------
# layout
# ----------------------------------------------------------------------------
def _dropdown(id_, label, title=""):
    return html.Label([html.Span(label, className="field-label"),
                       dcc.Dropdown(id=id_, clearable=False, className="dropdown")], className="field", title=title)


def _scale(id_, label):
    return html.Div([html.Span(label, className="field-label"),
                     dcc.RadioItems(id=id_, inline=True, className="radio", value=True,
                                    options=[{"label": " log₁₀", "value": True},
                                             {"label": " linear", "value": False}])], className="option-row")


_DELIM_OPTIONS = [{"label": "automatic", "value": "auto"}] + [{"label": k, "value": k} for k in DELIMITERS]


def reader_panel() -> html.Div:
    """Shown when a file is text but cannot be split into a table: its first lines, and the choices
    (delimiter, header line, skip lines that do not fit) to read it again."""
    return html.Div([
        html.Div(id="tracks-reader-title", className="field-label"),
        html.Pre(id="tracks-reader-lines", className="reader-lines"),
        html.Div([html.Label([html.Span("delimiter", className="field-label"),
                              dcc.Dropdown(id="tracks-reader-delim", options=_DELIM_OPTIONS, value="auto",
                                           clearable=False, className="dropdown")], className="field"),
                  html.Label([html.Span("header line", className="field-label"),
                              dcc.Input(id="tracks-reader-header", type="number", step="any", debounce=True,
                                        placeholder="auto; 0 = none", className="number-input")],
                             className="field", title="line number of the header row (as numbered above); "
                                                      "0 when the file has no header")], className="field-row"),
        dcc.Checklist(id="tracks-reader-skip", value=[], className="check",
                      options=[{"label": " skip lines that do not fit the header", "value": "skip"}]),
        html.Button("read again", id="tracks-reader-apply", n_clicks=0, className="small"),
        dcc.Store(id="tracks-reader-file"),
    ], id="tracks-reader", className="reader", style={"display": "none"})


def tracks_panel() -> html.Section:
    """The controls: upload, demo tracks, examples, the list of tracks and the column mapping."""
    limit = MAX_BYTES / 1024 / 1024
    return html.Section([
        html.H3("Tracks"),
        dcc.Store(id="tracks-store", storage_type="local"),
        dcc.Upload(id="tracks-upload", multiple=True, className="upload",
                   children=html.Div(["Drop track tables here or ", html.A("choose files")]),
                   ),
        html.P(f"CSV, TSV, semicolon or whitespace separated, gzip too; a header row; up to {limit:g} MB. "
               "The data stay in this browser.", className="hint"),
        html.Div(id="tracks-upload-message", className="message", role="alert", **{"aria-live": "polite"}),
        reader_panel(),
        html.Div([html.Button("Load demo tracks", id="tracks-demo", n_clicks=0, className="small",
                              title="central lines of 0.3, 1, 3, 15 M☉ and a 1 M☉ profile (n = 3 polytropes), "
                                    "computed here: illustrative")], className="button-row"),
        html.Details([html.Summary("example files"),
                      html.Ul([html.Li([html.A(name, href=f"/assets/examples/{name}", download=name,
                                               className="example-link"), html.Span(" — " + what, className="hint")])
                               for name, what in EXAMPLES], className="examples")], id="tracks-examples"),
        html.Div(id="tracks-list", className="tracks-list"),
        dcc.Checklist(id="tracks-colour-by", value=[], className="check",
                      options=[{"label": " colour the selected track by its parameter (age)",
                                "value": "age"}]),
        html.Div([
            html.Label([html.Span("selected track", className="field-label",
                                  title="the track whose columns, crossings and CSV are shown"),
                        dcc.Dropdown(id="tracks-select", clearable=False, className="dropdown")], className="field"),
            _dropdown("track-rho-col", "density column"),
            _scale("track-rho-log", "density is"),
            html.Div([html.Span("density units", className="field-label"),
                      dcc.RadioItems(id="track-units", inline=True, className="radio", value="cgs",
                                     options=[{"label": " g cm⁻³", "value": "cgs"},
                                              {"label": " kg m⁻³", "value": "si"}])], className="option-row"),
            _dropdown("track-T-col", "temperature column (K)"),
            _scale("track-T-log", "temperature is"),
            _dropdown("track-age-col", "age or model number", "the track's parameter"),
            _dropdown("track-label-col", "label column"),
            html.Div("The track's own composition (mass fractions per row; any two of X, Y, Z give the "
                     "third). Without one, every row has the panel's composition.", className="hint"),
            html.Div([_dropdown("track-X-col", "X column", "hydrogen mass fraction per row"),
                      _dropdown("track-Y-col", "Y column", "helium mass fraction per row"),
                      _dropdown("track-Z-col", "Z column", "metal mass fraction per row")], className="field-row"),
            html.Label([html.Span("nuclide columns", className="field-label"),
                        dcc.Dropdown(id="track-nuclide-cols", multi=True, className="dropdown",
                                     placeholder="columns named like H-1, He-4, C-12")],
                       className="field", title="mass fraction of each nuclide per row (used when no X, Y, Z "
                                                "column is chosen)"),
            html.Div(id="tracks-mapping-message", className="message", role="alert", **{"aria-live": "polite"}),
        ], id="tracks-mapping", className="tracks-mapping"),
    ], className="panel", id="panel-tracks")


#: Rows shown in the track preview grid (the CSV download has them all).
PREVIEW_ROWS = 200
# numbers in the grids: 6 significant digits, no long strings of zeros (1.21382e+16, not 12138200000000000)
_NUM = {"function": "params.value == null ? '' : (Math.abs(params.value) >= 1e6 || "
                    "(Math.abs(params.value) < 1e-3 && params.value !== 0) ? "
                    "Number(params.value).toExponential(5).replace(/\\.?0+e/, 'e') : "
                    "String(Number(Number(params.value).toPrecision(6))))"}


def _grid(id_, columns, what: str, height: str = "260px"):
    """A sortable AG Grid with a button that saves what it shows as CSV."""
    return html.Div([
        html.Div(html.Button(f"{what} as CSV", id=f"{id_}-csv", n_clicks=0, className="small"),
                 className="button-row grid-bar"),
        dag.AgGrid(id=id_, columnDefs=columns, rowData=[], className="grid",
                   defaultColDef={"sortable": True, "resizable": True, "filter": False, "minWidth": 90, "flex": 1},
                   dashGridOptions={"theme": "themeBalham", "suppressCellFocus": True},
                   csvExportParams={"fileName": f"thermoplane-{id_}.csv"}, style={"height": height}),
    ])


def tracks_results() -> html.Section:
    """Below the map: the selected track's summary, its crossings, a plot along it, the CSV."""
    return html.Section([
        html.Div([html.H3("Track crossings", className="inline"),
                  html.Button("Download enriched CSV", id="tracks-download-button", n_clicks=0, className="small",
                              title="the track's table with P, P_gas, P_rad, β, η, Γ₁, ∇_ad and the regime "
                                    "added to every row"),
                  dcc.Download(id="tracks-download")], className="point-bar"),
        html.Div(id="tracks-info", className="hint"),
        _grid("tracks-crossings", [
            {"headerName": "boundary", "field": "label", "minWidth": 220, "flex": 2},
            {"headerName": "between rows", "field": "rows", "minWidth": 110},
            {"headerName": "log ρ", "field": "log_rho", "type": "numericColumn", "valueFormatter": _NUM},
            {"headerName": "log T", "field": "log_T", "type": "numericColumn", "valueFormatter": _NUM},
            {"headerName": "parameter", "field": "age", "type": "numericColumn", "valueFormatter": _NUM},
            {"headerName": "composition used", "field": "composition", "minWidth": 260, "flex": 2}],
            "crossings", height="260px"),
        html.Div([html.Label([html.Span("pin a row", className="field-label"),
                              dcc.Input(id="tracks-pin-row", type="number", step="any", debounce=True,
                                        placeholder="row", className="number-input")], className="field",
                             title="a row of the selected track (click a point of a track on the map to fill it)"),
                  html.Button("map at this row's composition", id="tracks-pin-apply", n_clicks=0, className="small",
                              title="set the panel's X, Y, Z to the pinned row's own composition, so the lines "
                                    "on the map are drawn for it")], className="field-row pin-row"),
        html.Div(id="tracks-pin-message", className="note", role="status"),
        html.Div([html.Label([html.Span("along the track", className="field-label"),
                              dcc.Dropdown(id="tracks-quantity", value="beta", clearable=False, className="dropdown",
                                           options=[{"label": v[0], "value": k} for k, v in QUANTITIES.items()])],
                             className="field"),
                  html.Div([html.Span("against", className="field-label"),
                            dcc.RadioItems(id="tracks-xaxis", value="age", inline=True, className="radio",
                                           options=[{"label": " parameter (age)", "value": "age"},
                                                    {"label": " row", "value": "row"}])], className="option-row")],
                 className="field-row"),
        dcc.Graph(id="tracks-quantity-graph", config={"displaylogo": False}, style={"height": "300px"},
                  figure=figures.empty_figure("Upload a track or load the demo tracks")),
        html.Details([html.Summary(f"table preview (first {PREVIEW_ROWS} rows with the computed columns)"),
                      _grid("tracks-preview", [], "track preview", height="300px")], id="tracks-preview-box"),
    ], className="panel", id="panel-track-results")


# ----------------------------------------------------------------------------
# store updates: plain functions
# ----------------------------------------------------------------------------
def _tracks(store) -> list[dict]:
    return stored_tracks(store)


def _find(store, tid):
    for t in _tracks(store):
        if t.get("id") == tid:
            return t
    return None


def _next_colour(tracks) -> str:
    used = [t["colour"] for t in tracks]
    for c in tk.TRACK_COLOURS:
        if c not in used:
            return c
    return tk.TRACK_COLOURS[len(tracks) % len(tk.TRACK_COLOURS)]


def _unique_id(tid: str, tracks) -> str:
    ids = {t["id"] for t in tracks}
    out, k = tid, 2
    while out in ids:
        out, k = f"{tid}-{k}", k + 1
    return out


def _decode_upload(contents: str, filename: str, max_bytes: int) -> bytes:
    """A dcc.Upload data URL -> bytes; the size is checked on the base64 text before decoding."""
    if not isinstance(contents, str) or "," not in contents:
        raise TableError(f"'{filename}' did not arrive as a file; upload it again")
    head, b64 = contents.split(",", 1)
    size = len(b64) * 3 // 4 - b64[-2:].count("=")
    if size > max_bytes:
        raise TableError(f"'{filename}' is {size / 1048576:.1f} MB; the limit is {max_bytes / 1048576:.3g} MB; "
                         "upload a shorter table or thin it out (every n-th row)")
    if ";base64" not in head:
        raise TableError(f"'{filename}' did not arrive base64-encoded; upload it again")
    try:
        return base64.b64decode(b64, validate=False)
    except (binascii.Error, ValueError):
        raise TableError(f"'{filename}' arrived damaged; upload it again") from None


def _guess_columns(df, mapping, name: str) -> None:
    """First two numeric columns for the roles not detected, log10 when the values look like logs."""
    numeric = [c for c in df.columns if pd.api.types.is_numeric_dtype(df[c])]
    if len(numeric) < 2:
        raise TableError(f"'{name}' has fewer than two numeric columns (columns: "
                         f"{', '.join(map(str, df.columns))}); density and temperature are needed; "
                         + "; ".join(mapping.ambiguous))
    if mapping.rho_col is None:
        mapping.rho_col = next(c for c in numeric if c != mapping.T_col)
        v = df[mapping.rho_col].to_numpy(dtype=float)
        mapping.rho_log = bool(np.nanmax(np.abs(v)) <= 15)
    if mapping.T_col is None:
        mapping.T_col = next(c for c in numeric if c != mapping.rho_col)
        v = df[mapping.T_col].to_numpy(dtype=float)
        mapping.T_log = bool(np.nanmax(np.abs(v)) <= 13)


def _add(store, track: dict) -> dict:
    tracks = _tracks(store)
    track["id"] = _unique_id(track["id"], tracks)
    tracks.append(track)
    return {"tracks": tracks, "selected": track["id"]}


def add_files(store, contents, filenames, comp, opts: dict, max_bytes: int = MAX_BYTES, *, ignition=(),
              read_options=None, failures=None) -> tuple[dict, str]:
    """Read each uploaded file, evaluate it once, add it to the store.

    Returns (new store, message). A broken file gives a line of the message
    (naming the file) and leaves the other tracks as they were. ``read_options``
    (delimiter, header_line, skip_ragged) are the user's choices from the
    reader panel; a file that is text but does not split into a table is
    appended to ``failures`` (a list, when given) as ``{"name", "lines",
    "message"}`` so the reader panel can show its first lines.
    """
    if isinstance(contents, str):
        contents, filenames = [contents], [filenames]
    filenames = list(filenames or [])
    messages = []
    store = {"tracks": _tracks(store), "selected": (store or {}).get("selected")}
    for i, content in enumerate(contents or []):
        name = filenames[i] if i < len(filenames) and filenames[i] else f"file {i + 1}"
        if len(store["tracks"]) >= MAX_TRACKS:
            messages.append(f"'{name}' not added: at most {MAX_TRACKS} tracks at once; remove one first")
            continue
        try:
            data = _decode_upload(content, name, max_bytes)
            try:
                df, mapping = tk.read_upload(data, name, max_bytes=max_bytes, **(read_options or {}))
            except LayoutError as err:
                if failures is not None:
                    failures.append({"name": name, "lines": preview_lines(data), "message": str(err)})
                raise
            guessed = mapping.rho_col is None or mapping.T_col is None
            if guessed:
                _guess_columns(df, mapping, name)
            stem = name.rsplit("/", 1)[-1]
            track = tk.to_store(df, mapping, comp, name=stem, filename=stem, colour=_next_colour(store["tracks"]),
                                notes=mapping.ambiguous, ignition=ignition, **opts)
            skipped = df.attrs.get("skipped_lines") or []
            if skipped:
                messages.append(f"'{name}': {len(skipped)} line(s) that do not fit the header were skipped, "
                                f"e.g. line {skipped[0]}")
            size = len(json.dumps(track)) + sum(len(json.dumps(t)) for t in store["tracks"])
            if size > MAX_STORE_CHARS:
                raise TableError(f"'{name}' does not fit in this browser's storage next to the "
                                 f"{len(store['tracks'])} track(s) already here ({size / 1e6:.1f} MB of "
                                 f"{MAX_STORE_CHARS / 1e6:.0f} MB); remove a track, or upload fewer columns")
            if guessed:
                track["visible"] = False
                messages.append(f"'{name}': " + "; ".join(mapping.ambiguous)
                                + f"; for now {mapping.rho_col!r} is taken as density and {mapping.T_col!r} as "
                                "temperature: choose its density and temperature columns below “selected track” in the Tracks "
                                "panel (the track is hidden until then)")
            store = _add(store, track)
            if track["report"]["bad_rows"]:
                messages.append(f"'{name}': {track['report']['bad_rows']} bad row(s) left out, e.g. "
                                f"{track['report']['bad_examples'][0]}")
        except TableError as err:
            messages.append(str(err) if name in str(err) else f"'{name}': {err}")
        except ValueError as err:
            messages.append(f"'{name}': {err}")
        except Exception:                      # never a traceback in the page
            log.exception("reading upload %r failed", name)
            messages.append(f"'{name}': " + GENERIC_ERROR)
    return store, "\n".join(messages)


def add_demo(store, comp, opts: dict) -> dict:
    """Add the illustrative model stars of :func:`app.tracks.demo_tracks` (replacing earlier demo tracks)."""
    tracks = [t for t in _tracks(store) if not t.get("label")]
    store = {"tracks": tracks, "selected": (store or {}).get("selected")}
    for demo in tk.demo_tracks(comp, **opts):
        track = tk.to_store(demo["table"], demo["mapping"], comp, name=demo["name"], label=demo["label"],
                            colour=_next_colour(store["tracks"]), **opts)
        store = _add(store, track)
    return store


def remove(store, tid) -> dict:
    tracks = [t for t in _tracks(store) if t["id"] != tid]
    selected = (store or {}).get("selected")
    if selected == tid:
        selected = tracks[-1]["id"] if tracks else None
    return {"tracks": tracks, "selected": selected}


def _update(store, tid, **changes) -> dict:
    tracks = [{**t, **changes} if t["id"] == tid else t for t in _tracks(store)]
    return {"tracks": tracks, "selected": (store or {}).get("selected")}


def set_visible(store, tid, visible: bool) -> dict:
    return _update(store, tid, visible=bool(visible))


def rename(store, tid, name) -> dict:
    name = str(name or "").strip()[:80]
    return _update(store, tid, name=name or "track")


def remap(store, tid, changes: dict, comp, opts: dict) -> tuple[dict, str]:
    """Change a track's column mapping; (store, message). A mapping that does not fit keeps the old one."""
    track = _find(store, tid)
    if track is None:
        return store, ""
    new = {**track["mapping"], **changes}
    if new == track["mapping"]:                 # the user confirmed the guessed columns: show the track
        return (store if track["visible"] else _update(store, tid, visible=True)), ""
    try:
        tk.evaluate_stored({**track, "mapping": new}, comp, **opts)
    except (TableError, ValueError) as err:
        return store, str(err)
    return _update(store, tid, mapping=new, visible=True), ""


# ----------------------------------------------------------------------------
# rendering from the store: plain functions
# ----------------------------------------------------------------------------
def track_list(store) -> list:
    """One row per track: colour swatch, editable name, show toggle, remove button."""
    rows = []
    for t in _tracks(store):
        rows.append(html.Div([
            html.Span(className="swatch", style={"background": t["colour"]}),
            dcc.Input(id={"type": "track-name", "index": t["id"]}, value=t["name"], type="text", debounce=True,
                      className="text-input track-name", placeholder="track name"),
            dcc.Checklist(id={"type": "track-visible", "index": t["id"]}, value=["on"] if t["visible"] else [],
                          options=[{"label": " show", "value": "on"}], className="check", inline=True),
            html.Button("remove", id={"type": "track-remove", "index": t["id"]}, n_clicks=0, className="small",
                        title="remove this track from the page and from this browser"),
        ], className="track-row", id=f"track-row-{t['id']}"))
        if t.get("label"):
            rows.append(html.Div(t["label"], className="hint track-label"))
    return rows


def mapping_controls(track) -> dict:
    """Options and values of the mapping controls for one track (None: nothing to map)."""
    if track is None:
        empty = []
        return {"rho_options": empty, "T_options": empty, "age_options": empty, "label_options": empty,
                "X_options": empty, "Y_options": empty, "Z_options": empty, "nuclide_options": empty,
                "rho_col": None, "T_col": None, "rho_log": True, "T_log": True, "units": "cgs",
                "age_col": None, "label_col": None, "X_col": _NONE, "Y_col": _NONE, "Z_col": _NONE,
                "nuclide_cols": []}
    kept = track["kept"]
    numeric = [c for c in kept if c in track["numeric"]]
    m = track["mapping"]
    cols = [{"label": c, "value": c} for c in numeric]
    none = [{"label": "none", "value": _NONE}]
    nuclides = [{"label": f"{c} ({nuclide_of(c)})", "value": c} for c in numeric if nuclide_of(c)]
    return {"rho_options": cols, "T_options": cols,
            "age_options": [{"label": "row number", "value": _ROW}] + cols,
            "label_options": none + [{"label": c, "value": c} for c in kept],
            "X_options": none + cols, "Y_options": none + cols, "Z_options": none + cols,
            "nuclide_options": nuclides,
            "rho_col": m["rho_col"], "T_col": m["T_col"], "rho_log": bool(m["rho_log"]), "T_log": bool(m["T_log"]),
            "units": m["units"], "age_col": m["age_col"] or _ROW, "label_col": m["label_col"] or _NONE,
            "X_col": m.get("X_col") or _NONE, "Y_col": m.get("Y_col") or _NONE, "Z_col": m.get("Z_col") or _NONE,
            "nuclide_cols": list((m.get("nuclide_cols") or {}).values())}


def _none(v):
    return None if v in (None, _NONE, _ROW, "") else v


def _changes_from_controls(c: dict) -> dict:
    nuclides = {}
    for col in c.get("nuclide_cols") or []:
        nuc = nuclide_of(col)
        if nuc is not None:
            nuclides[nuc] = col
    return {"rho_col": c["rho_col"], "T_col": c["T_col"], "rho_log": bool(c["rho_log"]), "T_log": bool(c["T_log"]),
            "units": c["units"], "age_col": _none(c["age_col"]), "label_col": _none(c["label_col"]),
            "X_col": _none(c.get("X_col")), "Y_col": _none(c.get("Y_col")), "Z_col": _none(c.get("Z_col")),
            "nuclide_cols": nuclides}


_MAPPING_KEYS = ("rho_col", "T_col", "rho_log", "T_log", "units", "age_col", "label_col", "X_col", "Y_col",
                 "Z_col", "nuclide_cols")


_HIDDEN = {"display": "none"}


def _reader_options(reader: dict) -> dict:
    """The reader panel's choices as read_table keywords; ValueError with a message for a bad header line."""
    header = reader.get("header")
    if header in (None, ""):
        header_line = None
    else:
        try:
            x = float(header)
        except (TypeError, ValueError):
            raise ValueError(f"header line {header!r} is not a number; give a line number, or 0 for no header") \
                from None
        if not (x >= 0 and x == int(x)) or x > 1e9:
            raise ValueError(f"header line {header!r} must be a whole number >= 0 (0: the file has no header)")
        header_line = int(x)
    delim = reader.get("delimiter") or "auto"
    return {"delimiter": delim if delim in DELIMITERS else "auto", "header_line": header_line,
            "skip_ragged": "skip" in (reader.get("skip") or [])}


def _show_reader(out: dict, failure: dict | None) -> None:
    if failure is None:
        out.update(reader_style=_HIDDEN, reader_file=None)
        return
    width = len(str(len(failure["lines"])))
    out.update(reader_style={"display": "block"}, reader_file=failure["name"],
               reader_title=f"'{failure['name']}' could not be read as a table. Its first lines (numbered) are "
                            "below: choose the delimiter, the header line, or skip lines that do not fit, "
                            "then “read again”.",
               reader_lines="\n".join(f"{i:>{width}}  {line}" for i, line in enumerate(failure["lines"], start=1))
               or "(no text to show)")


def tracks_callback(triggered, store, selected, controls: dict, contents, filenames, view_data,
                    pending=None, reader=None) -> dict:
    """Callback body for everything that writes the store.

    Parameters
    ----------
    triggered : list of (id, property, value)
        What fired (``ctx.triggered``): ids are strings or pattern dicts.
    store : dict or None
        ``{"tracks": [...], "selected": id}``.
    selected : str or None
        The track chosen in the "columns of" menu.
    controls : dict
        Mapping control values keyed like :func:`mapping_controls`.
    contents, filenames
        From the dcc.Upload.
    view_data
        The map's checked view (for the composition and options).
    pending : dict, optional
        ``{"contents": [...], "filename": [...]}`` to read again with the reader panel's choices;
        default: the upload's own ``contents`` and ``filenames`` (kept in the browser while the
        reader is shown).
    reader : dict, optional
        ``delimiter``, ``header``, ``skip`` of the reader panel and ``file``, the name it shows.

    Returns
    -------
    dict
        ``store`` (or no_update), ``upload_message``, ``mapping_message``,
        ``list``, ``select_options``, ``selected`` and every mapping control
        (options and values), ``contents`` (None: the same file can be sent again),
        and the reader panel (``reader_style``, ``reader_title``, ``reader_lines``,
        ``reader_file``; no_update when untouched).
    """
    out = {"store": no_update, "upload_message": no_update, "mapping_message": no_update,
           "contents": no_update, "reader_style": no_update, "reader_title": no_update,
           "reader_lines": no_update, "reader_file": no_update}
    reader = reader if isinstance(reader, dict) else {}
    old = store if isinstance(store, dict) else {"tracks": [], "selected": None}
    if not isinstance(old.get("selected"), (str, type(None))):
        old = {**old, "selected": None}
    new = {"tracks": _tracks(old), "selected": selected if _find(old, selected) else old.get("selected")}
    ids = {str(i) if not isinstance(i, dict) else i.get("type") for i, _, _ in triggered}
    mapping_changed = False
    comp_opts = None

    def co():
        nonlocal comp_opts
        if comp_opts is None:
            comp_opts = comp_and_options(view_data)
        return comp_opts

    for tid, prop, value in triggered:
        kind = tid.get("type") if isinstance(tid, dict) else tid
        index = tid.get("index") if isinstance(tid, dict) else None
        if kind == "tracks-upload" and contents:
            failures: list = []
            new, msg = add_files(new, contents, filenames, *co(), ignition=ignition_from_store(view_data),
                                 failures=failures)
            out["upload_message"] = msg
            # a file for the reader stays in the upload (the browser), to be read again; else clear it
            # so that the same file can be sent again
            out["contents"] = no_update if failures else None
            _show_reader(out, failures[0] if failures else None)
        elif kind == "tracks-reader-apply" and value:
            name = reader.get("file")
            files = pending if isinstance(pending, dict) else {"contents": contents, "filename": filenames}
            names = files.get("filename") or []
            names = [names] if isinstance(names, str) else list(names)
            datas = files.get("contents") or []
            datas = [datas] if isinstance(datas, str) else list(datas)
            if name not in names or len(datas) != len(names):
                out["upload_message"] = "The file to read again is no longer here; upload it again."
                _show_reader(out, None)
                continue
            try:
                options = _reader_options(reader)
            except ValueError as err:
                out["upload_message"] = str(err)
                continue
            failures = []
            i = names.index(name)
            new, msg = add_files(new, [datas[i]], [name], *co(), ignition=ignition_from_store(view_data),
                                 read_options=options, failures=failures)
            out["upload_message"] = msg
            _show_reader(out, failures[0] if failures else None)
            if not failures:
                out["contents"] = None
        elif kind == "tracks-demo" and value:
            new = add_demo(new, *co())
            out["upload_message"] = ""
        elif kind == "track-remove" and value:
            new = remove(new, index)
        elif kind == "track-visible" and _find(new, index) is not None:
            new = set_visible(new, index, "on" in (value or []))
        elif kind == "track-name" and _find(new, index) is not None and value is not None:
            if str(value).strip() and str(value).strip() != _find(new, index)["name"]:
                new = rename(new, index, value)
        elif kind.startswith("track-") and kind[6:].replace("-", "_") in _MAPPING_KEYS:
            mapping_changed = True
    if mapping_changed and "tracks-select" not in ids and new.get("selected"):
        new, msg = remap(new, new["selected"], _changes_from_controls(controls), *co())
        out["mapping_message"] = msg
    if new != old:
        out["store"] = new
    if "tracks-select" in ids:
        out["mapping_message"] = ""
    # the list, the menu and the mapping controls always show the store (first load: from
    # local storage; after a mapping that did not fit: the mapping still in effect)
    out["list"] = track_list(new)
    out["select_options"] = [{"label": t["name"], "value": t["id"]} for t in new["tracks"]]
    out["selected"] = new.get("selected")
    out.update(mapping_controls(_find(new, new.get("selected"))))
    return out


# ----------------------------------------------------------------------------
# reading the store: map overlay, results, download
# ----------------------------------------------------------------------------
def _crossing_rows(records, age_name) -> list[dict]:
    return [{"label": r["label"], "rows": f"{r['row']}–{r['row_after']}", "log_rho": round(r["log_rho"], 4),
             "log_T": round(r["log_T"], 4), "age": None if r["age"] is None else float(f"{r['age']:.6g}"),
             "composition": tk.composition_text(r)}
            for r in records]


def _preview(ev) -> tuple[list, list]:
    """(columnDefs, rowData) of the first PREVIEW_ROWS kept rows with the computed columns."""
    e = ev["enriched"].iloc[:PREVIEW_ROWS]
    cols = [{"headerName": "row", "field": "__row", "type": "numericColumn", "maxWidth": 90}]
    rows = {"__row": ev["rows"][:len(e)].tolist()}
    for i, c in enumerate(e.columns):
        field = f"c{i}"
        if e[c].dtype.kind == "f":
            v = e[c].to_numpy()
            rows[field] = [float(x) if np.isfinite(x) else None for x in v]
            cols.append({"headerName": str(c), "field": field, "type": "numericColumn", "valueFormatter": _NUM})
        else:
            rows[field] = [str(x) for x in e[c].to_numpy()]
            cols.append({"headerName": str(c), "field": field})
    n = len(e)
    return cols, [{k: rows[k][j] for k in rows} for j in range(n)]


def results(store, selected, view_data, quantity: str, xaxis: str):
    """(info children, crossings rows, figure of the quantity along the visible tracks,
    preview columnDefs, preview rows)."""
    tracks = _tracks(store)
    if not tracks:
        return ("No track yet: upload a table or load the demo tracks.", [],
                figures.empty_figure("Upload a track or load the demo tracks"), [], [])
    comp, opts = comp_and_options(view_data)
    ignition = ignition_from_store(view_data)
    track = _find(store, selected) or tracks[-1]
    info, rows, preview = [], [], ([], [])
    try:
        ev = tk.evaluate_stored(track, comp, ignition=ignition, **opts)
        preview = _preview(ev)
        kept = len(ev["rows"])
        where = "" if ev["exact"] else f" (found on the {kept:,} rows kept in the browser)"
        bad = int(np.count_nonzero(~ev["data"].valid))
        age = track["mapping"].get("age_col") or "row number"
        info.append(html.Span(f"{track['name']}: {track['n_rows']:,} rows"
                              + (f", {kept:,} kept in the browser" if kept < track["n_rows"] else "")
                              + f", {bad} bad; parameter: {age}; {len(ev['crossings'])} crossing(s){where}."))
        if track.get("label"):
            info.append(html.Span(" " + track["label"] + ".", className="strong"))
        rows = _crossing_rows(ev["crossings"], age)
        if any(r.get("composition") == "track" for r in ev["crossings"]):
            info.append(html.Span(" Crossings use the track's own composition, row by row; the lines on the map "
                                  "are drawn for the panel's: pin a row below to draw them for that row's."))
    except (TableError, ValueError) as err:
        info.append(html.Span(f"{track['name']}: {err}"))
    # one x axis: the selected track, and the visible tracks whose parameter is the same column
    series = []
    param = track["mapping"].get("age_col")
    for t in tracks:
        if t["id"] != track["id"] and not (t.get("visible") and (xaxis == "row"
                                                                 or t["mapping"].get("age_col") == param)):
            continue
        try:
            ev = tk.evaluate_stored(t, comp, ignition=ignition, **opts)
        except (TableError, ValueError):
            continue
        e = ev["enriched"]
        col = quantity if quantity in e.columns and e[quantity].dtype.kind == "f" else f"{quantity}_computed"
        if col not in e.columns:
            continue
        use_age = xaxis == "age" and ev["data"].age is not None
        x = ev["data"].age if use_age else ev["rows"].astype(float)
        idx = tk.draw_indices(len(x), [])
        series.append((t["name"], t["colour"], x[idx], e[col].to_numpy()[idx]))
    label, log_y = QUANTITIES.get(quantity, (quantity, False))
    x_label = (param or "row") if xaxis == "age" else "row"
    fig = figures.track_quantity_figure(series, y_label=label, x_label=x_label, log_y=log_y)
    return info, rows, fig, preview[0], preview[1]


def download(n, store, selected, view_data):
    """dcc.Download dict with the selected track's enriched table as CSV, and a message."""
    if not n:
        return no_update, no_update
    track = _find(store, selected) or (_tracks(store)[-1] if _tracks(store) else None)
    if track is None:
        return no_update, "No track to download: upload a table first."
    try:
        comp, opts = comp_and_options(view_data)
        ev = tk.evaluate_stored(track, comp, ignition=ignition_from_store(view_data), **opts)
        comment = ""
        if len(ev["rows"]) < track["n_rows"] or len(track["kept"]) < len(track["columns"]):
            comment = (f"Thermoplane: {len(ev['rows'])} of {track['n_rows']} rows and "
                       f"{len(track['kept'])} of {len(track['columns'])} columns were kept in the browser; "
                       "for every row use: thermoplane track FILE -o OUT.csv")
        if track.get("label"):
            comment = (comment + "\n" if comment else "") + f"{track['name']}: {track['label']}"
        csv = tk.safe_csv(ev["enriched"], comment=comment)
        stem = (track.get("filename") or track["name"]).rsplit(".", 1)[0] or "track"
        safe = "".join(ch if ch.isalnum() or ch in "-_." else "_" for ch in stem)[:60]
        return dcc.send_string(csv, f"{safe}-thermoplane.csv", type="text/csv"), ""
    except (TableError, ValueError) as err:
        return no_update, str(err)
    except Exception:
        log.exception("track CSV export failed")
        return no_update, GENERIC_ERROR


# ----------------------------------------------------------------------------
# wiring
# ----------------------------------------------------------------------------
_CONTROL_IDS = {"rho_col": "track-rho-col", "T_col": "track-T-col", "rho_log": "track-rho-log",
                "T_log": "track-T-log", "units": "track-units", "age_col": "track-age-col",
                "label_col": "track-label-col", "X_col": "track-X-col", "Y_col": "track-Y-col",
                "Z_col": "track-Z-col", "nuclide_cols": "track-nuclide-cols"}
_OPTION_IDS = {"rho_options": "track-rho-col", "T_options": "track-T-col", "age_options": "track-age-col",
               "label_options": "track-label-col", "X_options": "track-X-col", "Y_options": "track-Y-col",
               "Z_options": "track-Z-col", "nuclide_options": "track-nuclide-cols"}


def register(app) -> None:
    outputs = {"store": Output("tracks-store", "data"),
               "upload_message": Output("tracks-upload-message", "children"),
               "mapping_message": Output("tracks-mapping-message", "children"),
               "contents": Output("tracks-upload", "contents"),
               "list": Output("tracks-list", "children"),
               "select_options": Output("tracks-select", "options"),
               "selected": Output("tracks-select", "value"),
               **{k: Output(cid, "options") for k, cid in _OPTION_IDS.items()},
               **{k: Output(cid, "value") for k, cid in _CONTROL_IDS.items()},
               "reader_style": Output("tracks-reader", "style"),
               "reader_title": Output("tracks-reader-title", "children"),
               "reader_lines": Output("tracks-reader-lines", "children"),
               "reader_file": Output("tracks-reader-file", "data")}
    inputs = {"contents": Input("tracks-upload", "contents"), "demo": Input("tracks-demo", "n_clicks"),
              "reader_apply": Input("tracks-reader-apply", "n_clicks"),
              "reader_delim": State("tracks-reader-delim", "value"),
              "reader_header": State("tracks-reader-header", "value"),
              "reader_skip": State("tracks-reader-skip", "value"), "reader_file": State("tracks-reader-file", "data"),
              "remove": Input({"type": "track-remove", "index": ALL}, "n_clicks"),
              "visible": Input({"type": "track-visible", "index": ALL}, "value"),
              "names": Input({"type": "track-name", "index": ALL}, "value"),
              "selected": Input("tracks-select", "value"),
              **{k: Input(cid, "value") for k, cid in _CONTROL_IDS.items()},
              "filenames": State("tracks-upload", "filename"), "store": State("tracks-store", "data"),
              "view": State("view-store", "data")}

    # While the store is being written, a second upload or demo click would start from the
    # same old store and one of the two results would be lost: the controls wait instead.
    running = [(Output("tracks-upload", "disabled"), True, False), (Output("tracks-demo", "disabled"), True, False),
               (Output("tracks-upload", "className"), "upload busy", "upload")]

    @app.callback(output=outputs, inputs=inputs, running=running)
    def _on_tracks(contents, demo, remove, visible, names, selected, filenames, store, view, reader_apply,
                   reader_delim, reader_header, reader_skip, reader_file, **controls):
        triggered = []
        for t in ctx.triggered:
            prop_id = t.get("prop_id") or "."
            if prop_id == ".":
                continue
            cid, prop = prop_id.rsplit(".", 1)
            triggered.append((json.loads(cid) if cid.startswith("{") else cid, prop, t.get("value")))
        try:
            return tracks_callback(triggered, store, selected, controls, contents, filenames, view, None,
                                   {"delimiter": reader_delim, "header": reader_header, "skip": reader_skip,
                                    "file": reader_file})
        except Exception:
            log.exception("tracks callback failed")
            out = {k: no_update for k in outputs}
            out["upload_message"] = GENERIC_ERROR
            return out

    # clicking a point of a track on the map selects the track and pins that row
    app.clientside_callback(
        "function(c){ return window.dash_clientside.thermoplane.pinTrackRow(c); }",
        Output("tracks-pin-row", "value"), Output("tracks-select", "value", allow_duplicate=True),
        Input("plane-graph", "clickData"), prevent_initial_call=True)
    for grid in ("tracks-crossings", "tracks-preview"):
        app.clientside_callback("function(n){ return n > 0; }", Output(grid, "exportDataAsCsv"),
                                Input(f"{grid}-csv", "n_clicks"), prevent_initial_call=True)
    app.callback(Output("comp-X", "value", allow_duplicate=True), Output("comp-Y", "value", allow_duplicate=True),
                 Output("comp-Z", "value", allow_duplicate=True), Output("comp-mix-on", "value", allow_duplicate=True),
                 Output("tracks-pin-message", "children"),
                 Input("tracks-pin-apply", "n_clicks"), State("tracks-pin-row", "value"),
                 State("tracks-store", "data"), State("tracks-select", "value"), State("view-store", "data"),
                 prevent_initial_call=True)(_safe_pin)
    app.callback(Output("tracks-info", "children"), Output("tracks-crossings", "rowData"),
                 Output("tracks-quantity-graph", "figure"), Output("tracks-preview", "columnDefs"),
                 Output("tracks-preview", "rowData"),
                 Input("tracks-store", "data"), Input("tracks-select", "value"), Input("view-store", "data"),
                 Input("tracks-quantity", "value"), Input("tracks-xaxis", "value"))(_safe_results)
    app.callback(Output("tracks-download", "data"), Output("tracks-mapping-message", "children",
                                                           allow_duplicate=True),
                 Input("tracks-download-button", "n_clicks"), State("tracks-store", "data"),
                 State("tracks-select", "value"), State("view-store", "data"),
                 prevent_initial_call=True)(download)


def _safe_results(store, selected, view_data, quantity, xaxis):
    try:
        return results(store, selected, view_data, quantity, xaxis)
    except Exception:
        log.exception("track results failed")
        return GENERIC_ERROR, [], figures.empty_figure(""), [], []


def pin_composition(n, row, store, selected, view_data):
    """Callback body: the pinned row's own composition for the panel: (X, Y, Z, mix_on, message).

    The map is then drawn for that composition (the lines and the shading), so a crossing marker
    found with the row's composition sits on the drawn line.
    """
    skip = (no_update,) * 4
    if not n:
        return (*skip, "")
    track = _find(store, selected) or (_tracks(store)[-1] if _tracks(store) else None)
    if track is None:
        return (*skip, "No track to pin a row of: upload a table first.")
    if row in (None, ""):
        return (*skip, "Give a row number (or click a point of the track on the map).")
    try:
        r = float(row)
    except (TypeError, ValueError):
        return (*skip, f"row {row!r} is not a number")
    if not (r == int(r) and 0 <= r < track.get("n_rows", 0)):
        return (*skip, f"row {row} is outside this track: rows are 0 to {track.get('n_rows', 0) - 1}")
    comp, opts = comp_and_options(view_data)
    ev = tk.evaluate_stored(track, comp, **opts)
    data = ev["data"]
    if data.X is None or data.Y is None:
        return (*skip, f"{track['name']} has no composition of its own: choose its X, Y, Z or nuclide columns "
                       "in the Tracks panel first")
    rows = ev["rows"]
    pos = int(np.clip(np.searchsorted(rows, int(r)), 0, len(rows) - 1))
    if rows[pos] != int(r) and pos > 0 and abs(rows[pos - 1] - r) < abs(rows[pos] - r):
        pos -= 1
    X, Y = float(data.X[pos]), float(data.Y[pos])
    if not (np.isfinite(X) and np.isfinite(Y)) or X < 0 or Y < 0 or X + Y > 1 + 1e-6:
        return (*skip, f"row {int(rows[pos])} has no usable composition (X = {X:g}, Y = {Y:g})")
    X, Y = round(X, 4), round(Y, 4)
    Z = round(max(0.0, 1.0 - X - Y), 4)
    note = "" if rows[pos] == int(r) else f" (row {int(r)} is not kept in the browser: nearest kept row)"
    metals = " Metals keep the panel's mixture." if data.metals else ""
    return X, Y, Z, [], (f"The map now uses row {int(rows[pos])}{note} of {track['name']}: X = {X:g}, "
                         f"Y = {Y:g}, Z = {Z:g}.{metals}")


def _safe_pin(n, row, store, selected, view_data):
    try:
        return pin_composition(n, row, store, selected, view_data)
    except (TableError, ValueError) as err:
        return no_update, no_update, no_update, no_update, str(err)
    except Exception:
        log.exception("pinning a track row failed")
        return no_update, no_update, no_update, no_update, GENERIC_ERROR
