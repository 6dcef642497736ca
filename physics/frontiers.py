"""Where cooling and captures take over: the neutrino ignition curves and the
electron-capture thresholds as lines on the plane and as fields along a track.

The question this module answers: where does nuclear heating first beat the
neutrino losses (the ignition curve eps_nuc = eps_nu of each burning process,
:mod:`thermoplane.physics.burning` against :mod:`thermoplane.physics.neutrinos`),
and where does the T = 0 electron gas reach the capture threshold of each
nuclide present (:mod:`thermoplane.physics.captures`)? The map draws these
lines (:func:`grid_lines`, read off the cached plane); the track report lists
where a track crosses them (:func:`track_fields`).
"""

from __future__ import annotations

import numpy as np

from . import burning, captures, neutrinos
from .composition import Composition
from .contours import level_line

__all__ = ["MIN_CAPTURE_FRACTION", "IGNITION_FLOOR", "IGNITION_NAMES", "ignition_label", "ignition_key", "capture_key", "labels", "grid_lines",
           "track_fields"]

#: Capture lines are drawn (and crossed by tracks) for nuclides of at least this mass
#: fraction: trace metals would fill the dense end of the map with lines. Our choice.
MIN_CAPTURE_FRACTION = 0.01

#: Ignition curves are drawn only where eps_nu (= eps_nuc on the curve) is at least this,
#: erg g^-1 s^-1: below it neither rate changes a star's heat content within a Hubble time
#: at the temperatures concerned, and the two tiny rates cross along meaningless lines
#: (for hydrogen near 10^5 K). Our choice, no source.
IGNITION_FLOOR = 1e-2

#: Burning process -> the words of its curve eps_nuc = eps_nu. Helium and carbon ignite where
#: nuclear heating first beats the neutrino losses; hydrogen burns at 10^6.5-10^7.5 K where
#: the losses are negligible (< 1e-2 erg/g/s), so its curve only marks where neutrino losses
#: take over again at 10^8 K and above: it is not called an ignition curve.
IGNITION_NAMES = {"pp": "pp chain:", "cno": "CNO cycle:",
                  "triple_alpha": "helium ignition", "carbon": "carbon ignition"}


def ignition_key(process: str) -> str:
    return f"nu_ignition_{process}"


def capture_key(nuclide: str) -> str:
    return f"capture_{nuclide}"


def ignition_label(process: str) -> str:
    """"carbon ignition (ε_nuc = ε_ν)", "pp chain: ε_nuc = ε_ν"."""
    name = IGNITION_NAMES[process]
    return f"{name} ε_nuc = ε_ν" if name.endswith(":") else f"{name} (ε_nuc = ε_ν)"


def labels(comp: Composition | None = None) -> dict[str, str]:
    """Key -> words for every line of this module (the capture lines of ``comp``'s main nuclides)."""
    out = {ignition_key(p): ignition_label(p) for p in burning.PROCESSES}
    if comp is not None:
        out.update({capture_key(t.nuclide): t.label for t in captures.thresholds(comp, MIN_CAPTURE_FRACTION)})
    return out


def grid_lines(grid, comp: Composition, processes=(), ignition: bool = True, capture: bool = True):
    """Lines on a computed plane: list of (key, label, log_rho, log_T, kind), kind "nu_ignition" or "capture".

    The ignition curve of a process is the level set log eps_nuc - log eps_nu = 0 of the
    plane's fields ``eps_<process>`` and ``log_eps_nu``, where eps_nu >= :data:`IGNITION_FLOOR`. A capture threshold is the vertical line log rho = log rho_thr of a
    nuclide with mass fraction >= :data:`MIN_CAPTURE_FRACTION`, drawn across the plane's
    temperature range when it lies inside the density range.
    """
    out = []
    if ignition:
        nu = grid.get("log_eps_nu")
        nu = np.where(nu >= np.log10(IGNITION_FLOOR), nu, np.nan)
        for p in processes:
            xs, ys = level_line(grid.log_rho, grid.log_T, grid.get(f"eps_{p}") - nu, 0.0)
            if xs.size:
                out.append((ignition_key(p), ignition_label(p), xs, ys, "nu_ignition"))
    if capture:
        lo, hi = float(grid.log_rho[0]), float(grid.log_rho[-1])
        for t in captures.thresholds(comp, MIN_CAPTURE_FRACTION):
            x = float(np.log10(t.rho))
            if lo < x < hi:
                # many points along the line, so that a label finds a place inside the view
                out.append((capture_key(t.nuclide), t.label, np.full(grid.log_T.size, x),
                            np.array(grid.log_T, dtype=float), "capture"))
    return out


def track_fields(log_rho, log_T, comp: Composition, valid=None) -> tuple[dict, dict]:
    """Fields whose crossing of their level marks each line along a track: (fields, levels).

    ``nu_ignition_<process>``: log10(eps_nuc / eps_nu), level 0 (NaN where either rate is 0 or
    eps_nu < :data:`IGNITION_FLOOR`);
    ``capture_<nuclide>``: log rho - log rho_thr, level 0, for the nuclides of ``comp`` with mass
    fraction >= :data:`MIN_CAPTURE_FRACTION`.
    The composition is that of the whole track (a per-row X, Y is not followed here).
    """
    log_rho = np.asarray(log_rho, dtype=float)
    log_T = np.asarray(log_T, dtype=float)
    ok = np.isfinite(log_rho) & np.isfinite(log_T) & (np.abs(np.nan_to_num(log_rho)) <= 300) \
        & (np.abs(np.nan_to_num(log_T)) <= 300)
    if valid is not None:
        ok &= np.asarray(valid, dtype=bool)
    fields, levels = {}, {}
    rho = 10.0 ** np.where(ok, log_rho, 0.0)
    T = 10.0 ** np.where(ok, log_T, 7.0)
    eps_nu = neutrinos.epsilon(rho, T, comp)
    with np.errstate(divide="ignore", invalid="ignore"):
        log_nu = np.log10(eps_nu)
        for p in burning.PROCESSES:
            ratio = np.log10(burning.epsilon(rho, T, comp, p)) - log_nu
            keep = ok & np.isfinite(ratio) & (eps_nu >= IGNITION_FLOOR)
            fields[ignition_key(p)] = np.where(keep, ratio, np.nan)
            levels[ignition_key(p)] = 0.0
    for t in captures.thresholds(comp, MIN_CAPTURE_FRACTION):
        fields[capture_key(t.nuclide)] = np.where(ok, log_rho - np.log10(t.rho), np.nan)
        levels[capture_key(t.nuclide)] = 0.0
    return fields, levels
