"""Dense-plasma free energy of a fully ionized ion mixture: liquid or bcc crystal, electron screening, and
electron exchange-correlation; the phase with the lower free energy wins.

The question this module answers: at free-electron density n_e and temperature T, are the ions a liquid or a
crystal, and what do Coulomb interactions, quantum ions and the electrons' own exchange-correlation add to
the free energy?

Interface (every term, and the mixture): inputs (n_e [cm^-3], T [K], Z, A [u]); output the free energy per
particle over kT and its partials in ln n_e and ln T, (f, f_n, f_T, f_nn, f_nT, f_TT). Ion terms are per ion
and are excesses over the classical ideal ion gas (Sackur–Tetrode); the exchange-correlation term is per
electron. Linear mixing: each species i is a one-component plasma at the same n_e (Gamma_i = Gamma_e
Z_i^(5/3), n_i = n_e / Z_i); the mixture's free energy per ion is sum_i x_i f_i with number fractions x_i.

Melting: the liquid sum and the solid sum (each with its screening) are compared point by point; the lower
one is returned, so the melting line and its latent heat follow from the free energies. In the classical
limit the two cross at Gamma = 175.0. The liquid fit, extrapolated far past its range, would fall below the
lattice again near Gamma ~ 2500 (an artifact of the fit): the liquid is not a candidate where the mean
coupling sum_i x_i Gamma_i exceeds GAMMA_LIQUID_MAX = 1000 (the solid is lower there by more than 1 kT per ion).
Likewise the lattice is no candidate below GAMMA_SOLID_MIN = 100: there the harmonic crystal's entropy and
the anharmonic series (an expansion in 1/Gamma) lose their meaning and would undercut the liquid at weak
coupling (the liquid is lower by 0.3 kT per ion or more at Gamma = 100, so no jump is introduced).

Speed (tests/benchmarks/bench_eos.py, 'dense-plasma terms'): functions of one variable are read from quintic
Hermite tables whose derivatives are those of the interpolant (f_OCP, f_harm, the liquid's functions of
ln(Gamma / eta), the electrons' T = 0 energies; see each module), the rest is formed on scalar partials with
one chain rule, and :func:`dense_parts` writes the parts per gram in the same compiled pass.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from .. import constants as const
from ..thermo import Part
from . import jet
from .electron_xc import electron_xc_T0, zero_T_energies
from .parallel import serialized
from .ion_liquid import ETA_SERIES, jet_of_ln_gamma, liquid_core, ocp_u
from .ion_solid import harmonic_loglin, solid_core
from .plasma_parameters import _LN_GAMMA0, point_scales, species_constants, species_jets
from .screening import _LN_AI0, screening_given

#: 4 pi e^2 a_e^2 n_e = _Q2_COEFF Gamma_1 T (a_e^2 n_e = e^(2 _LN_AI0) n_e^(1/3), Gamma_1 = e^_LN_GAMMA0 n_e^(1/3) / T)
_Q2_COEFF = 4.0 * math.pi * const.e_esu**2 * math.exp(2.0 * _LN_AI0 - _LN_GAMMA0)

__all__ = ["mixture", "mixture_chosen", "mixture_free_energy", "merge_trace_species", "dense_parts", "GAMMA_LIQUID_MAX", "GAMMA_SOLID_MIN", "mixture_plasma_temperature"]

GAMMA_LIQUID_MAX = 1000.0
GAMMA_SOLID_MIN = 100.0
_TASKS = 64
_BLOCK = 256


@njit(cache=True, error_model="numpy")
def _mixture(n_e, T, Z, A, x, sc, xG, both):
    """One point. ``sc`` = species_constants(Z, A), ``xG`` = sum_i x_i Z_i^(5/3).

    What depends on the electrons alone (ln n_e, ln T, Gamma and eta of Z = A = 1 and their logarithms, the
    electrons' T = 0 energies from their table in ln n_e, the screening's q^2, the exchange-correlation) is
    formed once and scaled per species; f_harm(eta) is shared by the liquid and the solid of a species.
    """
    scales = point_scales(n_e, T)
    ln_n = scales[0]
    g_mean = scales[2] * xG
    need_solid = both or g_mean >= GAMMA_SOLID_MIN
    need_liquid = both or g_mean <= GAMMA_LIQUID_MAX
    nan = math.nan
    liq = jet.const(0.0) if need_liquid else jet.const(nan)
    sol = jet.const(0.0) if need_solid else jet.const(nan)
    # electrons: their T = 0 energies (a table in ln n_e) and the screening's q^2 / Z^(2/3) =
    # 4 pi e^2 a_e^2 n_e / kT_eff, kT_eff = sqrt((kT)^2 + E_d^2) (physics.eos.screening.electron_q2);
    # a_e^2 n_e ∝ n_e^(1/3) ∝ Gamma_1 T
    ex0, eF, ec0, Ed = zero_T_energies(ln_n)
    kT = const.k_B * T
    K2 = kT * kT + Ed[0] * Ed[0]
    rK = 1.0 / math.sqrt(K2)
    kT2 = 2.0 * kT * kT
    K2j = (K2, 2.0 * Ed[0] * Ed[1], kT2, 2.0 * (Ed[1] * Ed[1] + Ed[0] * Ed[2]), 0.0, 2.0 * kT2)
    q2e = jet.mul(jet.loglin(_Q2_COEFF * scales[2] * T, 1.0 / 3.0, 0.0),
                  jet.fun(K2j, rK, -0.5 * rK / K2, 0.75 * rK / (K2 * K2)))
    # f_OCP at Gamma_e: the electrons' classical correlation, and hydrogen's (Z = 1) liquid
    ocp1 = ocp_u(scales[4], scales[2])
    # the screening's (3 Gamma)^(1/2), its reciprocal and 1 / Gamma for Z = 1, scaled per species
    b1 = math.sqrt(3.0 * scales[2])
    ib1 = 1.0 / b1
    ig1 = 1.0 / scales[2]
    for i in range(Z.size):
        if x[i] <= 0.0:
            continue
        G, eta, f_id = species_jets(scales, sc, i)
        sc_i = screening_given(G, jet.scale(q2e, sc[3, i]), b1 * sc[6, i], ib1 * sc[7, i], ig1 * sc[8, i])
        quantum_ions = eta[0] >= ETA_SERIES
        v = scales[5] + sc[5, i]
        harm = harmonic_loglin(eta[0], v) if (need_solid or quantum_ions) else jet.const(0.0)
        if need_liquid:
            u = scales[4] + sc[4, i]
            ocp = ocp1 if sc[0, i] == 1.0 else ocp_u(u, G[0])
            liq = jet.add(liq, jet.scale(jet.add(liquid_core(G, eta, u, v, f_id, harm, ocp), sc_i), x[i]))
        if need_solid:
            sol = jet.add(sol, jet.scale(jet.add(solid_core(G, eta, f_id, harm), sc_i), x[i]))
    # the margin f_solid - f_liquid, kept away from zero where a phase is no candidate, so that its sign is
    # the phase and its zero the melting line (no spurious zeros at the candidacy limits)
    if g_mean < GAMMA_SOLID_MIN:
        margin = max(sol[0] - liq[0], 0.1) if need_solid else 1.0
    elif g_mean > GAMMA_LIQUID_MAX:
        margin = min(sol[0] - liq[0], -0.1) if need_liquid else -1.0
    else:
        margin = sol[0] - liq[0]
    ion = sol if margin < 0.0 else liq
    xc = electron_xc_T0(ex0, eF, ec0, T, jet_of_ln_gamma(ocp1[0], ocp1[1], ocp1[2]))
    return liq, sol, ion, margin, xc


@njit(cache=True, error_model="numpy")
def _constants(Z, A, x):
    sc = species_constants(Z, A)
    xG = 0.0
    for i in range(Z.size):
        if x[i] > 0.0:
            xG += x[i] * sc[0, i]
    return sc, xG


@njit(cache=True, error_model="numpy")
def mixture(n_e, T, Z, A, x):
    """Liquid and solid sums, the chosen phase, and the electron exchange-correlation at one point.

    Parameters: n_e (cm^-3), T (K), arrays Z, A, x (number fractions of ions, summing to 1).
    Returns (liquid, solid, ion, margin, electron): jets per ion (liquid, solid, chosen ion part, each
    with screening), margin = f_solid - f_liquid per ion (< 0 where the crystal wins; pushed to at least
    0.1 in size where one phase is no candidate), and the exchange-correlation jet per electron.
    """
    sc, xG = _constants(Z, A, x)
    return _mixture(n_e, T, Z, A, x, sc, xG, True)


@njit(cache=True, error_model="numpy")
def mixture_chosen(n_e, T, Z, A, x):
    """As :func:`mixture`, but a phase that is no candidate (mean Gamma < GAMMA_SOLID_MIN for the crystal,
    > GAMMA_LIQUID_MAX for the liquid) is not computed: its jet is NaN and the margin is +1 or -1 there.
    The equation of state uses this (half the cost over most of the plane)."""
    sc, xG = _constants(Z, A, x)
    return _mixture(n_e, T, Z, A, x, sc, xG, False)


@njit(cache=True, parallel=True, error_model="numpy")
def _many(n_e, T, Z, A, x, liq, sol, ion, flag, ele, both):
    sc, xG = _constants(Z, A, x)
    # interleaved blocks: task k takes the blocks k, k + _TASKS, ... of _BLOCK neighbouring points (crystal
    # and quantum-ion points, the costly ones, cluster in one corner of a map: contiguous shares per thread
    # would be unequal; whole blocks keep the writes to the outputs contiguous)
    n = n_e.size
    for k in prange(_TASKS):
        for start in range(k * _BLOCK, n, _TASKS * _BLOCK):
            for i in range(start, min(start + _BLOCK, n)):
                a, b, c, d, e = _mixture(n_e[i], T[i], Z, A, x, sc, xG, both)
                liq[:, i] = a
                sol[:, i] = b
                ion[:, i] = c
                flag[i] = d
                ele[:, i] = e


@serialized
def mixture_free_energy(n_e, T, Z, A, x, both=True):
    """Vectorised :func:`mixture` over arrays n_e, T (broadcast); Z, A, x 1-d arrays of the species.

    Returns a dict of arrays: ``liquid``, ``solid``, ``ion`` (each shape (6, ...), per ion, screening
    included), ``crystallized`` (bool), ``electron`` (shape (6, ...), per electron), ``mean_Z``.
    """
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    shape = n_e.shape
    Z = np.asarray(Z, float).ravel()
    A = np.asarray(A, float).ravel()
    x = np.asarray(x, float).ravel()
    if not (Z.size == A.size == x.size) or np.any(Z <= 0) or np.any(A <= 0) or np.any(x < 0):
        raise ValueError("Z, A, x must be arrays of one length with Z > 0, A > 0, x >= 0")
    x = x / x.sum()
    n = n_e.size
    liq, sol, ion, ele = (np.empty((6, n)) for _ in range(4))
    flag = np.empty(n)
    _many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), Z, A, x, liq, sol, ion, flag, ele,
          bool(both))
    r = lambda a: a.reshape(a.shape[:-1] + shape)  # noqa: E731
    return dict(liquid=r(liq), solid=r(sol), ion=r(ion), crystallized=r(flag) < 0.0, margin=r(flag),
                electron=r(ele), mean_Z=float(np.sum(x * Z)))


def mixture_plasma_temperature(n_e, Z, A, x):
    """Ion plasma temperature of the mixture, T_p = hbar omega_p / k, omega_p^2 = sum_i 4 pi n_i Z_i^2 e^2 / m_i."""
    Z = np.asarray(Z, float)
    A = np.asarray(A, float)
    x = np.asarray(x, float) / np.sum(x)
    w = np.sum(x * Z**2 / A) / np.sum(x * Z)
    return const.hbar / const.k_B * np.sqrt(4.0 * math.pi * np.asarray(n_e, float) * const.e_esu**2 * w / const.m_u)


def _part(N, rho, T, g) -> Part:
    """P, E, S per gram and partials from g = F / (N k T) per particle (N particles per gram, fixed)."""
    k = const.k_B
    f, fn, fT, fnn, fnT, fTT = g
    return Part(P=rho * N * k * T * fn, E=-N * k * T * fT, S=-N * k * (f + fT),
                P_rho=N * k * T * (fn + fnn), P_T=rho * N * k * (fn + fnT),
                E_rho=-N * k * T * fnT / rho, E_T=-N * k * (fT + fTT),
                S_rho=-N * k * (fn + fnT) / rho, S_T=-N * k * (fT + fTT) / T)


#: species below this number fraction are merged into one mean species in :func:`dense_parts`
TRACE_FRACTION = 0.01


def merge_trace_species(Z, A, x, threshold=TRACE_FRACTION):
    """Merge the species with number fraction < ``threshold`` into one mean species (for speed).

    The mean species keeps the traces' total fraction, sum x Z^(5/3) (so the Madelung and OCP terms, linear
    in Gamma, are unchanged) and sum x A. Returns (Z, A, x, offset): ``offset`` is the constant that
    restores the ideal-ion reference, sum_i x_i [ln Z_i + 1.5 ln A_i] - x_m [ln Z_m + 1.5 ln A_m], to add to
    f (it shifts S by a constant only, so the T -> 0 entropy stays exact). An approximation of ours: the
    Coulomb terms of the traces (a fraction ~ their number fraction of the whole) change at the level of the
    spread of their Z.
    """
    Z, A, x = (np.asarray(v, float) for v in (Z, A, x))
    trace = x < threshold
    if trace.sum() < 2:
        return Z, A, x, 0.0
    xm = x[trace].sum()
    Zm = (np.sum(x[trace] * Z[trace] ** (5.0 / 3.0)) / xm) ** 0.6
    Am = np.sum(x[trace] * A[trace]) / xm
    offset = (np.sum(x[trace] * (np.log(Z[trace]) + 1.5 * np.log(A[trace])))
              - xm * (np.log(Zm) + 1.5 * np.log(Am)))
    return (np.append(Z[~trace], Zm), np.append(A[~trace], Am), np.append(x[~trace], xm), float(offset))


@njit(cache=True, inline="always", error_model="numpy")
def _part_into(out, i, N, rho, T, g, offset, s):
    """Row i of ``out`` (9, n): P, E, S and their partials per gram from g = F / (N k T) per particle, times
    s (as :func:`_part`, the same products in the same order; ``offset`` is added to f, so to S only)."""
    k = const.k_B
    f, fn, fT, fnn, fnT, fTT = g
    f = f + offset
    out[0, i] = rho * N * k * T * fn * s
    out[1, i] = -N * k * T * fT * s
    out[2, i] = -N * k * (f + fT) * s
    out[3, i] = N * k * T * (fn + fnn) * s
    out[4, i] = rho * N * k * (fn + fnT) * s
    out[5, i] = -N * k * T * fnT / rho * s
    out[6, i] = -N * k * (fT + fTT) * s
    out[7, i] = -N * k * (fn + fnT) / rho * s
    out[8, i] = -N * k * (fT + fTT) / T * s


@njit(cache=True, parallel=True, error_model="numpy")
def _many_parts(rho, T, N_ion, N_e, Z, A, x, offset, scale, ion, ele, flag):
    """:func:`_many` (the chosen phase only) writing the ion and electron parts per gram directly (no
    (6, n) jets and no numpy passes over them): rows of ``ion`` and ``ele`` are the fields of :class:`Part`.
    ``scale`` has one value per point, or one value for all."""
    sc, xG = _constants(Z, A, x)
    n = rho.size
    one = scale.size == 1
    for k in prange(_TASKS):
        for start in range(k * _BLOCK, n, _TASKS * _BLOCK):
            for i in range(start, min(start + _BLOCK, n)):
                r = rho[i]
                t = T[i]
                a, b, c, d, e = _mixture(r * N_e, t, Z, A, x, sc, xG, False)
                s = scale[0] if one else scale[i]
                _part_into(ion, i, N_ion, r, t, c, offset, s)
                _part_into(ele, i, N_e, r, t, e, 0.0, s)
                flag[i] = d


@serialized
def dense_parts(rho, T, X, A, Z, scale=1.0):
    """The dense-plasma terms of fully ionized matter as two :class:`Part` s (ions, electrons) per gram.

    n_e = rho sum_i X_i Z_i / (A_i m_u) (fully ionized), so d/d ln rho = d/d ln n_e at fixed composition.
    Trace species (number fraction < 1 %) are merged (:func:`merge_trace_species`).
    ``scale`` multiplies both parts and is held fixed in the derivatives (the equation of state passes the
    square of the ionized fraction where matter is not fully ionized).

    Returns (ion_part, electron_part, crystallized, margin): margin = f_solid - f_liquid per ion over kT.
    One compiled pass (:func:`_many_parts`): the same numbers as :func:`mixture_free_energy` followed by
    :func:`_part`, to rounding.
    """
    per_mass = np.asarray(X, float) / (np.asarray(A, float) * const.m_u)
    Z = np.asarray(Z, float)
    keep = (per_mass > 0) & (Z > 0)
    N_ion = float(np.sum(per_mass[keep]))
    N_e = float(np.sum(per_mass[keep] * Z[keep]))
    Zs, As, xs, offset = merge_trace_species(Z[keep], np.asarray(A, float)[keep], per_mass[keep] / N_ion)
    xs = xs / xs.sum()
    rho, T = np.broadcast_arrays(np.asarray(rho, float), np.asarray(T, float))
    shape = rho.shape
    sc_arr = np.asarray(scale, float)
    if sc_arr.size == 1:
        sc_arr = sc_arr.reshape(1)
    else:
        sc_arr = np.ascontiguousarray(np.broadcast_to(sc_arr, shape)).ravel()
    n = rho.size
    ion, ele = np.empty((9, n)), np.empty((9, n))
    flag = np.empty(n)
    _many_parts(np.ascontiguousarray(rho).ravel(), np.ascontiguousarray(T).ravel(), N_ion, N_e, Zs, As, xs,
                float(offset), sc_arr, ion, ele, flag)
    ion_p = Part(*(row.reshape(shape) for row in ion))
    ele_p = Part(*(row.reshape(shape) for row in ele))
    margin = flag.reshape(shape)
    return ion_p, ele_p, margin < 0.0, margin
