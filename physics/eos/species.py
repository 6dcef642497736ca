"""The species of the chemical picture for one composition, as flat arrays the kernels read.

Question answered: which particles can matter of this composition contain, and what are their
internal energies, statistical weights and sizes?

- Every nuclide (A, Z) contributes its Z + 1 ionization stages j = 0..Z (charge j). Stage j has the
  internal energy E_j = sum_{k<j} chi_k counted from the neutral atom's ground state (PHYSICS.md: so that
  ionization energy is part of E), the ground-level weight g_j, and, while it keeps a bound electron,
  a volume v_j = (4 pi / 3) r_j^3 with r_j = (j + 1) e^2 / (2 chi_j): the radius at which the outermost
  electron's Coulomb energy in the field of charge j + 1 equals its binding energy (hydrogenic: a_0 / Z
  for the ground state of a one-electron ion; our own choice of size, no source). Bare nuclei have
  v = 0. Ionization energies and weights: :mod:`thermoplane.physics.eos.atomic_data`.
- Protium (Z = 1, A < 1.5) also forms H2 (dissociation energy and internal partition function from
  :mod:`~thermoplane.physics.eos.atomic_data`, each bound level with its Planck-Larkin weight as for the
  atoms, :func:`~thermoplane.physics.eos.atomic_data.h2_bound_partition`); its volume is taken as twice that of the atom (our own
  choice). Nuclear spins are left out of every weight (the H2 partition function is divided by the
  four nuclear-spin states of two protons), so fully ionized matter has the entropy of the
  fully ionized equation of state.
"""

from __future__ import annotations

from functools import lru_cache
from typing import NamedTuple

import numpy as np

from .. import constants as const
from ..composition import Composition
from . import atomic_data

__all__ = ["Species", "species_for", "H2_TABLE"]


class Species(NamedTuple):
    """Flat arrays over nuclides and their stages (cgs)."""

    nuc_N: np.ndarray        # nuclei per gram
    nuc_Z: np.ndarray        # charge (int)
    nuc_lnlam3: np.ndarray   # ln of lambda^3 T^(3/2) = ln (h^2 / (2 pi m k))^(3/2), cm^3 K^(3/2)
    nuc_start: np.ndarray    # index of stage 0 in the stage arrays
    nuc_h2: np.ndarray       # 1 where the nuclide forms H2
    st_E: np.ndarray         # internal energy of the stage from the neutral ground state, erg
    st_lng: np.ndarray       # ln g of the ground level
    st_v: np.ndarray         # volume, cm^3
    h2_v: float              # H2 volume, cm^3
    h2_D0: float             # H2 dissociation energy from its lowest level, erg


def _stage_arrays(Z: int):
    chi_eV, g = atomic_data.ionization_data(Z)
    chi = np.asarray(chi_eV, dtype=float) * const.eV
    E = np.concatenate([[0.0], np.cumsum(chi)])
    r = (np.arange(Z) + 1.0) * const.e_esu**2 / (2.0 * chi)
    v = np.concatenate([4.0 * np.pi / 3.0 * r**3, [0.0]])
    return E, np.log(np.asarray(g, dtype=float)), v


@lru_cache(maxsize=64)
def _species_cached(key) -> Species:
    comp = Composition(dict(key))
    N = comp.X / (comp.A * const.m_u)
    starts, E, lng, v, h2 = [], [], [], [], []
    pos = 0
    for A_i, Z_i in zip(comp.A, comp.Z):
        z = int(round(float(Z_i)))
        e, lg, vv = _stage_arrays(z)
        starts.append(pos)
        pos += z + 1
        E.append(e), lng.append(lg), v.append(vv)
        h2.append(1 if (z == 1 and A_i < 1.5) else 0)
    lnlam3 = 1.5 * np.log(const.h**2 / (2.0 * np.pi * comp.A * const.m_u * const.k_B))
    v_H = 4.0 * np.pi / 3.0 * (const.e_esu**2 / (2.0 * atomic_data.ionization_data(1)[0][0] * const.eV)) ** 3
    return Species(nuc_N=np.asarray(N, float), nuc_Z=np.asarray([int(round(float(z))) for z in comp.Z], np.int64),
                   nuc_lnlam3=np.asarray(lnlam3, float), nuc_start=np.asarray(starts, np.int64),
                   nuc_h2=np.asarray(h2, np.int64), st_E=np.concatenate(E), st_lng=np.concatenate(lng),
                   st_v=np.concatenate(v), h2_v=2.0 * v_H, h2_D0=float(atomic_data.H2_D0_EV) * const.eV)


def species_for(comp: Composition) -> Species:
    """The species arrays of a composition (cached by its nuclides and fractions)."""
    return _species_cached(tuple(comp.to_dict().items()))


def _h2_table():
    """ln Z_int of H2 (Planck-Larkin weights, nuclear spins divided out) and its first two ln T derivatives
    on a ln T grid; beyond 1e6 K the kernels extend ln Z linearly with the end slope (the sum falls as T^-2
    there, slope -1.96 at 1e6 K)."""
    lnT = np.linspace(np.log(10.0), np.log(1e6), 1201)
    lnZ, d1, d2 = atomic_data.h2_bound_partition(np.exp(lnT))
    return lnT, np.asarray(lnZ, float) - np.log(4.0), np.asarray(d1, float), np.asarray(d2, float)


#: (ln T nodes, ln Z, d ln Z / d ln T, d2 ln Z / d ln T2) for the quintic Hermite interpolation in the kernels
H2_TABLE = _h2_table()
