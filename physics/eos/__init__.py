"""The equation of state: every thermodynamic quantity at (rho, T) for a composition.

``state`` holds the public surface (:class:`ThermoState`, :func:`evaluate`, the field tables and the
physics options). The free energy of the chemical picture is being built beside it, one module per term of
F(V, T, {N_j}), so that the file list of this package shows the sum.
"""

from .state import (DEFAULTS, FIELD_DESCRIPTIONS, FIELD_UNITS, OPTIONS, ThermoState, equality_temperature,
                    evaluate, validate_options)

__all__ = ["ThermoState", "evaluate", "equality_temperature", "FIELD_UNITS", "FIELD_DESCRIPTIONS", "OPTIONS",
           "DEFAULTS", "validate_options"]
