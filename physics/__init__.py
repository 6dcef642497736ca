"""Thermoplane physics: the equation of state of stellar matter on the density–temperature plane.

Pure numerics (numpy, scipy, pandas, numba); no plotting or web code lives here. The public API::

    from thermoplane import physics as ph
    comp = ph.Composition.from_xyz(X=0.70, Y=0.28, Z=0.02)
    s = ph.evaluate(160.0, 1.5e7, comp)

The submodules stay importable by their full names (``thermoplane.physics.regimes``, ...). ``fermi_dirac``
is the function F_k(eta, theta); the quadrature behind it lives in ``thermoplane.physics.fermi_integrals``
(a module name of its own, so that importing it never shadows the function).
"""

from .composition import METAL_MIXTURES, NUCLIDES, Composition, parse_mix
from .eos import FIELD_DESCRIPTIONS, FIELD_UNITS, OPTIONS, ThermoState, equality_temperature, evaluate
from .fermi_integrals import fermi_dirac
from .regimes import boundaries, classify, flags

__all__ = ["Composition", "parse_mix", "evaluate", "ThermoState", "equality_temperature", "fermi_dirac",
           "boundaries", "classify", "flags", "NUCLIDES", "METAL_MIXTURES", "FIELD_UNITS",
           "FIELD_DESCRIPTIONS", "OPTIONS"]
