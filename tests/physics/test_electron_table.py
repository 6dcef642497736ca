"""Tests of physics.electron_table: accuracy against the exact gas, consistency, limits, fallback."""

import numpy as np
import pytest

from thermoplane.physics import constants as const
from thermoplane.physics.electron_table import ONSET_TABLES, in_table, onset_state, table_eta, table_state
from thermoplane.physics.electrons import electron_state
from thermoplane.physics.matter import NEGLIGIBLE_POSITRONS, PAIR_TABLE_LOG_T, _positron_bound
from tests.physics.references import chandrasekhar_P

NX = 8 * np.pi / 3 * (const.m_e * const.c / const.h) ** 3   # n at x_F = 1


def _random(N, lo_n, hi_n, lo_T, hi_T, seed):
    rng = np.random.default_rng(seed)
    return 10 ** rng.uniform(lo_n, hi_n, N), 10 ** rng.uniform(lo_T, hi_T, N)


def _rel(a, b, scale=None):
    return np.max(np.abs(a - b) / (np.abs(b) if scale is None else scale))


@pytest.mark.parametrize("pairs,lo_T,hi_T,tol", [
    (False, 3.0, 11.5, dict(P=3e-7, E=3e-7, eta=1e-7, dP_dn=2e-5, dE_dT=2e-6)),
    # pairs on, below the rest-mass shift band (10^7.3..10^7.9 K) and the pair onset
    (True, 3.0, 7.2, dict(P=3e-7, E=3e-7, eta=1e-7, dP_dn=2e-5, dE_dT=2e-6)),
])
def test_against_exact_state(pairs, lo_T, hi_T, tol):
    n, T = _random(4000, 4.0, 37.0, lo_T, hi_T, 1)
    a, b = table_state(n, T, pairs), electron_state(n, T, pairs)   # reference: exact quadrature
    kT = const.k_B * T
    # S and (dE/dT)_n of the exact gas are formed as (E + P - mu n)/T, so their precision
    # is relative to that scale, not to S itself (strong degeneracy)
    sc = (np.abs(b.gas.E) + b.gas.P + np.abs(b.eta * kT * n)) / T
    assert _rel(a.gas.P, b.gas.P) < tol["P"]
    assert _rel(a.gas.E, b.gas.E) < tol["E"]
    assert _rel(a.eta, b.eta, np.maximum(np.abs(b.eta), 1.0)) < tol["eta"]
    assert _rel(a.gas.S, b.gas.S, sc) < 1e-7
    assert _rel(a.dP_dn, b.dP_dn, b.gas.P / n) < tol["dP_dn"]
    assert _rel(a.dP_dT_n, b.dP_dT_n, b.gas.P / T) < tol["P"]
    assert _rel(a.dE_dT_n, b.dE_dT_n, sc) < tol["dE_dT"]
    assert _rel(a.deta_dT, b.deta_dT, np.abs(b.deta_dT) + np.maximum(np.abs(b.eta), 1) / T) < tol["eta"] * 10


def test_pair_dominated_hot_gas():
    n, T = _random(3000, 12.0, 37.0, 9.5, 11.5, 2)
    a, b = table_state(n, T), electron_state(n, T)      # reference: exact quadrature
    assert _rel(a.gas.P, b.gas.P) < 1e-6
    assert _rel(a.gas.E, b.gas.E) < 1e-6
    assert _rel(a.eta, b.eta, np.maximum(np.abs(b.eta), 1.0)) < 1e-6


@pytest.mark.parametrize("pairs", [True, False])
def test_consistency_identities(pairs):
    # f = E - T S with df = mu dn - S dT gives, per unit volume:
    # (dE/dn)_T = (E + P - T (dP/dT)_n)/n  and  (dS/dT)_n = (dE/dT)_n / T
    n, T = _random(4000, 4.0, 37.0, 3.0, 11.5, 3)
    s = table_state(n, T, pairs)
    g = s.gas
    lhs = n * s.dE_dn
    rhs = g.E + g.P - T * s.dP_dT_n
    scale = np.abs(g.E) + np.abs(g.P) + np.abs(T * s.dP_dT_n) + np.abs(lhs)
    assert np.max(np.abs(lhs - rhs) / scale) < 1e-10
    # S from the same interpolant: S = (E + P - eta k T n)/T
    S2 = (g.E + g.P - s.eta * const.k_B * T * n) / T
    sc = (np.abs(g.E) + g.P + np.abs(s.eta * const.k_B * T * n)) / T
    assert np.max(np.abs(g.S - S2) / sc) < 1e-10
    # (eta, T) partials of the gas are the implicit-function transforms of the (n, T) ones
    assert np.allclose(g.dn_deta * s.deta_dn, 1.0, rtol=1e-12)


@pytest.mark.parametrize("x", [0.1, 0.5, 1.0, 3.0, 10.0, 100.0])
def test_zero_temperature_pressure_chandrasekhar(x):
    n = NX * x ** 3
    s = table_state(n, 1e3)      # kT / E_F < 4e-5 at x >= 0.1: thermal part < 1e-8
    assert abs(float(s.gas.P) / chandrasekhar_P(x) - 1) < 1e-5


def test_non_degenerate_ideal_gas():
    # P = n k T for a classical gas (common practice, no source); eta < -20 here
    n = np.array([1e5, 1e8, 1e10])
    T = np.array([1e5, 1e6, 1e7])
    s = table_state(n, T, pairs=False)
    assert np.all(np.abs(s.gas.P / (n * const.k_B * T) - 1) < 1e-6)


def test_fallback_outside_table_is_exact():
    n = np.array([1e2, 1e20, 1e38, 1e20])
    T = np.array([1e6, 1e2, 1e8, 1e7])
    mask = in_table(n, T)
    assert mask.tolist() == [False, False, False, True]
    a, b = table_state(n, T), electron_state(n, T)
    for name in ("P", "E", "S", "n_plus"):
        assert np.array_equal(getattr(a.gas, name)[~mask], getattr(b.gas, name)[~mask])
    assert np.array_equal(a.eta[~mask], b.eta[~mask])
    assert abs(a.gas.P[3] / b.gas.P[3] - 1) < 1e-6


def test_shape_and_broadcast():
    s = table_state(np.full((3, 4), 1e24), np.array([1e4, 1e6, 1e8, 1e10]))
    assert s.gas.P.shape == (3, 4) and s.eta.shape == (3, 4)


@pytest.mark.parametrize("n,T,pairs", [(-1.0, 1e6, True), (1e20, np.nan, True), (1e20, 1e6, "yes")])
def test_bad_input(n, T, pairs):
    with pytest.raises(ValueError):
        table_state(n, T, pairs)


def test_pair_onset_tables_against_exact_where_used():
    # where fermi_state uses the fine onset tables (positrons above 1e-10 of n, T < 10^9.4 K, inside a
    # table), P, E and eta within 1e-6 of the exact quadrature (reference: physics.electrons)
    n, T = _random(12000, 4.0, 37.0, 7.9, PAIR_TABLE_LOG_T, 4)
    need = _positron_bound(table_eta(n, T, pairs=False)[0], T) > NEGLIGIBLE_POSITRONS * n
    n, T = n[need], T[need]
    assert n.size > 5000
    a, b = onset_state(n, T), electron_state(n, T)
    assert _rel(a.gas.P, b.gas.P) < 1e-6
    assert _rel(a.gas.E, b.gas.E) < 1e-6
    assert _rel(a.eta, b.eta, np.maximum(np.abs(b.eta), 1.0)) < 1e-6
    # every such point at and above 10^8 K lies inside one of the tables (none falls back)
    lo = 10.0 ** min(r[2] for _, r, _ in ONSET_TABLES)
    inside = np.zeros(n.size, bool)
    for _, (ln0, ln1, lt0, lt1), _ in ONSET_TABLES:
        inside |= (n >= 10**ln0) & (n <= 10**ln1) & (T >= 10**lt0) & (T <= 10**lt1)
    assert inside[T >= lo].all()


def test_table_eta_matches_table_state():
    # the light evaluation is the same arithmetic: bit-identical (including the fallback outside)
    n, T = _random(3000, 2.0, 38.0, 2.5, 11.6, 5)
    for pairs in (True, False):
        s = table_state(n, T, pairs)
        eta, deta_dn = table_eta(n, T, pairs)
        assert np.array_equal(eta, s.eta) and np.array_equal(deta_dn, s.deta_dn)


def _sommerfeld_entropy(n, T):
    """Leading Sommerfeld entropy of the degenerate relativistic gas, S = (pi^2/3) k^2 T D(E_F) per volume,
    D = p_F E_F / (pi^2 hbar^3 c^2) (textbook; our own evaluation with scipy.constants in cgs)."""
    import scipy.constants as sc
    hbar, me, c, k = sc.hbar * 1e7, sc.m_e * 1e3, sc.c * 1e2, sc.k * 1e7
    pF = hbar * (3 * np.pi**2 * n) ** (1 / 3)
    E = np.sqrt((pF * c) ** 2 + (me * c * c) ** 2)
    return np.pi**2 / 3 * k * k * T * pF * E / (np.pi**2 * hbar**3 * c * c)


def test_entropy_of_the_strongly_degenerate_gas():
    # eta from 1e4 to 1e8: S and c_V are ~eta^-2 of E; the table holds f - f_0(n) and the Sommerfeld thermal
    # part, so they keep their digits between the nodes (before: S < 0 at eta > ~3e5, measured)
    n, T = _random(3000, 24.0, 37.0, 3.0, 7.0, 7)
    st = table_state(n, T, pairs=False)
    deg = st.eta > 1e4
    assert deg.sum() > 1000
    S0 = _sommerfeld_entropy(n, T)
    # next Sommerfeld order: relative (pi/eta)^2 ~ 1e-7 at eta = 1e4
    assert _rel(st.gas.S[deg], S0[deg]) < 1e-6
    assert _rel(st.dE_dT_n[deg], S0[deg]) < 1e-5        # c_V = S to leading order; ~1e-6 interpolation in T
    assert np.all(st.gas.S > 0) and np.all(st.dE_dT_n > 0)


def test_entropy_where_quadrature_and_sommerfeld_meet():
    # around ETA_SOMMERFELD the nodes switch from the quadrature to the expansion: S agrees with the exact
    # gas to 2e-6 of itself on both sides (the quadrature's own S, a difference of numbers ~eta^2 larger,
    # is ~1e-6 high at eta ~ 3e3 against the Sommerfeld value: measured)
    n, T = _random(3000, 20.0, 34.0, 3.0, 9.0, 8)
    a = table_state(n, T, pairs=False)
    mid = (a.eta > 30) & (a.eta < 3000)
    assert mid.sum() > 100
    b = electron_state(n[mid], T[mid], pairs=False)
    assert _rel(a.gas.S[mid], b.gas.S) < 2e-6


def test_compiled_kernel_reads_the_same_free_energy():
    # physics.eos.electron_kernel mirrors the table (same coefficients, same f_0 added back); numpy's
    # vectorised pow and arcsinh differ from libm in the last bit, hence not bit-identical
    from thermoplane.physics.eos import electron_kernel as ek
    n, T = _random(2000, 4.0, 36.9, 3.0, 11.4, 9)
    st = table_state(n, T, pairs=False)
    tab = ek.electron_arrays()
    out = np.empty(12)
    got = np.empty((4, n.size))
    for i in range(n.size):
        assert ek.electron_point(n[i], T[i], tab, out)
        got[:, i] = out[0], out[3], out[9], out[11]
    assert _rel(got[0], st.eta, np.maximum(np.abs(st.eta), 1.0)) < 1e-13
    assert _rel(got[1], st.gas.P) < 1e-12
    assert _rel(got[2], st.gas.S) < 1e-12
    assert _rel(got[3], st.dE_dT_n) < 1e-11


def test_below_the_table_degenerate_electrons_keep_their_entropy_and_the_edge_is_seamless():
    # below 1e3 K (the table's lower edge) in degenerate matter the Sommerfeld state replaces the
    # quadrature, whose entropy is a difference ~eta^2 larger than S (c_V came out negative at 1e9 g/cm^3)
    from thermoplane.physics.electron_table import table_state
    n = np.geomspace(1e26, 1e35, 40)
    from thermoplane import physics as ph
    for T in (1e2, 5e2, 999.0):
        st = table_state(n, np.full_like(n, T), pairs=False)
        assert np.all(st.gas.S > 0) and np.all(st.dE_dT_n > 0)
        # P and eta agree with the exact quadrature (which keeps them to ~1e-9; only S loses its digits)
        ex = electron_state(n, np.full_like(n, T), False)
        np.testing.assert_allclose(st.gas.P, ex.gas.P, rtol=1e-8)
        np.testing.assert_allclose(st.eta, ex.eta, rtol=1e-8)
        # degenerate limit: S proportional to T (Sommerfeld's leading order), and (dE/dT)_n = T (dS/dT)_n
        # against a finite difference of S
        h = 1e-3
        up = table_state(n, np.full_like(n, T * (1 + h)), pairs=False)
        dn = table_state(n, np.full_like(n, T * (1 - h)), pairs=False)
        np.testing.assert_allclose(up.gas.S / dn.gas.S, (1 + h) / (1 - h), rtol=1e-6)
        np.testing.assert_allclose((up.gas.S - dn.gas.S) / (2 * h), st.dE_dT_n, rtol=1e-5)
    lo = table_state(n, np.full_like(n, 1e3 * (1 - 1e-9)), pairs=False)
    hi = table_state(n, np.full_like(n, 1e3 * (1 + 1e-9)), pairs=False)
    np.testing.assert_allclose(lo.gas.P, hi.gas.P, rtol=1e-9)
    np.testing.assert_allclose(lo.gas.S, hi.gas.S, rtol=1e-3)
    np.testing.assert_allclose(lo.dE_dT_n, hi.dE_dT_n, rtol=2e-3)
    # the default equation of state across 1e3 K: nabla_ad steps by less than 1e-3 anywhere on the row
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    rho = np.geomspace(1e-10, 1e10, 201)
    a = ph.evaluate(rho, np.full_like(rho, 1e3 * (1 - 1e-7)), comp)
    b = ph.evaluate(rho, np.full_like(rho, 1e3 * (1 + 1e-7)), comp)
    assert np.max(np.abs(a.nabla_ad - b.nabla_ad)) < 1e-3
