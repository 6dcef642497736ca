"""The equation of state: every thermodynamic quantity at (rho, T) for a composition.

``state`` holds the public surface (:class:`ThermoState`, :func:`evaluate`, the field tables and the
physics options). The free energy of the chemical picture (``ionization="chemical"``, experimental) is
built beside it, one module per term of F(V, T, {N_j}), so that the file list of this package shows the
sum: ``atomic_data``, ``species``, ``coulomb_term``, ``electron_kernel``, ``jets``, ``equilibrium``.
"""

from .state import (DEFAULTS, EXPERIMENTAL, FIELD_DESCRIPTIONS, FIELD_UNITS, MAP_OPTIONS, IMPACT_OPTIONS, OPTIONS,
                    ThermoState,
                    equality_temperature, evaluate, validate_options)

__all__ = ["ThermoState", "evaluate", "equality_temperature", "FIELD_UNITS", "FIELD_DESCRIPTIONS", "OPTIONS",
           "DEFAULTS", "MAP_OPTIONS", "IMPACT_OPTIONS", "EXPERIMENTAL", "validate_options"]
