"""Composition and mean molecular weights against hand computations."""

from __future__ import annotations

import numpy as np
import pytest

from thermoplane import physics as ph


def test_mu_exact_sums_by_hand():
    # 1/mu = sum X_i (1 + Z_i)/A_i, hand computed with AME2020 masses (common practice, no source)
    comp = ph.Composition({"H-1": 0.7, "He-4": 0.28, "O-16": 0.02})
    inv_mu = 0.7 * 2 / 1.00782503223 + 0.28 * 3 / 4.00260325413 + 0.02 * 9 / 15.99491461957
    assert comp.mu == pytest.approx(1 / inv_mu, rel=1e-12)
    assert comp.mu_e == pytest.approx(1 / (0.7 / 1.00782503223 + 0.28 * 2 / 4.00260325413 + 0.02 * 8 / 15.99491461957))
    assert comp.mu_ion == pytest.approx(1 / (0.7 / 1.00782503223 + 0.28 / 4.00260325413 + 0.02 / 15.99491461957))


def test_textbook_shortcut_is_close():
    # 1/mu ~ 2X + 3Y/4 + Z/2 (Kippenhahn, Weigert & Weiss 2012, eq. 4.30): within 1 % for the Sun-like mix
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    assert comp.mu == pytest.approx(1 / (2 * 0.70 + 0.75 * 0.28 + 0.5 * 0.02), rel=0.01)


def test_custom_nuclide_and_parse_mix():
    comp = ph.Composition({"H-1": 0.5, "Xx": (0.5, 10.0, 5)})
    assert comp.mu_e == pytest.approx(1 / (0.5 / 1.00782503223 + 0.5 * 5 / 10.0))
    assert ph.parse_mix("H-1=0.7, He-4=0.28,O-16=0.02") == ph.Composition({"H-1": 0.7, "He-4": 0.28, "O-16": 0.02})


@pytest.mark.parametrize("fractions, fragment", [
    ({"H-1": 0.7, "He-4": 0.2}, "sum to 1"),
    ({"H-1": 1.2, "He-4": -0.2}, ">= 0"),
    ({"Unobtainium-1": 1.0}, "unknown nuclide"),
    ({"H-1": float("nan")}, "finite"),
])
def test_bad_fractions_name_the_value(fractions, fragment):
    with pytest.raises(ValueError, match=fragment):
        ph.Composition(fractions)


def test_from_xyz_checks_sum_and_mixture():
    with pytest.raises(ValueError, match="X \\+ Y \\+ Z must be 1"):
        ph.Composition.from_xyz(0.7, 0.3, 0.02)
    with pytest.raises(ValueError, match="unknown metal mixture"):
        ph.Composition.from_xyz(0.7, 0.28, 0.02, metals="nope")
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    assert comp.metals == pytest.approx(0.02)
    assert np.isclose(comp.X.sum(), 1.0)
