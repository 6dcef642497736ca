"""The dense-plasma terms inside evaluate(): entropy, third law, identities across melting, solar centre."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc
from scipy import integrate

from thermoplane import physics as ph
from thermoplane.physics import constants as const

COMPOSITIONS = {
    "H-rich": ph.Composition.from_xyz(X=0.70, Y=0.28, Z=0.02),
    "He-4": ph.Composition({"He-4": 1.0}),
    "C/O": ph.Composition({"C-12": 0.5, "O-16": 0.5}),
    "Fe-56": ph.Composition({"Fe-56": 1.0}),
}
CO = COMPOSITIONS["C/O"]


def _plane(comp):
    lr = np.linspace(-10, 10, 141)
    lT = np.linspace(3, 10, 71)
    return ph.evaluate(10.0 ** lr[None, :], 10.0 ** lT[:, None], comp)


@pytest.mark.parametrize("name", list(COMPOSITIONS))
def test_entropy_positive_on_the_default_plane(name):
    comp = COMPOSITIONS[name]
    with np.errstate(all="raise", under="ignore"):
        s = _plane(comp)
    full = np.sum(comp.X * comp.Z / comp.A) / np.sum(comp.X / comp.A)
    ionized = s.mean_Z >= full * (1 - 1e-6)
    # fully ionized matter, up to eta ~ 1e8 (the electron table keeps the thermal part of f apart from
    # its T = 0 part: physics.electron_table.degenerate_free_energy)
    assert np.all(s.S[ionized] > 0), name
    assert ionized.mean() > 0.6
    # partially ionized matter too, the pressure-ionization band included: the rule of physics.ionization
    # is a free energy at fixed density whose energy and entropy are counted (before, S < 0 on 16 (H-rich)
    # and 27 (He-4) of these 10011 points; tests/physics/test_pressure_ionization_rule.py)
    assert np.all(s.S[~ionized] > 0), name


def _screening_heat_capacity(s, comp):
    """c_V of the electron screening term per gram (physics.eos.screening, summed over the species by number
    fraction): the polarization of the degenerate electrons, part of the c_V_ion readout, negative and
    linear in T where the electrons are degenerate (their own c_V, also linear, outweighs it)."""
    from thermoplane.physics.eos import screening as scr
    N = comp.X / (comp.A * const.m_u)
    n_e = s.rho * np.sum(N * comp.Z)
    out = np.zeros_like(s.rho)
    for Ni, Zi, Ai in zip(N, comp.Z, comp.A):
        f = scr.screening_free_energy(n_e, s.T, Zi, Ai)
        out += -Ni * const.k_B * (f[2] + f[5])
    return out


@pytest.mark.parametrize("name", list(COMPOSITIONS))
def test_ion_heat_capacity_non_negative_on_the_plane(name):
    # the ions' own c_V (ideal + liquid or lattice) >= 0 on the default plane, up to the rounding of the
    # excess's jet (eps of its Madelung ~ Gamma and zero-point ~ T_p/T terms, per ion); the screening's
    # share (negative, ~T, in degenerate matter) is taken out
    comp = COMPOSITIONS[name]
    s = _plane(comp)
    full = np.sum(comp.X * comp.Z / comp.A) / np.sum(comp.X / comp.A)
    ionized = s.mean_Z >= full * (1 - 1e-6)
    k_ion = const.k_B * float(np.sum(comp.X / (comp.A * const.m_u)))
    floor = 16 * np.finfo(float).eps * k_ion * (s.Gamma + s.T_p / s.T + 20.0)
    own = s.c_V_ion - _screening_heat_capacity(s, comp)
    # before the liquid's frozen form at weak coupling (physics.eos.ion_liquid): 23 points of the H-rich plane
    # below -floor, down to -1.2 k per ion near 10^8.7 g/cm^3, 10^7.7 K (measured)
    assert np.all(own[ionized] >= -floor[ionized]), name


@pytest.mark.parametrize("name", list(COMPOSITIONS))
def test_ion_entropy_positive_and_ion_heat_capacity_non_negative_in_the_crystal(name):
    comp = COMPOSITIONS[name]
    s = _plane(comp)
    crystal = s.crystallized > 0.5
    k_per_gram = sc.k * 1e7 * np.sum(comp.X / (comp.A * sc.physical_constants["atomic mass constant"][0] * 1e3))
    assert crystal.sum() > 100
    assert np.all(s.c_V_ion[crystal] >= -1e-6 * k_per_gram)     # quantum crystal: c_V_ion ~ T^3 >= 0
    # <= 3 k per ion + anharmonic (0.28 k at Gamma = 175) + screening (up to ~0.2 k for Fe near melting)
    assert np.all(s.c_V_ion[crystal] <= 3.6 * k_per_gram)


@pytest.mark.parametrize("rho", [1e4, 1e7, 1e10])
@pytest.mark.parametrize("nuclide", ["He-4", "C-12", "O-16", "Fe-56"])
def test_third_law_at_fixed_density(nuclide, rho):
    # down to the plane's 10^3 K; at 1e10 g/cm^3 the electrons' eta reaches ~1e8
    comp = ph.Composition({nuclide: 1.0})
    T = np.logspace(7, 3.0, 17)
    s = ph.evaluate(rho, T, comp)
    assert np.all(np.diff(s.S) < 0) and np.all(s.S > 0)
    # per ion: S / (N k) -> 0 (the electrons' pi^2 kT / E_F per electron and the lattice's T^3 both vanish)
    N = np.sum(comp.X / (comp.A * sc.physical_constants["atomic mass constant"][0] * 1e3))
    assert s.S[-1] / (N * sc.k * 1e7) < 0.01
    assert s.S[-1] / s.S[0] < 1e-3
    # the electrons' part follows Sommerfeld's pi^2 k^2 T D(E_F) / 3 (our own evaluation, relativistic D)
    hbar, me, c, k = sc.hbar * 1e7, sc.m_e * 1e3, sc.c * 1e2, sc.k * 1e7
    n_e = rho * float(np.sum(comp.X * comp.Z / comp.A)) / (sc.physical_constants["atomic mass constant"][0] * 1e3)
    pF = hbar * (3 * math.pi**2 * n_e) ** (1 / 3)
    E = math.sqrt((pF * c) ** 2 + (me * c * c) ** 2)
    S_e = math.pi**2 / 3 * k * k * T[-1] * pF * E / (math.pi**2 * hbar**3 * c * c) / rho
    # the ions' lattice entropy (~T^3) adds up to ~15 % at 1e4 g/cm^3, 1e3 K (He, C); xc and screening less
    assert S_e * 0.99 < float(s.S[-1]) < S_e * 1.2


def test_mixture_keeps_only_its_mixing_entropy_as_T_goes_to_0():
    # linear mixing: each species is a one-component plasma at the same n_e, i.e. occupies the volume
    # fraction x_i Z_i / <Z>; the ideal-gas mixing entropy -sum x_i ln(x_i Z_i / <Z>) per ion stays as
    # T -> 0 (the configurational entropy of a disordered alloy; our own evaluation)
    rho, T = 1e4, 10**3.5
    s = ph.evaluate(rho, T, CO)
    x = (CO.X / CO.A) / np.sum(CO.X / CO.A)
    mix = -np.sum(x * np.log(x * CO.Z / np.sum(x * CO.Z)))
    N = np.sum(CO.X / (CO.A * sc.physical_constants["atomic mass constant"][0] * 1e3))
    assert float(s.S) / (N * sc.k * 1e7) == pytest.approx(mix, abs=0.01)


def _melting_temperature(rho, comp, lo=3.0, hi=9.0):
    lT = np.linspace(lo, hi, 601)
    s = ph.evaluate(rho, 10.0**lT, comp)
    flip = np.flatnonzero(np.diff(s.crystallized) != 0)
    assert flip.size >= 1
    a, b = lT[flip[-1]], lT[flip[-1] + 1]
    for _ in range(50):
        m = 0.5 * (a + b)
        if ph.evaluate(rho, 10.0**m, comp).crystallized > 0.5:
            a = m
        else:
            b = m
    return 10.0 ** (0.5 * (a + b))


def _fd_identities(rho, T, comp, h=1e-5, hT=5e-3):
    """#9's identities by finite differences: steps h in rho; in T, Richardson's extrapolation of central
    differences in ln T with steps hT and 2 hT (error ~hT^4). S and P carry the thermal parts with all their
    digits, but the sum of the parts of S rounds at ~1e-12 of the ions' ideal entropy (the lattice terms
    cancel it to ~1e-8 at T << T_p), which a step of 1e-5 would turn into 1e-4 of c_V (measured): hence
    the larger step in T. The electron table is C^2 across its nodes (its S is C^1): callers keep the T
    stencil inside one cell."""
    ev = lambda r, t: ph.evaluate(r, t, comp)  # noqa: E731
    s = ev(rho, T)
    rp, rm = ev(rho * (1 + h), T), ev(rho * (1 - h), T)
    st = ev(rho, T * np.exp(hT * np.array([-2.0, -1.0, 1.0, 2.0])))
    same = {float(x) for x in (s.crystallized, rp.crystallized, rm.crystallized)} | set(st.crystallized.tolist())
    assert len(same) == 1          # the stencil stays in one phase

    def d_lnT(q):                  # T (dq/dT)_rho
        d1 = (q[2] - q[1]) / (2 * hT)
        d2 = (q[3] - q[0]) / (4 * hT)
        return (4 * d1 - d2) / 3

    dE_drho = (rp.E - rm.E) / (2 * h * rho)
    dP_drho = (rp.P - rm.P) / (2 * h * rho)
    T_dE_dT, T_dS_dT = d_lnT(st.E), d_lnT(st.S)
    # P keeps its digits: the small step (the large one would see the T^4 of radiation and the pairs'
    # exp(-2 m_e c^2 / kT) at order hT^4)
    tp, tm = ev(rho, T * (1 + h)), ev(rho, T * (1 - h))
    assert tp.crystallized == tm.crystallized == s.crystallized
    T_dP_dT = (tp.P - tm.P) / (2 * h)
    P = float(s.P)
    # rho^2 (dE/drho)_T = P - T (dP/dT)_rho, within 1e-8 of P
    assert abs(float(rho**2 * dE_drho - (P - T_dP_dT))) < 1e-8 * P
    # T (dS/dT)_rho = (dE/dT)_rho, within 1e-6: S and c_V both carry only the thermal part; the difference
    # of E does not where E / (c_V T) is large (degenerate electrons: ~eta^2, up to 1e15 in this corner),
    # so there it is held to 1e-6 plus the rounding of E itself (4 ulp of each E, through the stencil)
    c_V = float(s.c_V)
    # S is a sum of parts that cancel at T << T_p: the ions' ideal entropy against the lattice's excess,
    # whose Madelung, zero-point and screening terms (~Gamma + eta per ion, over kT) add nothing to S but
    # round at eps of their size. The difference of S is held to 1e-6 plus that rounding through the
    # stencil (measured: the whole of the error at log rho >= 4, log T <= 5)
    N_ion = float(np.sum(comp.X / (comp.A * const.m_u)))
    big = float(s.Gamma + s.T_p / T) + 20.0
    floor_S = 4 * np.finfo(float).eps * const.k_B * N_ion * big * (4 / (2 * hT) + 1 / (4 * hT)) / 3
    assert abs(float(T_dS_dT) - c_V) <= 1e-6 * c_V + floor_S
    floor = 4 * np.finfo(float).eps * float(np.max(np.abs(st.E))) * (4 / (2 * hT) + 1 / (4 * hT)) / 3 / T
    assert abs(float(T_dE_dT) / T - c_V) <= 1e-6 * c_V + floor
    # gamma1 from P and S (the second derivatives of F): chi_rho + chi_T^2 P / (rho T c_V), c_V = T dS/dT
    chi_rho, chi_T = rho * dP_drho / P, T_dP_dT / P
    g1 = chi_rho + chi_T**2 * P / (rho * T * T_dS_dT)
    assert float(s.gamma1) == pytest.approx(float(g1), rel=1e-6)
    return s


@pytest.mark.parametrize("log_rho", [3.0, 5.0, 7.0, 9.0])
def test_identities_on_both_sides_of_the_melting_line(log_rho):
    rho = 10.0**log_rho
    Tm = _melting_temperature(rho, CO)
    below = _fd_identities(rho, Tm / 1.01, CO, hT=1e-3)
    above = _fd_identities(rho, Tm * 1.01, CO, hT=1e-3)
    assert below.crystallized == 1.0 and above.crystallized == 0.0
    # latent heat: the energy jumps up on melting (per ion, in units of k T_m, about 0.7 for the classical
    # OCP); our quantum liquid fades into the quantum lattice, so the jump shrinks for T_m < T_p
    s_lo, s_hi = ph.evaluate(rho, Tm * (1 - 1e-9), CO), ph.evaluate(rho, Tm * (1 + 1e-9), CO)
    N = np.sum(CO.X / (CO.A * sc.physical_constants["atomic mass constant"][0] * 1e3))
    q = float(s_hi.E - s_lo.E) / (N * sc.k * 1e7 * Tm)
    assert 0.0 < q < 1.5
    if Tm > float(below.T_p):
        assert q > 0.3
    assert float(s_hi.S - s_lo.S) == pytest.approx(float(s_hi.E - s_lo.E) / Tm, rel=1e-3)   # F continuous


DENSE = [(lr, lT) for lr in np.arange(3.0, 10.01, 1.0) for lT in np.arange(3.0, 9.01, 1.0)]


@pytest.mark.parametrize("log_rho, log_T", DENSE)
def test_identities_in_the_dense_corner(log_rho, log_T):
    rho, T = 10.0**log_rho, 10.0**log_T
    s = ph.evaluate(rho, T, CO)
    assert float(T * s.dS_dT) == pytest.approx(float(s.c_V), rel=1e-9)      # the analytic identity
    # the differences about T 10^0.025: the stencil (+-0.0043 dex) inside one cell of the electron tables
    # (nodes every 0.05 dex from 10^3 K; every 0.01 dex in the pair-onset table at 10^8.8-9.7 K), where
    # their free energy is one polynomial
    _fd_identities(rho, T * 10**0.025, CO)


def _F(k, eta):
    """Non-relativistic Fermi-Dirac integral int_0^inf x^k / (exp(x - eta) + 1) dx (our quadrature)."""
    return integrate.quad(lambda x: x**k / (math.exp(min(x - eta, 700.0)) + 1.0), 0, max(50.0, eta + 50.0),
                          limit=200)[0]


def test_solar_centre_non_ideal_pressure():
    # standard solar model centre (Bahcall, Serenelli & Basu 2005, BS05: rho = 150 g/cm^3, T = 1.57e7 K,
    # X = 0.34, Y = 0.64; from memory)
    comp = ph.Composition.from_xyz(X=0.34, Y=0.64, Z=0.02)
    rho, T = 150.0, 1.57e7
    s = ph.evaluate(rho, T, comp)
    ratio = float(s.P_coul / s.P)
    # independent Debye-Hueckel with partly degenerate electrons: kappa^2 = 4 pi e^2 / kT
    # (sum n_i Z_i^2 + n_e theta_e), theta_e = F_-1/2 / (2 F_1/2) (PHYSICS.md); P = -kT kappa^3 / (24 pi)
    e2 = (sc.e * sc.c * 10.0) ** 2
    kT = sc.k * 1e7 * T
    mu = sc.physical_constants["atomic mass constant"][0] * 1e3
    n_i = rho * comp.X / (comp.A * mu)
    n_e = float(np.sum(n_i * comp.Z))
    eta = float(s.eta)
    theta_e = _F(-0.5, eta) / (2.0 * _F(0.5, eta))
    kappa = math.sqrt(4 * math.pi * e2 / kT * (float(np.sum(n_i * comp.Z**2)) + n_e * theta_e))
    dh = -kT * kappa**3 / (24 * math.pi) / float(s.P)
    assert ratio == pytest.approx(dh, rel=0.15)
    # published: the Debye-Hueckel / Coulomb pressure correction at the solar centre is about -1 %
    # (Christensen-Dalsgaard & Daeppen 1992, A&ARv 4, 267, their fig. of the EOS differences; from memory)
    assert -0.015 < ratio < -0.007
