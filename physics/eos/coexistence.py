"""Two-phase coexistence of the chemical picture: where F is not convex in V, the common tangent.

The question this module answers: where an isotherm of the chemical-picture free energy has a van der Waals
loop (the pressure falls as the density rises: the plasma phase transition of hydrogen that the
excluded-volume term produces), which two phases coexist, and what are P, E, S and their derivatives of the
two-phase mixture?

Coexistence at temperature T (Maxwell's construction; e.g. Landau & Lifshitz, Statistical Physics, sect. 84):
the densities rho_a < rho_b with equal pressure and equal Gibbs energy per gram, g = f + P/rho
(f = E - T S), so the two-phase free energy per gram is the common tangent of f(v) in v = 1/rho,

    f(v, T) = g*(T) - P*(T) v,     rho_a < rho < rho_b,

and the unstable and metastable branches in between are never returned. Everything follows from it:

    P = P*(T),  (dP/drho)_T = 0,  (dP/dT)_rho = P*' = (s_b - s_a) / (v_b - v_a)   (Clausius-Clapeyron),
    s = s_a + (v - v_a) P*',  E = f + T s,
    (ds/dT)_v = s_a' + (v - v_a) P*'' - v_a' P*',

with ' the derivative along the coexistence curve: v_a' = (P*' - P_T^a) / P_v^a (each phase stays on the
curve), s_a' = S_T^a + P_T^a v_a' (Maxwell: (ds/dv)_T = (dP/dT)_v), and P*'' from differentiating the
Clapeyron quotient. The identities hold in the two-phase region as exactly as in each phase. Radiation adds
a free energy linear in v, so it moves no tangent and is added afterwards.

How the curve is found, per temperature: the isotherm is scanned coarsely in log rho (LOG_RHO_RANGE, every
COARSE_STEP) in one call of the equilibrium solver, then finely (FINE_STEP) across its turning points if it
has any, and across each dip of chi_rho below CHI_DIP (a loop narrower than the coarse step shows only
there); on its solved points each local maximum of P followed by a local minimum is a loop;
g on the stable branch below (a) and above (b), as functions of ln P, is compared on their common pressure
range, and the first sign change of g_a - g_b gives the start; Newton iterations on
(ln P_a - ln P_b, (g_a - g_b) rho_a / P_a) in (ln rho_a, ln rho_b) converge it to rounding. Loops whose
branches share no pressure range (below ~1.5e4 K for hydrogen, where the solver finds no root on part of
the neutral branch) are not constructed: those points keep the one-phase result (NaN where it has no root).
"""

from __future__ import annotations

import numpy as np

from ..composition import Composition

__all__ = ["LOG_RHO_RANGE", "T_MAX", "binodal", "apply_coexistence"]

#: the densities scanned for loops, log10 g cm^-3 (the pressure-ionization band of H, He and the C/O K shells)
LOG_RHO_RANGE = (-1.5, 4.5)
#: no isotherm above this temperature is scanned (K): the loops close well below it (measured: H near
#: 5.3e4 K, C/O's K-shell loops at 3e4-3e5 K and none at 1e6, 2e6 K)
T_MAX = 1.0e6
_MAX_LOOPS = 3
_NEWTON = 30


def _solve(rho, T, comp, opts):
    from .equilibrium import solve_equilibrium
    return solve_equilibrium(rho, T, comp, electrons=opts["electrons"], pairs=opts["pairs"],
                             coulomb=opts["coulomb"])


def _gibbs(r, rho, T):
    return r.E - T * r.S + r.P / rho


def _loops_on_isotherm(lr, P, g):
    """Starting (log rho_a, log rho_b) of each loop on one scanned isotherm (finite points only)."""
    ok = np.isfinite(P) & np.isfinite(g) & (P > 0)
    x, p, gg = lr[ok], P[ok], g[ok]
    if x.size < 5:
        return []
    d = np.sign(np.diff(p))
    turns = np.flatnonzero(d[1:] != d[:-1]) + 1           # indices of local extrema
    out = []
    k = 0
    while k < turns.size - 1 and len(out) < _MAX_LOOPS:
        i1, i2 = turns[k], turns[k + 1]
        if not (d[i1 - 1] > 0 > d[i1] and d[i2 - 1] < 0 < d[i2]):     # a maximum followed by a minimum
            k += 1
            continue
        lo_a = turns[k - 1] if k > 0 else 0                           # the rising branch below the maximum
        hi_b = turns[k + 2] if k + 2 < turns.size else x.size - 1      # the rising branch above the minimum
        a, b = slice(lo_a, i1 + 1), slice(i2, hi_b + 1)
        lo, hi = max(p[a].min(), p[b].min()), min(p[a].max(), p[b].max())
        k += 2
        if not lo < hi:
            continue
        lnP = np.linspace(np.log(lo), np.log(hi), 200)
        ga = np.interp(lnP, np.log(p[a]), gg[a])
        gb = np.interp(lnP, np.log(p[b]), gg[b])
        s = np.flatnonzero(np.sign(ga[1:] - gb[1:]) != np.sign(ga[:-1] - gb[:-1]))
        if s.size == 0:
            continue
        Ps = lnP[s[0]]
        out.append((float(np.interp(Ps, np.log(p[a]), x[a])), float(np.interp(Ps, np.log(p[b]), x[b]))))
    return out


#: (composition key, options, T or node index) -> the loops of that isotherm; bounded (about 100 B per entry)
_CACHE: dict = {}
_CACHE_MAX = 200_000
#: isotherms are scanned on a fixed ladder in log10 T (nodes k * NODE_STEP); any other T starts its tie lines
#: from its two neighbouring nodes and converges them at its own T
NODE_STEP = 0.02


def _cached(key, tags, build):
    """Loops for each tag (hashable) from the cache, building the missing ones with build(indices)."""
    todo = [i for i, t in enumerate(tags) if (key, t) not in _CACHE]
    if todo:
        new = build(np.array(todo, dtype=np.intp))
        if len(_CACHE) + len(todo) > _CACHE_MAX:
            _CACHE.clear()
        for k, i in enumerate(todo):
            _CACHE[(key, tags[i])] = new[:, k, :]
    return np.stack([_CACHE[(key, t)] for t in tags], axis=1) if tags else np.zeros((3, 0, _MAX_LOOPS))


def binodal(T, comp: Composition, **options):
    """The coexisting densities at each temperature of ``T`` (1-d array, K).

    Returns (rho_a, rho_b, P) arrays of shape (T.size, 3): up to three loops per isotherm, found in order
    of density; NaN where there is none or its tie line did not converge. ``options`` are those of
    :func:`thermoplane.physics.evaluate` (electrons, pairs, coulomb); the chemical picture is implied.

    The isotherms are scanned on a ladder in log10 T (NODE_STEP); at any T between two nodes each tie line
    present at both starts from their interpolation (from the one node that has it, near the critical point
    or the low-temperature gap) and is converged at T itself; where that fails, T's isotherm is scanned. Both the nodes and the
    converged temperatures are cached per composition and options, so a second map, a zoom or a boundary
    refinement costs a few equation-of-state calls per new temperature.
    """
    from .state import validate_options
    opts = validate_options(ionization="chemical", **options)
    T = np.asarray(T, dtype=float).ravel()
    key = (comp.key(), opts["electrons"], bool(opts["pairs"]), bool(opts["coulomb"]))
    out = np.full((3, T.size, _MAX_LOOPS), np.nan)
    sel = np.flatnonzero(T < T_MAX)
    if sel.size == 0:
        return out[0], out[1], out[2]
    lt = np.log10(T[sel])
    k0 = np.floor(lt / NODE_STEP + 1e-9).astype(np.int64)
    on_node = np.abs(lt - k0 * NODE_STEP) < 1e-9
    nodes = sorted(set(k0.tolist()) | set((k0[~on_node] + 1).tolist()))
    node_T = 10.0 ** (np.array(nodes) * NODE_STEP)
    node_res = _cached(key, [("node", k) for k in nodes], lambda idx: _construct(node_T[idx], comp, opts))
    at = {k: j for j, k in enumerate(nodes)}

    def between(idx):
        """Tie lines at T[sel][idx] from their neighbouring nodes."""
        res = np.full((3, idx.size, _MAX_LOOPS), np.nan)
        lo = np.array([at[k] for k in k0[idx]])
        hi = np.array([at[k + 1] for k in k0[idx]])
        w = (lt[idx] - k0[idx] * NODE_STEP) / NODE_STEP
        a_lo, a_hi = np.log10(node_res[0, lo]), np.log10(node_res[0, hi])
        b_lo, b_hi = np.log10(node_res[1, lo]), np.log10(node_res[1, hi])
        # the same loop at both nodes (finite, and close in density): interpolate; at one node only (near
        # the critical point, or where the low-T gap begins): start from that node's tie line
        both = np.isfinite(a_lo) & np.isfinite(a_hi) & (np.abs(a_lo - a_hi) < 0.2) & (np.abs(b_lo - b_hi) < 0.2)
        wc = w[:, None]
        xa = np.where(both, (1 - wc) * a_lo + wc * a_hi, np.where(np.isfinite(a_lo), a_lo, a_hi))
        xb = np.where(both, (1 - wc) * b_lo + wc * b_hi, np.where(np.isfinite(a_lo), b_lo, b_hi))
        r, c = np.nonzero(np.isfinite(xa) & np.isfinite(xb))
        if r.size:
            ya, yb, Pc, good = _polish(xa[r, c], xb[r, c], T[sel][idx][r], comp, opts)
            res[0, r[good], c[good]] = ya[good]
            res[1, r[good], c[good]] = yb[good]
            res[2, r[good], c[good]] = Pc[good]
            # where a neighbour's tie line did not converge here (near the ends of the loops' range), the
            # isotherm gets its own scan, as a node does
            again = np.unique(r[~good])
            if again.size:
                res[:, again, :] = _construct(T[sel][idx][again], comp, opts)
        return res

    off = np.flatnonzero(~on_node)
    if off.size:
        tags = [("T", float(t)) for t in T[sel][off]]
        out[:, sel[off], :] = _cached(key, tags, lambda idx: between(off[idx]))
    on = np.flatnonzero(on_node)
    if on.size:
        out[:, sel[on], :] = node_res[:, [at[k] for k in k0[on]], :]
    return out[0], out[1], out[2]


#: the coarse scan that finds loops (log10 rho), and the half-width and step of the fine scan around each
COARSE_STEP = 0.05
FINE_STEP = 0.01
FINE_MARGIN = 0.15
#: loops wider than this in log rho are not looked for (the coarse scan's noise at NaN gaps)
MAX_LOOP_WIDTH = 1.0
#: a local minimum of chi_rho below this on the coarse scan is looked at finely (a loop may hide there)
CHI_DIP = 0.3


def _scan(lrs, T, comp, opts):
    """P, g and chi_rho on isotherms: lrs is (rows, points) of log10 rho, T (rows,)."""
    RR = (10.0**lrs).ravel()
    TT = np.repeat(T, lrs.shape[1])
    r = _solve(RR, TT, comp, opts)
    with np.errstate(invalid="ignore", divide="ignore"):
        chi = r.P_lnrho / r.P
    return r.P.reshape(lrs.shape), _gibbs(r, RR, TT).reshape(lrs.shape), chi.reshape(lrs.shape)


def _construct(T, comp, opts):
    nT = T.size
    res = np.full((3, nT, _MAX_LOOPS), np.nan)
    scan = np.flatnonzero(T < T_MAX)
    if scan.size == 0:
        return res
    # 1. a coarse scan of every isotherm finds the turning points of P
    lr = np.arange(LOG_RHO_RANGE[0], LOG_RHO_RANGE[1] + 1e-9, COARSE_STEP)
    P, _, chi = _scan(np.broadcast_to(lr, (scan.size, lr.size)), T[scan], comp, opts)
    windows = []
    for k, i in enumerate(scan):                     # per isotherm (a hundred numbers each), not per point
        ok = np.isfinite(P[k]) & (P[k] > 0)
        x, p, c = lr[ok], P[k][ok], chi[k][ok]
        if x.size < 5:
            continue
        d = np.sign(np.diff(p))
        turns = np.flatnonzero(d[1:] != d[:-1]) + 1
        for t0, t1 in zip(turns[:-1], turns[1:]):
            if d[t0 - 1] > 0 > d[t0] and x[t1] - x[t0] < MAX_LOOP_WIDTH:      # a maximum, then a minimum
                windows.append((i, x[t0] - FINE_MARGIN, x[t1] + FINE_MARGIN))
        # a loop narrower than the coarse step hides between two points whose P still rises; chi_rho
        # dips towards it on both sides: a local minimum of chi_rho below CHI_DIP gets a fine window too
        dips = np.flatnonzero((c[1:-1] < c[:-2]) & (c[1:-1] <= c[2:]) & (c[1:-1] < CHI_DIP)) + 1
        for t in dips:
            if not any(w[0] == i and w[1] <= x[t] <= w[2] for w in windows):
                windows.append((i, x[t] - FINE_MARGIN, x[t] + FINE_MARGIN))
    if not windows:
        return res
    # 2. a fine scan across the turning points of the isotherms that have them
    width = max(b - a for _, a, b in windows)
    m = int(np.ceil(width / FINE_STEP)) + 1
    rows = np.array([w[0] for w in windows])
    lrs = np.array([a + FINE_STEP * np.arange(m) for _, a, _ in windows])
    Pf, gf, _ = _scan(lrs, T[rows], comp, opts)
    # each window ends where it ends (the rows are padded to the widest): what a window finds must not
    # depend on which other isotherms were scanned with it
    beyond = lrs > np.array([b for _, _, b in windows])[:, None] + 1e-9
    Pf[beyond] = np.nan
    gf[beyond] = np.nan
    loops_rows, loops_cols, xa, xb = [], [], [], []
    count = {}                                       # loops found so far on each isotherm (several windows)
    for k, i in enumerate(rows):
        for a, b in _loops_on_isotherm(lrs[k], Pf[k], gf[k]):
            j = count.get(i, 0)
            if j < _MAX_LOOPS:
                loops_rows.append(i)
                loops_cols.append(j)
                xa.append(a)
                xb.append(b)
                count[i] = j + 1
    if not loops_rows:
        return res
    rows_l, cols_l = np.array(loops_rows), np.array(loops_cols)
    ya, yb, Pc, good = _polish(np.array(xa), np.array(xb), T[rows_l], comp, opts)
    # two windows of one isotherm can overlap and find the same loop: it is one tie line, kept once; the
    # loops of an isotherm then fill its columns in order of density (neighbouring nodes line up)
    for k in range(rows_l.size):
        same = (rows_l[:k] == rows_l[k]) & good[:k] & (np.abs(np.log(ya[:k] / ya[k])) < 1e-6)
        if good[k] and np.any(same):
            good[k] = False
    for i in np.unique(rows_l):
        mine = np.flatnonzero((rows_l == i) & good)
        cols_l[mine[np.argsort(ya[mine])]] = np.arange(mine.size)
    res[0, rows_l[good], cols_l[good]] = ya[good]
    res[1, rows_l[good], cols_l[good]] = yb[good]
    res[2, rows_l[good], cols_l[good]] = Pc[good]
    return res


def _polish(xa, xb, Tl, comp, opts):
    """Newton iterations on the coexistence conditions from log10 rho_a, log10 rho_b; all loops at once.

    A step that lands where the solver finds no root (the neutral branch ends near its packing limit just
    below the low-temperature end of the loops) is taken back and halved."""
    y = np.log(10.0) * np.column_stack([xa, xb])         # ln rho_a, ln rho_b
    prev = y.copy()
    last = np.zeros_like(y)                               # the step that led from prev to y
    done = np.zeros(Tl.size, dtype=bool)
    P_out = np.full(Tl.size, np.nan)
    for _ in range(_NEWTON):
        act = np.flatnonzero(~done)
        if act.size == 0:
            break
        n = act.size
        TT = np.concatenate([Tl[act], Tl[act]])
        rr = np.exp(np.concatenate([y[act, 0], y[act, 1]]))
        s = _solve(rr, TT, comp, opts)
        g = _gibbs(s, rr, TT)
        Pa, Pb, ga, gb = s.P[:n], s.P[n:], g[:n], g[n:]
        dPa, dPb = s.P_lnrho[:n], s.P_lnrho[n:]                 # dP / d ln rho at fixed T
        scale = Pa / rr[:n]
        with np.errstate(invalid="ignore", divide="ignore"):     # P <= 0 at a trial point: no root (below)
            R1 = np.log(Pa) - np.log(Pb)
        R2 = (ga - gb) / scale
        # dg / d ln rho = (1/rho) dP / d ln rho at fixed T (Gibbs-Duhem)
        J11, J12 = dPa / Pa, -dPb / Pb
        J21, J22 = dPa / rr[:n] / scale, -dPb / rr[n:] / scale
        det = J11 * J22 - J12 * J21
        with np.errstate(invalid="ignore", divide="ignore"):     # a singular step is no root (below)
            d0 = (R1 * J22 - R2 * J12) / det
            d1 = (J11 * R2 - J21 * R1) / det
        # converged: the residuals at rounding, or a stalled step with residuals already small
        small = (np.abs(R1) < 1e-11) & (np.abs(R2) < 1e-10)
        conv = ((np.abs(R1) < 1e-13) & (np.abs(R2) < 1e-12)) | (small & (np.maximum(np.abs(d0), np.abs(d1)) < 1e-13))
        P_out[act[conv]] = 0.5 * (Pa + Pb)[conv]
        bad = ~np.isfinite(d0 + d1)
        # no root at the trial point: back to the last good point with half the step
        back = act[bad]
        last[back] *= 0.5
        y[back] = prev[back] + last[back]
        lost = bad & (np.max(np.abs(last[act]), axis=1) < 1e-8)
        step = np.clip(np.column_stack([d0, d1]), -0.05, 0.05)
        go = act[~bad & ~conv]
        prev[go] = y[go]
        last[go] = -step[~bad & ~conv]
        y[go] = y[go] + last[go]
        done[act[conv | lost]] = True
    good = np.isfinite(P_out) & (y[:, 0] < y[:, 1] - 1e-6)
    return np.exp(y[:, 0]), np.exp(y[:, 1]), P_out, good


def apply_coexistence(rho, T, comp: Composition, r, opts: dict):
    """Replace, inside every coexistence interval, the one-phase equilibrium ``r`` (1-d, per gram, the
    :class:`~thermoplane.physics.eos.equilibrium.Equilibrium` of ``rho``, ``T``) by the two-phase mixture.

    Returns (r, flag): the updated equilibrium (status 4 inside) and a 0/1 array, 1 in coexistence.
    """
    flag = np.zeros(rho.size)
    cand = np.flatnonzero(T < T_MAX)
    if cand.size == 0:
        return r, flag
    Tu, inv = np.unique(T[cand], return_inverse=True)
    ra, rb, _ = binodal(Tu, comp, electrons=opts["electrons"], pairs=opts["pairs"], coulomb=opts["coulomb"])
    a_pt, b_pt = ra[inv], rb[inv]                                   # (cand, loops)
    with np.errstate(invalid="ignore"):
        inside = (rho[cand, None] > a_pt) & (rho[cand, None] < b_pt)
    hit = inside.any(axis=1)
    if not hit.any():
        return r, flag
    idx = cand[hit]
    loop = np.argmax(inside[hit], axis=1)
    rho_a = a_pt[hit, loop]
    rho_b = b_pt[hit, loop]
    Tm = T[idx]
    n = idx.size
    s = _solve(np.concatenate([rho_a, rho_b]), np.concatenate([Tm, Tm]), comp, opts)
    A = {k: getattr(s, k)[:n] for k in s._fields}
    B = {k: getattr(s, k)[n:] for k in s._fields}
    v, va, vb = 1.0 / rho[idx], 1.0 / rho_a, 1.0 / rho_b
    # per-gram one-phase derivatives: P_T, S_T at fixed rho; P_v = dP/dv at fixed T
    PTa, PTb = A["P_lnT"] / Tm, B["P_lnT"] / Tm
    STa, STb = A["S_lnT"] / Tm, B["S_lnT"] / Tm
    Pva, Pvb = -rho_a * A["P_lnrho"], -rho_b * B["P_lnrho"]        # dP/dv = -rho dP/d ln rho
    Pstar = 0.5 * (A["P"] + B["P"])
    dP = (B["S"] - A["S"]) / (vb - va)                               # Clausius-Clapeyron
    dva = (dP - PTa) / Pva
    dvb = (dP - PTb) / Pvb
    dsa = STa + PTa * dva
    dsb = STb + PTb * dvb
    d2P = ((dsb - dsa) * (vb - va) - (B["S"] - A["S"]) * (dvb - dva)) / (vb - va) ** 2
    fa = A["E"] - Tm * A["S"]
    gstar = fa + Pstar * va
    f = gstar - Pstar * v
    S = A["S"] + (v - va) * dP
    S_T = dsa + (v - va) * d2P - dva * dP
    E = f + Tm * S
    rr = rho[idx]
    x = (va - v) / (va - vb)                                         # mass fraction in the dense phase b
    new = {k: np.array(getattr(r, k), dtype=float, copy=True) for k in r._fields}
    new["P"][idx] = Pstar
    new["P_lnrho"][idx] = 0.0
    new["P_lnT"][idx] = Tm * dP
    new["S"][idx] = S
    new["S_lnT"][idx] = Tm * S_T
    new["S_lnrho"][idx] = -dP / rr                                   # ds/d ln rho = -v dP*/dT
    new["E"][idx] = E
    new["E_lnT"][idx] = Tm * Tm * S_T                                # (dE/dT)_v = T (dS/dT)_v
    new["E_lnrho"][idx] = (Pstar - Tm * dP) / rr                     # (dE/d ln rho)_T = (P - T dP/dT) / rho
    new["residual"][idx] = np.maximum(A["residual"], B["residual"])
    for k in ("eta", "ion_H", "ion_He1", "ion_He2", "h2_fraction", "zeta"):
        new[k][idx] = (1.0 - x) * A[k] + x * B[k]
    for k in ("n_minus", "n_plus", "n_e"):                           # per volume: lever rule on volumes
        new[k][idx] = rr * ((1.0 - x) * A[k] / rho_a + x * B[k] / rho_b)
    for k in ("metal_electrons", "heavy"):                           # per gram
        new[k][idx] = (1.0 - x) * A[k] + x * B[k]
    for k in ("P_ion", "P_e", "P_coul"):                             # the parts of P* in the two phases' mix
        new[k][idx] = (1.0 - x) * A[k] + x * B[k]
    new["status"] = np.array(r.status, copy=True)
    new["status"][idx] = 4
    flag[idx] = 1.0
    return type(r)(**new), flag
