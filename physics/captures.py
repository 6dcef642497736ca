"""Electron-capture thresholds: at what density do electrons become energetic
enough to be captured by the nuclei of a composition?

The question this module answers: compressing cold matter raises the electron
chemical potential; at which density does it reach the energy that a capture
(A, Z) + e⁻ -> (A, Z-1) + ν needs, so that the nucleus starts to neutronize
(O-Ne-Mg and iron cores, massive white dwarfs)?

Threshold (PHYSICS.md; e.g. Shapiro & Teukolsky 1983, Black Holes, White
Dwarfs and Neutron Stars, sec. 2.6): the electron's total energy (rest mass
included) must reach M_nuc(A, Z-1) c² - M_nuc(A, Z) c² = Delta_atomic + m_e c²,
Delta_atomic = [M_at(A, Z-1) - M_at(A, Z)] c² from the AME2020 atomic masses of
:mod:`thermoplane.physics.composition` (electron binding energies, a few keV
at most for these nuclei, are neglected). The electrons are the T = 0 gas
(Chandrasekhar 1939): chemical potential with rest mass
mu = m_e c² sqrt(1 + x²), n_e = (8 pi / 3)(m_e c / h)³ x³, rho = mu_e m_u n_e.

Left out: the Coulomb (lattice) shift of the threshold. The electrostatic
energy of the ion lattice changes when Z drops by one, which moves the
threshold to somewhat higher density (a few per cent in mu for Z ~ 10); no
published formula for it was at hand to cite while this was written, so the
thresholds here are those of the ideal electron gas. Also left out: finite
temperature (captures on the thermal tail start below rho_thr), the daughter's
excited states and the second capture (A, Z-1) -> (A, Z-2), which for even-even
parents usually follows at a lower threshold.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from . import constants as const
from .composition import CAPTURE_DAUGHTERS, NUCLIDES, Composition

__all__ = ["CaptureThreshold", "threshold_energy", "threshold_density", "thresholds", "capture_label"]

_MEV = 1e6 * const.eV
_SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


@dataclass(frozen=True)
class CaptureThreshold:
    """One capture threshold: parent, daughter, energies (MeV), density (g cm^-3), label."""

    nuclide: str
    daughter: str
    delta_atomic: float
    electron_energy: float
    rho: float
    label: str


def _parent(nuclide: str):
    if nuclide not in NUCLIDES:
        raise ValueError(f"unknown nuclide {nuclide!r}; known nuclides: {', '.join(NUCLIDES)}")
    if nuclide not in CAPTURE_DAUGHTERS:
        raise ValueError(f"{nuclide} has no bound electron-capture daughter in the table; "
                         f"nuclides with one: {', '.join(CAPTURE_DAUGHTERS)}")
    return NUCLIDES[nuclide], CAPTURE_DAUGHTERS[nuclide]


def threshold_energy(nuclide: str) -> tuple[float, float]:
    """(Delta_atomic, threshold electron total energy), both in MeV, for a capture on ``nuclide``.

    Raises
    ------
    ValueError
        Unknown nuclide, or one without a bound daughter.
    """
    parent, daughter = _parent(nuclide)
    delta = (daughter.A - parent.A) * const.m_u * const.c**2 / _MEV
    return delta, delta + const.m_e_c2 / _MEV


def threshold_density(nuclide: str, comp: Composition) -> float:
    """Density (g cm^-3) where the T = 0 electron chemical potential reaches the capture threshold.

    Parameters
    ----------
    nuclide : str
        Parent (A, Z), a name of :data:`thermoplane.physics.NUCLIDES` with a daughter in
        :data:`thermoplane.physics.composition.CAPTURE_DAUGHTERS`.
    comp : Composition
        Gives mu_e (fully ionized) that turns n_e into rho.

    Returns
    -------
    float
        rho_thr = mu_e m_u (8 pi / 3)(m_e c / h)³ x³ with x = sqrt((E_thr / m_e c²)² - 1).
        0.0 when E_thr <= m_e c² (the nuclide captures at any density, e.g. Ni-56).

    Raises
    ------
    ValueError
        Unknown nuclide, one without a daughter, or comp not a Composition.

    Examples
    --------
    >>> from thermoplane.physics import Composition
    >>> f"{threshold_density('Mg-24', Composition({'O-16': 0.6, 'Ne-20': 0.3, 'Mg-24': 0.1})):.2e}"
    '3.16e+09'
    """
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    _, e_thr = threshold_energy(nuclide)
    ratio = e_thr * _MEV / const.m_e_c2
    if ratio <= 1.0:
        return 0.0
    x = math.sqrt(ratio * ratio - 1.0)
    return comp.mu_e * const.m_u * const.n_e_relativistic * x**3


def capture_label(nuclide: str) -> str:
    """"e⁻ capture on ²⁴Mg" for "Mg-24"."""
    symbol, mass = nuclide.split("-")
    return f"e⁻ capture on {mass.translate(_SUPERSCRIPT)}{symbol}"


def thresholds(comp: Composition, min_fraction: float = 0.0) -> list[CaptureThreshold]:
    """The capture threshold of every nuclide of ``comp`` with a known daughter, by rising density.

    Nuclides with a mass fraction below ``min_fraction``, and nuclides that capture at any
    density (threshold 0), are left out: they draw no line.
    """
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    out = []
    for name, fraction in zip(comp.names, comp.X):
        if name not in CAPTURE_DAUGHTERS or name not in NUCLIDES or fraction < min_fraction:
            continue
        delta, e_thr = threshold_energy(name)
        rho = threshold_density(name, comp)
        if rho > 0:
            out.append(CaptureThreshold(name, CAPTURE_DAUGHTERS[name].name, delta, e_thr, rho,
                                        capture_label(name)))
    return sorted(out, key=lambda t: t.rho)
