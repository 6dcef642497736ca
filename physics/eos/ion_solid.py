"""The ions as a bcc Coulomb crystal: Madelung energy, harmonic phonons with zero-point motion, anharmonic
corrections.

The question this module answers: what is the free energy of the ions once they have frozen into a
lattice, from the classical crystal (c_V = 3k per ion) down to the quantum crystal (c_V ∝ T^3, S -> 0)?

Free energy per ion over kT, as an excess over the classical ideal ion gas (the equation of state keeps the
Sackur–Tetrode term of physics.matter and adds this):

    f_sol = C_M Gamma + f_harm(eta) + f_anh(Gamma, eta) - f_id

- Madelung constant of the bcc lattice, C_M = -0.895929255682 (Baiko, Potekhin & Yakovlev 2001,
  Phys. Rev. E 64, 057402, Table I; value from memory).
- Harmonic lattice with quantum phonons, the published fit of Baiko, Potekhin & Yakovlev (2001), eqs. (12)-(13)
  (coefficients for bcc from memory of that paper, checked in the tests through the limits they must obey:
  the classical limit 3 ln eta + 3 <ln(omega/omega_p)>, the Wigner–Kirkwood term eta^2/24 from the Kohn sum
  rule, and the zero-point energy (3/2) u_1 hbar omega_p, u_1 = 0.5113875):

      f_harm = (3/2) u_1 eta + sum_{k=1..3} ln(1 - exp(-alpha_k eta)) - A(eta) / B(eta),
      A = sum_{n=0..8} a_n eta^n,  B = sum_{n=0..7} b_n eta^n + alpha_6 a_6 eta^9 + alpha_8 a_8 eta^11.

- Anharmonic corrections, classical: f_anh = -(A_1 / Gamma + A_2 / (2 Gamma^2) + A_3 / (3 Gamma^3)),
  A_1 = 10.9, A_2 = 247, A_3 = 1.765e5 (Farouki & Hamaguchi 1993, as used by Potekhin & Chabrier 2000,
  eq. (21); from memory). Quantum suppression: Potekhin & Chabrier (2010, Contrib. Plasma Phys. 50, 82)
  fade the classical anharmonic term where zero-point motion dominates; we multiply it by exp(-eta^2)
  (our choice of damping; their quantum anharmonic fit is not reproduced here). The factor keeps the third
  law and the T^3 heat capacity of the harmonic quantum crystal.

Speed: the kernels read f_harm - (3/2) u_1 eta from a quintic Hermite table in ln eta (:func:`harmonic_v`;
the zero-point term is added as a power law, so its c_V vanishes exactly); the fit itself outside the table.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from . import jet
from .hermite import cell_coefficients, taylor_lookup
from .plasma_parameters import coupling, ideal_ion, quantum

__all__ = ["MADELUNG_BCC", "U1_BCC", "harmonic", "harmonic_scalar", "harmonic_thermal", "harmonic_loglin", "solid_ion", "solid_core", "solid_ion_free_energy"]

#: Madelung constant of the bcc Coulomb lattice (Baiko, Potekhin & Yakovlev 2001; from memory).
MADELUNG_BCC = -0.895929255682
#: First phonon frequency moment <omega / omega_p> of bcc (Baiko, Potekhin & Yakovlev 2001; from memory).
U1_BCC = 0.5113875

_ALPHA = (0.932446, 0.334547, 0.265764)
_ALPHA6 = 4.757014e-3
_ALPHA8 = 4.7770935e-3
_A = (1.0, 0.1839, 0.593586, 0.0054814, 5.01813e-4, 0.0, 3.9247e-7, 0.0, 5.8356e-11)
_B = (261.66, 0.0, 7.07997, 0.0, 0.0409484, 3.97355e-4, 5.11148e-5, 2.19749e-6)
_ANH = (10.9, 247.0, 1.765e5)

#: Classical limit of f_harm - 3 ln eta = 3 <ln(omega / omega_p)> as given by the fit itself.
HARMONIC_CLASSICAL = math.log(_ALPHA[0] * _ALPHA[1] * _ALPHA[2]) - 1.0 / _B[0]


@njit(cache=True, inline="always", error_model="numpy")
def _horner2(c, degree, x):
    """sum_k c[k] x^k (k <= degree) and its first two derivatives in x, by Horner's rule."""
    p0 = c[degree]
    p1 = 0.0
    p2 = 0.0
    for k in range(degree - 1, -1, -1):
        p2 = p2 * x + 2.0 * p1
        p1 = p1 * x + p0
        p0 = p0 * x + c[k]
    return p0, p1, p2


@njit(cache=True, inline="always", error_model="numpy")
def _rational(e):
    """The fit's rational part q = A / B at eta = e and its first two derivatives (with A and B):
    (A, B, q, q', q''); (A/B)' = (A' - q B') / B, (A/B)'' = (A'' - 2 q' B' - q B'') / B."""
    A0, A1, A2 = _horner2(_A, 8, e)
    B0, B1, B2 = _horner2(_B, 7, e)
    e2 = e * e
    e7 = e2 * e2 * e2 * e
    c6 = _ALPHA6 * _A[6]
    c8 = _ALPHA8 * _A[8]
    B0 += (c6 + c8 * e2) * e7 * e2
    B1 += (9.0 * c6 + 11.0 * c8 * e2) * e7 * e
    B2 += (72.0 * c6 + 110.0 * c8 * e2) * e7
    q = A0 / B0
    q1 = (A1 - q * B1) / B0
    return A0, B0, q, q1, (A2 - 2.0 * q1 * B1 - q * B2) / B0


@njit(cache=True, error_model="numpy")
def harmonic_scalar(e):
    """f_harm and its first two derivatives in eta at eta = e (a plain number): (h, h', h'').

    Each branch ln(1 - exp(-alpha eta)) = ln(-expm1(y)), y = -alpha eta, has derivatives
    -alpha e^y / expm1(y) and -alpha^2 e^y / expm1(y)^2; the rational part A / B by Horner with derivatives,
    (A/B)' = (A' - q B') / B, (A/B)'' = (A'' - 2 q' B' - q B'') / B with q = A / B.
    """
    h = 1.5 * U1_BCC * e
    h1 = 1.5 * U1_BCC
    h2 = 0.0
    for k in range(3):
        a = _ALPHA[k]
        y = -a * e
        ey = math.exp(y)
        m = math.expm1(y) if y > -0.7 else ey - 1.0        # e^y - 1 is exact to rounding below -0.7
        r = ey / m
        h += math.log(-m)
        h1 -= a * r
        h2 -= a * a * r / m
    _, _, q, q1, q2 = _rational(e)
    return h - q, h1 - q1, h2 - q2


@njit(cache=True, error_model="numpy")
def harmonic_thermal(e, classical=False):
    """g = f_harm - (3/2) u_1 eta (the fit without its zero-point term) and its first two derivatives in
    v = ln eta at eta = e: (g, g_v, g_vv), each without the cancellation against the zero-point term that
    subtracting it afterwards would bring (their size falls as eta^-3 for eta >> 1).

    ``classical``: return g - (3 ln eta + HARMONIC_CLASSICAL) instead (its classical limit taken off, -> 0 as
    eta -> 0), formed as sum_k ln(-expm1(-alpha_k eta) / (alpha_k eta)) - (A / B - 1 / b_0), so that its
    rounding is that of a small number.
    """
    g = 0.0
    g1 = 0.0
    g2 = 0.0
    for k in range(3):
        a = _ALPHA[k]
        y = -a * e
        ey = math.exp(y)
        m = math.expm1(y) if y > -0.7 else ey - 1.0
        r = ey / m
        g += math.log(m / y) if classical else math.log(-m)
        g1 -= a * r
        g2 -= a * a * r / m
    A0, B0, q, q1, q2 = _rational(e)
    g1 -= q1
    g2 -= q2
    if classical:
        # A / B - 1 / b_0 = (A b_0 - B) / (B b_0), the constant terms cancelling exactly (a_0 = 1)
        q = (A0 * _B[0] - B0) / (B0 * _B[0])
        return g - q, e * g1 - 3.0, e * g1 + e * e * g2
    return g - q, e * g1, e * g1 + e * e * g2


# g = f_harm - (3/2) u_1 eta as quintic Hermite tables in v = ln eta (physics.eos.hermite): nodes _HV_STEP
# apart, holding the value and its first two derivatives in v from harmonic_thermal; for v < 0 the table holds
# g - (3 v + HARMONIC_CLASSICAL) (the classical limit, added back exactly), formed without cancellation, so
# that the nodes' rounding is that of a small number: the interpolant's second derivative carries it as
# ~60 eps |g| / h^2.
# Within ~1e-11 of the fit in g_vv, far less in g (tests/physics/test_dense_tables.py); C2 (also across
# v = 0, a node of both), its derivatives those of the interpolant. Outside [_HV0, _HV1] the fit itself.
_HV0, _HV1, _HV_STEP = -12.0, 12.0, 0.01
_HV_N = int(round(-_HV0 / _HV_STEP)) + 1          # nodes per half, v = 0 in both


@njit(cache=True, error_model="numpy")
def _thermal_nodes(v0, h, n, classical):
    tf = np.empty(n)
    tg = np.empty(n)
    tk = np.empty(n)
    for k in range(n):
        v = v0 + k * h
        tf[k], tg[k], tk[k] = harmonic_thermal(math.exp(v), classical)
    return tf, tg, tk


_TAB_LO = _thermal_nodes(_HV0, _HV_STEP, _HV_N, True)
_TAB_HI = _thermal_nodes(0.0, _HV_STEP, _HV_N, False)
_CELLS_LO = cell_coefficients(*_TAB_LO, _HV_STEP)
_CELLS_HI = cell_coefficients(*_TAB_HI, _HV_STEP)


@njit(cache=True, inline="always", error_model="numpy")
def harmonic_v(v):
    """(g, g_v, g_vv) of :func:`harmonic_thermal` at v = ln eta: from the tables inside their range."""
    if _HV0 <= v < 0.0:
        a, b, c = taylor_lookup(v, _HV0, _HV_STEP, _CELLS_LO)
        return a + (3.0 * v + HARMONIC_CLASSICAL), b + 3.0, c
    if 0.0 <= v < _HV1:
        return taylor_lookup(v, 0.0, _HV_STEP, _CELLS_HI)
    return harmonic_thermal(math.exp(v))


@njit(cache=True, error_model="numpy")
def harmonic(eta):
    """f_harm(eta) of the bcc harmonic lattice (BPY 2001 fit), eta given as a jet (the zero-point term
    analytic, the rest from the table of :func:`harmonic_v`)."""
    e = eta[0]
    g, gv, gvv = harmonic_v(math.log(e))
    z = 1.5 * U1_BCC
    return jet.fun(eta, z * e + g, z + gv / e, (gvv - gv) / (e * e))


@njit(cache=True, inline="always", error_model="numpy")
def harmonic_loglin(e, v):
    """:func:`harmonic` for eta ∝ n_e^(1/2) / T given by its value e and v = ln e: the zero-point term is
    a power law (its c_V, -(f_T + f_TT), vanishes exactly), the rest a function of v."""
    g, gv, gvv = harmonic_v(v)
    a = 1.5 * U1_BCC * e
    return (a + g, 0.5 * (a + gv), -(a + gv), 0.25 * (a + gvv), -0.5 * (a + gvv), a + gvv)


@njit(cache=True, error_model="numpy")
def harmonic_quantum_correction(eta):
    """f_harm(eta) - (3 ln eta + 3 <ln(omega/omega_p)>): the quantum part of the harmonic lattice.

    -> eta^2 / 24 as eta -> 0 (Wigner–Kirkwood; sum of the squared frequencies of the three branches is
    omega_p^2, the Kohn sum rule).
    """
    return jet.addc(jet.sub(harmonic(eta), jet.scale(jet.log(eta), 3.0)), -HARMONIC_CLASSICAL)


@njit(cache=True, error_model="numpy")
def anharmonic(G, eta):
    """Classical anharmonic correction faded by exp(-eta^2) (see the module docstring)."""
    iG = jet.inv(G)
    iG2 = jet.mul(iG, iG)
    f = jet.add(jet.scale(iG, -_ANH[0]), jet.add(jet.scale(iG2, -_ANH[1] / 2.0),
                                                 jet.scale(jet.mul(iG2, iG), -_ANH[2] / 3.0)))
    return jet.mul(f, jet.exp(jet.scale(jet.mul(eta, eta), -1.0)))


@njit(cache=True, inline="always", error_model="numpy")
def anharmonic_loglin(Gv, ev):
    """:func:`anharmonic` for Gamma ∝ n_e^(1/3) / T and eta ∝ n_e^(1/2) / T given by their values (power
    laws: every jet is a power law times exp(-eta^2), with fewer operations)."""
    ig = 1.0 / Gv
    f = -ig * (_ANH[0] + ig * (_ANH[1] / 2.0 + ig * _ANH[2] / 3.0))
    f_a = ig * (_ANH[0] + ig * (_ANH[1] + ig * _ANH[2])) / 3.0                  # d f / d ln n_e
    f_aa = -ig * (_ANH[0] + ig * (2.0 * _ANH[1] + ig * 3.0 * _ANH[2])) / 9.0
    # d/d ln T = -3 d/d ln n_e on a function of Gamma alone
    fj = (f, f_a, -3.0 * f_a, f_aa, -3.0 * f_aa, 9.0 * f_aa)
    e2 = ev * ev
    return jet.mul(fj, jet.exp(jet.loglin(-e2, 1.0, -2.0)))


@njit(cache=True, inline="always", error_model="numpy")
def solid_core(G, eta, f_id, harm):
    """f_sol from the jets Gamma, eta, the ideal-ion term and f_harm(eta) (shared with the liquid)."""
    f = jet.add(jet.scale(G, MADELUNG_BCC), harm)
    f = jet.add(f, anharmonic_loglin(G[0], eta[0]))
    return jet.sub(f, f_id)


@njit(cache=True, error_model="numpy")
def solid_ion(n_e, T, Z, A):
    """Free energy per ion over kT of the bcc crystal, excess over the classical ideal ion gas.

    Returns the jet (f, f_n, f_T, f_nn, f_nT, f_TT), derivatives in ln n_e and ln T.
    """
    eta = quantum(n_e, T, Z, A)
    return solid_core(coupling(n_e, T, Z), eta, ideal_ion(n_e, T, Z, A), harmonic_loglin(eta[0], math.log(eta[0])))


@njit(cache=True, error_model="numpy")
def _solid_many(n_e, T, Z, A, out):
    for i in range(n_e.size):
        out[:, i] = solid_ion(n_e[i], T[i], Z, A)


def solid_ion_free_energy(n_e, T, Z, A):
    """Vectorised :func:`solid_ion`: arrays n_e (cm^-3), T (K); scalars Z, A. Returns shape (6, ...)."""
    n_e, T = np.broadcast_arrays(np.asarray(n_e, float), np.asarray(T, float))
    out = np.empty((6, n_e.size))
    _solid_many(np.ascontiguousarray(n_e).ravel(), np.ascontiguousarray(T).ravel(), float(Z), float(A), out)
    return out.reshape((6,) + n_e.shape)
