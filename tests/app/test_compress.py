"""The gzip of the server's JSON answers (app.compress): one gzip member that inflates to the answer exactly,
Huffman codes only where a float array holds few repeats, no larger than plain level 1 by more than a little."""

from __future__ import annotations

import base64
import gzip
import json
import zlib

import numpy as np
import pytest

from thermoplane.app import compress
from tests.app.dash_requests import map_request


def _inflate_one_member(data: bytes) -> bytes:
    """The content of ``data`` read as exactly one gzip member (a second member or trailing bytes fail)."""
    d = zlib.decompressobj(31)
    out = d.decompress(data) + d.flush()
    assert d.eof and d.unused_data == b""
    return out


def _typed(arr: np.ndarray) -> dict:
    return {"dtype": {"float32": "f4", "float64": "f8", "int8": "i1"}[arr.dtype.name],
            "bdata": base64.b64encode(arr.tobytes()).decode()}


def _body(*arrays) -> bytes:
    """JSON written as Dash writes a callback's answer (plotly's encoder: "/" as "\\u002f")."""
    from dash._utils import to_json
    return to_json({"response": {"plane-graph": {"figure": [_typed(a) for a in arrays]}}}).encode()


@pytest.mark.parametrize("n", [0, 1, 1399, 5000])
def test_short_and_plain_bodies_inflate_to_themselves(n):
    body = bytes(np.random.default_rng(n).integers(32, 127, n, dtype=np.uint8))
    assert _inflate_one_member(compress.gzip_json(body)) == body
    assert gzip.decompress(compress.gzip_json(body)) == body


def test_float_runs_are_found_with_their_escapes_and_only_float_arrays():
    rng = np.random.default_rng(1)
    noisy = rng.normal(size=40000).astype(np.float32)            # base64 with "/" (written "\\u002f")
    codes = rng.integers(0, 5, 60000).astype(np.int8)
    short = rng.normal(size=100).astype(np.float32)
    body = _body(codes, noisy, short, noisy.astype(np.float64))
    runs = list(compress._float_runs(body))
    assert len(runs) == 2                                        # the two long float arrays, not the codes
    for (a, b), arr in zip(runs, (noisy, noisy.astype(np.float64))):
        text = body[a:b].decode().replace("\\u002f", "/")
        assert np.array_equal(np.frombuffer(base64.b64decode(text), arr.dtype), arr)


def test_mixed_strategies_inflate_exactly_and_stay_near_level_one():
    rng = np.random.default_rng(2)
    noisy = rng.normal(size=(300, 300)).astype(np.float32)                       # few repeats: Huffman
    codes = np.repeat(np.arange(9), 10000).astype(np.float32).reshape(300, 300)  # categorical: level 1
    half = noisy.copy()
    half[:150] = np.nan                                                           # a blank half
    for arrays in ((noisy,), (codes,), (half,), (codes, noisy, half), (noisy, rng.integers(0, 9, 90000).astype(np.int8))):
        body = _body(*arrays)
        packed = compress.gzip_json(body)
        assert _inflate_one_member(packed) == body
        plain = gzip.compress(body, compress.LEVEL, mtime=0)
        assert len(packed) <= 1.25 * len(plain) + 100
    strategies = {s for _, _, s in compress._stretches(_body(codes, noisy))}
    assert strategies == {zlib.Z_DEFAULT_STRATEGY, zlib.Z_HUFFMAN_ONLY}
    assert {s for _, _, s in compress._stretches(_body(codes))} == {zlib.Z_DEFAULT_STRATEGY}


@pytest.mark.parametrize("quantity", ["log_prad_pgas", "regime", "eta", "gamma1"])
def test_map_answers_through_the_app_inflate_to_the_json(quantity):
    """A map answer as the server sends it to a browser that accepts gzip: the same JSON as without gzip."""
    from thermoplane.app.main import create_app
    from thermoplane.app.state import DEFAULT_VIEW, view_to_controls
    app = create_app()
    client = app.server.test_client()
    body = map_request(app, {**view_to_controls(DEFAULT_VIEW), "quantity": quantity, "resolution": 120},
                       "map-quantity.value")
    plain = client.post("/_dash-update-component", json=body)
    packed = client.post("/_dash-update-component", json=body, headers={"Accept-Encoding": "gzip"})
    assert packed.headers["Content-Encoding"] == "gzip" and "Content-Encoding" not in plain.headers
    assert _inflate_one_member(packed.get_data()) == plain.get_data()
    assert json.loads(plain.get_data())["response"]["plane-graph"]["figure"]["data"]
