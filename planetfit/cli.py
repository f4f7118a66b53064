"""The ``planetfit`` command line: parses, calls the pipeline, prints.

Exit codes: 0 success, 2 bad input (one paragraph naming what is wrong and
the fix), 1 internal failure, 130 interrupted (resumable).
"""

import argparse
import json
import os
import signal
import sys
import traceback
from pathlib import Path

from planetfit.core.errors import InputError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_INTERRUPTED = 0, 1, 2, 130
#: Seconds between repeated KeyboardInterrupts after Ctrl-C or SIGTERM, until the run has stopped.
REPEAT_INTERRUPT_S = 0.5


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as input errors (exit 2, no traceback)."""

    def error(self, message):
        self.print_usage(sys.stderr)
        raise InputError(f"{message}.", fix=f"see '{self.prog} --help'.")


def _add_run_options(p, default_cores=1):
    p.add_argument("--out", help="run directory (default: the config's 'output')")
    p.add_argument("--resume", action="store_true", help="continue an interrupted run from samples.h5")
    p.add_argument("--force", action="store_true", help="replace the outputs of an earlier run in the folder")
    p.add_argument("--cores", type=int, default=default_cores,
                   help=f"processes for the walkers and the figures (default {default_cores})")
    p.add_argument("--quiet", action="store_true", help="no progress bar or progress messages")
    p.add_argument("--no-figures", action="store_true", help="write numbers and tables only (faster, for batches)")


def build_parser():
    parser = _Parser(prog="planetfit", description="Joint transit + radial-velocity fits of transiting planets.")
    sub = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)
    p = sub.add_parser("run", help="the whole job: check, fit, derive, context, figures and tables")
    p.add_argument("config")
    _add_run_options(p)
    p = sub.add_parser("check", help="validate the config and data; print a data overview; fit nothing")
    p.add_argument("config")
    p = sub.add_parser("demo", help="fit the bundled demo system")
    _add_run_options(p, default_cores=min(2, os.cpu_count() or 1))
    p = sub.add_parser("batch", help="fit many configs as Dask tasks; write batch_summary.csv")
    p.add_argument("configs", nargs="+", metavar="CONFIG")
    p.add_argument("--workers", type=int, help="processes of the local cluster (default: the machine's cores)")
    p.add_argument("--scheduler", metavar="ADDRESS", help="use the Dask scheduler at ADDRESS instead of a local cluster")
    p.add_argument("--out", metavar="DIR", help="run directories in DIR/<config stem> and batch_summary.csv in DIR "
                                                "(default: each config's 'output', summary in the current folder)")
    p.add_argument("--figures", action="store_true", help="also draw each system's figures (slower)")
    p.add_argument("--force", action="store_true", help="replace the outputs of earlier runs in the folders")
    p = sub.add_parser("redraw", help="figures and tables again from a run's saved samples")
    p.add_argument("rundir")
    p.add_argument("--cores", type=int, default=1, help="processes drawing the figures (default 1)")
    p = sub.add_parser("interior", help="composition verdict for a mass and radius (Earth units)")
    p.add_argument("--mass", nargs=2, type=float, required=True, metavar=("M", "SIG"))
    p.add_argument("--radius", nargs=2, type=float, required=True, metavar=("R", "SIG"))
    p.add_argument("--json", action="store_true")
    p = sub.add_parser("climate", help="temperatures and habitable-zone position for one star and orbit")
    p.add_argument("--teff", type=float, required=True, metavar="K")
    p.add_argument("--radius-rsun", type=float, required=True, metavar="R")
    p.add_argument("--a-au", type=float, required=True, metavar="A")
    p.add_argument("--albedo", type=float, default=0.3)
    p.add_argument("--tau", type=float, default=0.94)
    p.add_argument("--json", action="store_true")
    return parser


def _print_summary(run_dir):
    summary = json.loads((Path(run_dir) / "summary.json").read_text())
    s = summary["sampling"]
    print(f"\n{summary['system']}: {s['steps']} steps x {s['walkers']} walkers, "
          f"{s['independent_samples']} independent samples, converged: {s['converged']}")
    for name, p in summary["planets"].items():
        parts = []
        for key, label, unit in (("mass_earth", "M", "M_earth"), ("radius_earth", "R", "R_earth"),
                                 ("density_gcc", "rho", "g/cm3")):
            st = p.get(key)
            if st:
                parts.append(f"{label} = {st['median']:.3g} +{st['upper'] - st['median']:.2g} "
                             f"-{st['median'] - st['lower']:.2g} {unit}")
        if p.get("mass_is_minimum"):
            parts[0] = parts[0].replace("M =", "M sin i =")
        print(f"  {name}: " + ", ".join(parts))
        if p.get("composition"):
            print(f"     {p['composition']['verdict']}")
    print(f"outputs in {run_dir}")


def _cmd_run(args, config):
    from planetfit import pipeline
    if args.cores < 1:
        raise InputError(f"--cores must be at least 1, got {args.cores}.", fix="use e.g. --cores 2.")
    run_dir = pipeline.run(config, output=args.out, resume=args.resume, force=args.force, cores=args.cores,
                           quiet=args.quiet, figures=not args.no_figures)
    _print_summary(run_dir)


def _cmd_batch(args):
    """Exit code: 0 if every system succeeded, else 2 (a bad input) or 1 (an internal failure)."""
    from planetfit.batch import STATUS_INPUT, STATUS_OK, run_batch

    def show(rows):
        r = rows[0]
        note = f"{r['seconds']} s" if r["status"] == STATUS_OK else r["error"]
        print(f"{r['status']:>14s}  {r['config']}: {note}", flush=True)

    path, rows = run_batch(args.configs, out_dir=args.out, workers=args.workers, scheduler=args.scheduler,
                           figures=args.figures, force=args.force, on_result=show)
    failed = {r["config"]: r["status"] for r in rows if r["status"] != STATUS_OK}
    print(f"{len(args.configs) - len(failed)} of {len(args.configs)} systems fitted; summary in {path}")
    if not failed:
        return EXIT_OK
    return EXIT_INPUT if set(failed.values()) == {STATUS_INPUT} else EXIT_INTERNAL


def _cmd_check(args):
    from planetfit import pipeline
    checked = pipeline.check(args.config)
    c = checked.config
    print(f"{c.system}: {len(c.planets)} planet(s), {len(c.photometry)} photometric and "
          f"{len(c.velocities)} RV dataset(s); config OK")
    for row in pipeline.overview(checked):
        print("  {:<18s} {:<10s} {:6d} points ({} NaN rows dropped), BJD_TDB {:.3f} to {:.3f}, {}".format(*row))
    from planetfit.fitting.posterior import build_layout
    layout = build_layout(c)
    print(f"  {layout.ndim} free parameters: {', '.join(layout.free)}")
    for warning in checked.warnings:
        print(f"  WARNING: {warning}")


def _cmd_interior(args):
    from planetfit.context.interior import quick_verdict
    for name, (value, sig) in (("--mass", args.mass), ("--radius", args.radius)):
        if not value > 0 or not sig >= 0:
            raise InputError(f"{name} needs a positive value and a non-negative uncertainty, got {value} {sig}.",
                             fix=f"e.g. {name} 5.0 0.8 (Earth units).")
    result = quick_verdict(args.mass[0], args.mass[1], args.radius[0], args.radius[1])
    if args.json:
        print(json.dumps(result, indent=2))
        return
    print(f"p_rocky = {result['p_rocky']:.3f}, p_volatile_rich = {result['p_volatile_rich']:.3f}, "
          f"p_denser_than_earth_like = {result['p_denser_than_earth_like']:.3f}")
    radii = ", ".join(f"{k} {v:.3f}" for k, v in result["reference_radii_earth"].items())
    print(f"reference radii at M = {args.mass[0]:g} M_earth: {radii} R_earth")
    print(result["verdict"])


def _cmd_climate(args):
    from planetfit.context.climate import quick_climate
    try:
        result = quick_climate(args.teff, args.radius_rsun, args.a_au, albedo=args.albedo, tau=args.tau)
    except ValueError as exc:
        raise InputError(f"{exc}.", fix="see 'planetfit climate --help'.") from None
    if args.json:
        print(json.dumps(result, indent=2))
        return
    for key in ("insolation_earth", "equilibrium_temp_k", "surface_temp_k", "p_conservative_hz", "p_optimistic_hz",
                "p_surface_liquid_water"):
        print(f"{key:>24s}: {result[key]}")
    if result.get("hz_limits_au"):
        print("   habitable-zone limits (au): " + ", ".join(f"{k} {v:.3f}" for k, v in result["hz_limits_au"].items()
                                                           if v is not None))
    for c in result["cautions"]:
        print(f"  note: {c}")


def _resume_hint(args):
    """The command that continues an interrupted run."""
    if getattr(args, "command", None) not in ("run", "demo"):
        return "run the command again."
    out = f" --out {args.out}" if args.out else ""
    target = f"run {args.config}" if args.command == "run" else "demo"
    return f"the chain is saved in samples.h5 up to the last step; continue with 'planetfit {target} --resume{out}'."


def _interrupted(signum, frame, main_pid=os.getpid()):
    """SIGINT and SIGTERM handler: stop the main process with KeyboardInterrupt; worker processes just end.

    Libraries print tracebacks of exceptions passing through them (emcee does
    for every log-probability call), so output is silenced until ``main``
    restores it and prints how to resume. Code that swallows the exception
    (a callback from compiled code) cannot keep the run going: a timer
    raises it again every half second until ``main`` has stopped.
    """
    if os.getpid() != main_pid:
        signal.signal(signum, signal.SIG_DFL)
        os.kill(os.getpid(), signum)
    if signum != signal.SIGALRM:
        sys.stdout = sys.stderr = open(os.devnull, "w")
        signal.setitimer(signal.ITIMER_REAL, REPEAT_INTERRUPT_S, REPEAT_INTERRUPT_S)
    raise KeyboardInterrupt


def _restore(streams):
    signal.setitimer(signal.ITIMER_REAL, 0)
    if sys.stderr is not streams[1]:
        sys.stderr.close()
    sys.stdout, sys.stderr = streams


def main(argv=None):
    """Entry point of the ``planetfit`` console script."""
    args = None
    streams = sys.stdout, sys.stderr
    previous = {sig: signal.signal(sig, _interrupted) for sig in (signal.SIGINT, signal.SIGTERM, signal.SIGALRM)}
    try:
        args = build_parser().parse_args(argv)
        if args.command == "run":
            _cmd_run(args, args.config)
        elif args.command == "demo":
            from planetfit.demo import DEMO_CONFIG
            if args.out is None:
                args.out = "planetfit-demo"
            _cmd_run(args, DEMO_CONFIG)
        elif args.command == "batch":
            return _cmd_batch(args)
        elif args.command == "check":
            _cmd_check(args)
        elif args.command == "redraw":
            from planetfit import pipeline
            pipeline.redraw(args.rundir, cores=args.cores)
            print(f"figures and tables rebuilt in {args.rundir}")
        elif args.command == "interior":
            _cmd_interior(args)
        elif args.command == "climate":
            _cmd_climate(args)
    except InputError as exc:
        print(f"planetfit: {exc.message()}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        _restore(streams)
        print(f"\nplanetfit: interrupted; {_resume_hint(args)}", file=sys.stderr)
        return EXIT_INTERRUPTED
    except SystemExit as exc:
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    except Exception:
        _restore(streams)  # an error while stopping after Ctrl-C must still be seen
        traceback.print_exc()
        print("planetfit: internal error (above); please report it with the config.", file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        _restore(streams)
        for sig, handler in previous.items():
            signal.signal(sig, handler)
    return EXIT_OK


if __name__ == "__main__":
    sys.exit(main())
