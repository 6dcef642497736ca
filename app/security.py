"""Safe defaults for a dashboard shared by a group: body limits, headers, errors, CSV cells.

:func:`harden` is called once on the Dash app (``create_app`` does it). It

- refuses request bodies over the upload limit with HTTP 413 before they are
  read whole: Flask's ``MAX_CONTENT_LENGTH`` caps what the WSGI input stream
  yields, and a ``before_request`` hook turns a declared ``Content-Length``
  over the limit away before any byte is read, and reads a chunked body
  (no declared length) itself, at most limit + 1 bytes, refusing it with 413
  as soon as it passes the limit;
- adds ``X-Content-Type-Options: nosniff``, ``X-Frame-Options: DENY``, a
  ``Content-Security-Policy`` of ``frame-ancestors 'none'`` (only the frame
  policy: Dash writes its configuration and renderer start-up into inline
  script tags, so a ``script-src`` policy would break the page) and
  ``Referrer-Policy: same-origin`` to every response;
- turns every unhandled exception into HTTP 500 with one plain sentence (no
  traceback, no server path, no exception text), the details going to the
  ``thermoplane`` logger instead.

:func:`safe_csv_cell` and :func:`neutralise_csv` keep exported CSV safe to
open in a spreadsheet: a text cell that begins with ``=``, ``+``, ``-``, ``@``,
a tab or a carriage return would be read as a formula, so it gets a leading
single quote; numbers are left alone.
"""

from __future__ import annotations

import io
import logging
import numbers

import numpy as np
import pandas as pd

__all__ = ["MAX_UPLOAD_BYTES", "BODY_MARGIN", "body_limit", "SECURITY_HEADERS", "GENERIC_ERROR", "TOO_LARGE", "harden",
           "safe_csv_cell", "neutralise_csv"]

#: Largest accepted request body, in bytes (25 MB, the upload limit of :mod:`app.upload`).
MAX_UPLOAD_BYTES = 25 * 1024 * 1024

#: Room in a request body for everything besides the uploaded files (the other callback inputs
#: and state, JSON punctuation, the data-URL prefix), in bytes.
BODY_MARGIN = 4 * 1024 * 1024

#: Headers added to every response.
SECURITY_HEADERS = {
    "X-Content-Type-Options": "nosniff",
    "X-Frame-Options": "DENY",
    "Content-Security-Policy": "frame-ancestors 'none'",
    "Referrer-Policy": "same-origin",
}

#: The whole body of a 500 response.
GENERIC_ERROR = ("Something went wrong on the server while handling this request. "
                 "Nothing was saved; try again, and tell whoever runs this server if it keeps happening.")

#: The body of a 413 response (``{limit}`` is filled in with the limit in MB).
TOO_LARGE = ("The request is larger than this server accepts ({limit}). "
             "Upload a shorter or gzip-compressed table.")

_EXTENSION = "thermoplane_security"
_READ_CHUNK = 256 * 1024
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")

log = logging.getLogger("thermoplane")


def _mb(n_bytes: int) -> str:
    return f"{n_bytes / 2**20:.3g} MB"


def body_limit(max_upload_bytes: int = MAX_UPLOAD_BYTES) -> int:
    """Largest request body, in bytes, that can carry an upload of ``max_upload_bytes``.

    Parameters
    ----------
    max_upload_bytes : int
        Largest accepted file, > 0.

    Returns
    -------
    int
        ``4 * ceil(max_upload_bytes / 3) + BODY_MARGIN``.

    Raises
    ------
    ValueError
        ``max_upload_bytes`` not a positive integer.

    Notes
    -----
    The browser sends an uploaded file inside the callback's JSON as a
    base64 data URL: 4 characters for every 3 bytes (RFC 4648, section 4),
    rounded up to whole groups. :data:`BODY_MARGIN` covers the rest of the
    body. The file itself is checked again against the same limit when it is
    decoded (:func:`app.upload.read_table`).
    """
    _check_bytes("max_upload_bytes", max_upload_bytes)
    return 4 * -(-int(max_upload_bytes) // 3) + BODY_MARGIN


def _check_bytes(name: str, value) -> None:
    if isinstance(value, bool) or not isinstance(value, numbers.Integral) or value <= 0:
        raise ValueError(f"{name} must be a positive integer number of bytes, got {value!r}")


def harden(app, max_upload_bytes: int = MAX_UPLOAD_BYTES, max_body_bytes: int | None = None):
    """Apply the body limit, security headers and generic error pages to a Dash app.

    Parameters
    ----------
    app : dash.Dash
        The dashboard; its Flask server is ``app.server``.
    max_upload_bytes : int
        Largest accepted uploaded file in bytes, > 0 (default 25 MB, as
        :data:`app.upload.MAX_BYTES`).
    max_body_bytes : int, optional
        Largest accepted request body in bytes, > 0. Default
        :func:`body_limit` of ``max_upload_bytes``: the body that carries one
        file of that size base64-encoded, plus :data:`BODY_MARGIN`. Anything
        larger gets HTTP 413.

    Returns
    -------
    dash.Dash
        The same app, for chaining.

    Raises
    ------
    ValueError
        ``max_upload_bytes`` or ``max_body_bytes`` not a positive integer.

    Notes
    -----
    Idempotent: a second call only updates the limit; hooks and handlers are
    registered once. Werkzeug's HTTP exceptions (404, 405, 400, 413, ...)
    keep their status codes; only other exceptions become the generic 500.
    In ``--debug`` mode Dash registers its own exception handler (with the
    traceback, for the developer) after this one, and that one wins.
    """
    if max_body_bytes is None:
        max_body_bytes = body_limit(max_upload_bytes)
    _check_bytes("max_body_bytes", max_body_bytes)
    import flask
    from werkzeug.exceptions import HTTPException, InternalServerError, RequestEntityTooLarge

    server = app.server
    server.config["MAX_CONTENT_LENGTH"] = int(max_body_bytes)
    state = server.extensions.get(_EXTENSION)
    if state is not None:                      # already hardened: only the limit may change
        state["max_bytes"] = int(max_body_bytes)
        return app
    state = {"max_bytes": int(max_body_bytes)}
    server.extensions[_EXTENSION] = state

    def plain(text: str, status: int) -> flask.Response:
        return flask.Response(text + "\n", status=status, mimetype="text/plain")

    def too_large(_err=None) -> flask.Response:
        return plain(TOO_LARGE.format(limit=_mb(state["max_bytes"])), 413)

    @server.before_request
    def _refuse_large_bodies():
        # A declared length over the limit is refused before a byte of the body is read.
        length = flask.request.content_length
        if length is not None:
            return too_large() if length > state["max_bytes"] else None
        env = flask.request.environ
        if "chunked" not in env.get("HTTP_TRANSFER_ENCODING", "").lower():
            return None
        # A chunked body has no declared length, and Werkzeug would silently cut it at the
        # limit (a truncated upload, not a refusal): read it here, at most limit + 1 bytes.
        limit = state["max_bytes"]
        raw = env["wsgi.input"]
        buf = bytearray()
        while len(buf) <= limit:
            chunk = raw.read(min(_READ_CHUNK, limit + 1 - len(buf)))
            if not chunk:
                break
            buf += chunk
        if len(buf) > limit:
            return too_large()
        env["wsgi.input"] = io.BytesIO(bytes(buf))
        env["CONTENT_LENGTH"] = str(len(buf))
        return None

    @server.before_request
    def _refuse_malformed_callbacks():
        # Dash indexes the body without checking it; a hand-made body would become a 500.
        if flask.request.method == "POST" and flask.request.path.endswith("/_dash-update-component"):
            problem = _callback_body_problem(app, flask.request.get_json(silent=True))
            if problem:
                return plain(f"Malformed callback request: {problem}.", 400)
        return None

    @server.after_request
    def _security_headers(response):
        for name, value in SECURITY_HEADERS.items():
            response.headers.setdefault(name, value)
        return response

    @server.errorhandler(RequestEntityTooLarge)
    def _too_large(err):
        return too_large(err)

    @server.errorhandler(HTTPException)
    def _http_error(err):
        # Werkzeug's own pages carry no traceback; keep their status, add nothing.
        if err.code is not None and err.code >= 500:
            log.error("HTTP %s on %s %s: %r", err.code, flask.request.method, flask.request.path, err)
            return plain(GENERIC_ERROR, err.code)
        return err

    @server.errorhandler(InternalServerError)
    def _internal_error(err):
        original = getattr(err, "original_exception", None) or err
        log.error("unhandled error on %s %s", flask.request.method, flask.request.path,
                  exc_info=(type(original), original, original.__traceback__))
        return plain(GENERIC_ERROR, 500)

    @server.errorhandler(Exception)
    def _any_error(err):
        if isinstance(err, HTTPException):      # reached only for subclasses handled above
            return _http_error(err)
        log.error("unhandled error on %s %s", flask.request.method, flask.request.path,
                  exc_info=(type(err), err, err.__traceback__))
        return plain(GENERIC_ERROR, 500)

    return app


def _items_ok(items, expected: int) -> bool:
    if not isinstance(items, list) or len(items) != expected:
        return False
    for item in items:
        group = item if isinstance(item, list) else [item]   # pattern-matching inputs come as lists
        for one in group:
            if not (isinstance(one, dict) and "id" in one and isinstance(one.get("property"), str)
                    and isinstance(one["id"], (str, dict))):
                return False
    return True


def _callback_body_problem(app, body) -> str:
    """Why ``body`` is not a callback request this app can run ("" when it is)."""
    if not isinstance(body, dict):
        return "the body is not a JSON object"
    output = body.get("output")
    if not isinstance(output, str) or output not in app.callback_map:
        return "unknown output"
    cb = app.callback_map[output]
    if not _items_ok(body.get("inputs"), len(cb.get("inputs", []))):
        return "inputs do not match the callback"
    if not _items_ok(body.get("state", []), len(cb.get("state", []))):
        return "state does not match the callback"
    outputs = body.get("outputs")
    if outputs is not None and not isinstance(outputs, (list, dict)):
        return "outputs must be a list or an object"
    changed = body.get("changedPropIds", [])
    if not (isinstance(changed, list) and all(isinstance(c, str) for c in changed)):
        return "changedPropIds must be a list of strings"
    return ""


def safe_csv_cell(value):
    """One cell made safe for a spreadsheet.

    Parameters
    ----------
    value : object
        A cell value.

    Returns
    -------
    object
        ``"'" + value`` for a string beginning with ``=``, ``+``, ``-``, ``@``,
        a tab or a carriage return; every other value (numbers, NaN, None,
        other strings) unchanged.

    Notes
    -----
    Spreadsheets read such a cell as a formula ("CSV injection"); the OWASP
    guidance (OWASP Foundation, "CSV Injection", common practice) is to
    prefix it with a single quote, which spreadsheets show as text. Numbers
    (``-1.5`` as a float) are never touched, so a numeric column stays
    numeric.
    """
    if isinstance(value, (str, np.str_)) and value.startswith(_FORMULA_START):
        return "'" + str(value)
    return value


def neutralise_csv(df: pd.DataFrame) -> pd.DataFrame:
    """A copy of ``df`` with every text cell (and column name) passed through :func:`safe_csv_cell`.

    Parameters
    ----------
    df : pandas.DataFrame
        The table to export.

    Returns
    -------
    pandas.DataFrame
        A new frame; numeric columns are the same values and dtype.

    Raises
    ------
    ValueError
        ``df`` is not a DataFrame.
    """
    if not isinstance(df, pd.DataFrame):
        raise ValueError(f"neutralise_csv needs a pandas DataFrame, got {type(df).__name__}")
    out = df.copy()
    for col in out.columns:
        if not (pd.api.types.is_numeric_dtype(out[col]) or pd.api.types.is_bool_dtype(out[col])):
            out[col] = out[col].map(safe_csv_cell)
    out.columns = [safe_csv_cell(c) for c in out.columns]
    return out
