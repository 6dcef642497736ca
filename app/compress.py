"""gzip for the JSON the server sends (the callbacks' answers: maps, tables), when the browser accepts it.

A map's values travel as base64 typed arrays; gzip takes about half of them off the wire
(tests/benchmarks/bench_app.py prints the bytes before and after). Level 1: most of the gain for a few
milliseconds per map. Only JSON answers over :data:`MIN_BYTES`; the scripts and styles the page loads are
left alone (they are cached by the browser).
"""

from __future__ import annotations

import gzip

__all__ = ["MIN_BYTES", "LEVEL", "enable_gzip"]

#: Answers shorter than this go as they are (one network packet).
MIN_BYTES = 1400
#: zlib level: 1 is the fastest (about 12 ms for a 0.85 MB figure) and within 5 % of the best size here.
LEVEL = 1


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
        response.set_data(gzip.compress(body, compresslevel=LEVEL, mtime=0))
        response.headers["Content-Encoding"] = "gzip"
        return response
