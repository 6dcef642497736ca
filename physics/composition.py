"""Chemical composition: which nuclei, in what mass fractions, and the mean
molecular weights that follow.

The question this module answers: given mass fractions X_i of nuclides with
charge Z_i and mass A_i, how many particles (ions, electrons) does a gram of
matter hold? Every other module takes its particle counts from here.

Convention: A_i is the *atomic mass* in u (AME2020), used everywhere (mean
molecular weights, number densities, the ion entropy). The difference from
the mass number is below 1 % for every nuclide in the table and is irrelevant
at this level of physics, but one convention is used throughout.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

__all__ = ["Nuclide", "NUCLIDES", "CAPTURE_DAUGHTERS", "METAL_MIXTURES", "Composition", "parse_mix"]


@dataclass(frozen=True)
class Nuclide:
    """A nuclide: charge ``Z`` and atomic mass ``A`` in u."""

    name: str
    Z: int
    A: float


# Atomic masses in u, Wang et al. 2021 (AME2020), Chinese Physics C 45, 030003;
# the digits were written down from memory of that table (well below the
# precision that matters here: mu to 1e-6).
_TABLE = [
    ("H-1", 1, 1.00782503223),
    ("H-2", 1, 2.01410177812),
    ("He-3", 2, 3.01602932008),
    ("He-4", 2, 4.00260325413),
    ("C-12", 6, 12.0),
    ("C-13", 6, 13.00335483507),
    ("N-14", 7, 14.00307400443),
    ("N-15", 7, 15.00010889888),
    ("O-16", 8, 15.99491461957),
    ("O-18", 8, 17.99915961286),
    ("Ne-20", 10, 19.9924401762),
    ("Ne-22", 10, 21.991385114),
    ("Mg-24", 12, 23.985041697),
    ("Si-28", 14, 27.97692653465),
    ("S-32", 16, 31.9720711744),
    ("Ar-36", 18, 35.967545105),
    ("Ca-40", 20, 39.962590863),
    ("Fe-56", 26, 55.93493633),
    ("Ni-56", 28, 55.94212855),
]

#: Known nuclides by name ("H-1", "He-4", "C-12", ...).
NUCLIDES: dict[str, Nuclide] = {n: Nuclide(n, z, a) for n, z, a in _TABLE}

# Electron-capture daughters (A, Z) -> (A, Z - 1) of the nuclides above: name, Z and
# atomic mass in u, AME2020 (Wang et al. 2021, Chinese Physics C 45, 030003), written
# down from memory of that table and checked to about 1e-6 u (1 keV) against the
# beta-decay Q values of the daughters (test_captures.py). The neutron is the daughter
# of H-1 (CODATA 2018 neutron mass). H-2 and He-4 have no bound daughter (2n, H-4).
_DAUGHTERS = [
    ("H-1", "n", 0, 1.00866491595),
    ("He-3", "H-3", 1, 3.01604928132),
    ("C-12", "B-12", 5, 12.014352638),
    ("C-13", "B-13", 5, 13.017779981),
    ("N-14", "C-14", 6, 14.003241989),
    ("N-15", "C-15", 6, 15.010599256),
    ("O-16", "N-16", 7, 16.006101925),
    ("O-18", "N-18", 7, 18.014077563),
    ("Ne-20", "F-20", 9, 19.999981252),
    ("Ne-22", "F-22", 9, 22.002998812),
    ("Mg-24", "Na-24", 11, 23.990962950),
    ("Si-28", "Al-28", 13, 27.981910009),
    ("S-32", "P-32", 15, 31.973907643),
    ("Ar-36", "Cl-36", 17, 35.968306822),
    ("Ca-40", "K-40", 19, 39.963998166),
    ("Fe-56", "Mn-56", 25, 55.938903691),
    ("Ni-56", "Co-56", 27, 55.939838798),
]

#: Parent nuclide name -> its electron-capture daughter (A, Z-1) as a :class:`Nuclide`
#: (atomic mass in u, AME2020). Parents without a bound daughter are absent.
CAPTURE_DAUGHTERS: dict[str, Nuclide] = {p: Nuclide(d, z, a) for p, d, z, a in _DAUGHTERS}

#: Metal mixtures of our own choosing: fractions *of Z* (each sums to 1).
#: "solar-like" is a rounded mixture loosely shaped like the solar metals
#: (C, N, O dominate, then Ne, Fe, Si, Mg); common practice, no source: it is
#: Thermoplane's own default, not a published abundance table.
METAL_MIXTURES: dict[str, dict[str, float]] = {
    "solar-like": {"C-12": 0.18, "N-14": 0.05, "O-16": 0.45, "Ne-20": 0.10,
                   "Mg-24": 0.05, "Si-28": 0.06, "S-32": 0.03, "Fe-56": 0.08},
    "CNO only": {"C-12": 0.25, "N-14": 0.10, "O-16": 0.65},
    "alpha-rich": {"O-16": 0.50, "Ne-20": 0.15, "Mg-24": 0.12, "Si-28": 0.13,
                   "S-32": 0.06, "Ca-40": 0.04},
    "iron only": {"Fe-56": 1.0},
}

DEFAULT_METALS = "solar-like"

_SUM_TOLERANCE = 1e-6


def _lookup(name: str) -> Nuclide:
    try:
        return NUCLIDES[name]
    except KeyError:
        known = ", ".join(NUCLIDES)
        raise ValueError(f"unknown nuclide {name!r}; known nuclides: {known}; "
                         "or give a custom one as (A, Z)") from None


class Composition:
    """Mass fractions of nuclides and the mean molecular weights they give.

    Parameters
    ----------
    fractions : mapping
        Nuclide -> mass fraction. A key is a known nuclide name ("He-4") or
        any name mapped to a tuple ``(fraction, A, Z)`` for a custom nuclide
        (A in u, Z the charge).

    Raises
    ------
    ValueError
        Unknown nuclide, a negative or non-finite fraction, or fractions that
        do not sum to 1 within 1e-6.

    Notes
    -----
    Fully ionized mean molecular weights (Kippenhahn, Weigert & Weiss 2012,
    Stellar Structure and Evolution, sec. 4.2):

    .. math:: 1/\\mu = \\sum X_i (1 + Z_i)/A_i,\\quad
              1/\\mu_e = \\sum X_i Z_i / A_i,\\quad
              1/\\mu_{ion} = \\sum X_i / A_i

    Examples
    --------
    >>> round(Composition({"H-1": 1.0}).mu, 4)
    0.5039
    """

    def __init__(self, fractions: Mapping[str, object]):
        names, X, A, Z = [], [], [], []
        for name, value in fractions.items():
            if isinstance(value, (tuple, list)):
                if len(value) != 3:
                    raise ValueError(f"custom nuclide {name!r} must be (fraction, A, Z), got {value!r}")
                frac, a, z = (float(v) for v in value)
                if not (np.isfinite(a) and a > 0 and np.isfinite(z) and 0 <= z <= 120):
                    raise ValueError(f"custom nuclide {name!r}: A must be > 0 and Z in [0, 120], got A={a}, Z={z}")
            else:
                nuc = _lookup(str(name))
                frac, a, z = float(value), nuc.A, float(nuc.Z)
            if not np.isfinite(frac) or frac < 0:
                raise ValueError(f"mass fraction of {name} must be a finite number >= 0, got {frac}")
            if frac == 0:
                continue
            names.append(str(name)); X.append(frac); A.append(a); Z.append(z)
        total = float(np.sum(X)) if X else 0.0
        if abs(total - 1.0) > _SUM_TOLERANCE:
            raise ValueError(f"mass fractions must sum to 1 (within {_SUM_TOLERANCE:g}); they sum to {total:.8g}")
        self.names = tuple(names)
        self.X = np.array(X) / total
        self.A = np.array(A)
        self.Z = np.array(Z)

    # -- constructors ---------------------------------------------------
    @classmethod
    def from_xyz(cls, X: float, Y: float, Z: float, metals: str | Mapping[str, float] = DEFAULT_METALS) -> "Composition":
        """Hydrogen (H-1) X, helium (He-4) Y and metals Z in a named mixture.

        ``metals`` is a key of :data:`METAL_MIXTURES` or a mapping nuclide ->
        fraction of Z (summing to 1).
        """
        for label, v in (("X", X), ("Y", Y), ("Z", Z)):
            if not np.isfinite(v) or v < 0 or v > 1:
                raise ValueError(f"{label} must be between 0 and 1, got {v}")
        if abs(X + Y + Z - 1.0) > _SUM_TOLERANCE:
            raise ValueError(f"X + Y + Z must be 1 (within {_SUM_TOLERANCE:g}); got {X + Y + Z:.8g}")
        if isinstance(metals, str):
            if metals not in METAL_MIXTURES:
                raise ValueError(f"unknown metal mixture {metals!r}; choose one of {', '.join(METAL_MIXTURES)}")
            metals = METAL_MIXTURES[metals]
        msum = sum(metals.values())
        if abs(msum - 1.0) > _SUM_TOLERANCE:
            raise ValueError(f"metal mixture fractions must sum to 1; they sum to {msum:.8g}")
        fractions: dict[str, float] = {"H-1": X, "He-4": Y}
        for name, f in metals.items():
            fractions[name] = fractions.get(name, 0.0) + Z * f
        return cls(fractions)

    # -- mean molecular weights ----------------------------------------
    @property
    def mu(self) -> float:
        """Mean molecular weight of the fully ionized gas (ions + electrons)."""
        return 1.0 / float(np.sum(self.X * (1.0 + self.Z) / self.A))

    @property
    def mu_e(self) -> float:
        """Mean molecular weight per electron, fully ionized (Y_e = 1/mu_e)."""
        return 1.0 / float(np.sum(self.X * self.Z / self.A))

    @property
    def mu_ion(self) -> float:
        """Mean molecular weight per ion (nucleus)."""
        return 1.0 / float(np.sum(self.X / self.A))

    @property
    def ye(self) -> float:
        """Electrons per nucleon (per u) when fully ionized, 1/mu_e."""
        return 1.0 / self.mu_e

    def fraction(self, name: str) -> float:
        """Mass fraction of one nuclide (0 when absent)."""
        return float(sum(x for n, x in zip(self.names, self.X) if n == name))

    @property
    def hydrogen(self) -> float:
        """Mass fraction of hydrogen nuclei (H-1 and H-2)."""
        return float(np.sum(self.X[self.Z == 1]))

    @property
    def helium(self) -> float:
        """Mass fraction of helium nuclei (He-3 and He-4)."""
        return float(np.sum(self.X[self.Z == 2]))

    @property
    def metals(self) -> float:
        """Mass fraction of everything heavier than helium."""
        return float(np.sum(self.X[self.Z > 2]))

    def key(self) -> tuple:
        """A hashable key for caches: every nuclide with its A, Z and fraction."""
        return tuple((n, round(float(x), 12), float(a), float(z))
                     for n, x, a, z in zip(self.names, self.X, self.A, self.Z))

    def to_dict(self) -> dict[str, float]:
        """Nuclide -> mass fraction, rounded to 12 significant digits (no float noise such as 0.009000000000000001)."""
        return {n: float(f"{x:.12g}") for n, x in zip(self.names, self.X)}

    def __repr__(self) -> str:
        inner = ", ".join(f"{n!r}: {x:.6g}" for n, x in zip(self.names, self.X))
        return f"Composition({{{inner}}})"

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Composition) and self.key() == other.key()

    def __hash__(self) -> int:
        return hash(self.key())


def parse_mix(text: str) -> Composition:
    """Parse ``"H-1=0.7,He-4=0.28,O-16=0.02"`` into a :class:`Composition`.

    Raises
    ------
    ValueError
        An entry without ``=``, a fraction that is not a number, or any error
        of :class:`Composition`.
    """
    fractions: dict[str, float] = {}
    for item in str(text).split(","):
        item = item.strip()
        if not item:
            continue
        if "=" not in item:
            raise ValueError(f"mixture entry {item!r} must look like NAME=FRACTION, e.g. He-4=0.28")
        name, value = (s.strip() for s in item.split("=", 1))
        try:
            fractions[name] = fractions.get(name, 0.0) + float(value)
        except ValueError:
            raise ValueError(f"mass fraction {value!r} of {name} is not a number") from None
    if not fractions:
        raise ValueError("the mixture is empty; give e.g. H-1=0.7,He-4=0.28,O-16=0.02")
    return Composition(fractions)
