"""The pair-free electron gas over a whole map in one compiled, parallel pass.

The question this module answers: at net electron densities n and temperatures T where positrons do not
matter, what is the full :class:`~thermoplane.physics.electrons.ElectronState`, as fast as the cores allow?

It reads the same pair-free table as ``electron_table.table_state(n, T, pairs=False)`` (the Helmholtz free
energy of the Fermi-Dirac gas by biquintic Hermite interpolation) through the compiled cell reader
:func:`~thermoplane.physics.eos.electron_kernel.electron_point`, which agrees with the numpy reader to
rounding (tested in tests/physics/test_chemical_picture.py and tests/physics/test_electron_fast.py). Every
field is a derivative of that one interpolated free energy, with the numpy reader's formulas.

Points outside the table (n < 1e4 cm^-3, or T outside it) are not touched here: :func:`pair_free_state`
hands them to ``table_state``, which uses the exact quadrature there.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from .electron_table import TABLE_RANGE, _inside, _merge, _onset_masks, table_state
from .electrons import ElectronGas, ElectronState, electron_state
from .eos.electron_kernel import electron_arrays, electron_point, pair_arrays, pair_point
from .eos.parallel import serialized

__all__ = ["pair_free_state", "state_from_points", "pair_table_state", "pair_onset_state"]

_TAB = None


@njit(cache=True, parallel=True, error_model="numpy")
def _many(n, T, tab, out):
    for i in prange(n.size):
        if not electron_point(n[i], T[i], tab, out[i]):
            out[i, :] = np.nan                  # not in a cell of the table: the caller's fallback


@serialized
def _compiled(n, T) -> ElectronState:
    global _TAB
    if _TAB is None:
        _TAB = electron_arrays()
    out = np.empty((n.size, 12))
    _many(n, T, _TAB, out)
    return state_from_points(n, T, out)


def state_from_points(n, T, out) -> ElectronState:
    """The ElectronState at 1-d arrays n, T from the rows ``out`` (n.size, 12) of
    :func:`~thermoplane.physics.eos.electron_kernel.electron_point` (the numpy reader's formulas); rows of
    13 (:func:`~thermoplane.physics.eos.electron_kernel.pair_point`) carry n_plus in the last column."""
    o = out.T
    n_plus = o[12].copy() if out.shape[1] > 12 else np.zeros_like(n)
    eta = o[0].copy()
    deta_dn, deta_dT = o[1] / n, o[2] / T
    dP_dn, dP_dT_n = o[4] / n, o[5] / T
    dE_dn, dE_dT_n = o[7] / n, o[8] / T
    dn_deta = 1.0 / deta_dn
    dP_deta = dP_dn * dn_deta
    dE_deta = dE_dn * dn_deta
    gas = ElectronGas(n_minus=n + n_plus, n_plus=n_plus, n_net=n.copy(), P=o[3].copy(), E=o[6].copy(),
                      S=o[9].copy(), dn_deta=dn_deta, dn_dT=-deta_dT * dn_deta, dP_deta=dP_deta,
                      dP_dT=dP_dT_n - dP_deta * deta_dT, dE_deta=dE_deta, dE_dT=dE_dT_n - dE_deta * deta_dT)
    return ElectronState(gas=gas, eta=eta, dP_dn=dP_dn, dP_dT_n=dP_dT_n, dE_dn=dE_dn, dE_dT_n=dE_dT_n,
                         deta_dn=deta_dn, deta_dT=deta_dT)


def pair_free_state(n, T) -> ElectronState:
    """The pair-free electron gas at 1-d arrays n (cm^-3, > 0) and T (K): compiled inside the table, the
    numpy ``table_state`` (exact quadrature) outside it."""
    n = np.ascontiguousarray(n, dtype=float)
    T = np.ascontiguousarray(T, dtype=float)
    ln0, ln1, lt0, lt1 = TABLE_RANGE
    inside = (n >= 10.0**ln0) & (n < 10.0**ln1) & (T >= 10.0**lt0) & (T < 10.0**lt1)
    if inside.all():
        st = _compiled(n, T)
        if not np.isnan(st.eta).any():
            return st
        inside = ~np.isnan(st.eta)
    return _merge(n.size, [(inside, _compiled), (~inside, lambda a, b: table_state(a, b, pairs=False))], n, T)


_PAIR_TABS: dict = {}


@njit(cache=True, parallel=True, error_model="numpy")
def _many_pairs(n, T, tab, out):
    for i in prange(n.size):
        pair_point(n[i], T[i], tab, out[i])


@serialized
def _pairs_compiled(n, T, name) -> ElectronState:
    if name not in _PAIR_TABS:
        _PAIR_TABS[name] = pair_arrays(name)
    out = np.empty((n.size, 13))
    _many_pairs(np.ascontiguousarray(n), np.ascontiguousarray(T), _PAIR_TABS[name], out)
    return state_from_points(n, T, out)


def pair_table_state(n, T) -> ElectronState:
    """``electron_table.table_state(n, T, pairs=True)`` for 1-d arrays, compiled and parallel inside the
    pair table (the same free energy and formulas; agreeing to rounding), the numpy path outside it."""
    n = np.ascontiguousarray(n, dtype=float)
    T = np.ascontiguousarray(T, dtype=float)
    inside = _inside(n, T)
    if inside.all():
        return _pairs_compiled(n, T, True)
    return _merge(n.size, [(inside, lambda a, b: _pairs_compiled(a, b, True)),
                           (~inside, lambda a, b: table_state(a, b, pairs=True))], n, T)


def pair_onset_state(n, T) -> ElectronState:
    """``electron_table.onset_state(n, T)`` for 1-d arrays: each fine pair-onset table compiled and parallel,
    the exact quadrature outside them (as there)."""
    n = np.ascontiguousarray(n, dtype=float)
    T = np.ascontiguousarray(T, dtype=float)
    parts = []
    rest = np.ones(n.size, dtype=bool)
    for name, mask in _onset_masks(n, T):
        parts.append((mask, lambda a, b, name=name: _pairs_compiled(a, b, name)))
        rest &= ~mask
    parts.append((rest, lambda a, b: electron_state(a, b, True)))
    return _merge(n.size, parts, n, T)
