"""The free-electron density of the Saha equilibrium, solved point by point in a compiled kernel.

The question this module answers: at (rho, T), what electron density n_e satisfies charge neutrality,
ln n_e = ln n_free(eta(n_e, T)), when hydrogen and helium follow the Saha equation with the pressure-
ionization rule of :mod:`thermoplane.physics.ionization`?

It is the same equation, bracket and safeguarded Newton steps as ``matter._solve_saha`` (which stays for
the points this kernel hands back; one difference: a Newton step onto the unevaluated lower bound is taken
here, not bisected, see :func:`_one`), run per point inside numba instead of as whole-array numpy passes:
the electron gas is the pair-free table read by :func:`~thermoplane.physics.eos.electron_kernel.electron_point`
(agreeing with the numpy table to rounding), and the stage fractions are those of
:func:`~thermoplane.physics.ionization.ionization_stages` written for one point. Only the root n_e comes
from here (:func:`solve_saha_compiled`), or the root and the pair-free gas there in one pass per point
(:func:`solve_saha_state`, what ``matter.matter`` uses); the rest is formed at that root by the numpy code,
so nothing downstream changes but the last bits of n_e (the tolerance of both solvers is 1e-13 in ln n_e).

A point is handed back (``ok`` False) where the table does not hold it (T outside the table, or a root
below its lowest density, 1e4 cm^-3, where the numpy state uses the exact quadrature) or where positrons are
not negligible at the root (the pair-free table does not describe them).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from . import constants as const
from .electrons import _CN
from .eos.electron_kernel import electron_arrays, electron_point
from .eos.parallel import serialized
from .planck_larkin import stage_sums_point
from .ionization import S_COMPLETE, S_ONSET, THERMAL_DESTRUCTION_T, BOHR_RADIUS

__all__ = ["solve_saha_compiled", "solve_saha_state"]

_K = const.k_B
_THETA = const.k_B / const.m_e_c2
_LN_NQ0 = math.log(2.0) + 1.5 * math.log(2.0 * math.pi * const.m_e * const.k_B / const.h**2)
_PACK = (4.0 * math.pi / 3.0) * BOHR_RADIUS**3
_WIDTH = math.log(S_COMPLETE / S_ONSET)
_XF0 = const.hbar * (3.0 * math.pi**2) ** (1.0 / 3.0) / (const.m_e * const.c)   # x_F = _XF0 n^(1/3)
_TOL = 1e-13
#: interleaved tasks and their blocks of points in the parallel loop of _many_state
TASKS = 64
BLOCK = 256
_MAX_ITER = 80


@njit(cache=True, error_model="numpy")
def _step_b(s):
    """The smooth step b(s) of the pressure-ionization rule (ionization._smooth_step, one point)."""
    if s <= S_ONSET:                   # no log where the answer is known (most stages of most points)
        return 0.0
    if s >= S_COMPLETE:
        return 1.0
    t = math.log(max(s, 1e-300) / S_ONSET) / _WIDTH
    if t <= 0.0:
        return 0.0
    if t >= 1.0:
        return 1.0
    a = math.exp(-1.0 / t)
    c = math.exp(-1.0 / (1.0 - t))
    return a / (a + c)


#: stages whose ln q lies more than this below the element's largest are left out of the sums (weight below
#: e^-40 = 4e-18 of the largest each; the numpy reference sums every stage). Where the neutral atom is the
#: largest, the mean charge is carried by the ions alone: then an ion is also kept when it lies within
#: WINDOW_CUT + 7 of the largest ion (j^2 <= e^7 weights the variance), so that the mean charge and its
#: eta-partial keep their relative accuracy however small they are (cool matter: 1e-20 and less)
WINDOW_CUT = 40.0


@njit(cache=True, error_model="numpy", inline="always")
def keep_stage(j, lq, top, t, top_ion):
    """Whether stage j (ln q = lq) enters the sums: top and t are the largest ln q and its stage, top_ion the
    largest ln q of the ions (j >= 1). See WINDOW_CUT."""
    if lq - top > -WINDOW_CUT:
        return True
    return t == 0 and j >= 1 and lq - top_ion > -WINDOW_CUT - 7.0


@njit(cache=True, error_model="numpy")
def _fill_pl(T, el_Z, el_C, pl):
    """pl[k, j] = the Planck-Larkin factor Phi_j of stage j of element k at T (row 0 of
    physics.planck_larkin.stage_sums_point): a function of T alone, formed where T changes."""
    tmp = np.empty((3, el_C.shape[1]))
    for k in range(el_Z.size):
        stage_sums_point(T, el_Z[k], el_C[k], tmp)
        for j in range(el_Z[k] + 1):
            pl[k, j] = tmp[0, j]


@njit(cache=True, error_model="numpy")
def _prepare(n_full, T, el_Z, el_lng, el_C, el_r3, pl, pre):
    """The eta-independent part of ln q_j of every stage at one point, into pre[k, j] (ionization_stages):
    ln g_j + ln w_j - C_j / kT, -inf where the rule has destroyed the stage. Each stage's packing is
    r3_j s_rho + s_T, its own size (r3_j = (r_j / a_0)^3) in the volume per electron of fully ionized matter;
    ln w_j includes the Planck-Larkin factor pl[k, j] (:func:`_fill_pl` at this T)."""
    i_kT = 1.0 / (_K * T)
    s_rho = _PACK * n_full
    tau = T / THERMAL_DESTRUCTION_T
    s_T = (tau * tau) * (tau * tau)
    x = _XF0 * math.exp(math.log(n_full) / 3.0)
    ef = const.m_e_c2 * x * x / (math.sqrt(1.0 + x * x) + 1.0) * i_kT
    for k in range(el_Z.size):
        Zi = el_Z[k]
        CZ = el_C[k, Zi]
        for j in range(Zi + 1):
            base = el_lng[k, j] - el_C[k, j] * i_kT
            if j == Zi:                       # the bare nucleus is never destroyed
                pre[k, j] = base
                continue
            b = _step_b(el_r3[k, j] * s_rho + s_T)
            if b == 0.0:
                pre[k, j] = base + pl[k, j]
            elif b >= 1.0 - 1e-12:
                pre[k, j] = -math.inf
            else:
                pre[k, j] = base + pl[k, j] - b / (1.0 - b) * ((CZ - el_C[k, j]) * i_kT + (Zi - j) * ef)


@njit(cache=True, error_model="numpy")
def _zbar(k, Zi, pre, eta):
    """Mean charge of element k and its eta-partial at fixed T and rho (no allocation).

    ln q_j = pre[k, j] - j eta; stages that :func:`keep_stage` rejects are left out; the sums are
    taken about the largest stage (index t), so the variance sum f (j - zbar)^2 loses nothing to rounding."""
    top = -math.inf
    top_ion = -math.inf
    t = 0
    for j in range(Zi + 1):
        lq = pre[k, j] - j * eta
        if lq > top:
            top = lq
            t = j
        if j >= 1 and lq > top_ion:
            top_ion = lq
    s0 = 0.0
    s1 = 0.0
    s2 = 0.0
    for j in range(Zi + 1):
        lq = pre[k, j] - j * eta
        if keep_stage(j, lq, top, t, top_ion):
            q = 1.0 if j == t else math.exp(lq - top)
            s0 += q
            s1 += (j - t) * q
            s2 += (j - t) * (j - t) * q
    m = s1 / s0
    return t + m, -(s2 / s0 - m * m)


@njit(cache=True, error_model="numpy")
def _charge(eta, fixed, el_Z, el_N, pre):
    """Free electrons per gram over rho (the fixed ones plus sum N zbar) and its eta-partial."""
    zsum = fixed
    zeta = 0.0
    for k in range(el_Z.size):
        zb, dz = _zbar(k, el_Z[k], pre, eta)
        zsum += el_N[k] * zb
        zeta += el_N[k] * dz
    return zsum, zeta


@njit(cache=True, error_model="numpy")
def _start(lnn_full, lo, rho, T, fixed, el_Z, el_N, pre):
    """A starting ln n_e: the same equation with non-degenerate, non-relativistic electrons,
    eta = ln(n_e / n_Q(T)), solved by cheap Newton steps (no table reads). Where that start would be
    degenerate (eta > -1) the classical eta is no guide: start from full ionization, as the numpy path does."""
    lnQ = _LN_NQ0 + 1.5 * math.log(T)
    y = lnn_full
    for _ in range(60):
        eta = y - lnQ
        if eta > -1.0:
            return lnn_full
        zsum, zeta = _charge(eta, fixed, el_Z, el_N, pre)
        phi = y - math.log(rho * zsum)
        new = y - min(max(phi / (1.0 - zeta / zsum), -40.0), 40.0)
        new = min(max(new, lo), lnn_full)
        if abs(new - y) < 1e-6:
            return new
        y = new
    return lnn_full


@njit(cache=True, error_model="numpy")
def _one(lnn_full, rho, T, fixed, el_Z, el_N, pre, tab, pairs, below, buf, hint=math.nan):
    """Root y = ln n_e at one point (pre from :func:`_prepare`); returns (y, ok, fresh): fresh if buf holds
    the gas at exp(y). A finite ``hint`` (a neighbour's root) replaces the classical start."""
    hi = lnn_full
    lo = math.log(rho * fixed) if fixed > 0.0 else -math.inf
    if math.isfinite(hint):
        y = min(max(hint, lo), lnn_full)
    else:
        y = _start(lnn_full, lo, rho, T, fixed, el_Z, el_N, pre)
    fresh = False
    lo_seen = False
    dx_old = math.inf
    for _ in range(_MAX_ITER):
        if not electron_point(math.exp(y), T, tab, buf):
            return y, False, False
        zsum, zeta = _charge(buf[0], fixed, el_Z, el_N, pre)
        n_free = rho * zsum
        phi = y - math.log(n_free)
        if abs(phi) < _TOL:
            fresh = True
            break
        slope = 1.0 - zeta / zsum * buf[1]
        if phi > 0.0:
            hi = y
        else:
            lo = y
            lo_seen = True
        step = min(max(phi / slope, -40.0), 40.0)
        new = y - step
        # a step onto the initial lower bound ln(rho N_fixed), not yet evaluated, is taken: there the Saha
        # elements give up (almost) nothing (cold matter, H and He neutral), the Newton step lands exactly on
        # it, and the root lies within rounding above it (bisecting towards it took ~45 table reads)
        onto_bound = new == lo and not lo_seen
        # bisect where the Newton step leaves the bracket, or where it does not shrink to half the step
        # before it (Press et al., Numerical Recipes, rtsafe): across pressure ionization n_free(eta) is a
        # steep step, and Newton from either side overshoots to the other in a slowly closing 2-cycle
        slow = lo_seen and math.isfinite(lo) and 2.0 * abs(step) > dx_old
        if (new <= lo and not onto_bound) or new >= hi or slow:
            new = 0.5 * (lo + hi) if math.isfinite(lo) else hi - 40.0
        dx_old = abs(new - y)
        if abs(new - y) < 1e-14 * max(1.0, abs(y)):
            y = new
            fresh = False
            break
        y = new
    else:
        return y, False, False
    if y < tab[7] and not below:
        # below the table's lower edge the compiled reader scales the edge as a Boltzmann gas, the numpy
        # state uses the exact quadrature (they differ by ~1e-9 in eta): the numpy path solves these points
        return y, False, False
    if not pairs:
        return y, True, fresh
    # positrons at the root, bounded above as matter._positron_bound does
    theta = _THETA * T
    eta_plus = min(-buf[0] - 2.0 / theta, 0.0)
    G = 0.8862269 * (1.0 + 0.375 * theta) + theta * 1.3293404 * (1.0 + 0.625 * theta)
    if _CN * theta**1.5 * math.exp(eta_plus) * G > 1e-10 * math.exp(y):
        return y, False, False
    return y, True, fresh


@njit(cache=True, parallel=True, error_model="numpy")
def _many(lnn_full, rho, T, fixed, el_Z, el_N, el_lng, el_C, el_r3, tab, pairs, below, y, ok):
    buf = np.empty((rho.size, 12))
    for i in prange(rho.size):
        pre = np.empty(el_C.shape)
        pl = np.empty(el_C.shape)
        _fill_pl(T[i], el_Z, el_C, pl)
        _prepare(math.exp(lnn_full[i]), T[i], el_Z, el_lng, el_C, el_r3, pl, pre)
        y[i], ok[i], _ = _one(lnn_full[i], rho[i], T[i], fixed, el_Z, el_N, pre, tab, pairs, below, buf[i])


@njit(cache=True, error_model="numpy")
def _positrons_negligible(eta, T, n):
    """matter._positron_bound(eta, T) <= NEGLIGIBLE_POSITRONS n at one point."""
    theta = _THETA * T
    eta_plus = min(-eta - 2.0 / theta, 0.0)
    G = 0.8862269 * (1.0 + 0.375 * theta) + theta * 1.3293404 * (1.0 + 0.625 * theta)
    return not (_CN * theta**1.5 * math.exp(eta_plus) * G > 1e-10 * n)


@njit(cache=True, error_model="numpy")
def _one_state(n_full, rho, T, fixed, el_Z, el_N, el_lng, el_C, el_r3, tab, pairs, below, buf, pl, pre,
               hint=math.nan):
    """n_e at one point and the pair-free electron gas there (into buf); returns (n_e, ok).

    As matter.matter does it: the gas at full ionization first; where the Saha elements give up every
    electron there (ln n_full - ln n_free < 1e-13) n_e = n_full, else the root of :func:`_one`. ok is False
    where the numpy path must take the point (outside the table, below its lowest density, positrons).
    ``pre`` is scratch for :func:`_prepare`, ``pl`` the Planck-Larkin factors at this T (:func:`_fill_pl`).
    """
    ln0 = tab[7]
    lnn_full = math.log(n_full)
    if lnn_full < ln0 or not electron_point(n_full, T, tab, buf):
        return n_full, False
    _prepare(n_full, T, el_Z, el_lng, el_C, el_r3, pl, pre)
    zsum, _ = _charge(buf[0], fixed, el_Z, el_N, pre)
    if not lnn_full - math.log(rho * zsum) > _TOL:
        return n_full, (not pairs) or _positrons_negligible(buf[0], T, n_full)
    y, ok, fresh = _one(lnn_full, rho, T, fixed, el_Z, el_N, pre, tab, pairs, below, buf, hint)
    if not ok:
        return n_full, False
    n = math.exp(y)
    # buf holds the gas at exp(y) unless the last Newton step was taken without a new evaluation
    if not fresh and not electron_point(n, T, tab, buf):
        return n_full, False
    return n, True


@njit(cache=True, parallel=True, error_model="numpy")
def _many_state(n_full, rho, T, fixed, el_Z, el_N, el_lng, el_C, el_r3, tab, pairs, below, n_e, ok, out):
    # interleaved blocks: task c takes the blocks c, c + TASKS, ... of BLOCK neighbouring points (the costly
    # roots cluster in the cool rows of a map: contiguous shares per thread would be unequal; neighbouring
    # points read neighbouring table cells, so each block stays contiguous)
    # with metals (below), a point whose left neighbour in the block has the same T starts its root from the
    # neighbour's, shifted by half the step in ln rho (n_e ~ rho^(1/2) where ionization is partial), instead of
    # the classical start: the same root (within 5e-13 in ln n_e on the default plane), ~10 % less time
    n = rho.size
    for c in prange(TASKS):
        pre = np.empty(el_C.shape)            # one scratch per task, reused point after point
        # the Planck-Larkin factors depend on T alone: formed again only where T changes (a map's rows share T)
        pl = np.empty(el_C.shape)
        last_T = math.nan
        for start in range(c * BLOCK, n, TASKS * BLOCK):
            for i in range(start, min(start + BLOCK, n)):
                if T[i] != last_T:
                    _fill_pl(T[i], el_Z, el_C, pl)
                    last_T = T[i]
                hint = math.nan
                if below and i > start and T[i] == T[i - 1] and ok[i - 1] and n_e[i - 1] < n_full[i - 1]:
                    hint = math.log(n_e[i - 1]) + 0.5 * math.log(rho[i] / rho[i - 1])
                n_e[i], ok[i] = _one_state(n_full[i], rho[i], T[i], fixed, el_Z, el_N, el_lng, el_C, el_r3, tab,
                                           pairs, below, out[i], pl, pre, hint)


_TAB = None


def element_arrays(saha, elements, order=None):
    """The Saha elements as arrays for the kernels: Z (k), nuclei per gram (k), and per stage (k, max Z + 1)
    ln g_j, C_j (erg, from the neutral atom) and (r_j / a_0)^3; elements in increasing Z (or in ``order``),
    unused stages padded (never read: each element's loop stops at its Z)."""
    zs = sorted(saha) if order is None else list(order)
    width = max(zs) + 1
    el_Z = np.array(zs, dtype=np.int64)
    el_N = np.array([saha[z] for z in zs], dtype=float)
    el_lng = np.zeros((len(zs), width))
    el_C = np.zeros((len(zs), width))
    el_r3 = np.zeros((len(zs), width))
    for k, z in enumerate(zs):
        el_lng[k, :z + 1] = np.log(np.asarray(elements[z].weights, dtype=float))
        el_C[k, :z + 1] = elements[z].cumulative_erg
        el_r3[k, :z + 1] = elements[z].radius3_array
    return el_Z, el_N, el_lng, el_C, el_r3


def _arrays(saha, elements):
    global _TAB
    if _TAB is None:
        _TAB = electron_arrays()
    return element_arrays(saha, elements)


@serialized
def solve_saha_state(n_full, rho, T, saha: dict, fixed: float, elements: dict, pairs: bool = True,
                     below_table: bool = False):
    """n_e, the pair-free electron gas there, and a mask of the points done, for 1-d arrays n_full, rho, T.

    One pass per point: the gas at n_full, the completeness test of ``matter.matter`` (ln n_full -
    ln n_free(eta(n_full)) > 1e-13 means incomplete), the Saha root where incomplete (:func:`solve_saha_compiled`'s
    steps) and the gas at the root. Returns (n_e, out, ok): ``out`` (points, 12) in the layout of
    :func:`~thermoplane.physics.eos.electron_kernel.electron_point` at n_e; points with ok False (outside the
    table, n below its lowest density, positrons not negligible with ``pairs``) must be solved by the numpy path.
    With ``below_table``, roots below the table's lowest density (1e4 cm^-3) are kept, with the compiled
    reader's Boltzmann continuation of the table's edge (a free energy of its own, exact for non-degenerate
    electrons; the numpy path's quadrature differs by ~1e-9 in eta): cool matter whose only electron donors
    are the metals (matter.matter asks for it when metals are Saha elements).
    """
    el_Z, el_N, el_lng, el_C, el_r3 = _arrays(saha, elements)
    n_e = np.empty(rho.size)
    ok = np.zeros(rho.size, dtype=np.bool_)
    out = np.empty((rho.size, 12))
    _many_state(np.ascontiguousarray(n_full), np.ascontiguousarray(rho), np.ascontiguousarray(T), float(fixed),
                el_Z, el_N, el_lng, el_C, el_r3, _TAB, bool(pairs), bool(below_table), n_e, ok, out)
    return n_e, out, ok


@serialized
def solve_saha_compiled(n_full, rho, T, saha: dict, fixed: float, elements: dict, pairs: bool = True,
                        below_table: bool = False):
    """n_e and a mask of the points solved, for 1-d arrays n_full, rho, T (cm^-3, g cm^-3, K).

    ``saha`` maps Z to nuclei per gram of the Saha elements, ``fixed`` is the electrons per gram of the
    fully ionized rest, ``elements`` maps Z to :class:`~thermoplane.physics.ionization.Element`.
    With ``pairs``, points whose positrons are not negligible at the root are handed back.
    Points with ok False must be solved by the numpy path.
    """
    el_Z, el_N, el_lng, el_C, el_r3 = _arrays(saha, elements)
    y = np.empty(rho.size)
    ok = np.zeros(rho.size, dtype=np.bool_)
    _many(np.log(n_full), np.ascontiguousarray(rho), np.ascontiguousarray(T), float(fixed), el_Z, el_N, el_lng,
          el_C, el_r3, _TAB, bool(pairs), bool(below_table), y, ok)
    return np.exp(y), ok
