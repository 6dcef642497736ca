"""Tests of physics/regimes.py: boundary lines, pressure regimes, flags."""

from types import SimpleNamespace

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from thermoplane.physics import regimes as rg

CLASSICAL = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)
SOLAR = ph.Composition.from_xyz(0.70, 0.28, 0.02)
HELIUM = ph.Composition({"He-4": 1.0})


def _by_key(lines):
    return {b.key: b for b in lines}


@pytest.fixture(scope="module")
def classical_lines():
    return _by_key(rg.boundaries(SOLAR, n=120, **CLASSICAL))


@pytest.fixture(scope="module")
def default_lines():
    return _by_key(rg.boundaries(SOLAR, n=120))


def _points(b):
    ok = np.isfinite(b.log_rho) & np.isfinite(b.log_T)
    return b.log_rho[ok], b.log_T[ok]


# -- structure ------------------------------------------------------------------------

def test_keys_labels_and_order(classical_lines):
    keys = list(classical_lines)
    assert keys == [k for k in rg.BOUNDARY_KEYS if k in keys]
    # classical options: no positrons and full ionization, so those lines are absent
    assert "pairs" not in keys and "h_ionization" not in keys and "he_ionization" not in keys
    # ideal classical ions (coulomb=False): no phases and no quantum ions in the model
    assert "crystallization" not in keys and "quantum_ions" not in keys
    for k in ("equality", "degeneracy", "relativistic", "coupling"):
        assert k in keys
        b = classical_lines[k]
        assert b.label == rg.BOUNDARY_LABELS[k] and b.label
        assert b.log_rho.shape == b.log_T.shape
        assert not b.empty


def test_pairs_line_present_when_pairs_on():
    keys = [b.key for b in rg.boundaries(SOLAR, n=20, pairs=True)]
    assert "pairs" in keys
    keys = [b.key for b in rg.boundaries(SOLAR, n=20, pairs=False)]
    assert "pairs" not in keys


def test_ionization_lines_follow_composition():
    keys = [b.key for b in rg.boundaries(HELIUM, n=20, ionization="saha")]
    assert "h_ionization" not in keys and "he_ionization" in keys


@pytest.mark.parametrize("kw", [dict(log_rho=(1, 1)), dict(log_rho=(-20, 0)), dict(log_T=(3, np.inf)),
                                dict(log_T=(5, 4)), dict(n=5), dict(n=2.5), dict(electrons="quantum"),
                                dict(log_rho="ab")])
def test_bad_input_raises(kw):
    with pytest.raises(ValueError):
        rg.boundaries(SOLAR, **kw)


def test_points_inside_plane(default_lines):
    for b in default_lines.values():
        x, y = _points(b)
        assert np.all((x >= -10 - 1e-9) & (x <= 10 + 1e-9))
        assert np.all((y >= 3 - 1e-9) & (y <= 10 + 1e-9))


# -- every line sits on its level of the equation of state ------------------------------

LEVELS = {
    "equality": lambda s: np.log(s.P_rad / s.P_gas),
    "degeneracy": lambda s: s.eta,
    "relativistic": lambda s: np.log(rg.fermi_momentum_ratio(s.rho, s.ye)),
    "pairs": lambda s: np.log(s.n_plus / (0.01 * s.n_minus)),
    "coupling": lambda s: np.log(s.Gamma),
    "crystallization": lambda s: s.melt_margin,
    "quantum_ions": lambda s: np.log(s.T_p / s.T),
    "h_ionization": lambda s: s.ion_H - 0.5,
    "he_ionization": lambda s: s.ion_He2 - 0.5,
}


@pytest.mark.parametrize("options", [CLASSICAL, {}, dict(ionization="saha", pairs=True)])
def test_lines_are_on_their_levels(options):
    lines = rg.boundaries(SOLAR, n=60, **options)
    for b in lines:
        x, y = _points(b)
        if x.size == 0:
            continue
        s = ph.evaluate(10.0**x, 10.0**y, SOLAR, **options)
        value = LEVELS[b.key](s)
        # the field changes by O(1) per dex; 1e-4 dex of position is far looser than the solver
        assert np.all(np.abs(value) < 1e-3), (b.key, np.max(np.abs(value)))


# -- against independent formulas ------------------------------------------------------

@pytest.mark.parametrize("options", [CLASSICAL, {}])
def test_equality_matches_equality_temperature(options):
    # with pairs a column can cross twice (P_gas overtakes P_rad again when pairs appear):
    # equality_temperature reports the lowest crossing, so compare that one
    b = _by_key(rg.boundaries(SOLAR, n=80, **options))["equality"]
    x, y = _points(b)
    xs = np.unique(x)
    lowest = np.array([y[x == v].min() for v in xs])
    ref = np.log10(ph.equality_temperature(10.0**xs, SOLAR, **options))
    assert np.max(np.abs(lowest - ref)) < 1e-4


def test_equality_ideal_gas_formula(classical_lines):
    # non-degenerate, fully ionized: P_rad = P_gas at T = (3 k rho / (a mu m_u))^(1/3)
    # (Kippenhahn, Weigert & Weiss 2012, sec. 13.2; 3.21e7 K (rho/mu)^(1/3))
    x, y = _points(classical_lines["equality"])
    T = (3.0 * const.k_B * 10.0**x / (const.a_rad * SOLAR.mu * const.m_u)) ** (1.0 / 3.0)
    assert np.max(np.abs(y - np.log10(T))) < 1e-6
    # the textbook coefficient, 3.21e7 K (PHYSICS.md, recalled), to its three digits
    assert np.allclose(T / (10.0**x / SOLAR.mu) ** (1.0 / 3.0), 3.21e7, rtol=2e-3)


def test_degeneracy_classical_line(classical_lines):
    # classical electrons: eta = ln(n_e lambda^3 / 2) = 0 at n_e lambda^3 = 2,
    # lambda = h / sqrt(2 pi m_e k T) (Maxwell–Boltzmann with spin weight 2)
    x, y = _points(classical_lines["degeneracy"])
    n_e = 10.0**x * SOLAR.ye / const.m_u
    T = const.h**2 / (2.0 * np.pi * const.m_e * const.k_B) * (n_e / 2.0) ** (2.0 / 3.0)
    assert np.max(np.abs(y - np.log10(T))) < 1e-3
    # The textbook asymptote T ~ 1.21e5 K (rho/mu_e)^(2/3) (PHYSICS.md, recalled) is where the
    # T = 0 non-relativistic pressure (h^2/(20 m_e))(3/pi)^(2/3) n^(5/3) equals n k T; the classical
    # eta = 0 line lies above it by (10/pi)(pi/6)^(2/3) = 2.068 (algebra of the two formulas).
    ratio = 10.0**y / (1.21e5 * (10.0**x / SOLAR.mu_e) ** (2.0 / 3.0))
    assert np.allclose(ratio, 10.0 / np.pi * (np.pi / 6.0) ** (2.0 / 3.0), rtol=3e-3)


def test_coupling_lines_against_independent_gamma(classical_lines):
    # Gamma = <Z^(5/3)> e^2 / (a_e k T), a_e = (3 / (4 pi n_e))^(1/3), linear mixing
    # (PHYSICS.md; number-weighted average over nuclei), full ionization
    x_i = SOLAR.X / SOLAR.A / np.sum(SOLAR.X / SOLAR.A)
    z53 = np.sum(x_i * SOLAR.Z ** (5.0 / 3.0))
    for key, level in (("coupling", 1.0),):
        x, y = _points(classical_lines[key])
        n_e = 10.0**x * SOLAR.ye / const.m_u
        a_e = (3.0 / (4.0 * np.pi * n_e)) ** (1.0 / 3.0)
        Gamma = z53 * const.e_esu**2 / (a_e * const.k_B * 10.0**y)
        assert np.allclose(Gamma, level, rtol=1e-4), key


@pytest.mark.parametrize("options", [CLASSICAL, {}])
def test_relativistic_line_position(options):
    # x_F = 1 at rho Y_e = 9.74e5 g cm^-3 (Chandrasekhar 1939; PHYSICS.md)
    for comp in (SOLAR, HELIUM):
        b = _by_key(rg.boundaries(comp, n=60, **options))["relativistic"]
        x, y = _points(b)
        assert x.size > 0
        assert np.allclose(10.0**x * comp.ye, 9.74e5, rtol=0.01)


def test_fermi_momentum_ratio_formula():
    # (8 pi / 3)(m_e c / h)^3 = 5.87e29 cm^-3 (Chandrasekhar 1939: rho/mu_e = 9.74e5 x^3)
    n = 8.0 * np.pi / 3.0 * (const.m_e * const.c / const.h) ** 3
    assert np.isclose(n * const.m_u, 9.74e5, rtol=1e-3)
    assert np.allclose(rg.fermi_momentum_ratio(np.array([1.0, 8.0]) * n * const.m_u, 1.0), [1.0, 2.0])


def test_multiple_crossings_become_pieces(monkeypatch):
    # A field with two crossings per column (a band in log T) must give two pieces.
    monkeypatch.setitem(rg._FIELDS, "equality", lambda s: 1.0 - np.abs(np.log10(s.T) - 6.0))
    b = _by_key(rg.boundaries(SOLAR, n=20, **CLASSICAL))["equality"]
    x, y = _points(b)
    assert np.allclose(np.sort(np.unique(np.round(y, 6))), [5.0, 7.0], atol=1e-6)
    assert np.sum(np.isclose(y, 5.0)) == 20 and np.sum(np.isclose(y, 7.0)) == 20
    assert np.isnan(b.log_T).any()                    # pieces are NaN-separated


def test_no_crossing_gives_nan_line():
    # melting needs T below 1e3 K at low density: restrict the plane so it cannot be reached
    b = _by_key(rg.boundaries(SOLAR, log_rho=(-10, -8), log_T=(8, 10), n=20))
    assert b["crystallization"].empty and b["quantum_ions"].empty


def test_melting_and_quantum_lines_with_the_default_physics():
    # carbon: where the ions are classical (T > 10 T_p) the melting line sits near Gamma = 175
    # (Potekhin & Chabrier 2000: 175.0 for the one-component plasma; screening shifts it by a few per cent)
    carbon = ph.Composition({"C-12": 1.0})
    lines = _by_key(rg.boundaries(carbon, n=80))
    x, y = _points(lines["crystallization"])
    s = ph.evaluate(10.0**x, 10.0**y, carbon)
    classical = s.T > 10 * s.T_p
    assert classical.sum() > 5
    assert np.all((s.Gamma[classical] > 165) & (s.Gamma[classical] < 190))
    # T = T_p: T_p = hbar omega_p / k, omega_p^2 = 4 pi n_i Z^2 e^2 / (A m_u) (our own evaluation)
    x, y = _points(lines["quantum_ions"])
    n_i = 10.0**x / (carbon.A[0] * const.m_u)
    Tp = const.hbar * np.sqrt(4 * np.pi * n_i * 36.0 * const.e_esu**2 / (carbon.A[0] * const.m_u)) / const.k_B
    assert x.size > 10 and np.allclose(10.0**y, Tp, rtol=1e-3)


# -- classification ------------------------------------------------------------------------

def _state(**kw):
    base = dict(P_rad=1.0, P_gas=10.0, P_e=5.0, n_plus=0.0, n_minus=1.0, eta=-5.0, rho=1.0, ye=0.5)
    base.update(kw)
    return SimpleNamespace(**{k: np.asarray(v, dtype=float) for k, v in base.items()})


def test_classify_rules_on_synthetic_states():
    # thresholds as documented in classify (our own definitions)
    assert rg.classify(_state()) == "ideal_gas"
    assert rg.classify(_state(P_rad=11.0)) == "radiation"
    assert rg.classify(_state(eta=0.5)) == "degenerate"
    assert rg.classify(_state(eta=0.5, rho=2e6)) == "relativistic_degenerate"
    assert rg.classify(_state(eta=0.5, rho=1e6)) == "degenerate"          # rho ye = 5e5 < 9.74e5
    # P_pairs = P_e * 2 n+/(n- + n+) = 10 * 1 = 10 > P_rad = 8 and > P_gas - P_pairs = 1
    assert rg.classify(_state(P_rad=8.0, P_gas=11.0, P_e=10.0, n_plus=1.0)) == "pairs"
    # few positrons: P_pairs = 10 * 2 * 0.01/1.01 < P_rad
    assert rg.classify(_state(P_rad=20.0, P_gas=11.0, P_e=10.0, n_plus=0.01)) == "radiation"


def test_classify_vectorised_shape():
    s = _state(eta=np.zeros((3, 4)) + 1.0)
    out = rg.classify(s)
    assert out.shape == (3, 4) and np.all(out == "degenerate")
    assert rg.classify_codes(s).dtype == np.int8


@pytest.mark.parametrize("options", [CLASSICAL, {}])
def test_classify_hand_picked_points(options):
    rho = np.array([150.0, 1e-8, 1e6, 1e9])
    T = np.array([1.57e7, 1e8, 1e5, 1e6])
    # Sun's centre (Bahcall et al. 2005 standard model, from memory: 150 g/cc, 1.57e7 K)
    # is an ideal gas; the rest are textbook corners (common practice, no source)
    out = rg.classify(ph.evaluate(rho, T, SOLAR, **options))
    assert list(out) == ["ideal_gas", "radiation", "degenerate", "relativistic_degenerate"]


def test_classify_pairs_when_modelled():
    s = ph.evaluate(1e-6, 1e10, SOLAR, pairs=True)
    if not np.any(np.asarray(s.n_plus) > 0):
        pytest.skip("the equation of state behind evaluate() does not make positrons yet")
    # hot, low density: pairs outweigh radiation (P_pairs / P_rad -> 7/4, PHYSICS.md)
    assert rg.classify(s) == "pairs"


def test_regimes_table():
    assert rg.REGIME_KEYS == ("ideal_gas", "radiation", "degenerate", "relativistic_degenerate", "pairs")
    colours = [r.colour for r in rg.REGIMES]
    assert len(set(colours)) == len(colours)
    # every colour is one of the Okabe & Ito (2008) palette entries (from memory)
    okabe_ito = {"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}
    assert set(colours) <= okabe_ito


def test_flags_thresholds():
    s = SimpleNamespace(ion_H=np.array([0.5, 1.0, 1.0, 0.0, 1.0]),
                        ion_He1=np.array([1.0, 1.0, 1.0, 0.0, 1.0]),
                        ion_He2=np.array([1.0, 0.0, 1.0, 0.0, 1.0]),
                        Gamma=np.array([0.5, 2.0, 200.0, 0.1, 1.0]),
                        crystallized=np.array([0.0, 0.0, 1.0, 0.0, 0.0]),
                        T=np.array([1e7, 1e7, 1e5, 1e6, 1e6]), T_p=np.array([1e5, 1e5, 1e6, 1e6, 2e6]))
    f = rg.flags(s)
    assert list(f["partially_ionized"]) == [True, True, False, False, False]
    assert list(f["strongly_coupled"]) == [False, True, True, False, False]
    assert list(f["crystallized"]) == [False, False, True, False, False]      # the phase, not Gamma
    assert list(f["quantum_ions"]) == [False, False, True, False, True]
    # without helium in the composition, the He fractions are not looked at
    f = rg.flags(s, ph.Composition({"H-1": 1.0}))
    assert list(f["partially_ionized"]) == [True, False, False, False, False]


def test_flags_on_a_state():
    s = ph.evaluate(np.array([1e-2, 1e7]), np.array([1e7, 1e5]), SOLAR)
    f = rg.flags(s, SOLAR)
    # the flag is the phase: at (1e7 g/cc, 1e5 K) Gamma is in the hundreds but T ~ T_p / 200, where the
    # crystal and the quantum liquid both tend to the quantum lattice (margin ~1e-6 kT per ion)
    assert list(f["crystallized"]) == [False, bool(s.melt_margin[1] < 0)]
    co = ph.Composition({"C-12": 0.5, "O-16": 0.5})
    assert list(rg.flags(ph.evaluate(np.array([1e7, 1e7]), np.array([1e9, 1e6]), co), co)["crystallized"]) == [False, True]
    assert not f["partially_ionized"][0]                  # 1e7 K: fully ionized under every option
