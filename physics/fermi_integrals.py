"""Generalized Fermi–Dirac integrals of arbitrary degeneracy and relativity.

Which question this module answers: how many electrons (and how much pressure
and energy) does a Fermi gas hold at a given degeneracy parameter ``eta`` and
relativity parameter ``theta = k T / (m_e c^2)``?  Everything in
:mod:`thermoplane.physics.electrons` is built from the three integrals evaluated here.

The integral (Cox & Giuli 1968, *Principles of Stellar Structure*, ch. 24)

    F_k(eta, theta) = int_0^inf x^k sqrt(1 + theta x / 2) / (exp(x - eta) + 1) dx

is not normalised by Gamma(k + 1).  It is computed with a fixed number of
Gauss nodes split over pieces whose end points follow ``eta``, in the spirit of
Aparicio (1998, ApJS 117, 627) and Gong, Zejda, Däppen & Aparicio (2001,
Comput. Phys. Commun. 136, 294); the cut points, substitutions and node counts
here are this module's own and were tuned against mpmath quadrature.
"""

import numpy as np
from scipy.special import roots_laguerre, roots_legendre

__all__ = ["fermi_dirac", "fermi_dirac_set", "FDSet", "N_NODES"]

# --- quadrature layout -------------------------------------------------------
# Pieces, in x:  [0, x_1] | [x_1, x_2] | ... | [x_m, inf), with
#   x_1 = max(eta + _OFF[0], _S[0]),  x_i = max(eta + _OFF[i-1], x_(i-1) + _S[i-1]).
# The first piece uses x = b sinh^2(u), b = min(2/theta, x_1), split in halves of
# u: it removes the x^k branch point at 0 and, because b <= 2/theta, keeps the
# branch point of sqrt(1 + theta x / 2) at Im u = pi/2 whatever theta is.  The
# pieces next to eta are short because the Fermi factor has poles at
# eta +- i pi; far below eta the factor is 1 - O(e^(x - eta)) and the pieces
# grow.  The tail is Gauss–Laguerre in x - x_m, where the Fermi factor is a
# smooth e^-(x - eta).  Offsets and node counts were tuned against mpmath.
_OFF = (-20.0, -10.0, -4.0, 0.0, 4.0)
_S = (1.0, 2.0, 2.0, 2.0, 4.0)
_N_U = 2                  # pieces [0, x_1] (in two halves of u) and [x_1, x_2] use u
_N_FIRST = (14, 14, 12)
_N_MID = (8, 10, 10)
_N_TAIL = 8


def _legendre01(n):
    x, w = roots_legendre(n)
    return (x + 1.0) / 2.0, w / 2.0


_GL_U = [_legendre01(n) for n in _N_FIRST]
_GL_X = [_legendre01(n) for n in _N_MID]
_LAG_X, _LAG_W = roots_laguerre(_N_TAIL)
#: total number of integrand evaluations per (eta, theta) point
N_NODES = sum(_N_FIRST) + sum(_N_MID) + _N_TAIL

_BLOCK = 2048   # points per block: keeps the (points, nodes) work arrays in cache


def _nodes(eta, theta):
    """Abscissae x and weights W (Jacobian included), shape (P, N_NODES), and tail flag."""
    P = eta.shape[0]
    e = eta[:, None]
    bp = [np.maximum(e + _OFF[0], _S[0])]
    for off, gap in zip(_OFF[1:], _S[1:]):
        bp.append(np.maximum(e + off, bp[-1] + gap))
    X = np.empty((P, N_NODES))
    W = np.empty((P, N_NODES))
    # pieces in u, x = b sinh^2 u, up to bp[_N_U - 1]
    with np.errstate(divide="ignore"):
        a = 2.0 / theta[:, None]                      # inf at theta = 0 is wanted
    b = np.minimum(a, bp[0])
    uend = [np.arcsinh(np.sqrt(x / b)) for x in bp[:_N_U]]
    u_lo = [0.5 * uend[0], 0.0 * b] + uend[:-1]
    u_lo[0], u_lo[1] = u_lo[1], u_lo[0]
    u_hi = [0.5 * uend[0]] + uend
    j = 0
    for (xi, wi), ulo, uhi in zip(_GL_U, u_lo, u_hi):
        du = uhi - ulo
        u = ulo + du * xi
        ex = np.exp(u)
        sh = 0.5 * (ex - 1.0 / ex)
        ch = 0.5 * (ex + 1.0 / ex)
        n = xi.size
        X[:, j:j + n] = b * sh * sh
        W[:, j:j + n] = du * wi * 2.0 * b * sh * ch
        j += n
    for (xi, wi), lo, hi in zip(_GL_X, bp[_N_U - 1:-1], bp[_N_U:]):
        n = xi.size
        L = hi - lo
        X[:, j:j + n] = lo + L * xi
        W[:, j:j + n] = L * wi
        j += n
    X[:, j:] = bp[-1] + _LAG_X
    W[:, j:] = _LAG_W * np.exp(_LAG_X)   # undo the Laguerre weight: Fermi factor is explicit
    return X, W


class FDSet(tuple):
    """Result of :func:`fermi_dirac_set`: arrays of shape (3, ...) for k = 1/2, 3/2, 5/2.

    Fields ``F``, ``F_eta``, ``F_theta``, ``F_eta2`` (second derivative in
    eta, or None when not asked for).
    """

    __slots__ = ()

    def __new__(cls, F, F_eta, F_theta, F_eta2):
        return tuple.__new__(cls, (F, F_eta, F_theta, F_eta2))

    F = property(lambda self: self[0])
    F_eta = property(lambda self: self[1])
    F_theta = property(lambda self: self[2])
    F_eta2 = property(lambda self: self[3])


def _set_block(eta, theta, second, out):
    X, W = _nodes(eta, theta)
    y = X - eta[:, None]
    # exp(-|y|) never overflows; the Fermi factor is t/(1+t) above eta, 1/(1+t) below
    t = np.exp(-np.abs(y))
    f = np.where(y > 0.0, t, 1.0) / (1.0 + t)
    s2 = 1.0 + (0.5 * theta)[:, None] * X
    s = np.sqrt(s2)
    base = W * np.sqrt(X) * s * f                 # x^(1/2) sqrt(1 + theta x/2) f dx
    g1 = 1.0 - f
    d1 = base * g1                                 # d/deta of f is f (1 - f)
    c = base * X / (4.0 * s2)                      # d/dtheta of sqrt(...) is x / (4 sqrt(...))
    F, Fe, Ft, Fe2 = out
    for m, arr in ((0, base), (1, d1), (2, c)):
        dest = (F, Fe, Ft)[m]
        dest[0] = arr.sum(axis=1)
        arr = arr * X
        dest[1] = arr.sum(axis=1)
        arr *= X
        dest[2] = arr.sum(axis=1)
    if second:
        d2 = d1 * (1.0 - 2.0 * f)                  # d^2/deta^2 of f is f (1-f)(1-2f)
        Fe2[0] = d2.sum(axis=1)
        d2 *= X
        Fe2[1] = d2.sum(axis=1)
        d2 *= X
        Fe2[2] = d2.sum(axis=1)


def fermi_dirac_set(eta, theta, second=False):
    """F_1/2, F_3/2, F_5/2 and their partial derivatives in one pass.

    The three integrals share every exponential: the nodes and Fermi factors
    are computed once, only the power of x differs.

    Parameters
    ----------
    eta : array_like
        Degeneracy parameter (chemical potential without rest mass over kT).
    theta : array_like
        k T / (m_e c^2), >= 0.  Broadcasts against ``eta``.
    second : bool, optional
        Also return the second derivative in eta (used by Halley steps).

    Returns
    -------
    FDSet
        ``F``, ``F_eta`` (partial in eta at fixed theta), ``F_theta`` (partial
        in theta at fixed eta), ``F_eta2`` (or None); each of shape
        ``(3,) + broadcast shape``, index 0, 1, 2 for k = 1/2, 3/2, 5/2.

    Raises
    ------
    ValueError
        If theta is negative or any input is not finite.

    Notes
    -----
    F_k = int_0^inf x^k sqrt(1 + theta x/2) f dx, f = 1/(exp(x - eta) + 1);
    dF_k/deta = int x^k sqrt(.) f (1 - f) dx;
    dF_k/dtheta = int x^(k+1) / (4 sqrt(.)) f dx  (Cox & Giuli 1968, ch. 24).
    Piecewise Gauss–Legendre / Gauss–Laguerre quadrature after Aparicio
    (1998, ApJS 117, 627); ``N_NODES`` integrand evaluations per point.

    References
    ----------
    Cox, J. P. & Giuli, R. T. 1968, Principles of Stellar Structure, ch. 24.
    Aparicio, J. M. 1998, ApJS 117, 627.
    Gong, Z., Zejda, L., Däppen, W. & Aparicio, J. M. 2001, Comput. Phys. Commun. 136, 294.
    """
    eta, theta = _check(eta, theta)
    shape = eta.shape
    e = eta.ravel()
    th = theta.ravel()
    P = e.size
    F = np.empty((3, P))
    Fe = np.empty((3, P))
    Ft = np.empty((3, P))
    Fe2 = np.empty((3, P)) if second else None
    # Blocks of points keep the (points, nodes) work arrays in cache; this is
    # memory blocking of one vectorised evaluation, not a loop over points.
    for i in range(0, P, _BLOCK):
        sl = slice(i, i + _BLOCK)
        _set_block(e[sl], th[sl], second,
                   (F[:, sl], Fe[:, sl], Ft[:, sl], None if Fe2 is None else Fe2[:, sl]))
    out = [F, Fe, Ft, Fe2]
    out = [None if a is None else a.reshape((3,) + shape) for a in out]
    return FDSet(*out)


def _check(eta, theta):
    eta = np.asarray(eta, dtype=float)
    theta = np.asarray(theta, dtype=float)
    if not np.all(np.isfinite(eta)):
        raise ValueError(f"eta must be finite, got {eta[~np.isfinite(eta)].ravel()[:3]}")
    if not np.all(np.isfinite(theta)) or np.any(theta < 0):
        bad = theta[~(np.isfinite(theta) & (theta >= 0))].ravel()[:3]
        raise ValueError(f"theta must be finite and >= 0, got {bad}")
    return np.broadcast_arrays(eta, theta)


def fermi_dirac(k, eta, theta):
    """Generalized Fermi–Dirac integral F_k(eta, theta), not normalised by Gamma(k+1).

    Parameters
    ----------
    k : float
        Index, k > -1.  k = 1/2, 3/2, 5/2 (and other half-integers and
        integers >= 0) reach 1e-9 relative accuracy; other k lose accuracy
        because x^k then has a branch point at x = 0 that the nodes do not remove.
    eta : array_like
        Degeneracy parameter.
    theta : array_like
        k T / (m_e c^2), >= 0.

    Returns
    -------
    ndarray
        F_k with the broadcast shape of ``eta`` and ``theta``.  Values below
        about 1e-308 (eta below about -700) underflow to 0.

    Raises
    ------
    ValueError
        If k <= -1, theta < 0 or an input is not finite.

    Notes
    -----
    F_k(eta, theta) = int_0^inf x^k sqrt(1 + theta x / 2) / (exp(x - eta) + 1) dx
    (Cox & Giuli 1968, ch. 24).  At theta = 0 it equals -Gamma(k+1) Li_{k+1}(-e^eta).

    References
    ----------
    Cox, J. P. & Giuli, R. T. 1968, Principles of Stellar Structure, ch. 24.
    Aparicio, J. M. 1998, ApJS 117, 627.

    Examples
    --------
    >>> round(float(fermi_dirac(0.5, 0.0, 0.0)), 10)   # (1 - 2^-1/2) Gamma(3/2) zeta(3/2)
    0.6780938951
    """
    k = float(k)
    if not k > -1.0:
        raise ValueError(f"k must be > -1, got {k}")
    eta, theta = _check(eta, theta)
    shape = eta.shape
    e = eta.ravel()
    th = theta.ravel()
    out = np.empty(e.size)
    for i in range(0, e.size, _BLOCK):
        sl = slice(i, i + _BLOCK)
        X, W = _nodes(e[sl], th[sl])
        y = X - e[sl, None]
        t = np.exp(-np.abs(y))
        f = np.where(y > 0.0, t, 1.0) / (1.0 + t)
        out[sl] = np.sum(W * X ** k * np.sqrt(1.0 + (0.5 * th[sl])[:, None] * X) * f, axis=1)
    return out.reshape(shape)
