"""Which physics matters here: point by point, how much each ingredient of the
equation of state changes P, Gamma_1 and nabla_ad.

The question this module answers: a modeller choosing equation-of-state
physics for a star asks, for each ingredient (Coulomb corrections,
Fermi-Dirac rather than classical electrons, electron-positron pairs, Saha
rather than full ionization, and any option :mod:`thermoplane.physics.eos`
adds later), where on the density-temperature plane switching it changes the
pressure and the adiabatic response by more than a given fraction.

Each ingredient is one option of :data:`thermoplane.physics.eos.OPTIONS`; its
impact is the relative change between the plane evaluated with the option on
and with it off, every other option as chosen. Both planes come from
:func:`thermoplane.physics.plane.plane_grid`, so there is one equation-of-state
evaluation per option set and map, cached with the plane itself.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from . import plane
from .eos import DEFAULTS, IMPACT_OPTIONS as OPTIONS

__all__ = ["Ingredient", "ingredients", "IMPACT_FIELDS", "IMPACT_THRESHOLD", "impact_quantities",
           "impact_percent", "impact_categories", "category_labels"]

#: Quantities whose change is mapped: name -> (plane field, label).
IMPACT_FIELDS = {"P": ("log_P", "P"), "gamma1": ("gamma1", "Γ₁"), "nabla_ad": ("nabla_ad", "∇_ad")}
#: An ingredient "matters" where it changes one of IMPACT_FIELDS by more than this, in per cent.
#: 1 % is our choice (common practice, no source): about the accuracy a stellar model asks of P.
IMPACT_THRESHOLD = 1.0

# Words for the ingredients we know; any other option gets "option: default vs value".
_LABELS = {("electrons", "classical"): "Fermi–Dirac vs classical electrons",
           ("ionization", "full"): "Saha vs full ionization",
           ("coulomb", False): "Coulomb", ("pairs", False): "pairs"}


class Ingredient(NamedTuple):
    """One switch of the equation of state: option ``key`` at ``on`` (the fuller physics) against ``off``."""

    key: str
    on: object
    off: object
    label: str

    @property
    def name(self) -> str:
        return self.key if isinstance(self.on, bool) else f"{self.key}_{self.off}"


def ingredients() -> tuple[Ingredient, ...]:
    """Every ingredient, read off :data:`~thermoplane.physics.eos.OPTIONS` (new options join by themselves).

    A yes/no option is on (True) against off (False); an option with named
    choices is its default (the fuller physics, listed first) against each
    other choice.
    """
    out = []
    for key, values in OPTIONS.items():
        default = DEFAULTS[key]
        if isinstance(default, bool):
            out.append(Ingredient(key, True, False, _LABELS.get((key, False), key)))
        else:
            for alt in values:
                if alt != default:
                    out.append(Ingredient(key, default, alt, _LABELS.get((key, alt), f"{key}: {default} vs {alt}")))
    return tuple(out)


def impact_quantities() -> tuple[plane.Quantity, ...]:
    """The map quantities: ``impact_<ingredient>_<field>`` (per cent) and ``impact_which`` (categorical)."""
    qs = []
    for ing in ingredients():
        for field, (_, label) in IMPACT_FIELDS.items():
            qs.append(plane.Quantity(f"impact_{ing.name}_{field}", f"{ing.label}: % change in {label}", 0.0))
    qs.append(plane.Quantity("impact_which", f"ingredient changing P, Γ₁ or ∇_ad most (> {IMPACT_THRESHOLD:g} %)",
                             None, True))
    return tuple(qs)


def _grids(comp, ing: Ingredient, log_rho, log_T, n: int, opts: dict):
    on = plane.plane_grid(comp, log_rho, log_T, n, n, **{**opts, ing.key: ing.on})
    off = plane.plane_grid(comp, log_rho, log_T, n, n, **{**opts, ing.key: ing.off})
    return on, off


def impact_percent(comp, ingredient: str, field: str, log_rho=(-10.0, 10.0), log_T=(3.0, 10.0), n: int = 300,
                   **physics_options) -> np.ndarray:
    """Per-cent change of ``field`` when ``ingredient`` is switched on, on the plane's grid.

    Parameters
    ----------
    comp : Composition
    ingredient : str
        :attr:`Ingredient.name` of one of :func:`ingredients`.
    field : str
        A key of :data:`IMPACT_FIELDS`.
    log_rho, log_T, n, **physics_options
        As :func:`thermoplane.physics.plane.plane_grid` (n pixels a side); the
        option of the ingredient itself is overridden.

    Returns
    -------
    ndarray, shape (n, n)
        100 (Q_on - Q_off) / |Q_off|; NaN where either is not a physical
        value (P <= 0) or not finite.

    Raises
    ------
    ValueError
        Unknown ingredient or field, or any error of ``plane_grid``.
    """
    ing = _ingredient(ingredient)
    if field not in IMPACT_FIELDS:
        raise ValueError(f"unknown impact field {field!r}; choose one of {', '.join(IMPACT_FIELDS)}")
    on, off = _grids(comp, ing, log_rho, log_T, int(n), physics_options)
    name = IMPACT_FIELDS[field][0]
    a = np.asarray(on.get(name), dtype=float)
    b = np.asarray(off.get(name), dtype=float)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if name == "log_P":
            out = 100.0 * np.expm1((a - b) * np.log(10.0))
        else:
            out = 100.0 * (a - b) / np.abs(b)
    return np.where(np.isfinite(out), out, np.nan)


def _ingredient(name: str) -> Ingredient:
    for ing in ingredients():
        if ing.name == name:
            return ing
    raise ValueError(f"unknown ingredient {name!r}; choose one of {', '.join(i.name for i in ingredients())}")


def category_labels() -> list[str]:
    """Labels of :func:`impact_categories` codes: code 0 is "none", code k the k-th ingredient."""
    return [f"none above {IMPACT_THRESHOLD:g} %"] + [i.label for i in ingredients()]


def impact_categories(comp, log_rho=(-10.0, 10.0), log_T=(3.0, 10.0), n: int = 300,
                      threshold: float = IMPACT_THRESHOLD, **physics_options) -> tuple[np.ndarray, np.ndarray]:
    """Which ingredient matters most at each point, and how many matter.

    Returns
    -------
    which : int8 ndarray, shape (n, n)
        0 where no ingredient changes P, Gamma_1 or nabla_ad by more than
        ``threshold`` per cent; else 1 + the index (in :func:`ingredients`) of
        the ingredient with the largest change. -1 where no value is physical.
    count : int8 ndarray
        How many ingredients change one of them by more than ``threshold`` %.
    """
    ings = ingredients()
    worst = []
    for ing in ings:
        per = [np.abs(impact_percent(comp, ing.name, f, log_rho, log_T, n, **physics_options)) for f in IMPACT_FIELDS]
        stack = np.stack(per)
        anyfinite = np.isfinite(stack).any(axis=0)
        worst.append(np.where(anyfinite, np.nanmax(np.where(np.isfinite(stack), stack, -1.0), axis=0), np.nan))
    W = np.stack(worst)
    finite = np.isfinite(W).any(axis=0)
    Wf = np.where(np.isfinite(W), W, -1.0)
    best = np.argmax(Wf, axis=0)
    top = np.max(Wf, axis=0)
    which = np.where(top > threshold, best + 1, 0)
    which = np.where(finite, which, -1).astype(np.int8)
    count = np.sum(Wf > threshold, axis=0).astype(np.int8)
    return which, count
