"""Thermodynamic bookkeeping shared by every part of the equation of state.

Each physical part (radiation, matter from physics.matter, Coulomb) returns a
:class:`Part`: pressure, specific energy and specific entropy with their
partial derivatives in rho and T. Parts add; the response functions
(chi_rho, chi_T, c_V, Gamma_1, nabla_ad, ...) follow from the sum in one place,
:func:`response`, so every option combination uses the same formulas.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

__all__ = ["Part", "response", "radiation"]


@dataclass
class Part:
    """P (dyn cm^-2), E (erg g^-1), S (erg g^-1 K^-1) and their partials.

    ``P_rho`` is (dP/drho)_T, ``P_T`` is (dP/dT)_rho, and likewise for E, S.
    """

    P: np.ndarray
    E: np.ndarray
    S: np.ndarray
    P_rho: np.ndarray
    P_T: np.ndarray
    E_rho: np.ndarray
    E_T: np.ndarray
    S_rho: np.ndarray
    S_T: np.ndarray

    def __add__(self, other: "Part") -> "Part":
        return Part(*(getattr(self, f.name) + getattr(other, f.name) for f in fields(self)))


def response(total: Part, rho: np.ndarray, T: np.ndarray) -> dict[str, np.ndarray]:
    """Response functions of the summed equation of state.

    Notes
    -----
    Cox & Giuli (1968), ch. 9; Kippenhahn, Weigert & Weiss (2012), sec. 4.1:

    .. math::
        \\chi_\\rho = (\\partial\\ln P/\\partial\\ln\\rho)_T,\\;
        \\chi_T = (\\partial\\ln P/\\partial\\ln T)_\\rho,\\;
        c_P = c_V + P\\chi_T^2/(\\rho T\\chi_\\rho),\\;
        \\Gamma_1 = \\chi_\\rho c_P/c_V = \\chi_\\rho + P\\chi_T^2/(\\rho T c_V),\\;
        \\Gamma_3 - 1 = P\\chi_T/(\\rho T c_V),\\;
        \\nabla_{ad} = P\\chi_T/(\\rho T c_P \\chi_\\rho)
    """
    P = total.P
    chi_rho = rho * total.P_rho / P
    chi_T = T * total.P_T / P
    c_V = total.E_T
    # the same formulas arranged so that chi_rho = 0 (two coexisting phases) leaves Gamma_1 and nabla_ad
    # finite; c_P is infinite there (heat at constant P turns one phase into the other)
    x = P * chi_T**2 / (rho * T)
    with np.errstate(divide="ignore"):
        c_P = c_V + x / chi_rho
    gamma1 = chi_rho + x / c_V
    gamma3 = 1.0 + P * chi_T / (rho * T * c_V)
    nabla_ad = P * chi_T / (rho * T * c_V * chi_rho + P * chi_T**2)
    sound_speed = np.sqrt(np.maximum(gamma1 * P / rho, 0.0))
    return dict(chi_rho=chi_rho, chi_T=chi_T, c_V=c_V, c_P=c_P, gamma1=gamma1,
                gamma3=gamma3, nabla_ad=nabla_ad, sound_speed=sound_speed)


def radiation(rho: np.ndarray, T: np.ndarray, a_rad: float) -> Part:
    """Black-body radiation in equilibrium with matter.

    Notes
    -----
    P = a T^4 / 3, E = a T^4 / rho, S = 4 a T^3 / (3 rho) (Kippenhahn, Weigert
    & Weiss 2012, sec. 13.2).
    """
    aT3 = a_rad * T**3
    aT4 = aT3 * T
    return Part(P=aT4 / 3.0, E=aT4 / rho, S=4.0 * aT3 / (3.0 * rho),
                P_rho=np.zeros_like(rho * T), P_T=4.0 * aT3 / 3.0,
                E_rho=-aT4 / rho**2, E_T=4.0 * aT3 / rho,
                S_rho=-4.0 * aT3 / (3.0 * rho**2), S_T=4.0 * a_rad * T**2 / rho)
