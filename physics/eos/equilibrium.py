"""The chemical equilibrium at fixed (rho, T): the minimum of F over the species, and its derivatives.

Question answered: how are the nuclei of a composition shared among molecules, atoms and ions, how many
electrons are free, and what are P, E, S and their derivatives at that minimum?

The Helmholtz free energy per gram is the sum of the terms of this package:

    F = F_trans + F_int + F_e + F_coul + F_rad

- F_trans = sum_j N_j kT [ln(N_j lambda_j^3 / V_f) - 1]                   (ions, atoms, H2)
- F_int   = sum_j N_j (E_j - kT ln g_j);  H2: N_H2 (-D0 - kT ln Z_int)      (:mod:`.species`)
- F_e     = V_f f_e(N_e / V_f, T): the electron-positron gas (:mod:`thermoplane.physics.electron_table`),
            with Coulomb on plus the electrons' exchange-correlation N_e kT f_xc(n_e', T)
            (:mod:`.electron_xc`, the term the other options take from the dense-plasma part)
- F_coul  = kT sum_j N_j f_j(ln n_e, ln T), n_e = N_e / V                   (:mod:`.coulomb_term`)
- F_rad   = -a T^4 / (3 rho)                                                 (added in :mod:`.state`)

Everything that moves (nuclei, atoms, molecules, free electrons) moves in the volume the bound species
leave free, V_f = V - sum_b N_b v_b = V (1 - zeta) (the excluded volume of van der Waals, with the
sizes of :mod:`.species`). That is the non-ideal interaction whose derivative gives the occupation
probabilities: dF/dN_b = P_f v_b, so ln w_b = -P_f v_b / kT, with P_f = kT n_h' + P_e' the pressure
of everything in the free volume. A bound species pays the work of making room for itself; in dense
or degenerate matter that work exceeds its binding and pressure ionization follows from F. Where
nothing is bound, zeta = 0 and the fully ionized equation of state comes back.

Minimising F at fixed element numbers and charge neutrality gives, for every ionization j -> j+1 of a
nuclide and for H2 <-> 2H (Hummer & Mihalas 1988; Saumon & Chabrier 1992),

    ln(N_{j+1}/N_j) = ln(g_{j+1}/g_j) - chi_j/kT - eta' - c - (f_{j+1} - f_j) - Pi (v_{j+1} - v_j),

with eta' the degeneracy parameter of the free electrons at their density n_e' = N_e / V_f,
Pi = P_f / kT and c = sum_j N_j (df_j / d ln n_e) / N_e (the Coulomb part of the electron chemical
potential). Given the four unknowns y = (ln n_e', u, c, ln n_h'), u = -ln(1 - zeta), n_h' = N_heavy / V_f, every species
follows in closed form (a softmax over the stages; a quadratic for hydrogen with H2), so the minimum is
the root of four conditions

    R1 = ln(rho sum_j z_j N_j) - (y1 - y2)           (charge neutrality)
    R2 = 1 - e^-y2 - rho sum_b N_b v_b                (the bound volume)
    R3 = y3 - sum_j N_j f_j,n / sum_j z_j N_j          (the Coulomb part of the electron potential)
    R4 = ln(rho sum_j N_j) - (y4 - y2)                 (heavy particles in the free volume)

found by Newton's method, with the electron gas evaluated once per iteration for all points (numpy)
and the species, the conditions and their exact Jacobian in a compiled kernel (numba, first-order jets
of :mod:`.jets`). At the root, P, E and S are the partial derivatives of F at fixed species numbers
(the envelope theorem): P = P_f + P_coul, and their derivatives follow from implicit differentiation,
dy/dx = -(dR/dy)^-1 dR/dx, x = (ln rho, ln T): every identity between P, E, S and their derivatives
holds to the precision of the root.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
from numba import njit, prange

from .. import constants as const
from ..composition import Composition
from ..planck_larkin import planck_larkin as _planck_larkin
from . import jets as J
from .coulomb_term import ion_coulomb
from .electron_kernel import classical_point, electron_arrays, electron_point
from .electron_xc import electron_xc
from .parallel import serialized
from .hermite import quintic
from .species import H2_TABLE, Species, species_for

__all__ = ["Equilibrium", "solve_equilibrium"]

_K = const.k_B
_LN_SQRT8 = 1.5 * math.log(2.0)
_NEWTON_TOL = 1e-13
_MAX_ITER = 30
#: stages whose weight is below e^-_SKIP of the largest are left out (their share is < 1e-30), except the
#: first ion: in cold matter of one element it may hold every free electron however few they are
_SKIP = 70.0


@njit(cache=True, error_model="numpy")
def _h2_lnZ(lnT, tx, ty, t1, t2):
    """ln Z_int(H2) and d/dlnT, d2/dlnT2 by quintic Hermite interpolation (C2) in ln T."""
    n = tx.size
    if lnT <= tx[0]:
        return ty[0] + t1[0] * (lnT - tx[0]), t1[0], 0.0
    if lnT >= tx[n - 1]:
        return ty[n - 1] + t1[n - 1] * (lnT - tx[n - 1]), t1[n - 1], 0.0
    h = tx[1] - tx[0]
    i = int((lnT - tx[0]) / h)
    if i > n - 2:
        i = n - 2
    return quintic(ty[i], t1[i], t2[i], ty[i + 1], t1[i + 1], t2[i + 1], (lnT - tx[i]) / h, h)


@njit(cache=True, inline="always", error_model="numpy")
def _coul(W, z, dln_ne_dzeta):
    """f, f_n, f_T of an ion of charge z as jets (ln n_e = y1 - u), from the per-charge cache in W."""
    fc = W[z]
    f = (fc[0], fc[1], fc[1] * dln_ne_dzeta, 0.0, 0.0, 0.0, fc[2])
    fn = (fc[1], fc[3], fc[3] * dln_ne_dzeta, 0.0, 0.0, 0.0, fc[4])
    fT = (fc[2], fc[4], fc[4] * dln_ne_dzeta, 0.0, 0.0, 0.0, fc[5])
    return f, fn, fT


@njit(cache=True, error_model="numpy")
def _point(y, lnrho, lnT, el, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v,
           h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, L, PLc):
    """Conditions R1..R4 and P, E, S (per gram) as jets at one point; fills diag.

    y = (ln n_e', u = -ln(1 - zeta), c, ln n_h'); el = (eta, eta_1, eta_T, P, P_1, P_T, e, e_1, e_T, s, s_1, s_T): the
    electron gas at n_e' = e^y1 (per volume; _1 = d/dy1, _T = d/dlnT). L: scratch (max Z + 1) x 17:
    columns 0-5 the Coulomb term of charge z, 6-8 the weight of stage z of the nuclide at hand, its share
    and its ln T coefficient (:func:`_stages`). PLc: the Planck-Larkin sums of every stage for this T
    (:func:`_fill_planck_larkin`, filled when ln T changes).
    diag: [ion_H, ion_He1, ion_He2, h2_fraction, electrons from metals per gram, N_e per gram,
           P_trans, P_e, P_coul, heavy particles per gram]
    """
    rho = math.exp(lnrho)
    T = math.exp(lnT)
    kT = _K * T
    u = y[1]                                             # u = -ln(V_f / V)
    phi = math.exp(-u)                                   # V_f / V = 1 - zeta
    rho_j = (rho, 0.0, 0.0, 0.0, 0.0, rho, 0.0)
    kT_j = (kT, 0.0, 0.0, 0.0, 0.0, 0.0, kT)
    inv_kT_j = (1.0 / kT, 0.0, 0.0, 0.0, 0.0, 0.0, -1.0 / kT)
    lnrho_j = J.seed(lnrho, 5)
    lnT_j = J.seed(lnT, 6)
    phi_j = (phi, 0.0, -phi, 0.0, 0.0, 0.0, 0.0)
    zeta_j = J.sub(J.const(1.0), phi_j)
    c_j = J.seed(y[2], 3)
    nh_j = J.jexp(J.seed(y[3], 4))                       # heavy particles per free volume
    lnphi_j = (-u, 0.0, -1.0, 0.0, 0.0, 0.0, 0.0)
    eta_j = (el[0], el[1], 0.0, 0.0, 0.0, 0.0, el[2])
    Pp_j = (el[3], el[4], 0.0, 0.0, 0.0, 0.0, el[5])
    ep_j = (el[6], el[7], 0.0, 0.0, 0.0, 0.0, el[8])
    sp_j = (el[9], el[10], 0.0, 0.0, 0.0, 0.0, el[11])
    # Pi = P_f / kT: the pressure of everything that moves in the free volume, over kT
    Pi_j = J.add(nh_j, J.div(Pp_j, kT_j))
    ln_ne = y[0] - u                                     # free electrons per real volume
    dln_ne_dzeta = -1.0                                  # d ln n_e / du
    etac_j = J.add(eta_j, c_j)
    etac = el[0] + y[2]
    Pi = Pi_j[0]
    W = L
    if PLc[0, 3] != lnT:
        _fill_planck_larkin(PLc, lnT, nuc_N, nuc_Z, nuc_start, st_E)
    for z in range(1, W.shape[0]):
        f0, f1, f2, f3, f4, f5 = ion_coulomb(float(z), ln_ne, lnT) if coul_on else (0.0, 0.0, 0.0, 0.0, 0.0, 0.0)
        W[z, 0] = f0
        W[z, 1] = f1
        W[z, 2] = f2
        W[z, 3] = f3
        W[z, 4] = f4
        W[z, 5] = f5

    Ne = J.const(0.0)
    B = J.const(0.0)
    C = J.const(0.0)
    Nh = J.const(0.0)
    Eint = J.const(0.0)
    Ec = J.const(0.0)
    Str = J.const(0.0)
    Sint = J.const(0.0)
    Sc = J.const(0.0)
    for k in range(diag.size):
        diag[k] = 0.0
    metal_e = 0.0
    N_H_total = 0.0
    N_He_total = 0.0
    M = np.zeros((8, 6))

    for i in range(nuc_N.size):
        N_i = nuc_N[i]
        if N_i <= 0.0:
            continue
        Z = nuc_Z[i]
        s0 = nuc_start[i]
        lnN_i = math.log(N_i)
        # ln(rho lambda^3 / phi) of this nuclide
        lrl = J.sub(J.add(J.shift(lnrho_j, nuc_lnlam3[i]), J.scale(lnT_j, -1.5)), lnphi_j)
        if nuc_h2[i] == 1:
            # hydrogen: H, H+ and H2 (quadratic balance, solved in logs)
            f1_j, fn1_j, fT1_j = _coul(W, 1, dln_ne_dzeta)
            ph0, ph1, ph2 = PLc[s0, 0], PLc[s0, 1], PLc[s0, 2]
            pl_j = (ph0, 0.0, 0.0, 0.0, 0.0, 0.0, ph1)
            dpl_j = (ph1, 0.0, 0.0, 0.0, 0.0, 0.0, ph2)
            L0 = J.sub(J.add(J.const(st_lng[s0]), pl_j), J.scale(Pi_j, st_v[s0]))
            L1 = J.sub(J.sub(J.sub(J.const(st_lng[s0 + 1]), J.scale(inv_kT_j, st_E[s0 + 1])), etac_j), f1_j)
            ell = J.sub(L1, L0)
            h2 = _h2_lnZ(lnT, tx, ty, t1, t2)
            lnZ_j = (h2[0], 0.0, 0.0, 0.0, 0.0, 0.0, h2[1])
            dlnZ_j = (h2[1], 0.0, 0.0, 0.0, 0.0, 0.0, h2[2])
            # N_H2 = K N_H^2 with ln K = ln(rho lambda_H^3 / phi) + ln 2^(3/2) - 2 ln g_H + D0/kT + ln Z_int
            #                             - Pi (v_H2 - 2 v_H)
            lnK = J.sub(J.add(lrl, J.const(_LN_SQRT8 - 2.0 * st_lng[s0])), J.scale(pl_j, 2.0))
            lnK = J.add(lnK, J.scale(inv_kT_j, h2_D0))
            lnK = J.add(lnK, lnZ_j)
            lnK = J.sub(lnK, J.scale(Pi_j, h2_v - 2.0 * st_v[s0]))
            lnq = J.shift(lnK, math.log(8.0 * N_i))
            # N_H = 2 N / (A + sqrt(A^2 + q)), A = 1 + e^ell, q = 8 K N; where H is mostly ionized
            # (ell >= 0, up to ~1e12 in dense matter) the same divided by e^ell, so that N_H+ never comes
            # from adding ell to a huge negative ln N_H (which would cost |ell| * 1e-16 of its precision)
            if ell[0] < 0.0:
                lnA = J.logaddexp(J.const(0.0), ell)
                inner = J.logaddexp(J.scale(lnA, 2.0), lnq)
                den = J.logaddexp(lnA, J.scale(inner, 0.5))
                lnNH = J.sub(J.const(math.log(2.0 * N_i)), den)
                lnNp = J.add(lnNH, ell)
            else:
                lnA = J.logaddexp(J.const(0.0), J.scale(ell, -1.0))
                inner = J.logaddexp(J.scale(lnA, 2.0), J.sub(lnq, J.scale(ell, 2.0)))
                den = J.logaddexp(lnA, J.scale(inner, 0.5))
                lnNp = J.sub(J.const(math.log(2.0 * N_i)), den)
                lnNH = J.sub(lnNp, ell)
            lnNm = J.add(J.scale(lnNH, 2.0), lnK)
            NH = J.jexp(lnNH)
            Np = J.jexp(lnNp)
            Nm = J.jexp(lnNm)
            Ne = J.add(Ne, Np)
            B = J.add(B, J.add(J.scale(NH, st_v[s0]), J.scale(Nm, h2_v)))
            C = J.add(C, J.mul(Np, fn1_j))
            Nh = J.add(Nh, J.add(J.add(NH, Np), Nm))
            Eint = J.add(Eint, J.scale(Np, st_E[s0 + 1]))
            Eint = J.add(Eint, J.mul(Nm, J.sub(J.mul(kT_j, dlnZ_j), J.const(h2_D0))))
            Ec = J.sub(Ec, J.mul(J.mul(Np, kT_j), fT1_j))
            # S_trans = k sum N (5/2 - ln(N rho lambda^3 / phi)); H2 has lambda^3 / 2^(3/2)
            Str = J.add(Str, J.mul(NH, J.sub(J.const(2.5), J.add(lnNH, lrl))))
            Str = J.add(Str, J.mul(Np, J.sub(J.const(2.5), J.add(lnNp, lrl))))
            Str = J.add(Str, J.mul(Nm, J.sub(J.const(2.5 + _LN_SQRT8), J.add(lnNm, lrl))))
            Sint = J.add(Sint, J.add(J.mul(NH, J.add(J.shift(pl_j, st_lng[s0]), dpl_j)),
                                     J.scale(Np, st_lng[s0 + 1])))
            Eint = J.add(Eint, J.mul(J.mul(NH, kT_j), dpl_j))
            Sint = J.add(Sint, J.mul(Nm, J.add(lnZ_j, dlnZ_j)))
            Sc = J.sub(Sc, J.mul(Np, J.add(f1_j, fT1_j)))
            diag[0] += Np[0]
            diag[3] += 2.0 * Nm[0]
            N_H_total += N_i
            continue
        # any other nuclide: stages 0..Z, weights e^L_j normalised (softmax), summed in closed form
        if Z == 2:
            N_He_total += N_i
        metal_e += _stages(Z, s0, N_i, lnN_i, lrl, kT, etac, Pi, st_E, st_lng, st_v, W, PLc, M, diag)
        Nh = J.add(Nh, J.const(N_i))

    # the stage sums of every nuclide but hydrogen, as jets (see _stages)
    Ne = J.add(Ne, _moment_jet(M, 0, el, Pi_j))
    B = J.add(B, _moment_jet(M, 1, el, Pi_j))
    C = J.add(C, _moment_jet(M, 2, el, Pi_j))
    Eint = J.add(Eint, _moment_jet(M, 3, el, Pi_j))
    Ec = J.add(Ec, _moment_jet(M, 4, el, Pi_j))
    Sc = J.add(Sc, _moment_jet(M, 5, el, Pi_j))
    Sint = J.add(Sint, _moment_jet(M, 6, el, Pi_j))
    Str = J.add(Str, _moment_jet(M, 7, el, Pi_j))

    # the four conditions
    R1 = J.sub(J.add(J.jlog(Ne), lnrho_j), J.add(J.seed(y[0], 1), lnphi_j))
    R2 = J.sub(zeta_j, J.mul(rho_j, B))
    R3 = J.sub(c_j, J.div(C, Ne))
    R4 = J.sub(J.add(J.jlog(Nh), lnrho_j), J.add(J.seed(y[3], 4), lnphi_j))
    # P, E, S per gram at fixed species numbers: P = P_f + P_coul, P_f = kT n_h' + P_e'
    Ptr = J.mul(kT_j, nh_j)
    Pc = J.mul(J.mul(rho_j, kT_j), C)
    P = J.add(J.add(Ptr, Pp_j), Pc)
    Vf = J.div(phi_j, rho_j)
    E = J.add(J.add(J.scale(J.mul(kT_j, Nh), 1.5), Eint), J.add(J.mul(Vf, ep_j), Ec))
    S = J.add(J.add(J.scale(Str, _K), J.scale(Sint, _K)), J.add(J.mul(Vf, sp_j), J.scale(Sc, _K)))

    diag[0] = diag[0] / N_H_total if N_H_total > 0.0 else 1.0
    diag[3] = diag[3] / N_H_total if N_H_total > 0.0 else 0.0
    if N_He_total > 0.0:
        diag[1] /= N_He_total
        diag[2] /= N_He_total
    else:
        diag[1] = 1.0
        diag[2] = 1.0
    diag[4] = metal_e
    diag[5] = Ne[0]
    diag[6] = Ptr[0]
    diag[7] = Pp_j[0]
    diag[8] = Pc[0]
    diag[9] = Nh[0]
    return R1, R2, R3, R4, P, E, S


@njit(cache=True, error_model="numpy")
def _stage_cache(n):
    """Scratch for :func:`_fill_planck_larkin` (n stages), marked empty (no ln T is NaN)."""
    PLc = np.empty((n, 4))
    PLc[0, 3] = np.nan
    return PLc


@njit(cache=True, error_model="numpy")
def _fill_planck_larkin(PLc, lnT, nuc_N, nuc_Z, nuc_start, st_E):
    """PLc[s] = the Planck-Larkin sum Phi_j = sum_{k >= j} phi(x_k) of the bound electrons stage s still holds,
    and its first two ln T derivatives; PLc[0, 3] = the ln T they are for (they depend on T alone, so a
    point's Newton iterations compute them once)."""
    kT = _K * math.exp(lnT)
    for i in range(nuc_N.size):
        Z = nuc_Z[i]
        s0 = nuc_start[i]
        PLc[s0 + Z, 0] = 0.0
        PLc[s0 + Z, 1] = 0.0
        PLc[s0 + Z, 2] = 0.0
        for j in range(Z - 1, -1, -1):
            a0, a1, a2 = _planck_larkin((st_E[s0 + j + 1] - st_E[s0 + j]) / kT)
            PLc[s0 + j, 0] = PLc[s0 + j + 1, 0] + a0
            PLc[s0 + j, 1] = PLc[s0 + j + 1, 1] + a1
            PLc[s0 + j, 2] = PLc[s0 + j + 1, 2] + a2
    PLc[0, 3] = lnT


#: the stage quantities summed by _stages (rows of M): free electrons, bound volume, the Coulomb part of the
#: electron potential, internal energy, Coulomb energy, Coulomb entropy, internal entropy, translational entropy
_MOMENTS = 8


@njit(cache=True, error_model="numpy")
def _stages(Z, s0, N_i, lnN_i, lrl, kT, etac, Pi, st_E, st_lng, st_v, W, PLc, M, diag):
    """Add the stages of nuclide i (charge Z > 1, or Z = 1 without H2) to the moment sums M; returns its free electrons.

    ln N_j = ln N_i + L_j - lse, L_j = ln g_j + Phi_j - E_j/kT - j (eta' + c) - f_j - Pi v_j (a softmax over
    the stages). Every L_j moves with the seeds along four directions only: ln T, the electron potential
    eta' + c, ln n_e (through f_j) and Pi:
        dL_j = alpha_j dlnT - j d(eta' + c) - f'_j dln n_e - v_j dPi,   alpha_j = Phi'_j + E_j/kT - f_T,j
    so d ln N_j is the same with each coefficient less its mean over the stages (weights N_j / N_i), and a
    sum Q = sum_j N_j q_j has dQ = sum_j N_j q_j d ln N_j + sum_j N_j dq_j. For each Q, M[k] collects
    [sum N q, sum N q (alpha - mean), -sum N q (j - mean), -sum N q (f' - mean) + sum N q_F, -sum N q (v - mean),
    the ln T part of sum N dq and the part along ln(rho lambda^3 / phi)]: the derivative along each direction
    (:func:`_moment_jet` turns them into jets). This costs a few multiplications per stage instead of a jet
    product per stage and quantity; the result is the same sum (tested against a direct jet evaluation).
    """
    Lmax = -1e300
    for j in range(Z + 1):
        fz = W[j, 0] if j > 0 else 0.0
        Lj = st_lng[s0 + j] + PLc[s0 + j, 0] - st_E[s0 + j] / kT - j * etac - fz - Pi * st_v[s0 + j]
        W[j, 6] = Lj
        if Lj > Lmax:
            Lmax = Lj
    tot = 0.0
    for j in range(Z + 1):
        if W[j, 6] < Lmax - _SKIP and j != 1:
            W[j, 7] = 0.0
            continue
        W[j, 7] = math.exp(W[j, 6] - Lmax)
        tot += W[j, 7]
    lse = Lmax + math.log(tot)
    # means of the coefficients over the stages
    ma = 0.0
    mb = 0.0
    mf = 0.0
    mv = 0.0
    for j in range(Z + 1):
        p = W[j, 7] / tot
        W[j, 7] = p
        if p == 0.0:
            continue
        fc1 = W[j, 1] if j > 0 else 0.0
        fc2 = W[j, 2] if j > 0 else 0.0
        alpha = PLc[s0 + j, 1] + st_E[s0 + j] / kT - fc2
        W[j, 8] = alpha
        ma += p * alpha
        mb += p * j
        mf += p * fc1
        mv += p * st_v[s0 + j]
    ne = 0.0
    for j in range(Z + 1):
        p = W[j, 7]
        if p == 0.0:
            continue
        Nj = N_i * p
        lnNj = lnN_i + W[j, 6] - lse
        v = st_v[s0 + j]
        if j > 0:
            fc0 = W[j, 0]
            fc1 = W[j, 1]
            fc2 = W[j, 2]
            fc3 = W[j, 3]
            fc4 = W[j, 4]
            fc5 = W[j, 5]
        else:
            fc0 = fc1 = fc2 = fc3 = fc4 = fc5 = 0.0
        da = W[j, 8] - ma
        db = j - mb
        df = fc1 - mf
        dv = v - mv
        PL = PLc[s0 + j, 0]
        PLT = PLc[s0 + j, 1]
        PLTT = PLc[s0 + j, 2]
        # (q, q_T, q_F, q_L) of each summed quantity
        _acc(M, 0, Nj, float(j), 0.0, 0.0, 0.0, da, db, df, dv)
        _acc(M, 1, Nj, v, 0.0, 0.0, 0.0, da, db, df, dv)
        _acc(M, 2, Nj, fc1, fc4, fc3, 0.0, da, db, df, dv)
        _acc(M, 3, Nj, st_E[s0 + j] + kT * PLT, kT * (PLT + PLTT), 0.0, 0.0, da, db, df, dv)
        _acc(M, 4, Nj, -kT * fc2, -kT * (fc2 + fc5), -kT * fc4, 0.0, da, db, df, dv)
        _acc(M, 5, Nj, -(fc0 + fc2), -(fc2 + fc5), -(fc1 + fc4), 0.0, da, db, df, dv)
        _acc(M, 6, Nj, PL + st_lng[s0 + j] + PLT, PLT + PLTT, 0.0, 0.0, da, db, df, dv)
        # S_trans: q = 5/2 - ln N_j - lrl; its own d ln N_j sums to zero (sum N_j is fixed)
        _acc(M, 7, Nj, 2.5 - lnNj - lrl[0], 0.0, 0.0, -1.0, da, db, df, dv)
        if j > 0:
            ne += j * Nj
            if Z == 2:
                diag[1] += Nj
                if j == 2:
                    diag[2] += Nj
    return ne if Z > 2 else 0.0


@njit(cache=True, inline="always", error_model="numpy")
def _acc(M, k, Nj, q, qT, qF, qL, da, db, df, dv):
    Nq = Nj * q
    M[k, 0] += Nq
    M[k, 1] += Nq * da + Nj * qT
    M[k, 2] -= Nq * db
    M[k, 3] += Nj * qF - Nq * df
    M[k, 4] -= Nq * dv
    M[k, 5] += Nj * qL


@njit(cache=True, error_model="numpy")
def _moment_jet(M, k, el, Pi_j):
    """The jet of the stage sum k from its moments: d = A_T dlnT + A_E d(eta' + c) + A_F dln n_e + A_P dPi + A_L dlrl.

    d(eta' + c) = (eta'_1, 0, 1, 0, 0, eta'_T), dln n_e = (1, -1, 0, 0, 0, 0) (ln n_e = y1 - u), dlrl = (0, 1, 0, 0, 1, -1.5)
    (lrl = ln(rho lambda^3 / phi)), dPi from its jet.
    """
    AT = M[k, 1]
    AE = M[k, 2]
    AF = M[k, 3]
    AP = M[k, 4]
    AL = M[k, 5]
    return (M[k, 0],
            AE * el[1] + AF + AP * Pi_j[1],
            -AF + AP * Pi_j[2] + AL,
            AE + AP * Pi_j[3],
            AP * Pi_j[4],
            AP * Pi_j[5] + AL,
            AT + AE * el[2] + AP * Pi_j[6] - 1.5 * AL)


@njit(cache=True, error_model="numpy")
def _ideal_saha_start(lnrho, lnT, nuc_N, nuc_Z, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0,
                      tx, ty, t1, t2, L, y):
    """A starting point for Newton: ideal Saha (non-degenerate electrons, no Coulomb, no sizes).

    ln n_e by bisection on the monotonic charge balance, then zeta, c and n_h' from those species.
    """
    rho = math.exp(lnrho)
    T = math.exp(lnT)
    kT = _K * T
    # electrons: eta = ln(n / n_Q), n_Q = 2 (2 pi m_e k T / h^2)^(3/2)
    ln_nQ = math.log(2.0) + 1.5 * math.log(2.0 * math.pi * const.m_e * kT / const.h**2)
    n_full = 0.0
    for i in range(nuc_N.size):
        n_full += nuc_N[i] * nuc_Z[i]
    hi = math.log(rho * n_full)
    lo = hi - 230.0
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        eta = mid - ln_nQ
        Ne = 0.0
        for i in range(nuc_N.size):
            Z = nuc_Z[i]
            s0 = nuc_start[i]
            Lmax = -1e300
            for j in range(Z + 1):
                L[j] = st_lng[s0 + j] - st_E[s0 + j] / kT - j * eta
                Lmax = max(Lmax, L[j])
            tot = 0.0
            zs = 0.0
            for j in range(Z + 1):
                w = math.exp(L[j] - Lmax)
                tot += w
                zs += j * w
            Ne += nuc_N[i] * zs / tot
        if Ne <= 0.0 or math.log(rho * Ne) < mid:
            hi = mid
        else:
            lo = mid
    y[0] = 0.5 * (lo + hi)
    y[1] = 0.0
    y[2] = 0.0
    Nsum = 0.0
    for i in range(nuc_N.size):
        Nsum += nuc_N[i]
    y[3] = math.log(rho * Nsum)


@njit(cache=True, error_model="numpy")
def _solve(A, b):
    """x = A^-1 b for a small dense system (Gaussian elimination with partial pivoting; A, b overwritten)."""
    n = b.size
    for k in range(n):
        piv = k
        for r in range(k + 1, n):
            if abs(A[r, k]) > abs(A[piv, k]):
                piv = r
        if piv != k:
            for cc in range(n):
                A[k, cc], A[piv, cc] = A[piv, cc], A[k, cc]
            b[k], b[piv] = b[piv], b[k]
        for r in range(k + 1, n):
            m = A[r, k] / A[k, k]
            for cc in range(k, n):
                A[r, cc] -= m * A[k, cc]
            b[r] -= m * b[k]
    x = np.empty(n)
    for k in range(n - 1, -1, -1):
        acc = b[k]
        for cc in range(k + 1, n):
            acc -= A[k, cc] * x[cc]
        x[k] = acc / A[k, k]
    return x


@njit(cache=True, inline="always", error_model="numpy")
def _jacobian(Rs, A, b, col):
    """A = dR/dy (4 x 4); b = R (col = 0) or dR/dx of seed col."""
    for r in range(4):
        R = Rs[r]
        for cc in range(4):
            A[r, cc] = R[cc + 1]
        b[r] = R[col]


@njit(cache=True, error_model="numpy")
def _zmax(nuc_Z):
    """The largest charge of the composition (rows of the per-charge scratch)."""
    z = 1
    for i in range(nuc_Z.size):
        z = max(z, nuc_Z[i])
    return z


@njit(cache=True, error_model="numpy")
def _size(b, c):
    """The size of the conditions b: the largest |R|, R3 relative to 1 + |c| (c can be ~1e5)."""
    return max(max(abs(b[0]), abs(b[1])), max(abs(b[2]) / (1.0 + abs(c)), abs(b[3])))


@njit(cache=True, error_model="numpy")
def _cap(d, c):
    """Limit a Newton step: 2 e-folds in the densities and in u, 1 + 2|c| in c."""
    for q in (0, 1, 3):
        if d[q] > 2.0:
            d[q] = 2.0
        elif d[q] < -2.0:
            d[q] = -2.0
    cap = 1.0 + 2.0 * abs(c)
    if d[2] > cap:
        d[2] = cap
    elif d[2] < -cap:
        d[2] = -cap


@njit(cache=True, error_model="numpy")
def _trial(y, d, lam, yt):
    """yt = y - lam d, with u = -ln(1 - zeta) kept >= 0."""
    yt[0] = y[0] - lam * d[0]
    yt[1] = y[1] - lam * d[1]
    if yt[1] < 0.0:
        yt[1] = 0.5 * y[1]
    yt[2] = y[2] - lam * d[2]
    yt[3] = y[3] - lam * d[3]


@njit(cache=True, error_model="numpy")
def _shifted_electrons(el, d, out):
    """The electron data at y1 + d, to first order in d (for the line search between table calls)."""
    for k in range(4):
        out[3 * k] = el[3 * k] + el[3 * k + 1] * d
        out[3 * k + 1] = el[3 * k + 1]
        out[3 * k + 2] = el[3 * k + 2]


@njit(cache=True, error_model="numpy")
def _merit(Rs):
    return Rs[0][0] ** 2 + Rs[1][0] ** 2 + Rs[2][0] ** 2 + Rs[3][0] ** 2


@njit(cache=True, parallel=True, error_model="numpy")
def _newton_step(y, lnrho, lnT, el, sp, h2tab, res):
    """One damped Newton step for every point; res[p] gets the largest |R| before the step.

    The step is limited (2 e-folds in the densities and in u = -ln(1 - zeta) >= 0; c by 1 + 2|c|) and
    then halved until the sum of squared conditions falls, with the electron gas moved to first order
    along the step (a backtracking line search; the next iteration evaluates it exactly).
    """
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    zmax = _zmax(nuc_Z)
    for p in prange(y.shape[0]):
        diag = np.empty(10)
        L = np.empty((zmax + 1, 17))
        PLc = _stage_cache(st_E.size)
        out = _point(y[p], lnrho[p], lnT[p], el[p], nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E,
                     st_lng, st_v, h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, L, PLc)
        Rs = (out[0], out[1], out[2], out[3])
        A = np.empty((4, 4))
        b = np.empty(4)
        _jacobian(Rs, A, b, 0)
        res[p] = _size(b, y[p, 2])
        if res[p] < _NEWTON_TOL:
            continue
        d = _solve(A, b)
        _cap(d, y[p, 2])
        m0 = _merit(Rs)
        yt = np.empty(4)
        elt = np.empty(12)
        lam = 1.0
        for _ in range(12):
            _trial(y[p], d, lam, yt)
            _shifted_electrons(el[p], yt[0] - y[p, 0], elt)
            o = _point(yt, lnrho[p], lnT[p], elt, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E,
                       st_lng, st_v, h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, L, PLc)
            m = _merit((o[0], o[1], o[2], o[3]))
            if m < (1.0 - 1e-4 * lam) * m0 or m0 < 1e-20:
                break
            lam *= 0.5
        for q in range(4):
            y[p, q] = yt[q]


@njit(cache=True, parallel=True, error_model="numpy")
def _starts(lnrho, lnT, sp, h2tab, y):
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    zmax = _zmax(nuc_Z)
    for p in prange(y.shape[0]):
        L = np.empty(zmax + 1)
        _ideal_saha_start(lnrho[p], lnT[p], nuc_N, nuc_Z, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0,
                          tx, ty, t1, t2, L, y[p])


@njit(cache=True, error_model="numpy")
def _final_one(y, lnrho, lnT, el, sp, h2tab, diag, out, W, PLc):
    """P, E, S and their total derivatives in ln rho and ln T at the root y (implicit differentiation).

    out = [P, dP/dlnrho, dP/dlnT, E, dE/dlnrho, dE/dlnT, S, dS/dlnrho, dS/dlnT, max |R|]
    """
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    R1, R2, R3, R4, P, E, S = _point(y, lnrho, lnT, el, nuc_N, nuc_Z, nuc_lnlam3, nuc_start,
                                     nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, W, PLc)
    Rs = (R1, R2, R3, R4)
    A = np.empty((4, 4))
    b = np.empty(4)
    _jacobian(Rs, A, b, 0)
    out[9] = _size(b, y[2])
    # dy/dx = -A^-1 dR/dx for x = ln rho (seed 5) and ln T (seed 6)
    _jacobian(Rs, A, b, 5)
    yr = _solve(A, b)
    _jacobian(Rs, A, b, 6)
    yt = _solve(A, b)
    for q, Q in enumerate((P, E, S)):
        out[3 * q] = Q[0]
        out[3 * q + 1] = Q[5] - (Q[1] * yr[0] + Q[2] * yr[1] + Q[3] * yr[2] + Q[4] * yr[3])
        out[3 * q + 2] = Q[6] - (Q[1] * yt[0] + Q[2] * yt[1] + Q[3] * yt[2] + Q[4] * yt[3])


@njit(cache=True, parallel=True, error_model="numpy")
def _final(y, lnrho, lnT, el, sp, h2tab, diag, out):
    """:func:`_final_one` at every point, with the electron data given (numpy path)."""
    zmax = _zmax(sp[1])
    for p in prange(y.shape[0]):
        W = np.empty((zmax + 1, 17))
        _final_one(y[p], lnrho[p], lnT[p], el[p], sp, h2tab, diag[p], out[p], W, _stage_cache(sp[5].size))


@njit(cache=True, error_model="numpy")
def _add_xc(n, T, out):
    """Add the electrons' exchange-correlation to the electron data out (layout of :func:`_point`).

    F_xc = N_e kT f(ln n, ln T) per volume n kT f, with f and its partials from
    :func:`thermoplane.physics.eos.electron_xc.electron_xc` (the same term as the default equation of state's
    dense-plasma part): eta += f + f_n, P += n kT f_n, e += -n kT f_T, s += -n k (f + f_T), and their
    derivatives in ln n and ln T from the same jet. Taken at the electrons' own density n = n_e'.
    """
    f, fn, fT, fnn, fnT, fTT = electron_xc(n, T, 1.0, 1.0)
    nkT = n * _K * T
    out[0] += f + fn
    out[1] += fn + fnn
    out[2] += fT + fnT
    out[3] += nkT * fn
    out[4] += nkT * (fn + fnn)
    out[5] += nkT * (fn + fnT)
    out[6] -= nkT * fT
    out[7] -= nkT * (fT + fnT)
    out[8] -= nkT * (fT + fTT)
    out[9] -= n * _K * (f + fT)
    out[10] -= n * _K * (f + fT + fn + fnT)
    out[11] -= n * _K * (fT + fTT)


@njit(cache=True, error_model="numpy")
def _add_xc_many(n, T, out):
    for p in range(n.size):
        _add_xc(n[p], T[p], out[p])


@njit(cache=True, error_model="numpy")
def _electrons(y1, T, classical, etab, out, xc_on):
    """The electron gas at n = e^y1 into out (with exchange-correlation if xc_on); False outside the table."""
    n = math.exp(y1)
    if classical:
        ok = classical_point(n, T, out)
    else:
        ok = electron_point(n, T, etab, out)
    if ok and xc_on:
        _add_xc(n, T, out)
    return ok


@njit(cache=True, error_model="numpy")
def _newton_point(y, lnrho, lnT, classical, etab, sp, h2tab, W, diag, el, PLc, fe):
    """Damped Newton from y (modified in place) at one point, the electron gas evaluated every step.

    Returns the number of iterations, or -1 if it did not converge (or the electrons left the table). At
    convergence ``el`` holds the electron gas at y and ``fe[0]`` the free energy per gram there. The
    evaluation of an accepted line-search trial is the next iteration's (one evaluation per step).
    """
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    T = math.exp(lnT)
    A = np.empty((4, 4))
    b = np.empty(4)
    yt = np.empty(4)
    elt = np.empty(12)
    best = 1e300
    stall = 0
    misses = 0
    if not _electrons(y[0], T, classical, etab, el, coul_on):
        return -1
    o = _point(y, lnrho, lnT, el, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v,
               h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, W, PLc)
    for it in range(_MAX_ITER):
        Rs = (o[0], o[1], o[2], o[3])
        _jacobian(Rs, A, b, 0)
        res = _size(b, y[2])
        if res < _NEWTON_TOL:
            fe[0] = o[5][0] - T * o[6][0]
            return it
        if not math.isfinite(res):
            return -1
        if res < 0.5 * best:
            best = res
            stall = 0
        else:
            stall += 1
            if stall > 6:
                return -1
        d = _solve(A, b)
        _cap(d, y[2])
        m0 = _merit(Rs)
        lam = 1.0
        found = False
        ot = o
        for _ in range(8):
            _trial(y, d, lam, yt)
            if _electrons(yt[0], T, classical, etab, elt, coul_on):
                ot = _point(yt, lnrho, lnT, elt, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng,
                            st_v, h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, W, PLc)
                m = _merit((ot[0], ot[1], ot[2], ot[3]))
                if m < (1.0 - 1e-4 * lam) * m0:
                    found = True
                    break
            lam *= 0.5
        # three line searches in a row without any descent: this start leads nowhere (the other start,
        # or the continuation, takes over); giving up early keeps a failing start from costing 30 x 9 steps
        misses = 0 if found else misses + 1
        if misses >= 3:
            return -1
        for q in range(4):
            y[q] = yt[q]
        if found:                      # the trial's evaluation is the state at the new y
            o = ot
            for q in range(12):
                el[q] = elt[q]
        else:
            if not _electrons(y[0], T, classical, etab, el, coul_on):
                return -1
            o = _point(y, lnrho, lnT, el, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v,
                       h2_v, h2_D0, coul_on, tx, ty, t1, t2, diag, W, PLc)
    return -1


@njit(cache=True, error_model="numpy")
def _full_start(lnrho, lnT, nuc_N, nuc_Z, coul_on, y):
    """Full ionization: every nucleus bare, nothing bound (u = 0), c of the bare ions."""
    rho = math.exp(lnrho)
    Ne = 0.0
    Nn = 0.0
    for i in range(nuc_N.size):
        Ne += nuc_N[i] * nuc_Z[i]
        Nn += nuc_N[i]
    y[0] = math.log(rho * Ne)
    y[1] = 0.0
    C = 0.0
    for i in range(nuc_N.size):
        C += nuc_N[i] * ion_coulomb(float(nuc_Z[i]), y[0], lnT)[1]
    y[2] = C / Ne if coul_on else 0.0
    y[3] = math.log(rho * Nn)


@njit(cache=True, error_model="numpy")
def _continue_down_in_T(y, lnrho, lnT, classical, etab, sp, h2tab, W, diag, el, PLc):
    """Follow the root from 100 T (full ionization) down to T in small steps; y gets the root.

    For the few points where Newton fails from both starts (ill-conditioned corners: strongly coupled
    cold plasma, the pressure-ionization band): returns the iterations of the last step, or -1.
    """
    yk = np.empty(4)
    _full_start(lnrho, lnT + 2.0 * math.log(10.0), sp[0], sp[1], sp[10], yk)
    x0 = lnT + 2.0 * math.log(10.0)
    x = x0
    step = (x0 - lnT) / 40.0
    fe = np.empty(1)
    it = _newton_point(yk, lnrho, x, classical, etab, sp, h2tab, W, diag, el, PLc, fe)
    if it < 0:
        return -1
    ytry = np.empty(4)
    tries = 0
    while x > lnT + 1e-12:
        tries += 1
        if tries > 80:
            return -1
        xn = max(lnT, x - step)
        for q in range(4):
            ytry[q] = yk[q]
        it = _newton_point(ytry, lnrho, xn, classical, etab, sp, h2tab, W, diag, el, PLc, fe)
        if it < 0:
            step *= 0.5
            if step < 1e-4:
                return -1
            continue
        for q in range(4):
            yk[q] = ytry[q]
        x = xn
        if it < 4:
            step = min(step * 1.5, 0.25)
    for q in range(4):
        y[q] = yk[q]
    return it


@njit(cache=True, parallel=True, error_model="numpy")
def _solve_points(lnrho, lnT, classical, etab, sp, h2tab, Y, status):
    """The equilibrium at every point (compiled, in parallel): Y[p] the root, status[p] what happened.

    status: 0 fully ionized at the start, 1 Newton from full ionization, 2 from ideal Saha (chosen for
    the lower free energy), 4 by continuation down in T from 100 T, -1 no root found, -2 the electrons
    left the compiled table (numpy path).
    """
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    zmax = _zmax(nuc_Z)
    for p in prange(lnrho.size):
        W = np.empty((zmax + 1, 17))
        PLc = _stage_cache(st_E.size)
        L1 = np.empty(zmax + 1)
        diag = np.empty(10)
        el = np.empty(12)
        yA = np.empty(4)
        yB = np.empty(4)
        fe = np.empty(1)
        T = math.exp(lnT[p])
        _full_start(lnrho[p], lnT[p], nuc_N, nuc_Z, coul_on, yA)
        itA = _newton_point(yA, lnrho[p], lnT[p], classical, etab, sp, h2tab, W, diag, el, PLc, fe)
        if itA == -1 and not _electrons(yA[0], T, classical, etab, el, coul_on):
            status[p] = -2
            continue
        FA = fe[0] if itA >= 0 else 0.0
        chosen = 0 if itA == 0 else (1 if itA > 0 else -1)
        for q in range(4):
            Y[p, q] = yA[q]
        if T < 3e5 or itA < 0:
            _ideal_saha_start(lnrho[p], lnT[p], nuc_N, nuc_Z, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v,
                              h2_D0, tx, ty, t1, t2, L1, yB)
            itB = _newton_point(yB, lnrho[p], lnT[p], classical, etab, sp, h2tab, W, diag, el, PLc, fe)
            if itB >= 0:
                FB = fe[0]
                if itA < 0 or FB < FA - 1e-12 * abs(FA):
                    chosen = 2
                    for q in range(4):
                        Y[p, q] = yB[q]
        if chosen == -1:
            itC = _continue_down_in_T(yB, lnrho[p], lnT[p], classical, etab, sp, h2tab, W, diag, el, PLc)
            if itC >= 0:
                chosen = 4
                for q in range(4):
                    Y[p, q] = yB[q]
        status[p] = chosen


@njit(cache=True, parallel=True, error_model="numpy")
def _final_points(Y, lnrho, lnT, classical, etab, sp, h2tab, diag, out, elo):
    """P, E, S and their derivatives at the roots Y (see :func:`_final`), with the electron data."""
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = sp
    tx, ty, t1, t2 = h2tab
    zmax = _zmax(nuc_Z)
    for p in prange(Y.shape[0]):
        W = np.empty((zmax + 1, 17))
        if not _electrons(Y[p, 0], math.exp(lnT[p]), classical, etab, elo[p], coul_on):
            for q in range(10):
                out[p, q] = np.nan
            continue
        _final_one(Y[p], lnrho[p], lnT[p], elo[p], sp, h2tab, diag[p], out[p], W, _stage_cache(sp[5].size))


def _electron_data(n, T, electrons: str, pairs: bool, xc: bool) -> np.ndarray:
    """The electron gas at density n (cm^-3) and T as the kernels read it (see :func:`_point`)."""
    from ..matter import classical_state, electrons_at
    k = _K
    st = None
    if electrons == "fermi":
        # below 1e5 cm^-3 and 1e7 K the gas is non-degenerate to far better than 1e-12 (n lambda^3 < 1e-10)
        dilute = (n < 1e5) & (T < 1e7)
        if np.any(dilute):
            st = _merge_states(n, T, dilute, pairs)
        else:
            st = electrons_at(n, T, "fermi", pairs)
    else:
        st = classical_state(n, T)
    g = st.gas
    eta = st.eta
    S = (g.E + g.P - eta * k * T * n) / T
    S_n = (st.dE_dn + st.dP_dn - eta * k * T - k * T * n * st.deta_dn) / T
    S_Tn = (st.dE_dT_n + st.dP_dT_n - eta * k * n - k * T * n * st.deta_dT) / T - S / T
    out = np.empty((n.size, 12))
    out[:, 0] = eta
    out[:, 1] = n * st.deta_dn
    out[:, 2] = T * st.deta_dT
    out[:, 3] = g.P
    out[:, 4] = n * st.dP_dn
    out[:, 5] = T * st.dP_dT_n
    out[:, 6] = g.E
    out[:, 7] = n * st.dE_dn
    out[:, 8] = T * st.dE_dT_n
    out[:, 9] = S
    out[:, 10] = n * S_n
    out[:, 11] = T * S_Tn
    if xc:
        _add_xc_many(np.ascontiguousarray(n, dtype=float), np.ascontiguousarray(T, dtype=float), out)
    return out, g.n_minus, g.n_plus


def _merge_states(n, T, dilute, pairs):
    from ..electrons import ElectronGas, ElectronState
    from ..matter import classical_state, electrons_at
    a = classical_state(n[dilute], T[dilute])
    rest = ~dilute
    b = electrons_at(n[rest], T[rest], "fermi", pairs) if np.any(rest) else None

    def put(x, y):
        out = np.empty(n.size)
        out[dilute] = x
        if b is not None:
            out[rest] = y
        return out

    gas = ElectronGas(*(put(getattr(a.gas, f), getattr(b.gas, f) if b is not None else None)
                        for f in ElectronGas._fields))
    return ElectronState(gas, *(put(getattr(a, f), getattr(b, f) if b is not None else None)
                                for f in ElectronState._fields[1:]))


class Equilibrium(NamedTuple):
    """The state at the minimum of F (per gram; derivatives in ln rho and ln T at fixed other)."""

    P: np.ndarray
    P_lnrho: np.ndarray
    P_lnT: np.ndarray
    E: np.ndarray
    E_lnrho: np.ndarray
    E_lnT: np.ndarray
    S: np.ndarray
    S_lnrho: np.ndarray
    S_lnT: np.ndarray
    residual: np.ndarray
    eta: np.ndarray
    n_minus: np.ndarray
    n_plus: np.ndarray
    n_e: np.ndarray
    ion_H: np.ndarray
    ion_He1: np.ndarray
    ion_He2: np.ndarray
    h2_fraction: np.ndarray
    metal_electrons: np.ndarray    # free electrons from metals, per gram
    P_ion: np.ndarray              # translational pressure of nuclei, atoms and molecules
    P_e: np.ndarray
    P_coul: np.ndarray
    heavy: np.ndarray              # heavy particles per gram
    zeta: np.ndarray               # packing fraction of bound species
    status: np.ndarray             # how each point was solved (see _solve_points; 3: numpy path, -1: failed)


def _pack(sp: Species, coulomb: bool = True):
    return (sp.nuc_N, sp.nuc_Z, sp.nuc_lnlam3, sp.nuc_start, sp.nuc_h2, sp.st_E, sp.st_lng, sp.st_v,
            float(sp.h2_v), float(sp.h2_D0), bool(coulomb))


def _newton(y, lnrho, lnT, T, electrons, pairs, pk):
    """Newton iterations from y (modified in place) for all points; returns the converged mask."""
    active = np.arange(y.shape[0])
    ok = np.zeros(y.shape[0], dtype=bool)
    for _ in range(_MAX_ITER):
        ya = np.ascontiguousarray(y[active])
        el = _electron_data(np.exp(ya[:, 0]), T[active], electrons, pairs, pk[10])[0]
        ra = np.empty(active.size)
        _newton_step(ya, lnrho[active], lnT[active], el, pk, H2_TABLE, ra)
        y[active] = ya
        done = ra < _NEWTON_TOL
        ok[active[done]] = True
        lost = ~np.all(np.isfinite(ya), axis=1)
        y[active[lost]] = 0.0
        active = active[~(done | lost)]
        if active.size == 0:
            break
    return ok


def _finish(y, lnrho, lnT, T, electrons, pairs, pk):
    el, n_minus, n_plus = _electron_data(np.exp(y[:, 0]), T, electrons, pairs, pk[10])
    out = np.empty((y.shape[0], 10))
    diag = np.zeros((y.shape[0], 10))
    _final(y, lnrho, lnT, el, pk, H2_TABLE, diag, out)
    return out, diag, el, n_minus, n_plus


_ETAB = None


def _etab():
    global _ETAB
    if _ETAB is None:
        _ETAB = electron_arrays()
    return _ETAB


def _needs_pairs(rho, T, sp: Species, electrons: str, pairs: bool) -> np.ndarray:
    """Points whose positrons matter (the pair-free compiled table does not hold them)."""
    from ..electron_table import table_eta
    from ..matter import NEGLIGIBLE_POSITRONS, _positron_bound
    need = np.zeros(rho.size, dtype=bool)
    if not pairs or electrons != "fermi":
        return need
    hot = np.flatnonzero(T > 3e7)
    if hot.size:
        n = rho[hot] * float(np.sum(sp.nuc_N * sp.nuc_Z))
        eta0, _ = table_eta(n, T[hot], pairs=False)
        need[hot] = _positron_bound(eta0, T[hot]) > NEGLIGIBLE_POSITRONS * n
    return need


def _numpy_path(idx, lnrho, lnT, T, electrons, pairs, pk, start_full=True):
    """Newton with the numpy electron gas (pairs, or outside the compiled table) at points idx."""
    y = np.zeros((idx.size, 4))
    if start_full:
        for k, p in enumerate(idx):
            _full_start(lnrho[p], lnT[p], pk[0], pk[1], pk[10], y[k])
    ok = _newton(y, lnrho[idx], lnT[idx], T[idx], electrons, pairs, pk)
    out, diag, el, n_minus, n_plus = _finish(y, lnrho[idx], lnT[idx], T[idx], electrons, pairs, pk)
    if not np.all(ok) and np.any(T[idx] < 3e5):
        redo = np.flatnonzero(~ok)
        y2 = np.zeros((redo.size, 4))
        _starts(lnrho[idx[redo]], lnT[idx[redo]], pk, H2_TABLE, y2)
        ok2 = _newton(y2, lnrho[idx[redo]], lnT[idx[redo]], T[idx[redo]], electrons, pairs, pk)
        o2, d2, e2, nm2, np2 = _finish(y2, lnrho[idx[redo]], lnT[idx[redo]], T[idx[redo]], electrons, pairs, pk)
        take = redo[ok2]
        y[take], out[take], diag[take], el[take] = y2[ok2], o2[ok2], d2[ok2], e2[ok2]
        n_minus[take], n_plus[take] = nm2[ok2], np2[ok2]
        ok[take] = True
    return y, out, diag, el, n_minus, n_plus, ok


@serialized
def solve_equilibrium(rho, T, comp: Composition, electrons: str = "fermi", pairs: bool = True,
                      coulomb: bool = True) -> Equilibrium:
    """The chemical equilibrium of ``comp`` at every (rho, T) (1-D float arrays of one length).

    Compiled path (every point in parallel, the pair-free electron table read inside the kernel):
    Newton from full ionization (a point already fully ionized costs one evaluation) and, where
    matter may be bound (T < 3e5 K) or that did not converge, also from ideal Saha; of two roots the
    one with the lower free energy is kept. Points whose positrons matter, or whose electrons leave
    the compiled table, take the same equations with the numpy electron gas.
    """
    rho = np.ascontiguousarray(rho, dtype=float).ravel()
    T = np.ascontiguousarray(T, dtype=float).ravel()
    pairs = bool(pairs) and electrons == "fermi"
    classical = electrons == "classical"
    sp = species_for(comp)
    pk = _pack(sp, coulomb)
    lnrho, lnT = np.log(rho), np.log(T)
    N = rho.size
    Y = np.zeros((N, 4))
    status = np.zeros(N, dtype=np.int64)
    out = np.full((N, 10), np.nan)
    diag = np.zeros((N, 10))
    el = np.zeros((N, 12))
    n_minus = np.zeros(N)
    n_plus = np.zeros(N)
    hot = _needs_pairs(rho, T, sp, electrons, pairs)
    cold = np.flatnonzero(~hot)
    if cold.size:
        Yc = np.zeros((cold.size, 4))
        st = np.zeros(cold.size, dtype=np.int64)
        etab = _etab()
        _solve_points(lnrho[cold], lnT[cold], classical, etab, pk, H2_TABLE, Yc, st)
        good = st >= 0
        gi = cold[good]
        if gi.size:
            oc = np.empty((gi.size, 10))
            dc = np.zeros((gi.size, 10))
            ec = np.empty((gi.size, 12))
            _final_points(np.ascontiguousarray(Yc[good]), lnrho[gi], lnT[gi], classical, etab, pk, H2_TABLE,
                          dc, oc, ec)
            Y[gi], out[gi], diag[gi], el[gi] = Yc[good], oc, dc, ec
            n_minus[gi] = np.exp(Yc[good, 0])
        status[cold] = st
        hot |= np.isin(np.arange(N), cold[st == -2])
    idx = np.flatnonzero(hot)
    if idx.size:
        yh, oh, dh, eh, nmh, nph, okh = _numpy_path(idx, lnrho, lnT, T, electrons, pairs, pk)
        Y[idx], out[idx], diag[idx], el[idx], n_minus[idx], n_plus[idx] = yh, oh, dh, eh, nmh, nph
        status[idx] = np.where(okh, 3, -1)
    phi = np.exp(-Y[:, 1])
    eta = el[:, 0]
    if coulomb:
        # the reported degeneracy parameter is the ideal gas's (as in the other options): the
        # exchange-correlation shift f + f_n of the electron potential is taken back out
        from .electron_xc import electron_xc_free_energy
        xc = electron_xc_free_energy(np.exp(Y[:, 0]), T)
        eta = np.where(np.isfinite(eta), eta - (xc[0] + xc[1]), eta)
    return Equilibrium(P=out[:, 0], P_lnrho=out[:, 1], P_lnT=out[:, 2], E=out[:, 3], E_lnrho=out[:, 4],
                       E_lnT=out[:, 5], S=out[:, 6], S_lnrho=out[:, 7], S_lnT=out[:, 8], residual=out[:, 9],
                       eta=eta, n_minus=n_minus * phi, n_plus=n_plus * phi, n_e=np.exp(Y[:, 0]) * phi,
                       ion_H=diag[:, 0], ion_He1=diag[:, 1], ion_He2=diag[:, 2], h2_fraction=diag[:, 3],
                       metal_electrons=diag[:, 4], P_ion=diag[:, 6], P_e=diag[:, 7], P_coul=diag[:, 8],
                       heavy=diag[:, 9], zeta=1.0 - phi, status=status)
