"""The chemical equilibrium's per-point kernel (physics/eos/equilibrium._point): its jets are the derivatives
of its values.

The kernel returns the four conditions R1..R4 and P, E, S as first-order jets in the six seeds (the unknowns
y1..y4, ln rho, ln T). The stage sums of every nuclide but hydrogen are formed in closed form from moments
of the stage weights (:func:`thermoplane.physics.eos.equilibrium._stages`), not jet by jet; here every
derivative of every output is checked against a central difference of the kernel's own values (fourth
order, step 1e-5), at states near and away from the root, for compositions whose metals span many stages.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics.eos import equilibrium as eq

COMPOSITIONS = {
    "solar-like": ph.Composition.from_xyz(0.70, 0.28, 0.02),
    "iron-rich": ph.Composition({"Fe-56": 0.5, "H-1": 0.3, "He-4": 0.2}),
    "carbon-oxygen": ph.Composition({"C-12": 0.5, "O-16": 0.5}),
}


def _outputs(y, x, pk, comp):
    """The seven jets at unknowns y and x = (ln rho, ln T), the electron gas (with exchange-correlation) at y1."""
    nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E, st_lng, st_v, h2_v, h2_D0, coul_on = pk
    el = np.empty(12)
    assert eq._electrons(y[0], math.exp(x[1]), False, eq._etab(), el, coul_on)
    W = np.zeros((int(max(nuc_Z.max(), 1)) + 1, 17))
    o = eq._point(np.asarray(y, float), x[0], x[1], el, nuc_N, nuc_Z, nuc_lnlam3, nuc_start, nuc_h2, st_E,
                  st_lng, st_v, h2_v, h2_D0, coul_on, *eq.H2_TABLE, np.zeros(10), W, eq._stage_cache(st_E.size))
    return np.array(o)


@pytest.mark.parametrize("name", list(COMPOSITIONS))
def test_every_jet_component_is_the_derivative_of_the_values(name):
    comp = COMPOSITIONS[name]
    pk = eq._pack(eq.species_for(comp))
    rng = np.random.default_rng(7)
    h = 1e-5
    checked = 0
    for lr, lt in ((-8.0, 4.3), (-4.0, 5.0), (-2.0, 5.6), (0.0, 6.2), (1.0, 4.6), (3.0, 7.0)):
        r = eq.solve_equilibrium(np.array([10.0**lr]), np.array([10.0**lt]), comp)
        if not np.isfinite(r.P[0]):
            continue
        phi = 1.0 - r.zeta[0]
        base = np.array([math.log(r.n_e[0] / phi), -math.log(phi), 0.0, math.log(r.heavy[0] * 10.0**lr / phi)])
        for shift in (np.zeros(4), rng.normal(0.0, 0.2, 4) * np.array([1.0, 0.0, 1.0, 1.0])):
            y = base + shift
            x = np.array([lr * math.log(10.0), lt * math.log(10.0)])
            o = _outputs(y, x, pk, comp)
            for k in range(6):
                def at(t):
                    yy, xx = y.copy(), x.copy()
                    if k < 4:
                        yy[k] += t
                    else:
                        xx[k - 4] += t
                    return _outputs(yy, xx, pk, comp)[:, 0]
                fd = (8.0 * (at(h) - at(-h)) - (at(2 * h) - at(-2 * h))) / (12.0 * h)
                scale = np.max(np.abs(o), axis=1)
                assert np.all(np.abs(o[:, k + 1] - fd) <= 1e-6 * scale + 1e-9), (name, lr, lt, k)
            checked += 1
    assert checked >= 8
