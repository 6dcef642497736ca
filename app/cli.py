"""The ``thermoplane`` command: serve the dashboard, or answer from the shell.

Errors print one line to stderr and exit with status 2; no traceback reaches a user.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

from .. import physics as ph
from ..physics.regimes import describe

EXIT_USAGE = 2


class CliError(Exception):
    """A problem the user can fix; printed on one line."""


class _Parser(argparse.ArgumentParser):
    """argparse, but a usage error is one line on stderr (exit 2), like every other error."""

    def error(self, message):  # noqa: D401 - argparse's hook
        print(f"{self.prog}: error: {message} (see {self.prog} --help)", file=sys.stderr)
        sys.exit(EXIT_USAGE)


def _composition(args) -> ph.Composition:
    if getattr(args, "mix", None):
        if any(v is not None for v in (args.X, args.Y, args.Z)):
            raise CliError("give either --mix or --X/--Y/--Z, not both")
        return ph.parse_mix(args.mix)
    X = 0.70 if args.X is None else args.X
    Y = 0.28 if args.Y is None else args.Y
    Z = (1.0 - X - Y) if args.Z is None else args.Z
    return ph.Composition.from_xyz(X, Y, Z, metals=args.metals)


def _physics_options(args) -> dict:
    return {k: getattr(args, k) for k in ph.OPTIONS if getattr(args, k, None) is not None}


def _add_composition(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("composition (default X=0.70, Y=0.28, Z=0.02)")
    g.add_argument("--X", type=float, help="hydrogen mass fraction")
    g.add_argument("--Y", type=float, help="helium mass fraction")
    g.add_argument("--Z", type=float, help="metal mass fraction (default 1 - X - Y)")
    g.add_argument("--metals", default="solar-like", choices=list(ph.METAL_MIXTURES),
                   help="how Z is split among metals (default solar-like)")
    g.add_argument("--mix", help='any mixture of nuclides, e.g. "H-1=0.7,He-4=0.28,O-16=0.02"')


def _add_physics(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("equation of state (defaults: the full physics)")
    g.add_argument("--electrons", choices=ph.OPTIONS["electrons"], help="electron treatment")
    g.add_argument("--ionization", choices=ph.OPTIONS["ionization"],
                   help="ionization treatment (saha-metals: experimental, the metals Li..Zn by Saha too, ~3x "
                        "slower; chemical: the experimental chemical picture, one free energy with H2 and every "
                        "ionization stage; slow, see the README)")
    g.add_argument("--coulomb", action=argparse.BooleanOptionalAction, default=None,
                   help="Coulomb corrections")
    g.add_argument("--pairs", action=argparse.BooleanOptionalAction, default=None,
                   help="electron-positron pairs")


def _positive_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not math.isfinite(value) or value <= 0:
        raise argparse.ArgumentTypeError(f"{text!r} must be a finite number > 0")
    return value


def _level_list(text: str) -> tuple[float, ...]:
    if not text.strip():
        return ()
    out = []
    for part in text.replace(";", ",").split(","):
        if part.strip():
            out.append(_positive_float(part.strip()))
    if len(out) > 12:
        raise argparse.ArgumentTypeError(f"at most 12 levels, got {len(out)}")
    return tuple(out)


def cmd_serve(args) -> int:
    from .main import create_app
    if args.host not in ("127.0.0.1", "localhost", "::1"):
        print(f"Thermoplane is reachable from the network at http://{args.host}:{args.port}/", file=sys.stderr)
    print(f"Thermoplane: open http://{args.host}:{args.port}/ in a browser (Ctrl+C stops it)", file=sys.stderr)
    app = create_app()
    from .main import warm_up
    print(f"Thermoplane: kernels ready in {warm_up():.1f} s", file=sys.stderr)
    app.run(host=args.host, port=args.port, debug=args.debug, use_reloader=args.debug)
    return 0


def cmd_point(args) -> int:
    comp = _composition(args)
    state = ph.evaluate(args.rho, args.T, comp, **_physics_options(args))
    values = state.at(())
    regime, modifiers = describe(state, comp)
    from ..physics import neutrinos
    nu = {k: float(v) for k, v in neutrinos.epsilon_parts(args.rho, args.T, comp).items()}
    if args.json:
        out = {"composition": comp.to_dict(), "mu": comp.mu, "mu_e": comp.mu_e, "mu_ion": comp.mu_ion,
               "regime": regime, "modifiers": modifiers,
               "state": values, "units": {k: ph.FIELD_UNITS[k] for k in values},
               "neutrino_losses": nu, "neutrino_losses_unit": "erg g^-1 s^-1"}
        print(json.dumps(out, indent=2))
    else:
        print(f"composition: {comp!r}  (mu = {comp.mu:.5g}, mu_e = {comp.mu_e:.5g}, mu_ion = {comp.mu_ion:.5g})")
        print(f"regime: {regime}" + (f"; {', '.join(modifiers)}" if modifiers else ""))
        for name, value in values.items():
            print(f"  {name:<12} {value:>14.6g}  {ph.FIELD_UNITS[name]:<22} {ph.FIELD_DESCRIPTIONS[name]}")
        print("neutrino losses (Itoh et al. 1996 fits; bremsstrahlung after Kaminker et al. 1999):")
        for name in ("total",) + neutrinos.PROCESSES:
            print(f"  {'eps_nu' if name == 'total' else 'eps_nu_' + name:<22} {nu[name]:>14.6g}  erg g^-1 s^-1")
    return 0


def cmd_map(args) -> int:
    from .callbacks.map import map_figure
    from .state import DEFAULT_VIEW
    comp = _composition(args)
    fig = map_figure(comp, DEFAULT_VIEW)
    fig.write_html(args.output, include_plotlyjs=True, full_html=True)
    print(f"wrote {args.output}", file=sys.stderr)
    return 0


def _fmt_age(value) -> str:
    return "-" if value is None else f"{value:.6g}"


def cmd_track(args) -> int:
    from . import localfiles, tracks, upload
    from .batch import Columns
    comp = _composition(args)
    opts = _physics_options(args)
    max_bytes = None if args.max_mb is None else int(args.max_mb * 1024 * 1024)
    df = localfiles.read_local(args.file, max_bytes=max_bytes)   # in chunks, no size limit by default
    mapping = Columns.from_args(args).apply(upload.detect_columns(df))
    if mapping.rho_col is None or mapping.T_col is None:
        notes = "; ".join(mapping.ambiguous) or "no density or temperature column found"
        raise CliError(f"{notes}; give --rho-col and --T-col (columns: {', '.join(map(str, df.columns))})")
    processes = args.processes.split(",") if args.processes else ["pp", "triple_alpha"]
    ignition = [(p.strip(), level) for p in processes if p.strip() for level in args.eps_levels]
    enriched, crossings, track = tracks.enrich(df, mapping, comp, ignition=ignition, **opts)
    records = tracks.crossing_records(crossings)
    if args.output:
        with open(args.output, "w", encoding="utf-8", newline="") as fh:
            fh.write(tracks.safe_csv(enriched))
    if args.json:
        out = {"rows": len(df), "bad_rows": [int(i) for i in track.bad_rows],
               "composition_columns": {"X": mapping.X_col, "Y": mapping.Y_col, "Z": mapping.Z_col,
                                       "nuclides": mapping.nuclide_cols or None},
               "crossings": [{k: r[k] for k in ("boundary", "label", "row", "log_rho", "log_T", "age", "X", "Y", "Z",
                                                 "composition")} for r in records]}
        print(json.dumps(out, indent=2))
    else:
        print(f"{args.file}: {len(df)} rows, {len(track.bad_rows)} bad; density {mapping.rho_col!r} "
              f"({'log10' if mapping.rho_log else 'linear'}, {mapping.units}), temperature {mapping.T_col!r} "
              f"({'log10' if mapping.T_log else 'linear'}, K), age {mapping.age_col or 'row number'!r}")
        own = [c for c in mapping.composition_cols]
        if own:
            print(f"composition: the track's own, per row (columns {', '.join(own)}); "
                  f"metals split as the {args.metals!r} mixture unless nuclide columns give them")
        else:
            print(f"composition: {comp!r} for every row (no X, Y, Z or nuclide column; see --X-col)")
        for note in mapping.ambiguous:
            print(f"note: {note}")
        for i in track.bad_rows[:10]:
            print(f"bad row {i}: {track.bad_reasons[i]}")
        if len(track.bad_rows) > 10:
            print(f"... and {len(track.bad_rows) - 10} more bad rows")
        if not records:
            print("no boundary crossed")
        else:
            print(f"{len(records)} crossing(s):")
            print(f"  {'boundary':<36} {'rows':>13} {'log rho':>9} {'log T':>8} {'age':>12}  composition used")
            for r in records:
                rows = f"{r['row']}-{r['row_after']}"
                print(f"  {r['label']:<36} {rows:>13} {r['log_rho']:>9.4f} {r['log_T']:>8.4f} {_fmt_age(r['age']):>12}"
                      f"  {tracks.composition_text(r)}")
        if args.output:
            print(f"wrote {args.output}", file=sys.stderr)
    return 0


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r} must be at least 1")
    return value


def _add_columns(p: argparse.ArgumentParser) -> None:
    """The column options of track and batch (in batch every file gets the same choices)."""
    g = p.add_argument_group("columns (default: detected from the names in each file)")
    g.add_argument("--rho-col", dest="rho_col", help="density column")
    g.add_argument("--T-col", dest="T_col", help="temperature column")
    scale = g.add_mutually_exclusive_group()
    scale.add_argument("--log", dest="scale", action="store_const", const="log",
                       help="both columns hold log10 values")
    scale.add_argument("--linear", dest="scale", action="store_const", const="linear",
                       help="both columns hold linear values")
    g.add_argument("--units", choices=("cgs", "si"), help="density in g cm^-3 (cgs) or kg m^-3 (si)")
    g.add_argument("--age-col", dest="age_col", help="age or model-number column ('' for the row number)")
    for role, what in (("X", "hydrogen"), ("Y", "helium"), ("Z", "metal")):
        g.add_argument(f"--{role}-col", dest=f"{role}_col",
                       help=f"column of the {what} mass fraction per row (default: detected; '' for none); "
                            "any two of X, Y, Z give the third")


def _add_where(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("where it runs (Dask)").add_mutually_exclusive_group()
    g.add_argument("--workers", type=_positive_int,
                   help="worker processes of a local Dask cluster (default: one per core; 1 runs in this process)")
    g.add_argument("--scheduler", help="address of a running Dask scheduler, e.g. tcp://10.0.0.5:8786")


def cmd_batch(args) -> int:
    from . import batch
    comp = _composition(args)
    job = batch.Job(comp=comp, physics=_physics_options(args),
                    columns=batch.Columns.from_args(args),
                    max_bytes=None if args.max_mb is None else int(args.max_mb * 1024 * 1024))
    paths = batch.expand_paths(args.paths)
    results = batch.run(paths, job, workers=args.workers, scheduler=args.scheduler,
                        progress=not args.json and sys.stderr.isatty())
    if args.output:
        with open(args.output, "w", encoding="utf-8", newline="") as fh:
            fh.write(batch.summary_csv(results))
    failed = sum(r["error"] is not None for r in results)
    if args.json:
        print(json.dumps(batch.json_ready(results), indent=2))
    else:
        for r in results:
            if r["error"] is not None:
                print(f"{r['path']}: error: {r['error']}")
            else:
                print(f"{r['path']}: {r['rows']} rows, {len(r['bad_rows'])} bad, {len(r['crossings'])} crossing(s)")
        print(f"{len(results)} file(s), {failed} failed, {sum(len(r['crossings']) for r in results)} crossing(s)")
        if args.output:
            print(f"wrote {args.output}", file=sys.stderr)
    return 1 if failed else 0


def cmd_table(args) -> int:
    from . import eostable
    comp = _composition(args)
    log_rho = eostable.axis("log_rho", args.log_rho)
    log_T = eostable.axis("log_T", args.log_T)
    eostable.output_format(args.output)
    ds = eostable.build(comp, log_rho, log_T, fields=args.fields, chunk=args.chunk, **_physics_options(args))
    fmt = eostable.write(ds, args.output, workers=args.workers, scheduler=args.scheduler,
                         progress=sys.stderr.isatty())
    print(f"wrote {args.output} ({fmt}, {len(log_rho)} x {len(log_T)} points, {len(ds.data_vars)} fields)",
          file=sys.stderr)
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="thermoplane",
        description="The density-temperature plane of stellar matter: a dashboard and command-line answers.")
    sub = parser.add_subparsers(dest="command", metavar="{serve,point,track,batch,table,map}")

    p = sub.add_parser("serve", help="start the dashboard", description="Start the dashboard in this process.")
    p.add_argument("--host", default="127.0.0.1",
                   help="address to bind (default 127.0.0.1: this machine only; 0.0.0.0 exposes it to the network)")
    p.add_argument("--port", type=int, default=8050, help="port (default 8050)")
    p.add_argument("--debug", action="store_true", help="Dash debug mode with hot reload (never on a shared server)")
    p.set_defaults(func=cmd_serve)

    p = sub.add_parser("point", help="the full state at one (rho, T)",
                       description="Every thermodynamic quantity at one density and temperature, in cgs.")
    p.add_argument("--rho", type=_positive_float, required=True, help="density, g cm^-3")
    p.add_argument("--T", type=_positive_float, required=True, help="temperature, K")
    _add_composition(p)
    _add_physics(p)
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(func=cmd_point)

    p = sub.add_parser("track", help="evaluate a track table and report the boundaries it crosses",
                       description="Read a track table (CSV, TSV, semicolon or whitespace separated, gzip too), "
                                   "add P, P_gas, P_rad, beta, eta, gamma1, nabla_ad and the regime to every "
                                   "row, and list where the track crosses each regime boundary.")
    p.add_argument("file", help="the table: a header row, then one row per model or layer")
    _add_columns(p)
    p.add_argument("--eps-levels", dest="eps_levels", type=_level_list, default=(1.0, 1e3),
                   help="energy generation rates (erg g^-1 s^-1) whose ignition contours are reported as "
                        "crossings, comma separated (default 1,1e3, as on the map)")
    p.add_argument("--processes", help="burning processes for the ignition crossings, comma separated "
                                       "(default pp,triple_alpha, as on the map; from "
                                       "pp, cno, triple_alpha, carbon)")
    _add_composition(p)
    _add_physics(p)
    p.add_argument("-o", "--output", help="write the table with the computed columns to this CSV file")
    p.add_argument("--json", action="store_true", help="print the rows, bad rows and crossings as JSON")
    p.add_argument("--max-mb", dest="max_mb", type=_positive_float, default=None,
                   help="refuse files larger than this in MB, raw or decompressed (default: no limit; "
                        "local files are read in chunks)")
    p.set_defaults(func=cmd_track)

    p = sub.add_parser("batch", help="report the crossings of many track files, one Dask task per file",
                       description="Read every track file (paths, directories, glob patterns), evaluate it and "
                                   "find its crossings as one Dask task per file, and write one summary: a row "
                                   "per crossing, and a row with the message for each file that failed. Exit "
                                   "status 1 when any file failed.")
    p.add_argument("paths", nargs="+", metavar="PATH", help="track files, directories of them, or glob patterns")
    _add_columns(p)
    _add_composition(p)
    _add_physics(p)
    p.add_argument("-o", "--output", help="write the summary CSV (file, boundary, row, log_rho, log_T, parameter, "
                                          "composition, error) to this file")
    p.add_argument("--json", action="store_true", help="print every file's rows, bad rows, crossings and error "
                                                       "as JSON (no progress bar)")
    p.add_argument("--max-mb", dest="max_mb", type=_positive_float, default=None,
                   help="refuse files larger than this in MB (default: no limit)")
    _add_where(p)
    p.set_defaults(func=cmd_batch)

    from .eostable import DEFAULT_CHUNK, FIELDS
    p = sub.add_parser("table", help="write an equation-of-state table (NetCDF or Zarr) computed on Dask",
                       description="Every ThermoState field on an evenly spaced (log rho, log T) grid, computed "
                                   "in chunks on Dask and written as an xarray Dataset to NetCDF (.nc) or "
                                   "Zarr (.zarr).")
    _add_composition(p)
    _add_physics(p)
    p.add_argument("--log-rho", dest="log_rho", nargs=3, required=True, metavar=("LO", "HI", "N"),
                   help="log10 density (g cm^-3): from LO to HI in N points")
    p.add_argument("--log-T", dest="log_T", nargs=3, required=True, metavar=("LO", "HI", "N"),
                   help="log10 temperature (K): from LO to HI in N points")
    p.add_argument("--fields", nargs="+", choices=FIELDS, metavar="FIELD",
                   help=f"fields to write (default: all): {', '.join(FIELDS)}")
    p.add_argument("--chunk", type=_positive_int, default=DEFAULT_CHUNK,
                   help=f"points per side of a chunk (default {DEFAULT_CHUNK})")
    p.add_argument("-o", "--output", required=True, help="output file: NAME.nc (NetCDF) or NAME.zarr (Zarr)")
    _add_where(p)
    p.set_defaults(func=cmd_table)

    p = sub.add_parser("map", help="write the map as a standalone interactive HTML figure",
                       description="Write the density-temperature map as one HTML file that opens offline.")
    _add_composition(p)
    p.add_argument("-o", "--output", default="thermoplane-map.html", help="output file (default thermoplane-map.html)")
    p.set_defaults(func=cmd_map)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return EXIT_USAGE
    try:
        return args.func(args)
    except (ValueError, CliError, OSError) as err:
        print(f"thermoplane: error: {err}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
