"""Send only what changed: a new map goes as a Patch of the one shown, and the browser ends up with the same
figure as if the whole of it had been sent."""

from __future__ import annotations

import json
import sys

import numpy as np
import pytest
from dash import Patch
from dash._utils import to_json

from thermoplane.app import delta
from thermoplane.app.callbacks import map as map_cb
from tests.app.dash_requests import apply_patch, map_request, response_parts
from tests.app.test_callbacks import controls


def _sent(value) -> dict:
    """What the browser receives (the JSON of a figure dict or of a Patch)."""
    return json.loads(to_json(value))


def _figure(**change):
    out = map_cb.update_map(**controls(**change))
    assert out["figure"] is not map_cb.no_update, out
    return out["figure"]


def test_a_composition_change_is_a_patch_that_rebuilds_the_new_figure():
    old, shape = delta.figure_update(_figure(X=0.70, Y=0.28))
    assert isinstance(old, dict) and shape["shape"] and len(shape["parts"]) > 20
    new_fig = _figure(X=0.60, Y=0.38)
    patch, shape2 = delta.figure_update(new_fig, shape)
    assert isinstance(patch, Patch)
    whole, _ = delta.figure_update(new_fig)
    assert apply_patch(_sent(old), _sent(patch)) == _sent(whole)
    assigned = {tuple(op["location"]) for op in _sent(patch)["operations"]}
    assert ("data", 0, "z") in assigned and ("data", 0, "customdata") in assigned      # the values changed
    assert ("data", 0, "x") not in assigned and ("layout", "xaxis") not in assigned    # the axes did not
    assert shape2 == delta.fingerprint({"data": whole["data"], "layout": whole["layout"]})
    # the values go as float32 typed arrays
    z = _sent(patch)["operations"][[op["location"] for op in _sent(patch)["operations"]].index(["data", 0, "z"])]
    assert z["params"]["value"]["dtype"] == "f4"


def test_the_same_figure_again_sends_nothing_and_a_new_structure_sends_the_whole():
    fig = _figure()
    _, shape = delta.figure_update(fig)
    again, _ = delta.figure_update(fig, shape)
    assert isinstance(again, Patch) and _sent(again)["operations"] == []
    fewer, _ = delta.figure_update(_figure(layers=["equality"]), shape)    # lines switched off: other traces
    assert isinstance(fewer, dict) and len(fewer["data"]) < len(_sent(delta.figure_update(fig)[0])["data"])
    for bad in ({"shape": shape["shape"], "parts": shape["parts"][:-1]}, {"shape": 1}, "junk", 7):
        assert isinstance(delta.figure_update(fig, bad)[0], dict)


def test_encode_turns_numeric_arrays_into_typed_arrays():
    out = delta.encode({"a": np.arange(3, dtype=np.float32), "b": [np.int8(2)], "c": np.array(["x"], dtype=object)})
    assert out["a"]["dtype"] == "f4" and out["b"] == [2] and out["c"] == ["x"]
    assert np.array_equal(np.frombuffer(__import__("base64").b64decode(out["a"]["bdata"]), np.float32), [0, 1, 2])


@pytest.fixture(scope="module")
def served():
    """`thermoplane serve` on a free port, with the app object that describes its callbacks."""
    from tests.conftest import ROOT, free_port, start_process, stop_process
    from thermoplane.app.main import create_app
    (ROOT / ".pytest_cache").mkdir(exist_ok=True)
    port = free_port()
    url = f"http://127.0.0.1:{port}/"
    proc = start_process([sys.executable, "-m", "thermoplane.app.cli", "serve", "--port", str(port)], url,
                         "serve_delta.log")
    yield url, create_app()
    stop_process(proc)


def test_a_composition_change_through_the_server_sends_at_most_half_a_megabyte(served):
    """The default 300 x 300 map with the full physics, as the browser asks for it (gzip accepted)."""
    import requests
    from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
    url, app = served
    c = view_to_controls(DEFAULT_VIEW)
    s = requests.Session()
    post = lambda body: s.post(url + "_dash-update-component", json=body, timeout=600,
                               headers={"Accept-Encoding": "gzip"})
    first = post(map_request(app, c, "comp-X.value"))
    first.raise_for_status()
    parts = response_parts(first.json())
    shown, shape = parts["plane-graph.figure"], parts["map-shape.data"]
    assert "operations" not in shown                                         # the first map is whole
    changed = {**c, "X": 0.65, "Y": 0.33}
    r = post(map_request(app, changed, "comp-X.value", shape=shape))
    r.raise_for_status()
    wire = int(r.headers["Content-Length"])
    print(f"\ncomposition change: {wire / 1e6:.3f} MB sent ({len(r.content) / 1e6:.3f} MB of JSON; "
          f"the first map {int(first.headers['Content-Length']) / 1e6:.3f} MB)")
    assert r.headers.get("Content-Encoding") == "gzip"
    assert wire <= 0.5e6
    patch = response_parts(r.json())["plane-graph.figure"]
    assert patch.get("__dash_patch_update") and patch["operations"]
    # what the browser shows after the patch is the new composition's whole figure
    whole = response_parts(post(map_request(app, changed, "comp-X.value")).json())["plane-graph.figure"]
    assert apply_patch(shown, patch) == whole


def test_typed_arrays_are_written_as_plotly_writes_them():
    from _plotly_utils.utils import to_typed_array_spec
    rng = np.random.default_rng(3)
    for arr in (rng.normal(size=(7, 9)).astype(np.float32), rng.normal(size=5), np.arange(4, dtype=np.int8),
                rng.normal(size=(4, 6)).astype(np.float32).T, np.arange(3, dtype=np.uint16),
                np.arange(12, dtype=np.int64).reshape(3, 4), np.arange(3, dtype=">f8")):
        ours, theirs = delta.encode(arr), to_typed_array_spec(arr)
        if isinstance(theirs, dict):
            assert ours == theirs, arr.dtype
        else:                                              # what plotly leaves as an array (big-endian)
            assert isinstance(ours, np.ndarray)


def test_the_plain_figure_the_map_callback_sends_is_the_plotly_figure():
    # map_answer builds the figure as a plain dict (no plotly Figure to deep-copy): the browser gets the same JSON
    c = controls(quantity="eta")
    as_figure, _ = delta.figure_update(map_cb.update_map(**c)["figure"])
    as_dict, _ = delta.figure_update(map_cb.update_map(plain=True, **c)["figure"])
    assert _sent(as_dict) == _sent(as_figure)


def _demo_store():
    from thermoplane import physics as ph
    from thermoplane.app.callbacks.tracks import add_demo
    return add_demo(None, ph.Composition.from_xyz(0.70, 0.28, 0.02), {})


def test_a_preview_patches_the_map_and_leaves_the_tracks_as_they_are(monkeypatch):
    store = _demo_store()
    full = map_cb.map_answer({"drag": False}, None, ["comp-X.value"], **controls(X=0.70, Y=0.28, tracks=store))
    shown, shape = _sent(full["figure"]), full["shape"]
    first = next(i for i, t in enumerate(shown["data"]) if str(t.get("meta", "")).startswith("track:"))
    assert shape["tracks"][0] < shape["tracks"][1] == len(shape["parts"]) - len(shown["layout"])
    # a preview never draws the tracks (each would be evaluated again for the composition)
    import thermoplane.app.view as view_mod
    monkeypatch.setattr(view_mod.tk, "evaluate_stored", lambda *a, **k: pytest.fail("track evaluated in a preview"))
    drag = {"drag": True, "key": "X", "value": 0.65}
    pre = map_cb.map_answer(drag, shape, ["comp-drag.data"], **controls(X=0.70, Y=0.28, zauto=["auto"], tracks=store))
    assert isinstance(pre["figure"], Patch)
    ops = _sent(pre["figure"])["operations"]
    assert ["data", 0, "z"] in [op["location"] for op in ops]
    assert all(op["location"][0] != "data" or op["location"][1] < first for op in ops)
    after = apply_patch(shown, _sent(pre["figure"]))
    assert after["data"][first:] == shown["data"][first:]               # the tracks as drawn before
    # the fingerprint still describes the figure in the browser, tracks included
    a, b = shape["tracks"]
    assert pre["shape"]["shape"] == shape["shape"] and pre["shape"]["tracks"] == [a, b]
    assert pre["shape"]["parts"][a:b] == shape["parts"][a:b] and pre["shape"]["parts"][:a] != shape["parts"][:a]
    monkeypatch.undo()
    # the release draws them for the new composition: a Patch of what the browser has that gives the whole
    done = map_cb.map_answer({"drag": False}, pre["shape"], ["comp-X.value"],
                             **controls(X=0.65, Y=0.33, tracks=store))
    whole = _sent(delta.figure_update(map_cb.update_map(plain=True, **controls(X=0.65, Y=0.33, tracks=store))["figure"])[0])
    assert isinstance(done["figure"], Patch) and apply_patch(after, _sent(done["figure"])) == whole


def test_keep_tracks_falls_back_to_the_whole_figure_when_the_shown_one_does_not_match():
    fig = _figure(layers=["equality"])
    for bad in (None, "junk", {"base": "x"}, {"base": delta.fingerprint(_sent(delta.figure_update(fig)[0]))["shape"],
                                               "parts": [], "tracks": [0, 5]}):
        sent, shape = delta.figure_update(fig, bad, keep_tracks=True)
        assert isinstance(sent, dict) and shape["tracks"] is not None


def test_lists_of_plain_values_hash_and_encode_in_one_piece():
    # a track's hover texts: an object array of strings, hashed by one repr and encoded by one tolist
    texts = np.array([[f"row {i}", "β = 0.5"] for i in range(1000)], dtype=object)
    assert delta.encode(texts) == texts.tolist()
    assert delta._hash(texts) == delta._hash(texts.tolist()) != delta._hash(texts[:-1].tolist())
    mixed = np.array([{"a": np.float32(1.5)}, "x"], dtype=object)
    assert delta.encode(mixed) == [{"a": 1.5}, "x"]
