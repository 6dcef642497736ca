"""The equation of state: every thermodynamic quantity at (rho, T) for a
composition, from the sum of its physical parts.

The question this module answers: what state is matter in at density rho and
temperature T, and how does it respond to compression and heating?
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from .. import constants as const
from ..composition import Composition
from ..coulomb import coupling_parameter
from ..matter import matter
from ..thermo import Part, radiation, response
from .dense_plasma import dense_parts, mixture_plasma_temperature

__all__ = ["ThermoState", "evaluate", "equality_temperature", "FIELD_UNITS", "FIELD_DESCRIPTIONS",
           "OPTIONS", "MAP_OPTIONS", "IMPACT_OPTIONS", "EXPERIMENTAL", "validate_options"]

#: Allowed values of each physics option; the first is the default.
OPTIONS = {
    "electrons": ("fermi", "classical"),
    "ionization": ("saha", "saha-metals", "full", "chemical"),
    "coulomb": (True, False),
    "pairs": (True, False),
}
DEFAULTS = {key: values[0] for key, values in OPTIONS.items()}
#: Experimental option values: the chemical picture solves an equilibrium per point (~1e2-1e3 times the
#: default's cost; see the README); "saha-metals" gives the metals Li..Zn their own Saha stages too (~3 times
#: the default's cost, and the metals' pressure-ionization bands break the density identity: physics.matter).
#: The dashboard offers them, labelled so; the impact maps do not.
EXPERIMENTAL = {("ionization", "chemical"), ("ionization", "saha-metals")}
#: The options the dashboard offers (experimental ones included, labelled).
MAP_OPTIONS = {key: tuple(values) for key, values in OPTIONS.items()}
#: The options the impact maps compare (one more plane each: the experimental ones would cost too much).
IMPACT_OPTIONS = {key: tuple(v for v in values if (key, v) not in EXPERIMENTAL) for key, values in OPTIONS.items()}


#: cgs unit of every ThermoState field (for display and export).
FIELD_UNITS = {
    "rho": "g cm^-3", "T": "K",
    "P": "dyn cm^-2", "P_gas": "dyn cm^-2", "P_rad": "dyn cm^-2", "P_ion": "dyn cm^-2",
    "P_e": "dyn cm^-2", "P_coul": "dyn cm^-2",
    "E": "erg g^-1", "S": "erg g^-1 K^-1",
    "beta": "", "eta": "", "ye": "", "chi_rho": "", "chi_T": "",
    "c_V": "erg g^-1 K^-1", "c_P": "erg g^-1 K^-1",
    "gamma1": "", "gamma3": "", "nabla_ad": "", "sound_speed": "cm s^-1", "Gamma": "",
    "dP_drho": "dyn cm^-2 / (g cm^-3)", "dP_dT": "dyn cm^-2 K^-1",
    "dE_drho": "erg g^-1 / (g cm^-3)", "dS_dT": "erg g^-1 K^-2",
    "ion_H": "", "ion_He1": "", "ion_He2": "", "mean_Z": "",
    "n_minus": "cm^-3", "n_plus": "cm^-3", "h2_fraction": "", "coexistence": "", "metal_electron_fraction": "",
    "crystallized": "", "T_p": "K", "melt_margin": "", "c_V_ion": "erg g^-1 K^-1", "c_V_e": "erg g^-1 K^-1",
    "c_V_rad": "erg g^-1 K^-1",
}

FIELD_DESCRIPTIONS = {
    "rho": "density", "T": "temperature",
    "P": "total pressure", "P_gas": "gas pressure (ions + electrons/positrons + Coulomb)",
    "P_rad": "radiation pressure", "P_ion": "ion pressure", "P_e": "electron + positron pressure",
    "P_coul": "non-ideal correction to the pressure (ion Coulomb liquid or crystal, screening, "
              "electron exchange-correlation)",
    "E": "specific internal energy", "S": "specific entropy",
    "beta": "P_gas / P", "eta": "electron degeneracy parameter (mu_e - m_e c^2)/kT",
    "ye": "free electrons per nucleon, net of positrons",
    "chi_rho": "(dlnP/dlnrho)_T", "chi_T": "(dlnP/dlnT)_rho",
    "c_V": "specific heat at constant volume", "c_P": "specific heat at constant pressure",
    "gamma1": "first adiabatic exponent", "gamma3": "third adiabatic exponent",
    "nabla_ad": "adiabatic temperature gradient", "sound_speed": "adiabatic sound speed",
    "Gamma": "ion coupling parameter",
    "dP_drho": "(dP/drho)_T", "dP_dT": "(dP/dT)_rho", "dE_drho": "(dE/drho)_T", "dS_dT": "(dS/dT)_rho",
    "ion_H": "fraction of hydrogen ionized", "ion_He1": "fraction of helium at least singly ionized",
    "ion_He2": "fraction of helium doubly ionized", "mean_Z": "mean free electrons per nucleus",
    "n_minus": "electron number density", "n_plus": "positron number density",
    "h2_fraction": "fraction of hydrogen nuclei bound in H2 (chemical picture only; 0 otherwise)",
    "metal_electron_fraction": "fraction of the free electrons given by elements heavier than He (their own "
                               "Saha stages for Li..Zn with ionization=\"saha-metals\" or \"chemical\"; "
                               "fully ionized otherwise)",
    "coexistence": "1 where two phases coexist (the chemical picture's plasma phase transition: common tangent "
                   "of F in V, P constant along the isotherm); 0 elsewhere",
    "crystallized": "1 where the ion crystal has the lower free energy, else 0",
    "T_p": "ion plasma temperature hbar omega_p / k (ions are quantum below it)",
    "melt_margin": "free energy of the ion crystal minus the liquid, per ion over kT (< 0: crystal; "
                   "NaN without Coulomb terms)",
    "c_V_ion": "ion part of c_V (ideal ions + liquid or lattice + screening)",
    "c_V_e": "electron part of c_V (electrons, positrons, ionization, exchange-correlation)",
    "c_V_rad": "radiation part of c_V",
}


@dataclass
class ThermoState:
    """The full thermodynamic state at each (rho, T); every field has the broadcast shape.

    Units are cgs, per unit mass where specific (see :data:`FIELD_UNITS`).
    """

    rho: np.ndarray
    T: np.ndarray
    P: np.ndarray
    P_gas: np.ndarray
    P_rad: np.ndarray
    P_ion: np.ndarray
    P_e: np.ndarray
    P_coul: np.ndarray
    E: np.ndarray
    S: np.ndarray
    beta: np.ndarray
    eta: np.ndarray
    ye: np.ndarray
    chi_rho: np.ndarray
    chi_T: np.ndarray
    c_V: np.ndarray
    c_P: np.ndarray
    gamma1: np.ndarray
    gamma3: np.ndarray
    nabla_ad: np.ndarray
    sound_speed: np.ndarray
    Gamma: np.ndarray
    dP_drho: np.ndarray
    dP_dT: np.ndarray
    dE_drho: np.ndarray
    dS_dT: np.ndarray
    ion_H: np.ndarray
    ion_He1: np.ndarray
    ion_He2: np.ndarray
    mean_Z: np.ndarray
    n_minus: np.ndarray
    n_plus: np.ndarray
    h2_fraction: np.ndarray
    coexistence: np.ndarray
    metal_electron_fraction: np.ndarray
    crystallized: np.ndarray
    T_p: np.ndarray
    melt_margin: np.ndarray
    c_V_ion: np.ndarray
    c_V_e: np.ndarray
    c_V_rad: np.ndarray

    def as_dict(self) -> dict[str, np.ndarray]:
        return {f.name: getattr(self, f.name) for f in fields(self)}

    def at(self, index) -> dict[str, float]:
        """Plain floats of every field at one index (for readouts and JSON)."""
        return {name: float(np.asarray(value)[index]) for name, value in self.as_dict().items()}


def validate_options(**options) -> dict:
    """Fill in defaults and check every physics option; ValueError names a bad one."""
    out = dict(DEFAULTS)
    for key, value in options.items():
        if key not in OPTIONS:
            raise ValueError(f"unknown physics option {key!r}; options are {', '.join(OPTIONS)}")
        if value not in OPTIONS[key] or type(value) is not type(OPTIONS[key][0]):
            allowed = " or ".join(repr(v) for v in OPTIONS[key])
            raise ValueError(f"option {key}={value!r} is not allowed; use {allowed}")
        out[key] = value
    return out


def _check_positive(name: str, value) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr) | (arr <= 0)
    if np.any(bad):
        example = arr[bad].flat[0]
        raise ValueError(f"{name} must be finite and > 0; got {example!r}")
    return arr


def evaluate(rho, T, comp: Composition, **options) -> ThermoState:
    """The thermodynamic state of stellar matter at density ``rho`` and temperature ``T``.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3, > 0.
    T : array_like
        Temperature, K, > 0. Broadcasts against ``rho``.
    comp : Composition
        Mass fractions of the nuclides.
    **options
        ``electrons`` ("classical"), ``ionization`` ("full"; "saha-metals": the metals Li..Zn by
        Saha too, experimental; "chemical": the chemical picture, experimental), ``coulomb``
        (False), ``pairs`` (False).

    Returns
    -------
    ThermoState

    Raises
    ------
    ValueError
        Non-positive or non-finite rho or T, or an unknown option.

    Notes
    -----
    P = P_ion + P_e + P_coul + P_rad; response functions from
    :func:`thermoplane.physics.thermo.response`.

    Examples
    --------
    >>> from thermoplane.physics import Composition
    >>> s = evaluate(1.0, 1e7, Composition({"H-1": 1.0}), electrons="classical", ionization="full")
    >>> round(float(s.beta), 6)
    0.999837
    """
    opts = validate_options(**options)
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    rho = _check_positive("rho", rho)
    T = _check_positive("T", T)
    rho, T = np.broadcast_arrays(rho, T)
    rho = np.array(rho, dtype=float)
    T = np.array(T, dtype=float)

    rad = radiation(rho, T, const.a_rad)
    if opts["ionization"] == "chemical":
        return _chemical_state(rho, T, comp, opts, rad)
    if opts["ionization"] == "saha-metals":
        gas = matter(rho, T, comp, opts["electrons"], "saha", opts["pairs"], metals="saha")
    else:
        gas = matter(rho, T, comp, opts["electrons"], opts["ionization"], opts["pairs"])
    Gamma_e, Gamma = coupling_parameter(rho, T, comp.X, comp.A, comp.Z)
    gas_part = gas.part
    P_coul = np.zeros_like(rho)
    crystallized = np.zeros_like(rho)
    melt_margin = np.full_like(rho, np.nan)
    N_nuc = float(np.sum(comp.X / (comp.A * const.m_u)))
    c_V_ion = 1.5 * const.k_B * N_nuc + np.zeros_like(rho)
    if opts["coulomb"]:
        # Dense-plasma terms of fully ionized matter (physics.eos.dense_plasma). Where matter is not fully
        # ionized they are scaled by the square of the ionized fraction, held fixed in the derivatives (our
        # interim rule until the chemical-picture free energy carries them per species).
        ionized = np.clip(gas.n_net / gas.n_full, 0.0, 1.0)
        ion_p, ele_p, crystal, melt_margin = dense_parts(rho, T, comp.X, comp.A, comp.Z, scale=ionized**2)
        gas_part = gas_part + ion_p + ele_p
        P_coul = ion_p.P + ele_p.P
        crystallized = crystal.astype(float)
        c_V_ion = c_V_ion + ion_p.E_T
    T_p = _plasma_temperature(rho, T, comp)
    total = gas_part + rad
    resp = response(total, rho, T)
    return ThermoState(
        rho=rho, T=T, P=total.P, P_gas=gas_part.P, P_rad=rad.P, P_ion=gas.P_ion, P_e=gas.P_e,
        P_coul=P_coul, E=total.E, S=total.S, beta=gas_part.P / total.P, eta=gas.eta,
        ye=gas.n_net * const.m_u / rho, Gamma=Gamma, dP_drho=total.P_rho, dP_dT=total.P_T,
        dE_drho=total.E_rho, dS_dT=total.S_T, ion_H=gas.ion_H, ion_He1=gas.ion_He1, ion_He2=gas.ion_He2,
        mean_Z=gas.mean_Z, n_minus=gas.n_minus, n_plus=gas.n_plus, crystallized=crystallized, T_p=T_p,
        melt_margin=melt_margin, h2_fraction=np.zeros_like(rho), coexistence=np.zeros_like(rho),
        metal_electron_fraction=_metal_electron_fraction(rho, gas.n_net, comp, gas.metal_electrons),
        c_V_ion=c_V_ion, c_V_e=resp["c_V"] - c_V_ion - rad.E_T, c_V_rad=rad.E_T, **resp)


def _metal_electron_fraction(rho, n_free, comp: Composition, metal_electrons=None) -> np.ndarray:
    """Free electrons from elements heavier than He over all free electrons.

    ``metal_electrons`` (per gram) is what the metals' own ionization stages give up (physics.matter: Saha
    stages for Z = 3..30, fully ionized beyond and with ionization="full"); without it the metals are taken
    as fully ionized."""
    if metal_electrons is None:
        heavy = comp.Z > 2
        metal_electrons = float(np.sum(comp.X[heavy] * comp.Z[heavy] / (comp.A[heavy] * const.m_u)))
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.clip(rho * metal_electrons / n_free, 0.0, 1.0)


def _plasma_temperature(rho, T, comp: Composition) -> np.ndarray:
    """Ion plasma temperature of the fully ionized mixture (linear mixing), K."""
    keep = comp.Z > 0
    return mixture_plasma_temperature(rho * float(np.sum(comp.X[keep] * comp.Z[keep] / (comp.A[keep] * const.m_u))),
                                      comp.Z[keep], comp.A[keep], (comp.X / comp.A)[keep]) + 0.0 * T


def _chemical_state(rho, T, comp: Composition, opts: dict, rad: Part) -> ThermoState:
    """The chemical picture (:mod:`thermoplane.physics.eos.equilibrium`) plus radiation as a ThermoState.

    Experimental (see the README): points where the equilibrium is not found are NaN in every field.
    """
    from .coexistence import apply_coexistence
    from .equilibrium import solve_equilibrium
    shape = rho.shape
    r = solve_equilibrium(rho.ravel(), T.ravel(), comp, electrons=opts["electrons"], pairs=opts["pairs"],
                          coulomb=opts["coulomb"])
    r, two_phase = apply_coexistence(rho.ravel(), T.ravel(), comp, r, opts)
    rs = lambda a: np.reshape(a, shape)  # noqa: E731
    bad = rs(r.status < 0)
    rf, tf = rho, T
    gas = Part(P=rs(r.P), E=rs(r.E), S=rs(r.S), P_rho=rs(r.P_lnrho) / rf, P_T=rs(r.P_lnT) / tf,
               E_rho=rs(r.E_lnrho) / rf, E_T=rs(r.E_lnT) / tf, S_rho=rs(r.S_lnrho) / rf, S_T=rs(r.S_lnT) / tf)
    total = gas + rad
    with np.errstate(invalid="ignore", divide="ignore"):
        resp = response(total, rho, T)
    _, Gamma = coupling_parameter(rho, T, comp.X, comp.A, comp.Z)
    n_nuc = rho * float(np.sum(comp.X / (comp.A * const.m_u)))
    fields = dict(
        rho=rho, T=T, P=total.P, P_gas=gas.P, P_rad=rad.P, P_ion=rs(r.P_ion), P_e=rs(r.P_e),
        P_coul=rs(r.P_coul), E=total.E, S=total.S, beta=gas.P / total.P, eta=rs(r.eta),
        ye=rs(r.n_e) * const.m_u / rho, Gamma=Gamma, dP_drho=total.P_rho, dP_dT=total.P_T,
        dE_drho=total.E_rho, dS_dT=total.S_T, ion_H=rs(r.ion_H), ion_He1=rs(r.ion_He1), ion_He2=rs(r.ion_He2),
        mean_Z=rs(r.n_e) / n_nuc, n_minus=rs(r.n_minus), n_plus=rs(r.n_plus), h2_fraction=rs(r.h2_fraction),
        coexistence=rs(two_phase),
        metal_electron_fraction=np.clip(rs(r.metal_electrons) * rho / rs(r.n_e), 0.0, 1.0),
        # the chemical picture's ions are the liquid one-component plasma so far: no crystal, no c_V split
        crystallized=np.zeros_like(rho), T_p=_plasma_temperature(rho, T, comp), melt_margin=np.full_like(rho, np.nan),
        c_V_ion=np.full_like(rho, np.nan), c_V_e=np.full_like(rho, np.nan), c_V_rad=rad.E_T, **resp)
    for key, value in fields.items():
        if key not in ("rho", "T", "Gamma", "P_rad"):
            fields[key] = np.where(bad, np.nan, value)
    return ThermoState(**fields)


def equality_temperature(rho, comp: Composition, **options) -> np.ndarray:
    """Temperature at which radiation pressure equals gas pressure, vectorised over rho.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3.
    comp : Composition
    **options
        Physics options of :func:`evaluate`.

    Returns
    -------
    ndarray
        The lowest T in [1e3, 1e12] K with P_rad = P_gas at each rho; NaN where there is none.

    Notes
    -----
    log(P_rad / P_gas) is evaluated on a ladder of 37 temperatures (one
    :func:`evaluate` call on the whole (rho, ladder) grid); the first upward
    sign change is refined by 45 bisection steps in log T, all densities at
    once. For a non-degenerate, fully ionized gas the answer is
    T = (3 k rho / (a mu m_u))^(1/3) = 3.21e7 K (rho/mu)^(1/3). With pairs the
    ratio never exceeds 4/7 in the hottest, most dilute matter (positrons and
    electrons add 7/4 of P_rad), so the lowest crossing is the one reported.
    """
    rho = _check_positive("rho", rho)
    flat = rho.ravel()
    ladder = np.linspace(3.0, 12.0, 37)

    def g(log_T, r):
        s = evaluate(r, 10.0**log_T, comp, **options)
        return np.log(s.P_rad / s.P_gas)

    values = g(ladder[None, :], flat[:, None])
    up = (values[:, :-1] < 0) & (values[:, 1:] >= 0)
    found = up.any(axis=1)
    first = np.argmax(up, axis=1)
    lo = ladder[first]
    hi = ladder[first + 1]
    for _ in range(45):      # 0.25 dex / 2^45: far below 1e-12 dex
        mid = 0.5 * (lo + hi)
        below = g(mid, flat) < 0
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    return np.where(found, 10.0 ** (0.5 * (lo + hi)), np.nan).reshape(rho.shape)
