"""Metals (Li..Zn) ionizing by the Saha equation with the pressure-ionization rule (physics.ionization, the
compiled passes of physics.saha_kernel and physics.matter_kernel), switched on with metals="saha".

The default keeps the metals fully ionized (physics.matter.METAL_IONIZATION): the rule's pressure is left out
of P, so the metals' own pressure-ionization bands break rho^2 (dE/drho)_T = P - T (dP/dT)_rho there (README).
"""

import numpy as np
import pytest
from scipy.optimize import brentq

from thermoplane import physics as ph
from thermoplane.physics import constants as const
from thermoplane.physics import matter as M
from thermoplane.physics import saha_kernel as SK
from thermoplane.physics.eos.atomic_data import ionization_data
from thermoplane.physics.ionization import BOHR_RADIUS, ELEMENTS, ionization_stages, stage_radius3

SOLAR = ph.Composition.from_xyz(0.70, 0.28, 0.02)
CO = ph.Composition({"C-12": 0.5, "O-16": 0.5})
LR, LT = np.meshgrid(np.linspace(-12, 12, 73), np.linspace(3, 11.5, 52))
RHO, T = (10.0**LR).ravel(), (10.0**LT).ravel()


def _matter(rho, T, comp, **kw):
    return M.matter(np.atleast_1d(np.asarray(rho, float)), np.atleast_1d(np.asarray(T, float)), comp, "fermi",
                    "saha", True, metals="saha", **kw)


def _independent_saha(rho, T, comp):
    """Free electrons per cm^3 of ground-state Saha for every element, non-degenerate electrons, no pressure
    ionization: n_(j+1) n_e / n_j = (g_(j+1) / g_j) 2 (2 pi m_e k T / h^2)^(3/2) exp(-chi_j / kT), ionization
    energies and weights from the compiled table (physics.eos.atomic_data), the root by scipy's brentq."""
    kT = const.k_B * T
    n_Q = 2.0 * (2.0 * np.pi * const.m_e * kT / const.h**2) ** 1.5
    elements = []
    for X, A, Z in zip(comp.X, comp.A, comp.Z):
        chi, g = ionization_data(int(Z))
        C = np.concatenate([[0.0], np.cumsum(chi)]) * const.eV
        elements.append((rho * X / (A * const.m_u), np.log(g) - C / kT, np.arange(int(Z) + 1)))

    def excess(ln_ne):
        total = 0.0
        for n, a, j in elements:
            lq = a + j * (np.log(n_Q) - ln_ne)
            q = np.exp(lq - lq.max())
            total += n * np.sum(j * q) / np.sum(q)
        return ln_ne - np.log(total)

    return np.exp(brentq(excess, np.log(1e-30 * rho / const.m_u), np.log(rho / const.m_u), xtol=1e-14))


def test_a_cool_photosphere_gets_its_free_electrons_from_the_metals():
    # rho = 1e-7 g cm^-3, T = 5000 K, X = 0.70, Y = 0.28, Z = 0.02 (solar-like metals): Mg, Si and Fe
    # (first ionization 7.6-8.2 eV) give ~1e-4 free electrons per H nucleus, H (13.6 eV) ~1e-8 of them
    rho, T = 1e-7, 5000.0
    r = _matter(rho, T, SOLAR)
    n_H = rho * 0.70 / (ph.NUCLIDES["H-1"].A * const.m_u)
    per_H = float(r.n_net[0]) / n_H
    assert 5e-5 < per_H < 5e-4                                   # "about 1e-4" (common practice, no source)
    share = float(r.metal_electrons[0]) * rho / float(r.n_net[0])
    assert share > 0.95
    # our own evaluation of the same Saha balance (brentq; non-degenerate electrons, no pressure ionization,
    # negligible here): the compiled equilibrium agrees far within the factor 2 asked for
    n_e = _independent_saha(rho, T, SOLAR)
    assert abs(float(r.n_net[0]) / n_e - 1.0) < 1e-4
    # with the metals fully ionized (the default) the metals alone would give 1.4e-2 per H nucleus
    full = M.matter(np.array([rho]), np.array([T]), SOLAR, "fermi", "saha", True)
    assert float(full.n_net[0]) / n_H > 1e-2


def test_the_state_reports_the_metals_share_from_their_stages(monkeypatch):
    monkeypatch.setattr(M, "METAL_IONIZATION", "saha")
    s = ph.evaluate(np.array([1e-7, 1e-7, 1e-4]), np.array([5000.0, 3e4, 5e7]), SOLAR)
    assert s.metal_electron_fraction[0] > 0.95                   # the photosphere: metals' electrons
    assert s.metal_electron_fraction[1] < 0.01                   # H ionized: its electrons dominate
    full_share = float(np.sum((SOLAR.X * SOLAR.Z / SOLAR.A)[SOLAR.Z > 2]) / np.sum(SOLAR.X * SOLAR.Z / SOLAR.A))
    np.testing.assert_allclose(s.metal_electron_fraction[2], full_share, rtol=1e-6)
    # mean_Z stays the mean charge of all nuclei
    N = SOLAR.X / SOLAR.A
    np.testing.assert_allclose(s.mean_Z[2], np.sum(N * SOLAR.Z) / np.sum(N), rtol=1e-6)
    assert s.mean_Z[0] < 1e-3


def test_the_saha_metals_option_is_the_same_equation_of_state():
    # evaluate(ionization="saha-metals") is the default with the metals as Saha elements: the same numbers as
    # the session-wide switch, and the photosphere's electrons come from the metals; the default keeps them
    # fully ionized (the metals' share is then their full-ionization share, ~1 at 5000 K)
    rho, T = np.array([1e-7, 1e-4, 3.0]), np.array([5000.0, 2e4, 1e5])
    a = ph.evaluate(rho, T, SOLAR, ionization="saha-metals")
    r = _matter(rho, T, SOLAR)
    np.testing.assert_allclose(a.P_e + a.P_ion, r.part.P, rtol=1e-13)
    np.testing.assert_allclose(a.mean_Z * np.sum(SOLAR.X / SOLAR.A), r.n_net / rho * const.m_u, rtol=1e-9)
    assert a.metal_electron_fraction[0] > 0.95
    d = ph.evaluate(rho, T, SOLAR)
    assert d.metal_electron_fraction[0] > 0.99 and d.P_e[0] > 10.0 * a.P_e[0]
    from thermoplane.physics import eos
    assert ("ionization", "saha-metals") in eos.EXPERIMENTAL
    assert "saha-metals" not in eos.IMPACT_OPTIONS["ionization"]


@pytest.mark.parametrize("comp", [SOLAR, CO], ids=["solar", "C/O"])
@pytest.mark.parametrize("rho, T", [(1e-4, 5e7), (1e6, 1e7), (1e2, 3e8), (1e8, 1e6)])
def test_metals_are_fully_ionized_where_hot_or_dense(comp, rho, T):
    # hot and thin (Fe's K shell, 9.3 keV, against -eta ~ 17), dense (every stage's own size above the volume
    # per electron), or above the rule's thermal completion (ALL_DESTROYED_T)
    r = _matter(rho, T, comp)
    N = comp.X / (comp.A * const.m_u)
    heavy = comp.Z > 2
    np.testing.assert_allclose(r.metal_electrons[0], np.sum((N * comp.Z)[heavy]), rtol=1e-6)
    np.testing.assert_allclose(r.mean_Z[0], np.sum(N * comp.Z) / np.sum(N), rtol=1e-6)


def test_stage_size_is_the_bohr_orbit_of_hydrogen_like_ions():
    # H-like ion of charge Z - 1: chi = Z^2 Ry nearly (NIST), so r = a_0 / Z (Bohr model)
    for Z in (6, 8, 26):
        chi, _ = ionization_data(Z)
        r = stage_radius3(chi) ** (1.0 / 3.0)
        assert abs(r[Z - 1] * Z - 1.0) < 0.02
        assert np.all(np.diff(r[:Z]) < 0)                         # ions shrink stage by stage
        assert r[Z] == 0.0
    # neutral C: 1.21 a_0 from its 11.26 eV; the Bohr radius itself from scipy.constants: 0.529177 Angstrom
    assert abs(stage_radius3(ionization_data(6)[0])[0] ** (1 / 3) - 13.6057 / 11.2603) < 1e-3
    assert abs(BOHR_RADIUS / 0.529177e-8 - 1.0) < 1e-5


def test_windowed_mean_charge_equals_the_sum_over_every_stage():
    # the compiled root sums only the stages near the largest (saha_kernel.keep_stage); the numpy reference
    # (ionization_stages) sums all of them: the mean charge and its eta-partial agree to rounding, also where
    # they are tiny (cool matter, neutral atoms: 1e-20 and less)
    rng = np.random.default_rng(1)
    saha = {z: 1.0 for z in (1, 2, 6, 8, 12, 14, 26)}
    el_Z, el_N, el_lng, el_C, el_r3 = SK.element_arrays(saha, ELEMENTS)
    pre = np.empty(el_C.shape)
    pl = np.empty(el_C.shape)
    for _ in range(300):
        T = 10.0 ** rng.uniform(3, 9)
        n_full = 10.0 ** rng.uniform(10, 30)
        eta = rng.uniform(-60.0, 60.0)
        SK._fill_pl(T, el_Z, el_C, pl)
        SK._prepare(n_full, T, el_Z, el_lng, el_C, el_r3, pl, pre)
        for k, z in enumerate(el_Z):
            zb, dz = SK._zbar(k, z, pre, eta)
            st = ionization_stages(ELEMENTS[int(z)], np.array(eta), np.array(T), np.array(n_full))
            ref = float(st.mean_charge)
            ref_eta = float(st.mean_charge_partials()[0])
            if ref > 1e-300:
                assert abs(zb - ref) <= 1e-11 * ref + 1e-14, (z, T, n_full, eta, zb, ref)
            if abs(ref_eta) > 1e-280:
                assert abs(dz - ref_eta) <= 1e-9 * abs(ref_eta) + 1e-14 * z, (z, T, n_full, eta, dz, ref_eta)


@pytest.mark.parametrize("comp", [SOLAR, CO], ids=["solar", "C/O"])
def test_compiled_passes_match_the_numpy_passes_with_metals(comp):
    new = _matter(RHO, T, comp)
    old = _matter(RHO, T, comp, compiled=False)
    S_scale = np.maximum(np.abs(old.part.S), float(np.sum(comp.X / (comp.A * const.m_u))) * const.k_B)
    P, E = np.abs(old.part.P), np.abs(old.part.E)
    scales = {"P": P, "E": E, "S": S_scale, "P_rho": P / RHO, "P_T": P / T, "E_rho": E / RHO, "E_T": E / T,
              "S_rho": S_scale / RHO, "S_T": S_scale / T}
    for name, scale in scales.items():
        a, b = getattr(new.part, name), getattr(old.part, name)
        assert np.all(np.isfinite(a)), name
        err = np.abs(a - b)
        assert np.all(err <= 1e-10 * np.abs(b) + 1e-10 * scale), (name, float(np.max(err / (np.abs(b) + scale))))
    np.testing.assert_allclose(new.mean_Z, old.mean_Z, rtol=1e-10, atol=1e-14)
    np.testing.assert_allclose(new.metal_electrons, old.metal_electrons, rtol=1e-10,
                               atol=1e-12 * float(np.max(old.metal_electrons)))


@pytest.mark.parametrize("comp", [SOLAR, CO], ids=["solar", "C/O"])
def test_temperature_identity_and_positive_entropy_with_metals(comp, monkeypatch):
    # T (dS/dT)_rho = (dE/dT)_rho from the code's own S and E, central differences on a plane (the rule is a
    # free energy at fixed density: its energy and entropy are counted); S > 0 on the 400 x 400 default plane
    monkeypatch.setattr(M, "METAL_IONIZATION", "saha")
    lr = np.linspace(-10, 10, 400)
    lT = np.linspace(3, 10, 400)
    s = ph.evaluate(10.0 ** lr[None, :], 10.0 ** lT[:, None], comp)
    assert np.all(s.S > 0)
    lr, lT = np.meshgrid(np.linspace(-10, 4, 57), np.linspace(3.05, 8.05, 41))
    h = 1e-3
    st = [ph.evaluate(10.0**lr, 10.0 ** (lT + k * h), comp, coulomb=False) for k in (-1, 1)]
    dS = (st[1].S - st[0].S) / (2 * h * np.log(10.0))
    dE = (st[1].E - st[0].E) / (2 * h * np.log(10.0))
    s0 = ph.evaluate(10.0**lr, 10.0**lT, comp, coulomb=False)
    np.testing.assert_allclose(s0.dS_dT * 10.0**lT, s0.c_V, rtol=1e-9)       # analytic partials
    rel = np.abs(dS - dE / 10.0**lT) / np.abs(dE / 10.0**lT)
    # central differences resolve all but the steepest points (cold pressure ionization: f of a stage drops
    # within ~1e-3 dex there)
    assert np.mean(rel < 1e-4) > 0.98


@pytest.mark.parametrize("metals", ["full", "saha"])
def test_cold_dense_matter_below_the_table_has_a_root(metals, monkeypatch):
    # at 400 K near 1 g cm^-3 (below the electron table, the numpy root) every ion of pure H or He, or of C/O
    # with metals by Saha, weighs less than the smallest double at full ionization: the root steps down
    # instead of dividing by n_free = 0 (before: ValueError "n_net must be finite")
    monkeypatch.setattr(M, "METAL_IONIZATION", metals)
    rho = np.array([0.9, 1.0, 1.1])
    for comp in (ph.Composition({"H-1": 1.0}), ph.Composition({"He-4": 1.0}), CO):
        s = ph.evaluate(rho, np.full(3, 400.0), comp)
        assert np.all(np.isfinite(s.P)) and np.all(np.isfinite(s.gamma1)) and np.all(s.mean_Z >= 0)
