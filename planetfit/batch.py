"""Fit a catalogue of systems as Dask distributed tasks and collect ``batch_summary.csv``.

Each config is one task: the whole ``pipeline.run`` in a worker process,
writing its own run directory. A task never raises; a system that fails
comes back with its status (``input error`` or ``internal error``) and
message, and the others go on. Dask is an optional dependency
(``pip install -e ".[cluster]"``), imported only here and only when used.

``batch_summary.csv`` has one row per planet of each successful system
(mass, radius and density as median / lower / upper, composition
probabilities, convergence) and one row for each failed system, with an
empty planet column.
"""

import csv
import os
import time
import traceback
from pathlib import Path

from planetfit.core.errors import InputError

STATUS_OK, STATUS_INPUT, STATUS_INTERNAL = "ok", "input error", "internal error"
QUANTITIES = ("mass_earth", "radius_earth", "density_gcc")
COLUMNS = (
    ["config", "system", "status", "error", "planet"]
    + [f"{q}_{s}" for q in QUANTITIES for s in ("median", "lower", "upper")]
    + ["mass_is_minimum", "p_rocky", "p_volatile_rich", "converged", "independent_samples", "seconds", "run_dir"]
)
SUMMARY_FILE = "batch_summary.csv"


def _import_distributed():
    try:
        import distributed
    except ImportError:
        raise InputError(
            "'planetfit batch' needs Dask's distributed scheduler, which is not installed.",
            fix='pip install -e ".[cluster]" (or pip install "dask[distributed]").',
        ) from None
    return distributed


def run_directories(config_paths, out_dir):
    """Run directory of each config: its own ``output`` (None), or ``out_dir/<config stem>``.

    Configs sharing a stem (``a/system.yaml``, ``b/system.yaml``) are told
    apart by their folders: ``out_dir/a-system``, ``out_dir/b-system``.
    """
    if out_dir is None:
        return [None] * len(config_paths)
    paths = [Path(p).resolve() for p in config_paths]
    stems = [p.stem for p in paths]
    if len(set(stems)) == len(stems):
        names = stems
    else:
        root = Path(os.path.commonpath([p.parent for p in paths]))
        names = ["-".join(p.relative_to(root).with_suffix("").parts) for p in paths]
    if len(set(names)) != len(names):
        raise InputError("the same config is listed twice.", fix="list each config once.")
    return [Path(out_dir).resolve() / n for n in names]


def fit_system(config_path, output=None, figures=False, force=False):
    """Task body: fit one config; never raises.

    Returns
    -------
    list of dict
        Rows of ``batch_summary.csv`` (keys of :data:`COLUMNS`).
    """
    from planetfit import pipeline

    start = time.perf_counter()
    base = {"config": str(config_path)}
    try:
        run = pipeline.run(config_path, output=output, force=force, quiet=True, figures=figures)
    except InputError as exc:
        return [dict(base, status=STATUS_INPUT, error=exc.message(), seconds=round(time.perf_counter() - start, 1))]
    except Exception as exc:  # one system's failure must not stop the catalogue
        where = traceback.extract_tb(exc.__traceback__)[-1]
        return [
            dict(
                base,
                status=STATUS_INTERNAL,
                error=f"{type(exc).__name__}: {exc} ({where.filename}, line {where.lineno})",
                seconds=round(time.perf_counter() - start, 1),
            )
        ]
    return summary_rows(run.path, run.summary, base, round(time.perf_counter() - start, 1))


def summary_rows(run_dir, summary, base, seconds):
    """One row per planet from a finished run's summary (:class:`~planetfit.report.summary_types.Summary`)."""
    s = summary.sampling
    common = dict(
        base,
        system=summary.system,
        status=STATUS_OK,
        error="",
        converged=s.converged,
        independent_samples=s.independent_samples,
        seconds=seconds,
        run_dir=str(run_dir),
    )
    rows = []
    for name, planet in summary.planets.items():
        row = dict(common, planet=name, mass_is_minimum=bool(planet.mass_is_minimum))
        for q in QUANTITIES:
            st = planet.stat(q)
            row.update({f"{q}_{k}": getattr(st, k, None) for k in ("median", "lower", "upper")})
        composition = planet.composition or {}
        row.update(p_rocky=composition.get("p_rocky"), p_volatile_rich=composition.get("p_volatile_rich"))
        rows.append(row)
    return rows


def write_summary_csv(path, rows):
    """Write rows to ``path`` (missing values as empty cells)."""
    with open(path, "w", newline="") as fh:
        writer = csv.DictWriter(fh, fieldnames=COLUMNS, restval="")
        writer.writeheader()
        for row in rows:
            writer.writerow({k: "" if v is None else v for k, v in row.items()})


def _client(distributed, workers, scheduler):
    """A client of the scheduler at ``scheduler``, or of a new local cluster of ``workers`` processes."""
    if scheduler:
        try:
            return distributed.Client(scheduler, timeout="20s"), None
        except (OSError, TimeoutError) as exc:
            raise InputError(
                f"cannot reach a Dask scheduler at '{scheduler}' ({exc}).",
                fix="check the address (e.g. tcp://10.0.0.5:8786) and that the scheduler runs, or "
                "leave out --scheduler for a local cluster.",
            ) from None
    cluster = distributed.LocalCluster(
        n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=None
    )
    return distributed.Client(cluster), cluster


def run_batch(config_paths, out_dir=None, workers=None, scheduler=None, figures=False, force=False, on_result=None):
    """Fit every config as one Dask task; write ``batch_summary.csv``.

    Parameters
    ----------
    config_paths : list of path-like
        Configs; with a remote ``scheduler`` they must be readable at the
        same paths on the workers (a shared file system).
    out_dir : path-like, optional
        Run directories go to ``out_dir/<config stem>`` and the summary to
        ``out_dir``; by default each config's ``output`` and the current folder.
    workers : int, optional
        Processes of the local cluster (default: the machine's cores).
    scheduler : str, optional
        Address of an existing Dask scheduler; no local cluster is started.
    figures, force : bool
        As for ``pipeline.run``.
    on_result : callable, optional
        Called with each system's rows as it finishes.

    Returns
    -------
    (Path, list of dict)
        The summary file and its rows, in the order of ``config_paths``.
    """
    if workers is not None and workers < 1:
        raise InputError(f"--workers must be at least 1, got {workers}.", fix="use e.g. --workers 2.")
    paths = [Path(p).resolve() for p in config_paths]
    for p in paths:
        if not p.is_file():
            raise InputError("no such config file.", file=p, fix="check the path; nothing was fitted.")
    outputs = run_directories(paths, out_dir)
    summary_dir = Path(out_dir).resolve() if out_dir is not None else Path.cwd()
    summary_dir.mkdir(parents=True, exist_ok=True)
    distributed = _import_distributed()
    client, cluster = _client(distributed, workers or os.cpu_count(), scheduler)
    try:
        results = _collect(distributed, client, paths, outputs, figures, force, on_result)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    rows = [r for rows in results for r in rows]
    path = summary_dir / SUMMARY_FILE
    write_summary_csv(path, rows)
    return path, rows


def _collect(distributed, client, paths, outputs, figures, force, on_result):
    """Submit one task per config and gather their rows in config order, as each finishes."""
    futures = [
        client.submit(
            fit_system, str(p), None if o is None else str(o), figures, force, pure=False, key=f"planetfit-{i}-{p.stem}"
        )
        for i, (p, o) in enumerate(zip(paths, outputs))
    ]
    order = {f.key: i for i, f in enumerate(futures)}
    results = [None] * len(futures)
    for future in distributed.as_completed(futures):
        i = order[future.key]
        try:
            rows = future.result()
        except Exception as exc:  # the worker died (memory, signal): report it as this system's failure
            rows = [
                {
                    "config": str(paths[i]),
                    "status": STATUS_INTERNAL,
                    "error": f"the task failed on its worker: {type(exc).__name__}: {exc}",
                }
            ]
        results[i] = rows
        if on_result is not None:
            on_result(rows)
    return results
