"""Thermal neutrino losses: how fast does matter at (rho, T) cool by neutrinos?

The question this module answers: how many erg per gram per second leave
stellar matter as neutrino pairs, through each of the four thermal processes,

- ``"pair"``: pair annihilation, e⁻ e⁺ -> ν ν̄;
- ``"photo"``: the photo-neutrino process, γ e⁻ -> e⁻ ν ν̄;
- ``"plasma"``: plasmon decay, γ* -> ν ν̄;
- ``"bremsstrahlung"``: electron–nucleus bremsstrahlung, e⁻ (Z, A) -> e⁻ (Z, A) ν ν̄,

and which of them dominates? ``"total"`` is their sum.

Sources
-------
Pair, photo and plasma: the analytic fitting formulae of Itoh, Hayashi,
Nishikawa & Kohyama (1996, ApJS 102, 411; "Itoh 96" below), sec. 2 (pair),
sec. 3 (photo), sec. 4 (plasma), in the Weinberg–Salam theory with
sin²θ_W = 0.2319 and n = 2 neutrino flavours besides ν_e. The formulae and
coefficients below were written down from memory of that paper.

Checked against the paper text: none of them. The paper's manuscript TeX is
stored in the search tool's "pages" corpus (the AAS CD-ROM copy, .../apjs/v102/
p411/text/tex/manuscri.tex), but every query returns only its opening: title,
authors and the first lines of the abstract, which confirm the title, the
processes covered and that the results are given as fitting formulae and
tables. No equation, coefficient or table of the paper could be read, so no
coefficient was changed and equation numbers are still cited by section.

Checked instead against values derived independently in
tests/physics/test_neutrinos.py:

- pair: against the emission rate integrated there from first principles
  (Fermi–Dirac e⁻ and e⁺, the standard-model cross-section) at any degeneracy
  and relativity: the fit is within 0.86–1.11 of it on a grid of 31 points
  10^8.7–10^11 K, rho/mu_e <= 10⁸ g cm⁻³ where pairs give >= 50 % of the
  losses; 12–14 % low near 10^10.2 K (the upper band of the fit). Denser it is
  worse: 1.41 at 10¹⁰ K and rho/mu_e = 10^9.5, 0.5 at 10^10.9 K and 10¹²
  (measured, not asserted). The two temperature bands of the pair fit, fitted
  separately, join at 10¹⁰ K to 6 % at rho/mu_e <= 10⁶ but not above (a factor
  1.4 at 10⁹, 2.1 at 10¹⁰): there the lower band agrees with the integral and
  the upper one does not. Above 10^10.3 K the upper band is the right one (the
  lower band, extended, drifts to 1.37 at 10¹¹ K while the upper stays within
  0.91–1.05 at rho/mu_e <= 10⁸), so the recalled upper-band coefficients
  (b_1, b_2, b_3, c for T >= 10¹⁰ K) behave like a fit of ~10 % accuracy; a
  misremembered one near the band edge cannot be ruled out without the paper;
- pair of non-relativistic, non-degenerate pairs to 2 %;
- plasma: against the rate integrated there over the plasmon spectrum with the
  dispersion relations of Braaten & Segel (1993, Phys. Rev. D 48, 1478; their
  self-energies written from memory, checked there in the classical limit):
  the fit (with its f_xy factor) is within 0.963–1.013 of it at 13 points
  10⁷–10¹⁰ K, gamma = 0.3–10.5, where plasmons give >= 50 % of the losses
  (without f_xy it would be 0.46–1.16); classical plasmons to 3 %, the
  plasma-frequency constants to 1 %, the exponential death where
  hbar omega_p >> kT;
- photo: the 36 recalled coefficients of the two upper temperature bands, fitted
  separately by Itoh 96, join at 10⁹ K to 3e-4 (a misremembered leading
  coefficient would break that); the n_e T⁸ law of cool, dilute matter.

Bremsstrahlung: Itoh 96 (sec. 5) gives fits for the liquid-metal and crystal
phases with per-nucleus tables of coefficients; they could neither be recalled
reliably nor read (see above), so they are not used. This module uses
instead the closed formula for degenerate, relativistic electrons scattered by
nuclei of Haensel, Kaminker & Yakovlev (1996, A&A 314, 328) in the form of
Kaminker et al. (1999, A&A 343, 1009; formula and prefactor from memory):
Q = 8 π G_F² Z² e⁴ C₊² (kT)⁶ n_i L / (567 ħ⁹ c⁸), with the Coulomb logarithm
L = 1 (the published fits give L between about 0.3 and 1 in the liquid, from
memory), i.e. an upper estimate. One phase serves for both: "generally,
bremsstrahlung in the solid phase does not differ significantly from that in
the liquid" (Kaminker et al. 1999, abstract, read in the pages corpus; their
analysis covers 10⁹ <~ rho <~ 1.5e14 g cm⁻³, so below 10⁹ the formula is
extrapolated). It is valid for degenerate, relativistic electrons; where the
electrons are not relativistic (x_F < 1, rho/mu_e < 9.74e5 g cm⁻³) or not
degenerate (kT above the Fermi kinetic energy of the T = 0 gas) it is set to
zero here (our choice, no source; it leaves a step in the bremsstrahlung map at
x_F = 1, and left of it, below about 10⁷ K, the plasma process is shown as
dominant where the bremsstrahlung of non-relativistic electrons may be larger).

Validity (Itoh 96, as recalled; not checked against the paper text): pair 10⁸ K <= T <= 10¹¹ K; photo and plasma
10⁷ K <= T <= 10¹¹ K; all for 1 <= rho/mu_e <= 10¹⁴ g cm⁻³ (photo to 10¹¹).
Outside, the formulae are extrapolated (the photo coefficients below 10⁷ K
are held at their 10⁷ K values); the results stay finite and >= 0 on the whole
plane. Recombination neutrinos (Itoh 96, sec. 6) are left out: they matter
only in a narrow band of partial ionization where the other losses are tiny.
mu_e is that of the fully ionized composition.
"""

from __future__ import annotations

import math

import numpy as np

from . import constants as const
from .composition import Composition

__all__ = ["PROCESSES", "PROCESS_LABELS", "epsilon", "epsilon_parts", "dominant_process",
           "SIN2_THETA_W", "N_FLAVOURS", "LAMBDA_TEMPERATURE"]

#: The four thermal processes, in the order of the dominant-process codes.
PROCESSES = ("pair", "photo", "plasma", "bremsstrahlung")
#: Words for legends.
PROCESS_LABELS = {
    "pair": "pair annihilation",
    "photo": "photo-neutrino",
    "plasma": "plasmon decay",
    "bremsstrahlung": "bremsstrahlung",
    "total": "total",
}

#: Weak mixing angle used by Itoh 96 (sec. 1).
SIN2_THETA_W = 0.2319
#: Neutrino flavours other than ν_e (Itoh 96, sec. 1: n = 2).
N_FLAVOURS = 2
#: lambda = T / LAMBDA_TEMPERATURE = kT / (m_e c²) (Itoh 96, sec. 2).
LAMBDA_TEMPERATURE = 5.9302e9

# Itoh 96, sec. 1: C_V = 1/2 + 2 sin²θ_W, C_A = 1/2 for ν_e; C'_V = 1 - C_V, C'_A = 1 - C_A.
_CV = 0.5 + 2.0 * SIN2_THETA_W
_CA = 0.5
_CVP = 1.0 - _CV
_CAP = 1.0 - _CA
_SUM_PLUS = (_CV**2 + _CA**2) + N_FLAVOURS * (_CVP**2 + _CAP**2)
_SUM_MINUS = (_CV**2 - _CA**2) + N_FLAVOURS * (_CVP**2 - _CAP**2)
_SUM_VECTOR = _CV**2 + N_FLAVOURS * _CVP**2

# Photo-neutrino Fourier coefficients, Itoh 96 sec. 3 (their table of c_ik, d_ik; from memory, the
# table could not be read), per temperature range: (c row i=0..2 with k=0..6), (d row i=0..2 with k=1..5), c constant.
_PHOTO = {
    # 10^7 K <= T < 10^8 K, tau = log10(T / 10^7), exponent c = 0.5654 + tau
    0: (((1.008e11, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0),
         (8.156e10, 9.728e8, -3.806e9, -4.384e9, -5.774e9, -5.249e9, -5.153e9),
         (1.067e11, -9.782e9, -7.193e9, -6.936e9, -6.893e9, -7.041e9, -7.193e9)),
        ((0.0, 0.0, 0.0, 0.0, 0.0),
         (-1.879e10, -9.667e9, -5.602e9, -3.370e9, -1.825e9),
         (-2.919e10, -1.185e10, -7.270e9, -4.222e9, -1.560e9))),
    # 10^8 K <= T < 10^9 K, tau = log10(T / 10^8), c = 1.5654
    1: (((9.889e10, -4.524e8, -6.088e6, 4.269e7, 5.172e7, 4.910e7, 4.388e7),
         (1.813e11, -7.556e9, -3.304e9, -1.031e9, -1.764e9, -1.851e9, -1.928e9),
         (9.750e10, 3.484e10, 5.199e9, -1.695e9, -2.865e9, -3.395e9, -3.418e9)),
        ((-1.135e8, 1.256e8, 5.149e7, 3.436e7, 1.005e7),
         (1.652e9, -3.119e9, -1.839e9, -1.458e9, -8.956e8),
         (-1.549e10, -9.338e9, -5.899e9, -3.035e9, -1.598e9))),
    # 10^9 K <= T, tau = log10(T / 10^9), c = 1.5654
    2: (((9.581e10, 4.107e8, 2.305e8, 2.236e8, 1.580e8, 2.165e8, 1.721e8),
         (1.459e12, 1.314e11, -1.169e11, -1.765e11, -1.867e11, -1.983e11, -1.896e11),
         (2.424e11, -3.669e9, -8.691e9, -7.967e9, -7.932e9, -7.987e9, -8.333e9)),
        ((4.724e8, 2.976e8, 2.242e8, 7.937e7, 4.859e7),
         (-7.094e11, -3.697e11, -2.189e11, -1.273e11, -5.705e10),
         (-2.254e10, -1.551e10, -7.793e9, -4.489e9, -2.185e9))),
}
_PHOTO_C = np.array([[r for r in _PHOTO[j][0]] for j in range(3)])    # (range, i, k=0..6)
_PHOTO_D = np.array([[r for r in _PHOTO[j][1]] for j in range(3)])    # (range, i, k=1..5)

# Kaminker et al. (1999), C₊² = sum over flavours of (C_V² + C_A²) as they use it.
_C_PLUS2 = 1.675
#: Coulomb logarithm of the bremsstrahlung formula (upper end of the published range).
BREMS_COULOMB_LOG = 1.0


def _check_positive(name: str, value) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr) | (arr <= 0)
    if np.any(bad):
        raise ValueError(f"{name} must be finite and > 0; got {arr[bad].flat[0]!r}")
    return arr


def _variables(rho, T, comp):
    """lambda, nu = rho/mu_e, xi of Itoh 96 (sec. 2)."""
    lam = T / LAMBDA_TEMPERATURE
    nu = rho / comp.mu_e
    xi = np.cbrt(nu / 1e9) / lam
    return lam, nu, xi


def _log_pair(T, lam, nu, xi, xi2=None, xi3=None):
    """ln Q_pair (erg cm^-3 s^-1), Itoh 96 sec. 2.

    Coefficients from memory, not checked against the paper text (only its opening is readable);
    checked against a first-principles integral (module docstring).
    """
    hi = T >= 1e10
    a0, a1, a2 = 6.002e19, 2.084e20, 1.872e21
    b1 = np.where(hi, 1.2383, 9.383e-1)
    b2 = np.where(hi, -8.141e-1, -4.141e-1)
    b3 = np.where(hi, 0.0, 5.829e-2)
    c = np.where(hi, 4.9924, 5.5924)
    # f_pair = (a0 + a1 xi + a2 xi^2) e^{-c xi} / (xi^3 + b1/lam + b2/lam^2 + b3/lam^3)
    # xi2, xi3: xi**2 and xi**3 when the caller has them (shared with the photo-neutrino fit: the cube is a pow)
    xi2 = xi**2 if xi2 is None else xi2
    xi3 = xi**3 if xi3 is None else xi3
    den = xi3 + (b1 * lam**2 + b2 * lam + b3) / lam**3
    log_f = np.log(a0 + a1 * xi + a2 * xi2) - c * xi - np.log(den)
    # g(lambda) = 1 - 13.04 lam^2 + 133.5 lam^4 + 1534 lam^6 + 918.6 lam^8
    l2 = lam * lam
    g = 1.0 - 13.04 * l2 + 133.5 * l2**2 + 1534.0 * l2**3 + 918.6 * l2**4
    # q_pair = (10.7480 lam^2 + 0.3967 lam^0.5 + 1.0050)^-1 [1 + nu (7.692e7 lam^3 + 9.715e6 lam^0.5)^-1]^-0.3
    sq = np.sqrt(lam)
    q = np.exp(-0.3 * np.log1p(nu / (7.692e7 * lam * l2 + 9.715e6 * sq))) / (10.7480 * l2 + 0.3967 * sq + 1.0050)
    # Q_pair = 1/2 [sum+] {1 + (sum-/sum+) q_pair} g(lam) e^{-2/lam} f_pair
    return (math.log(0.5 * _SUM_PLUS) + np.log1p(_SUM_MINUS / _SUM_PLUS * q) + np.log(g)
            - 2.0 / lam + log_f)


def _photo_coefficients(T):
    """a_0, a_1, a_2 and the exponent constant c of f_photo at temperatures T (1-D), Itoh 96 sec. 3."""
    band = np.where(T < 1e8, 0, np.where(T < 1e9, 1, 2))
    tau = np.log10(T) - (7.0 + band)
    tau = np.where(band == 0, np.maximum(tau, 0.0), tau)     # below 1e7 K: hold the 1e7 K coefficients
    c_exp = np.where(band == 0, 0.5654 + tau, 1.5654)
    C = _PHOTO_C[band]                                       # (n, 3, 7)
    D = _PHOTO_D[band]                                       # (n, 3, 5)
    k = np.arange(1, 6)
    phase = (5.0 * math.pi / 3.0) * k * tau[:, None]          # (n, 5)
    # a_i = c_i0/2 + c_i6/2 cos(10 pi tau) + sum_k=1..5 [c_ik cos(5 pi k tau/3) + d_ik sin(5 pi k tau/3)]
    a = (0.5 * C[..., 0] + 0.5 * C[..., 6] * np.cos(10.0 * math.pi * tau)[:, None]
         + np.einsum("nik,nk->ni", C[..., 1:6], np.cos(phase))
         + np.einsum("nik,nk->ni", D, np.sin(phase)))
    lam = T / LAMBDA_TEMPERATURE
    q_lam = 0.666 * (1.0 + 2.045 * lam) ** -2.066
    poly = 1.875e8 * lam + 1.653e8 * lam**2 + 8.449e8 * lam**3 - 1.604e8 * lam**4
    return a, c_exp, q_lam, poly


def _log_photo(T, lam, nu, xi, xi2=None, xi3=None):
    """ln Q_photo (erg cm^-3 s^-1), Itoh 96 sec. 3 (from memory, not checked against the paper text)."""
    # the coefficients depend on T alone: computed once per distinct temperature (a map passes T as one
    # column, so once per row)
    T_unique, inverse = np.unique(T, return_inverse=True)
    a_u, c_u, q_u, poly_u = _photo_coefficients(T_unique)
    inverse = inverse.reshape(np.shape(T))
    a = a_u[inverse]
    c_exp, q_lam, poly = c_u[inverse], q_u[inverse], poly_u[inverse]
    xi2 = xi**2 if xi2 is None else xi2
    xi3 = xi**3 if xi3 is None else xi3
    num = a[..., 0] + a[..., 1] * xi + a[..., 2] * xi2
    den = xi3 + 6.290e-3 / lam + 7.483e-3 / lam**2 + 3.061e-4 / lam**3
    # q_photo = 0.666 (1 + 2.045 lam)^-2.066 [1 + nu / (1.875e8 lam + 1.653e8 lam^2 + 8.449e8 lam^3 - 1.604e8 lam^4)]^-1
    q = q_lam / (1.0 + nu / poly)
    # Q_photo = 1/2 [sum+] {1 - (sum-/sum+) q_photo} nu lam^5 f_photo, f_photo = num e^{-c xi} / den
    with np.errstate(divide="ignore"):
        log_num = np.log(np.maximum(num, 0.0))
    return (math.log(0.5 * _SUM_PLUS) + np.log1p(-_SUM_MINUS / _SUM_PLUS * q) + np.log(nu)
            + 5.0 * np.log(lam) + log_num - c_exp * xi - np.log(den))


def _log_plasma(T, lam, nu):
    """ln Q_plasma (erg cm^-3 s^-1), Itoh 96 sec. 4 (from memory, not checked against the paper text)."""
    # gamma^2 = 1.1095e11 nu / (T^2 [1 + (1.019e-6 nu)^(2/3)]^(1/2)) = (hbar omega_0 / kT)^2
    gamma = np.sqrt(1.1095e11 * nu / (T * T * np.sqrt(1.0 + np.cbrt(1.019e-6 * nu) ** 2)))
    sg = np.sqrt(gamma)
    g2 = gamma * gamma
    f_T = 2.4 + 0.6 * sg + 0.51 * gamma + 1.25 * gamma * sg
    f_L = (8.6 * g2 + 1.35 * g2 * gamma * sg) / (225.0 - 17.0 * gamma + g2)
    # f_xy correction, applied for |x| <= 0.7 and y >= 0
    log_2nu = np.log10(2.0 * nu)
    log_T = np.log10(T)
    x = (17.5 + log_2nu - 3.0 * log_T) / 6.0
    y = (-24.5 + log_2nu + 3.0 * log_T) / 6.0
    # evaluated only where it applies (a band of the plane): the same numbers, fewer of them
    where = (np.abs(x) <= 0.7) & (y >= 0.0)
    x, y = np.broadcast_arrays(x, y)
    x, y = x[where], y[where]
    corr = (0.39 - 1.25 * x - 0.35 * np.sin(4.5 * x) - 0.3 * np.exp(-(4.5 * x + 0.9) ** 2))
    shape = np.exp(-(np.minimum(0.0, y - 1.6 + 1.25 * x) / (0.57 - 0.25 * x)) ** 2)
    log_f_xy = np.zeros(where.shape)                  # ln f_xy: 0 (f_xy = 1) outside the band
    log_f_xy[where] = np.log(1.05 + corr * shape)
    # Q_plasma = (C_V^2 + n C'_V^2) 3.00e21 lam^9 gamma^6 e^{-gamma} (f_T + f_L) f_xy
    return (math.log(_SUM_VECTOR * 3.00e21) + 9.0 * np.log(lam) + 6.0 * np.log(gamma) - gamma
            + np.log(f_T + f_L) + log_f_xy)


def _brems_per_gram(rho, T, comp):
    """epsilon_brems (erg g^-1 s^-1): Kaminker et al. (1999) degenerate-electron formula, L = 1."""
    # Q = 8 pi G_F^2 Z^2 e^4 C+^2 (kT)^6 n_i L / (567 hbar^9 c^8); per gram n_i Z^2 / rho = sum X Z^2 / (A m_u)
    G_F = 1.1663787e-5 / (1e9 * const.eV) ** 2 * (const.hbar * const.c) ** 3      # erg cm^3
    pref = (8.0 * math.pi * G_F**2 * const.e_esu**4 * _C_PLUS2 / (567.0 * const.hbar**9 * const.c**8)
            * BREMS_COULOMB_LOG * float(np.sum(comp.X * comp.Z**2 / comp.A)) / const.m_u)
    kT = const.k_B * T
    # degenerate where kT < E_F (kinetic, T = 0 gas of rho/mu_e): x_F^3 = rho/mu_e / 9.739e5
    x_F = np.cbrt(rho / comp.mu_e / (const.n_e_relativistic * const.m_u))
    e_F = const.m_e_c2 * (np.sqrt(1.0 + x_F * x_F) - 1.0)
    return np.where((kT < e_F) & (x_F >= 1.0), pref * kT**6, 0.0)


def epsilon_parts(rho, T, comp: Composition) -> dict[str, np.ndarray]:
    """Every neutrino loss at once, erg g^-1 s^-1: keys of :data:`PROCESSES` and ``"total"``.

    Parameters
    ----------
    rho : array_like
        Density, g cm^-3, > 0.
    T : array_like
        Temperature, K, > 0; broadcasts against ``rho``.
    comp : Composition
        Gives mu_e (fully ionized) and sum X Z² / A (bremsstrahlung).

    Returns
    -------
    dict of str -> ndarray
        Finite, >= 0, broadcast shape; ``total`` is the sum of the four parts.

    Raises
    ------
    ValueError
        Non-positive or non-finite rho or T, or comp not a Composition.

    Notes
    -----
    With lambda = T / 5.9302e9 K, nu = rho/mu_e, xi = (nu / 10⁹)^(1/3) / lambda
    (Itoh 96, sec. 2), per unit volume:

    .. math:: Q_{pair} = \\tfrac12 S_+ \\{1 + (S_-/S_+) q_{pair}\\} g(\\lambda) e^{-2/\\lambda} f_{pair}

    .. math:: Q_{photo} = \\tfrac12 S_+ \\{1 - (S_-/S_+) q_{photo}\\} \\nu \\lambda^5 f_{photo}

    .. math:: Q_{plasma} = (C_V^2 + n C_V'^2)\\, 3.00\\times10^{21} \\lambda^9 \\gamma^6 e^{-\\gamma}
              (f_T + f_L) f_{xy}

    with S± = (C_V² ± C_A²) + n (C'_V² ± C'_A²); epsilon = Q / rho. The
    bremsstrahlung part follows Kaminker et al. (1999); see the module docstring.

    Examples
    --------
    >>> from thermoplane.physics import Composition
    >>> parts = epsilon_parts(1e6, 1e8, Composition({"He-4": 1.0}))
    >>> 1 < float(parts["plasma"]) < 1e3
    True
    """
    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    rho = _check_positive("rho", rho)
    T = _check_positive("T", T)
    shape = np.broadcast_shapes(rho.shape, T.shape)
    # rho and T keep their own shapes: on a map (rho a row, T a column) every factor of T alone or of
    # rho alone is computed once per row or column, and only the mixed terms over the whole plane
    lam, nu, xi = _variables(rho, T, comp)
    log_rho = np.log(rho)
    out = {}
    with np.errstate(under="ignore", over="ignore"):
        xi2, xi3 = xi**2, xi**3
        for name, log_q in (("pair", _log_pair(T, lam, nu, xi, xi2, xi3)),
                            ("photo", _log_photo(T, lam, nu, xi, xi2, xi3)),
                            ("plasma", _log_plasma(T, lam, nu))):
            # per gram; the clip keeps exp finite far outside the fits (never reached on the plane)
            out[name] = np.exp(np.minimum(log_q - log_rho, 700.0))
        out["bremsstrahlung"] = np.asarray(_brems_per_gram(rho, T, comp), dtype=float)
    for name in PROCESSES:
        if out[name].shape != shape:
            out[name] = np.array(np.broadcast_to(out[name], shape))
    out["total"] = out["pair"] + out["photo"] + out["plasma"] + out["bremsstrahlung"]
    return out


def epsilon(rho, T, comp: Composition, process: str = "total") -> np.ndarray:
    """Neutrino energy loss rate of one process (or their sum), erg g^-1 s^-1.

    Parameters
    ----------
    rho, T, comp
        As in :func:`epsilon_parts`.
    process : {"pair", "photo", "plasma", "bremsstrahlung", "total"}

    Returns
    -------
    ndarray
        epsilon_nu >= 0 with the broadcast shape of rho and T.

    Raises
    ------
    ValueError
        Unknown process, or any error of :func:`epsilon_parts`.

    Examples
    --------
    >>> from thermoplane.physics import Composition
    >>> co = Composition({"C-12": 0.5, "O-16": 0.5})
    >>> 1e8 < float(epsilon(1e5, 1e9, co, "pair")) < 1e10
    True
    """
    if process not in PROCESSES + ("total",):
        raise ValueError(f"unknown neutrino process {process!r}; choose one of "
                         f"{', '.join(PROCESSES + ('total',))}")
    return epsilon_parts(rho, T, comp)[process]


def dominant_process(parts: dict[str, np.ndarray]) -> np.ndarray:
    """Index into :data:`PROCESSES` of the largest part at each point (int8); the first of equal parts,
    as ``np.argmax`` over the stacked parts (which cost ~1.5 ms on a 300 x 300 map: a stack and an argmax
    along the slow axis; these three comparisons ~0.3 ms)."""
    best = np.asarray(parts[PROCESSES[0]], dtype=float)
    codes = np.zeros(best.shape, dtype=np.int8)
    for k, name in enumerate(PROCESSES[1:], start=1):
        part = np.asarray(parts[name], dtype=float)
        # a NaN wins as in argmax (the parts are finite; kept for the same answer everywhere)
        larger = (part > best) | (np.isnan(part) & ~np.isnan(best))
        codes[larger] = k
        best = np.where(larger, part, best)
    return codes
