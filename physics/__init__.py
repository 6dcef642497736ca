"""Thermoplane physics: the equation of state of stellar matter on the density–temperature plane.

Pure numerics (numpy, scipy, pandas); no plotting or web code lives here.
"""

from .composition import METAL_MIXTURES, NUCLIDES, Composition, parse_mix
from .eos import FIELD_DESCRIPTIONS, FIELD_UNITS, OPTIONS, ThermoState, equality_temperature, evaluate

__all__ = ["Composition", "parse_mix", "NUCLIDES", "METAL_MIXTURES", "ThermoState", "evaluate",
           "equality_temperature", "FIELD_UNITS", "FIELD_DESCRIPTIONS", "OPTIONS"]
