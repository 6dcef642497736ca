"""Nuclear energy generation: where on the density–temperature plane does matter burn?

The question this module answers: how many erg per gram per second does a
given burning process release at (rho, T) for a composition, and along which
line of the plane does that rate reach a chosen level (an "ignition contour")?

Four processes are offered, each as a published analytic fit:

- ``"pp"``: hydrogen burning by the pp chain,
- ``"cno"``: hydrogen burning by the CNO cycle,
- ``"triple_alpha"``: helium burning, 3 He-4 -> C-12,
- ``"carbon"``: carbon burning, C-12 + C-12.

The pp, CNO and triple-alpha fits are those of Kippenhahn, Weigert & Weiss
(2012), *Stellar Structure and Evolution*, 2nd ed., sec. 18.5 (rates after
Angulo et al. 1999 and Caughlan & Fowler 1988). The carbon rate is the analytic
C-12 + C-12 rate of Caughlan & Fowler (1988) turned into an energy rate here.
Screening is the weak-screening factor of Salpeter (1954), capped (see
:func:`screening_factor`).

Checks of the recalled coefficients (search of public pages and code):
the pp prefactor 2.57e4, Gamow constant 3.381 and g11 polynomial, and the CNO
prefactor 8.24e25, constant 15.231, cut-off (T9/0.8)^2 and g14 polynomial were
found identical in several independent implementations that quote the
Kippenhahn, Weigert & Weiss fits; the triple-alpha fit 5.09e11 rho^2 Y^3
T8^-3 exp(-44.027/T8) was found on M. Zingale's public notes on helium burning;
the Caughlan & Fowler (1988) C-12 + C-12 expression 4.27e26 T9a^(5/6) T9^(-3/2)
exp(-84.165 T9a^(-1/3) - 2.12e-3 T9^3), T9a = T9/(1 + 0.0396 T9), was found
identical in several independent reaction-network codes. Kippenhahn, Weigert
& Weiss write the weak-screening exponent as 5.92e-3 Z1 Z2 (zeta rho/T7^3)^(1/2),
which is 0.187 Z1 Z2 zeta rho^(1/2) T6^(-3/2): the 0.188 used here agrees to 0.4 %.

No neutrino losses are subtracted beyond what the fits already exclude; no
strong or intermediate screening; no nuclear statistical equilibrium.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import constants as const
from .composition import NUCLIDES, Composition

__all__ = ["PROCESSES", "PROCESS_LABELS", "SCREENING_EXPONENT_CAP", "epsilon", "screening_factor",
           "screening_exponent", "carbon_q_value", "IgnitionLine", "ignition_contours"]

#: Burning processes accepted by :func:`epsilon`, in order of ignition temperature.
PROCESSES = ("pp", "cno", "triple_alpha", "carbon")

#: Human-readable name of each process (for legends and labels).
PROCESS_LABELS = {
    "pp": "pp chain",
    "cno": "CNO cycle",
    "triple_alpha": "triple alpha",
    "carbon": "carbon burning",
}

#: Upper limit on the weak-screening exponent H of each reaction step. Weak
#: screening (Salpeter 1954) assumes H << 1; beyond H ~ 1 the plasma is in
#: the intermediate/strong regime, for which no prescription is implemented.
#: Rather than extrapolating exp(H) to absurd (and overflowing) values the
#: exponent is held at this cap, i.e. the screening factor of one step never
#: exceeds e. This underestimates the enhancement in dense, cold plasma.
SCREENING_EXPONENT_CAP = 1.0

#: Nuclides counted as CNO catalysts (their summed mass fraction is X_CNO).
CNO_NUCLIDES = ("C-12", "C-13", "N-14", "N-15", "O-16", "O-18")

# Clip for log(epsilon) before exponentiation: exp(700) ~ 1e304 < float max.
_LOG_EPS_MAX = 700.0
# Floor for the polynomial correction factors g11 and g14, which the fits let
# turn negative far above their range of validity (T9 >~ 4 for g14, T9 >~ 10 for
# g11): there the rate is meaningless and is taken as (essentially) zero.
_G_FLOOR = 1e-300
_MEV = 1e6 * const.eV


def _check_positive(name: str, value) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr) | (arr <= 0)
    if np.any(bad):
        raise ValueError(f"{name} must be finite and > 0; got {arr[bad].flat[0]!r}")
    return arr


def _check_process(process: str) -> str:
    if process not in PROCESSES:
        raise ValueError(f"unknown burning process {process!r}; choose one of {', '.join(PROCESSES)}")
    return process


def _zeta(comp: Composition) -> float:
    """Salpeter's zeta = sqrt(sum Z_i (Z_i + 1) X_i / A_i), fully ionized matter."""
    return math.sqrt(float(np.sum(comp.Z * (comp.Z + 1.0) * comp.X / comp.A)))


def screening_exponent(rho, T, comp: Composition, Z1: float, Z2: float) -> np.ndarray:
    """Capped weak-screening exponent H of one reaction between charges Z1 and Z2.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3.
    T : array_like
        Temperature, K.
    comp : Composition
        Gives zeta (fully ionized).
    Z1, Z2 : float
        Charges of the two reacting nuclei.

    Returns
    -------
    ndarray
        min(H, :data:`SCREENING_EXPONENT_CAP`), broadcast shape of rho and T.

    Notes
    -----
    Salpeter (1954), in the form of Kippenhahn, Weigert & Weiss (2012), sec. 18.4:

    .. math:: H = 0.188\\, Z_1 Z_2\\, \\zeta\\, \\rho^{1/2} T_6^{-3/2},\\qquad
              \\zeta^2 = \\sum_i Z_i (Z_i + 1) X_i / A_i

    References
    ----------
    Salpeter, E. E. (1954), Aust. J. Phys. 7, 373.
    """
    rho = np.asarray(rho, dtype=float)
    T6 = np.asarray(T, dtype=float) / 1e6
    # rho^(1/2) T6^(-3/2) written through logs: no overflow for T6 down to 1e-3.
    log_h = np.log(0.188 * Z1 * Z2 * _zeta(comp)) + 0.5 * np.log(rho) - 1.5 * np.log(T6)
    return np.exp(np.minimum(log_h, math.log(SCREENING_EXPONENT_CAP)))


def screening_factor(rho, T, comp: Composition, Z1: float, Z2: float) -> np.ndarray:
    """Weak-screening enhancement f = exp(H) of one reaction step, H capped.

    See :func:`screening_exponent` for the formula and the cap. The factor is
    in [1, e^SCREENING_EXPONENT_CAP].
    """
    return np.exp(screening_exponent(rho, T, comp, Z1, Z2))


def carbon_q_value() -> float:
    """Energy per C-12 + C-12 reaction used for carbon burning, erg.

    Notes
    -----
    Q = (2 M(C-12) - M(Mg-24)) c^2 = 13.93 MeV from the AME2020 atomic masses of
    :mod:`thermoplane.physics.composition`. This is the energy of turning two C-12 into the
    mass of one Mg-24; the immediate exit channels release less
    (Ne-20 + alpha 4.62 MeV, Na-23 + p 2.24 MeV), and the rest comes from the
    follow-up captures of the liberated protons and alphas on the ashes. Using
    the full 13.93 MeV therefore assumes those captures follow promptly: it is
    the upper-end effective Q. A channel-only average (about 3.6 MeV for a
    roughly 56:44 alpha:p split) would lower epsilon by a factor ~4, i.e. raise
    an ignition contour by only ~2 % in T because the rate is so steep.
    """
    dm = 2.0 * NUCLIDES["C-12"].A - NUCLIDES["Mg-24"].A      # u
    return dm * const.m_u * const.c**2


def _log_pp(rho, T9, comp):
    # KWW (2012) sec. 18.5 after Angulo et al. (1999); psi = 1 (pure pp I
    # termination, no He-3 + He-4 branches): the lowest published value of
    # psi, which lies between 1 and about 1.5-2 depending on T and Y.
    g11 = 1.0 + 3.82 * T9 + 1.51 * T9**2 + 0.144 * T9**3 - 0.0114 * T9**4
    X = comp.hydrogen
    log_eps = (math.log(2.57e4) + np.log(rho) - (2.0 / 3.0) * np.log(T9) - 3.381 * T9 ** (-1.0 / 3.0)
               + np.log(np.maximum(g11, _G_FLOOR)))
    return log_eps, X * X, [(1.0, 1.0)]


def _log_cno(rho, T9, comp):
    # KWW (2012) sec. 18.5; the rate is set by N-14 + p, so screening uses Z1 Z2 = 7.
    g14 = 1.0 - 2.00 * T9 + 3.41 * T9**2 - 2.43 * T9**3
    X_cno = sum(comp.fraction(name) for name in CNO_NUCLIDES)
    log_eps = (math.log(8.24e25) + np.log(rho) - (2.0 / 3.0) * np.log(T9)
               - 15.231 * T9 ** (-1.0 / 3.0) - (T9 / 0.8) ** 2 + np.log(np.maximum(g14, _G_FLOOR)))
    return log_eps, X_cno * comp.hydrogen, [(1.0, 7.0)]


def _log_triple_alpha(rho, T9, comp):
    # KWW (2012) sec. 18.5 after Caughlan & Fowler (1988). Two screened steps:
    # He-4 + He-4 -> Be-8 (Z1 Z2 = 4) and Be-8 + He-4 -> C-12 (Z1 Z2 = 8).
    T8 = 10.0 * T9
    Y = comp.fraction("He-4")
    log_eps = math.log(5.09e11) + 2.0 * np.log(rho) - 3.0 * np.log(T8) - 44.027 / T8
    return log_eps, Y**3, [(2.0, 2.0), (4.0, 2.0)]


def _log_carbon(rho, T9, comp):
    # Caughlan & Fowler (1988) N_A<sigma v> for C-12 + C-12, cm^3 mol^-1 s^-1.
    # Reactions per cm^3 per s for identical nuclei: n_C^2 <sigma v> / 2, with
    # n_C = rho X_C / (A_C m_u) and <sigma v> = N_A<sigma v> / N_A; per gram:
    #   epsilon = Q rho X_C^2 N_A<sigma v> / (2 A_C^2 m_u^2 N_A).
    T9a = T9 / (1.0 + 0.0396 * T9)
    log_rate = (math.log(4.27e26) + (5.0 / 6.0) * np.log(T9a) - 1.5 * np.log(T9)
                - 84.165 * T9a ** (-1.0 / 3.0) - 2.12e-3 * T9**3)
    A_C = NUCLIDES["C-12"].A
    log_pref = math.log(carbon_q_value() / (2.0 * A_C**2 * const.m_u**2 * const.N_A))
    X_C = comp.fraction("C-12")
    return log_pref + np.log(rho) + log_rate, X_C**2, [(6.0, 6.0)]


_FITS = {"pp": _log_pp, "cno": _log_cno, "triple_alpha": _log_triple_alpha, "carbon": _log_carbon}


def epsilon(rho, T, comp: Composition, process: str, *, screening: bool = True) -> np.ndarray:
    """Specific nuclear energy generation rate of one burning process, erg g^-1 s^-1.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3, > 0.
    T : array_like
        Temperature, K, > 0; broadcasts against ``rho``.
    comp : Composition
        Mass fractions. pp and CNO use the hydrogen fraction X (H-1 and H-2);
        CNO uses X_CNO = X(C-12) + X(C-13) + X(N-14) + X(N-15) + X(O-16) + X(O-18)
        (in CNO equilibrium all of C+N+O ends as N-14, so the total counts);
        triple alpha uses Y = X(He-4); carbon uses X(C-12).
    process : {"pp", "cno", "triple_alpha", "carbon"}
    screening : bool, optional
        Apply the capped weak-screening factor (default True).

    Returns
    -------
    ndarray
        epsilon >= 0, finite, with the broadcast shape of rho and T.

    Raises
    ------
    ValueError
        Unknown process, non-positive or non-finite rho or T, or comp not a
        Composition.

    Notes
    -----
    T9 = T/1e9 K, T8 = T/1e8 K; f is the screening factor of
    :func:`screening_factor` (Z1 Z2 noted).

    pp chain (KWW 2012, sec. 18.5; Angulo et al. 1999), psi = 1, f(1, 1):

    .. math:: \\epsilon_{pp} = 2.57\\times10^4\\,\\psi f g_{11} \\rho X^2 T_9^{-2/3}
              e^{-3.381/T_9^{1/3}},\\quad
              g_{11} = 1 + 3.82T_9 + 1.51T_9^2 + 0.144T_9^3 - 0.0114T_9^4

    CNO cycle (same source), f(1, 7) for N-14 + p:

    .. math:: \\epsilon_{CNO} = 8.24\\times10^{25} f g_{14} X_{CNO} X \\rho T_9^{-2/3}
              e^{-15.231 T_9^{-1/3} - (T_9/0.8)^2},\\quad
              g_{14} = 1 - 2.00T_9 + 3.41T_9^2 - 2.43T_9^3

    Triple alpha (same source, after Caughlan & Fowler 1988), f(2, 2) f(4, 2):

    .. math:: \\epsilon_{3\\alpha} = 5.09\\times10^{11} f \\rho^2 Y^3 T_8^{-3} e^{-44.027/T_8}

    Carbon burning (Caughlan & Fowler 1988), f(6, 6), Q from
    :func:`carbon_q_value` (13.93 MeV):

    .. math:: N_A\\langle\\sigma v\\rangle = 4.27\\times10^{26} T_{9a}^{5/6} T_9^{-3/2}
              e^{-84.165/T_{9a}^{1/3} - 2.12\\times10^{-3} T_9^3},\\quad
              T_{9a} = T_9/(1 + 0.0396 T_9),

    .. math:: \\epsilon_C = \\frac{Q \\rho X_C^2}{2 A_C^2 m_u^2 N_A} N_A\\langle\\sigma v\\rangle

    Everything is evaluated as a logarithm and exponentiated once, so no
    intermediate overflows for rho in [1e-12, 1e12] and T in [1e3, 1e11]; far
    outside a fit's range (T9 above about 4 for CNO, 10 for pp) the
    polynomial factors turn negative and are floored, giving epsilon ~ 0.

    References
    ----------
    Kippenhahn, R., Weigert, A. & Weiss, A. (2012), Stellar Structure and
    Evolution, 2nd ed., Springer, sec. 18.4-18.5.
    Angulo, C. et al. (1999), Nucl. Phys. A 656, 3 (NACRE).
    Caughlan, G. R. & Fowler, W. A. (1988), At. Data Nucl. Data Tables 40, 283.
    Salpeter, E. E. (1954), Aust. J. Phys. 7, 373.

    Examples
    --------
    >>> from thermoplane.physics import Composition
    >>> he = Composition({"He-4": 1.0})
    >>> 0.1 < float(epsilon(1e4, 1e8, he, "triple_alpha")) < 100
    True
    """
    _check_process(process)
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    rho = _check_positive("rho", rho)
    T = _check_positive("T", T)
    shape = np.broadcast_shapes(rho.shape, T.shape)
    # rho and T keep their own shapes: on a map (rho a row, T a column) the factors of T alone and of
    # rho alone are computed once per row or column, and only their sums over the whole plane
    T9 = T / 1e9
    with np.errstate(under="ignore"):
        log_eps, abundance, steps = _FITS[process](rho, T9, comp)
        if screening:
            for Z1, Z2 in steps:
                log_eps = log_eps + screening_exponent(rho, T, comp, Z1, Z2)
        eps = abundance * np.exp(np.minimum(log_eps, _LOG_EPS_MAX))
    eps = np.asarray(eps, dtype=float)
    return eps if eps.shape == shape else np.array(np.broadcast_to(eps, shape))


@dataclass(frozen=True)
class IgnitionLine:
    """One line of constant epsilon on the plane.

    ``log_T`` (log10 K) is given at every ``log_rho`` (log10 g cm^-3); NaN
    where the level is not reached inside the temperature range.
    """

    process: str
    level: float
    log_rho: np.ndarray
    log_T: np.ndarray
    label: str


def _format_level(level: float) -> str:
    exponent = math.log10(level)
    if exponent == round(exponent) and abs(exponent) >= 3:
        return f"10^{int(round(exponent))}"
    return f"{level:g}"


def ignition_contours(comp: Composition, process: str, epsilon_levels=(1.0, 1e3), log_rho=(-10, 10),
                      log_T=(3, 10), n: int = 400, *, screening: bool = True) -> list[IgnitionLine]:
    """Lines of constant energy generation rate ("ignition contours") of one process.

    Parameters
    ----------
    comp : Composition
    process : {"pp", "cno", "triple_alpha", "carbon"}
    epsilon_levels : sequence of float
        Levels of epsilon, erg g^-1 s^-1, each > 0 (1 and 1e3 are common choices).
    log_rho : (float, float)
        Range of log10 rho (g cm^-3), sampled at ``n`` evenly spaced columns.
    log_T : (float, float)
        Range of log10 T (K) searched.
    n : int
        Number of density columns, >= 2.
    screening : bool, optional
        Passed to :func:`epsilon`.

    Returns
    -------
    list of IgnitionLine
        One per level, in the order given.

    Raises
    ------
    ValueError
        Unknown process, a level that is not a finite positive number, an
        empty or reversed range, or n < 2.

    Notes
    -----
    At each column the coolest temperature where epsilon reaches the level is
    found: log epsilon is tabulated on a coarse grid of log T (0.05 dex), the
    first upward crossing of the level is bracketed, and 50 vectorised
    bisection steps refine it (bracket below 1e-16 dex). Taking the *first*
    crossing keeps the answer right where a fit turns over far above its
    range (the CNO cut-off factor exp(-(T9/0.8)^2)). NaN where the level is
    not reached in ``log_T``.
    """
    _check_process(process)
    levels = [float(v) for v in np.atleast_1d(np.asarray(epsilon_levels, dtype=float))]
    for v in levels:
        if not (np.isfinite(v) and v > 0):
            raise ValueError(f"epsilon level must be a finite number > 0 erg/g/s; got {v!r}")
    for name, rng in (("log_rho", log_rho), ("log_T", log_T)):
        if len(rng) != 2 or not (np.isfinite(rng[0]) and np.isfinite(rng[1]) and rng[0] < rng[1]):
            raise ValueError(f"{name} must be (low, high) with low < high; got {rng!r}")
    if int(n) < 2:
        raise ValueError(f"n must be an integer >= 2; got {n!r}")
    n = int(n)
    lr = np.linspace(float(log_rho[0]), float(log_rho[1]), n)
    rho = 10.0**lr
    n_T = max(2, int(math.ceil((log_T[1] - log_T[0]) / 0.05)) + 1)
    grid_T = np.linspace(float(log_T[0]), float(log_T[1]), n_T)
    with np.errstate(divide="ignore"):
        log_eps_grid = np.log(epsilon(rho[None, :], 10.0 ** grid_T[:, None], comp, process, screening=screening))
    lines = []
    for level in levels:
        g = log_eps_grid - math.log(level)          # (n_T, n)
        up = (g[:-1] < 0) & (g[1:] >= 0)
        found = up.any(axis=0)
        first = np.argmax(up, axis=0)
        lo = grid_T[first]
        hi = grid_T[first + 1]
        for _ in range(50):
            mid = 0.5 * (lo + hi)
            with np.errstate(divide="ignore"):
                below = np.log(epsilon(rho, 10.0**mid, comp, process, screening=screening)) < math.log(level)
            lo = np.where(below, mid, lo)
            hi = np.where(below, hi, mid)
        # hi is always at or above the level: report it so epsilon(T) >= level.
        out = np.where(found, hi, np.nan)
        label = f"{PROCESS_LABELS[process]}: ε = {_format_level(level)} erg/g/s"
        lines.append(IgnitionLine(process=process, level=level, log_rho=lr.copy(), log_T=out, label=label))
    return lines
