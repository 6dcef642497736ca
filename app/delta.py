"""Send only what changed: a new map figure as a Dash ``Patch`` of the one the browser shows.

The browser keeps, next to the figure, its *fingerprint* (a small ``dcc.Store``, written in the same
response as the figure, so the two never disagree): a hash of the figure's structure (how many traces,
their types and names, which properties each has, which layout properties there are) and one short hash
per property of each trace and of the layout. :func:`figure_update` compares a new figure with that
fingerprint:

- same structure: a ``Patch`` that assigns only the properties whose hash differs (after a composition
  change: the shaded values, the regime codes, the lines' coordinates, the label positions; the axes,
  the styles, the hover texts and the layout stay in the browser);
- anything else (first map, another quantity or colour scale, a line switched on, a track added): the
  whole figure.

Arrays travel as plotly.js typed arrays (``{"dtype": "f4", "bdata": base64}``): the map's values are
float32 already (:func:`app.figures.plane_figure`); a ``Patch`` does not encode numpy arrays by itself,
so :func:`encode` does it for both.
"""

from __future__ import annotations

import base64
import hashlib
import json

import numpy as np
from dash import Patch

__all__ = ["encode", "fingerprint", "figure_update"]

_DIGEST = 6                       # bytes per hash (12 hex digits): a collision needs ~1e7 changes of one property


#: numpy dtypes plotly.js reads as typed arrays, and their short names (plotly's own table)
_TYPED = {"float32": "f4", "float64": "f8", "int8": "i1", "uint8": "u1", "int16": "i2", "uint16": "u2",
          "int32": "i4", "uint32": "u4"}


def _typed_array(value: np.ndarray) -> dict:
    """The plotly.js typed-array spec of a numeric array: what plotly's ``to_typed_array_spec`` writes,
    without its per-call dataframe checks (about 0.3 ms an array, tens of arrays a map)."""
    short = _TYPED.get(value.dtype.name)
    if short is None or value.dtype.byteorder == ">":
        from _plotly_utils.utils import to_typed_array_spec
        return to_typed_array_spec(value)
    spec = {"dtype": short, "bdata": base64.b64encode(np.ascontiguousarray(value).data).decode("ascii")}
    if value.ndim > 1:
        spec["shape"] = str(value.shape)[1:-1]
    return spec


_PLAIN = (str, int, float, bool, type(None))


def _plain(value) -> bool:
    """A list (or list of lists) of plain scalars only: hashed through one repr (a track's hover texts are
    ~10^5 strings; one update each took ~0.5 s a map)."""
    return all(type(v) in _PLAIN or (type(v) in (list, tuple) and all(type(w) in _PLAIN for w in v))
               for v in value)


def encode(value):
    """``value`` with every numeric numpy array as a plotly.js typed-array spec (object arrays as lists)."""
    if isinstance(value, np.ndarray):
        if value.dtype.kind in "fiub" and value.size:
            return _typed_array(value)
        plain = value.tolist()
        return plain if isinstance(plain, list) and _plain(plain) else encode(plain)
    if isinstance(value, dict):
        return {k: encode(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [encode(v) for v in value]
    if isinstance(value, np.generic):
        return value.item()
    return value


def _feed(h, value) -> None:
    if isinstance(value, (list, tuple)) and _plain(value):
        h.update(b"R" + repr(value).encode())
        return
    if isinstance(value, np.ndarray):
        if value.dtype.kind == "O":
            _feed(h, value.tolist())
            return
        h.update(f"A{value.dtype.str}{value.shape}".encode())
        h.update(np.ascontiguousarray(value).data)             # the buffer itself: no copy
    elif isinstance(value, dict):
        h.update(b"{")
        for k in sorted(value):
            h.update(str(k).encode() + b":")
            _feed(h, value[k])
        h.update(b"}")
    elif isinstance(value, (list, tuple)):
        h.update(b"[")
        for v in value:
            _feed(h, v)
            h.update(b",")
        h.update(b"]")
    else:
        h.update(repr(value).encode())


def _hash(value) -> str:
    # SHA-256 (hardware-assisted on current x86 and ARM cores): ~2.5x faster than BLAKE2b on the map's
    # 0.45 MB of values, which were ~0.5 ms of a 300 x 300 map's fingerprint
    h = hashlib.sha256()
    _feed(h, value)
    return h.hexdigest()[:2 * _DIGEST]


def _parts(fig: dict):
    """(path, value) of every property that is replaced as a whole: each key of each trace and of the layout."""
    for i, trace in enumerate(fig.get("data") or ()):
        for k in sorted(trace):
            yield ("data", i, k), trace[k]
    layout = fig.get("layout") or {}
    for k in sorted(layout):
        yield ("layout", k), layout[k]


def _structure(fig: dict) -> str:
    shape = [[t.get("type"), t.get("meta"), t.get("name"), sorted(t)] for t in fig.get("data") or ()]
    shape.append(sorted(fig.get("layout") or {}))
    return _hash(json.dumps(shape, default=str))


#: (template object, its hash): the map's plain figures all carry the same default-template dict
#: (app.figures), a few thousand nested values that would be hashed again for every map
_TEMPLATE_MEMO = [None, ""]


def _part_hash(path, value) -> str:
    if path == ("layout", "template") and isinstance(value, dict):
        memo = _TEMPLATE_MEMO
        if memo[0] is not value:
            memo[:] = [value, _hash(value)]
        return memo[1]
    return _hash(value)


def _is_track(trace) -> bool:
    return str(trace.get("meta") or "").startswith("track:")


def _track_span(fig: dict):
    """[first, end) of the track traces' parts in :func:`_parts` order, when the tracks are the last traces
    (as app.figures draws them: over everything else); None when a track trace is followed by another."""
    data = fig.get("data") or ()
    flags = [_is_track(t) for t in data]
    first = next((i for i, f in enumerate(flags) if f), len(flags))
    if not all(flags[first:]):
        return None
    before = sum(len(t) for t in data[:first])
    return [before, before + sum(len(t) for t in data[first:])]


def fingerprint(fig: dict) -> dict:
    """The structure hash and the per-property hashes of a figure dict (what the browser store keeps),
    with ``base``, the structure hash of the figure without its track traces, and ``tracks``, where the
    tracks' part hashes sit in ``parts`` (so a preview drawn without tracks can patch the rest)."""
    base = {"data": [t for t in fig.get("data") or () if not _is_track(t)], "layout": fig.get("layout") or {}}
    return {"shape": _structure(fig), "base": _structure(base), "tracks": _track_span(fig),
            "parts": [_part_hash(p, v) for p, v in _parts(fig)]}


def _patch(d: dict, old: list, new: list) -> Patch:
    patch = Patch()
    for (path, value), was, now in zip(_parts(d), old, new):
        if was != now:
            target = patch
            for key in path[:-1]:
                target = target[key]
            target[path[-1]] = encode(value)
    return patch


def _kept_tracks(shown, new: dict):
    """(parts of the shown figure without its tracks, their span) when ``new`` (drawn without tracks) has the
    structure of the shown figure less its tracks; else None."""
    if not isinstance(shown, dict) or shown.get("base") != new["shape"]:
        return None
    parts, span = shown.get("parts"), shown.get("tracks")
    if not (isinstance(parts, list) and isinstance(span, list) and len(span) == 2
            and all(isinstance(i, int) and not isinstance(i, bool) for i in span) and 0 <= span[0] <= span[1] <= len(parts)):
        return None
    base = parts[:span[0]] + parts[span[1]:]
    return (base, span) if len(base) == len(new["parts"]) else None


def figure_update(fig, shown=None, keep_tracks: bool = False):
    """(what to send, fingerprint to store) for a new figure, given the fingerprint of the one shown.

    ``fig`` is a plotly figure or a figure dict (whose traces may be dicts or plotly trace objects);
    ``shown`` the browser's fingerprint (None or anything
    malformed: the whole figure goes). What is sent is a ``Patch`` when the structure is the same,
    else the whole figure as a dict with typed arrays.

    ``keep_tracks``: ``fig`` was drawn without the tracks (a coarse preview while a slider moves): the
    Patch leaves the track traces the browser shows where they are, and the fingerprint returned still
    describes them (the full map on release patches them if they changed).
    """
    d = fig.to_plotly_json() if hasattr(fig, "to_plotly_json") else dict(fig)
    # a plain figure dict may hold plotly trace objects (the tracks drawn over the map)
    d = {"data": [t.to_plotly_json() if hasattr(t, "to_plotly_json") else t for t in d.get("data") or ()],
         "layout": dict(d.get("layout") or {})}
    new = fingerprint(d)
    if keep_tracks:
        kept = _kept_tracks(shown, new)
        if kept is not None:
            base, (a, b) = kept
            parts = new["parts"][:a] + shown["parts"][a:b] + new["parts"][a:]
            return _patch(d, base, new["parts"]), {**new, "shape": shown["shape"], "base": new["shape"],
                                                   "tracks": [a, b], "parts": parts}
    old = shown.get("parts") if isinstance(shown, dict) and shown.get("shape") == new["shape"] else None
    if not isinstance(old, list) or len(old) != len(new["parts"]):
        return encode(d), new
    return _patch(d, old, new["parts"]), new
