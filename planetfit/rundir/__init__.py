"""The run directory: every file name of a run, its manifest and lock, preparing it, logging into it.

:class:`RunDirectory` is the one owner of a run's file names; no other
module joins them by hand. A run takes the folder's lock
(:mod:`planetfit.rundir.lock`) and writes its manifest
(:mod:`planetfit.rundir.manifest`) before sampling; ``--resume``,
``redraw``, ``export`` and ``plan`` compare the manifest with the config and
data as they are now and refuse on any difference; ``--force`` deletes only
what the manifest says planetfit wrote.
"""

import contextlib
import json
import logging
import os
from pathlib import Path

import yaml

from planetfit.core.errors import InputError
from planetfit.fitting.sampling.nested import CHECKPOINT
from planetfit.report.files import write_text_atomic
from planetfit.report.summary_types import read_summary
from planetfit.rundir import lock, manifest

log = logging.getLogger("planetfit")

#: Files of a run at the top of its folder (figures are in ``figures/``).
RUN_FILES = {
    "summary": "summary.json",
    "summary_md": "summary.md",
    "table": "table.tex",
    "samples": "samples.h5",
    "posterior_csv": "posterior.csv",
    "posterior_nc": "posterior.nc",
    "report": "report.html",
    "log": "run.log",
    "resolved_config": "config.resolved.yaml",
    "checkpoint": CHECKPOINT,
    "transit_times": "transit_times.csv",
    "export_csv": "posterior_export.csv",
    "export_json": "posterior_export.json",
}
#: The file ``planetfit export`` writes in the run by default, per format (a key of :data:`RUN_FILES`).
EXPORTS = {"csv": "export_csv", "json": "export_json", "nc": "posterior_nc"}
FIGURES = "figures"
MANIFEST = "manifest.json"
#: The fix of a folder that is not a finished run.
FINISHED_FIX = (
    "give the folder of a finished 'planetfit run' (it holds summary.json, samples.h5 and config.resolved.yaml); "
    "an interrupted run is finished with 'planetfit run CONFIG --resume --out DIR'."
)
_NOT_EMPTY_FIX = "use --resume to continue that run, --force to replace it, or --out for a new folder."


class RunDirectory:
    """A run's folder and the names of everything planetfit writes into it.

    Every key of :data:`RUN_FILES` is an attribute giving that file's path
    (``run.summary``, ``run.samples``, ``run.resolved_config``, ...).

    Parameters
    ----------
    path : str or Path
    """

    def __init__(self, path):
        self.path = Path(path)

    def __getattr__(self, name):
        if name in RUN_FILES:
            return self.path / RUN_FILES[name]
        raise AttributeError(name)

    def __fspath__(self):
        return str(self.path)

    def __str__(self):
        return str(self.path)

    @property
    def figures(self):
        """The folder of the run's figures."""
        return self.path / FIGURES

    @property
    def plan(self):
        """The folder ``planetfit plan`` writes into by default."""
        return self.path / "plan"

    @property
    def manifest(self):
        """manifest.json (:mod:`planetfit.rundir.manifest`)."""
        return self.path / MANIFEST

    def read_manifest(self):
        """The run's manifest (a dict), or None for a folder without one."""
        return manifest.read(self.manifest)

    def read_summary(self):
        """The run's summary.json as a :class:`~planetfit.report.summary_types.Summary` (InputError if unreadable)."""
        return read_summary(self.summary, fix=FINISHED_FIX)

    # --- starting a run -------------------------------------------------------------------------------------

    def prepare(self, resume, force):
        """Make the folder ready and take its lock: new, emptied of an earlier run (``force``), or to resume.

        Returns
        -------
        str or None
            A note when a stale lock of a dead process was taken over.
        """
        path = self.path
        if path.exists() and not path.is_dir():
            raise InputError(
                "the run directory path exists and is not a folder.",
                file=path,
                fix="choose another folder with --out (or the config's 'output'), or move the file away.",
            )
        if path.is_dir():
            lock.refuse_if_locked(path)  # a live run is named first, whatever this one asks for
        full = path.exists() and any(path.iterdir())
        if full and resume and not (self.samples.exists() or self.checkpoint.exists()):
            raise InputError(
                f"there is no samples.h5 or {CHECKPOINT} to resume from.",
                file=path,
                fix="run without --resume to start a new fit.",
            )
        if full and not resume:
            if not self.manifest.is_file():
                self._refuse_foreign(force)
            if not force:
                raise InputError("the run directory already holds files.", file=path, fix=_NOT_EMPTY_FIX)
            self.read_manifest()  # refuses a manifest that is not planetfit's
        if not full and resume:
            raise InputError(
                "the run directory does not exist or is empty, so there is nothing to resume.",
                file=path,
                fix="run without --resume to start a new fit.",
            )
        try:
            path.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(
                f"cannot create the run directory ({exc.strerror}).",
                file=path,
                fix="choose a writable folder with --out (or the config's 'output').",
            ) from None
        note = self.take_lock()
        if full and force:
            self._clear()
        return note

    def _refuse_foreign(self, force):
        """Refuse a full folder without a manifest: it is not a planetfit run (or an older planetfit's)."""
        raise InputError(
            f"the run directory already holds files and no {MANIFEST} saying which of them planetfit wrote "
            "(it is not a run directory, or an older planetfit wrote it)"
            + ("; --force replaces only a planetfit run, so nothing was deleted." if force else "."),
            file=self.path,
            fix="choose a new folder with --out (or the config's 'output'); to reuse this one, move or delete "
            "its files yourself.",
        )

    def _owned(self, record):
        """Paths the manifest lists as planetfit's, kept to the run's own names and its figures folder."""
        names = set(RUN_FILES.values())
        out = []
        for rel in record.get("outputs", []):
            parts = Path(str(rel)).parts
            if len(parts) == 1 and parts[0] in names or len(parts) == 2 and parts[0] == FIGURES and parts[1][0] != ".":
                out.append(self.path.joinpath(*parts))
        return out + [self.path / n for n in names]

    def _clear(self):
        """Delete the files the manifest says planetfit wrote (``--force``), then the manifest itself."""
        for p in self._owned(self.read_manifest() or {}):
            with contextlib.suppress(FileNotFoundError, IsADirectoryError):
                p.unlink()
        with contextlib.suppress(OSError):
            self.figures.rmdir()  # only if nothing else is in it
        self.manifest.unlink()

    def claim(self, current, resume):
        """Write the manifest of a new run, or check that a resumed run's manifest matches ``current``.

        Raises
        ------
        InputError
            On a resume whose config, data or sampler differ from the run's manifest (with the differences),
            or whose folder has no manifest.
        """
        if not resume:
            current["outputs"] = sorted(RUN_FILES.values())
            write_text_atomic(self.manifest, json.dumps(current, indent=1) + "\n")
            return
        saved = self.read_manifest()
        if saved is None:
            raise InputError(
                f"there is no {MANIFEST} in this folder, so nothing shows that the saved chain was started with "
                "this config and these data (the run was started by an older planetfit or by hand).",
                file=self.path,
                fix="start a new fit in another folder (--out); this one is left as it is.",
            )
        self.refuse_differences(saved, current, "resume")

    def refuse_differences(self, saved, current, what):
        """Raise :class:`InputError` listing what differs between the run's manifest and ``current``."""
        lines = manifest.differences(saved, current)
        if not lines:
            return
        shown = lines[:12] + ([f"... and {len(lines) - 12} more"] if len(lines) > 12 else [])
        raise InputError(
            f"cannot {what}: the run in this folder was made with another config, data or sampler than now "
            f"({len(lines)} difference(s)): " + "; ".join(shown) + ".",
            file=self.manifest,
            fix="restore the config and data the run was made with (its config.resolved.yaml), or start a new "
            "fit with --force or in another folder with --out.",
        )

    def record_outputs(self, since):
        """Add the figures written since ``since`` (a time.time()) to the manifest's list of planetfit's files."""
        saved = self.read_manifest()
        if saved is None:
            return
        figures = sorted(
            f"{FIGURES}/{p.name}" for p in self.figures.glob("*") if p.is_file() and p.stat().st_mtime >= since
        )
        saved["outputs"] = sorted(set(saved.get("outputs", [])) | set(figures))
        write_text_atomic(self.manifest, json.dumps(saved, indent=1) + "\n")

    def take_lock(self):
        """Take the folder's lock (:func:`planetfit.rundir.lock.acquire`); return its note or None."""
        try:
            return lock.acquire(self.path)
        except OSError as exc:
            raise InputError(
                f"cannot write the run directory's lock ({exc.strerror}).",
                file=self.path / lock.LOCK_NAME,
                fix="make the folder writable, or choose another with --out (or the config's 'output').",
            ) from None

    def release(self):
        """Give up the folder's lock (if this process holds it)."""
        lock.release(self.path)

    # --- reading a finished run ---------------------------------------------------------------------------

    def require_finished(self):
        """Refuse a folder that is not a run, or that another live process is writing."""
        if not self.path.is_dir():
            raise InputError(
                "the run directory does not exist (or is not a folder).",
                file=self.path,
                fix="give the folder of a finished 'planetfit run'.",
            )
        lock.refuse_if_locked(self.path)

    def check_matches(self, current, sampled_names, ndim_saved):
        """Refuse a finished run whose samples, config or data no longer match the run's manifest.

        Parameters
        ----------
        current : dict
            The manifest of the run's config.resolved.yaml and data as they are now.
        sampled_names : list of str or None
            The parameter names stored in samples.h5.
        ndim_saved : int
            Columns of the saved samples.
        """
        names = current["parameters"]
        if ndim_saved != len(names) or (sampled_names is not None and list(sampled_names) != names):
            raise InputError(
                f"samples.h5 holds {ndim_saved} parameters but the run's config has {len(names)}: the folder "
                "mixes two runs.",
                file=self.samples,
                fix="rerun the fit with --force (or into a new folder with --out).",
            )
        saved = self.read_manifest()
        if saved is None:
            log.warning(
                "WARNING: %s has no %s (an older planetfit wrote it): its data files cannot be checked against the fit",
                self.path,
                MANIFEST,
            )
            return
        self.refuse_differences(saved, current, "use this run")

    def require_writable(self):
        """Refuse a run this process cannot write into (exit 2, not a PermissionError)."""
        require_writable(self.path)

    def export_target(self, out, fmt):
        """The path an export as ``fmt`` writes to: ``out``, or its default in the run; never a run's own file."""
        default_name = RUN_FILES[EXPORTS.get(fmt, "export_csv")]
        path = Path(out).resolve() if out else self.path / default_name
        own = {self.path / n for n in (*RUN_FILES.values(), MANIFEST, lock.LOCK_NAME)} - {self.path / default_name}
        if path in own or self.figures in path.parents:
            raise InputError(
                f"'{path.name}' is one of the run's own files; an export never writes over it.",
                key="--out",
                file=path,
                fix=f"give another file name with --out, or leave --out away to write {default_name} in the run.",
            )
        if path.is_dir() or not path.parent.is_dir():
            raise InputError(
                "--out must name a file in an existing folder.",
                key="--out",
                file=path,
                fix="create the folder first, or give a file name (e.g. --out posterior.csv).",
            )
        return path


def require_writable(folder):
    """Raise :class:`InputError` if this process cannot create a file in ``folder``."""
    probe = Path(folder) / f".planetfit-write-test-{os.getpid()}"
    try:
        probe.touch()
        probe.unlink()
    except OSError as exc:
        raise InputError(
            f"cannot write into this folder ({exc.strerror}).",
            file=folder,
            fix="make it writable (chmod u+w), or copy the run to a writable folder and use that copy.",
        ) from None


def start_logging(run_dir, quiet):
    """Log INFO and above to ``run_dir/run.log``, and to the terminal (WARNING and above when ``quiet``)."""
    log.setLevel(logging.INFO)
    for h in list(log.handlers):
        log.removeHandler(h)
        h.close()
    fh = logging.FileHandler(RunDirectory(run_dir).log)
    fh.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(message)s"))
    log.addHandler(fh)
    sh = logging.StreamHandler()
    sh.setLevel(logging.WARNING if quiet else logging.INFO)
    sh.setFormatter(logging.Formatter("%(message)s"))
    log.addHandler(sh)


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
