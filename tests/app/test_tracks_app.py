"""The tracks glue (app.tracks) and the tracks panel's callbacks as plain functions."""

from __future__ import annotations

import base64
import gzip
import io
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from thermoplane import physics as ph
from thermoplane.app import tracks as tk
from thermoplane.app.callbacks import map as map_cb
from thermoplane.app.callbacks import tracks as ct
from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
from thermoplane.app.upload import ColumnMapping
from thermoplane.physics import regimes

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "assets" / "examples"
FAST = {"electrons": "classical", "ionization": "full", "coulomb": False, "pairs": False}
COMP = ph.Composition.from_xyz(0.70, 0.28, 0.02)


def data_url(content: bytes, mime="text/csv") -> str:
    return f"data:{mime};base64," + base64.b64encode(content).decode()


def example(name) -> str:
    return data_url((EXAMPLES / name).read_bytes())


def upload(*names, store=None):
    return ct.add_files(store, [example(n) for n in names], list(names), COMP, FAST)


@pytest.fixture(autouse=True)
def _fresh_cache():
    tk.cache_clear()
    yield
    tk.cache_clear()


# -- app.tracks ------------------------------------------------------------------------
def test_enrich_keeps_every_input_column_and_adds_the_computed_ones():
    df = pd.DataFrame({"rho": [1.0, -1.0, 1e3], "T": [1e7, 1e7, 1e6], "P": [9.0, 9.0, 9.0]})
    enriched, crossings, data = tk.enrich(df, ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False),
                                          COMP, **FAST)
    assert list(enriched.columns[:3]) == ["rho", "T", "P"]
    assert enriched["P"].tolist() == [9.0, 9.0, 9.0]                 # the user's P stays; ours is P_computed
    assert "P_computed" in enriched.columns and "regime" in enriched.columns
    assert data.bad_rows == [1]
    assert np.isnan(enriched["P_computed"][1]) and enriched["regime"][1] == ""
    state = ph.evaluate(np.array([1.0, 1e3]), np.array([1e7, 1e6]), COMP, **FAST)
    assert enriched["P_computed"][[0, 2]].to_numpy() == pytest.approx(state.P, rel=1e-12)
    assert list(enriched["regime"][[0, 2]]) == list(regimes.classify(state))
    assert set(crossings.columns) >= {"boundary", "row", "row_after", "log_rho", "log_T", "age", "label"}


def test_safe_csv_neutralises_text_and_leaves_numbers():
    df = pd.DataFrame({"=name": ["=1+1", "+a", "-b", "@c", "ok", "\tx"], "v": [-1.5, 2.0, -3.25, 4.0, 5.5, 6.0]})
    text = tk.safe_csv(df, comment="hello\nworld")
    lines = text.splitlines()
    assert lines[:2] == ["# hello", "# world"]
    back = pd.read_csv(io.StringIO(text), comment="#")
    assert list(back.columns) == ["'=name", "v"]
    assert back["'=name"].tolist() == ["'=1+1", "'+a", "'-b", "'@c", "ok", "'\tx"]
    assert back["v"].tolist() == [-1.5, 2.0, -3.25, 4.0, 5.5, 6.0]


def test_demo_tracks_are_labelled_and_cover_the_masses():
    demos = tk.demo_tracks(COMP, n_points=40, **FAST)
    assert len(demos) == len(tk.DEMO_MASSES) + 1
    assert all(d["label"] == tk.ILLUSTRATIVE for d in demos)
    for d in demos:
        enriched, _, data = tk.enrich(d["table"], d["mapping"], COMP, **FAST)
        assert len(data.bad_rows) == 0 and len(enriched) > 10
    profile = demos[-1]["table"]
    # a polytrope: density and temperature fall from the centre outwards (Lane-Emden theta decreasing)
    assert np.all(np.diff(profile["rho"]) < 0) and np.all(np.diff(profile["T"]) < 0)
    # heavier stars are hotter at the same central density (T_c ∝ M^(2/3) for an ideal gas; KWW 2012 sec. 19)
    first = [d["table"].set_index("log_rho_c")["T"] for d in demos[:-1]]
    common = first[0].index.intersection(first[-1].index)
    assert (first[-1][common] > first[0][common]).all()


def test_long_track_is_thinned_but_keeps_every_crossing_and_the_full_report():
    n = 60_000
    log_T = 6.0 + 3.0 * np.sin(np.linspace(0, 12 * np.pi, n)) ** 2       # crosses P_rad = P_gas many times
    df = pd.DataFrame({"log_rho": np.full(n, 0.0), "log_T": log_T, "age": np.arange(n, dtype=float)})
    mapping = ColumnMapping(rho_col="log_rho", T_col="log_T", age_col="age")
    track = tk.to_store(df, mapping, COMP, name="long", **FAST)
    _, full_crossings, _ = tk.enrich(df, mapping, COMP, **FAST)
    rows = tk.stored_rows(track)
    assert track["n_rows"] == n and len(rows) < n
    assert len(rows) <= tk.MAX_STORED_ROWS + 2 * len(full_crossings)
    assert set(full_crossings["row"]) <= set(rows) and set(full_crossings["row_after"]) <= set(rows)
    assert rows[0] == 0 and rows[-1] == n - 1
    assert len(json.dumps(track)) < 3_000_000
    ev = tk.evaluate_stored(track, COMP, **FAST)
    assert ev["exact"] and len(ev["crossings"]) == len(full_crossings)
    assert [c["row"] for c in ev["crossings"]] == full_crossings["row"].tolist()
    # another composition: found again on the kept rows (still around the same places), flagged as such
    ev2 = tk.evaluate_stored(track, ph.Composition.from_xyz(0.0, 0.98, 0.02), **FAST)
    # (the regime boundaries; the ignition curves eps_nuc = eps_nu depend on the hydrogen this one lacks)
    regime_keys = set(regimes.BOUNDARY_KEYS)
    assert not ev2["exact"]
    assert (sum(c["boundary"] in regime_keys for c in ev2["crossings"])
            == full_crossings["boundary"].isin(regime_keys).sum())


def test_evaluation_is_cached_and_switching_quantity_costs_no_physics_call(monkeypatch):
    store, _ = upload("example_central_track.csv")
    calls = []
    real = tk.track_report
    monkeypatch.setattr(tk, "track_report", lambda *a, **k: calls.append(1) or real(*a, **k))
    base = {**DEFAULT_VIEW, **FAST, "resolution": 40, "mass_lines": False, "ignition": False}
    controls = view_to_controls(base)
    first = map_cb.update_map(tracks=store, **controls)
    assert any(t.meta == "track:" + store["tracks"][0]["id"] for t in first["figure"].data)
    n = len(calls)
    assert n == 1
    for q in ("eta", "beta", "gamma1"):
        out = map_cb.update_map(tracks=store, **{**controls, "quantity": q})
        assert any(str(t.meta).startswith("track:") for t in out["figure"].data)    # traces survive the redraw
    assert len(calls) == n
    map_cb.update_map(tracks=store, **{**controls, "X": 0.5, "Y": 0.48})         # new composition: evaluated again
    assert len(calls) == n + 1


# -- callbacks: uploads ------------------------------------------------------------------
def test_upload_good_and_broken_files_together():
    store, msg = ct.add_files(None, [example("example_central_track.csv"), data_url(b"\x00\x01\x02" * 50),
                                     data_url(b"")], ["track.csv", "broken.bin", "empty.csv"], COMP, FAST)
    assert [t["name"] for t in store["tracks"]] == ["track.csv"]
    assert "'broken.bin'" in msg and "binary" in msg
    assert "'empty.csv'" in msg and "empty" in msg
    assert store["selected"] == store["tracks"][0]["id"]
    # another broken upload later: the message changes, the track stays
    store2, msg2 = ct.add_files(store, [data_url(b"mass,name\n1,x\n")], ["nothing.csv"], COMP, FAST)
    assert [t["name"] for t in store2["tracks"]] == ["track.csv"]
    assert "nothing.csv" in msg2 and "density" in msg2 and "numeric" in msg2


def test_upload_size_is_checked_before_decoding():
    huge = "data:text/csv;base64," + "!" * 4000               # not even valid base64: never decoded
    store, msg = ct.add_files(None, [huge], ["big.csv"], COMP, FAST, max_bytes=1000)
    assert store["tracks"] == [] and "big.csv" in msg and "limit" in msg and "MB" in msg


def test_upload_every_example_and_gzip():
    names = [p.name for p in sorted(EXAMPLES.iterdir()) if p.suffix in (".csv", ".tsv", ".txt")]
    store, msg = upload(*names)
    assert msg == "" and len(store["tracks"]) == len(names)
    assert len({t["colour"] for t in store["tracks"]}) == len(names)            # each its own colour
    gz = gzip.compress((EXAMPLES / "example_profile.tsv").read_bytes())
    store, msg = ct.add_files(store, [data_url(gz, "application/gzip")], ["profile.tsv.gz"], COMP, FAST)
    assert msg == "" and store["tracks"][-1]["name"] == "profile.tsv.gz"


def test_undetected_columns_still_upload_and_can_be_mapped():
    store, msg = ct.add_files(None, [data_url(b"a,b\n1,1e7\n10,2e7\n100,3e7\n")], ["ab.csv"], COMP, FAST)
    assert len(store["tracks"]) == 1 and "density" in msg and "hidden" in msg
    assert store["tracks"][0]["visible"] is False and store["tracks"][0]["mapping"]["T_log"] is False
    tid = store["tracks"][0]["id"]
    store, msg = ct.remap(store, tid, {"rho_col": "a", "T_col": "b", "rho_log": False, "T_log": False}, COMP, FAST)
    assert msg == "" and store["tracks"][0]["mapping"]["rho_col"] == "a" and store["tracks"][0]["visible"]
    ev = tk.evaluate_stored(store["tracks"][0], COMP, **FAST)
    assert ev["data"].log_rho.tolist() == pytest.approx([0.0, 1.0, 2.0])


# -- callbacks: mapping, visibility, names, removal -------------------------------------------
def test_mapping_change_and_a_mapping_that_does_not_fit():
    store, _ = upload("example_central_track.csv")
    tid = store["tracks"][0]["id"]
    controls = ct.mapping_controls(store["tracks"][0])
    assert controls["rho_col"] == "log_rho_c" and controls["T_col"] == "log_T_c" and controls["rho_log"] is True
    assert controls["age_col"] == "age_yr"
    new, msg = ct.remap(store, tid, {"age_col": None}, COMP, FAST)
    assert msg == "" and new["tracks"][0]["mapping"]["age_col"] is None
    assert all(c["age"] is None for c in tk.evaluate_stored(new["tracks"][0], COMP, **FAST)["crossings"])
    # a column that is not there (kept in the browser): message, the old mapping stays
    bad, msg = ct.remap(store, tid, {"T_col": "T_surface"}, COMP, FAST)
    assert "'T_surface'" in msg and "columns found" in msg
    assert bad["tracks"][0]["mapping"] == store["tracks"][0]["mapping"]


def test_tracks_callback_dispatch_visibility_rename_remove():
    store, _ = upload("example_central_track.csv", "example_profile.tsv")
    a, b = (t["id"] for t in store["tracks"])
    out = ct.tracks_callback([({"type": "track-visible", "index": a}, "value", [])], store, b, {}, None, None, None)
    assert [t["visible"] for t in out["store"]["tracks"]] == [False, True]
    assert not any(str(t.meta).startswith(f"track:{a}") for t in ct.overlay_traces(out["store"], COMP, FAST))
    assert any(t.meta == f"track:{b}" for t in ct.overlay_traces(out["store"], COMP, FAST))
    out = ct.tracks_callback([({"type": "track-name", "index": b}, "value", "Sun model")], out["store"], b, {},
                             None, None, None)
    assert out["store"]["tracks"][1]["name"] == "Sun model"
    assert {"label": "Sun model", "value": b} in out["select_options"]
    # new buttons appear with n_clicks = 0: not a removal
    same = ct.tracks_callback([({"type": "track-remove", "index": a}, "n_clicks", 0)], out["store"], b, {},
                              None, None, None)
    assert same["store"] is ct.no_update
    out = ct.tracks_callback([({"type": "track-remove", "index": b}, "n_clicks", 1)], out["store"], b, {},
                             None, None, None)
    assert [t["id"] for t in out["store"]["tracks"]] == [a]
    assert out["selected"] == a and out["rho_col"] == "log_rho_c"


def test_tracks_callback_first_load_renders_from_local_storage():
    store, _ = upload("example_central_track.csv")
    out = ct.tracks_callback([], store, None, {}, None, None, None)
    assert out["store"] is ct.no_update                      # nothing written back on load
    assert len(out["list"]) == 1 and out["selected"] == store["tracks"][0]["id"]


def test_tracks_callback_mapping_control_changes_the_selected_track():
    store, _ = upload("example_central_track.csv")
    tid = store["tracks"][0]["id"]
    controls = {**ct.mapping_controls(store["tracks"][0]), "age_col": "model"}
    out = ct.tracks_callback([("track-age-col", "value", "model")], store, tid, controls, None, None, None)
    assert out["store"]["tracks"][0]["mapping"]["age_col"] == "model"
    assert out["mapping_message"] == "" and out["age_col"] == "model"


def test_demo_button_adds_illustrative_tracks_once():
    out = ct.tracks_callback([("tracks-demo", "n_clicks", 1)], None, None, {}, None, None, None)
    names = [t["name"] for t in out["store"]["tracks"]]
    assert len(names) == len(tk.DEMO_MASSES) + 1 and all(t["label"] == tk.ILLUSTRATIVE
                                                         for t in out["store"]["tracks"])
    again = ct.tracks_callback([("tracks-demo", "n_clicks", 2)], out["store"], None, {}, None, None, None)
    assert again["store"] is ct.no_update or len(again["store"]["tracks"]) == len(names)   # replaced, not doubled
    assert len(again["select_options"]) == len(names)


def test_upload_through_the_callback_clears_the_upload_for_the_next_file():
    out = ct.tracks_callback([("tracks-upload", "contents", None)], None, None, {},
                             [example("example_profile.tsv")], ["example_profile.tsv"], None)
    assert len(out["store"]["tracks"]) == 1 and out["contents"] is None and out["upload_message"] == ""


# -- results and download ----------------------------------------------------------------
def test_results_crossings_table_and_quantity_plot():
    store, _ = upload("example_central_track.csv")
    view = {"view": {**DEFAULT_VIEW, **FAST}}
    info, rows, fig, cols, preview = ct.results(store, None, view, "beta", "age")
    ignition = tuple((p, lv) for p in DEFAULT_VIEW["processes"] for lv in (1.0, 1e3))
    ev = tk.evaluate_stored(store["tracks"][0], COMP, ignition=ignition, **FAST)
    assert len(rows) == len(ev["crossings"]) > 0
    # the report holds the ignition crossings at the view's levels, and says which composition it used
    assert any(r["label"] == "ε_pp = 10³ erg g⁻¹ s⁻¹" for r in rows)
    assert all(r["composition"].endswith("(the panel's)") for r in rows)
    # the preview grid: the first rows with the computed columns
    assert len(preview) == min(60, ct.PREVIEW_ROWS) and "regime" in [c["headerName"] for c in cols]
    assert rows[0]["rows"] == f"{ev['crossings'][0]['row']}–{ev['crossings'][0]['row_after']}"
    assert len(fig.data) == 1 and fig.layout.yaxis.title.text.startswith("β")
    assert fig.layout.xaxis.title.text == "age_yr"
    _, _, fig, _, _ = ct.results(store, None, view, "P", "row")
    assert fig.layout.yaxis.type == "log" and fig.layout.xaxis.title.text == "row"
    # against the parameter, only tracks with the same parameter column share the axis
    both, _ = upload("example_profile.tsv", store=store)
    _, _, fig, _, _ = ct.results(both, store["tracks"][0]["id"], view, "beta", "age")
    assert [t.name for t in fig.data] == ["example_central_track.csv"]
    _, _, fig, _, _ = ct.results(both, store["tracks"][0]["id"], view, "beta", "row")
    assert len(fig.data) == 2


def test_download_is_the_enriched_csv():
    store, _ = upload("example_whitespace.txt")
    d, msg = ct.download(1, store, None, {"view": {**DEFAULT_VIEW, **FAST}})
    assert msg == "" and d["filename"] == "example_whitespace-thermoplane.csv"
    back = pd.read_csv(io.StringIO(d["content"]), comment="#")
    assert len(back) == 30
    assert list(back.columns) == ["step", "age", "rho_c", "T_c", "X_c", "Y_c", *tk.COMPUTED_COLUMNS]
    assert ct.download(0, store, None, None) == (ct.no_update, ct.no_update)
    assert ct.download(1, None, None, None)[1].startswith("No track")


def test_map_traces_hover_marks_and_drawing_cap():
    store, _ = upload("example_central_track.csv")
    traces = ct.overlay_traces(store, COMP, FAST)
    tid = store["tracks"][0]["id"]
    line = next(t for t in traces if t.meta == f"track:{tid}")
    assert "row" in line.hovertemplate and "age_yr" in line.hovertemplate
    ev = tk.evaluate_stored(store["tracks"][0], COMP, **FAST)
    first = list(line.customdata[0])
    assert first[0] == 0 and float(first[1]) == 0.0                          # row 0, age 0
    assert first[4] == dict((r.key, r.label) for r in regimes.REGIMES)[ev["enriched"]["regime"][0]]
    assert first[5].startswith("β = ")
    ends = next(t for t in traces if t.meta == f"track:{tid}:ends")
    assert list(ends.text) == ["start", "end"] and list(ends.customdata) == [0, 59]
    marks = next(t for t in traces if t.meta == f"track:{tid}:crossings")
    assert len(marks.x) == len(ev["crossings"])
    # a long track: at most 20k points drawn plus both rows of each crossing, ends kept
    n = 50_000
    df = pd.DataFrame({"log_rho": np.linspace(-2, 8, n), "log_T": np.linspace(6, 8, n)})
    long = tk.to_store(df, ColumnMapping(rho_col="log_rho", T_col="log_T"), COMP, name="long", **FAST)
    drawn = ct.overlay_traces({"tracks": [long], "selected": long["id"]}, COMP, FAST)
    line = next(t for t in drawn if t.meta == f"track:{long['id']}")
    n_cross = len(long["report"]["crossings"])
    assert n_cross > 0 and len(line.x) <= tk.DRAW_POINTS + 2 * n_cross
    assert line.customdata[0][0] == 0 and line.customdata[-1][0] == n - 1


def test_browser_storage_limit_has_its_own_message(monkeypatch):
    store, _ = upload("example_central_track.csv")
    monkeypatch.setattr(ct, "MAX_STORE_CHARS", len(json.dumps(store["tracks"][0])) + 100)
    store2, msg = ct.add_files(store, [example("example_profile.tsv")], ["example_profile.tsv"], COMP, FAST)
    assert [t["name"] for t in store2["tracks"]] == ["example_central_track.csv"]
    assert "example_profile.tsv" in msg and "storage" in msg and "remove a track" in msg


# -- issue 14 ---------------------------------------------------------------------------
def test_map_and_tracks_callbacks_do_not_import_each_other():
    import ast
    for name, other in (("map", "tracks"), ("tracks", "map")):
        tree = ast.parse((ROOT / "app" / "callbacks" / f"{name}.py").read_text())
        imported = set()
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom):
                imported.add((node.level, node.module or ""))
                imported.update((node.level, a.name) for a in node.names if node.module is None)
        assert (1, other) not in imported and (1, "") not in {(lv, m) for lv, m in imported if m == other}
        assert (2, "view") in imported                               # both read the view from one module
    import importlib
    view = importlib.import_module("thermoplane.app.view")
    assert {"parse_view", "overlay_lines", "overlay_traces", "view_from_store"} <= set(view.__all__)


def test_html_export_includes_the_tracks():
    from thermoplane.app.callbacks import export
    from thermoplane.app.callbacks import map as map_cb
    store, _ = upload("example_central_track.csv")
    view = map_cb.update_map(**{**view_to_controls({**DEFAULT_VIEW, **FAST, "resolution": 40})})["view"]
    sent, msg = export.html_export(1, view, store, [])
    assert msg == "" and "track:" + store["tracks"][0]["id"] in sent["content"]
    sent, _ = export.html_export(1, view, None, [])
    assert "track:" not in sent["content"]


def test_two_column_file_message_names_controls_that_exist():
    content = data_url(b"a,b\n1,7\n2,7.1\n")
    store, msg = ct.add_files(None, [content], ["two.csv"], COMP, FAST)
    assert "columns of" not in msg and "“selected track”" in msg and "Tracks panel" in msg


def test_reader_reads_a_file_again_with_the_users_choices():
    bad = b"written by my code, version 3\nlog_rho log_T\n1.0 7.0\n2.0 7.2 junk\n3.0 7.4\n"
    content = data_url(bad, "text/plain")
    triggered = [("tracks-upload", "contents", [content])]
    controls = {k: None for k in ct._CONTROL_IDS}
    out = ct.tracks_callback(triggered, None, None, controls, [content], ["odd.txt"], None)
    assert out["reader_style"] == {"display": "block"} and out["reader_file"] == "odd.txt"
    assert "2  log_rho log_T" in out["reader_lines"] and "could not be read" in out["reader_title"]
    pending = {"contents": [content], "filename": ["odd.txt"]}
    again = [("tracks-reader-apply", "n_clicks", 1)]
    reader = {"delimiter": "whitespace", "header": 2, "skip": ["skip"], "file": "odd.txt"}
    out = ct.tracks_callback(again, None, None, controls, None, None, None, pending, reader)
    assert out["reader_style"] == {"display": "none"}
    (track,) = out["store"]["tracks"]
    assert track["n_rows"] == 2 and "skipped" in out["upload_message"]
    out = ct.tracks_callback(again, None, None, controls, None, None, None, pending, {**reader, "header": -1})
    assert "whole number" in out["upload_message"]


def test_pinning_a_row_sets_the_panels_composition():
    table = b"log_rho,log_T,X,Y\n1.0,7.0,0.7,0.28\n3.0,7.3,0.35,0.63\n5.0,7.6,0.0,0.98\n"
    store, msg = ct.add_files(None, [data_url(table)], ["own.csv"], COMP, FAST)
    tid = store["tracks"][0]["id"]
    X, Y, Z, mix_on, text = ct.pin_composition(1, 1, store, tid, None)
    assert (X, Y, Z, mix_on) == (0.35, 0.63, 0.02, []) and "row 1" in text
    assert ct.pin_composition(1, 7, store, tid, None)[4].startswith("row 7 is outside")
    plain, _ = upload("example_central_track.csv")
    assert "no composition of its own" in ct.pin_composition(1, 0, plain, None, None)[4]
