"""Regimes of stellar matter on the density–temperature plane: where each
physical effect switches on, and which one governs the pressure.

The question this module answers: for a composition, where on the
(log rho, log T) plane does radiation overtake gas pressure, do electrons
degenerate or become relativistic, do pairs appear, do ions couple or
crystallize, and where are H and He half ionized? Every line comes from the
full equation of state (:func:`thermoplane.physics.evaluate`), not from a textbook
asymptote, so it bends where the physics does.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from . import constants as const

__all__ = ["Boundary", "boundaries", "BOUNDARY_KEYS", "BOUNDARY_LABELS", "PAIR_ONSET",
           "COUPLING_GAMMA", "CRYSTALLIZATION_GAMMA", "HALF_IONIZATION", "Regime", "REGIMES",
           "REGIME_KEYS", "DEGENERACY_ETA", "RELATIVISTIC_XF", "PARTIAL_IONIZATION",
           "classify", "classify_codes", "flags", "fermi_momentum_ratio"]

#: Positron onset: the pairs line is where n_+ / n_- reaches this fraction.
#: A choice of ours (1 %: positrons start to matter for the pressure and the
#: adiabatic exponents); common practice, no source.
PAIR_ONSET = 0.01
#: Onset of strong Coulomb coupling, Gamma = 1 (by definition of Gamma).
COUPLING_GAMMA = 1.0
#: Crystallization of the one-component plasma, Gamma = 175
#: (Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554).
CRYSTALLIZATION_GAMMA = 175.0
#: Half ionization: the ionization lines are where the fraction equals 1/2.
HALF_IONIZATION = 0.5
#: Electrons count as degenerate where eta > DEGENERACY_ETA (eta = 0: the
#: chemical potential without rest mass equals zero, i.e. of order kT above
#: the classical value; common practice, no source).
DEGENERACY_ETA = 0.0
#: Electrons count as relativistic where x_F = p_F / (m_e c) exceeds this.
RELATIVISTIC_XF = 1.0
#: An ionization fraction strictly between these counts as partial.
PARTIAL_IONIZATION = (0.01, 0.99)

#: Keys of :func:`boundaries`, in drawing order.
BOUNDARY_KEYS = ("equality", "degeneracy", "relativistic", "pairs", "coupling",
                 "crystallization", "quantum_ions", "h_ionization", "he_ionization",
                 "h2_dissociation", "coexistence")
#: Words a reader sees next to each line.
BOUNDARY_LABELS = {
    "equality": "P_rad = P_gas",
    "degeneracy": "electron degeneracy (η = 0)",
    "relativistic": "relativistic electrons (x_F = 1)",
    "pairs": f"pair onset (n₊/n₋ = {PAIR_ONSET:.0%})",
    "coupling": "strong coupling (Γ = 1)",
    "crystallization": "melting (crystal and liquid free energies equal)",
    "quantum_ions": "quantum ions below (T = T_p)",
    "h_ionization": "H half ionized",
    "he_ionization": "He⁺ → He²⁺ half",
    "h2_dissociation": "H₂ half dissociated",
    "coexistence": "two phases coexist (plasma phase transition of the model)",
}

# (8 pi / 3) (m_e c / h)^3: electrons per cm^3 at x_F = 1 (T = 0 Fermi sphere, spin 2)
_N_XF1 = const.n_e_relativistic


def fermi_momentum_ratio(rho, ye) -> np.ndarray:
    """Fermi momentum over m_e c of the free electrons.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3.
    ye : array_like
        Free electrons per nucleon.

    Returns
    -------
    ndarray
        x_F = p_F / (m_e c).

    Notes
    -----
    The T = 0 Fermi sphere with spin weight 2 (Chandrasekhar 1939, An
    Introduction to the Study of Stellar Structure, ch. X):

    .. math:: \\rho Y_e / m_u = (8\\pi/3) (m_e c / h)^3 x_F^3,

    so x_F = 1 at rho Y_e = 9.74e5 g cm^-3.

    Examples
    --------
    >>> round(float(fermi_momentum_ratio(9.7395e5, 1.0)), 3)
    1.0
    """
    n_e = np.asarray(rho, dtype=float) * np.asarray(ye, dtype=float) / const.m_u
    return np.cbrt(np.maximum(n_e, 0.0) / _N_XF1)


# -- boundary fields ----------------------------------------------------------------
# Each field is a function of a ThermoState whose zero is the line. Logarithms
# keep the power-law fields nearly linear in log T, which makes the final
# linear interpolation of the bracket accurate.

def _log_ratio(num, den):
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(num / den)


_FIELDS = {
    "equality": lambda s: _log_ratio(s.P_rad, s.P_gas),
    "degeneracy": lambda s: s.eta - DEGENERACY_ETA,
    "relativistic": lambda s: np.log(fermi_momentum_ratio(s.rho, s.ye) / RELATIVISTIC_XF),
    "pairs": lambda s: _log_ratio(s.n_plus, s.n_minus * PAIR_ONSET),
    "coupling": lambda s: _log_ratio(s.Gamma, COUPLING_GAMMA),
    "crystallization": lambda s: -np.asarray(s.melt_margin, dtype=float),
    "quantum_ions": lambda s: _log_ratio(s.T_p, s.T),
    "h_ionization": lambda s: s.ion_H - HALF_IONIZATION,
    "he_ionization": lambda s: s.ion_He2 - HALF_IONIZATION,
    "h2_dissociation": lambda s: np.asarray(s.h2_fraction, dtype=float) - 0.5,
    "coexistence": lambda s: np.asarray(s.coexistence, dtype=float) - 0.5,
}
# x_F = 1 is a (nearly) vertical line: search it along log rho at fixed log T.
_ALONG_RHO = {"relativistic"}


@dataclass
class Boundary:
    """One regime line on the plane; NaN entries separate its pieces.

    Attributes
    ----------
    key : str
        One of :data:`BOUNDARY_KEYS`.
    label : str
        Words for the plot legend.
    log_rho, log_T : ndarray
        Points of the line, log10 g cm^-3 and log10 K.
    """

    key: str
    label: str
    log_rho: np.ndarray
    log_T: np.ndarray

    @property
    def empty(self) -> bool:
        """True when no point of the line lies inside the plane."""
        return not np.any(np.isfinite(self.log_rho) & np.isfinite(self.log_T))


def check_range(name: str, value, limits: tuple[float, float]) -> tuple[float, float]:
    """Validate a (lo, hi) range of a log axis; ValueError names the bad value."""
    try:
        lo, hi = (float(v) for v in value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a pair (lo, hi) of numbers, got {value!r}") from None
    if not (np.isfinite(lo) and np.isfinite(hi)) or not lo < hi:
        raise ValueError(f"{name} must be finite with lo < hi, got {value!r}")
    if lo < limits[0] or hi > limits[1]:
        raise ValueError(f"{name}={value!r} is outside the accepted range [{limits[0]:g}, {limits[1]:g}]")
    return lo, hi


def check_count(name: str, value, limits: tuple[int, int]) -> int:
    """Validate a grid resolution; ValueError names the bad value."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        raise ValueError(f"{name} must be an integer between {limits[0]} and {limits[1]}, got {value!r}")
    if not limits[0] <= value <= limits[1]:
        raise ValueError(f"{name} must be between {limits[0]} and {limits[1]}, got {value!r}")
    return int(value)


def _active_keys(comp, opts) -> list[str]:
    """Boundary keys that mean something for these options and this composition."""
    keys = []
    for key in BOUNDARY_KEYS:
        if key == "pairs" and not opts["pairs"]:
            continue       # no positrons in the model: the line does not exist
        if key in ("crystallization", "quantum_ions") and not opts["coulomb"]:
            continue       # ideal classical ions: no phases, no quantum ions in the model
        if key in ("h_ionization", "he_ionization") and opts["ionization"] == "full":
            continue       # fractions are identically 1: no half-ionization line
        if key == "h_ionization" and comp.hydrogen <= 0:
            continue
        if key == "he_ionization" and comp.helium <= 0:
            continue
        if key in ("h2_dissociation", "coexistence") and opts["ionization"] != "chemical":
            continue       # molecules and the two-phase construction exist in the chemical picture only
        if key == "h2_dissociation" and comp.hydrogen <= 0:
            continue
        keys.append(key)
    return keys


def _field_values(state, field_id: np.ndarray, keys: list[str]) -> np.ndarray:
    """Value of field ``keys[field_id[i]]`` at point i of a 1-D state."""
    out = np.full(field_id.shape, np.nan)
    for i, key in enumerate(keys):
        sel = field_id == i
        if np.any(sel):
            out[sel] = np.asarray(_FIELDS[key](state), dtype=float)[sel]
    return out


def boundaries(comp, log_rho=(-10.0, 10.0), log_T=(3.0, 10.0), n: int = 400, *,
               ladder: int = 32, steps: int = 20, **physics_options) -> list[Boundary]:
    """Regime lines on the density–temperature plane from the full equation of state.

    Parameters
    ----------
    comp : Composition
        Mass fractions.
    log_rho, log_T : (float, float)
        Plane limits, log10 g cm^-3 in [-15, 15] and log10 K in [2, 12].
    n : int
        Number of columns (log rho values; log T rows for the x_F line), 10..2000.
    ladder : int
        Coarse values per column on which crossings are located, 8..200.
    steps : int
        Bisection steps per bracket, 1..60, followed by one linear interpolation.
    **physics_options
        Passed to :func:`thermoplane.physics.evaluate` (``electrons``, ``ionization``,
        ``coulomb``, ``pairs``).

    Returns
    -------
    list of Boundary
        In the order of :data:`BOUNDARY_KEYS`. A line that the options make
        meaningless is absent: "pairs" without pairs, the ionization lines
        with ``ionization="full"`` or without H (He). A line that exists in
        the model but not inside the plane has all-NaN points.

    Raises
    ------
    ValueError
        A bad range, resolution or physics option.

    Notes
    -----
    Lines are zeros of fields of the state: ln(P_rad/P_gas); eta;
    ln x_F with rho Y_e / m_u = (8 pi/3)(m_e c/h)^3 x_F^3 (Y_e the state's
    free electrons); ln(n_+ / (PAIR_ONSET n_-)); ln(Gamma/1);
    (Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554) replaced by the melting line: zero of
    f_liquid - f_crystal (physics.eos.dense_plasma); ln(T_p / T); ion_H - 1/2;
    ion_He2 - 1/2.

    Method: every field is evaluated on a ladder of ``ladder`` log T values
    in each of the ``n`` columns (the x_F line: a ladder of log rho values in
    each log T row) in ONE call of :func:`thermoplane.physics.evaluate`. Every sign
    change between neighbouring rungs is a bracket; all brackets of all
    fields are refined together by bisection, one evaluate call per step,
    and a last linear interpolation of the field inside the bracket. All
    crossings found on the ladder are kept: the k-th crossing (counting up
    in T) of each column forms piece k, and a piece is broken (NaN) between
    neighbouring columns whose number of crossings differs and whose roots
    jump by more than two rungs, where matching by index would join two
    different lines. Two crossings closer than one rung are missed.
    """
    from .eos import evaluate, validate_options       # lazy: eos may be rebuilt under us
    opts = validate_options(**physics_options)
    lr = check_range("log_rho", log_rho, (-15.0, 15.0))
    lt = check_range("log_T", log_T, (2.0, 12.0))
    n = check_count("n", n, (10, 2000))
    ladder = check_count("ladder", ladder, (8, 200))
    steps = check_count("steps", steps, (1, 60))
    keys = _active_keys(comp, opts)
    row_keys = [k for k in keys if k in _ALONG_RHO]

    x_rho = np.linspace(*lr, n)                     # fixed coordinate of each column
    x_T = np.linspace(*lt, n)                       # fixed coordinate of each row
    rungs_T = np.linspace(*lt, ladder)
    rungs_rho = np.linspace(*lr, ladder)

    # One evaluate call on both ladders: columns (n, ladder) then rows (n, ladder).
    parts_rho, parts_T = [np.repeat(x_rho, ladder)], [np.tile(rungs_T, n)]
    if row_keys:
        parts_rho.append(np.tile(rungs_rho, n))
        parts_T.append(np.repeat(x_T, ladder))
    state = evaluate(10.0 ** np.concatenate(parts_rho), 10.0 ** np.concatenate(parts_T), comp, **opts)
    m = n * ladder

    # Brackets of all fields: arrays over brackets.
    b_field, b_line, b_rank, b_along_rho, b_fixed, b_a, b_b, b_fa, b_fb = ([] for _ in range(9))
    counts = {}
    for i, key in enumerate(keys):
        along_rho = key in _ALONG_RHO
        sl = slice(m, 2 * m) if along_rho else slice(0, m)
        f = np.asarray(_FIELDS[key](state), dtype=float)[sl].reshape(n, ladder)
        ok = np.isfinite(f[:, :-1]) & np.isfinite(f[:, 1:])
        cross = ok & ((f[:, :-1] > 0) != (f[:, 1:] > 0))
        line, cell = np.nonzero(cross)              # sorted by line, then by rung
        count = cross.sum(axis=1)
        counts[key] = count
        first = np.concatenate(([0], np.cumsum(count)[:-1]))
        rungs = rungs_rho if along_rho else rungs_T
        b_field.append(np.full(line.size, i))
        b_line.append(line)
        b_rank.append(np.arange(line.size) - first[line])
        b_along_rho.append(np.full(line.size, along_rho))
        b_fixed.append((x_T if along_rho else x_rho)[line])
        b_a.append(rungs[cell]); b_b.append(rungs[cell + 1])
        b_fa.append(f[line, cell]); b_fb.append(f[line, cell + 1])
    cat = lambda parts, dtype=float: np.concatenate(parts).astype(dtype) if parts else np.zeros(0, dtype)
    field, line, rank = cat(b_field, int), cat(b_line, int), cat(b_rank, int)
    along_rho, fixed = cat(b_along_rho, bool), cat(b_fixed)
    a, b, fa, fb = cat(b_a), cat(b_b), cat(b_fa), cat(b_fb)

    if field.size:
        for _ in range(steps):
            mid = 0.5 * (a + b)
            s = evaluate(10.0 ** np.where(along_rho, mid, fixed), 10.0 ** np.where(along_rho, fixed, mid),
                         comp, **opts)
            fm = _field_values(s, field, keys)
            same = (fm > 0) == (fa > 0)
            a = np.where(same, mid, a); fa = np.where(same, fm, fa)
            b = np.where(same, b, mid); fb = np.where(same, fb, fm)
        # Regula falsi on the last bracket: exact for a field linear in the coordinate.
        with np.errstate(divide="ignore", invalid="ignore"):
            t = fa / (fa - fb)
        t = np.where(np.isfinite(t), np.clip(t, 0.0, 1.0), 0.5)
        root = a + t * (b - a)
    else:
        root = np.zeros(0)

    rung_step = {key: (rungs_rho[1] - rungs_rho[0]) if key in _ALONG_RHO else (rungs_T[1] - rungs_T[0])
                 for key in keys}
    out = []
    for i, key in enumerate(keys):
        sel = field == i
        count = counts[key]
        pieces_x, pieces_y = [], []
        for k in range(int(count.max()) if count.size else 0):
            y = np.full(n, np.nan)
            here = sel & (rank == k)
            y[line[here]] = root[here]
            # Matching by index is ambiguous where the number of crossings changes:
            # break there if the piece also jumps (more than two rungs), so that
            # two different lines are never joined and a continuous one stays whole.
            jump = np.abs(np.diff(y)) > 2.0 * rung_step[key]
            breaks = np.nonzero((count[:-1] != count[1:]) & jump)[0] + 1
            fixed_axis = x_T if key in _ALONG_RHO else x_rho
            yk = np.insert(y, breaks, np.nan)
            xk = np.insert(fixed_axis, breaks, np.nan)
            pieces_x.append(xk); pieces_y.append(yk)
        if not pieces_x:
            pieces_x, pieces_y = [np.full(1, np.nan)], [np.full(1, np.nan)]
        sep = np.full(1, np.nan)
        xs = np.concatenate([p for piece in pieces_x for p in (piece, sep)][:-1])
        ys = np.concatenate([p for piece in pieces_y for p in (piece, sep)][:-1])
        if key in _ALONG_RHO:                        # fixed axis was log T, roots are log rho
            out.append(Boundary(key, BOUNDARY_LABELS[key], log_rho=ys, log_T=xs))
        else:
            out.append(Boundary(key, BOUNDARY_LABELS[key], log_rho=xs, log_T=ys))
    return out


# -- what dominates the pressure ----------------------------------------------------

class Regime(NamedTuple):
    """One pressure regime: key, words for the legend, and a fill colour."""

    key: str
    label: str
    colour: str


#: Pressure regimes, in code order (code i is REGIMES[i]). Colours are from
#: the colour-blind-safe palette of Okabe & Ito (2008, "Color Universal
#: Design", J*FLY); the assignment to regimes is our own.
REGIMES: tuple[Regime, ...] = (
    Regime("ideal_gas", "ideal gas", "#56B4E9"),                                  # sky blue
    Regime("radiation", "radiation pressure", "#E69F00"),                         # orange
    Regime("degenerate", "degenerate electrons", "#009E73"),                      # bluish green
    Regime("relativistic_degenerate", "relativistic degenerate electrons", "#0072B2"),  # blue
    Regime("pairs", "electron–positron pairs", "#CC79A7"),                        # reddish purple
)
REGIME_KEYS = tuple(r.key for r in REGIMES)


def classify_codes(state) -> np.ndarray:
    """Integer code (index into :data:`REGIMES`) of what dominates the pressure.

    See :func:`classify` for the rules; returns int8 with the state's shape.
    """
    P_rad = np.asarray(state.P_rad, dtype=float)
    P_gas = np.asarray(state.P_gas, dtype=float)
    P_e = np.asarray(state.P_e, dtype=float)
    n_plus = np.asarray(state.n_plus, dtype=float)
    n_minus = np.asarray(state.n_minus, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(n_plus > 0, 2.0 * n_plus / (n_minus + n_plus), 0.0)
    P_pairs = P_e * share
    eta = np.asarray(state.eta, dtype=float)
    x_F = fermi_momentum_ratio(state.rho, state.ye)
    code = np.zeros(np.broadcast(P_rad, P_gas, eta).shape, dtype=np.int8)      # ideal gas
    degenerate = eta > DEGENERACY_ETA
    code[degenerate] = 2
    code[degenerate & (x_F > RELATIVISTIC_XF)] = 3
    code[P_rad > P_gas] = 1
    code[(P_pairs > P_rad) & (P_pairs > P_gas - P_pairs)] = 4
    return code


def classify(state) -> np.ndarray:
    """What dominates the pressure at each point: a key of :data:`REGIMES`.

    Parameters
    ----------
    state : ThermoState
        From :func:`thermoplane.physics.evaluate` (any object with the fields P_rad, P_gas,
        P_e, n_plus, n_minus, eta, rho, ye).

    Returns
    -------
    ndarray of str
        "pairs", "radiation", "degenerate", "relativistic_degenerate" or
        "ideal_gas", with the state's shape.

    Notes
    -----
    First rule that holds, in this order:

    1. "pairs": P_pairs > P_rad and P_pairs > P_gas - P_pairs, with the pair
       pressure estimated as the lepton pressure times the share of leptons
       that belong to pairs (the positrons and as many electrons),
       P_pairs = P_e * 2 n_+ / (n_- + n_+).
    2. "radiation": P_rad > P_gas.
    3. "relativistic_degenerate": eta > DEGENERACY_ETA (0) and
       x_F > RELATIVISTIC_XF (1), x_F from :func:`fermi_momentum_ratio`.
    4. "degenerate": eta > DEGENERACY_ETA.
    5. "ideal_gas": everything else.

    Examples
    --------
    >>> from thermoplane.physics import Composition, evaluate
    >>> s = evaluate(1e-8, 1e8, Composition({"H-1": 1.0}))
    >>> str(classify(s))
    'radiation'
    """
    return np.asarray(np.asarray(REGIME_KEYS)[classify_codes(state)])


#: Words for each modifier of :func:`flags`, for readouts and the command line.
FLAG_LABELS: dict[str, str] = {
    "partially_ionized": "partially ionized",
    "strongly_coupled": "strongly coupled ions (Γ > 1)",
    "crystallized": "crystallized ions (the crystal's free energy is lower)",
    "quantum_ions": "quantum ions (T < T_p)",
    "two_phase": "two phases coexist (the chemical picture's plasma phase transition: P flat on the isotherm)",
}


def describe(state, comp=None) -> tuple[str, list[str]]:
    """The regime and the modifiers that hold at one point, in words.

    Parameters
    ----------
    state : ThermoState
        A scalar state from :func:`thermoplane.physics.evaluate`.
    comp : Composition, optional
        Passed to :func:`flags`.

    Returns
    -------
    (str, list of str)
        The label of the dominant-pressure regime (:data:`REGIMES`) and the labels
        (:data:`FLAG_LABELS`) of the modifiers that hold there.
    """
    regime = REGIMES[int(np.ravel(classify_codes(state))[0])].label
    marks = [FLAG_LABELS[k] for k, v in flags(state, comp).items() if bool(np.ravel(v)[0])]
    return regime, marks


def flags(state, comp=None) -> dict[str, np.ndarray]:
    """Yes/no marks of effects that do not dominate the pressure but matter.

    Parameters
    ----------
    state : ThermoState
        From :func:`thermoplane.physics.evaluate`.
    comp : Composition, optional
        When given, the H (He) test is made only if the composition holds H (He).

    Returns
    -------
    dict of str -> bool ndarray
        "partially_ionized", "strongly_coupled", "crystallized", "quantum_ions", "two_phase".

    Notes
    -----
    - partially_ionized: lo < ion_H < hi (H present), or lo < (ion_He1 + ion_He2)/2
      < hi (He present; the fraction of helium's two electrons that are free,
      so He⁺ alone also counts), with (lo, hi) = :data:`PARTIAL_IONIZATION`
      = (0.01, 0.99).
    - strongly_coupled: Gamma > COUPLING_GAMMA (1).
    - crystallized: the ion crystal has the lower free energy (state.crystallized, from
      physics.eos.dense_plasma; in the classical limit at Gamma = 175, Potekhin & Chabrier 2000).
    - quantum_ions: T < T_p, the ion plasma temperature hbar omega_p / k.
    - two_phase: inside a coexistence region of the chemical picture (state.coexistence, from
      physics.eos.coexistence; never under the default options).
    """
    lo, hi = PARTIAL_IONIZATION
    ion_H = np.asarray(state.ion_H, dtype=float)
    he = 0.5 * (np.asarray(state.ion_He1, dtype=float) + np.asarray(state.ion_He2, dtype=float))
    has_H = True if comp is None else comp.hydrogen > 0
    has_He = True if comp is None else comp.helium > 0
    Gamma = np.asarray(state.Gamma, dtype=float)
    partial = ((lo < ion_H) & (ion_H < hi) & has_H) | ((lo < he) & (he < hi) & has_He)
    return {"partially_ionized": np.asarray(partial),
            "strongly_coupled": Gamma > COUPLING_GAMMA,
            "crystallized": np.asarray(state.crystallized, dtype=float) > 0.5,
            "quantum_ions": np.asarray(state.T, dtype=float) < np.asarray(state.T_p, dtype=float),
            "two_phase": np.asarray(getattr(state, "coexistence", np.zeros_like(Gamma)), dtype=float) > 0.5}
