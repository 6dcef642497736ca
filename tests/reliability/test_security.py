"""app.security: body limit (413), security headers, generic errors, CSV cells."""

from __future__ import annotations

import http.client
import io
import json
import logging
import urllib.parse

import numpy as np
import pandas as pd
import pytest

from thermoplane.app import security
from thermoplane.app.security import GENERIC_ERROR, SECURITY_HEADERS, body_limit, harden, neutralise_csv, safe_csv_cell
from tests.reliability import dash_client as dc

LEAKS = ("Traceback", "/work", ".py", "File \"")


@pytest.fixture(scope="module")
def app():
    from thermoplane.app.main import create_app
    a = create_app()
    harden(a)
    return a


@pytest.fixture(scope="module")
def client(app):
    return app.server.test_client()


def assert_headers(headers):
    for name, value in SECURITY_HEADERS.items():
        assert headers.get(name) == value, name
    assert headers["X-Content-Type-Options"] == "nosniff"
    assert "frame-ancestors" in headers["Content-Security-Policy"]
    # a script-src policy would stop Dash's inline config and renderer start-up scripts
    assert "script-src" not in headers["Content-Security-Policy"]


# ---------------------------------------------------------------- headers
def test_headers_on_the_page_the_layout_and_callbacks(client):
    page = client.get("/")
    assert page.status_code == 200 and b"Thermoplane" in page.data
    assert_headers(page.headers)
    assert_headers(client.get("/_dash-layout").headers)
    deps = client.get("/_dash-dependencies").get_json()
    values = dc.layout_values(client.get("/_dash-layout").get_json())
    point = next(d for d in dc.server_callbacks(deps)
                 if any(i["property"] == "clickData" for i in d["inputs"]))
    r = client.post(dc.UPDATE, data=dc.encode(dc.body(point, values)), content_type="application/json")
    assert r.status_code in (200, 204)
    assert_headers(r.headers)
    # error responses carry them too
    assert_headers(client.get("/_dash-component-suites/nope/nothing.js").headers)


def test_harden_twice_registers_each_hook_once(app):
    before = {k: list(v) for k, v in app.server.before_request_funcs.items()}
    after = {k: list(v) for k, v in app.server.after_request_funcs.items()}
    harden(app)
    assert {k: list(v) for k, v in app.server.before_request_funcs.items()} == before
    assert {k: list(v) for k, v in app.server.after_request_funcs.items()} == after
    r = app.server.test_client().get("/")
    # one value per header, not two
    assert r.headers.getlist("X-Frame-Options") == ["DENY"]


@pytest.mark.parametrize("bad", [0, -1, 2.5, "25MB", True])
def test_bad_limits_are_refused(app, bad):
    limit = app.server.config["MAX_CONTENT_LENGTH"]
    with pytest.raises(ValueError, match="positive integer"):
        harden(app, max_upload_bytes=bad)
    with pytest.raises(ValueError, match="max_body_bytes"):
        harden(app, max_body_bytes=bad)
    assert app.server.config["MAX_CONTENT_LENGTH"] == limit     # a refused call changes nothing


def test_body_limit_carries_one_base64_file_at_the_upload_limit():
    # RFC 4648: base64 turns every 3 bytes (rounded up) into 4 characters
    assert body_limit(3) == 4 + security.BODY_MARGIN
    assert body_limit(4) == 8 + security.BODY_MARGIN
    assert body_limit(25 * 2**20) > 25 * 2**20 * 4 / 3


# ---------------------------------------------------------------- 413
def test_declared_length_over_the_limit_is_refused_before_reading(client, app):
    limit = app.server.config["MAX_CONTENT_LENGTH"]
    stream = io.BytesIO(b"{}")
    # the test client measures the stream itself, so the declared length goes in the environ
    r = client.post(dc.UPDATE, input_stream=stream, content_type="application/json",
                    environ_overrides={"CONTENT_LENGTH": str(limit + 1)})
    assert r.status_code == 413
    assert b"larger than this server accepts" in r.data
    assert stream.tell() == 0                          # not one byte of the body was read
    assert_headers(r.headers)


@pytest.mark.parametrize("extra", [20, 10**6])
def test_chunked_body_over_the_limit_is_refused(client, app, extra):
    limit = app.server.config["MAX_CONTENT_LENGTH"]
    stream = io.BytesIO(b" " * (limit + extra))
    # no Content-Length; a server that decodes chunked transfer sets wsgi.input_terminated
    r = client.post(dc.UPDATE, input_stream=stream, content_type="application/json",
                    headers={"Transfer-Encoding": "chunked"},
                    environ_overrides={"wsgi.input_terminated": True, "CONTENT_LENGTH": ""})
    assert r.status_code == 413
    assert stream.tell() <= limit + 1                  # read up to one byte past the limit, no further


def test_chunked_body_under_the_limit_reaches_the_callback(client):
    deps = client.get("/_dash-dependencies").get_json()
    values = dc.layout_values(client.get("/_dash-layout").get_json())
    point = next(d for d in dc.server_callbacks(deps) if any(i["property"] == "clickData" for i in d["inputs"]))
    data = dc.encode(dc.body(point, values))
    r = client.post(dc.UPDATE, input_stream=io.BytesIO(data), content_type="application/json",
                    headers={"Transfer-Encoding": "chunked"},
                    environ_overrides={"wsgi.input_terminated": True, "CONTENT_LENGTH": ""})
    assert r.status_code in (200, 204)


def test_body_just_under_the_limit_is_read(client, app):
    small = app.server.test_client()
    harden(app, max_upload_bytes=1000)                 # idempotent: only the limit changes
    try:
        limit = app.server.config["MAX_CONTENT_LENGTH"]
        assert limit == body_limit(1000)
        r = small.post(dc.UPDATE, data=b" " * (limit - 2) + b"{}", content_type="application/json")
        assert r.status_code == 400                    # read and judged (an empty object), not 413
        r = small.post(dc.UPDATE, data=b" " * (limit + 1), content_type="application/json")
        assert r.status_code == 413
    finally:
        harden(app)


def _raw_request(url: str, method: str, path: str, headers: dict, chunks):
    u = urllib.parse.urlsplit(url)
    conn = http.client.HTTPConnection(u.hostname, u.port, timeout=60)
    try:
        conn.putrequest(method, path)
        for k, v in headers.items():
            conn.putheader(k, v)
        conn.endheaders()
        try:
            for chunk in chunks:
                conn.send(chunk)
        except (BrokenPipeError, ConnectionResetError):
            pass                                       # the server stopped reading: expected
        resp = conn.getresponse()
        return resp.status, resp.read()
    finally:
        conn.close()


def test_gunicorn_refuses_an_oversized_upload_with_413(gunicorn_server):
    limit = body_limit()
    # a real Content-Length over the limit: answered without the body being sent at all
    status, body = _raw_request(gunicorn_server.url, "POST", "/_dash-update-component",
                                {"Content-Type": "application/json", "Content-Length": str(limit + 1)}, [])
    assert status == 413 and b"larger than this server accepts" in body

    # a chunked body with no length, larger than the limit
    piece = b" " * (1024 * 1024)
    n = limit // len(piece) + 2

    def chunked():
        for _ in range(n):
            yield b"%x\r\n" % len(piece) + piece + b"\r\n"
        yield b"0\r\n\r\n"

    status, body = _raw_request(gunicorn_server.url, "POST", "/_dash-update-component",
                                {"Content-Type": "application/json", "Transfer-Encoding": "chunked"}, chunked())
    assert status == 413, body[:200]


# ---------------------------------------------------------------- errors
def test_forced_exception_is_a_generic_message_and_logged(caplog):
    from thermoplane.app.main import create_app
    a = create_app()
    harden(a)

    @a.server.route("/boom")
    def boom():
        raise RuntimeError(f"secret detail in {__file__}")

    with caplog.at_level(logging.ERROR, logger="thermoplane"):
        r = a.server.test_client().get("/boom")
    assert r.status_code == 500
    text = r.get_data(as_text=True)
    assert text.strip() == GENERIC_ERROR
    assert not any(leak in text for leak in LEAKS) and "secret" not in text
    assert r.mimetype == "text/plain"
    assert_headers(r.headers)
    # the details went to the server log instead
    assert any("secret detail" in rec.getMessage() or (rec.exc_info and "secret detail" in str(rec.exc_info[1]))
               for rec in caplog.records)


def test_exception_inside_a_callback_does_not_reach_the_browser(caplog):
    from dash import Input, Output

    from thermoplane.app.main import create_app
    a = create_app()

    # a callback that fails the way a bug would, with a server path in its message
    @a.callback(Output("boom-out", "children"), Input("boom-in", "value"))
    def boom(value):
        raise RuntimeError(f"/work/main/physics/eos.py exploded on {value!r}")

    harden(a)
    body = {"output": "boom-out.children", "outputs": {"id": "boom-out", "property": "children"},
            "inputs": [{"id": "boom-in", "property": "value", "value": 1}], "state": [],
            "changedPropIds": ["boom-in.value"]}
    with caplog.at_level(logging.ERROR, logger="thermoplane"):
        r = a.server.test_client().post(dc.UPDATE, json=body)
    text = r.get_data(as_text=True)
    assert r.status_code == 500 and text.strip() == GENERIC_ERROR
    assert not any(leak in text for leak in LEAKS)
    assert any(rec.exc_info and "exploded" in str(rec.exc_info[1]) for rec in caplog.records)


def test_unknown_paths_and_methods_keep_their_status(client):
    assert client.post("/").status_code == 405
    r = client.post(dc.UPDATE, data=b"{not json", content_type="application/json")
    assert r.status_code == 400
    assert "Traceback" not in r.get_data(as_text=True)


@pytest.mark.parametrize("body", [
    [], "text", {"output": 3}, {"output": "nope.children"},
    {"output": None, "inputs": []},
])
def test_malformed_callback_bodies_are_400(client, body):
    r = client.post(dc.UPDATE, data=json.dumps(body), content_type="application/json")
    assert r.status_code == 400
    assert "Malformed callback request" in r.get_data(as_text=True)


def test_callback_body_with_wrong_inputs_is_400(client):
    deps = client.get("/_dash-dependencies").get_json()
    values = dc.layout_values(client.get("/_dash-layout").get_json())
    cb = dc.server_callbacks(deps)[0]
    good = dc.body(cb, values)
    for broken in ({**good, "inputs": good["inputs"][:-1]}, {**good, "inputs": "x"},
                   {**good, "state": [1] * len(cb["state"]) if cb["state"] else [1]},
                   {**good, "inputs": [{"id": "a"}] * len(good["inputs"])},
                   {**good, "changedPropIds": [1]}):
        r = client.post(dc.UPDATE, data=json.dumps(broken), content_type="application/json")
        assert r.status_code == 400, broken


# ---------------------------------------------------------------- CSV
@pytest.mark.parametrize("cell, expected", [
    ("=1+2", "'=1+2"), ("+49 30", "'+49 30"), ("-x", "'-x"), ("@SUM(A1)", "'@SUM(A1)"),
    ("\tcmd", "'\tcmd"), ("\rcmd", "'\rcmd"), ("model", "model"), ("", ""), ("a=b", "a=b"),
    (-1.5, -1.5), (3, 3), (None, None),
])
def test_safe_csv_cell(cell, expected):
    # OWASP "CSV Injection" guidance (common practice, no source): quote formula starts
    assert safe_csv_cell(cell) == expected


def test_neutralise_csv_leaves_numbers_and_quotes_text():
    df = pd.DataFrame({"x": [-1.0, 2.0, np.nan], "n": [-3, 4, 5], "label": ["=HYPERLINK(1)", "-1", "ok"],
                       "=bad": ["a", "b", "c"]})
    out = neutralise_csv(df)
    assert out["x"].dtype == df["x"].dtype and out["x"].iloc[0] == -1.0 and np.isnan(out["x"].iloc[2])
    assert out["n"].tolist() == [-3, 4, 5]
    assert out["label"].tolist() == ["'=HYPERLINK(1)", "'-1", "ok"]
    assert list(out.columns) == ["x", "n", "label", "'=bad"]
    assert df["label"].iloc[0] == "=HYPERLINK(1)"      # the input is not changed
    with pytest.raises(ValueError, match="DataFrame"):
        neutralise_csv([["=1"]])
