"""The tables and hand-made chain rules that make the dense-plasma terms fast, against the formulas they replace.

Every table is checked off its nodes (random points inside cells), for the value and its first two
derivatives, against the direct evaluation of the same formula; the per-cell Taylor form against the quintic
Hermite cell it stores; the quantum liquid's (ln Gamma, ln eta) partials against finite differences and its
value against an independent numpy evaluation of the formula in physics.eos.ion_liquid's notes.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from thermoplane.physics.coulomb import A1, A2, A3, B1, B2, B3, B4
from thermoplane.physics.eos import coulomb_term as ct
from thermoplane.physics.eos import dense_plasma as dp
from thermoplane.physics.eos import electron_xc as xc
from thermoplane.physics.eos import hermite
from thermoplane.physics.eos import ion_liquid as liq
from thermoplane.physics.eos import ion_solid as sol

RNG = np.random.default_rng(20261203)


def test_taylor_cells_are_the_quintic_hermite_interpolant():
    f, g, k = RNG.normal(size=(3, 5))
    h = 0.37
    cf = hermite.cell_coefficients(f, g, k, h)
    for s in RNG.uniform(0.0, 1.0, 20):
        for i in range(4):
            want = hermite.quintic(f[i], g[i], k[i], f[i + 1], g[i + 1], k[i + 1], s, h)
            got = hermite.taylor_lookup(1.5 + (i + s) * h, 1.5, h, cf)
            assert got == pytest.approx(want, rel=1e-12, abs=1e-12)
    # the nodes themselves: value, slope and curvature at both ends of a cell
    v0 = hermite.taylor_lookup(1.5 + h, 1.5, h, cf)
    assert v0 == pytest.approx((f[1], g[1], k[1]), rel=1e-12, abs=1e-12)


def _off_nodes(x0, h, n, size):
    """Random points strictly inside the cells of a table (off its nodes)."""
    i = RNG.integers(0, n - 1, size)
    return x0 + (i + RNG.uniform(0.05, 0.95, size)) * h


def test_harmonic_table_against_the_fit():
    # g = f_harm - (3/2) u_1 eta and its v = ln eta derivatives, table against harmonic_thermal (the fit)
    v = np.concatenate([_off_nodes(sol._HV0, sol._HV_STEP, 2 * sol._HV_N - 1, 400), [-11.995, -0.005, 0.005, 11.99]])
    for vi in v:
        got = np.array(sol.harmonic_v(vi))
        want = np.array(sol.harmonic_thermal(math.exp(vi)))
        # rounding of the nodes, ~60 eps |g| / h^2 in the second derivative (measured: 3e-11)
        assert abs(got[0] - want[0]) <= 1e-13 * (1 + abs(want[0]))
        assert abs(got[1] - want[1]) <= 1e-12 * (1 + abs(want[1]))
        assert abs(got[2] - want[2]) <= 1e-10 * (1 + abs(want[1]))
        # relative accuracy where the thermal part is small (eta >> 1: ~eta^-3, the quantum crystal's c_V);
        # measured: up to 7e-9 near eta ~ 90 (the branches' exp(-alpha eta) in ln eta), 4e-10 beyond
        if vi > 3.0:
            assert abs(got[2] - want[2]) <= 2e-8 * abs(want[2])


def test_harmonic_thermal_is_the_fit_less_its_zero_point_term():
    # harmonic_thermal against harmonic_scalar (the BPY fit in eta) and its classical variant
    for e in (1e-3, 0.05, 0.7, 3.0, 40.0, 900.0):
        h, h1, h2 = sol.harmonic_scalar(e)
        g, gv, gvv = sol.harmonic_thermal(e)
        z = 1.5 * sol.U1_BCC
        assert g == pytest.approx(h - z * e, rel=1e-12, abs=1e-13 * abs(h))
        # harmonic_scalar's h1 - z cancels where eta >> 1 (rounding eps z eta): harmonic_thermal does not
        assert gv == pytest.approx(e * (h1 - z), rel=1e-9, abs=1e-13 * e)
        assert gvv == pytest.approx(e * (h1 - z) + e * e * h2, rel=1e-8, abs=1e-13 * e)
        c, cv, cvv = sol.harmonic_thermal(e, True)
        assert c + 3 * math.log(e) + sol.HARMONIC_CLASSICAL == pytest.approx(g, rel=1e-13, abs=1e-14)
        assert cv + 3.0 == pytest.approx(gv, rel=1e-13, abs=1e-14)
        assert cvv == gvv


def _ocp_formula(G):
    """f_OCP (Potekhin & Chabrier 2000, eq. 17) and G f', G (G f')' by our own differentiation in numpy."""
    f = lambda g: (A1 * (np.sqrt(g * (A2 + g)) - A2 * np.arcsinh(np.sqrt(g / A2)))  # noqa: E731
                   + 2 * A3 * (np.sqrt(g) - np.arctan(np.sqrt(g))) + B1 * (g - B2 * np.log1p(g / B2))
                   + 0.5 * B3 * np.log1p(g * g / B4))
    d1 = lambda g: A1 * np.sqrt(g / (A2 + g)) + A3 * np.sqrt(g) / (1 + g) + B1 * g / (B2 + g) + B3 * g / (B4 + g * g)  # noqa: E731
    d2 = lambda g: (A1 * A2 / (2 * np.sqrt(g) * (A2 + g) ** 1.5) + A3 * (1 - g) / (2 * np.sqrt(g) * (1 + g) ** 2)  # noqa: E731
                    + B1 * B2 / (B2 + g) ** 2 + B3 * (B4 - g * g) / (B4 + g * g) ** 2)
    return f(G), G * d1(G), G * d1(G) + G * G * d2(G)


def test_ocp_taylor_cells_against_the_fit():
    # the Taylor cells hold the quintic table of physics.eos.coulomb_term; its second derivative carries the
    # nodes' rounding over h^2 (measured against the formulas: 1e-10 of f's size, and 1e-13 absolute at weak
    # coupling, where f ~ Gamma^(3/2) is tiny)
    u = _off_nodes(-25.0, 0.01, 3700, 600)
    for ui in u:
        got = np.array(liq.ocp_u(ui, math.exp(ui)))
        want = np.array(_ocp_formula(math.exp(ui)))
        old = np.array(ct._ocp_lookup(ui, ct._TAB_F, ct._TAB_U, ct._TAB_V))
        scale = abs(want[0]) + abs(want[1]) + abs(want[2])
        assert np.all(np.abs(got - want) <= 1e-9 * scale + 1e-12), (ui, got, want)
        assert np.all(np.abs(got[:2] - want[:2]) <= 1e-11 * scale + 1e-15), (ui, got, want)
        assert np.all(np.abs(got - old) <= 1e-10 * scale + 1e-13), (ui, got, old)


def test_zero_temperature_electron_table_against_the_formulas():
    a = _off_nodes(xc._LN0, xc._LN_STEP, xc._LN_N, 400)
    for ai in a:
        got = xc.zero_T_energies(ai)
        want = xc.zero_T_jets(math.exp(ai))
        for g, w in zip(got, want):
            scale = abs(w[0]) + abs(w[1])
            # measured: 1e-14, 1e-12 and 1e-10 of that scale
            assert abs(g[0] - w[0]) <= 1e-13 * scale
            assert abs(g[1] - w[1]) <= 1e-11 * scale
            assert abs(g[2] - w[3]) <= 1e-9 * scale


def test_exchange_correlation_from_the_table_equals_the_direct_formula():
    for ln_n, ln_T in zip(RNG.uniform(math.log(1e12), math.log(1e38), 200), RNG.uniform(math.log(1e3), math.log(1e10), 200)):
        n, T = math.exp(ln_n), math.exp(ln_T)
        got = np.array(xc.electron_xc(n, T, 1.0, 1.0))
        want = np.array(xc.electron_xc_direct(n, T))
        scale = abs(want[0]) + abs(want[1]) + abs(want[2])
        assert np.all(np.abs(got - want) <= 1e-9 * scale)
    # outside the table (n_e < 1e10 cm^-3) the formulas themselves
    assert xc.electron_xc(1e8, 1e4, 1.0, 1.0) == pytest.approx(xc.electron_xc_direct(1e8, 1e4), rel=1e-13)


def _quantum_excess_numpy(G, eta):
    """W Delta_frozen + (1 - W) Delta_faded as written in physics.eos.ion_liquid's notes, in numpy."""
    CM = sol.MADELUNG_BCC
    c = liq._LN_ETA3_NL3 + 1.0 + sol.HARMONIC_CLASSICAL
    delta = lambda g: _ocp_formula(g)[0] - (CM * g + 1.5 * np.log(g) + c)  # noqa: E731
    r = (1 + (eta / 3.0) ** 4) ** 0.25
    g0 = 3.0 * G / eta
    G0 = g0 / (1 + (g0 / 300.0) ** 4) ** 0.25
    T_over_T1 = 3.0 / (4.0 * eta)
    frozen = r * delta(G / r) - (eta / 3.0) * (1 + T_over_T1**4) ** -0.75 * delta(G0)
    faded = delta(G) / r**4
    W = 1.0 / (1.0 + (g0 / 5.0) ** 4)
    return W * frozen + (1 - W) * faded


@pytest.mark.parametrize("G, eta", [(0.05, 0.01), (2.0, 0.3), (30.0, 3.0), (150.0, 20.0), (600.0, 2.0),
                                    (5.0, 40.0), (1e3, 1e3)])
def test_quantum_excess_partials(G, eta):
    u, v = math.log(G), math.log(eta)
    R = lambda uu, vv: liq.quantum_excess(math.exp(uu), math.exp(vv), uu, vv, liq.ocp_u(uu, math.exp(uu)))  # noqa: E731
    got = np.array(R(u, v))
    # the kernel reads f_OCP from its table (1e-12 of f_OCP ~ Gamma); the frozen term carries it times ~eta / 3
    assert got[0] == pytest.approx(_quantum_excess_numpy(G, eta), rel=1e-9, abs=1e-11 * (1 + G) * (1 + eta))
    h = 1e-4
    du = (np.array(R(u + h, v)) - np.array(R(u - h, v))) / (2 * h)
    dv = (np.array(R(u, v + h)) - np.array(R(u, v - h))) / (2 * h)
    scale = np.abs(got[:3]).sum() + np.abs(got[3:]).sum()
    # the differences carry the rounding of R's terms (~eta |Delta| / 3, cancelling where eta >> 1) over h
    floor = 50 * np.finfo(float).eps * (1 + eta) * (1 + G) / h
    for a, b in [(got[1], du[0]), (got[2], dv[0]), (got[3], du[1]), (got[4], dv[1]), (got[4], du[2]),
                 (got[5], dv[2])]:
        assert abs(a - b) <= 1e-7 * scale + floor, (a, b)


def test_dense_parts_equal_the_jets_and_part():
    # the one compiled pass of dense_parts gives the numbers of mixture_free_energy followed by _part
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    lr, lT = np.meshgrid(np.linspace(-10, 10, 41), np.linspace(3, 10, 29))
    rho, T = 10.0**lr, 10.0**lT
    scale = RNG.uniform(0.5, 1.0, rho.shape)
    ion, ele, crystal, margin = dp.dense_parts(rho, T, comp.X, comp.A, comp.Z, scale=scale)
    per_mass = comp.X / (comp.A * const.m_u)
    N_ion, N_e = per_mass.sum(), (per_mass * comp.Z).sum()
    Z, A, x, offset = dp.merge_trace_species(comp.Z, comp.A, per_mass / N_ion)
    res = dp.mixture_free_energy(rho * N_e, T, Z, A, x, both=False)
    g = res["ion"].copy()
    g[0] += offset
    want_ion, want_ele = dp._part(N_ion, rho, T, g), dp._part(N_e, rho, T, res["electron"])
    for f in ion.__dataclass_fields__:
        np.testing.assert_allclose(getattr(ion, f), getattr(want_ion, f) * scale, rtol=1e-14, atol=0)
        np.testing.assert_allclose(getattr(ele, f), getattr(want_ele, f) * scale, rtol=1e-14, atol=0)
    assert np.array_equal(crystal, res["crystallized"]) and np.array_equal(margin, res["margin"])


def test_s_table_of_the_quantum_liquid_against_the_formulas():
    # Delta(Gamma_0(s)), W(s), 1 - W(s) with their s-derivatives, table against the OCP fit's formulas
    s = np.concatenate([_off_nodes(liq._S0, liq._S_STEP, liq._S_N, 400), [liq._S0 + 1e-3, liq._S1 - 1e-3]])
    for si in s:
        got = np.array(liq.s_functions(si, math.exp(si)))
        want = np.array(liq.s_functions_direct(si, True))
        for j in range(3):
            g, w = got[3 * j:3 * j + 3], want[3 * j:3 * j + 3]
            scale = abs(w[0]) + abs(w[1]) + abs(w[2])
            # measured: 5e-13, 1e-10 and 3e-8 of that scale for Delta(Gamma_0) (its nodes round at eps times
            # ~270, f_OCP against the lattice at the cap Gamma_0 ~ 300, and the interpolant's second
            # derivative carries that over h^2, as the OCP table's own does); 1e-11 and 4e-9 for W, 1 - W
            assert abs(g[0] - w[0]) <= 2e-12 * scale
            assert abs(g[1] - w[1]) <= 5e-10 * scale
            assert abs(g[2] - w[2]) <= 1e-7 * scale
    # outside the table: the formulas (with the OCP table)
    assert liq.s_functions(25.0, math.exp(25.0)) == liq.s_functions_direct(25.0, False)
