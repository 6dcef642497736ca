"""The whole density–temperature plane at once: every shaded quantity of a
map on a (log T, log rho) grid, from one equation-of-state call, cached.

The question this module answers: what does each map shading show at every
pixel, for a composition and a set of physics options, without recomputing
the physics when a viewer only switches the shaded quantity?
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Callable, NamedTuple

import numpy as np

from .regimes import REGIMES, check_count, check_range, classify_codes

__all__ = ["PlaneGrid", "Quantity", "QUANTITIES", "plane_grid", "cache_info", "clear_cache",
           "evaluation_count", "CACHE_MB", "EPS_FLOOR", "BURNING_PROCESSES",
           "LOG_RHO_LIMITS", "LOG_T_LIMITS", "RESOLUTION_LIMITS", "LEVEL_FIELDS"]

#: Upper bound of the plane cache, MiB of array data; least recently used maps go first.
CACHE_MB = 256
#: log10 epsilon (erg g^-1 s^-1) below which a burning map is NaN (blank):
#: 1e-30 erg/g/s is irrelevant for any star, and a blank keeps the colour
#: scale on the rates that matter. Our choice; common practice, no source.
EPS_FLOOR = -30.0
#: Burning processes mapped, as named by :func:`thermoplane.physics.burning.epsilon`.
BURNING_PROCESSES = ("pp", "cno", "triple_alpha", "carbon")
#: Accepted plane limits (log10 g cm^-3, log10 K) and resolutions.
LOG_RHO_LIMITS = (-15.0, 15.0)
LOG_T_LIMITS = (2.0, 12.0)
RESOLUTION_LIMITS = (10, 1000)

#: Fields a plane holds for the lines drawn from it (physics.contours), not offered as shadings.
LEVEL_FIELDS = ("ion_H", "ion_He2", "log_pair_fraction", "log_P", "melt_margin", "log_T_Tp", "h2_fraction",
                "coexistence")

#: The H2 map is blank where less than this fraction of H is molecular (traces would set the colour range).
H2_FLOOR = 1e-6

#: Number of physics evaluations done by :func:`plane_grid` (cache misses).
EVALUATIONS = 0


class Quantity(NamedTuple):
    """A shaded quantity: field name, label with units, and colour-scale centre.

    ``centre`` is the value at the middle of a diverging colour scale, or
    None for a sequential scale; ``categorical`` marks the regime codes.
    """

    name: str
    label: str
    centre: float | None
    categorical: bool = False


#: Every quantity a :class:`PlaneGrid` holds, in menu order.
QUANTITIES: tuple[Quantity, ...] = (
    Quantity("regime", "dominant pressure", None, True),
    Quantity("log_prad_pgas", "log₁₀ P_rad / P_gas", 0.0),
    Quantity("beta", "β = P_gas / P", None),
    Quantity("eta", "electron degeneracy η", 0.0),
    Quantity("gamma1", "Γ₁ (first adiabatic exponent)", None),
    Quantity("nabla_ad", "∇_ad (adiabatic gradient)", None),
    Quantity("log_Gamma", "log₁₀ Γ (ion coupling)", 0.0),
    Quantity("mean_ionization", "free electrons / fully ionized count", None),
    Quantity("metal_electron_fraction", "share of free electrons from metals", None),
    Quantity("log_h2_fraction", "log₁₀ fraction of H in H₂ (chemical picture; blank below 10⁻⁶)", None),
    Quantity("eps_pp", "log₁₀ ε_pp (erg g⁻¹ s⁻¹)", None),
    Quantity("eps_cno", "log₁₀ ε_CNO (erg g⁻¹ s⁻¹)", None),
    Quantity("eps_triple_alpha", "log₁₀ ε_3α (erg g⁻¹ s⁻¹)", None),
    Quantity("eps_carbon", "log₁₀ ε_C+C (erg g⁻¹ s⁻¹)", None),
    Quantity("log_eps_nu", "log₁₀ ε_ν neutrino losses (erg g⁻¹ s⁻¹)", None),
    Quantity("nu_process", "dominant neutrino process", None, True),
)
_QUANTITY_BY_NAME = {q.name: q for q in QUANTITIES}


class PlaneFields(Mapping):
    """Field name -> read-only float32 array of a plane; the layers that need no equation of state (burning
    rates, neutrino losses) are computed on first use and then kept.

    A composition change redraws the default map with the lines of two burning processes and the neutrino
    total; the other rates (and the dominant neutrino process) cost nothing until a view shows them.
    ``later`` maps each such field to a function that returns a dict of arrays (it may give several
    fields at once). Thread-safe: a field is computed once.
    """

    def __init__(self, ready: dict, later: dict, shape: tuple[int, int]):
        self._ready = dict(ready)
        self._later = dict(later)
        self._names = tuple(ready) + tuple(k for k in later if k not in ready)
        self._shape = shape
        self._lock = threading.Lock()

    def __getitem__(self, name):
        arr = self._ready.get(name)
        if arr is not None:
            return arr
        if name not in self._later:
            raise KeyError(name)
        with self._lock:
            if name not in self._ready:
                for key, value in self._later[name]().items():
                    self._ready.setdefault(key, _frozen(value, self._shape))
        return self._ready[name]

    def __iter__(self):
        return iter(self._names)

    def __len__(self):
        return len(self._names)

    def __contains__(self, name):
        return name in self._ready or name in self._later

    def computed(self) -> tuple[str, ...]:
        """The fields computed so far."""
        return tuple(self._ready)

    @property
    def nbytes(self) -> int:
        """Bytes of every field once all are computed (the cache counts them all from the start)."""
        return 4 * self._shape[0] * self._shape[1] * len(self._names)


def _frozen(value, shape) -> np.ndarray:
    arr = np.ascontiguousarray(np.broadcast_to(value, shape), dtype=np.float32)
    arr.flags.writeable = False
    return arr


@dataclass
class PlaneGrid:
    """Every shaded quantity on a regular (log T, log rho) grid.

    Attributes
    ----------
    log_rho : ndarray, shape (n_rho,)
        Column coordinates, log10 g cm^-3.
    log_T : ndarray, shape (n_T,)
        Row coordinates, log10 K.
    fields : mapping of str -> float32 ndarray, shape (n_T, n_rho)
        Row i is log_T[i]. Names and labels in :data:`QUANTITIES`. A :class:`PlaneFields`: the
        burning and neutrino fields are computed when first asked for.
    regime : int8 ndarray, shape (n_T, n_rho)
        Index into :data:`thermoplane.physics.regimes.REGIMES`.
    unavailable : tuple of str
        Fields that are all NaN because their module is missing.

    Arrays are read-only: one cached grid is shared by every caller.
    """

    log_rho: np.ndarray
    log_T: np.ndarray
    fields: Mapping[str, np.ndarray]
    regime: np.ndarray
    unavailable: tuple[str, ...] = ()
    quantities: tuple[Quantity, ...] = field(default=QUANTITIES, repr=False)

    @property
    def regimes(self):
        """The regime table the codes index (:data:`thermoplane.physics.regimes.REGIMES`)."""
        return REGIMES

    @property
    def shape(self) -> tuple[int, int]:
        return self.regime.shape

    @property
    def nbytes(self) -> int:
        held = self.fields.nbytes if isinstance(self.fields, PlaneFields) else sum(
            a.nbytes for a in self.fields.values())
        return int(self.log_rho.nbytes + self.log_T.nbytes + self.regime.nbytes + held)

    def get(self, name: str) -> np.ndarray:
        """A field by name ("regime" gives the codes); ValueError for an unknown name."""
        if name == "regime":
            return self.regime
        if name not in self.fields:
            raise ValueError(f"unknown plane quantity {name!r}; choose one of {', '.join(_QUANTITY_BY_NAME)}")
        return self.fields[name]


_cache: OrderedDict = OrderedDict()
_cache_bytes = 0
_lock = threading.Lock()


def evaluation_count() -> int:
    """How many physics evaluations :func:`plane_grid` has made (cache misses)."""
    return EVALUATIONS


def cache_info() -> tuple[int, int]:
    """(number of cached planes, bytes of array data they hold)."""
    with _lock:
        return len(_cache), _cache_bytes


def clear_cache() -> None:
    """Forget every cached plane."""
    global _cache_bytes
    with _lock:
        _cache.clear()
        _cache_bytes = 0


def _log_eps(eps: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.log10(eps)
    return np.where(out >= EPS_FLOOR, out, np.nan)


def _compute(comp, lr, lt, n_rho, n_T, opts) -> PlaneGrid:
    global EVALUATIONS
    from .eos import evaluate                       # lazy: eos may be rebuilt under us
    log_rho = np.linspace(*lr, n_rho)
    log_T = np.linspace(*lt, n_T)
    rho = 10.0 ** log_rho[np.newaxis, :]
    T = 10.0 ** log_T[:, np.newaxis]
    with _lock:
        EVALUATIONS += 1
    s = evaluate(rho, T, comp, **opts)
    shape = (n_T, n_rho)
    with np.errstate(divide="ignore", invalid="ignore"):
        fields = {
            "log_prad_pgas": np.log10(s.P_rad / s.P_gas),
            "beta": s.beta,
            "eta": s.eta,
            "gamma1": s.gamma1,
            "nabla_ad": s.nabla_ad,
            "log_Gamma": np.log10(s.Gamma),
            "mean_ionization": np.asarray(s.ye) / comp.ye,
            "metal_electron_fraction": s.metal_electron_fraction,
            # blank below H2_FLOOR (and under every option but the chemical picture, which has no H2)
            "log_h2_fraction": np.where(s.h2_fraction >= H2_FLOOR, np.log10(np.maximum(s.h2_fraction, 1e-300)),
                                        np.nan),
            # not shaded: the level fields of the lines drawn from the grid (physics.contours)
            "ion_H": s.ion_H,
            "ion_He2": s.ion_He2,
            "log_pair_fraction": np.log10(np.maximum(s.n_plus / s.n_minus, 1e-300)),
            "log_P": np.log10(s.P),
            "melt_margin": s.melt_margin,
            "log_T_Tp": np.log10(s.T / s.T_p),
            "h2_fraction": s.h2_fraction,
            "coexistence": s.coexistence,
        }
    unavailable: list[str] = []
    try:
        from . import burning
    except ModuleNotFoundError:
        burning = None
    # the layers without equation of state: each computed when a shading or a line first asks for it
    # (rho and T stay a row and a column: physics.burning and physics.neutrinos compute what depends on
    # one of them once per column or row)
    later: dict[str, Callable[[], dict]] = {}
    for process in BURNING_PROCESSES:
        name = f"eps_{process}"
        if burning is None:
            fields[name] = np.full(shape, np.nan)
            unavailable.append(name)
        else:
            later[name] = _burning_layer(burning, rho, T, comp, process)
    # neutrino losses (physics.neutrinos): the total, and the code of the largest part
    # (index into neutrinos.PROCESSES; NaN where the total is below EPS_FLOOR)
    later["log_eps_nu"] = later["nu_process"] = _neutrino_layer(rho, T, comp)
    out = {name: _frozen(value, shape) for name, value in fields.items()}
    regime = np.ascontiguousarray(np.broadcast_to(classify_codes(s), shape), dtype=np.int8)
    for arr in (regime, log_rho, log_T):
        arr.flags.writeable = False
    return PlaneGrid(log_rho=log_rho, log_T=log_T, fields=PlaneFields(out, later, shape), regime=regime,
                     unavailable=tuple(unavailable))


def _burning_layer(burning, rho, T, comp, process):
    def compute():
        return {f"eps_{process}": _log_eps(np.asarray(burning.epsilon(rho, T, comp, process), dtype=float))}
    return compute


def _neutrino_layer(rho, T, comp):
    def compute():
        from . import neutrinos
        parts = neutrinos.epsilon_parts(rho, T, comp)
        log_total = _log_eps(parts["total"])
        return {"log_eps_nu": log_total,
                "nu_process": np.where(np.isfinite(log_total), neutrinos.dominant_process(parts), np.nan)}
    return compute


def plane_grid(comp, log_rho=(-10.0, 10.0), log_T=(3.0, 10.0), n_rho: int = 300, n_T: int = 300,
               **physics_options) -> PlaneGrid:
    """Every shaded quantity of the density–temperature plane, cached.

    Parameters
    ----------
    comp : Composition
        Mass fractions.
    log_rho : (float, float)
        Density limits, log10 g cm^-3, finite, lo < hi, inside [-15, 15].
    log_T : (float, float)
        Temperature limits, log10 K, finite, lo < hi, inside [2, 12].
    n_rho, n_T : int
        Columns and rows, each 10..1000.
    **physics_options
        Passed to :func:`thermoplane.physics.evaluate`.

    Returns
    -------
    PlaneGrid
        Shared and read-only (the cached object itself).

    Raises
    ------
    ValueError
        A bad range, resolution, composition or physics option, raised before
        any computation.

    Notes
    -----
    One call of :func:`thermoplane.physics.evaluate` on the whole meshgrid gives:
    log_prad_pgas = log10(P_rad/P_gas); beta; eta; gamma1; nabla_ad;
    log_Gamma = log10 Gamma; mean_ionization = Y_e(state) / Y_e(fully
    ionized) (free electrons over the fully ionized count, 0..1; net of
    positrons); eps_X = log10 epsilon_X from :func:`thermoplane.physics.burning.epsilon`
    for X in :data:`BURNING_PROCESSES`, NaN below :data:`EPS_FLOOR` (and
    all NaN, listed in ``unavailable``, while that module is missing);
    regime codes from :func:`thermoplane.physics.regimes.classify_codes`.

    The cache is keyed by the composition's key, the limits rounded to 1e-9
    dex, the resolution and every physics option with defaults filled in. It
    holds at most :data:`CACHE_MB` MiB of arrays (read at call time) and
    drops the least recently used planes first; a plane larger than the
    whole bound is returned but not kept. Two threads asking for the same
    new plane at the same moment may both compute it; the cache stays
    consistent (one lock guards it).
    """
    from .composition import Composition
    from .eos import validate_options
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    lr = check_range("log_rho", log_rho, LOG_RHO_LIMITS)
    lt = check_range("log_T", log_T, LOG_T_LIMITS)
    n_rho = check_count("n_rho", n_rho, RESOLUTION_LIMITS)
    n_T = check_count("n_T", n_T, RESOLUTION_LIMITS)
    opts = validate_options(**physics_options)
    key = (comp.key(), tuple(round(v, 9) for v in lr), tuple(round(v, 9) for v in lt), n_rho, n_T,
           tuple(sorted(opts.items(), key=lambda kv: kv[0])))
    global _cache_bytes
    with _lock:
        hit = _cache.get(key)
        if hit is not None:
            _cache.move_to_end(key)
            return hit
    grid = _compute(comp, lr, lt, n_rho, n_T, opts)
    limit = CACHE_MB * 2**20
    size = grid.nbytes
    with _lock:
        if key in _cache:                          # another thread was faster: keep one copy
            _cache.move_to_end(key)
            return _cache[key]
        if size <= limit:
            _cache[key] = grid
            _cache_bytes += size
            while _cache_bytes > limit:
                _, old = _cache.popitem(last=False)
                _cache_bytes -= old.nbytes
    return grid
