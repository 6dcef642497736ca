"""gzip for the JSON the server sends (the callbacks' answers: maps, tables), when the browser accepts it.

A map's values travel as base64 typed arrays; gzip takes about half of them off the wire
(tests/benchmarks/bench_app.py prints the bytes before and after). Level 1: most of the gain for a few
milliseconds per map. Only JSON answers over :data:`MIN_BYTES`; the scripts and styles the page loads are
left alone (they are cached by the browser).

Where the base64 of a float typed array (the shaded values: 0.5 MB of a 300 x 300 map's 0.7 MB Patch) holds
few repeats, it is coded with Huffman codes only: level 1's search for repeats costs ~3x the time there
and saves little (the mantissas repeat nowhere). Each :data:`CHUNK_BYTES` of such a run is judged by
level 1 on its first :data:`SAMPLE_BYTES`: a categorical map (the regime codes) or a blank stretch packs to
a few per cent and stays at level 1. :func:`gzip_json` writes one gzip member whose deflate stream is the
concatenation of one raw stream per stretch, each but the last ended by a sync flush (byte-aligned, not
final), as parallel gzip writers do; any gzip reader inflates it (RFC 1951: a block need not refer to
earlier data). Measured on a composition change (default view): 0.38 MB in ~6 ms, was 0.37 MB in ~14 ms.
"""

from __future__ import annotations

import struct
import zlib

__all__ = ["MIN_BYTES", "LEVEL", "FLOAT_RUN_BYTES", "CHUNK_BYTES", "SAMPLE_BYTES", "HUFFMAN_ABOVE",
           "enable_gzip", "gzip_json"]

#: Answers shorter than this go as they are (one network packet).
MIN_BYTES = 1400
#: zlib level: 1 is the fastest (about 12 ms for a 0.85 MB figure) and within 5 % of the best size here.
LEVEL = 1
#: Float typed arrays whose base64 is shorter than this are left to level 1 (not worth streams of their own).
FLOAT_RUN_BYTES = 16384
#: A float run is judged in pieces this long, each by level 1 on its first SAMPLE_BYTES: Huffman codes only
#: where that sample packs to more than HUFFMAN_ABOVE of its length. Our choice, measured on the map's
#: answers (default view, regime, η, Γ₁, ε_pp, mean ionization): as many bytes as level 1 within 3 %.
CHUNK_BYTES = 32768
SAMPLE_BYTES = 2048
HUFFMAN_ABOVE = 0.6

# the typed arrays app.delta writes: {"dtype":"f4","bdata":"..."} (JSON as Dash writes it: no spaces; base64
# has no quote; plotly's JSON encoder writes its "/" as "\u002f"). Found with bytes.find (a regular
# expression over the base64 took ~1.5 ms a map).
_BDATA = b'"bdata":"'
_FLOAT_DTYPES = (b'"dtype":"f4",', b'"dtype":"f8",')


def _float_runs(body: bytes):
    """[start, end) of the base64 of each float typed array at least :data:`FLOAT_RUN_BYTES` long."""
    pos = 0
    while True:
        i = body.find(_BDATA, pos)
        if i < 0:
            return
        start = i + len(_BDATA)
        end = body.find(b'"', start)
        if end < 0:
            return
        if end - start >= FLOAT_RUN_BYTES and body[i - len(_FLOAT_DTYPES[0]):i] in _FLOAT_DTYPES:
            yield start, end
        pos = end + 1


# gzip header (RFC 1952): magic, deflate, no flags, mtime 0, extra flags 4 (fastest), OS unknown
_HEADER = b"\x1f\x8b\x08\x00\x00\x00\x00\x00\x04\xff"


def _few_repeats(piece) -> bool:
    """Whether level 1 packs the start of ``piece`` to more than :data:`HUFFMAN_ABOVE` of its length."""
    sample = piece[:SAMPLE_BYTES]
    c = zlib.compressobj(LEVEL, zlib.DEFLATED, -15, 8)
    return len(c.compress(sample)) + len(c.flush()) > HUFFMAN_ABOVE * len(sample)


def _stretches(body: bytes):
    """(start, end, zlib strategy) covering ``body`` in order, neighbours with the same strategy merged."""
    view = memoryview(body)
    out = []

    def add(a, b, strategy):
        if b <= a:
            return
        if out and out[-1][2] == strategy:
            out[-1] = (out[-1][0], b, strategy)
        else:
            out.append((a, b, strategy))

    start = 0
    for a, b in _float_runs(body):
        add(start, a, zlib.Z_DEFAULT_STRATEGY)
        for c in range(a, b, CHUNK_BYTES):
            e = min(c + CHUNK_BYTES, b)
            add(c, e, zlib.Z_HUFFMAN_ONLY if _few_repeats(view[c:e]) else zlib.Z_DEFAULT_STRATEGY)
        start = b
    add(start, len(body), zlib.Z_DEFAULT_STRATEGY)
    return out or [(0, 0, zlib.Z_DEFAULT_STRATEGY)]


def gzip_json(body: bytes) -> bytes:
    """``body`` as one gzip member: level :data:`LEVEL`, Huffman codes only where float arrays' base64 holds
    few repeats. Inflates to ``body`` exactly (tests/app/test_delta.py)."""
    view = memoryview(body)
    stretches = _stretches(body)
    out = [_HEADER]
    for i, (a, b, strategy) in enumerate(stretches):
        c = zlib.compressobj(LEVEL, zlib.DEFLATED, -15, 8, strategy)
        out.append(c.compress(view[a:b]))
        out.append(c.flush(zlib.Z_FINISH if i == len(stretches) - 1 else zlib.Z_SYNC_FLUSH))
    out.append(struct.pack("<II", zlib.crc32(body), len(body) & 0xFFFFFFFF))
    return b"".join(out)


def enable_gzip(server) -> None:
    """Compress the JSON responses of a Flask ``server`` for clients that send ``Accept-Encoding: gzip``."""

    @server.after_request
    def _gzip(response):
        if (response.status_code != 200 or response.direct_passthrough or response.is_streamed
                or response.mimetype != "application/json" or "Content-Encoding" in response.headers):
            return response
        response.vary.add("Accept-Encoding")
        from flask import request
        if "gzip" not in request.headers.get("Accept-Encoding", "").lower():
            return response
        body = response.get_data()
        if len(body) < MIN_BYTES:
            return response
        response.set_data(gzip_json(body))
        response.headers["Content-Encoding"] = "gzip"
        return response
