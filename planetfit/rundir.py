"""The run directory: preparing it, logging into it, and the config as resolved for it."""

import contextlib
import logging
import shutil

import yaml

from planetfit.core.errors import InputError
from planetfit.fitting.nested import CHECKPOINT

log = logging.getLogger("planetfit")

RUN_FILES = (
    "summary.json",
    "summary.md",
    "table.tex",
    "samples.h5",
    "posterior.csv",
    "posterior.nc",
    "report.html",
    "run.log",
    "config.resolved.yaml",
    CHECKPOINT,
)


def start_logging(run_dir, quiet):
    """Log INFO and above to ``run_dir/run.log``, and to the terminal (WARNING and above when ``quiet``)."""
    log.setLevel(logging.INFO)
    for h in list(log.handlers):
        log.removeHandler(h)
        h.close()
    fh = logging.FileHandler(run_dir / "run.log")
    fh.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(message)s"))
    log.addHandler(fh)
    sh = logging.StreamHandler()
    sh.setLevel(logging.WARNING if quiet else logging.INFO)
    sh.setFormatter(logging.Formatter("%(message)s"))
    log.addHandler(sh)


def prepare(run_dir, resume, force):
    """Make ``run_dir`` ready: new, emptied of an earlier run's outputs (``force``), or holding a chain to resume."""
    if run_dir.exists() and not run_dir.is_dir():
        raise InputError(
            "the run directory path exists and is not a folder.",
            file=run_dir,
            fix="choose another folder with --out (or the config's 'output'), or move the file away.",
        )
    if run_dir.exists() and any(run_dir.iterdir()):
        if resume:
            if not any((run_dir / name).exists() for name in ("samples.h5", CHECKPOINT)):
                raise InputError(
                    f"there is no samples.h5 or {CHECKPOINT} to resume from.",
                    file=run_dir,
                    fix="run without --resume to start a new fit.",
                )
            return
        if not force:
            raise InputError(
                "the run directory already holds files.",
                file=run_dir,
                fix="use --resume to continue that run, --force to replace it, or --out for a new folder.",
            )
        for name in RUN_FILES:
            with contextlib.suppress(FileNotFoundError):
                (run_dir / name).unlink()
        shutil.rmtree(run_dir / "figures", ignore_errors=True)
    elif resume:
        raise InputError(
            "the run directory does not exist, so there is nothing to resume.",
            file=run_dir,
            fix="run without --resume to start a new fit.",
        )
    try:
        run_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(
            f"cannot create the run directory ({exc.strerror}).",
            file=run_dir,
            fix="choose a writable folder with --out (or the config's 'output').",
        ) from None


def stop_logging():
    """Detach and close the run's log handlers (a later run in the same process must not write into them)."""
    for h in list(log.handlers):
        log.removeHandler(h)
        h.close()


def resolved_config(config):
    """The config as YAML with the run directory and every data file as absolute paths."""
    raw = dict(config.raw)
    raw["output"] = str(config.output)
    for section, items in (("photometry", config.photometry), ("velocities", config.velocities)):
        raw[section] = [
            dict(entry, file=[str(f) for f in c.files] if isinstance(entry.get("file"), list) else str(c.path))
            for entry, c in zip(raw.get(section) or [], items)
        ]
    for entry, c in zip(raw["photometry"], config.photometry):
        if c.band_response is not None:
            entry["band_response"] = str(c.band_response_path)
    return yaml.safe_dump(raw, sort_keys=False)
