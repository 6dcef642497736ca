"""Lines drawn over the map, each computation cached by every parameter that matters.

Toggling a layer, switching the shaded quantity or the colour scale redraws
from these caches and from the cached plane (:func:`physics.plane.plane_grid`):
no new physics call.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from physics import burning, regimes, structure

from .. import figures

__all__ = ["boundary_lines", "ignition_lines", "mass_lines", "cache_clear", "BOUNDARY_COLUMNS", "MASS_POINTS"]

#: Columns of the boundary search and points per mass line: enough for smooth lines.
BOUNDARY_COLUMNS = 300
MASS_POINTS = 240
_MAXSIZE = 32


def _opts(opts: tuple) -> dict:
    return dict(opts)


@lru_cache(maxsize=_MAXSIZE)
def _boundaries(comp, lr, lt, opts) -> tuple:
    return tuple(regimes.boundaries(comp, lr, lt, n=BOUNDARY_COLUMNS, **_opts(opts)))


@lru_cache(maxsize=_MAXSIZE)
def _ignition(comp, process, levels, lr, lt) -> tuple:
    return tuple(burning.ignition_contours(comp, process, levels, log_rho=lr, log_T=lt, n=BOUNDARY_COLUMNS))


@lru_cache(maxsize=_MAXSIZE)
def _central(comp, masses, lr, opts) -> np.ndarray:
    log_rho = np.linspace(*lr, MASS_POINTS)
    T = structure.central_line(np.asarray(masses)[:, None], comp, 10.0 ** log_rho[None, :], **_opts(opts))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.log10(T)
    out.flags.writeable = False
    return out


def _key(opts: dict) -> tuple:
    return tuple(sorted(opts.items()))


def boundary_lines(comp, lr, lt, opts: dict, keys) -> list[figures.Line]:
    """Regime boundaries for the keys asked for (those the options make meaningful)."""
    out = []
    for b in _boundaries(comp, tuple(lr), tuple(lt), _key(opts)):
        if b.key in keys and not b.empty:
            out.append(figures.Line(b.key, b.label, b.log_rho, b.log_T))
    return out


def ignition_lines(comp, processes, levels, lr, lt) -> list[figures.Line]:
    """Lines of constant energy generation for each process and level."""
    out = []
    for process in processes:
        for line in _ignition(comp, process, tuple(levels), tuple(lr), tuple(lt)):
            if np.any(np.isfinite(line.log_T)):
                out.append(figures.Line(f"ignition_{process}_{line.level:g}", ignition_label(process, line.level),
                                        line.log_rho, line.log_T, style="ignition", width=1.6))
    return out


_SHORT = {"pp": "pp", "cno": "CNO", "triple_alpha": "3α", "carbon": "C+C"}
_SUPERSCRIPT = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


def level_text(level: float) -> str:
    """1, 10³, 2.5e+04 -> short text for a label."""
    e = np.log10(level)
    if e == round(e) and abs(e) >= 2:
        return "10" + str(int(round(e))).translate(_SUPERSCRIPT)
    return f"{level:g}"


def ignition_label(process: str, level: float) -> str:
    return f"ε_{_SHORT.get(process, process)} = {level_text(level)}"


def _mass_label(m: float) -> str:
    return f"{m:g} M☉"


def mass_lines(comp, masses, lr, opts: dict) -> list[figures.Line]:
    """Central (rho, T) of n = 3 polytropes of each mass (physics.structure.central_line)."""
    if not masses:
        return []
    log_T = _central(comp, tuple(masses), tuple(lr), _key(opts))
    log_rho = np.linspace(*lr, MASS_POINTS)
    return [figures.Line(f"mass_{m:g}", _mass_label(m), log_rho, log_T[i], style="mass", width=1.6)
            for i, m in enumerate(masses) if np.any(np.isfinite(log_T[i]))]


def cache_clear() -> None:
    for f in (_boundaries, _ignition, _central):
        f.cache_clear()
