"""Stellar-structure helpers for the density–temperature plane: polytropes,
Eddington's standard model, and where the centre of a star of given mass sits.

The question this module answers: for a star of mass M, which central
temperature goes with each central density (the "central line"), and how do
density, pressure and temperature run from centre to surface in a polytrope?
These place illustrative stellar centres and profiles on the plane; they are
not evolution calculations.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.integrate import solve_ivp

from . import constants as const

__all__ = ["LaneEmdenSolution", "PolytropeConstants", "lane_emden", "polytrope_constants",
           "eddington_coefficient", "eddington_beta", "central_line", "polytrope_profile",
           "temperature_for_pressure"]

# Where the integration leaves the power series and starts solve_ivp.
_XI_START = 1e-3
# Bisection bracket for temperatures, log10 K.
_LOG_T_MIN, _LOG_T_MAX = 3.0, 11.0
# 44 halvings of an 8-dex bracket leave 5e-13 dex.
_BISECTION_STEPS = 44


@dataclass(frozen=True)
class LaneEmdenSolution:
    """Solution theta(xi) of the Lane–Emden equation of index n.

    ``xi``, ``theta``, ``dtheta`` (= dtheta/dxi) are arrays from the centre;
    ``xi_1`` is the first zero of theta and ``omega_n = -xi_1^2 theta'(xi_1)``.
    """

    n: float
    xi: np.ndarray
    theta: np.ndarray
    dtheta: np.ndarray
    xi_1: float
    omega_n: float


@dataclass(frozen=True)
class PolytropeConstants:
    """Dimensionless constants of the polytrope of index n.

    ``rho_c_over_mean`` is rho_c / <rho>; ``W_n`` is the coefficient in
    P_c = W_n G M^(2/3) rho_c^(4/3); ``radius_coefficient`` is R / (M/rho_c)^(1/3).
    """

    n: float
    xi_1: float
    omega_n: float
    rho_c_over_mean: float
    W_n: float
    radius_coefficient: float


def _check_index(n) -> float:
    try:
        n = float(n)
    except (TypeError, ValueError):
        raise ValueError(f"polytropic index n must be a number in [0, 5); got {n!r}") from None
    if not (np.isfinite(n) and 0.0 <= n < 5.0):
        raise ValueError(f"polytropic index n must be in [0, 5) (a finite radius); got {n!r}")
    return n


def _series(xi, n):
    """Power series of theta and theta' about the centre (Chandrasekhar 1939, ch. IV)."""
    xi2 = xi * xi
    theta = 1.0 - xi2 / 6.0 + n * xi2 * xi2 / 120.0
    dtheta = -xi / 3.0 + n * xi2 * xi / 30.0
    return theta, dtheta


def lane_emden(n, xi_max=None, n_points: int = 400) -> LaneEmdenSolution:
    """Solve the Lane–Emden equation from the centre to the first zero of theta.

    Parameters
    ----------
    n : float
        Polytropic index, 0 <= n < 5.
    xi_max : float, optional
        Last xi sampled in the returned arrays (default and upper limit: xi_1,
        the surface; beyond it theta < 0 has no physical meaning).
    n_points : int
        Number of samples, evenly spaced in xi from 0, >= 2.

    Returns
    -------
    LaneEmdenSolution

    Raises
    ------
    ValueError
        n outside [0, 5), xi_max not > 0, or n_points < 2.

    Notes
    -----
    .. math:: \\frac{1}{\\xi^2}\\frac{d}{d\\xi}\\left(\\xi^2\\frac{d\\theta}{d\\xi}\\right)
              = -\\theta^n,\\quad \\theta(0) = 1,\\ \\theta'(0) = 0

    The regular series theta = 1 - xi^2/6 + n xi^4/120 starts the solution at
    xi = 1e-3; scipy's DOP853 (rtol 1e-12) carries it on, and a terminal event
    on theta = 0 gives xi_1. theta^n is taken as max(theta, 0)^n so the right
    side stays real for non-integer n as the event is approached.

    References
    ----------
    Chandrasekhar, S. (1939), An Introduction to the Study of Stellar
    Structure, University of Chicago Press, ch. IV.
    """
    n = _check_index(n)
    if int(n_points) < 2:
        raise ValueError(f"n_points must be an integer >= 2; got {n_points!r}")
    if xi_max is not None and not (np.isfinite(xi_max) and xi_max > 0):
        raise ValueError(f"xi_max must be a finite number > 0; got {xi_max!r}")
    sol = _integrate(n)
    xi_1 = float(sol.t_events[0][0])
    dtheta_1 = float(sol.y_events[0][0][1])
    xi_end = xi_1 if xi_max is None else min(float(xi_max), xi_1)
    xi = np.linspace(0.0, xi_end, int(n_points))
    theta, dtheta = _series(xi, n)
    outer = xi > _XI_START
    if np.any(outer):
        y = sol.sol(xi[outer])
        theta[outer], dtheta[outer] = y[0], y[1]
    if xi_end == xi_1:
        theta[-1], dtheta[-1] = 0.0, dtheta_1
    return LaneEmdenSolution(n=n, xi=xi, theta=theta, dtheta=dtheta, xi_1=xi_1,
                             omega_n=-xi_1 * xi_1 * dtheta_1)


@functools.lru_cache(maxsize=64)
def _integrate(n: float):
    def rhs(xi, y):
        return [y[1], -np.maximum(y[0], 0.0) ** n - 2.0 * y[1] / xi]

    def surface(xi, y):
        return y[0]
    surface.terminal = True
    surface.direction = -1

    theta0, dtheta0 = _series(_XI_START, n)
    # theta decreases monotonically for n < 5 and reaches zero before xi ~ 200
    # for n <= 4.9 (xi_1 = 169.5 at n = 4.9); 1e4 leaves room up to n -> 5.
    sol = solve_ivp(rhs, (_XI_START, 1e4), [theta0, dtheta0], method="DOP853", rtol=1e-12,
                    atol=1e-14, events=surface, dense_output=True)
    if len(sol.t_events[0]) == 0:
        raise ValueError(f"no surface found for polytropic index n={n}; use n < 5")
    return sol


def polytrope_constants(n) -> PolytropeConstants:
    """Dimensionless structure constants of the polytrope of index n.

    Parameters
    ----------
    n : float
        Polytropic index, 0 <= n < 5.

    Returns
    -------
    PolytropeConstants

    Notes
    -----
    With r = alpha xi, alpha^2 = (n+1) K rho_c^(1/n - 1) / (4 pi G), the mass is
    M = 4 pi alpha^3 rho_c omega_n, so alpha = (M / (4 pi rho_c omega_n))^(1/3) and

    .. math:: P_c = K\\rho_c^{1+1/n} = \\frac{4\\pi G\\alpha^2\\rho_c^2}{n+1}
              = W_n G M^{2/3}\\rho_c^{4/3},\\qquad
              W_n = \\frac{(4\\pi)^{1/3}}{(n+1)\\,\\omega_n^{2/3}}

    (W_3 = 0.364). Also rho_c/<rho> = xi_1^3 / (3 omega_n) and
    R = xi_1 (4 pi omega_n)^(-1/3) (M/rho_c)^(1/3).

    References
    ----------
    Chandrasekhar, S. (1939), An Introduction to the Study of Stellar
    Structure, ch. IV; Kippenhahn, Weigert & Weiss (2012), sec. 19.
    """
    sol = lane_emden(n, n_points=2)
    xi_1, omega = sol.xi_1, sol.omega_n
    return PolytropeConstants(
        n=sol.n, xi_1=xi_1, omega_n=omega, rho_c_over_mean=xi_1**3 / (3.0 * omega),
        W_n=(4.0 * math.pi) ** (1.0 / 3.0) / ((sol.n + 1.0) * omega ** (2.0 / 3.0)),
        radius_coefficient=xi_1 * (4.0 * math.pi * omega) ** (-1.0 / 3.0))


def eddington_coefficient() -> float:
    """Coefficient c of Eddington's quartic 1 - beta = c mu^4 beta^4 (M/M_sun)^2.

    Notes
    -----
    For an n = 3 polytrope with P = P_gas / beta and beta constant,
    K^3 = 3 (1 - beta) (k / (mu m_u))^4 / (a beta^4) and M = 4 pi omega_3 (K / (pi G))^(3/2), so

    .. math:: c = \\frac{\\pi G^3 a\\, m_u^4 M_\\odot^2}{48\\,\\omega_3^2 k^4} = 0.00299

    with omega_3 from :func:`lane_emden`. (Eddington 1926, The Internal
    Constitution of the Stars, ch. VI; Chandrasekhar 1939, ch. VI.)
    """
    omega = polytrope_constants(3).omega_n
    return (math.pi * const.G**3 * const.a_rad * const.m_u**4 * const.M_sun**2
            / (48.0 * omega**2 * const.k_B**4))


def eddington_beta(mass_msun, mu) -> np.ndarray:
    """Gas-pressure fraction beta of Eddington's standard model, vectorised.

    Parameters
    ----------
    mass_msun : array_like
        Stellar mass in solar masses, > 0.
    mu : array_like
        Mean molecular weight, > 0; broadcasts against ``mass_msun``.

    Returns
    -------
    ndarray
        beta in (0, 1], the root of the quartic.

    Raises
    ------
    ValueError
        Non-positive or non-finite mass or mu.

    Notes
    -----
    .. math:: 1 - \\beta = c\\,\\mu^4\\beta^4 (M/M_\\odot)^2,\\quad c = 0.00299

    (c from :func:`eddington_coefficient`). f(beta) = q beta^4 + beta - 1,
    q = c mu^4 M^2, is increasing and convex on (0, 1] with f(0) < 0 < f(b0) at
    b0 = min(1, q^(-1/4)); Newton's method from b0 therefore converges
    monotonically to the single root. It runs on the whole array at once.

    References
    ----------
    Eddington, A. S. (1926), The Internal Constitution of the Stars, CUP.
    """
    M = np.asarray(mass_msun, dtype=float)
    mu = np.asarray(mu, dtype=float)
    for name, arr in (("mass_msun", M), ("mu", mu)):
        bad = ~np.isfinite(arr) | (arr <= 0)
        if np.any(bad):
            raise ValueError(f"{name} must be finite and > 0; got {arr[bad].flat[0]!r}")
    q = eddington_coefficient() * mu**4 * M**2
    beta = np.minimum(1.0, q ** -0.25)
    for _ in range(100):
        f = q * beta**4 + beta - 1.0
        step = f / (4.0 * q * beta**3 + 1.0)
        beta = beta - step
        if np.all(np.abs(step) <= 1e-15 * beta):
            break
    return beta


def temperature_for_pressure(rho, P, comp, **physics_options) -> np.ndarray:
    """Temperature at which the equation of state gives pressure P at density rho.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3, > 0.
    P : array_like
        Pressure, dyn cm^-2, > 0; broadcasts against ``rho``.
    comp : Composition
    **physics_options
        Passed to :func:`thermoplane.physics.eos.evaluate` (its defaults otherwise).

    Returns
    -------
    ndarray
        T in K; NaN where P lies outside [P(rho, 1e3 K), P(rho, 1e11 K)]
        (below: degenerate or cold pressure alone exceeds P).

    Notes
    -----
    Bisection in log T on log P(rho, T) - log P, vectorised over all points,
    44 halvings of the 8-dex bracket. Requires P to increase with T at fixed
    rho, which holds for every part of the equation of state.
    """
    from .eos import evaluate   # lazy: follows whatever the EOS module provides

    rho = np.asarray(rho, dtype=float)
    P = np.asarray(P, dtype=float)
    rho, P = np.broadcast_arrays(rho, P)
    bad = ~np.isfinite(P) | (P <= 0)
    if np.any(bad):
        raise ValueError(f"P must be finite and > 0; got {P[bad].flat[0]!r}")
    log_P = np.log(P)

    def g(log_T):
        return np.log(evaluate(rho, 10.0**log_T, comp, **physics_options).P) - log_P

    lo = np.full(rho.shape, _LOG_T_MIN)
    hi = np.full(rho.shape, _LOG_T_MAX)
    ok = (g(lo) <= 0) & (g(hi) >= 0)
    for _ in range(_BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        below = g(mid) < 0
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    return np.where(ok, 10.0 ** (0.5 * (lo + hi)), np.nan)


def _check_mass(mass_msun) -> np.ndarray:
    M = np.asarray(mass_msun, dtype=float)
    bad = ~np.isfinite(M) | (M <= 0)
    if np.any(bad):
        raise ValueError(f"mass_msun must be finite and > 0 (solar masses); got {M[bad].flat[0]!r}")
    return M


def _central_pressure(M, rho_c, n):
    return polytrope_constants(n).W_n * const.G * (M * const.M_sun) ** (2.0 / 3.0) * rho_c ** (4.0 / 3.0)


def central_line(mass_msun, comp, rho_c, **physics_options) -> np.ndarray:
    """Central temperature of an n = 3 polytrope of mass M at each central density.

    Parameters
    ----------
    mass_msun : array_like
        Mass in solar masses, > 0; broadcasts against ``rho_c``.
    comp : Composition
    rho_c : array_like
        Central density, g cm^-3, > 0.
    **physics_options
        Passed to :func:`thermoplane.physics.eos.evaluate` (``electrons``, ``ionization``,
        ``coulomb``, ``pairs``); its defaults otherwise.

    Returns
    -------
    ndarray
        T_c in K, shape of the broadcast inputs; NaN where no temperature in
        [1e3, 1e11] K gives the required pressure (typically: the cold,
        degenerate pressure alone already exceeds it).

    Raises
    ------
    ValueError
        Non-positive or non-finite mass or rho_c, or a bad physics option.

    Notes
    -----
    Solves, with the full equation of state,

    .. math:: P(\\rho_c, T_c) = W_3\\, G M^{2/3} \\rho_c^{4/3},\\qquad W_3 = 0.364

    (:func:`polytrope_constants`). For a classical ideal gas without
    radiation this gives T_c = W_3 G M^(2/3) mu m_u rho_c^(1/3) / k; with
    degenerate electrons the line reaches a maximum temperature and turns
    down, which is why low masses never ignite hydrogen
    (Kippenhahn, Weigert & Weiss 2012, sec. 33.3).

    References
    ----------
    Kippenhahn, R., Weigert, A. & Weiss, A. (2012), Stellar Structure and
    Evolution, 2nd ed., sec. 19 and 33.
    """
    M = _check_mass(mass_msun)
    rho_c = np.asarray(rho_c, dtype=float)
    bad = ~np.isfinite(rho_c) | (rho_c <= 0)
    if np.any(bad):
        raise ValueError(f"rho_c must be finite and > 0; got {rho_c[bad].flat[0]!r}")
    M, rho_c = np.broadcast_arrays(M, rho_c)
    return temperature_for_pressure(rho_c, _central_pressure(M, rho_c, 3), comp, **physics_options)


def polytrope_profile(mass_msun, comp, rho_c, n=3, n_points: int = 200, **physics_options) -> pd.DataFrame:
    """Run of density, pressure and temperature through a polytrope (illustrative).

    Parameters
    ----------
    mass_msun : float
        Mass in solar masses, > 0.
    comp : Composition
    rho_c : float
        Central density, g cm^-3, > 0.
    n : float
        Polytropic index, 0 <= n < 5 (default 3).
    n_points : int
        Number of rows, >= 2, evenly spaced in xi from the centre up to (not
        including) the surface, where rho = 0.
    **physics_options
        Passed to :func:`thermoplane.physics.eos.evaluate`.

    Returns
    -------
    pandas.DataFrame
        Columns ``r_frac`` (r/R), ``m_frac`` (m/M), ``rho`` (g cm^-3),
        ``T`` (K, NaN where no temperature in [1e3, 1e11] K fits), ``P`` (dyn cm^-2).

    Notes
    -----
    rho = rho_c theta^n, P = P_c theta^(n+1) with P_c = W_n G M^(2/3) rho_c^(4/3),
    r/R = xi/xi_1, m/M = -xi^2 theta'/omega_n; T from the equation of state
    at each (rho, P) by :func:`temperature_for_pressure`. A polytrope is not
    an evolved star: use it to place an illustrative profile on the plane.
    """
    M = float(_check_mass(mass_msun))
    if not (np.isfinite(rho_c) and rho_c > 0):
        raise ValueError(f"rho_c must be finite and > 0; got {rho_c!r}")
    if int(n_points) < 2:
        raise ValueError(f"n_points must be an integer >= 2; got {n_points!r}")
    n = _check_index(n)
    sol = lane_emden(n, n_points=int(n_points) + 1)
    xi, theta, dtheta = sol.xi[:-1], sol.theta[:-1], sol.dtheta[:-1]
    rho = float(rho_c) * theta**n
    P = _central_pressure(M, float(rho_c), n) * theta ** (n + 1.0)
    T = temperature_for_pressure(rho, P, comp, **physics_options)
    return pd.DataFrame({"r_frac": xi / sol.xi_1, "m_frac": 0.0 - xi**2 * dtheta / sol.omega_n,
                         "rho": rho, "T": T, "P": P})
