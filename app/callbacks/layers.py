"""Lines drawn over the map, read off the map's own cached plane (:mod:`thermoplane.physics.contours`).

Every line is a level set of a field the plane already holds, so drawing,
toggling or relabelling lines costs a few array passes and no physics call;
switching the shaded quantity or the colour scale reuses the cached plane
(:func:`thermoplane.physics.plane.plane_grid`). The lines are as fine as the map's pixels;
:func:`thermoplane.physics.regimes.boundaries` and :func:`thermoplane.physics.structure.central_line`
give the same lines to 1e-6 dex for scripts and tests.
"""

from __future__ import annotations

import numpy as np

from ...physics import contours, frontiers, neutrinos

from .. import figures
from ..figures import ignition_label, level_text  # noqa: F401 - re-exported for callers of this module

__all__ = ["boundary_lines", "ignition_lines", "mass_lines", "frontier_lines", "categories",
           "NU_PROCESS_CATEGORIES"]


def boundary_lines(grid, comp, opts: dict, keys) -> list[figures.Line]:
    """Regime boundaries for the keys asked for (those the options make meaningful)."""
    return [figures.Line(key, label, x, y)
            for key, label, x, y in contours.grid_boundaries(grid, comp, keys, **opts) if x.size]


def ignition_lines(grid, processes, levels) -> list[figures.Line]:
    """Lines of constant energy generation for each process and level."""
    out = []
    for process in processes:
        for level in levels:
            x, y = contours.grid_ignition(grid, process, level)
            if x.size:
                out.append(figures.Line(f"ignition_{process}_{level:g}", ignition_label(process, level),
                                        x, y, style=figures.ignition_style(process), width=1.6))
    return out


def _mass_label(m: float) -> str:
    return f"{m:g} M☉"


def mass_lines(grid, masses) -> list[figures.Line]:
    """Central (rho, T) of n = 3 polytropes of each mass, read off the plane's pressure."""
    return [figures.Line(f"mass_{m:g}", _mass_label(m), x, y, style="mass", width=1.6)
            for m, x, y in contours.grid_mass_lines(grid, masses) if x.size and np.any(np.isfinite(y))]


#: Dominant neutrino process (codes index physics.neutrinos.PROCESSES): legend words and colours
#: (our own choice, colour-blind-safe Okabe–Ito hues).
NU_PROCESS_CATEGORIES = [(neutrinos.PROCESS_LABELS[p], colour) for p, colour in
                         zip(neutrinos.PROCESSES, ("#E69F00", "#56B4E9", "#009E73", "#CC79A7"))]


def categories(name: str) -> list[tuple[str, str]]:
    """(label, colour) of each code of a categorical plane field other than the regime."""
    if name == "nu_process":
        return NU_PROCESS_CATEGORIES
    raise ValueError(f"no categories for {name!r}")


# vertical capture lines carry their label on their low-density side, so that it stays inside the plot
_VERTICAL_LABEL = {"label": {"xanchor": "right", "xshift": -3}}


def frontier_lines(grid, comp, view: dict) -> list[figures.Line]:
    """Ignition curves eps_nuc = eps_nu of the chosen burning processes and capture thresholds."""
    return [figures.Line(key, label, x, y, style=kind, width=2.0 if kind == "nu_ignition" else 1.6,
                         extra=_VERTICAL_LABEL if kind == "capture" else {})
            for key, label, x, y, kind in frontiers.grid_lines(
                grid, comp, view.get("processes") or (), ignition=bool(view.get("nu_ignition")),
                capture=bool(view.get("captures")))]
