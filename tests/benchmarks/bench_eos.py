"""Benchmark: physics.evaluate (default physics) on the 400 x 400 default plane, against np.exp and against a
previous revision of the code, in one run.

Prints, from one run on this machine, the time per point of evaluate in units of np.exp on the same
number of doubles, for ionization="saha" (the default: Fermi electrons, pairs, Coulomb) and "full"; the same
for the stages (the matter part physics.matter.matter, the dense-plasma terms physics.eos.dense_plasma.dense_parts,
the response functions); and, with a baseline revision (default BASELINE, the tree before the speed work of
issues 11/12; ``--baseline REV`` for another, ``--baseline none`` to skip), the same calls of that revision
loaded side by side (``git archive REV`` into a temporary folder, imported as a second package), timed
alternately with the current tree so that both see the same load. Further lines: the per-point quad + brentq
electron solve (the baseline of bench_electrons.py, scaled from a few points), the compiled steps against
their numpy counterparts (electron gas, Saha root, the pass after the root), the dense-plasma terms on 1 thread
and on all threads. Asserts nothing.
On a machine shared with other work, wall times of long calls stretch with the load while np.exp's best
of 50 does not: ``--clock cpu --threads 1`` gives the steadier single-core figures.
Run: python tests/benchmarks/bench_eos.py [--baseline REV] [--repeat N] [--threads N] [--clock wall|cpu]
"""

import argparse
import importlib
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
sys.path.insert(0, ROOT)

from thermoplane import physics as ph  # noqa: E402
from thermoplane.physics import constants as const  # noqa: E402
from tests.benchmarks.bench_electrons import best, naive_point  # noqa: E402

TARGETS = {"saha": 1500, "full": 800}      # exp-units per point: the full physics, and fully ionized (issue 11)
#: main before the speed work (dense-plasma sharing, fused Saha + electron pass)
BASELINE = "de10cae"


def load_revision(rev):
    """The physics package of git revision ``rev`` as a second top-level package (None if git fails)."""
    tmp = tempfile.mkdtemp(prefix="bench_eos_")
    name = "thermoplane_rev_" + "".join(c for c in rev if c.isalnum())
    pkg = os.path.join(tmp, name)
    os.makedirs(pkg)
    try:
        archive = subprocess.run(["git", "-C", ROOT, "archive", rev, "physics"], check=True, capture_output=True)
    except (OSError, subprocess.CalledProcessError) as exc:
        print(f"baseline {rev}: not loaded ({exc})")
        return None
    subprocess.run(["tar", "-x", "-C", pkg], input=archive.stdout, check=True)
    open(os.path.join(pkg, "__init__.py"), "w").close()
    sys.path.insert(0, tmp)
    return importlib.import_module(name + ".physics")


def alternate(funs, repeat, clock=time.perf_counter):
    """Shortest time of each function, the functions called in turn ``repeat`` times (same load)."""
    times = [[] for _ in funs]
    for _ in range(repeat):
        for k, f in enumerate(funs):
            t0 = clock()
            f()
            times[k].append(clock() - t0)
    return [min(t) for t in times]


def stages(mod, rho, T, comp, ion):
    """evaluate and its stages for one package ``mod`` (the current one or a baseline)."""
    from_dense = importlib.import_module(mod.__name__ + ".eos.dense_plasma")
    matter = importlib.import_module(mod.__name__ + ".matter")
    thermo = importlib.import_module(mod.__name__ + ".thermo")
    c = mod.Composition.from_xyz(0.70, 0.28, 0.02)
    st = mod.evaluate(rho, T, c, ionization=ion)
    total = thermo.Part(P=st.P, E=st.E, S=st.S, P_rho=st.dP_drho, P_T=st.dP_dT, E_rho=st.dE_drho, E_T=st.c_V,
                        S_rho=st.dE_drho, S_T=st.dS_dT)
    return {"evaluate": lambda: mod.evaluate(rho, T, c, ionization=ion),
            "matter": lambda: matter.matter(rho, T, c, "fermi", ion, True),
            "dense-plasma terms": lambda: from_dense.dense_parts(rho, T, c.X, c.A, c.Z),
            "response": lambda: thermo.response(total, rho, T)}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--baseline", default=BASELINE, help="git revision to compare with, or 'none'")
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--threads", type=int, default=0, help="numba threads (default: all)")
    ap.add_argument("--clock", choices=("wall", "cpu"), default="wall",
                    help="wall time, or the process's CPU time (all threads; steadier on a shared machine)")
    args = ap.parse_args(argv)
    if args.threads:
        import numba
        numba.set_num_threads(args.threads)
    clock = time.process_time if args.clock == "cpu" else time.perf_counter
    lr, lT = np.meshgrid(np.linspace(-10, 10, 400), np.linspace(3, 10, 400))
    rho, T = 10.0 ** lr, 10.0 ** lT
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    x = np.random.default_rng(0).uniform(-5, 5, rho.size)
    old = None if args.baseline == "none" else load_revision(args.baseline)
    t0 = time.perf_counter()
    calls = {ion: stages(ph, rho, T, comp, ion) for ion in TARGETS}       # loads every table, compiles
    old_calls = {ion: stages(old, rho, T, comp, ion) for ion in TARGETS} if old is not None else None
    t_load = time.perf_counter() - t0
    t_exp = alternate([lambda: np.exp(x)], 50, clock)[0]
    print(f"points: {rho.size}; np.exp on {rho.size} doubles: {t_exp * 1e3:.3f} ms; "
          f"first calls (table loads, compilation) {t_load:.2f} s")
    import numba
    print(f"exp-units per point ({args.clock} clock, {numba.get_num_threads()} numba threads)"
          + (f"; baseline = revision {args.baseline}, timed alternately" if old else ""))
    times = {}
    for ion, target in TARGETS.items():
        for stage in calls[ion]:
            funs = [calls[ion][stage]] + ([old_calls[ion][stage]] if old else [])
            t = alternate(funs, args.repeat, clock)
            times[ion, stage] = t[0]
            line = f"  ionization={ion!r:7s} {stage:20s} now {t[0] / t_exp:6.0f}"
            if old:
                line += f"   baseline {t[1] / t_exp:6.0f}   speed-up {t[1] / t[0]:4.2f}x"
            if stage == "evaluate":
                line += f"   (target <= {target})"
            print(line)
    naive(rho, T, t_exp, times)
    compiled_against_previous(rho.ravel(), T.ravel(), comp, t_exp)


def naive(rho, T, t_exp, times):
    rng = np.random.default_rng(1)
    n = (rho * 0.85 / const.m_u).ravel()
    idx = rng.choice(n.size, 12, replace=False)
    t0 = time.perf_counter()
    done = 0
    for i in idx:
        try:
            naive_point(n[i], T.ravel()[i])
            done += 1
        except (ValueError, RuntimeError):
            pass
    t_naive = (time.perf_counter() - t0) / max(done, 1) * n.size
    print(f"per-point quad+brentq electrons alone: {t_naive:.1f} s scaled from {done} points "
          f"= {t_naive / t_exp:.2e} exp-units; evaluate is {t_naive / times['full', 'evaluate']:.0f}x (full) and "
          f"{t_naive / times['saha', 'evaluate']:.0f}x (saha) faster")


def compiled_against_previous(rho, T, comp, t_exp):
    """The compiled parallel parts against the numpy implementation of the same step, one run."""
    import numba

    from thermoplane.physics import matter as M
    from thermoplane.physics.electron_fast import pair_free_state, state_from_points
    from thermoplane.physics.matter_kernel import matter_at_root
    from thermoplane.physics.electron_table import table_state
    from thermoplane.physics.eos.dense_plasma import dense_parts

    n_full = rho * float(np.sum(comp.X * comp.Z / (comp.A * const.m_u)))
    saha, fixed = M._saha_elements(comp, "saha")
    n_e, buf, ok = M.solve_saha_state(n_full, rho, T, saha, fixed, M.ELEMENTS, True)

    def post_root_numpy():
        es = state_from_points(n_e[ok], T[ok], buf[ok])
        return M._post_root(rho[ok], T[ok], n_full[ok], n_e[ok], es, comp, saha, fixed)

    rows = [("pair-free electron gas at n_full", lambda: table_state(n_full, T, pairs=False),
             lambda: pair_free_state(n_full, T)),
            ("Saha root n_e (all points)", lambda: M._solve_saha(n_full, rho, T, saha, fixed, "fermi", True),
             lambda: M.solve_saha_compiled(n_full, rho, T, saha, fixed, M.ELEMENTS, True)),
            (f"after the root ({ok.mean():.0%} of the points, the compiled root's)", post_root_numpy,
             lambda: matter_at_root(rho, T, n_full, n_e, buf, ok, comp, saha, fixed, M.ELEMENTS))]
    for name, old, new in rows:
        new()
        t_old, t_new = best(old, 3), best(new, 3)
        print(f"{name}: numpy {t_old / t_exp:.0f}, compiled {t_new / t_exp:.0f} exp-units per point; "
              f"ratio {t_old / t_new:.1f}")
    threads = numba.get_num_threads()
    dense = lambda: dense_parts(rho, T, comp.X, comp.A, comp.Z)  # noqa: E731
    numba.set_num_threads(1)
    t_one = best(dense, 3)
    numba.set_num_threads(threads)
    t_all = best(dense, 3)
    print(f"dense-plasma terms on 1 thread {t_one / t_exp:.0f}, on {threads} threads {t_all / t_exp:.0f} "
          f"exp-units per point; ratio {t_one / t_all:.2f}")


if __name__ == "__main__":
    main()
