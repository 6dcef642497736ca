"""Electrons and ions at the Saha root, point by point in a compiled kernel.

The question this module answers: once the compiled Saha pass (:mod:`thermoplane.physics.saha_kernel`) has
found the free-electron density n_e at (rho, T) and read the pair-free electron gas there, what are the
pressure, energy and entropy of electrons plus ions, with their rho and T partials, the ion fractions and
the mean charge?

It is the post-root part of ``matter.matter`` (``matter._post_root``, which stays for the points the
compiled Saha pass hands back and as the reference of tests/physics/test_compiled_paths.py) written for one
point: the stage fractions of H and He with partials in (eta, T, ln rho) and the pressure-ionization rule's
ln w_j and energy e_w,j (:func:`~thermoplane.physics.ionization.ionization_stages`), the free electrons and
their partials, the implicit differentiation of charge neutrality (dn/drho, dn/dT, deta/drho, deta/dT),
the electrons' P, E, S per gram and the sums over nuclides of the ions' entropy, ionization energy and the
rule's energy. Same formulas; the arithmetic is arranged where that saves time and changes only rounding:
reciprocals instead of divisions, f_j = q_j / sum q, (T / T_0)^4 and Lambda^3 without pow, the cube root
of the Fermi momentum from ln rho and one Newton step, no exp where its result is 1 or 0. Measured
against the numpy passes and against the same formulas in extended precision (np.longdouble), both within
1e-12 of the natural scales (tests/physics/test_compiled_paths.py). One pass per point replaces some 300
whole-array numpy passes and their temporaries; library exp/log cost ~5 np.exp-equivalents each inside
numba, so each point takes 6-8 of them (two logs, one exp for the cube root, one exp per stage that is not
the most populated and one log per element).

Only H and He (Z <= 2) are Saha elements here; the caller checks it.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from . import constants as const
from .eos.parallel import serialized
from .planck_larkin import stage_sums_point
from .ionization import BOHR_RADIUS, S_COMPLETE, S_ONSET, THERMAL_DESTRUCTION_T
from .saha_kernel import element_arrays, keep_stage

__all__ = ["FIELDS", "matter_at_root", "metal_electrons_fixed"]

#: rows of the output of :func:`matter_at_root`, in this order
FIELDS = ("P", "E", "S", "P_rho", "P_T", "E_rho", "E_T", "S_rho", "S_T", "P_e", "P_ion", "eta", "n_minus",
          "n_plus", "ion_H", "ion_He1", "ion_He2", "mean_Z", "metal_electrons")

_K = const.k_B
_PACK = 4.0 * np.pi / 3.0                                   # times n_full, then BOHR_RADIUS**3, as numpy does
_BOHR3 = BOHR_RADIUS**3
_WIDTH = float(np.log(S_COMPLETE / S_ONSET))
_XF_NUM = 3.0 * np.pi**2
_MC = const.m_e * const.c
_MEC2 = const.m_e_c2
_HBAR = const.hbar
#: h^2 and 2 pi m_u k of the ions' thermal wavelength Lambda^3 = (h^2 / (2 pi m_u k T))^(3/2) A^(-3/2)
_H2 = const.h**2
_LAM_DEN = 2.0 * np.pi * const.m_u * const.k_B
_DESTROYED = -1.0e300
#: rows of the per-element scratch: stage fractions and what the ion sums need of them
_F, _LNFGW, _FETA, _FT, _FLN, _WT, _WLN, _EW, _ET, _ELN, _WIN = range(11)
#: interleaved tasks and their blocks of points in the parallel loop (the points handed back cluster in the
#: hot rows of a map: contiguous shares per thread would be unequal)
TASKS = 64
BLOCK = 256


@njit(cache=True, error_model="numpy", inline="always")
def _smooth_step(s):
    """b(s), db / d ln s, d2b / d(ln s)^2 of ionization._smooth_step at one point."""
    if s <= S_ONSET:
        return 0.0, 0.0, 0.0
    if s >= S_COMPLETE:
        return 1.0, 0.0, 0.0
    t = math.log(s / S_ONSET) / _WIDTH
    t = min(max(t, 0.0), 1.0)
    if t <= 0.0:
        return 0.0, 0.0, 0.0
    if t >= 1.0:
        return 1.0, 0.0, 0.0
    h = 1.0 / (1.0 - t) - 1.0 / t
    e = math.exp(-abs(h))
    b = 1.0 / (1.0 + e) if h >= 0.0 else e / (1.0 + e)
    h_t = 1.0 / (t * t) + 1.0 / ((1.0 - t) * (1.0 - t))
    h_tt = 2.0 / ((1.0 - t) * (1.0 - t) * (1.0 - t)) - 2.0 / (t * t * t)
    bb = b * (1.0 - b)
    return b, bb * h_t / _WIDTH, bb * ((1.0 - 2.0 * b) * (h_t * h_t) + h_tt) / (_WIDTH * _WIDTH)


@njit(cache=True, error_model="numpy", inline="always")
def _exp(x):
    """exp(x) for x <= 0, without the library call where the result is known: 1 at 0, 0 below -746."""
    if x == 0.0:
        return 1.0
    if x < -746.0:
        return 0.0
    return math.exp(x)


@njit(cache=True, error_model="numpy", inline="always")
def _rule_of_stage(s_rho, s_T):
    """ionization._rule_of_stage at one point: G = b / (1 - b) of a stage at packing s_rho + s_T with its
    partials G_r, G_t, G_rt, G_tt in ln rho and ln T, and whether the stage is gone (b = 1)."""
    s = s_rho + s_T
    if s <= S_ONSET:
        return 0.0, 0.0, 0.0, 0.0, 0.0, False
    b, db, d2b = _smooth_step(s)
    if b >= 1.0 - 1e-12:
        return 0.0, 0.0, 0.0, 0.0, 0.0, True
    a_rho = s_rho / s
    a_T = s_T / s
    om = 1.0 - b
    G = b / om
    G_u = db / (om * om)
    G_uu = d2b / (om * om) + 2.0 * (db * db) / (om * om * om)
    u_r = a_rho
    u_t = 4.0 * a_T
    G_rt = G_uu * u_r * u_t - G_u * a_rho * u_t
    G_tt = G_uu * (u_t * u_t) + 4.0 * G_u * u_t * a_rho
    return G, G_u * u_r, G_u * u_t, G_rt, G_tt, False


@njit(cache=True, error_model="numpy", inline="always")
def _stages(e, Zi, lng, C, r3, eta, i_kT, i_T, s_rho, s_T, E_F, E_F_ln, pls, st):
    """ionization_stages of element e (rows e of lng, C, r3) at one point into st[e] (10 rows x stages, rows
    _F...); returns the mean charge and its partials in eta, T, ln rho.

    Each bound stage has its own packing r3_j s_rho + s_T. f_j = q_j / sum q with q_j = exp(ln q_j - max ln q);
    stages that saha_kernel.keep_stage rejects get f_j = 0 (no exp; the caller skips them). pls[e]: the
    Planck-Larkin factors of the element's stages at this T and their ln T partials (physics.planck_larkin).
    Arrays are indexed in place, never sliced (no array views per point)."""
    # pass 1: ln q_j of every stage (the rule's G alone, no partials), its largest, and the largest ion's
    top = -math.inf
    top_ion = -math.inf
    t = 0
    for j in range(Zi + 1):
        lnw = 0.0
        if j < Zi:                     # the bare nucleus is never destroyed
            lnw = pls[e, 0, j]
            s_j = r3[e, j] * s_rho
            if s_j + s_T > S_ONSET:
                G, G_r, G_t, G_rt, G_tt, gone = _rule_of_stage(s_j, s_T)
                lnw = _DESTROYED if gone else lnw - G * (C[e, Zi] - C[e, j] + (Zi - j) * E_F) * i_kT
        lq = lng[e, j] + lnw - j * eta - C[e, j] * i_kT
        st[e, _F, j] = lq                                  # ln q_j for now
        if lq > top:
            top = lq
            t = j
        if j >= 1 and lq > top_ion:
            top_ion = lq
    # pass 2: the stages kept (saha_kernel.keep_stage): q_j and the rule's ln w_j, E_w,j with partials; the
    # first and last kept (row _WIN) bound every later loop over the stages
    tot = 0.0
    lo = Zi
    hi = 0
    for j in range(Zi + 1):
        lq = st[e, _F, j]
        if not keep_stage(j, lq, top, t, top_ion):
            st[e, _F, j] = 0.0
            continue
        lo = min(lo, j)
        hi = max(hi, j)
        q = _exp(lq - top)
        st[e, _F, j] = q
        tot += q
        c_kT = C[e, j] * i_kT
        if j == Zi:
            w_T = 0.0
            st[e, _WLN, j] = 0.0
            st[e, _EW, j] = 0.0
            st[e, _ET, j] = 0.0
            st[e, _ELN, j] = 0.0
        else:
            G, G_r, G_t, G_rt, G_tt, gone = _rule_of_stage(r3[e, j] * s_rho, s_T)
            # F_w = G D - kT Phi_j (ionization.py): D = (C_Z - C_j) + (Z - j) E_F, Phi_j the Planck-Larkin factor
            D = C[e, Zi] - C[e, j] + (Zi - j) * E_F
            D_r = (Zi - j) * E_F_ln
            p1 = pls[e, 1, j]
            w_T = ((G - G_t) * D * i_kT + p1) * i_T
            st[e, _WLN, j] = -(G_r * D + G * D_r) * i_kT
            st[e, _EW, j] = D * (G - G_t) + p1 / i_kT
            st[e, _ET, j] = D * (G_t - G_tt) * i_T + _K * (p1 + pls[e, 2, j])
            st[e, _ELN, j] = D_r * (G - G_t) + D * (G_r - G_rt)
        st[e, _WT, j] = w_T
        st[e, _FT, j] = c_kT * i_T + w_T          # d ln q_j / dT for now
        st[e, _LNFGW, j] = -j * eta - c_kT                 # ln_f_gw + ln sum q, for now
    st[e, _WIN, 0] = lo
    st[e, _WIN, 1] = hi
    ln_sum = top + math.log(tot)
    i_tot = 1.0 / tot
    m_eta = 0.0
    m_T = 0.0
    m_ln = 0.0
    for j in range(lo, hi + 1):
        f = st[e, _F, j] * i_tot
        st[e, _F, j] = f
        if f == 0.0:
            continue
        st[e, _LNFGW, j] -= ln_sum
        m_eta += f * -float(j)
        m_T += f * st[e, _FT, j]
        m_ln += f * st[e, _WLN, j]
    zb = 0.0
    z_eta = 0.0
    z_T = 0.0
    z_ln = 0.0
    for j in range(lo, hi + 1):
        f = st[e, _F, j]
        if f == 0.0:                   # not kept, or below the smallest double: its rows are never read
            continue
        st[e, _FETA, j] = f * (-float(j) - m_eta)
        st[e, _FT, j] = f * (st[e, _FT, j] - m_T)
        st[e, _FLN, j] = f * (st[e, _WLN, j] - m_ln)
        if j > 0:
            zb += j * f
            z_eta += j * st[e, _FETA, j]
            z_T += j * st[e, _FT, j]
            z_ln += j * st[e, _FLN, j]
    return zb, z_eta, z_T, z_ln


@njit(cache=True, error_model="numpy", inline="always")
def _point(rho, T, n_full, n, buf, i, fixed, fixed_metal, el_Z, el_N, el_lng, el_C, el_r3, nuc_N, nuc_lnN, nuc_lnA15, nuc_el, N_nuc,
           ln_xn_per_rho, st, pls, out):
    """matter._post_root at point i: the electron gas buf[i] (electron_point layout) at n_e = n; into out[:, i]."""
    kT = _K * T
    # divisions are the costliest arithmetic here: multiply by reciprocals (the same to rounding)
    i_kT = 1.0 / kT
    i_T = 1.0 / T
    i_rho = 1.0 / rho
    i_n = 1.0 / n
    # the pressure-ionization rule (ionization_stages): the packing terms (each stage scales s_rho by its
    # own size) and the Fermi energy of fully ionized matter
    s_rho = _PACK * n_full * _BOHR3
    tau = T / THERMAL_DESTRUCTION_T
    s_T = (tau * tau) * (tau * tau)
    # cube root of 3 pi^2 n_full from ln rho (needed below anyway) and one Newton step, to rounding
    ln_r = math.log(rho)
    xn = _XF_NUM * n_full
    y = math.exp((ln_xn_per_rho + ln_r) / 3.0)
    x = _HBAR * (y - (y * y * y - xn) / (3.0 * (y * y))) / _MC
    root = math.sqrt(1.0 + x * x)
    E_F = _MEC2 * x * x / (root + 1.0)
    E_F_ln = _MEC2 * x * x / (3.0 * root)

    # stage fractions per Saha element, and the free electrons with partials (eta, T, ln rho)
    eta = buf[i, 0]
    zmetal = fixed_metal
    zsum = 0.0
    d_eta = 0.0
    d_T = 0.0
    d_ln = 0.0
    for k in range(el_Z.size):
        zb, z_eta, z_T, z_ln = _stages(k, el_Z[k], el_lng, el_C, el_r3, eta, i_kT, i_T, s_rho, s_T, E_F, E_F_ln,
                                       pls, st)
        zsum += el_N[k] * zb
        if el_Z[k] > 2:
            zmetal += el_N[k] * zb
        d_eta += el_N[k] * z_eta
        d_T += el_N[k] * z_T
        d_ln += el_N[k] * z_ln
    n_free = rho * (fixed + zsum)
    nf_eta = rho * d_eta
    nf_T = rho * d_T
    nf_ln = rho * d_ln

    # implicit differentiation of n - n_free(eta(n, T), T, rho) = 0 (electron_fast.state_from_points' fields)
    deta_dn = buf[i, 1] * i_n
    deta_dT_n = buf[i, 2] * i_T
    dP_dn = buf[i, 4] * i_n
    dP_dT_n = buf[i, 5] * i_T
    dE_dn = buf[i, 7] * i_n
    dE_dT_n = buf[i, 8] * i_T
    G_n = 1.0 - nf_eta * deta_dn
    dn_drho = (n_free + nf_ln) * i_rho / G_n
    dn_dT = (nf_eta * deta_dT_n + nf_T) / G_n
    deta_drho = deta_dn * dn_drho
    deta_dT = deta_dT_n + deta_dn * dn_dT

    # electrons per gram (S partials from the gas's own S, (dP/dT)_n, (dE/dT)_n: see matter._post_root)
    P_e = buf[i, 3]
    Pe_rho = dP_dn * dn_drho
    Pe_T = dP_dT_n + dP_dn * dn_dT
    E_vol = buf[i, 6]
    Ee = E_vol * i_rho
    Ee_rho = (dE_dn * dn_drho - Ee) * i_rho
    Ee_T = (dE_dT_n + dE_dn * dn_dT) * i_rho
    S_vol = buf[i, 9]
    S_n = (S_vol - dP_dT_n) * i_n
    S_Tn = dE_dT_n * i_T
    Se = S_vol * i_rho
    Se_rho = (S_n * dn_drho - Se) * i_rho
    Se_T = (S_Tn + S_n * dn_dT) * i_rho

    # ions (kinetic), ionization energy and the rule's energy, per gram
    k = _K
    P_ion = rho * N_nuc * k * T
    Pi_rho = N_nuc * k * T
    Pi_T = rho * N_nuc * k
    Ei = 1.5 * N_nuc * k * T
    Ei_T = 1.5 * N_nuc * k
    Ei_rho = 0.0
    ln_lam3 = 1.5 * math.log(_H2 / (_LAM_DEN * T))
    Si = 0.0
    Si_rho = -k * N_nuc * i_rho
    Si_T = 1.5 * k * N_nuc * i_T
    for m in range(nuc_N.size):
        N_i = nuc_N[m]
        ln_nL3 = ln_r + nuc_lnN[m] + ln_lam3 - nuc_lnA15[m]
        e = nuc_el[m]
        if e < 0:
            Si += N_i * k * (2.5 - ln_nL3)
            continue
        for j in range(int(st[e, _WIN, 0]), int(st[e, _WIN, 1]) + 1):
            f = st[e, _F, j]
            if f == 0.0:               # outside the window (WINDOW_CUT): every term below is 0
                continue
            df_rho = st[e, _FLN, j] * i_rho + st[e, _FETA, j] * deta_drho
            df_T = st[e, _FT, j] + st[e, _FETA, j] * deta_dT
            inner = ln_nL3 + st[e, _LNFGW, j]
            Si += N_i * k * f * (2.5 - inner)
            dlnw_rho = st[e, _WLN, j] * i_rho                 # w depends on (rho, T) only: no eta term
            dlnw_T = st[e, _WT, j]
            Si_rho += N_i * k * (df_rho * (1.5 - inner) + f * dlnw_rho)
            Si_T += N_i * k * (df_T * (1.5 - inner) + f * dlnw_T)
            Cj = el_C[e, j]
            Ei += N_i * f * Cj
            Ei_rho += N_i * Cj * df_rho
            Ei_T += N_i * Cj * df_T
            ew_j = st[e, _EW, j]
            ew = N_i * f * ew_j
            ew_rho = N_i * (df_rho * ew_j + f * st[e, _ELN, j] * i_rho)
            ew_T = N_i * (df_T * ew_j + f * st[e, _ET, j])
            Ei += ew
            Ei_rho += ew_rho
            Ei_T += ew_T
            Si += ew * i_T
            Si_rho += ew_rho * i_T
            Si_T += (ew_T - ew * i_T) * i_T

    out[0, i] = P_e + P_ion
    out[1, i] = Ee + Ei
    out[2, i] = Se + Si
    out[3, i] = Pe_rho + Pi_rho
    out[4, i] = Pe_T + Pi_T
    out[5, i] = Ee_rho + Ei_rho
    out[6, i] = Ee_T + Ei_T
    out[7, i] = Se_rho + Si_rho
    out[8, i] = Se_T + Si_T
    out[9, i] = P_e
    out[10, i] = P_ion
    out[11, i] = eta
    out[12, i] = n
    out[13, i] = 0.0
    out[14, i] = 1.0
    out[15, i] = 1.0
    out[16, i] = 1.0
    for e in range(el_Z.size):
        if el_Z[e] == 1:
            out[14, i] = st[e, _F, 1]
        elif el_Z[e] == 2:
            out[15, i] = st[e, _F, 1] + st[e, _F, 2]
            out[16, i] = st[e, _F, 2]
    out[17, i] = n_free / (rho * N_nuc)
    out[18, i] = zmetal


@njit(cache=True, parallel=True, error_model="numpy")
def _many(rho, T, n_full, n_e, buf, ok, fixed, fixed_metal, el_Z, el_N, el_lng, el_C, el_r3, nuc_N, nuc_lnN, nuc_lnA15, nuc_el, N_nuc,
          ln_xn_per_rho, out):
    n = rho.size
    for c in prange(TASKS):
        st = np.empty((el_Z.size, 11, el_C.shape[1]))          # one scratch per task, reused point after point
        # the Planck-Larkin factors per element (physics.planck_larkin.stage_sums_point) depend on T alone:
        # formed again only where T changes (a map's rows share T)
        pls = np.empty((el_Z.size, 3, el_C.shape[1]))
        last_T = math.nan
        for start in range(c * BLOCK, n, TASKS * BLOCK):
            for i in range(start, min(start + BLOCK, n)):
                if ok[i]:
                    if T[i] != last_T:
                        for k in range(el_Z.size):
                            stage_sums_point(T[i], el_Z[k], el_C[k], pls[k])
                        last_T = T[i]
                    _point(rho[i], T[i], n_full[i], n_e[i], buf, i, fixed, fixed_metal, el_Z, el_N, el_lng, el_C,
                           el_r3, nuc_N,
                           nuc_lnN, nuc_lnA15, nuc_el, N_nuc, ln_xn_per_rho, st, pls, out)


def metal_electrons_fixed(comp, saha: dict) -> float:
    """Free electrons per gram of the metals (Z > 2) that are not Saha elements (taken as fully ionized)."""
    return float(sum(X * Z / (A * const.m_u) for X, A, Z in zip(comp.X, comp.A, comp.Z)
                     if Z > 2 and not (int(Z) == Z and int(Z) in saha)))


@serialized
def matter_at_root(rho, T, n_full, n_e, buf, ok, comp, saha: dict, fixed: float, elements: dict):
    """The rows :data:`FIELDS` (array (18, points)) of ``matter.matter`` at the points ``ok``, from the output
    of :func:`~thermoplane.physics.saha_kernel.solve_saha_state` (n_e and the gas rows ``buf`` there).

    1-d arrays rho (g cm^-3), T (K), n_full (cm^-3). ``saha`` maps Z (1 or 2) to nuclei per gram and is
    iterated in its own order (as ``matter._free_electrons`` sums), ``fixed`` is the electrons per gram of
    the fully ionized rest, ``elements`` maps Z to :class:`~thermoplane.physics.ionization.Element`.
    Columns where ``ok`` is False are left unset (the caller fills them).
    """
    zs = list(saha)
    if not zs:
        raise ValueError("the compiled post-root pass needs at least one Saha element")
    el_Z, el_N, el_lng, el_C, el_r3 = element_arrays(saha, elements, order=zs)
    per_mass = comp.X / (comp.A * const.m_u)
    nuc_N = np.asarray(per_mass, dtype=float)
    # the same scalar logs as matter._post_root takes
    nuc_lnN = np.array([np.log(N) for N in per_mass], dtype=float)
    nuc_lnA15 = np.array([1.5 * np.log(A) for A in comp.A], dtype=float)
    nuc_el = np.array([zs.index(int(Z)) if (int(Z) == Z and int(Z) in saha) else -1 for Z in comp.Z],
                      dtype=np.int64)
    N_nuc = float(np.sum(per_mass))
    N_full = float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))      # n_full / rho, as matter.matter has it
    fixed_metal = metal_electrons_fixed(comp, saha)
    out = np.empty((len(FIELDS), rho.size))
    _many(np.ascontiguousarray(rho), np.ascontiguousarray(T), np.ascontiguousarray(n_full),
          np.ascontiguousarray(n_e), np.ascontiguousarray(buf), np.ascontiguousarray(ok), float(fixed), fixed_metal,
          el_Z, el_N, el_lng, el_C, el_r3, nuc_N, nuc_lnN, nuc_lnA15, nuc_el, N_nuc, math.log(_XF_NUM * N_full), out)
    return out
