"""Electrons, ions and the ionization equilibrium between them.

The question this module answers: for matter of a given composition at
(rho, T), how many electrons are free, what is their degeneracy eta, and what
are the pressure, energy and entropy of electrons plus ions, with exact
derivatives?

Charge neutrality closes the system: the net electron density of the
electron gas at eta equals the free electrons the ions give up,

    G(eta; rho, T) = n_gas(eta, T) - rho [N_fixed + sum_s N_s zbar_s(eta, T, rho)] = 0,

with N_fixed the electrons per gram of nuclei taken as fully ionized (all
metals; every nuclide when ionization="full") and zbar_s the Saha mean charge
of H and He (:mod:`thermoplane.physics.ionization`). G increases with eta, so the root is
unique; it is found by safeguarded Newton iterations on
ln n_gas - ln n_free. Derivatives follow by implicit differentiation:
d eta / dx = -G_x / G_eta.

Free energy per gram (ions of kind s in stage j, fraction f_j, with
Lambda_s = h / sqrt(2 pi m_s k T)):

    F = F_e / rho + sum_s N_s sum_j f_j [kT (ln(n_s f_j Lambda_s^3 / g_j) - 1) - kT ln w_j + C_j]

whose minimum over the f_j is the Saha equilibrium; P, E, S and all their
derivatives below are derived from it, so (dE/drho)_T = (P - T (dP/dT)) / rho^2
holds to rounding. The ionization energy C_j of H and He (from the neutral
atom) is part of E; the metals, always fully ionized, carry no ionization
energy (a constant left out).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from . import constants as const
from .composition import Composition
from .electron_table import _merge, table_eta
from .electron_fast import pair_free_state, pair_onset_state, pair_table_state, state_from_points
from .electrons import _CN, ElectronGas, ElectronState
from .ionization import ALL_DESTROYED_T, ELEMENTS, ionization_stages
from .matter_kernel import FIELDS, matter_at_root, metal_electrons_fixed
from .saha_kernel import solve_saha_compiled, solve_saha_state
from .thermo import Part

__all__ = ["MatterResult", "matter"]

_NEWTON_TOL = 1e-13
_MAX_ITER = 80


def _quantum_concentration_e(T):
    """2 / lambda_e^3 = 2 (2 pi m_e k T / h^2)^(3/2), cm^-3."""
    return 2.0 * (2.0 * np.pi * const.m_e * const.k_B * T / const.h**2) ** 1.5


def classical_state(n, T) -> ElectronState:
    """Non-degenerate, non-relativistic electrons (Maxwell–Boltzmann, spin weight 2) at density n.

    eta = ln(n lambda^3 / 2), P = n k T, E = (3/2) n k T; no positrons.
    """
    k = const.k_B
    eta = np.log(n / _quantum_concentration_e(T))
    zero = np.zeros_like(n)
    gas = ElectronGas(n_minus=n, n_plus=zero, n_net=n, P=n * k * T, E=1.5 * n * k * T,
                      S=n * k * (2.5 - eta), dn_deta=n, dn_dT=1.5 * n / T, dP_deta=n * k * T,
                      dP_dT=2.5 * n * k, dE_deta=1.5 * n * k * T, dE_dT=3.75 * n * k)
    return ElectronState(gas=gas, eta=eta, dP_dn=k * T + zero, dP_dT_n=n * k, dE_dn=1.5 * k * T + zero,
                         dE_dT_n=1.5 * n * k, deta_dn=1.0 / n, deta_dT=-1.5 / T + zero)


#: log10 T above which the pair table is used where positrons matter (it is accurate there:
#: tests/physics/test_electron_table.py); below it, points with positrons go to the exact quadrature.
PAIR_TABLE_LOG_T = 9.4
#: Positrons below this fraction of the net electrons are left out (their effect on P is smaller).
NEGLIGIBLE_POSITRONS = 1e-10


def _positron_bound(eta, T):
    """An upper bound on n_+ / n_- scale: non-degenerate positrons at eta_+ = -eta - 2/theta, cm^-3.

    n_+ <= C theta^(3/2) e^(eta_+) [G_1/2 + theta G_3/2], G_k <= Gamma(k+1) (1 + theta (k+1)/4).
    """
    theta = const.k_B * T / const.m_e_c2
    eta_plus = np.minimum(-eta - 2.0 / theta, 0.0)
    G = 0.8862269 * (1.0 + 0.375 * theta) + theta * 1.3293404 * (1.0 + 0.625 * theta)
    return _CN * theta**1.5 * np.exp(eta_plus) * G


def fermi_state(n, T, pairs: bool) -> ElectronState:
    """The Fermi–Dirac electron(–positron) gas at net density n and T, fast where it can be.

    Without pairs: the pair-free table (compiled over the map, physics.electron_fast). With pairs: the same
    where positrons are negligible (bound above), the pair table in the hot pair plasma, and the fine
    pair-onset tables (physics.electron_table.onset_state, exact quadrature outside them) in
    between, where the main pair table is not accurate enough; both tables read by the compiled, parallel
    reader of physics.electron_fast (pair_table_state, pair_onset_state).
    Each point's values come from one consistent source.
    """
    st0 = pair_free_state(n, T)
    if not pairs:
        return st0
    # eta alone decides which points need positrons; their state is formed again with pairs
    need = _positron_bound(st0.eta, T) > NEGLIGIBLE_POSITRONS * n
    if not np.any(need):
        return st0
    hot = need & (T >= 10.0**PAIR_TABLE_LOG_T)
    # written into st0's own (fresh) arrays at those points: no merged copy of every field
    for mask, state_at in ((hot, pair_table_state), (need & ~hot, pair_onset_state)):
        if mask.any():
            st = state_at(n[mask], T[mask])
            for name in ElectronGas._fields:
                getattr(st0.gas, name)[mask] = getattr(st.gas, name)
            for name in ElectronState._fields[1:]:
                getattr(st0, name)[mask] = getattr(st, name)
    return st0


def _subset(st: ElectronState, mask) -> ElectronState:
    return ElectronState(gas=ElectronGas(*(a[mask] for a in st.gas)),
                         **{k: getattr(st, k)[mask] for k in ElectronState._fields[1:]})


def _eta_at(n, T, electrons: str, pairs: bool):
    """eta and (deta/dn)_T of :func:`electrons_at` (identical values), without the other fields."""
    if electrons == "classical":
        st = classical_state(n, T)
        return st.eta, st.deta_dn
    eta, deta_dn = table_eta(n, T, pairs=False)
    if not pairs:
        return eta, deta_dn
    need = np.flatnonzero(_positron_bound(eta, T) > NEGLIGIBLE_POSITRONS * n)
    if need.size:
        st = fermi_state(n[need], T[need], pairs=True)
        eta[need], deta_dn[need] = st.eta, st.deta_dn
    return eta, deta_dn


def electrons_at(n, T, electrons: str, pairs: bool) -> ElectronState:
    """The electron gas at net density n (cm^-3) and T: table, exact quadrature, or classical."""
    if electrons == "classical":
        return classical_state(n, T)
    return fermi_state(n, T, pairs=pairs)


class MatterResult(NamedTuple):
    part: Part                  # electrons + ions (+ bound-state pressure), per gram
    P_e: np.ndarray
    P_ion: np.ndarray
    eta: np.ndarray
    n_net: np.ndarray
    n_minus: np.ndarray
    n_plus: np.ndarray
    n_full: np.ndarray          # electron density if fully ionized
    ion_H: np.ndarray
    ion_He1: np.ndarray
    ion_He2: np.ndarray
    mean_Z: np.ndarray
    metal_electrons: np.ndarray  # free electrons from elements heavier than He, per gram


#: How the metals (Z = 3..30) ionize under ionization="saha": "full" (always fully ionized, the default) or
#: "saha" (their own Saha stages with the pressure-ionization rule, each stage destroyed at its own size).
#: Not the default yet: the rule's pressure is left out of P (see physics.ionization), and the metals' own
#: pressure-ionization bands break rho^2 (dE/drho)_T = P - T (dP/dT)_rho there (measured in the README).
METAL_IONIZATION = "full"
_METAL_CHOICES = ("full", "saha")


def _saha_elements(comp: Composition, ionization: str, metals: str | None = None):
    """Which elements get Saha stages: {Z: N_per_gram}, and electrons per gram of the rest.

    H and He with ionization="saha"; the metals Li..Zn too when ``metals`` (default
    :data:`METAL_IONIZATION`) is "saha"."""
    metals = METAL_IONIZATION if metals is None else metals
    if metals not in _METAL_CHOICES:
        raise ValueError(f"metals must be one of {_METAL_CHOICES}, got {metals!r}")
    top = max(ELEMENTS) if metals == "saha" else 2
    per_mass = comp.X / (comp.A * const.m_u)
    saha = {}
    fixed = 0.0
    for N, Z in zip(per_mass, comp.Z):
        if ionization == "saha" and Z == int(Z) and 1 <= int(Z) <= top:
            saha[int(Z)] = saha.get(int(Z), 0.0) + float(N)
        else:
            fixed += float(N * Z)
    return saha, fixed


def _free_electrons(stages, saha, fixed, rho):
    """n_free and its partials (eta, T, ln rho at fixed other two) from the stage fractions."""
    zsum = fixed + sum(saha[z] * stages[z].mean_charge for z in saha)
    partials = [sum(saha[z] * stages[z].mean_charge_partials()[i] for z in saha) for i in range(3)]
    return (rho * zsum, *(rho * d for d in partials))


def _stages(saha, eta, T, n_full):
    return {z: ionization_stages(ELEMENTS[z], eta, T, n_full) for z in saha}


class _MeanCharge:
    """The mean charge of each Saha element and its eta-partial as functions of eta at fixed (rho, T), for the
    numpy root: ln q_j = a_j - j eta with a_j = ln g_j + ln w_j - C_j / kT formed once (w depends on rho and T
    only), one 2-d pass per element and call (the same values as ionization_stages' f_j, to rounding)."""

    def __init__(self, saha, T, n_full):
        self.terms = {}
        zero = np.zeros_like(T)
        for z in saha:
            st = ionization_stages(ELEMENTS[z], zero, T, n_full)
            kT = const.k_B * T
            a = np.array([np.log(g) + lw - C / kT for g, lw, C in
                          zip(ELEMENTS[z].weights, st.ln_w, st.cumulative)])
            self.terms[z] = (a, np.arange(z + 1.0)[:, None])

    def subset(self, keep):
        out = _MeanCharge.__new__(_MeanCharge)
        out.terms = {z: (a[:, keep], j) for z, (a, j) in self.terms.items()}
        return out

    def __call__(self, z, eta):
        a, j = self.terms[z]
        lq = a - j * eta
        t = np.argmax(lq, axis=0)
        top = np.take_along_axis(lq, t[None], axis=0)
        q = np.exp(lq - top)
        dj = j - t
        s0 = q.sum(axis=0)
        m = (dj * q).sum(axis=0) / s0
        return t + m, -((dj * dj * q).sum(axis=0) / s0 - m * m)


def _solve_saha(n_full, rho, T, saha, fixed, electrons, pairs):
    """ln n_e from ln n_e = ln n_free(eta(n_e, T)) where ionization is incomplete (1-D arrays).

    Phi(y) = y - ln n_free(eta(e^y, T)) increases with y (slope >= 1), so Newton
    steps safeguarded by a bracket [lo, hi] converge; hi starts at ln n_full. A step that leaves the
    bracket, or is not at most half the step before it, is replaced by bisection (rtsafe of Press et al.,
    Numerical Recipes): across pressure ionization n_free(eta) is a steep step that Newton overshoots.
    """
    y = np.log(n_full)
    hi = y.copy()
    lo = np.log(rho * fixed) if fixed > 0 else np.full_like(y, -np.inf)
    active = np.arange(y.size)
    dx_old = np.full(y.size, np.inf)
    metals = _MeanCharge(saha, T, n_full) if max(saha) > 2 else None
    for _ in range(_MAX_ITER):
        if active.size == 0:
            break
        ya = y[active]
        eta, deta_dn = _eta_at(np.exp(ya), T[active], electrons, pairs)
        ra = rho[active]
        if metals is not None:
            # many stages: the mean charges from ln q_j formed once (_MeanCharge), not every stage's partials
            mc = metals.subset(active)
            zs = {z: mc(z, eta) for z in saha}
            n_free = ra * (fixed + sum(saha[z] * zs[z][0] for z in saha))
            nf_eta = ra * sum(saha[z] * zs[z][1] for z in saha)
        else:
            st = _stages(saha, eta, T[active], n_full[active])
            # n_free and its eta-partial only, in the arithmetic order of _free_electrons (same values)
            n_free = ra * (fixed + sum(saha[z] * st[z].mean_charge for z in saha))
            nf_eta = ra * sum(saha[z] * sum(j * st[z].f_eta[j] for j in range(len(st[z].f))) for z in saha)
        # where every ion's weight is below the smallest double (very cold, degenerate at this n_e: T < 1e3 K
        # near 1 g cm^-3) n_free is 0: phi is +inf, the step the largest allowed (40 in ln n_e) downwards
        some = n_free > 0.0
        safe = np.where(some, n_free, 1.0)
        phi = np.where(some, ya - np.log(safe), np.inf)
        slope = np.where(some, 1.0 - nf_eta / safe * deta_dn * np.exp(ya), 1.0)
        done = np.abs(phi) < _NEWTON_TOL
        pos = phi > 0
        hi[active] = np.where(pos, ya, hi[active])
        lo[active] = np.where(pos, lo[active], ya)
        new = ya - np.clip(phi / slope, -40.0, 40.0)
        la, ha = lo[active], hi[active]
        outside = (new <= la) | (new >= ha) | (np.isfinite(la) & (2.0 * np.abs(new - ya) > dx_old[active]))
        new = np.where(outside & np.isfinite(la), 0.5 * (la + ha), np.where(outside, ha - 40.0, new))
        dx_old[active] = np.abs(new - ya)
        small = np.abs(new - ya) < 1e-14 * np.maximum(1.0, np.abs(ya))
        y[active] = np.where(done, ya, new)
        active = active[~(done | small)]
    return np.exp(y)


def _saha_density(n_full, r, t, saha, fixed, electrons, pairs):
    """n_e and the electron gas there by the numpy passes: n_full where the gas at n_full leaves nothing
    bound (that gas is kept), the Saha root elsewhere (compiled where the pair-free table holds it,
    :func:`_solve_saha` for the rest) and the gas at the root."""
    n_e = n_full.copy()
    st_full = electrons_at(n_full, t, electrons, pairs)
    n_free0 = _free_electrons(_stages(saha, st_full.eta, t, n_full), saha, fixed, r)[0]
    with np.errstate(divide="ignore"):                 # n_free0 = 0: every ion below the smallest double
        incomplete = np.flatnonzero(np.log(n_full) - np.log(n_free0) > _NEWTON_TOL)
    if incomplete.size == 0:
        return n_e, st_full
    todo = incomplete
    if electrons == "fermi":
        n_c, ok = solve_saha_compiled(n_full[todo], r[todo], t[todo], saha, fixed, ELEMENTS, pairs)
        n_e[todo[ok]] = n_c[ok]
        todo = todo[~ok]
    if todo.size:
        n_e[todo] = _solve_saha(n_full[todo], r[todo], t[todo], saha, fixed, electrons, pairs)
    solved = np.zeros(n_e.size, dtype=bool)
    solved[incomplete] = True
    return n_e, _merge(n_e.size, [(~solved, lambda nn, tt: _subset(st_full, ~solved)),
                                  (solved, lambda nn, tt: electrons_at(nn, tt, electrons, pairs))], n_e, t)


def matter(rho, T, comp: Composition, electrons: str, ionization: str, pairs: bool,
           compiled: bool = True, metals: str | None = None) -> MatterResult:
    """Electrons + ions in ionization equilibrium at (rho, T), with exact derivatives.

    Parameters
    ----------
    rho, T : ndarray
        Density (g cm^-3) and temperature (K), same shape.
    comp : Composition
    electrons : {"fermi", "classical"}
        Fermi–Dirac electron–positron gas, or Maxwell–Boltzmann electrons
        (no positrons).
    ionization : {"saha", "full"}
        Saha H and He with pressure ionization, or everything fully ionized.
    pairs : bool
        Thermal electron–positron pairs (Fermi electrons only).
    compiled : bool
        With Saha ionization and Fermi electrons, form everything after the Saha root in the compiled pass
        (:func:`~thermoplane.physics.matter_kernel.matter_at_root`) where the compiled Saha pass solved the
        point (the default), or by the numpy passes of :func:`_post_root` everywhere (the reference of the
        tests; the same values to rounding).
    metals : {"full", "saha"} or None
        How the metals Li..Zn ionize with ionization="saha" (None: :data:`METAL_IONIZATION`): fully, or by
        their own Saha stages (every stage of every metal, the pressure-ionization rule with each stage's
        own size; the compiled passes sum only the stages within e^-40 of each element's largest).
    """
    shape = rho.shape
    r, t = rho.ravel(), T.ravel()
    pairs = bool(pairs) and electrons == "fermi"
    saha, fixed = _saha_elements(comp, ionization, metals)
    N_full = float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    n_full = r * N_full

    # 1. the free-electron density: n_full where ionization is complete, Saha elsewhere; and the electron gas
    #    there. Fermi electrons: one compiled pass per point (physics.saha_kernel.solve_saha_state) where the
    #    pair-free table holds the point, and everything after the root in a second compiled pass
    #    (physics.matter_kernel.matter_at_root); the numpy passes for the rest (positrons, outside the table)
    if saha and electrons == "fermi":
        # with metals among the Saha elements, cool matter can hold fewer free electrons than the table's
        # lowest density: the compiled reader's Boltzmann continuation takes those roots
        below = max(saha) > 2
        n_e, buf, ok = solve_saha_state(n_full, r, t, saha, fixed, ELEMENTS, pairs, below_table=below)
        rest = np.flatnonzero(~ok)
        if compiled:
            out = matter_at_root(r, t, n_full, n_e, buf, ok, comp, saha, fixed, ELEMENTS)
            # where every bound state is destroyed (T >= ALL_DESTROYED_T: most of the points with positrons)
            # the Saha equilibrium is full ionization exactly: the fully ionized passes, plus the energy of
            # ionization the Saha stages count (their zero is the neutral atom); equal to rounding (tested)
            hot = rest[t[rest] >= ALL_DESTROYED_T]
            rest = rest[t[rest] < ALL_DESTROYED_T]
            if hot.size:
                n_e[hot] = n_full[hot]
                sub = _post_root(r[hot], t[hot], n_full[hot], n_e[hot], electrons_at(n_e[hot], t[hot], electrons, pairs),
                                 comp, {}, N_full)
                sub["E"] = sub["E"] + sum(N * ELEMENTS[z].cumulative_erg[-1] for z, N in saha.items())
                out[:, hot] = [sub[f] for f in FIELDS]
            if rest.size:
                n_e[rest], es_rest = _saha_density(n_full[rest], r[rest], t[rest], saha, fixed, electrons, pairs)
                sub = _post_root(r[rest], t[rest], n_full[rest], n_e[rest], es_rest, comp, saha, fixed)
                out[:, rest] = [sub[f] for f in FIELDS]
            return _result(dict(zip(FIELDS, out)), n_e, n_full, shape)
        if rest.size == 0:
            es = state_from_points(n_e, t, buf)
        else:
            n_e[rest], es_rest = _saha_density(n_full[rest], r[rest], t[rest], saha, fixed, electrons, pairs)
            es = _merge(n_e.size, [(ok, lambda nn, tt: state_from_points(nn, tt, buf[ok])),
                                   (~ok, lambda nn, tt: es_rest)], n_e, t)
    elif saha:
        n_e, es = _saha_density(n_full, r, t, saha, fixed, electrons, pairs)
    else:
        n_e = n_full.copy()
        es = electrons_at(n_e, t, electrons, pairs)
    return _result(_post_root(r, t, n_full, n_e, es, comp, saha, fixed), n_e, n_full, shape)


def _result(fields, n_e, n_full, shape) -> MatterResult:
    rs = lambda a: np.reshape(a, shape)  # noqa: E731
    part = Part(*(rs(fields[f]) for f in Part.__dataclass_fields__))
    return MatterResult(part=part, P_e=rs(fields["P_e"]), P_ion=rs(fields["P_ion"]), eta=rs(fields["eta"]),
                        n_net=rs(n_e), n_minus=rs(fields["n_minus"]), n_plus=rs(fields["n_plus"]),
                        n_full=rs(n_full), ion_H=rs(fields["ion_H"]), ion_He1=rs(fields["ion_He1"]),
                        ion_He2=rs(fields["ion_He2"]), mean_Z=rs(fields["mean_Z"]),
                        metal_electrons=rs(fields["metal_electrons"]))


def _post_root(r, t, n_full, n, es: ElectronState, comp: Composition, saha, fixed) -> dict:
    """Everything at the solved density n (1-d arrays), by numpy passes: the fields of
    :data:`~thermoplane.physics.matter_kernel.FIELDS`, with partials from the implicit differentiation of
    G(n; rho, T) = n - n_free(eta(n, T), T, rho) = 0. :func:`~thermoplane.physics.matter_kernel.matter_at_root`
    is the same pass compiled (tests/physics/test_compiled_paths.py compares the two)."""
    k = const.k_B
    eta = es.eta
    stages = _stages(saha, eta, t, n_full)
    n_free, nf_eta, nf_T, nf_ln = _free_electrons(stages, saha, fixed, r)
    G_n = 1.0 - nf_eta * es.deta_dn
    dn_drho = (n_free + nf_ln) / r / G_n
    dn_dT = (nf_eta * es.deta_dT + nf_T) / G_n
    deta_drho = es.deta_dn * dn_drho
    deta_dT = es.deta_dT + es.deta_dn * dn_dT

    # electrons, per gram. S per volume and its partials from the gas's own S, (dP/dT)_n and (dE/dT)_n:
    # (dS/dn)_T = (S - (dP/dT)_n) / n (from P = n f_n - f), (dS/dT)_n = (dE/dT)_n / T. Not from
    # S = (E + P - eta k T n) / T: in degenerate matter that difference is ~eta^2 smaller than its terms
    # and rounding would swamp it (S < 0 measured at eta > 1e5)
    gas = es.gas
    P_e = gas.P
    Pe_rho = es.dP_dn * dn_drho
    Pe_T = es.dP_dT_n + es.dP_dn * dn_dT
    Ee = gas.E / r
    Ee_rho = es.dE_dn * dn_drho / r - gas.E / r**2
    Ee_T = (es.dE_dT_n + es.dE_dn * dn_dT) / r
    S_vol = gas.S
    S_n = (gas.S - es.dP_dT_n) / n
    S_Tn = es.dE_dT_n / t
    Se = S_vol / r
    Se_rho = S_n * dn_drho / r - S_vol / r**2
    Se_T = (S_Tn + S_n * dn_dT) / r

    # ions (kinetic), bound-state pressure, ionization energy, per gram
    per_mass = comp.X / (comp.A * const.m_u)
    N_nuc = float(np.sum(per_mass))
    P_ion = r * N_nuc * k * t
    Pi_rho = N_nuc * k * t
    Pi_T = r * N_nuc * k
    Ei = 1.5 * N_nuc * k * t
    Ei_T = 1.5 * N_nuc * k + 0.0 * t
    Ei_rho = np.zeros_like(t)
    lam3_T = (const.h**2 / (2.0 * np.pi * const.m_u * k * t)) ** 1.5       # per u of mass, times A^-3/2
    Si = np.zeros_like(t)
    Si_rho = -k * N_nuc / r
    Si_T = 1.5 * k * N_nuc / t
    ln_r, ln_lam3 = np.log(r), np.log(lam3_T)
    for N_i, A_i, Z_i in zip(per_mass, comp.A, comp.Z):   # loop over nuclides
        ln_nL3 = ln_r + np.log(N_i) + ln_lam3 - 1.5 * np.log(A_i)   # separate logs: N_i may be tiny
        st = stages.get(int(Z_i)) if (int(Z_i) == Z_i and int(Z_i) in saha) else None
        if st is None:
            Si += N_i * k * (2.5 - ln_nL3)
            continue
        for j, f in enumerate(st.f):
            df_rho = st.f_lnrho[j] / r + st.f_eta[j] * deta_drho
            df_T = st.f_T[j] + st.f_eta[j] * deta_dT
            inner = ln_nL3 + st.ln_f_gw[j]                 # ln(n_j Lambda^3 / (g_j w_j))
            Si += N_i * k * f * (2.5 - inner)
            dlnw_rho = st.ln_w_lnrho[j] / r + st.ln_w_eta[j] * deta_drho
            dlnw_T = st.ln_w_T[j] + st.ln_w_eta[j] * deta_dT
            Si_rho += N_i * k * (df_rho * (1.5 - inner) + f * dlnw_rho)
            Si_T += N_i * k * (df_T * (1.5 - inner) + f * dlnw_T)
            C = st.cumulative[j]
            Ei += N_i * f * C
            Ei_rho += N_i * C * df_rho
            Ei_T += N_i * C * df_T
            # the pressure-ionization rule's free energy F_w = -kT ln w: k ln w is in the entropy above;
            # its energy E_w = F_w - T dF_w/dT adds to E, and E_w / T to S (S_w = (E_w - F_w) / T)
            ew = N_i * f * st.e_w[j]
            ew_rho = N_i * (df_rho * st.e_w[j] + f * st.e_w_lnrho[j] / r)
            ew_T = N_i * (df_T * st.e_w[j] + f * st.e_w_T[j])
            Ei += ew
            Ei_rho += ew_rho
            Ei_T += ew_T
            Si += ew / t
            Si_rho += ew_rho / t
            Si_T += ew_T / t - ew / t**2

    part = Part(P=P_e + P_ion, E=Ee + Ei, S=Se + Si, P_rho=Pe_rho + Pi_rho, P_T=Pe_T + Pi_T,
                E_rho=Ee_rho + Ei_rho, E_T=Ee_T + Ei_T, S_rho=Se_rho + Si_rho, S_T=Se_T + Si_T)
    one = np.ones_like(t)
    fields = {f: getattr(part, f) for f in Part.__dataclass_fields__}
    fields.update(P_e=P_e, P_ion=P_ion, eta=eta, n_minus=gas.n_minus, n_plus=gas.n_plus,
                  ion_H=stages[1].f[1] if 1 in stages else one,
                  ion_He1=(stages[2].f[1] + stages[2].f[2]) if 2 in stages else one,
                  ion_He2=stages[2].f[2] if 2 in stages else one, mean_Z=n_free / (r * N_nuc),
                  metal_electrons=metal_electrons_fixed(comp, saha) + sum(saha[z] * stages[z].mean_charge
                                                                          for z in saha if z > 2) + 0.0 * t)
    return fields
