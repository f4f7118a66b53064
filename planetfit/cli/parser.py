"""The argument parser: one sub-command per job, each dispatched through ``set_defaults(func=...)``."""

import argparse
import os
import sys

from planetfit.cli import commands
from planetfit.core.errors import InputError


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
    p.set_defaults(func=commands.demo)
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
    _add_compare(sub)
    p = sub.add_parser("redraw", help="figures and tables again from a run's saved samples")
    p.set_defaults(func=commands.redraw)
    p.add_argument("rundir")
    p.add_argument("--cores", type=int, default=1, help="processes drawing the figures (default 1)")
    p = sub.add_parser("interior", help="composition verdict for a mass and radius (Earth units)")
    p.set_defaults(func=commands.interior)
    p.add_argument("--mass", nargs=2, type=float, required=True, metavar=("M", "SIG"))
    p.add_argument("--radius", nargs=2, type=float, required=True, metavar=("R", "SIG"))
    p.add_argument("--json", action="store_true")
    p = sub.add_parser("climate", help="temperatures and habitable-zone position for one star and orbit")
    p.set_defaults(func=commands.climate)
    p.add_argument("--teff", type=float, required=True, metavar="K")
    p.add_argument("--radius-rsun", type=float, required=True, metavar="R")
    p.add_argument("--a-au", type=float, required=True, metavar="A")
    p.add_argument("--albedo", type=float, default=0.3)
    p.add_argument("--tau", type=float, default=0.94)
    p.add_argument("--json", action="store_true")
    p = sub.add_parser(
        "schema", help="print the config's JSON Schema (for editors: planetfit schema > config.schema.json)"
    )
    p.set_defaults(func=commands.schema)
    return parser
