"""The view: everything that defines what the map shows, as plain data, and its
round trip through the page URL.

A view is a dict (see :data:`DEFAULT_VIEW`). :func:`encode_view` turns it into a
query string, :func:`decode_view` turns any query string back into a complete
view plus a list of messages for the values it had to replace by defaults; it
never raises. :data:`CONTROLS` maps every view entry to the component property
that shows it, so the layout, the URL callback and the map callback agree.
"""

from __future__ import annotations

import math
import re
from urllib.parse import parse_qs, urlencode

from .. import physics as ph
from ..physics import eos, impact, plane, regimes
from ..physics.burning import PROCESSES

__all__ = ["DEFAULT_VIEW", "CONTROLS", "QUANTITY_NAMES", "MAP_QUANTITIES", "COLOR_CHOICES", "UI_RESOLUTION",
           "encode_view", "decode_view", "view_to_controls", "controls_to_view", "parse_number_list"]

#: Colour-scale menu: key -> (label, plotly name, diverging?). "auto" picks a
#: diverging scale for a quantity with a natural centre, viridis otherwise.
COLOR_CHOICES = {
    "auto": ("automatic (diverging where centred)", None, None),
    "viridis": ("viridis (sequential)", "Viridis", False),
    "cividis": ("cividis (sequential)", "Cividis", False),
    "magma": ("magma (sequential)", "Magma", False),
    "purple-orange": ("purple–orange (diverging)", "PuOr_r", True),
    "blue-red": ("blue–red (diverging)", "RdBu_r", True),
}
#: Every quantity the map can shade: the plane's own, then the impact of each ingredient
#: (:mod:`thermoplane.physics.impact`; new equation-of-state options join by themselves).
MAP_QUANTITIES = tuple(plane.QUANTITIES) + impact.impact_quantities()
QUANTITY_NAMES = tuple(q.name for q in MAP_QUANTITIES)
#: Resolutions offered in the page (the physics accepts more).
UI_RESOLUTION = (20, 600)
_MAX_TEXT = 200

DEFAULT_VIEW = {
    "X": 0.70,
    "Y": 0.28,
    "Z": 0.02,
    "zauto": False,
    "metals": "solar-like",
    "mix": (),                       # ((nuclide, fraction), ...)
    "mix_on": False,
    "electrons": eos.DEFAULTS["electrons"],
    "ionization": eos.DEFAULTS["ionization"],
    "coulomb": eos.DEFAULTS["coulomb"],
    "pairs": eos.DEFAULTS["pairs"],
    "log_rho": (-10.0, 10.0),
    "log_T": (3.0, 10.0),
    "resolution": 300,
    "quantity": "log_prad_pgas",
    "colorscale": "auto",
    "layers": tuple(regimes.BOUNDARY_KEYS),
    "ignition": True,
    "processes": ("pp", "triple_alpha"),
    "levels": "1, 1e3",
    "masses": "0.1, 1, 10",
    "mass_lines": True,
    "nu_ignition": True,
    "captures": True,
    "presentation": False,
}

#: view key -> (component id, property). Some view entries span two controls.
CONTROLS = {
    "X": ("comp-X", "value"), "Y": ("comp-Y", "value"), "Z": ("comp-Z", "value"),
    "zauto": ("comp-zauto", "value"), "metals": ("comp-metals", "value"),
    "mix": ("comp-mix-table", "data"), "mix_on": ("comp-mix-on", "value"),
    "electrons": ("phys-electrons", "value"), "ionization": ("phys-ionization", "value"),
    "effects": ("phys-effects", "value"),
    "rho_lo": ("map-rho-lo", "value"), "rho_hi": ("map-rho-hi", "value"),
    "T_lo": ("map-T-lo", "value"), "T_hi": ("map-T-hi", "value"),
    "resolution": ("map-resolution", "value"), "quantity": ("map-quantity", "value"),
    "colorscale": ("map-colorscale", "value"), "layers": ("map-layers", "value"),
    "overlays": ("map-overlays", "value"), "processes": ("map-processes", "value"),
    "levels": ("map-levels", "value"), "masses": ("map-masses", "value"),
    "presentation": ("presentation-store", "data"),
}


def view_to_controls(view: dict) -> dict:
    """Component values (keyed like :data:`CONTROLS`) that show ``view``."""
    v = {**DEFAULT_VIEW, **view}
    return {
        "X": v["X"], "Y": v["Y"], "Z": v["Z"], "zauto": ["auto"] if v["zauto"] else [],
        "metals": v["metals"],
        "mix": [{"nuclide": n, "fraction": f} for n, f in v["mix"]],
        "mix_on": ["on"] if v["mix_on"] else [],
        "electrons": v["electrons"], "ionization": v["ionization"],
        "effects": [k for k in ("coulomb", "pairs") if v[k]],
        "rho_lo": v["log_rho"][0], "rho_hi": v["log_rho"][1],
        "T_lo": v["log_T"][0], "T_hi": v["log_T"][1],
        "resolution": v["resolution"], "quantity": v["quantity"], "colorscale": v["colorscale"],
        "layers": list(v["layers"]),
        "overlays": [k for k in ("ignition", "mass_lines", "nu_ignition", "captures") if v[k]],
        "processes": list(v["processes"]), "levels": v["levels"], "masses": v["masses"],
        "presentation": bool(v["presentation"]),
    }


def _rows(data) -> tuple:
    out = []
    for row in data or ():
        if not isinstance(row, dict):
            continue
        name = row.get("nuclide")
        frac = row.get("fraction")
        if name in (None, "") and frac in (None, ""):
            continue
        out.append((str(name or ""), frac))
    return tuple(out)


def controls_to_view(**c) -> dict:
    """The view shown by component values (the inverse of :func:`view_to_controls`).

    Values are taken as they are (a number field may hold None or text): the
    map callback validates them and reports problems next to the control.
    """
    return {
        "X": c.get("X"), "Y": c.get("Y"), "Z": c.get("Z"),
        "zauto": "auto" in (c.get("zauto") or ()),
        "metals": c.get("metals"),
        "mix": _rows(c.get("mix")),
        "mix_on": "on" in (c.get("mix_on") or ()),
        "electrons": c.get("electrons"), "ionization": c.get("ionization"),
        "coulomb": "coulomb" in (c.get("effects") or ()), "pairs": "pairs" in (c.get("effects") or ()),
        "log_rho": (c.get("rho_lo"), c.get("rho_hi")), "log_T": (c.get("T_lo"), c.get("T_hi")),
        "resolution": c.get("resolution"), "quantity": c.get("quantity"),
        "colorscale": c.get("colorscale"),
        "layers": tuple(k for k in regimes.BOUNDARY_KEYS if k in (c.get("layers") or ())),
        "ignition": "ignition" in (c.get("overlays") or ()),
        "mass_lines": "mass_lines" in (c.get("overlays") or ()),
        "nu_ignition": "nu_ignition" in (c.get("overlays") or ()),
        "captures": "captures" in (c.get("overlays") or ()),
        "processes": tuple(p for p in PROCESSES if p in (c.get("processes") or ())),
        "levels": c.get("levels") or "", "masses": c.get("masses") or "",
        "presentation": bool(c.get("presentation")),
    }


# -- URL --------------------------------------------------------------------------

def _fmt(x) -> str:
    """Shortest text that gives the same float back (repr), integers without '.0'."""
    try:
        x = float(x)
    except (TypeError, ValueError):
        return str(x)
    return str(int(x)) if x.is_integer() and abs(x) < 1e15 else repr(x)


def encode_view(view: dict) -> str:
    """Query string (with the leading '?') that :func:`decode_view` turns back into ``view``.

    Only entries that differ from :data:`DEFAULT_VIEW` are written, so a
    default view is the empty string and links stay short.
    """
    v = {**DEFAULT_VIEW, **view}
    out = {}
    for key, default in DEFAULT_VIEW.items():
        value = v[key]
        if key in ("log_rho", "log_T"):
            text = ",".join(_fmt(x) for x in value)
            same = tuple(value) == tuple(default)
        elif key in ("layers", "processes"):
            text = ",".join(value) if value else "none"
            same = tuple(value) == tuple(default)
        elif key == "mix":
            text = ",".join(f"{n}={_fmt(f)}" for n, f in value)
            same = tuple(value) == tuple(default)
        elif isinstance(default, bool):
            text = "1" if value else "0"
            same = bool(value) == default
        elif isinstance(default, (int, float)):
            text = _fmt(value)
            same = value == default
        else:
            text = "" if value is None else str(value)
            same = value == default
        if not same:
            out[key] = text
    return "?" + urlencode(out) if out else ""


def _number(text: str) -> float:
    x = float(text)
    if not math.isfinite(x):
        raise ValueError
    return x


def parse_number_list(text, what: str, *, positive: bool = True, limit: int = 12) -> tuple[float, ...]:
    """Numbers separated by commas or spaces ("0.1, 1, 10"); ValueError naming the bad entry."""
    if text is None:
        return ()
    text = str(text)
    if len(text) > _MAX_TEXT:
        raise ValueError(f"the {what} list is too long (at most {_MAX_TEXT} characters)")
    parts = [p for p in re.split(r"[,;\s]+", text.strip()) if p]
    if len(parts) > limit:
        raise ValueError(f"at most {limit} {what} values, got {len(parts)}")
    out = []
    for p in parts:
        try:
            x = _number(p)
        except ValueError:
            raise ValueError(f"{what}: {p!r} is not a number; write e.g. 1, 1e3") from None
        if positive and x <= 0:
            raise ValueError(f"{what}: {p} must be > 0")
        out.append(x)
    return tuple(out)


def _decode_one(key: str, text: str):
    """Value of one view entry from its URL text; ValueError (with the reason) if unusable."""
    default = DEFAULT_VIEW[key]
    if len(text) > 2 * _MAX_TEXT:
        raise ValueError("too long")
    if key in ("X", "Y", "Z"):
        x = _number(text)
        if not 0 <= x <= 1:
            raise ValueError("must be between 0 and 1")
        return x
    if isinstance(default, bool):
        if text not in ("0", "1", "true", "false"):
            raise ValueError("must be 0 or 1")
        return text in ("1", "true")
    if key == "metals":
        if text not in ph.METAL_MIXTURES:
            raise ValueError(f"unknown mixture; choose one of {', '.join(ph.METAL_MIXTURES)}")
        return text
    if key == "mix":
        rows = []
        for item in (s for s in text.split(",") if s.strip()):
            name, sep, frac = item.partition("=")
            name = name.strip()
            if not sep or name not in ph.NUCLIDES:
                raise ValueError(f"{item!r} is not NUCLIDE=FRACTION with a known nuclide")
            f = _number(frac)
            if not 0 <= f <= 1:
                raise ValueError(f"fraction of {name} must be between 0 and 1")
            rows.append((name, f))
        if len(rows) > 30:
            raise ValueError("too many rows")
        return tuple(rows)
    if key in ("electrons", "ionization"):
        if text not in eos.MAP_OPTIONS[key]:
            raise ValueError(f"use one of {', '.join(eos.MAP_OPTIONS[key])}")
        return text
    if key in ("log_rho", "log_T"):
        limits = plane.LOG_RHO_LIMITS if key == "log_rho" else plane.LOG_T_LIMITS
        parts = text.split(",")
        if len(parts) != 2:
            raise ValueError("must be two numbers lo,hi")
        lo, hi = _number(parts[0]), _number(parts[1])
        if not (limits[0] <= lo < hi <= limits[1]):
            raise ValueError(f"must satisfy {limits[0]:g} <= lo < hi <= {limits[1]:g}")
        return (lo, hi)
    if key == "resolution":
        if not re.fullmatch(r"\d{1,4}", text):
            raise ValueError("must be a whole number")
        n = int(text)
        if not UI_RESOLUTION[0] <= n <= UI_RESOLUTION[1]:
            raise ValueError(f"must be between {UI_RESOLUTION[0]} and {UI_RESOLUTION[1]}")
        return n
    if key == "quantity":
        if text not in QUANTITY_NAMES:
            raise ValueError("unknown quantity")
        return text
    if key == "colorscale":
        if text not in COLOR_CHOICES:
            raise ValueError(f"use one of {', '.join(COLOR_CHOICES)}")
        return text
    if key in ("layers", "processes"):
        allowed = regimes.BOUNDARY_KEYS if key == "layers" else PROCESSES
        if text == "none":
            return ()
        names = [s for s in text.split(",") if s]
        bad = [s for s in names if s not in allowed]
        if bad:
            raise ValueError(f"unknown entries {', '.join(bad)}")
        return tuple(k for k in allowed if k in names)
    if key in ("levels", "masses"):
        values = parse_number_list(text, key)
        if not values:
            raise ValueError("empty")
        return text
    raise ValueError("unknown")  # pragma: no cover - every key is handled above


def decode_view(search) -> tuple[dict, list[str]]:
    """A complete view from a query string, and messages for what was replaced.

    Never raises: anything unusable (unknown keys, bad numbers, values out of
    range, repeated keys, non-text input) falls back to the default, with a
    message naming it.
    """
    view = dict(DEFAULT_VIEW)
    messages: list[str] = []
    if not isinstance(search, str) or not search.strip("?"):
        return view, messages
    try:
        query = parse_qs(search.lstrip("?"), keep_blank_values=True, max_num_fields=100)
    except ValueError as err:
        return view, [f"the link could not be read ({err}); showing the default view"]
    for key, values in query.items():
        shown = key if len(key) <= 30 else key[:30] + "…"
        if key not in DEFAULT_VIEW:
            messages.append(f"ignored unknown link entry {shown!r}")
            continue
        text = values[-1]
        try:
            view[key] = _decode_one(key, text)
        except (ValueError, TypeError, OverflowError) as err:
            short = text if len(text) <= 40 else text[:40] + "…"
            reason = str(err) or "not a valid value"
            messages.append(f"link entry {key}={short!r} ignored ({reason}); using the default")
    return view, messages
