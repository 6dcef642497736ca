"""Electron–positron gas of arbitrary degeneracy and relativity.

Which question this module answers: given the net electron density and the
temperature, what are the chemical potential, number densities, pressure,
energy and entropy of the electrons and of the thermally created pairs, and
how do they change with density and temperature?

Formulas: Cox & Giuli (1968, *Principles of Stellar Structure*, ch. 24), with
theta = k T / (m_e c^2) and the generalized Fermi–Dirac integrals F_k of
:mod:`thermoplane.physics.fermi_integrals`:

    n_- = (8 pi sqrt2 / h^3) (m_e c)^3 theta^(3/2) [F_1/2 + theta F_3/2]
    P_- = (16 pi sqrt2 / (3 h^3)) m_e^4 c^5 theta^(5/2) [F_3/2 + theta/2 F_5/2]
    E_- = (8 pi sqrt2 / h^3) m_e^4 c^5 theta^(5/2) [F_3/2 + theta F_5/2]

and positrons the same with eta_+ = -eta - 2/theta.  E also holds the rest
mass 2 m_e c^2 n_+ of the created pairs, so that S = (E + P - eta k T n_net)/T.

Electrons and positrons are integrated on the same quadrature nodes, so the
net density is formed from f_- - f_+ = f_- (1 - f_+) (1 - exp(-2 zeta)),
zeta = eta + 1/theta, which has no cancellation even where pairs outnumber
the net electrons by many orders of magnitude.
"""

from typing import NamedTuple

import numpy as np

from . import constants as const
from .fermi_integrals import _BLOCK, _nodes

__all__ = ["ElectronGas", "ElectronState", "electron_gas", "solve_eta", "electron_state"]

_MC2 = const.m_e * const.c ** 2
#: (8 pi sqrt2 / h^3) (m_e c)^3, cm^-3
_CN = 8.0 * np.pi * np.sqrt(2.0) * (const.m_e * const.c / const.h) ** 3
#: (8 pi / 3) (m_e c / h)^3: electrons per cm^3 at x_F = 1 (T = 0)
_CX = const.n_e_relativistic


class ElectronGas(NamedTuple):
    """Electron–positron gas at given eta and T (cgs; derivatives at fixed other variable)."""

    n_minus: np.ndarray
    n_plus: np.ndarray
    n_net: np.ndarray
    P: np.ndarray
    E: np.ndarray
    S: np.ndarray
    dn_deta: np.ndarray
    dn_dT: np.ndarray
    dP_deta: np.ndarray
    dP_dT: np.ndarray
    dE_deta: np.ndarray
    dE_dT: np.ndarray


class ElectronState(NamedTuple):
    """Electron–positron gas at given n_net and T: :class:`ElectronGas` fields plus eta and
    total derivatives at fixed n_net (``_n``) or fixed T."""

    gas: ElectronGas
    eta: np.ndarray
    dP_dn: np.ndarray
    dP_dT_n: np.ndarray
    dE_dn: np.ndarray
    dE_dT_n: np.ndarray
    deta_dn: np.ndarray
    deta_dT: np.ndarray


def _fermi(y):
    """f = 1/(e^y + 1) and 1 - f without overflow or cancellation."""
    t = np.exp(-np.abs(y))
    pos = y > 0.0
    d = 1.0 / (1.0 + t)
    f = np.where(pos, t, 1.0) * d
    g = np.where(pos, 1.0, t) * d
    return f, g


def _integrals(eta, zeta, theta, pairs):
    """All integrals needed, on common nodes laid out for the electron eta.

    Returns a dict of arrays (P,): for electrons (m) and positrons (p) the
    integrals I_k = int x^k s f, J_k = int x^k s f(1-f), K_k = int x^(k+1)/(4s) f
    for k = 1/2, 3/2, 5/2 (index 0..2), and N_k = int x^k s (f_- - f_+) for k = 1/2, 3/2.
    """
    P = eta.size
    names = ["Im", "Jm", "Km", "Ip", "Jp", "Kp"]
    out = {n: np.zeros((3, P)) for n in names}
    out["N"] = np.zeros((2, P))
    for i in range(0, P, _BLOCK):
        sl = slice(i, i + _BLOCK)
        e, z, th = eta[sl], zeta[sl], theta[sl]
        X, W = _nodes(e, th)
        y = X - e[:, None]
        fm, gm = _fermi(y)
        s2 = 1.0 + (0.5 * th)[:, None] * X
        s = np.sqrt(s2)
        wg = W * np.sqrt(X) * s
        q = X / (4.0 * s2)
        base = wg * fm
        for name, arr in (("Im", base), ("Jm", base * gm), ("Km", base * q)):
            dest = out[name]
            dest[0, sl] = arr.sum(axis=1)
            arr = arr * X
            dest[1, sl] = arr.sum(axis=1)
            arr *= X
            dest[2, sl] = arr.sum(axis=1)
        if pairs:
            yp = y + 2.0 * z[:, None]
            fp, gp = _fermi(yp)
            bp = wg * fp
            for name, arr in (("Ip", bp), ("Jp", bp * gp), ("Kp", bp * q)):
                dest = out[name]
                dest[0, sl] = arr.sum(axis=1)
                arr = arr * X
                dest[1, sl] = arr.sum(axis=1)
                arr *= X
                dest[2, sl] = arr.sum(axis=1)
            # f_- - f_+ = f_- (1 - f_+) (1 - e^(-2 zeta)): no cancellation
            dn = wg * fm * gp * (-np.expm1(-2.0 * z))[:, None]
            out["N"][0, sl] = dn.sum(axis=1)
            out["N"][1, sl] = (dn * X).sum(axis=1)
        else:
            out["N"][0, sl] = out["Im"][0, sl]
            out["N"][1, sl] = out["Im"][1, sl]
    return out


def _species(I, J, K, theta):
    """n, P, E (kinetic) and their partials in eta (own eta) and theta, per species."""
    th = theta
    r15, r25 = th ** 1.5, th ** 2.5
    cP = 2.0 / 3.0 * _CN * _MC2
    cE = _CN * _MC2
    n = _CN * r15 * (I[0] + th * I[1])
    P = cP * r25 * (I[1] + 0.5 * th * I[2])
    E = cE * r25 * (I[1] + th * I[2])
    n_e = _CN * r15 * (J[0] + th * J[1])
    P_e = cP * r25 * (J[1] + 0.5 * th * J[2])
    E_e = cE * r25 * (J[1] + th * J[2])
    # d/dtheta at fixed eta: product rule; K_k = dF_k/dtheta
    n_t = _CN * (1.5 * th ** 0.5 * (I[0] + th * I[1]) + r15 * (K[0] + I[1] + th * K[1]))
    P_t = cP * (2.5 * th ** 1.5 * (I[1] + 0.5 * th * I[2]) + r25 * (K[1] + 0.5 * I[2] + 0.5 * th * K[2]))
    E_t = cE * (2.5 * th ** 1.5 * (I[1] + th * I[2]) + r25 * (K[1] + I[2] + th * K[2]))
    return n, P, E, n_e, P_e, E_e, n_t, P_t, E_t


def _gas(eta, zeta, T, pairs):
    """Forward evaluation on flat arrays; eta and zeta = eta + 1/theta carried separately."""
    theta = const.k_B * T / _MC2
    it = _integrals(eta, zeta, theta, pairs)
    n_m, P_m, E_m, n_me, P_me, E_me, n_mt, P_mt, E_mt = _species(it["Im"], it["Jm"], it["Km"], theta)
    n_net = _CN * theta ** 1.5 * (it["N"][0] + theta * it["N"][1])
    dth_dT = theta / T
    if pairs:
        n_p, P_p, E_p, n_pe, P_pe, E_pe, n_pt, P_pt, E_pt = _species(it["Ip"], it["Jp"], it["Kp"], theta)
        # eta_+ = -eta - 2/theta: d eta_+/d eta = -1, d eta_+/d theta = 2/theta^2
        de = 2.0 / theta ** 2
        n_pt = n_pt + n_pe * de
        P_pt = P_pt + P_pe * de
        E_pt = E_pt + E_pe * de
        n_pe, P_pe, E_pe = -n_pe, -P_pe, -E_pe
        rest = 2.0 * _MC2
        E_p = E_p + rest * n_p
        E_pe = E_pe + rest * n_pe
        E_pt = E_pt + rest * n_pt
    else:
        z = np.zeros_like(theta)
        n_p = P_p = E_p = n_pe = P_pe = E_pe = n_pt = P_pt = E_pt = z
    P = P_m + P_p
    E = E_m + E_p
    S = (E + P - eta * const.k_B * T * n_net) / T
    return ElectronGas(
        n_minus=n_m, n_plus=n_p, n_net=n_net, P=P, E=E, S=S,
        dn_deta=n_me - n_pe, dn_dT=(n_mt - n_pt) * dth_dT,
        dP_deta=P_me + P_pe, dP_dT=(P_mt + P_pt) * dth_dT,
        dE_deta=E_me + E_pe, dE_dT=(E_mt + E_pt) * dth_dT,
    )


def _check_T(T):
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise ValueError(f"T must be finite and > 0 K, got {T[~(np.isfinite(T) & (T > 0))].ravel()[:3]}")
    return T


def electron_gas(eta, T, pairs=True):
    """Electron–positron gas at given degeneracy parameter and temperature.

    Parameters
    ----------
    eta : array_like
        Electron chemical potential without rest mass, over kT.
    T : array_like
        Temperature, K (> 0).  Broadcasts against ``eta``.
    pairs : bool, optional
        Include thermally created positrons (eta_+ = -eta - 2/theta).

    Returns
    -------
    ElectronGas
        n_minus, n_plus, n_net (cm^-3), P (dyn cm^-2), E (erg cm^-3, kinetic
        energy of e- and e+ plus 2 m_e c^2 n_plus), S (erg cm^-3 K^-1) and the
        partials dn_deta, dn_dT, dP_deta, dP_dT, dE_deta, dE_dT (of n_net, P, E,
        each at fixed other variable).

    Raises
    ------
    ValueError
        If T is not finite and positive, or eta is not finite.

    Notes
    -----
    n_- = (8 pi sqrt2/h^3)(m_e c)^3 theta^(3/2) [F_1/2 + theta F_3/2],
    P_- = (16 pi sqrt2/(3h^3)) m_e^4 c^5 theta^(5/2) [F_3/2 + theta/2 F_5/2],
    E_- = (8 pi sqrt2/h^3) m_e^4 c^5 theta^(5/2) [F_3/2 + theta F_5/2],
    S = (E + P - eta k T n_net) / T  (Cox & Giuli 1968, ch. 24).

    References
    ----------
    Cox, J. P. & Giuli, R. T. 1968, Principles of Stellar Structure, ch. 24.
    """
    eta = np.asarray(eta, dtype=float)
    T = _check_T(T)
    if not np.all(np.isfinite(eta)):
        raise ValueError(f"eta must be finite, got {eta[~np.isfinite(eta)].ravel()[:3]}")
    eta, T = np.broadcast_arrays(eta, T)
    shape = eta.shape
    e, t = eta.ravel(), T.ravel()
    theta = const.k_B * t / _MC2
    res = _gas(e, e + 1.0 / theta, t, pairs)
    return ElectronGas(*[a.reshape(shape) for a in res])


def _guess(n, theta, pairs):
    """Starting eta and zeta = eta + 1/theta from the non-degenerate (with pairs) and T = 0 limits."""
    # non-degenerate: n_net = 2 N_p sinh(zeta), N_p = C theta^1.5 B(theta) e^(-1/theta);
    # B is a rough fit of int x^1/2 (1+theta x) sqrt(1+theta x/2) e^-x dx (limits 0.886, sqrt2 theta^1.5)
    B = 0.8862 * (1.0 + 1.6 * theta) ** 1.5
    lnr = np.log(n / (_CN * theta ** 1.5 * B))
    if pairs:
        L = lnr - np.log(2.0) + 1.0 / theta
        big = L > 0
        Lc = np.where(big, L, 0.0)
        corr = np.log1p(np.sqrt(1.0 + np.exp(-2.0 * Lc)))
        zeta_nd = np.where(big, L + corr, np.arcsinh(np.exp(np.minimum(L, 0.0))))
        eta_nd = np.where(big, lnr - np.log(2.0) + corr, zeta_nd - 1.0 / theta)
    else:
        eta_nd = lnr
        zeta_nd = eta_nd + 1.0 / theta
    xF = np.cbrt(n / _CX)
    eps_F = xF * xF / (np.sqrt(1.0 + xF * xF) + 1.0)
    eta_deg = eps_F / theta
    deg = lnr > 1.0
    eta0 = np.where(deg, eta_deg, eta_nd)
    zeta0 = np.where(deg, eta_deg + 1.0 / theta, zeta_nd)
    return eta0, zeta0


def _solve(n, T, pairs, tol=1e-13, maxiter=60):
    theta = const.k_B * T / _MC2
    eta, zeta = _guess(n, theta, pairs)
    lnn = np.log(n)
    for _ in range(maxiter):
        g = _gas(eta, zeta, T, pairs)
        r = np.log(g.n_net) - lnn
        if np.all(np.abs(r) < tol):
            return eta, g
        slope = g.dn_deta / g.n_net                     # d ln n_net / d eta > 0
        step = -r / slope
        # keep the step inside a trust region: at most a factor ~e in n per step
        # in the non-degenerate regime, and half of eta where degenerate
        lim = np.maximum(2.0, 0.5 * np.abs(eta))
        step = np.clip(step, -lim, lim)
        # zeta must stay positive (n_net > 0): halve toward 0 instead of crossing it
        if pairs:
            step = np.where(zeta + step > 0, step, -0.5 * zeta)
        eta = eta + step
        zeta = zeta + step
    raise RuntimeError(f"solve_eta did not converge: max |ln n error| = {np.max(np.abs(r)):.3e}")


def _prepare(n_net, T):
    n = np.asarray(n_net, dtype=float)
    if not np.all(np.isfinite(n) & (n > 0)):
        raise ValueError(f"n_net must be finite and > 0 cm^-3, got {n[~(np.isfinite(n) & (n > 0))].ravel()[:3]}")
    T = _check_T(T)
    n, T = np.broadcast_arrays(n, T)
    return n.shape, n.ravel(), T.ravel()


def solve_eta(n_net, T, pairs=True):
    """Degeneracy parameter eta from charge neutrality n_minus - n_plus = n_net.

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3 (> 0), e.g. rho ye / m_u.
    T : array_like
        Temperature, K (> 0).
    pairs : bool, optional
        Include positrons.

    Returns
    -------
    ndarray
        eta with the broadcast shape; n_net(eta) matches the input to ~1e-13 relative.

    Raises
    ------
    ValueError
        If n_net or T is not finite and positive.
    RuntimeError
        If Newton iterations do not converge (not seen in the tested domain).

    Notes
    -----
    Newton iterations on ln n_net(eta) with a trust region, started from the
    non-degenerate (with pairs: n_net = 2 N sinh zeta) or T = 0 (Fermi
    energy) limit.  zeta = eta + 1/theta is carried alongside eta so that the
    pair-dominated case keeps full relative precision.

    References
    ----------
    Cox, J. P. & Giuli, R. T. 1968, Principles of Stellar Structure, ch. 24.
    """
    shape, n, T = _prepare(n_net, T)
    eta, _ = _solve(n, T, pairs)
    return eta.reshape(shape)


def electron_state(n_net, T, pairs=True):
    """Electron–positron gas at given net electron density and temperature.

    Parameters
    ----------
    n_net : array_like
        Net electron density, cm^-3 (> 0).
    T : array_like
        Temperature, K (> 0).
    pairs : bool, optional
        Include positrons.

    Returns
    -------
    ElectronState
        ``gas`` (:class:`ElectronGas` at the solved eta), ``eta`` and the total
        derivatives dP_dn, dE_dn (fixed T), dP_dT_n, dE_dT_n (fixed n_net),
        deta_dn, deta_dT.

    Raises
    ------
    ValueError
        If n_net or T is not finite and positive.

    Notes
    -----
    Implicit differentiation of n_net(eta, T) = const:
    (d eta/dT)_n = -(dn/dT)_eta / (dn/deta)_T, (d eta/dn)_T = 1/(dn/deta)_T,
    (dX/dT)_n = (dX/dT)_eta + (dX/deta)_T (d eta/dT)_n for X = P, E.

    References
    ----------
    Cox, J. P. & Giuli, R. T. 1968, Principles of Stellar Structure, ch. 24.
    """
    shape, n, T = _prepare(n_net, T)
    eta, g = _solve(n, T, pairs)
    deta_dn = 1.0 / g.dn_deta
    deta_dT = -g.dn_dT * deta_dn
    rs = lambda a: a.reshape(shape)  # noqa: E731
    return ElectronState(
        gas=ElectronGas(*[rs(a) for a in g]), eta=rs(eta),
        dP_dn=rs(g.dP_deta * deta_dn), dP_dT_n=rs(g.dP_dT + g.dP_deta * deta_dT),
        dE_dn=rs(g.dE_deta * deta_dn), dE_dT_n=rs(g.dE_dT + g.dE_deta * deta_dT),
        deta_dn=rs(deta_dn), deta_dT=rs(deta_dT),
    )
