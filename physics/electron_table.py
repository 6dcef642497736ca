"""Tabulated electron–positron gas: fast and thermodynamically consistent.

Which question this module answers: the same as :mod:`thermoplane.physics.electrons`
(pressure, energy, entropy, chemical potential and their derivatives of the
electron–positron gas at given net electron density and temperature), at a
small fraction of the cost, with every quantity taken from ONE interpolated
free energy so that the Maxwell relations hold to rounding.

Method, after Timmes & Swesty (2000, ApJS 126, 501): the Helmholtz free
energy per unit volume

    f(n, T) = n eta k T - P,   (df/dn)_T = eta k T,   (df/dT)_n = -S,

(n = net electron density, eta = chemical potential without rest mass over
kT, E includes the pairs' rest mass so that f = E - T S) is tabulated on a
grid uniform in u = ln n and v = ln T, with F, F_u, F_v, F_uu, F_vv, F_uv,
F_uuv, F_uvv, F_uuvv at every node, and interpolated with biquintic Hermite
polynomials (Timmes & Swesty 2000, eqs. 4–9).  Everything is a derivative of
the interpolant:

    eta = F_u / (n k T),  P = F_u - F,  S = -F_v / T,  E = F - F_v,
    (dP/dn)_T = (F_uu - F_u)/n,  (dP/dT)_n = (F_uv - F_v)/T,
    (dE/dn)_T = (F_u - F_uv)/n,  (dE/dT)_n = -(F_vv - F_v)/T.

With pairs the free energy holds a large part that does not depend on n, the
zero-charge pair gas f_0(T) = -P(mu = -m_e c^2, T).  Left inside F it would
drown the n-dependence (eta, dP/dn) in rounding wherever pairs outnumber the
net electrons by many orders of magnitude, so it is tabulated apart as a 1-D
quintic Hermite in v, and the 2-D table holds g = f - f_0(T).  Where
zeta = eta + 1/theta is small, g and its T-derivatives are formed from
n-derivatives by the even-in-n expansions (Gibbs–Duhem, dP = S dT + n dmu)

    Delta P = P - P_0 ~ k T (5/8 zeta n - 1/8 zeta^2 dn/deta),
    phi ~ 3/4 phi_u - 1/8 phi_uu   for phi = g_v, g_vv (phi even in n, phi(0) = 0),

which need no subtraction of nearly equal numbers.

Node data come from :func:`thermoplane.physics.electrons.electron_state` (third and
fourth derivatives by five-point central differences in v of the analytic
F_uu and F_uv).  Outside the table the exact routine is called for those
points only.

At the pair onset (10^8–10^9.7 K) the positron density goes like exp(-2/theta),
which changes by e^(2/theta dv) across a cell: three finer pair tables
(:data:`ONSET_TABLES`, 0.002–0.01 dex in T) keep P, E and eta within 1e-6 of
the exact gas there (:func:`onset_state`).  Evaluation runs in chunks of a few
thousand points (the working arrays stay in cache): one gather of the 36
coefficients of each point's cell, Horner in z_v then z_u for just the
derivative orders needed; :func:`table_eta` forms only eta and deta/dn.
"""

import argparse
import functools
import sys
from pathlib import Path

import numpy as np

from . import constants as const
from .electrons import ElectronGas, ElectronState, _prepare, electron_gas, electron_state

__all__ = ["table_state", "table_eta", "onset_state", "in_table", "build_table", "TABLE_RANGE", "ONSET_TABLES"]

_MC2 = const.m_e * const.c ** 2
_K = const.k_B
#: (log10 n_min, log10 n_max, log10 T_min, log10 T_max) of the table
TABLE_RANGE = (4.0, 37.0, 3.0, 11.5)
#: Fine pair tables of the pair onset: (name, (log10 n_min, log10 n_max, log10 T_min, log10 T_max),
#: (dlogn, dlogT)).  The positron density there goes like e^(-2/theta), whose rate in ln T
#: (2/theta ~ 30-120) sets the T spacing for <= 1e-6 relative errors in P, E, eta; each n range
#: covers the densities at which positrons exceed 1e-10 of the net electrons (n < ~1e5 n_Q e^(-1/theta)).
ONSET_TABLES = (
    ("onset_a", (4.0, 24.0, 8.0, 8.4), (0.05, 0.002)),
    ("onset_b", (4.0, 30.0, 8.4, 8.8), (0.05, 0.005)),
    ("onset_c", (4.0, 35.0, 8.8, 9.7), (0.05, 0.01)),
)
#: five-point difference step in ln T of the onset tables (2/theta * step << 1)
_ONSET_FD_STEP = 1e-3
_DATA = Path(__file__).resolve().parent / "data"
_FILES = {True: "electron_table_pairs.npz", False: "electron_table_nopairs.npz",
          **{name: f"electron_table_pair_{name}.npz" for name, _, _ in ONSET_TABLES}}
_LN10 = np.log(10.0)
#: below this zeta the expansions replace the subtractions P - P_0, S - S_0, ...
_ZETA_SERIES = 1e-2
#: 1/theta above which the zero-charge pair gas is below ~1e-280 of anything: taken as 0
_INV_THETA_MAX = 640.0
#: nodes of the 1-D zero-charge table per 2-D cell in v
_F0_REFINE = 50


def _hermite_matrix(order):
    """Monomial coefficients from Hermite data on [0, 1].

    order 2 (quintic): data (p0, p0', p0'', p1, p1', p1''); order 1 (cubic): (p0, p0', p1, p1').
    Returns M with coefficients c = M @ data, p(z) = sum_k c_k z^k.
    """
    deg = 2 * order + 1
    rows = []
    for z in (0.0, 1.0):
        for d in range(order + 1):
            row = []
            for k in range(deg + 1):
                if k < d:
                    row.append(0.0)
                else:
                    row.append(float(np.prod(np.arange(k - d + 1, k + 1))) * z ** (k - d))
            rows.append(row)
    return np.linalg.inv(np.array(rows))


_M5 = _hermite_matrix(2)
_M3 = _hermite_matrix(1)


def _grid(dlogn, dlogT, table_range=TABLE_RANGE):
    ln0, ln1, lt0, lt1 = table_range
    nu = int(round((ln1 - ln0) / dlogn)) + 1
    nv = int(round((lt1 - lt0) / dlogT)) + 1
    return np.linspace(ln0, ln1, nu) * _LN10, np.linspace(lt0, lt1, nv) * _LN10


def _node_quantities(n, T, pairs):
    """F_u, F_uu, F_uv at (n, T) from the exact state, and the state itself."""
    s = electron_state(n, T, pairs)
    kT = _K * T
    Fu = n * s.eta * kT
    Fuu = Fu + n * n * kT * s.deta_dn
    Fuv = n * T * (_K * s.eta + kT * s.deta_dT)
    return s, Fu, Fuu, Fuv


# ----------------------------------------------------------------------------- degenerate split

#: electron Compton wavelength hbar / (m_e c), cm
_LAMBDA_C = const.hbar / (const.m_e * const.c)
#: x = p_F / (m_e c) = _X0 n^(1/3): p_F = hbar (3 pi^2 n)^(1/3)
_X0 = (3.0 * np.pi ** 2) ** (1.0 / 3.0) * _LAMBDA_C
#: m_e c^2 / (pi^2 lambda_C^3): energy density unit of the T = 0 gas, erg cm^-3
_E_UNIT = _MC2 / (np.pi ** 2 * _LAMBDA_C ** 3)
#: below this x the series replaces the closed form of the T = 0 energy (which cancels as x^5 / x^3)
_X_SERIES = 0.3
#: series of int_0^x y^2 (sqrt(1 + y^2) - 1) dy = sum_k binom(1/2, k) x^(2k+3) / (2k+3), k = 1..20
#: (the terms fall by x^2 <= 0.09: the last is below 1e-20 of the first)
_SERIES = tuple(float(np.prod([0.5 - j for j in range(k)]) / np.prod(np.arange(1, k + 1)) / (2 * k + 3))
                for k in range(1, 21))
#: Sommerfeld coefficients a = pi^2/6 of (kT)^2 and b = 7 pi^4/360 of (kT)^4
_SOMM_A = np.pi ** 2 / 6.0
_SOMM_B = 7.0 * np.pi ** 4 / 360.0
#: above this eta the node data of the pair-free table are the Sommerfeld expansion (_sommerfeld_nodes)
ETA_SOMMERFELD = 300.0


def degenerate_free_energy(n, value=True):
    """The T = 0 free energy of the electron gas (per volume, rest mass excluded) and its u-derivatives.

    f_0 = (m_e c^2 / (pi^2 lambda_C^3)) int_0^x y^2 (sqrt(1 + y^2) - 1) dy, the kinetic energy density of
    the filled Fermi sphere (Chandrasekhar 1939), x = p_F / (m_e c); f_0u = n mu_0 with the kinetic Fermi
    energy mu_0 = m_e c^2 x^2 / (1 + eps), eps = sqrt(1 + x^2); f_0uu = n (mu_0 + n dmu_0/dn),
    n dmu_0/dn = m_e c^2 x^2 / (3 eps); u = ln n, n in cm^-3. Returns (f_0, f_0u, f_0uu), erg cm^-3
    (f_0 None if not ``value``: eta and deta/dn need only the derivatives).

    The pair-free table holds the free energy minus f_0 (subtracted at the nodes, added back at evaluation):
    in degenerate matter f is f_0 plus a thermal part smaller by ~(kT/mu_0)^2, and a table of the whole f
    would bury that part (and with it S and c_V) in the rounding of f_0.
    """
    n = np.asarray(n, dtype=float)
    x = _X0 * n ** (1.0 / 3.0)
    x2 = x * x
    eps = np.sqrt(1.0 + x2)
    mu0 = _MC2 * x2 / (1.0 + eps)
    derivs = n * mu0, n * (mu0 + _MC2 * x2 / (3.0 * eps))
    if not value:
        return (None,) + derivs
    small = x < _X_SERIES
    xs = np.where(small, x, 0.0)
    y = xs * xs
    ser = np.full_like(x, _SERIES[-1])
    for coef in _SERIES[-2::-1]:
        ser = ser * y + coef
    ser = ser * y * y * xs
    xl = np.where(small, 1.0, x)
    closed = 0.125 * (xl * (2.0 * xl * xl + 1.0) * np.sqrt(1.0 + xl * xl) - np.arcsinh(xl)) - xl * xl * xl / 3.0
    return (_E_UNIT * np.where(small, ser, closed),) + derivs


def _ujet_mul(a, b):
    """Product of two (value, d/du, d2/du2) triples."""
    return (a[0] * b[0], a[1] * b[0] + a[0] * b[1], a[2] * b[0] + 2.0 * a[1] * b[1] + a[0] * b[2])


def _ujet_inv(a):
    r = 1.0 / a[0]
    return (r, -a[1] * r * r, (2.0 * a[1] * a[1] * r - a[2]) * r * r)


def _sommerfeld_nodes(u, v):
    """Node data (9, ...) of the thermal free energy f - f_0 of the degenerate pair-free gas.

    Sommerfeld expansion to (kT)^4 (Landau & Lifshitz, Statistical Physics, sec. 58): at the chemical
    potential mu (kinetic), P(mu, T) = P_0(mu) + delta, delta = a t^2 D(mu) + b t^4 D''(mu), t = kT,
    a = pi^2/6, b = 7 pi^4/360, D = dn_0/dmu the density of states of the T = 0 gas. The Legendre
    transform to fixed n gives (our derivation, to order t^4)

        f(n, T) - f_0(n) = -delta(mu_0) + delta_mu(mu_0)^2 / (2 D) = t^2 A(n) + t^4 B(n),
        A = -a D,  B = -b D'' + a^2 D'^2 / (2 D),

    mu_0 the T = 0 Fermi energy. Relativistic gas: D = g / (pi^2 lambda_C^3 m_e c^2), g = x eps,
    dg/deps = (2 x^2 + 1) / x, d2g/deps2 = eps (2 x^2 - 1) / x^3, d/dmu = (1/m_e c^2) d/deps. The next
    term is smaller than the t^2 term by ~(pi/eta)^4, below 1e-8 of it at eta > ETA_SOMMERFELD.
    Returns G, G_u, G_v, G_uu, G_vv, G_uv, G_uuv, G_uvv, G_uuvv (u = ln n, v = ln T), the table's order.
    """
    x = _X0 * np.exp(u / 3.0)
    X = (x, x / 3.0, x / 9.0)                                    # x ∝ n^(1/3) as a jet in u
    X2 = _ujet_mul(X, X)
    e = np.sqrt(1.0 + X2[0])
    EPS = (e, 0.5 * X2[1] / e, 0.5 * X2[2] / e - 0.25 * X2[1] ** 2 / e ** 3)
    iX = _ujet_inv(X)
    g = _ujet_mul(X, EPS)
    g1 = _ujet_mul((2.0 * X2[0] + 1.0, 2.0 * X2[1], 2.0 * X2[2]), iX)
    g2 = _ujet_mul(_ujet_mul(EPS, (2.0 * X2[0] - 1.0, 2.0 * X2[1], 2.0 * X2[2])),
                   _ujet_mul(iX, _ujet_mul(iX, iX)))
    K = 1.0 / (np.pi ** 2 * _LAMBDA_C ** 3 * _MC2)
    A = tuple(-_SOMM_A * K * c for c in g)
    q = _ujet_mul(_ujet_mul(g1, g1), _ujet_inv(g))
    B = tuple(K / _MC2 ** 2 * (-_SOMM_B * c2 + 0.5 * _SOMM_A ** 2 * cq) for c2, cq in zip(g2, q))
    t2 = (_K * np.exp(v)) ** 2
    t4 = t2 * t2
    a0, a1, a2 = (t2 * c for c in A)
    b0, b1, b2 = (t4 * c for c in B)
    return np.stack([a0 + b0, a1 + b1, 2 * a0 + 4 * b0, a2 + b2, 4 * a0 + 16 * b0, 2 * a1 + 4 * b1,
                     2 * a2 + 4 * b2, 4 * a1 + 16 * b1, 4 * a2 + 16 * b2])


def _split_degenerate(G, u, v):
    """Node data of the pair-free table as evaluated: f - f_0(n), with the Sommerfeld expansion in place
    of the quadrature where eta > ETA_SOMMERFELD (there the quadrature's entropy, S = (E + P - mu n)/T,
    is a difference of numbers larger than S by ~eta^2, and its noise would be S's)."""
    G = np.array(G, dtype=float)
    U, V = np.meshgrid(u, v, indexing="ij")
    f0, f0u, f0uu = degenerate_free_energy(np.exp(U))
    eta = G[1] / (np.exp(U) * _K * np.exp(V))
    G[0] -= f0
    G[1] -= f0u
    G[3] -= f0uu
    deg = eta > ETA_SOMMERFELD
    G[:, deg] = _sommerfeld_nodes(U[deg], V[deg])
    return G


def _zero_charge(T, pairs):
    """P_0, S_0 and (dE/dT) along n = 0 (mu = -m_e c^2): the n-independent pair gas."""
    P0, S0, C0 = (np.zeros_like(T) for _ in range(3))
    if not pairs:
        return P0, S0, C0
    inv_theta = _MC2 / (_K * T)
    ok = inv_theta < _INV_THETA_MAX
    g = electron_gas(-inv_theta[ok], T[ok], pairs=True)
    deta_dT = -g.dn_dT / g.dn_deta
    P0[ok], S0[ok], C0[ok] = g.P, g.S, g.dE_dT + g.dE_deta * deta_dT
    return P0, S0, C0


#: log10 T range over which the rest-mass shift c(T) rises from 0 to m_e c^2 (no pairs below
#: ~10^7.9 K matter for n >= 1e4 cm^-3; below 10^7.3 K the shift would cost eta digits)
_SHIFT = (7.3, 7.9)


def _rest_shift(v):
    """c(T) = m_e c^2 s(x) and its first two v-derivatives; s the C^3 smootherstep in log10 T."""
    w = (_SHIFT[1] - _SHIFT[0]) * _LN10
    x = np.clip((v - _SHIFT[0] * _LN10) / w, 0.0, 1.0)
    s0 = x ** 4 * (35.0 - 84.0 * x + 70.0 * x * x - 20.0 * x ** 3)
    s1 = 140.0 * x ** 3 * (1.0 - x) ** 3 / w
    s2 = 420.0 * x * x * (1.0 - x) ** 2 * (1.0 - 2.0 * x) / (w * w)
    return _MC2 * s0, _MC2 * s1, _MC2 * s2


def _zero_charge_dn_deta(T):
    """(dn_net/deta)_T at zero charge (the slope a1 of n_net = a1 zeta + ...)."""
    return electron_gas(-_MC2 / (_K * T), T, pairs=True).dn_deta


def build_table(pairs, dlogn=0.05, dlogT=0.05, fd_step=1e-2, table_range=TABLE_RANGE):
    """Node data of the free-energy table.

    Parameters
    ----------
    pairs : bool
        Include thermally created positrons.
    dlogn, dlogT : float, optional
        Grid spacing in log10 n and log10 T (dex) over :data:`TABLE_RANGE`.
    fd_step : float, optional
        Step in v = ln T of the five-point differences for F_uuv, F_uvv, F_uuvv.
    table_range : tuple of 4 floats, optional
        (log10 n_min, log10 n_max, log10 T_min, log10 T_max) of the grid; a range of :data:`ONSET_TABLES`
        (with the spacings of :data:`ONSET_TABLES`) gives a fine pair table of the pair onset.

    Returns
    -------
    dict
        ``u``, ``v`` (node coordinates, ln n and ln T), ``G`` (9, nu, nv): g, g_u,
        g_v, g_uu, g_vv, g_uv, g_uuv, g_uvv, g_uuvv of g = f - f_0 (with pairs,
        of h = f - f_0 + m_e c^2 n); ``F0`` (3, nv):
        f_0, f_0v, f_0vv; ``ln_n_plus`` (nu, nv, float32, floored at ln 1e-300);
        ``pairs``.

    Raises
    ------
    ValueError
        If a spacing or the step is not positive.

    Notes
    -----
    F_u = n f_n, F_uu = n f_n + n^2 f_nn, F_v = T f_T, F_vv = T f_T + T^2 f_TT,
    F_uv = n T f_nT, with f_n = eta k T, f_nn = k T (deta/dn)_T,
    f_nT = k eta + k T (deta/dT)_n, f_T = -S, f_TT = -(dE/dT)_n / T.
    F_uuv, F_uvv, F_uuvv are fourth-order central differences in v of F_uu and
    F_uv (error ~ step^4, rounding ~ 1e-13 / step^2).

    References
    ----------
    Timmes, F. X. & Swesty, F. D. 2000, ApJS 126, 501.
    """
    for name, val in (("dlogn", dlogn), ("dlogT", dlogT), ("fd_step", fd_step)):
        if not (np.isfinite(val) and val > 0):
            raise ValueError(f"{name} must be a positive number, got {val!r}")
    ln0, ln1, lt0, lt1 = table_range
    if not (ln0 < ln1 and lt0 < lt1):
        raise ValueError(f"table_range must be (log n_min, log n_max, log T_min, log T_max) "
                         f"with min < max, got {table_range!r}")
    u, v = _grid(dlogn, dlogT, table_range)
    U, V = np.meshgrid(u, v, indexing="ij")
    n, T = np.exp(U).ravel(), np.exp(V).ravel()
    s, Fu, Fuu, Fuv = _node_quantities(n, T, pairs)
    uu = {0: Fuu}
    uv = {0: Fuv}
    for k in (-2, -1, 1, 2):
        _, _, uu[k], uv[k] = _node_quantities(n, T * np.exp(k * fd_step), pairs)
    h = fd_step
    d1 = lambda a: (a[-2] - 8.0 * a[-1] + 8.0 * a[1] - a[2]) / (12.0 * h)               # noqa: E731
    d2 = lambda a: (-a[-2] + 16.0 * a[-1] - 30.0 * a[0] + 16.0 * a[1] - a[2]) / (12.0 * h * h)  # noqa: E731
    Fuuv, Fuvv, Fuuvv = d1(uu), d1(uv), d2(uu)

    P0, S0, C0 = _zero_charge(T, pairs)
    P, S, dE_dT_n = s.gas.P, s.gas.S, s.dE_dT_n
    kT = _K * T
    # direct differences from the zero-charge gas (exact where zeta is not small)
    dP = P - P0
    Gv = -T * (S - S0)
    Gvv = Gv - T * (dE_dT_n - C0)
    if pairs:
        # zeta = eta + 1/theta loses digits when small; there n = a1 zeta + a3 zeta^3 with
        # a1 = dn/deta at zero charge, so zeta = 3 n / (2 a1 + dn/deta) + O(zeta^5)
        dn_deta = 1.0 / s.deta_dn
        a1 = np.full_like(n, np.inf)
        ok = P0 > 0
        a1[ok] = _zero_charge_dn_deta(T[ok])
        zeta = s.eta + _MC2 / kT
        zeta = np.where(zeta < 1e-3, 3.0 * n / (2.0 * a1 + dn_deta), zeta)
        small = (zeta < _ZETA_SERIES) & ok
        dP = np.where(small, kT * (0.625 * zeta * n - 0.125 * zeta * zeta * dn_deta), dP)
        Gv = np.where(small, 0.75 * Fuv - 0.125 * Fuuv, Gv)
        Gvv = np.where(small, 0.75 * Fuvv - 0.125 * Fuuvv, Gvv)
    G = Fu - dP
    if pairs:
        # h = g + c(T) n with c = m_e c^2 wherever pairs can exist: the term linear in n is
        # restored analytically at evaluation, so that F_uu - F_u = h_uu - h_u keeps its
        # digits when n << n_pairs (there h_u = n k T zeta, with zeta from the series above)
        c0, c1, c2 = _rest_shift(V.ravel())
        Hu = np.where(zeta < 1e-3, n * kT * zeta, Fu + c0 * n)
        G, Fuu, Gv, Gvv = Hu - dP, Hu + n * n * kT * s.deta_dn, Gv + c1 * n, Gvv + c2 * n
        Fuv, Fuuv, Fuvv, Fuuvv = Fuv + c1 * n, Fuuv + c1 * n, Fuvv + c2 * n, Fuuvv + c2 * n
        Fu = Hu
    shape = (u.size, v.size)
    Gall = np.stack([G, Fu, Gv, Fuu, Gvv, Fuv, Fuuv, Fuvv, Fuuvv]).reshape((9,) + shape)
    # the zero-charge gas varies like exp(-m_e c^2/kT) at the pair onset: a fine 1-D grid is cheap
    v0 = np.linspace(v[0], v[-1], (v.size - 1) * _F0_REFINE + 1)
    Tv = np.exp(v0)
    P0v, S0v, C0v = _zero_charge(Tv, pairs)
    F0 = np.stack([-P0v, -Tv * S0v, -Tv * S0v - Tv * C0v])
    lnp = np.log(np.maximum(s.gas.n_plus, 1e-300)).reshape(shape).astype(np.float32)
    return {"u": u, "v": v, "G": Gall, "F0": F0, "ln_n_plus": lnp, "pairs": np.array(pairs)}


# ----------------------------------------------------------------------------- loading

class _Table:
    """Per-cell monomial coefficients of the free energy (and of ln n_plus)."""

    def __init__(self, data):
        u, v = data["u"], data["v"]
        self.pairs = bool(data["pairs"])
        self.u0, self.v0 = float(u[0]), float(v[0])
        self.hu, self.hv = float(u[1] - u[0]), float(v[1] - v[0])
        self.nu, self.nv = u.size, v.size
        G = data["G"]
        # the pair-free table holds f - f_0(n) (see degenerate_free_energy); f_0 is added at evaluation
        self.split = not self.pairs
        if self.split:
            G = _split_degenerate(G, u, v)
        hu, hv = self.hu, self.hv
        # data per (u-order p, v-order q), scaled to the unit cell
        order = {(0, 0): 0, (1, 0): 1, (0, 1): 2, (2, 0): 3, (0, 2): 4, (1, 1): 5,
                 (2, 1): 6, (1, 2): 7, (2, 2): 8}
        D = np.empty((self.nu - 1, self.nv - 1, 6, 6))
        for (p, q), idx in order.items():
            a = G[idx] * (hu ** p * hv ** q)
            for ci in (0, 1):
                for cj in (0, 1):
                    D[:, :, 3 * ci + p, 3 * cj + q] = a[ci:ci + self.nu - 1, cj:cj + self.nv - 1]
        # C[k, l] = sum_ab M[k, a] D[a, b] M[l, b]; stored as (cell, l, k) so that the
        # v-contraction reads contiguous rows
        C = np.einsum("ka,xyab,lb->xylk", _M5, D, _M5, optimize=True)
        # (36, cells), row 6 l + k: one take along axis 1 gathers every coefficient of a chunk
        # of points, and each row of the gathered block is one contiguous coefficient array
        self.CT = np.ascontiguousarray(C.reshape(-1, 36).T)
        F0 = data["F0"]
        self.m0 = (F0.shape[1] - 1) // (self.nv - 1)
        h0 = hv / self.m0
        self.h0 = h0
        d0 = np.stack([F0[0][:-1], h0 * F0[1][:-1], h0 * h0 * F0[2][:-1],
                       F0[0][1:], h0 * F0[1][1:], h0 * h0 * F0[2][1:]], axis=1)
        self.C0 = d0 @ _M5.T                                       # (cells of the 1-D grid, 6)
        if self.pairs:
            L = data["ln_n_plus"].astype(float)
            # bicubic Hermite with centred-difference slopes (display quantity only)
            Lu = np.gradient(L, axis=0)
            Lv = np.gradient(L, axis=1)
            Luv = np.gradient(Lu, axis=1)
            D3 = np.empty((self.nu - 1, self.nv - 1, 4, 4))
            for (p, q), a in {(0, 0): L, (1, 0): Lu, (0, 1): Lv, (1, 1): Luv}.items():
                for ci in (0, 1):
                    for cj in (0, 1):
                        D3[:, :, 2 * ci + p, 2 * cj + q] = a[ci:ci + self.nu - 1, cj:cj + self.nv - 1]
            C3 = np.einsum("ka,xyab,lb->xylk", _M3, D3, _M3, optimize=True)
            # float32: n_plus is a display quantity, and half the bytes halve the gather
            self.C3T = np.ascontiguousarray(C3.reshape(-1, 16).T, dtype=np.float32)

    def locate(self, u, v):
        x = (u - self.u0) / self.hu
        y = (v - self.v0) / self.hv
        i = np.clip(np.floor(x).astype(np.intp), 0, self.nu - 2)
        j = np.clip(np.floor(y).astype(np.intp), 0, self.nv - 2)
        return i * (self.nv - 1) + j, j, x - i, y - j


@functools.lru_cache(maxsize=len(_FILES))
def _table(pairs):
    path = _DATA / _FILES[pairs]
    if not path.exists():
        raise FileNotFoundError(f"{path} is missing; create it with `python -m thermoplane.physics.electron_table --build`")
    with np.load(path) as data:
        return _Table({k: data[k] for k in data.files})


# ----------------------------------------------------------------------------- evaluation

#: points per chunk of the Horner evaluation: the chunk's working arrays stay in cache
_CHUNK = 8192


def _horner_v(G, z, orders):
    """v-contraction of gathered coefficients G (6[l], 6[k], m) at z: rows sum_l G[l] d^q z^l, q < orders."""
    a = [G[5].copy()] + [np.zeros_like(G[5]) for _ in range(orders - 1)]
    for l in range(4, -1, -1):
        # simultaneous Horner for the polynomial and its derivatives (highest order first)
        for q in range(orders - 1, 0, -1):
            a[q] *= z
            a[q] += q * a[q - 1] if q > 1 else a[q - 1]
        a[0] *= z
        a[0] += G[l]
    return a


def _horner_u(a, z, orders):
    """u-contraction of rows a (6[k], m) at z: d^p/dz^p sum_k a[k] z^k for p < orders."""
    r = [a[5].copy()] + [np.zeros_like(z) for _ in range(orders - 1)]
    for k in range(4, -1, -1):
        for p in range(orders - 1, 0, -1):
            r[p] *= z
            r[p] += p * r[p - 1] if p > 1 else r[p - 1]
        r[0] *= z
        r[0] += a[k]
    return r


def _interpolate(tab, u, v, light=False):
    """Interpolated h and its derivatives on the unit cell, chunk by chunk.

    Returns rows (G, G_u, G_uu, G_v, G_uv, G_vv) in cell units (light: G_u, G_uu only),
    the ln n_plus interpolant (pairs tables, not light) and the cell data.
    """
    cell, j, zu, zv = tab.locate(u, v)
    N = u.size
    rows = 2 if light else 6
    R = np.empty((rows, N))
    L = np.empty(N) if (tab.pairs and not light) else None
    for s in range(0, N, _CHUNK):
        sl = slice(s, s + _CHUNK)
        c, wu, wv = cell[sl], zu[sl], zv[sl]
        G = np.take(tab.CT, c, axis=1).reshape(6, 6, -1)
        if light:
            a0 = _horner_v(G, wv, 1)[0]
            _, R[0, sl], R[1, sl] = _horner_u(a0, wu, 3)
            continue
        a0, a1, a2 = _horner_v(G, wv, 3)
        R[0, sl], R[1, sl], R[2, sl] = _horner_u(a0, wu, 3)
        R[3, sl], R[4, sl] = _horner_u(a1, wu, 2)
        R[5, sl] = _horner_u(a2, wu, 1)[0]
        if L is not None:
            G3 = np.take(tab.C3T, c, axis=1).reshape(4, 4, -1).astype(float)
            b = G3[3].copy()
            for l in (2, 1, 0):
                b *= wv
                b += G3[l]
            t = b[3].copy()
            for k in (2, 1, 0):
                t *= wu
                t += b[k]
            L[sl] = t
    return R, L


def _eta_light(tab, n, T):
    """eta and (deta/dn)_T only, by the same arithmetic as :func:`_evaluate` (bit-identical)."""
    u, v = np.log(n), np.log(T)
    R, _ = _interpolate(tab, u, v, light=True)
    hu = tab.hu
    Gu, Guu = R[0] / hu, R[1] / (hu * hu)
    if tab.split:
        _, f0u, f0uu = degenerate_free_energy(n, value=False)
        Gu, Guu = Gu + f0u, Guu + f0uu
    kT = _K * T
    c0 = _rest_shift(v)[0] if tab.pairs else 0.0
    return (Gu / n - c0) / kT, (Guu - Gu) / (n * n * kT)


def _evaluate(tab, n, T):
    """ElectronState fields (flat) from the interpolant, all points inside the table."""
    u, v = np.log(n), np.log(T)
    R, L = _interpolate(tab, u, v)
    hu, hv = tab.hu, tab.hv
    G, Gu, Guu = R[0], R[1] / hu, R[2] / (hu * hu)
    Gv, Guv, Gvv = R[3] / hv, R[4] / (hu * hv), R[5] / (hv * hv)
    if tab.split:
        # the T = 0 part depends on n only: the T-derivatives (S, c_V) are the table's thermal part alone
        f0, f0u, f0uu = degenerate_free_energy(n)
        G, Gu, Guu = G + f0, Gu + f0u, Guu + f0uu
    kT = _K * T
    if tab.pairs:
        # 1-D zero-charge part, depends on v only, on its finer grid
        y0 = (v - tab.v0) / tab.h0
        j0 = np.clip(np.floor(y0).astype(np.intp), 0, tab.C0.shape[0] - 1)
        h0 = tab.h0
        F0, F0v, F0vv = _horner_u(tab.C0[j0].T, y0 - j0, 3)
        F0v /= h0
        F0vv /= h0 * h0
        # the table holds h = g + c(T) n; the c terms restore g analytically, and
        # the differences below are arranged so that they cancel exactly where they should
        c0, c1, c2 = _rest_shift(v)
    else:
        F0 = F0v = F0vv = 0.0
        c0 = c1 = c2 = 0.0
    eta = (Gu / n - c0) / kT
    P = (Gu - G) - F0
    Fv = Gv - c1 * n + F0v
    S = -Fv / T
    E = (G - Gv) - (c0 - c1) * n + (F0 - F0v)
    dP_dn = (Guu - Gu) / n
    dP_dT_n = (Guv - Gv - F0v) / T
    dE_dn = (Gu - Guv) / n - (c0 - c1)
    dE_dT_n = -((Gvv - Gv) - (c2 - c1) * n + (F0vv - F0v)) / T
    deta_dn = (Guu - Gu) / (n * n * kT)
    deta_dT = (Guv - Gu - (c1 - c0) * n) / (n * kT * T)
    if tab.pairs:
        n_plus = np.exp(L)
        n_plus[L < -690.0] = 0.0             # the floor of the stored table
    else:
        n_plus = np.zeros_like(n)
    dn_deta = 1.0 / deta_dn
    dP_deta = dP_dn * dn_deta
    dE_deta = dE_dn * dn_deta
    gas = ElectronGas(
        n_minus=n + n_plus, n_plus=n_plus, n_net=n.copy(), P=P, E=E, S=S,
        dn_deta=dn_deta, dn_dT=-deta_dT * dn_deta,
        dP_deta=dP_deta, dP_dT=dP_dT_n - dP_deta * deta_dT,
        dE_deta=dE_deta, dE_dT=dE_dT_n - dE_deta * deta_dT,
    )
    return ElectronState(gas=gas, eta=eta, dP_dn=dP_dn, dP_dT_n=dP_dT_n, dE_dn=dE_dn,
                         dE_dT_n=dE_dT_n, deta_dn=deta_dn, deta_dT=deta_dT)


def _sommerfeld_state(n, T):
    """The pair-free gas from f_0(n) plus the Sommerfeld thermal part (:func:`_sommerfeld_nodes`), for
    degenerate points below the table in T: the exact quadrature's entropy there is a difference of numbers
    ~eta^2 larger than S (c_V < 0 came out at 1e9 g/cm^3 below 1e3 K). Same formulas as :func:`_evaluate`."""
    u, v = np.log(n), np.log(T)
    G9 = _sommerfeld_nodes(u, v)
    f0, f0u, f0uu = degenerate_free_energy(n)
    G, Gu, Gv, Guu, Gvv, Guv = G9[0] + f0, G9[1] + f0u, G9[2], G9[3] + f0uu, G9[4], G9[5]
    kT = _K * T
    dP_dn = (Guu - Gu) / n
    dP_dT_n = (Guv - Gv) / T
    dE_dn = (Gu - Guv) / n
    dE_dT_n = -(Gvv - Gv) / T
    deta_dn = (Guu - Gu) / (n * n * kT)
    deta_dT = (Guv - Gu) / (n * kT * T)
    dn_deta = 1.0 / deta_dn
    dP_deta = dP_dn * dn_deta
    dE_deta = dE_dn * dn_deta
    gas = ElectronGas(n_minus=n.copy(), n_plus=np.zeros_like(n), n_net=n.copy(), P=Gu - G, E=G - Gv, S=-Gv / T,
                      dn_deta=dn_deta, dn_dT=-deta_dT * dn_deta, dP_deta=dP_deta, dP_dT=dP_dT_n - dP_deta * deta_dT,
                      dE_deta=dE_deta, dE_dT=dE_dT_n - dE_deta * deta_dT)
    return ElectronState(gas=gas, eta=Gu / (n * kT), dP_dn=dP_dn, dP_dT_n=dP_dT_n, dE_dn=dE_dn,
                         dE_dT_n=dE_dT_n, deta_dn=deta_dn, deta_dT=deta_dT)


def _cold_degenerate(n, T):
    """Points below the table in T whose electrons are degenerate beyond ETA_SOMMERFELD (with a margin:
    eta is mu_0 / kT to a part in eta^2), where the Sommerfeld state replaces the quadrature."""
    _, f0u, _ = degenerate_free_energy(n, value=False)
    return (T < 10.0 ** TABLE_RANGE[2]) & (f0u / (n * _K * T) > 1.05 * ETA_SOMMERFELD)


def _outside_state(n, T, pairs):
    """The gas outside the table: the Sommerfeld state where cold and degenerate (no positrons can exist
    there), else the exact quadrature."""
    cold = _cold_degenerate(n, T)
    if not cold.any():
        return electron_state(n, T, pairs)
    return _merge(n.size, [(cold, _sommerfeld_state), (~cold, lambda a, b: electron_state(a, b, pairs))], n, T)


def _inside(n, T):
    ln0, ln1, lt0, lt1 = TABLE_RANGE
    return (n >= 10.0 ** ln0) & (n <= 10.0 ** ln1) & (T >= 10.0 ** lt0) & (T <= 10.0 ** lt1)


def in_table(n_net, T):
    """Mask of the points that :func:`table_state` interpolates (the rest go to the exact solver).

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3.
    T : array_like
        Temperature, K.  Broadcasts against ``n_net``.

    Returns
    -------
    ndarray of bool
        True where 1e4 <= n_net <= 1e37 cm^-3 and 1e3 <= T <= 10^11.5 K (:data:`TABLE_RANGE`).

    Notes
    -----
    Non-finite or non-positive values give False (table_state rejects them).
    """
    n, T = np.broadcast_arrays(np.asarray(n_net, dtype=float), np.asarray(T, dtype=float))
    with np.errstate(invalid="ignore"):
        return _inside(n, T)


def table_state(n_net, T, pairs=True):
    """Electron–positron gas at given net electron density and temperature, from the table.

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3 (> 0), e.g. rho ye / m_u.
    T : array_like
        Temperature, K (> 0).  Broadcasts against ``n_net``.
    pairs : bool, optional
        Include thermally created positrons.

    Returns
    -------
    ElectronState
        Same fields and meaning as :func:`thermoplane.physics.electrons.electron_state`.
        Inside :data:`TABLE_RANGE` every thermodynamic field is a derivative of
        one interpolated free energy; n_plus and n_minus come from a separate
        bicubic table of ln n_plus (for display).  Outside, the exact solver, except
        below the table in T where eta > 1.05 ETA_SOMMERFELD: there f_0(n) plus the
        Sommerfeld thermal part to (kT)^4 (the quadrature's entropy loses its digits).

    Raises
    ------
    ValueError
        If n_net or T is not finite and positive, or pairs is not a bool.
    FileNotFoundError
        If the table file is missing (build it with ``python -m thermoplane.physics.electron_table --build``).

    Notes
    -----
    With F(u, v) = f the interpolated free energy, u = ln n, v = ln T:
    eta = F_u/(n k T), P = F_u - F, S = -F_v/T, E = F - F_v,
    (dP/dn)_T = (F_uu - F_u)/n, (dP/dT)_n = (F_uv - F_v)/T,
    (dE/dn)_T = (F_u - F_uv)/n, (dE/dT)_n = -(F_vv - F_v)/T,
    (deta/dn)_T = (F_uu - F_u)/(n^2 k T), (deta/dT)_n = (F_uv - F_u)/(n k T^2);
    (eta, T)-partials by dn/deta = 1/(deta/dn), (dX/dT)_eta = (dX/dT)_n - (dX/deta) (deta/dT)_n.
    Hence (dE/dn)_T = (E + P - T (dP/dT)_n)/n and (dS/dT)_n = (dE/dT)_n / T
    hold to rounding.

    References
    ----------
    Timmes, F. X. & Swesty, F. D. 2000, ApJS 126, 501.
    """
    if not isinstance(pairs, (bool, np.bool_)):
        raise ValueError(f"pairs must be True or False, got {pairs!r}")
    pairs = bool(pairs)
    shape, n, T = _prepare(n_net, T)
    inside = _inside(n, T)
    if inside.all():
        st = _evaluate(_table(pairs), n, T)
    else:
        st = _merge(n.size, [(inside, lambda a, b: _evaluate(_table(pairs), a, b)),
                             (~inside, lambda a, b: _outside_state(a, b, pairs))], n, T)
    return _reshape(st, shape)


def table_eta(n_net, T, pairs=True):
    """Only eta and (deta/dn)_T of :func:`table_state`, at about half its cost (for root finding).

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3 (> 0).
    T : array_like
        Temperature, K (> 0).  Broadcasts against ``n_net``.
    pairs : bool, optional
        Include thermally created positrons.

    Returns
    -------
    eta, deta_dn : ndarray
        Bit-identical to ``table_state(n_net, T, pairs).eta`` and ``.deta_dn``.

    Raises
    ------
    ValueError
        If n_net or T is not finite and positive, or pairs is not a bool.

    Notes
    -----
    eta = F_u/(n k T), (deta/dn)_T = (F_uu - F_u)/(n^2 k T): only the value in v of the
    interpolant and its first two u-derivatives are formed.
    """
    if not isinstance(pairs, (bool, np.bool_)):
        raise ValueError(f"pairs must be True or False, got {pairs!r}")
    pairs = bool(pairs)
    shape, n, T = _prepare(n_net, T)
    inside = _inside(n, T)
    if inside.all():
        eta, deta_dn = _eta_light(_table(pairs), n, T)
    else:
        eta, deta_dn = np.empty(n.size), np.empty(n.size)
        if inside.any():
            eta[inside], deta_dn[inside] = _eta_light(_table(pairs), n[inside], T[inside])
        out = ~inside
        st = _outside_state(n[out], T[out], pairs)
        eta[out], deta_dn[out] = st.eta, st.deta_dn
    return eta.reshape(shape), deta_dn.reshape(shape)


def _reshape(st, shape):
    rs = lambda a: a.reshape(shape)  # noqa: E731
    return ElectronState(gas=ElectronGas(*[rs(a) for a in st.gas]),
                         **{k: rs(getattr(st, k)) for k in ElectronState._fields[1:]})


def _merge(size, parts, n, T):
    """One flat ElectronState from functions applied on disjoint masks covering all points."""
    done = [(mask, fun(n[mask], T[mask])) for mask, fun in parts if mask.any()]
    gas = {}
    for name in ElectronGas._fields:
        out = np.empty(size)
        for mask, st_ in done:
            out[mask] = getattr(st_.gas, name)
        gas[name] = out
    rest = {}
    for name in ElectronState._fields[1:]:
        out = np.empty(size)
        for mask, st_ in done:
            out[mask] = getattr(st_, name)
        rest[name] = out
    return ElectronState(gas=ElectronGas(**gas), **rest)


def _onset_masks(n, T):
    """Disjoint masks of the points inside each table of :data:`ONSET_TABLES` (T bands half-open)."""
    ln, lt = np.log10(n), np.log10(T)
    masks = []
    for i, (name, (ln0, ln1, lt0, lt1), _) in enumerate(ONSET_TABLES):
        top = (lt <= lt1) if i == len(ONSET_TABLES) - 1 else (lt < lt1)
        masks.append((name, (ln >= ln0) & (ln <= ln1) & (lt >= lt0) & top))
    return masks


def onset_state(n_net, T):
    """Electron–positron gas at the pair onset, from the fine pair tables of :data:`ONSET_TABLES`.

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3 (> 0).
    T : array_like
        Temperature, K (> 0).  Broadcasts against ``n_net``.

    Returns
    -------
    ElectronState
        As :func:`table_state` with pairs; within 1e-6 (relative; eta relative to max(|eta|, 1))
        of :func:`thermoplane.physics.electrons.electron_state` in P, E and eta wherever positrons exceed
        1e-10 of the net electrons (tests/physics/test_electron_table.py).  Points outside every
        fine table go to the exact quadrature.

    Raises
    ------
    ValueError
        If n_net or T is not finite and positive.
    FileNotFoundError
        If a table file is missing (build it with ``python -m thermoplane.physics.electron_table --build``).

    Notes
    -----
    Same free-energy interpolation as :func:`table_state` (Timmes & Swesty 2000), on grids
    finer in T: the zero-charge pair gas varies like exp(-2/theta) in T.

    References
    ----------
    Timmes, F. X. & Swesty, F. D. 2000, ApJS 126, 501.
    """
    shape, n, T = _prepare(n_net, T)
    parts = []
    rest = np.ones(n.size, dtype=bool)
    for name, mask in _onset_masks(n, T):
        parts.append((mask, lambda a, b, name=name: _evaluate(_table(name), a, b)))
        rest &= ~mask
    parts.append((rest, lambda a, b: electron_state(a, b, True)))
    return _reshape(_merge(n.size, parts, n, T), shape)


def main(argv=None):
    """``python -m thermoplane.physics.electron_table --build``: write both table files."""
    ap = argparse.ArgumentParser(prog="python -m thermoplane.physics.electron_table", description=main.__doc__)
    ap.add_argument("--build", action="store_true", help="compute and write the .npz tables")
    ap.add_argument("--dlogn", type=float, default=0.05)
    ap.add_argument("--dlogT", type=float, default=0.05)
    ap.add_argument("--out", default=str(_DATA))
    ap.add_argument("--only", choices=("main", "onset"), default=None,
                    help="build only the two main tables or only the fine pair-onset tables")
    args = ap.parse_args(argv)
    if not args.build:
        ap.print_help()
        return 0
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    jobs = []
    if args.only != "onset":
        jobs += [(pairs, dict(dlogn=args.dlogn, dlogT=args.dlogT)) for pairs in (True, False)]
    if args.only != "main":
        jobs += [(name, dict(dlogn=dn, dlogT=dT, fd_step=_ONSET_FD_STEP, table_range=rng))
                 for name, rng, (dn, dT) in ONSET_TABLES]
    for key, kw in jobs:
        data = build_table(key is not False, **kw)
        np.savez_compressed(out / _FILES[key], **data)
        print(f"wrote {out / _FILES[key]} ({(out / _FILES[key]).stat().st_size / 1e6:.1f} MB)")
    _table.cache_clear()
    return 0


if __name__ == "__main__":
    sys.exit(main())
