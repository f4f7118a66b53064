"""A follow-up plan for a finished run: for each number of new RVs, the expected mass precision and verdict.

:func:`make_plan` draws parameter sets from the run's posterior, simulates
the new RVs' information for each (:mod:`planetfit.planning.forecast`) and
summarises over the draws: the mass precision sigma_M / M, the
``p_rocky`` of the expected posterior, the probability that the verdict
becomes decisive, and the number of RVs that reaches a target precision.
"""

import dataclasses

import numpy as np
from threadpoolctl import threadpool_limits

from planetfit.context.interior import composition
from planetfit.context.interior.composition import rocky_flags
from planetfit.core.errors import InputError
from planetfit.core.stats import stat
from planetfit.planning import forecast, massprior
from planetfit.planning.fisher import PlannedRvNoise
from planetfit.planning.schedule import check_window, window_capacity

#: A verdict is decisive when p_rocky is above this or below 1 minus this (the planning question's threshold).
DECISIVE = 0.95
#: Counts tried (besides the asked ones) to find the number of RVs that reaches the target precision.
SEARCH_COUNTS = 16
#: Kernel width, in mass posterior widths, of the exact-mass limit. # common practice, no published source
KERNEL_FRACTION = 0.1
#: Old samples weighted by the new RVs' likelihood for the reweighted verdict.
REWEIGHT_SAMPLES = 4000
#: The largest count the search tries (dense covariances of the new RVs stay fast).
SEARCH_MAX = 500


@dataclasses.dataclass
class PlanSettings:
    """What the observer gives (defaults filled from the run by :func:`settings_for_run`)."""

    rv_error_ms: float
    jitter_ms: float
    counts: list
    window_bjd: tuple
    per_night: int = 1
    target_precision: float = 0.2
    draws: int = 300
    mass_guess: tuple = None  # (mass_earth, sd) for a transit-only run, else the mass-radius relation
    seed: int = 0


def search_counts(settings):
    """The asked counts and a logarithmic grid up to the window's capacity, sorted."""
    top = min(window_capacity(settings.window_bjd, settings.per_night), SEARCH_MAX)
    grid = np.unique(np.geomspace(2, max(top, 2), SEARCH_COUNTS).astype(int))
    return sorted(set(settings.counts) | {int(n) for n in grid if n <= top})


def transit_only_values(run, settings, rng):
    """The run's values with each transiting planet's semi-amplitude drawn from a mass prior; its description."""
    values, model = dict(run.values), run.model
    for p in model.transiting:
        radius = run.planets[p.name]["radius_earth"]
        if settings.mass_guess is None:
            mass = massprior.masses_from_radii(radius, rng)
        else:
            mass = massprior.masses_from_guess(*settings.mass_guess, radius.size, rng)
        values[p.amplitude.name] = massprior.amplitudes_ms(p, model.star, values, mass)
    if settings.mass_guess is None:
        source = f"mass drawn for each posterior radius from the {massprior.CK17_REFERENCE}"
    else:
        source = f"mass from the user's guess {settings.mass_guess[0]:g} +- {settings.mass_guess[1]:g} Earth masses"
    return values, source


def _noise_text(noise):
    if noise.activity is None:
        return "white noise: the RV error and jitter added in quadrature; no correlated stellar activity"
    return (
        f"white noise (RV error and jitter in quadrature) plus the run's RV activity process at its posterior-median "
        f"hyperparameters with amplitude {noise.activity[1]:.2f} m/s (median of the run's spectrographs), "
        "correlated among the new RVs; the new RVs' activity is taken as independent of the old RVs'"
    )


def _summarise(results, planet, counts, asked, rng):
    """Per asked count the statistics over draws, and the median precision at every count."""
    masses = np.array([r.mass[planet] for r in results])
    precision = np.array([r.sigma_mass[planet] for r in results]) / masses[:, None]
    sigma_k = np.array([r.sigma_k[planet] for r in results])
    transits = np.isfinite(results[0].radius[planet])
    normals = rng.standard_normal((forecast.VERDICT_SAMPLES, 2))
    rows = []
    for j, n in enumerate(counts):
        if n not in asked:
            continue
        row = {"n_rvs": n, "mass_precision": stat(precision[:, j]), "sigma_k_ms": stat(sigma_k[:, j])}
        if transits:
            p = np.array([r.p_rocky_reweighted[planet][j] for r in results], dtype=float)
            gaussian = ~np.isfinite(p)
            p[gaussian] = [
                forecast.p_rocky(composition, r.mean_mr[planet][j], r.cov_mr[planet][j], normals)
                for r, g in zip(results, gaussian)
                if g
            ]
            row.update(
                p_rocky=stat(p),
                p_decisive=float(np.mean((p > DECISIVE) | (p < 1 - DECISIVE))),
                p_decisive_rocky=float(np.mean(p > DECISIVE)),
                p_decisive_volatile=float(np.mean(p < 1 - DECISIVE)),
                verdict_reweighted_fraction=float(np.mean(~gaussian)),
            )
        rows.append(row)
    return rows, np.median(precision, axis=0)


def _reweighting(run, values, coords, rng):
    """The run's samples (at most ``REWEIGHT_SAMPLES``) and their rocky flags, for reweighted verdicts."""
    keep = rng.choice(run.size, size=min(REWEIGHT_SAMPLES, run.size), replace=False)
    flags = {}
    for p in run.model.transiting:
        q = run.planets[p.name]
        flags[p.name] = rocky_flags(q["mass_earth"][keep], q["radius_earth"][keep])
    return forecast.Reweighting(coords.z[keep], flags)


def decisive_with_exact_mass(mass, radius, rows):
    """P(decisive) if the mass were known exactly, the radius as it is: the limit of many RVs.

    For each drawn true mass, ``p_rocky`` is the rocky fraction of the run's samples of nearly that
    mass (a Gaussian kernel a tenth of the mass posterior's width), so the radius keeps its posterior.
    """
    flags = rocky_flags(mass, radius)
    ok = np.isfinite(flags)
    m, f = mass[ok], flags[ok]
    if m.size == 0:
        return None
    width = KERNEL_FRACTION * np.std(m)
    p = []
    for m0 in mass[rows]:
        w = np.exp(-0.5 * ((m - m0) / width) ** 2)
        p.append(np.sum(w * f) / np.sum(w))
    p = np.array(p)
    return float(np.mean((p > DECISIVE) | (p < 1 - DECISIVE)))


def needed_count(counts, medians, target):
    """The fewest RVs whose median precision reaches ``target`` (log-log interpolation), or None."""
    reached = np.flatnonzero(medians <= target)
    if reached.size == 0:
        return None
    j = reached[0]
    if j == 0:
        return int(counts[0])
    n0, n1, m0, m1 = counts[j - 1], counts[j], medians[j - 1], medians[j]
    slope = (np.log(m1) - np.log(m0)) / (np.log(n1) - np.log(n0))
    return int(min(n1, np.ceil(n0 * np.exp((np.log(target) - np.log(m0)) / slope))))


def _now(run, planet):
    entry = run.summary.planets.get(planet) if run.summary is not None else None
    mass = run.planets[planet]["mass_earth"]
    comp = (entry.composition if entry is not None else None) or {}
    measured = run.has_velocities
    p = comp.get("p_rocky") if measured else None
    return {
        "mass_precision": float(np.std(mass) / np.median(mass)) if measured else None,
        "p_rocky": p,
        "decisive": None if p is None else bool(p > DECISIVE or p < 1 - DECISIVE),
    }


def make_plan(run, settings, noise):
    """The plan (a JSON-ready dict) for a :class:`~planetfit.planning.run.PlanningRun`."""
    rng = np.random.default_rng(settings.seed)
    counts = search_counts(settings)
    check_window(settings.window_bjd, settings.per_night, max(counts))
    values, mass_source, uninformed = run.values, "the run's posterior", ()
    if not run.has_velocities:
        values, mass_source = transit_only_values(run, settings, rng)
        uninformed = {p.amplitude.name for p in run.model.transiting}
    names = forecast.planner_parameters(run.model, values)
    coords = forecast.coordinates(values, names, uninformed)
    reweighting = None if uninformed else _reweighting(run, values, coords, rng)
    forecaster = forecast.Forecaster(
        run.model, values, coords, noise, settings.window_bjd, settings.per_night, reweighting
    )
    rows = rng.choice(run.size, size=min(settings.draws, run.size), replace=False)
    with threadpool_limits(limits=1):  # small matrices: BLAS threads would only contend for the cores
        results = [forecaster.draw(i, counts, rng) for i in rows]
    planets = {}
    for p in run.model.planets:
        table, medians = _summarise(results, p.name, counts, set(settings.counts), rng)
        now = _now(run, p.name)
        reached = now["mass_precision"] is not None and now["mass_precision"] <= settings.target_precision
        planets[p.name] = {
            "transits": p.transits,
            "mass_is_minimum": not p.transits and p.inclination is None,
            "now": now,
            "counts": table,
            "target_precision": settings.target_precision,
            "n_rvs_for_target": 0 if reached else needed_count(counts, medians, settings.target_precision),
            "searched_up_to": int(max(counts)),
        }
        if p.transits and run.has_velocities:
            q = run.planets[p.name]
            planets[p.name]["p_decisive_mass_known"] = decisive_with_exact_mass(
                q["mass_earth"], q["radius_earth"], rows
            )
    return planets, {"mass_source": mass_source, "noise": _noise_text(noise), "parameters": names}


def default_noise(run, settings):
    """The new RVs' noise model: the settings' error and jitter, plus the run's activity process if it had one."""
    model = run.model
    if model.velocity is None or not model.velocity.noise.correlated:
        return PlannedRvNoise(settings.rv_error_ms, settings.jitter_ms)
    median = {n: (float(np.median(v)) if np.ndim(v) else v) for n, v in run.values.items()}
    term = model.velocity.noise.kernel.term(median)
    amplitude = float(np.median([median[s.activity_amplitude.name] for s in model.velocity.spectrographs]))
    return PlannedRvNoise(settings.rv_error_ms, settings.jitter_ms, (term, amplitude))


def run_defaults(run):
    """Default RV error and jitter (m/s): the medians of the run's RV errors and jitters; None without RVs."""
    if not run.has_velocities:
        return None, 0.0
    error = float(np.median(np.concatenate([d.error for d in run.checked.velocities])))
    jitter = float(np.median([np.median(run.values[s.jitter.name]) for s in run.model.velocity.spectrographs]))
    return error, jitter


def check_settings(settings):
    """Raise :class:`InputError` for settings no plan can use."""
    if settings.rv_error_ms is None:
        raise InputError(
            "the new RVs need an error, and the run has no RVs to take a default from.",
            key="--rv-error-ms",
            fix="give the spectrograph's expected precision, e.g. --rv-error-ms 1.5.",
        )
    if not settings.rv_error_ms > 0:
        raise InputError(
            f"the error of a new RV must be positive, got {settings.rv_error_ms:g} m/s.",
            key="--rv-error-ms",
            fix="give the spectrograph's expected precision, e.g. --rv-error-ms 1.5.",
        )
    if settings.jitter_ms is None or not settings.jitter_ms >= 0:
        raise InputError("--jitter-ms must be zero or positive.", key="--jitter-ms", fix="e.g. --jitter-ms 1.0.")
    if min(settings.counts) < 2:
        raise InputError("every count of new RVs must be at least 2.", key="--counts", fix="e.g. --counts 10 20 40 80.")
    if not 0 < settings.target_precision < 1:
        raise InputError("--target-precision must lie in (0, 1).", key="--target-precision", fix="e.g. 0.2 for 20%.")
