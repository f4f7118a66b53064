"""The argument parser: one sub-command per job, each dispatched through ``set_defaults(func=...)``."""

import argparse
import os
import sys

from planetfit.cli import commands
from planetfit.core.errors import InputError
from planetfit.inputs.schema.settings import EARTH_CALIBRATED_TAU


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as input errors (exit 2, no traceback)."""

    def error(self, message):
        self.print_usage(sys.stderr)
        raise InputError(f"{message}.", fix=f"see '{self.prog} --help'.")


def _add_run_options(p, default_cores=1):
    p.add_argument("--out", help="run directory (default: the config's 'output')")
    p.add_argument("--resume", action="store_true", help="continue an interrupted run from samples.h5")
    p.add_argument("--force", action="store_true", help="replace the outputs of an earlier run in the folder")
    p.add_argument(
        "--cores",
        type=int,
        default=default_cores,
        help=f"processes for the walkers and the figures (default {default_cores})",
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar or progress messages")
    p.add_argument("--no-figures", action="store_true", help="write numbers and tables only (faster, for batches)")


def _add_plan_parser(sub):
    p = sub.add_parser("plan", help="how many new RVs settle the mass and the composition verdict of a finished run")
    p.set_defaults(func=commands.plan)
    p.add_argument("rundir", help="folder of a finished 'planetfit run'")
    p.add_argument("--rv-error-ms", type=float, metavar="S", help="error of one new RV (default: the run's median)")
    p.add_argument("--jitter-ms", type=float, metavar="J", help="jitter of the new RVs (default: the run's median)")
    p.add_argument("--counts", type=int, nargs="+", metavar="N", help="numbers of new RVs (default 10 20 40 80)")
    p.add_argument(
        "--window-days",
        type=float,
        nargs=2,
        metavar=("START", "END"),
        help="observing window, BJD_TDB or days after the run's last data point (default: 1 to 181 days after)",
    )
    p.add_argument("--per-night", type=int, default=1, metavar="N", help="at most N RVs per night (default 1)")
    p.add_argument(
        "--target-precision",
        type=float,
        default=0.2,
        metavar="P",
        help="mass precision sigma_M/M to reach (default 0.2)",
    )
    p.add_argument(
        "--mass-guess",
        type=float,
        nargs=2,
        metavar=("M", "SIG"),
        help="transit-only run: mass guess in Earth masses (default: Chen & Kipping 2017 mass-radius relation)",
    )
    p.add_argument(
        "--draws", type=int, default=300, metavar="N", help="parameter sets drawn from the posterior (default 300)"
    )
    p.add_argument("--seed", type=int, default=0, help="random seed of the draws and schedules (default 0)")
    p.add_argument("--out", metavar="DIR", help="output folder (default: RUNDIR/plan)")


def _add_compare(sub):
    """``planetfit compare CONFIG... [--out DIR] [--cores N] [--quiet]``."""
    p = sub.add_parser("compare", help="fit models of the same data by nested sampling; rank them by evidence")
    p.set_defaults(func=commands.compare)
    p.add_argument("configs", nargs="+", metavar="CONFIG")
    p.add_argument(
        "--out",
        metavar="DIR",
        help="run directories in DIR/<config stem> and comparison.json/.md/.tex in DIR "
        "(default: each config's 'output', '<output>-nested' if it samples by MCMC; the files in the current folder)",
    )
    p.add_argument("--cores", type=int, default=1, help="processes drawing proposals (default 1)")
    p.add_argument("--quiet", action="store_true", help="no progress bars or progress messages")


def _add_batch_parser(sub):
    """``planetfit batch``: many configs as Dask tasks."""
    p = sub.add_parser("batch", help="fit many configs as Dask tasks; write batch_summary.csv")
    p.set_defaults(func=commands.batch)
    p.add_argument("configs", nargs="+", metavar="CONFIG")
    p.add_argument("--workers", type=int, help="processes of the local cluster (default: the machine's cores)")
    p.add_argument(
        "--scheduler", metavar="ADDRESS", help="use the Dask scheduler at ADDRESS instead of a local cluster"
    )
    p.add_argument(
        "--out",
        metavar="DIR",
        help="run directories in DIR/<config stem> and batch_summary.csv in DIR "
        "(default: each config's 'output', summary in the current folder)",
    )
    p.add_argument("--figures", action="store_true", help="also draw each system's figures (slower)")
    p.add_argument("--force", action="store_true", help="replace the outputs of earlier runs in the folders")


def _add_rundir_parsers(sub):
    """Sub-commands that read a finished run directory: ``redraw`` and ``export``."""
    p = sub.add_parser("redraw", help="figures and tables again from a run's saved samples")
    p.set_defaults(func=commands.redraw)
    p.add_argument("rundir")
    p.add_argument("--cores", type=int, default=1, help="processes drawing the figures (default 1)")
    p = sub.add_parser("export", help="a run's posterior as CSV, JSON or NetCDF (ArviZ) for other tools")
    p.set_defaults(func=commands.export)
    p.add_argument("rundir")
    p.add_argument("--format", required=True, choices=("csv", "json", "nc"), help="file format")
    p.add_argument(
        "--out", metavar="FILE", help="file to write (default: posterior_export.csv/.json or posterior.nc in RUNDIR)"
    )


def _add_calculator_parsers(sub):
    """One-off calculators that need no config: ``interior`` and ``climate``."""
    p = sub.add_parser("interior", help="composition verdict for a mass and radius (Earth units)")
    p.set_defaults(func=commands.interior)
    p.add_argument("--mass", nargs=2, type=float, required=True, metavar=("M", "SIG"))
    p.add_argument("--radius", nargs=2, type=float, required=True, metavar=("R", "SIG"))
    p.add_argument(
        "--teq-k",
        type=float,
        metavar="K",
        help="equilibrium temperature (zero albedo, full redistribution): judges the water layer warm or cold "
        "(default: a cold, 300 K water layer)",
    )
    p.add_argument("--json", action="store_true")
    p = sub.add_parser("climate", help="temperatures and habitable-zone position for one star and orbit")
    p.set_defaults(func=commands.climate)
    p.add_argument("--teff", type=float, required=True, metavar="K")
    p.add_argument("--radius-rsun", type=float, required=True, metavar="R")
    p.add_argument("--a-au", type=float, required=True, metavar="A")
    p.add_argument("--albedo", type=float, default=0.3)
    p.add_argument(
        "--tau",
        type=float,
        default=EARTH_CALIBRATED_TAU,
        help=f"grey infrared optical depth (default {EARTH_CALIBRATED_TAU:.3f}, calibrated to Earth's 288 K)",
    )
    p.add_argument("--json", action="store_true")


def build_parser():
    """The ``planetfit`` parser; each sub-command's ``func`` does its job."""
    parser = _Parser(prog="planetfit", description="Joint transit + radial-velocity fits of transiting planets.")
    sub = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)
    p = sub.add_parser("run", help="the whole job: check, fit, derive, context, figures and tables")
    p.add_argument("config")
    _add_run_options(p)
    p.set_defaults(func=commands.run)
    p = sub.add_parser("check", help="validate the config and data; print a data overview; fit nothing")
    p.add_argument("config")
    p.set_defaults(func=commands.check)
    p = sub.add_parser("demo", help="fit the bundled demo system")
    _add_run_options(p, default_cores=min(2, os.cpu_count() or 1))
    p.add_argument(
        "--example",
        choices=["hot-giant"],
        help="another bundled system: 'hot-giant' (transit, secondary eclipse and phase curve of a close-in giant)",
    )
    p.set_defaults(func=commands.demo)
    _add_batch_parser(sub)
    _add_compare(sub)
    _add_rundir_parsers(sub)
    _add_calculator_parsers(sub)
    _add_plan_parser(sub)
    p = sub.add_parser(
        "schema", help="print the config's JSON Schema (for editors: planetfit schema > config.schema.json)"
    )
    p.set_defaults(func=commands.schema)
    return parser
