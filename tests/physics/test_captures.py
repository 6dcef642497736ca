"""Tests of physics/captures.py: electron-capture thresholds of the T = 0 electron gas.

The thresholds are recomputed here from the atomic masses and the Chandrasekhar
(1939) relations with scipy.constants, independently of physics.constants:
E_thr = [M_at(A, Z-1) - M_at(A, Z)] c² + m_e c², mu = m_e c² sqrt(1 + x²),
n_e = (8 pi / 3)(m_e c / h)³ x³, rho = mu_e m_u n_e.
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc

from thermoplane.physics import NUCLIDES, Composition
from thermoplane.physics.captures import capture_label, threshold_density, threshold_energy, thresholds
from thermoplane.physics.composition import CAPTURE_DAUGHTERS

U_MEV = sc.physical_constants["atomic mass constant energy equivalent in MeV"][0]
ME_MEV = sc.physical_constants["electron mass energy equivalent in MeV"][0]
M_U_G = sc.physical_constants["atomic mass constant"][0] * 1e3
N_XF1 = 8 * math.pi / 3 * (sc.m_e * sc.c / sc.h) ** 3 * 1e-6      # cm^-3


def pure(name):
    return Composition({name: 1.0})


def independent_rho(parent_mass, daughter_mass, mu_e):
    e_thr = (daughter_mass - parent_mass) * U_MEV + ME_MEV
    x = math.sqrt((e_thr / ME_MEV) ** 2 - 1)
    return mu_e * M_U_G * N_XF1 * x**3


def test_thresholds_recomputed_from_masses_and_the_cold_electron_gas():
    for parent, daughter in CAPTURE_DAUGHTERS.items():
        comp = pure(parent)
        mu_e = NUCLIDES[parent].A / NUCLIDES[parent].Z
        got = threshold_density(parent, comp)
        if daughter.A < NUCLIDES[parent].A:     # E_thr < m_e c²: captures at any density (Ni-56)
            assert got == 0.0
        else:
            assert got == pytest.approx(independent_rho(NUCLIDES[parent].A, daughter.A, mu_e), rel=1e-9), parent


def test_mass_differences_match_published_q_values():
    # Delta_atomic (MeV): PHYSICS.md (recalled) for Mg-24, Ne-20, Fe-56; the others are the beta-decay Q
    # values of the daughters (from memory of the nuclear data tables). Tolerance 2 keV.
    published = {"Mg-24": 5.516, "Ne-20": 7.024, "Fe-56": 3.696, "C-12": 13.369, "O-16": 10.421,
                 "Si-28": 4.642, "S-32": 1.711, "N-14": 0.156, "H-1": 0.782, "Ca-40": 1.311, "Ar-36": 0.710}
    for parent, q in published.items():
        delta, e_thr = threshold_energy(parent)
        assert delta == pytest.approx(q, abs=2e-3), parent
        assert e_thr - delta == pytest.approx(ME_MEV, rel=1e-9)
    assert threshold_energy("Ni-56")[0] < 0                 # Ni-56 decays by capture


def test_threshold_densities_against_the_textbook_table():
    # Shapiro & Teukolsky (1983), Black Holes, White Dwarfs and Neutron Stars, table of
    # neutronization thresholds (from memory), pure matter of each nuclide, no lattice correction.
    table = {"H-1": 1.22e7, "C-12": 3.90e10, "O-16": 1.90e10, "Ne-20": 6.22e9, "Mg-24": 3.15e9,
             "Fe-56": 1.14e9, "Si-28": 1.97e9, "S-32": 1.47e8}
    for name, rho in table.items():
        assert threshold_density(name, pure(name)) == pytest.approx(rho, rel=0.02), name


def test_threshold_scales_with_mu_e_of_the_composition():
    a = threshold_density("Mg-24", Composition({"Mg-24": 1.0}))
    b = threshold_density("Mg-24", Composition({"Mg-24": 0.5, "H-1": 0.5}))
    mu_a = Composition({"Mg-24": 1.0}).mu_e
    mu_b = Composition({"Mg-24": 0.5, "H-1": 0.5}).mu_e
    assert b / a == pytest.approx(mu_b / mu_a, rel=1e-12)


def test_thresholds_cover_every_nuclide_present_with_a_daughter():
    comp = Composition.from_xyz(0.7, 0.28, 0.02)
    names = {t.nuclide for t in thresholds(comp)}
    assert names == {n for n in comp.names if n in CAPTURE_DAUGHTERS}
    assert {"C-12", "N-14", "O-16", "Ne-20", "Mg-24", "Si-28", "S-32", "Fe-56", "H-1"} <= names
    rhos = [t.rho for t in thresholds(comp)]
    assert rhos == sorted(rhos)
    assert capture_label("Mg-24") == "e⁻ capture on ²⁴Mg"
    assert thresholds(Composition({"Ni-56": 1.0})) == []


def test_bad_input():
    with pytest.raises(ValueError, match="unknown nuclide"):
        threshold_density("Xx-1", pure("C-12"))
    with pytest.raises(ValueError, match="no bound electron-capture daughter"):
        threshold_density("He-4", pure("He-4"))
    with pytest.raises(ValueError, match="Composition"):
        threshold_density("C-12", {"C-12": 1.0})


def test_minor_nuclides_can_be_left_out():
    comp = Composition.from_xyz(0.7, 0.28, 0.02)                 # metals each well below 1 % by mass
    assert [t.nuclide for t in thresholds(comp, min_fraction=0.01)] == ["H-1"]
