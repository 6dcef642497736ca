"""Hostile input: the table reader and every server callback, fuzzed with hypothesis.

The reader may only return a DataFrame or raise TableError. A callback, sent
any value for any of its inputs (random strings, huge numbers, NaN, wrong
types, broken stores) through the real ``/_dash-update-component`` route,
must answer 200 or 204 with no traceback and no server path in the body.
The callbacks are found from ``/_dash-dependencies``, so new ones are fuzzed
as soon as they exist.
"""

from __future__ import annotations

import base64
import gzip
import json
import os

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thermoplane.app.upload import TableError, read_table
from tests.conftest import ROOT
from tests.reliability import dash_client as dc

SETTINGS = dict(deadline=None, database=None, suppress_health_check=[HealthCheck.too_slow,
                                                                       HealthCheck.function_scoped_fixture])
LEAKS = ("Traceback", 'File "/', str(ROOT))


# ---------------------------------------------------------------- the table reader
def _check_table(data: bytes, **kw) -> None:
    try:
        out = read_table(data, "fuzz.csv", **kw)
    except TableError as err:
        assert str(err)                                # a message a user can act on, never empty
        return
    assert isinstance(out, pd.DataFrame)


cell = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr), st.integers().map(str),
                 st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=8),
                 st.sampled_from(["", "nan", "1.5D+03", "1,5", '"a,b"', '"', "#", "-", "1e999", "\x00"]))
delimiter = st.sampled_from([",", "\t", ";", " ", "|", "  "])


@st.composite
def table_text(draw) -> str:
    sep = draw(delimiter)
    ncol = draw(st.integers(1, 5))
    rows = draw(st.lists(st.lists(cell, min_size=ncol, max_size=ncol + draw(st.integers(0, 1))),
                         min_size=0, max_size=12))
    header = draw(st.lists(st.sampled_from(["log_rho", "log_T", "rho", "T", "age", "X", "Y", "model", "",
                                            "logRho", "T_c", "log T", "#x"]), min_size=ncol, max_size=ncol))
    lines = [sep.join(header)] + [sep.join(r) for r in rows]
    if draw(st.booleans()):
        lines.insert(draw(st.integers(0, len(lines))), "# " + draw(st.text(max_size=20)))
    return draw(st.sampled_from(["\n", "\r\n", "\r"])).join(lines)


@settings(max_examples=150, **SETTINGS)
@given(st.binary(max_size=2000))
def test_read_table_random_bytes(data):
    _check_table(data)


@settings(max_examples=150, **SETTINGS)
@given(table_text(), st.sampled_from(["utf-8", "latin-1", "utf-16", "utf-8-sig"]), st.booleans())
def test_read_table_table_like_text(text, encoding, compress):
    try:
        data = text.encode(encoding)
    except UnicodeEncodeError:
        data = text.encode("utf-8", "replace")
    if compress:
        data = gzip.compress(data)
    _check_table(data)
    _check_table(data, max_bytes=64, max_rows=3)       # the limits raise TableError too


@settings(max_examples=60, **SETTINGS)
@given(st.binary(min_size=0, max_size=300))
def test_read_table_damaged_gzip(tail):
    good = gzip.compress(b"log_rho,log_T\n1,7\n2,7.5\n")
    _check_table(good[: len(good) // 2] + tail)
    _check_table(b"\x1f\x8b" + tail)


# ---------------------------------------------------------------- every callback
def _setup():
    from thermoplane.app.main import create_app
    from thermoplane.app.security import harden
    app = create_app()
    harden(app)
    client = app.server.test_client()
    deps = client.get("/_dash-dependencies").get_json()
    values = dc.layout_values(client.get("/_dash-layout").get_json())
    # small maps keep the fuzzing quick; the resolution is fuzzed like everything else
    values[("map-resolution", "value")] = 20
    return app, client, deps, values


_APP, _CLIENT, _DEPS, _VALUES = _setup()
CALLBACKS = dc.server_callbacks(_DEPS)


def _post(b: dict):
    return _CLIENT.post(dc.UPDATE, data=dc.encode(b), content_type="application/json")


def _realistic_stores() -> dict:
    """Real view-store and tracks-store values, so that fuzzing can break them piece by piece."""
    out = {}
    m = dc.find(_DEPS, "view-store", "data")
    if m is not None:
        r = _post(dc.body(m, _VALUES))
        out[("view-store", "data")] = dc.response_value(r.get_json(), "view-store", "data")
    up = next((d for d in CALLBACKS if any(i["id"] == "tracks-upload" and i["property"] == "contents"
                                             for i in d["inputs"])), None)
    if up is not None:
        csv = (ROOT / "assets" / "examples" / "example_central_track.csv").read_bytes()
        b = dc.body(up, _VALUES, {("tracks-upload", "contents"): [dc_data_url(csv)],
                                  ("tracks-upload", "filename"): ["track.csv"],
                                  **out}, changed=["tracks-upload.contents"])
        r = _post(b)
        if r.status_code == 200:
            store = dc.response_value(r.get_json(), "tracks-store", "data")
            if store is not None:
                out[("tracks-store", "data")] = store
    return {k: v for k, v in out.items() if v is not None}


def dc_data_url(content: bytes, mime: str = "text/csv") -> str:
    return f"data:{mime};base64," + base64.b64encode(content).decode()


STORES = _realistic_stores()
BASE = {**_VALUES, **STORES}

scalar = st.one_of(
    st.none(), st.booleans(),
    st.integers(min_value=-10**30, max_value=10**30),
    st.sampled_from([10**400, -10**400, 2**63, 0, -1, 1e308, -1e308, 5e-324]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=40),
    st.sampled_from(["", " ", "NaN", "nan", "inf", "-inf", "1e999", "0x10", "=1+1", "<script>alert(1)</script>",
                     "../../etc/passwd", "\x00", "data:text/csv;base64,!!!", "data:text/csv;base64,",
                     "data:application/gzip;base64," + base64.b64encode(b"\x1f\x8b\x08junk").decode(),
                     "X=0.7,Y=0.3", "H-1=2,He-4=-1", "1;2;3", "regime", "fermi", "saha"]),
)
hostile = st.recursive(scalar, lambda inner: st.one_of(
    st.lists(inner, max_size=5),
    st.dictionaries(st.sampled_from(["view", "query", "points", "x", "y", "X", "Y", "tracks", "name", "id",
                                     "resolution", "log_rho", "log_T", "data", "rows"]) | st.text(max_size=6),
                    inner, max_size=4)), max_leaves=12)


def _mutated(value, draw):
    """``value`` (a real store or layout value) with one nested entry replaced by something hostile."""
    if isinstance(value, dict) and value and draw(st.booleans()):
        key = draw(st.sampled_from(sorted(value, key=str)))
        return {**value, key: _mutated(value[key], draw)}
    if isinstance(value, list) and value and draw(st.booleans()):
        i = draw(st.integers(0, len(value) - 1))
        return value[:i] + [_mutated(value[i], draw)] + value[i + 1:]
    return draw(hostile)


@st.composite
def overrides_for(draw, dep):
    items = [(i["id"], i["property"]) for i in dep["inputs"] + dep["state"] if not dc.is_pattern(i["id"])]
    chosen = draw(st.lists(st.sampled_from(items), min_size=1, max_size=min(4, len(items)), unique=True)) \
        if items else []
    return {k: _mutated(BASE.get(k), draw) for k in chosen}


def _assert_clean(r, b):
    text = r.get_data(as_text=True)
    assert r.status_code in (200, 204), (r.status_code, text[:300], json.dumps(b, default=str)[:600])
    for leak in LEAKS:
        assert leak not in text, (leak, text[:300])
    if r.status_code == 200:
        assert isinstance(r.get_json(), dict)


def test_every_server_callback_answers_its_first_load():
    assert CALLBACKS, "no server callbacks found in /_dash-dependencies"
    for dep in CALLBACKS:
        b = dc.body(dep, BASE)
        _assert_clean(_post(b), b)


@pytest.mark.parametrize("dep", CALLBACKS, ids=[d["output"][:60] for d in CALLBACKS])
@settings(max_examples=int(os.environ.get("THERMOPLANE_FUZZ_EXAMPLES", "25")), **SETTINGS)
@given(data=st.data())
def test_callback_survives_hostile_inputs(dep, data):
    over = data.draw(overrides_for(dep))
    b = dc.body(dep, BASE, over)
    _assert_clean(_post(b), b)


# One wrong value of each kind in each input, one input at a time: deterministic, so a bug found
# once is found on every run (the hypothesis tests above roam further, differently each run).
SWEEP = [None, float("nan"), 10**400, "", "=1+1", [], {"a": 1}, True]


@pytest.mark.parametrize("dep", CALLBACKS, ids=[d["output"][:60] for d in CALLBACKS])
def test_callback_sweep_of_wrong_values(dep):
    problems = []
    for item in dep["inputs"] + dep["state"]:
        key = (item["id"], item["property"])
        if dc.is_pattern(item["id"]):
            continue
        for value in SWEEP:
            b = dc.body(dep, BASE, {key: value})
            r = _post(b)
            text = r.get_data(as_text=True)
            if r.status_code not in (200, 204) or any(leak in text for leak in LEAKS):
                problems.append(f"{key[0]}.{key[1]} = {str(value)[:20]!r}: HTTP {r.status_code}")
    assert not problems, f"{len(problems)} failing inputs:\n" + "\n".join(problems[:40])
