"""The ions as a Coulomb liquid: classical one-component-plasma fit plus quantum corrections.

The question this module answers: what is the excess free energy of the ion liquid, from weak coupling
(Debye–Hückel) to the melting point, including the quantum effects that appear as T approaches the ion
plasma temperature T_p?

Free energy per ion over kT, as an excess over the classical ideal ion gas:

    f_liq = f_qlat(Gamma, eta) + [Delta(Gamma), faded or frozen as T -> 0]     (-> f_OCP + f_q as eta -> 0)

- f_OCP: the analytic fit of Potekhin & Chabrier (2000, Phys. Rev. E 62, 8554, eqs. (16)-(17); the form
  goes back to Chabrier & Potekhin 1998, Phys. Rev. E 58, 4941), A1 = -0.9070, A2 = 0.62954,
  A3 = -sqrt(3)/2 - A1/sqrt(A2), B1 = 0.00456, B2 = 211.6, B3 = -1e-4, B4 = 0.00462 (from memory; the
  tests check the Debye–Hückel limit and that the classical melting point comes out near Gamma = 175).
- f_q: the quantum correction. Potekhin & Chabrier (2010, Contrib. Plasma Phys. 50, 82, arXiv:1001.0690,
  sec. 3) take the liquid's quantum correction from the harmonic lattice: the quantum part of the harmonic
  free energy, f_harm(eta) - [3 ln eta + 3 <ln(omega/omega_p)>], which starts as the exact Wigner–Kirkwood
  term eta^2 / 24 (Hansen & Vieillefosse 1975) and grows to the zero-point energy (3/2) u_1 eta at
  eta >> 1. We use that form with the bcc phonon spectrum of physics.eos.ion_solid (our reading of their
  prescription; their fit adds a correction for the liquid's different frequency moments, not reproduced).
- The liquid's classical excess over the classical harmonic lattice is ours to treat. Written
  f_OCP + f_q = f_qlat + Delta(Gamma), with f_qlat = C_M Gamma + f_harm(eta) - f_id the quantum harmonic
  lattice and Delta(Gamma) = f_OCP - [C_M Gamma + 1.5 ln Gamma + c] the classical liquid's excess over the
  classical lattice (a function of Gamma alone: 3 ln eta - f_id = 1.5 ln Gamma + const). Alone, Delta would
  keep its entropy as T -> 0; it is made to vanish in one of two ways, weighted by a function of density
  alone (so that c_V is the weighted sum of the two c_V, no cross terms):

      f_liq = f_qlat + W(Gamma_0) Delta_frozen + (1 - W(Gamma_0)) Delta_faded,   W = 1 / (1 + (Gamma_0 / 5)^4),

  Gamma_0 = ETA_FADE Gamma / eta the coupling at T_0 = T_p / ETA_FADE (a function of density).
  * faded (strong coupling, heavy ions): Delta_faded = D(eta) Delta(Gamma), D = 1 / (1 + (eta / 3)^4). The
    quantum liquid tends to the quantum lattice and the latent heat vanishes for eta >> 3 (quantum melting
    is not modelled). Alone it gives c_V < 0 in weakly coupled quantum matter (light ions, Gamma < 10,
    T < 0.4 T_p: down to -1.2 k per ion for hydrogen at 10^8.3-10^10 g/cm^3 on the default plane,
    measured): the harmonic quantum correction removes up to 3 k, more than the weakly coupled liquid has.
  * frozen (weak coupling, light ions at high density): the excess freezes below T_0, evaluated as the
    classical free energy at T_eff = (T^4 + T_0^4)^(1/4), minus its T -> 0 limit with a tail that starts
    at T_1 = 4 T_0 (all ours):

        Delta_frozen = r Delta(Gamma / r) - (eta / 3) (1 + (T / T_1)^4)^(-3/4) Delta(Gamma_0),
        r = T_eff / T = (1 + (eta / 3)^4)^(1/4),

    Gamma_0 smoothly capped near 300 in the last term (the fit read far outside its range otherwise).
    It tends to 0 like the faded form as T -> 0, so the melting line stays where the free energies cross.
  Both forms: r - 1, D - 1 and the tail are O(eta^4) at high T, so the exact Wigner–Kirkwood term eta^2/24 is
  kept and f_liq is the OCP fit as eta -> 0; S -> 0 as T -> 0 (third law). Measured: the ions' own c_V >= 0
  on the whole default plane for hydrogen-rich, helium, C/O and iron matter (tests/physics/test_dense_eos.py);
  the liquid alone keeps c_V >= 0 for Gamma <= 300 and eta / Gamma <= 1.6 (1.55 for hydrogen at 1e10 g/cm^3;
  tests/physics/test_dense_plasma.py), and dips to -0.04 k per ion at eta / Gamma = 1.7 (hydrogen near
  2e10 g/cm^3), where ion exchange, not modelled, matters too. Our construction, not a published fit:
  Potekhin & Chabrier (2010) give no form for the quantum liquid's heat capacity beyond the
  Wigner–Kirkwood order that we could check.

Speed: the kernels take u = ln Gamma and v = ln eta as given numbers. f_OCP is read from the quintic Hermite
table of physics.eos.coulomb_term (stored per cell in Taylor form, physics.eos.hermite), Delta(Gamma_0) and
W of s = u - v (a function of density alone) from a table in s; the sum above is formed on its partials in
(u, v) and carried to (ln n_e, ln T) once (:func:`quantum_excess`, :func:`jet_of_uv`). Every table holds a
value and its first two derivatives at its nodes, and the interpolant's own derivatives are used, so the
identities hold to rounding; tests/physics/test_dense_tables.py measures each against the formulas.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .ion_solid import HARMONIC_CLASSICAL, MADELUNG_BCC, harmonic_loglin
from ..coulomb import A1, A2, A3, B1, B2, B3, B4   # the liquid fit's coefficients, kept in one place
from .coulomb_term import _HG, _LG0, _LG1, _TAB_F, _TAB_U, _TAB_V, _ocp
from .hermite import cell_coefficients, locate_cell, taylor_cell, taylor_lookup
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["ocp_liquid", "ocp_scalar", "ocp_u", "jet_of_ln_gamma", "jet_of_uv", "quantum_excess", "liquid_ion",
           "liquid_core", "liquid_ion_free_energy"]

#: T_0 = T_p / ETA_FADE: the liquid's classical excess over the lattice freezes below T_0 (our choice)
ETA_FADE = 3.0
#: Gamma_0 (the coupling at T_0 = T_p / ETA_FADE) at which the frozen and the faded excess weigh equally
GAMMA_FROZEN = 5.0
#: the frozen excess's T -> 0 limit is taken off below T_1 = FROZEN_TAIL T_0; Gamma_0 is capped near FROZEN_CAP
FROZEN_TAIL = 4.0
FROZEN_CAP = 300.0
#: ln(eta^3 / (n lambda^3)) - 1.5 ln Gamma: the classical lattice's 3 ln eta - f_id = 1.5 ln Gamma + this + 1
_LN_ETA3_NL3 = math.log(4.0 * math.pi / 3.0) + 1.5 * math.log(3.0 / (2.0 * math.pi))
_LN_ETA_FADE = math.log(ETA_FADE)
_THIRD = 1.0 / 3.0
_NINTH = 1.0 / 9.0
#: the OCP table of physics.eos.coulomb_term (f, Gamma f', Gamma (Gamma f')' at ln Gamma nodes 0.01 apart) per
#: cell in Taylor form (physics.eos.hermite.cell_coefficients): the same interpolant, read with fewer operations
_OCP_CELLS = cell_coefficients(_TAB_F, _TAB_U, _TAB_V, _HG)
#: below this eta the quantum correction is its Wigner–Kirkwood term alone
ETA_SERIES = 1e-3


@njit(cache=True, error_model="numpy")
def ocp_scalar(g):
    """f_OCP(Gamma) at Gamma = g and its first two derivatives in Gamma: (f, f', f'').

    f = A1 [sqrt(Gamma (A2 + Gamma)) - A2 ln(sqrt(Gamma/A2) + sqrt(1 + Gamma/A2))]
        + 2 A3 [sqrt(Gamma) - arctan(sqrt(Gamma))] + B1 [Gamma - B2 ln(1 + Gamma/B2)]
        + (B3/2) ln(1 + Gamma^2/B4)                       (PC2000 eq. 17)
    f' = A1 sqrt(Gamma / (A2 + Gamma)) + A3 sqrt(Gamma) / (1 + Gamma) + B1 Gamma / (B2 + Gamma)
         + B3 Gamma / (B4 + Gamma^2)                      (our differentiation)
    f'' = A1 A2 / (2 sqrt(Gamma) (A2 + Gamma)^(3/2)) + A3 (1 - Gamma) / (2 sqrt(Gamma) (1 + Gamma)^2)
          + B1 B2 / (B2 + Gamma)^2 + B3 (B4 - Gamma^2) / (B4 + Gamma^2)^2
    """
    lnG = math.log(g)
    if _LG0 <= lnG < _LG1:
        # the same fit read from its quintic Hermite table in ln Gamma (physics.eos.coulomb_term: within
        # 1e-12 of the formulas, C2, its derivatives those of the interpolant): one log and a polynomial
        # instead of three square roots, asinh, atan and two log1p
        f, u, v = taylor_lookup(lnG, _LG0, _HG, _OCP_CELLS)
        return f, u / g, (v - u) / (g * g)
    rg = math.sqrt(g)
    sa = math.sqrt(g + A2)
    t1 = math.sqrt(g * (g + A2)) - A2 * math.asinh(rg / math.sqrt(A2))
    t2 = rg - math.atan(rg)
    t3 = g - B2 * math.log1p(g / B2)
    t4 = math.log1p(g * g / B4)
    f = (A1 * t1 + 2.0 * A3 * t2) + (B1 * t3 + 0.5 * B3 * t4)
    u = 1.0 + g
    b2 = B2 + g
    b4 = B4 + g * g
    f1 = A1 * rg / sa + A3 * rg / u + B1 * g / b2 + B3 * g / b4
    f2 = (A1 * A2 / (2.0 * rg * sa * sa * sa) + A3 * (1.0 - g) / (2.0 * rg * u * u)
          + B1 * B2 / (b2 * b2) + B3 * (B4 - g * g) / (b4 * b4))
    return f, f1, f2


@njit(cache=True, error_model="numpy")
def ocp_liquid(G):
    """Classical OCP liquid excess free energy per ion over kT, f(Gamma), Gamma as a jet (:func:`ocp_scalar`)."""
    f, f1, f2 = ocp_scalar(G[0])
    return jet.fun(G, f, f1, f2)


@njit(cache=True, inline="always", error_model="numpy")
def ocp_u(u, g):
    """f_OCP and its first two derivatives in ln Gamma at u = ln Gamma, g = Gamma: (f, f_u, f_uu) (the table
    of physics.eos.coulomb_term inside its range, the formulas of :func:`ocp_scalar` outside)."""
    if _LG0 <= u < _LG1:
        return taylor_lookup(u, _LG0, _HG, _OCP_CELLS)
    f, f1, f2 = ocp_scalar(g)
    return f, g * f1, g * (f1 + g * f2)


@njit(cache=True, error_model="numpy")
def _ocp_formula_u(g):
    """f_OCP, f_u, f_uu (u = ln Gamma) from the fit's formulas (physics.eos.coulomb_term._ocp), no table."""
    return _ocp(g)


@njit(cache=True, inline="always", error_model="numpy")
def jet_of_ln_gamma(f, fu, fuu):
    """The jet in (ln n_e, ln T) of a function of ln Gamma (ln Gamma = ln n_e / 3 - ln T + const), given its
    value and first two derivatives in ln Gamma."""
    return (f, fu * _THIRD, -fu, fuu * _NINTH, -fuu * _THIRD, fuu)


#: the classical lattice as an excess over the ideal gas: C_M Gamma + 1.5 ln Gamma + _LATTICE_0
_LATTICE_0 = _LN_ETA3_NL3 + 1.0 + HARMONIC_CLASSICAL


@njit(cache=True, inline="always", error_model="numpy")
def _delta(u, g, ocp):
    """Delta = f_OCP - [C_M Gamma + 1.5 ln Gamma + c] and its first two derivatives in ln Gamma, from
    u = ln Gamma, g = Gamma and f_OCP's (f, f_u, f_uu) there."""
    cg = MADELUNG_BCC * g
    return ocp[0] - (cg + 1.5 * u + _LATTICE_0), ocp[1] - cg - 1.5, ocp[2] - cg


@njit(cache=True, inline="always", error_model="numpy")
def _times_v(a0, a1, a2, F):
    """a(v) F(u, v): the partials in (u, v) of the product (a and its derivatives in v given)."""
    return (a0 * F[0], a0 * F[1], a1 * F[0] + a0 * F[2], a0 * F[3], a1 * F[1] + a0 * F[4],
            a2 * F[0] + 2.0 * a1 * F[2] + a0 * F[5])


@njit(cache=True, inline="always", error_model="numpy")
def _times_s(a0, a1, a2, F):
    """a(s) F(u, v), s = u - v: the partials in (u, v) of the product."""
    return (a0 * F[0], a1 * F[0] + a0 * F[1], a0 * F[2] - a1 * F[0], a2 * F[0] + 2.0 * a1 * F[1] + a0 * F[3],
            a1 * (F[2] - F[1]) - a2 * F[0] + a0 * F[4], a2 * F[0] - 2.0 * a1 * F[2] + a0 * F[5])


@njit(cache=True, inline="always", error_model="numpy")
def _gamma0(s, g_e):
    """Gamma_0 = ETA_FADE e^s (1 + C4)^(-1/4), C4 = (ETA_FADE e^s / FROZEN_CAP)^4 (the smooth cap), given
    s = ln(Gamma / eta) and g_e = e^s: (C4, m = d ln Gamma_0 / ds = 1 / (1 + C4), ln Gamma_0, Gamma_0)."""
    g0 = ETA_FADE * g_e
    c = g0 * (1.0 / FROZEN_CAP)
    c *= c
    C4 = c * c
    m = 1.0 / (1.0 + C4)
    pc = math.sqrt(math.sqrt(1.0 + C4))
    return C4, m, _LN_ETA_FADE + s - 0.25 * math.log1p(C4), g0 * m * (pc * pc * pc)


@njit(cache=True, inline="always", error_model="numpy")
def _quartic_weight(x):
    """x^4, W = 1 / (1 + x^4), x^4 W (= 1 - W, without cancellation), dW / d ln x and d2W / d ln x^2."""
    x2 = x * x
    X4 = x2 * x2
    w = 1.0 / (1.0 + X4)
    xw = X4 * w
    return X4, w, xw, -4.0 * xw * w, 16.0 * xw * w * (2.0 * xw - 1.0)


@njit(cache=True, inline="always", error_model="numpy")
def _s_rest(C4, m, lnG0, G0, ocp, g_e):
    """Delta(Gamma_0(s)), W(s) and 1 - W(s), each with its first two derivatives in s, from :func:`_gamma0`
    and f_OCP's (f, f_u, f_uu) at ln Gamma_0. W = 1 / (1 + W4), W4 = (Gamma_0 / GAMMA_FROZEN)^4 with the
    uncapped Gamma_0 = ETA_FADE e^s; 1 - W = W4 W (no cancellation)."""
    b0, b1, b2 = _delta(lnG0, G0, ocp)
    bs = b1 * m
    bss = m * m * (b2 - 4.0 * C4 * b1)
    _, w, ww, w1, w2 = _quartic_weight(g_e * (ETA_FADE / GAMMA_FROZEN))
    return b0, bs, bss, w, w1, w2, ww, -w1, -w2


# The functions of s of quantum_excess (Delta(Gamma_0), W, 1 - W) as quintic Hermite tables in s (per-cell
# Taylor form, the three side by side), nodes _S_STEP apart on [_S0, _S1] (the default plane's species span
# s ~ -3 to 15), built from the OCP formulas (physics.eos.coulomb_term._ocp); within ~1e-12 of the formulas
# (tests/physics/test_dense_tables.py). Outside, the formulas with the OCP table.
_S0, _S_STEP = -8.0, 0.01
_S_N = int(round(30.0 / _S_STEP)) + 1
_S1 = _S0 + (_S_N - 1) * _S_STEP


@njit(cache=True, error_model="numpy")
def s_functions_direct(s, exact):
    """:func:`s_functions` from the formulas: f_OCP from its fit (``exact``) or from its table."""
    g_e = math.exp(s)
    C4, m, lnG0, G0 = _gamma0(s, g_e)
    ocp = _ocp_formula_u(G0) if exact else ocp_u(lnG0, G0)
    return _s_rest(C4, m, lnG0, G0, ocp, g_e)


@njit(cache=True, error_model="numpy")
def _s_nodes(s0, h, n):
    out = np.empty((3, 3, n))
    for k in range(n):
        r = s_functions_direct(s0 + k * h, True)
        for j in range(3):
            out[j, 0, k] = r[3 * j]
            out[j, 1, k] = r[3 * j + 1]
            out[j, 2, k] = r[3 * j + 2]
    return out


_S_NODES = _s_nodes(_S0, _S_STEP, _S_N)
_S_CELLS = np.ascontiguousarray(np.concatenate([cell_coefficients(*_S_NODES[j], _S_STEP) for j in range(3)], axis=1))


@njit(cache=True, inline="always", error_model="numpy")
def s_functions(s, g_e):
    """(Delta(Gamma_0), d/ds, d2/ds2, W, W', W'', 1 - W, -W', -W'') at s = ln(Gamma / eta), g_e = e^s: the
    table inside its range, else the formulas."""
    if _S0 <= s < _S1:
        i, x = locate_cell(s, _S0, _S_STEP, _S_CELLS.shape[0])
        b = taylor_cell(_S_CELLS, i, 0, x, _S_STEP)
        w = taylor_cell(_S_CELLS, i, 6, x, _S_STEP)
        ww = taylor_cell(_S_CELLS, i, 12, x, _S_STEP)
        return b[0], b[1], b[2], w[0], w[1], w[2], ww[0], ww[1], ww[2]
    C4, m, lnG0, G0 = _gamma0(s, g_e)
    return _s_rest(C4, m, lnG0, G0, ocp_u(lnG0, G0), g_e)


@njit(cache=True, inline="always", error_model="numpy")
def quantum_excess(g, e, u, v, ocp):
    """W Delta_frozen + (1 - W) Delta_faded (the module notes) and its partials in (u, v) = (ln Gamma, ln eta):
    (R, R_u, R_v, R_uu, R_uv, R_vv).

    Every factor is a function of one variable, u, v or s = u - v = ln(Gamma / eta) (density alone): Delta(u)
    and Delta(ln(Gamma / r)) from the OCP table, r(v), D(v) = r^-4 and the tail's factor T_0-weight tail(v),
    Delta(Gamma_0(s)) and the weight W(s); the products are formed on their (u, v) partials by hand, with
    no logarithm of Gamma or eta (u and v are given) and no division of jets.
    g = Gamma, e = eta; ``ocp`` = f_OCP and its derivatives in ln Gamma at u.
    """
    d0, d1, d2 = _delta(u, g, ocp)
    # D(v) = 1 / (1 + E4), E4 = (eta / ETA_FADE)^4 ∝ e^(4 v)
    ie = 1.0 / e
    E4, D, ED, D1, D2 = _quartic_weight(e * (1.0 / ETA_FADE))
    # (b) faded: Delta(u) D(v)
    faded = (d0 * D, d1 * D, d0 * D1, d2 * D, d1 * D1, d0 * D2)
    # (a) frozen: r Delta(ln(Gamma / r)), r = (1 + E4)^(1/4), ln r = l(v): l_v = E4 D, l_vv = 4 E4 D^2
    l0 = 0.25 * math.log1p(E4)
    l1 = ED
    l2 = 4.0 * ED * D
    r = math.sqrt(math.sqrt(1.0 + E4))
    gy = g * (D * r * r * r)                                                    # Gamma / r, 1 / r = D r^3
    y = u - l0
    a0, a1, a2 = _delta(y, gy, ocp_u(y, gy))
    A = (a0, a1, -a1 * l1, a2, -a2 * l1, a2 * l1 * l1 - a1 * l2)          # Delta(u - l(v))
    frozen = _times_v(r, r * l1, r * (l2 + l1 * l1), A)
    # the frozen liquid's T -> 0 limit taken off: tail(v) Delta(Gamma_0(s)), tail = (eta / ETA_FADE)
    # (1 + q)^(-3/4), q = (T / T_1)^4 = (ETA_FADE / (FROZEN_TAIL eta))^4 ∝ e^(-4 v)
    t1 = (ETA_FADE / FROZEN_TAIL) * ie
    t1 *= t1
    q = t1 * t1
    iP = 1.0 / (1.0 + q)
    tail = e * (1.0 / ETA_FADE) * iP * math.sqrt(math.sqrt(1.0 + q))            # P^(-3/4) = P^(1/4) / P
    qP = q * iP
    tau = 1.0 + 3.0 * qP                                                        # d ln tail / dv
    tl1 = tail * tau
    tl2 = tail * (tau * tau - 12.0 * qP * iP)
    # Delta(Gamma_0(s)) and the weight W(s), functions of s = u - v = ln(Gamma / eta) alone: a table in s
    b0, bs, bss, w, w1, w2, ww, ww1, ww2 = s_functions(u - v, g * ie)
    frozen = _sub6(frozen, _times_v(tail, tl1, tl2, (b0, bs, -bs, bss, -bss, bss)))
    a = _times_s(w, w1, w2, frozen)
    b = _times_s(ww, ww1, ww2, faded)
    return (a[0] + b[0], a[1] + b[1], a[2] + b[2], a[3] + b[3], a[4] + b[4], a[5] + b[5])


@njit(cache=True, inline="always", error_model="numpy")
def _sub6(x, y):
    return (x[0] - y[0], x[1] - y[1], x[2] - y[2], x[3] - y[3], x[4] - y[4], x[5] - y[5])


@njit(cache=True, inline="always", error_model="numpy")
def jet_of_uv(R):
    """The jet in (ln n_e, ln T) of a function of u = ln Gamma and v = ln eta (Gamma ∝ n_e^(1/3) / T,
    eta ∝ n_e^(1/2) / T), from its partials (R, R_u, R_v, R_uu, R_uv, R_vv)."""
    return (R[0], R[1] * _THIRD + 0.5 * R[2], -(R[1] + R[2]),
            R[3] * _NINTH + R[4] * _THIRD + 0.25 * R[5],
            -(R[3] * _THIRD + (5.0 / 6.0) * R[4] + 0.5 * R[5]),
            R[3] + 2.0 * R[4] + R[5])


@njit(cache=True, error_model="numpy")
def liquid_core(G, eta, u, v, f_id, harm, ocp):
    """f_liq from the jets Gamma, eta (power laws in n_e and T, as :func:`coupling` and :func:`quantum` give
    them), their logarithms u = ln Gamma, v = ln eta (plain numbers), the ideal-ion term f_id, f_harm(eta)
    (``harm``, shared with the solid; not read where eta < ETA_SERIES) and f_OCP(Gamma) as (f, f_u, f_uu) in
    ln Gamma (``ocp``: the electron correlation of physics.eos.electron_xc reads the same function at
    Gamma_e, which is hydrogen's Gamma)."""
    ocpj = jet_of_ln_gamma(ocp[0], ocp[1], ocp[2])
    if eta[0] < ETA_SERIES:
        # classical ions: the quantum correction is the Wigner–Kirkwood term (next term ~ eta^4, below
        # 1e-12 kT here) and the freezing of Delta is O(eta^4) too; skipping them saves most of the cost
        return jet.add(ocpj, jet.scale(jet.sq(eta), 1.0 / 24.0))
    # the quantum harmonic lattice, excess over the ideal gas, and the liquid's excess over it
    qlat = jet.sub(jet.add(jet.scale(G, MADELUNG_BCC), harm), f_id)
    return jet.add(qlat, jet_of_uv(quantum_excess(G[0], eta[0], u, v, ocp)))


@njit(cache=True, error_model="numpy")
def liquid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the ion liquid, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    G = coupling(n_e, T, Z)
    eta = quantum(n_e, T, Z, A)
    u = math.log(G[0])
    v = math.log(eta[0])
    ocp = ocp_u(u, G[0])
    if eta[0] < ETA_SERIES:
        return liquid_core(G, eta, u, v, jet.const(0.0), jet.const(0.0), ocp)
    return liquid_core(G, eta, u, v, ideal_ion(n_e, T, Z, A), harmonic_loglin(eta[0], v), ocp)


@njit(cache=True, error_model="numpy")
def _liquid_many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = liquid_ion(n_e[i], T[i], Z, A)


def liquid_ion_free_energy(n_e, T, Z, A):
    """Vectorised :func:`liquid_ion`: arrays n_e (cm^-3), T (K); scalars Z, A. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _liquid_many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
