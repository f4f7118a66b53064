"""``planetfit plan`` as one function: read the run, fill in defaults, plan, warn, write the outputs."""

import time
from pathlib import Path

import numpy as np

from planetfit.planning import outputs, plan
from planetfit.planning.run import load_run
from planetfit.report.summary_types import SamplingFacts
from planetfit.rundir import RunDirectory, require_writable

#: Default observing window: it opens this many days after the run's last data point and lasts this long.
WINDOW_DELAY_DAYS, WINDOW_LENGTH_DAYS = 1.0, 180.0
#: Window values below this are days after the run's last data point, not BJD_TDB.
RELATIVE_BELOW = 1e5
#: A decisive-verdict probability falling by more than this from one count to the next is warned about.
FALL_TOLERANCE = 0.03


def resolve_window(window, last_bjd):
    """The window in BJD_TDB: the default, BJD_TDB values, or days after ``last_bjd``."""
    if window is None:
        start = last_bjd + WINDOW_DELAY_DAYS
        return start, start + WINDOW_LENGTH_DAYS
    start, end = (float(w) for w in window)
    if start < RELATIVE_BELOW:
        return last_bjd + start, last_bjd + end
    return start, end


def plan_warnings(run, planets, window, last_bjd):
    """The plan's warnings: the run's state, what the plan cannot model, and a decisiveness that falls."""
    out = []
    sampling = run.summary.sampling if run.summary is not None else SamplingFacts()
    if sampling.converged is False:
        out.append("The run did not converge: its posterior, and so this plan, is not reliable.")
    if len(sampling.modes or []) > 1:
        out.append(
            "The run's posterior has several modes: the plan's Gaussian approximation of it (one covariance) is crude."
        )
    if not run.has_velocities:
        out.append(
            "The run has no RVs: no mass is measured, and the plan rests on the assumed mass distribution "
            "(see the assumptions)."
        )
    if window[0] < last_bjd:
        out.append("The window begins before the run's last data point; the new RVs are treated as independent.")
    if run.has_velocities and any(s.coefficients for s in run.model.velocity.spectrographs):
        out.append("The run decorrelates activity indicators; the new RVs are planned without such terms.")
    for name, p in planets.items():
        rows = [r for r in p["counts"] if r.get("p_decisive") is not None]
        decisive = [r["p_decisive"] for r in rows]
        if decisive and np.min(np.diff(decisive), initial=0.0) < -FALL_TOLERANCE:
            now = p["now"]["p_rocky"]
            out.append(
                f"Planet {name}: the probability of a decisive verdict falls from {max(decisive):.0%} to "
                f"{decisive[-1]:.0%} at {rows[-1]['n_rvs']} new RVs. "
                + (f"The present p_rocky ({now:.2f}) averages over the mass uncertainty; " if now is not None else "")
                + "a sharper mass moves p_rocky towards the value of the true mass, which for the masses near the "
                "composition boundary the posterior allows is less decisive"
                + (
                    f" (with the mass known exactly: {p['p_decisive_mass_known']:.0%})"
                    if p.get("p_decisive_mass_known") is not None
                    else ""
                )
                + ". More RVs cannot fix that; a more precise radius can."
            )
    return out


def plan_run(run_dir, out_dir=None, **options):
    """Plan RV follow-up for a finished run; return the plan dict and the written paths.

    Parameters
    ----------
    run_dir : path
    out_dir : path, optional
        Default: ``run_dir/plan``.
    **options
        ``rv_error_ms``, ``jitter_ms`` (None: the run's medians), ``counts``,
        ``window`` (None, BJD_TDB, or days after the last data point),
        ``per_night``, ``target_precision``, ``draws``, ``mass_guess``, ``seed``.
    """
    started = time.monotonic()
    run = load_run(run_dir)
    error, jitter = plan.run_defaults(run)
    last = run.last_data_bjd()
    settings = plan.PlanSettings(
        rv_error_ms=error if options.get("rv_error_ms") is None else options["rv_error_ms"],
        jitter_ms=jitter if options.get("jitter_ms") is None else options["jitter_ms"],
        counts=sorted(set(options.get("counts") or (10, 20, 40, 80))),
        window_bjd=resolve_window(options.get("window"), last),
        per_night=options.get("per_night", 1),
        target_precision=options.get("target_precision", 0.2),
        draws=options.get("draws", 300),
        mass_guess=options.get("mass_guess"),
        seed=options.get("seed", 0),
    )
    plan.check_settings(settings)
    noise = plan.default_noise(run, settings)
    planets, method = plan.make_plan(run, settings, noise)
    result = {
        "system": run.checked.config.system,
        "run": str(run.run_dir),
        "settings": {
            "rv_error_ms": settings.rv_error_ms,
            "jitter_ms": settings.jitter_ms,
            "counts": settings.counts,
            "window_bjd": list(settings.window_bjd),
            "per_night": settings.per_night,
            "target_precision": settings.target_precision,
            "draws": min(settings.draws, run.size),
            "mass_guess_earth": None if settings.mass_guess is None else list(settings.mass_guess),
            "seed": settings.seed,
        },
        "planets": planets,
        "method": method,
        "assumptions": outputs.assumptions(method["mass_source"], method["noise"]),
        "warnings": plan_warnings(run, planets, settings.window_bjd, last),
    }
    result["seconds"] = round(time.monotonic() - started, 2)
    if out_dir is None:
        require_writable(run.run_dir)
    out_dir = Path(out_dir) if out_dir is not None else RunDirectory(run.run_dir).plan
    return result, outputs.write_plan(out_dir, result)
