"""Radial-velocity figures: each planet phase-folded, and the whole time series.

Every panel that shows data with signals removed names them in its
legend title, so a reader never mistakes corrected points for raw ones.
"""

import numpy as np

from planetfit.fitting import predictions
from planetfit.fitting.keplerian import radial_velocity_ms
from planetfit.report import style
from planetfit.report.figures.common import band, phase_days

GRID_POINTS = 600
#: The time-series model grid resolves the shortest period with this many points.
POINTS_PER_PERIOD = 40
MAX_GRID_POINTS = 20000


def planet_rv_ms(values, orbit, planet, times):
    """One planet's Keplerian RV (m/s) at ``times``."""
    return radial_velocity_ms(
        times,
        values[planet.period.name],
        orbit.periastron_bjd,
        orbit.eccentricity,
        orbit.omega_rad,
        values[planet.amplitude.name],
    )


def _corrected(log_prob, view, index):
    """RVs without offset and activity prediction, the model (planets, trend, indicators), jitter-inflated errors."""
    d, s = log_prob.velocities[index], log_prob.model.velocity.spectrographs[index]
    v = view.median
    rv = d.rv - v[s.offset.name] - predictions.velocity_noise_prediction(log_prob, v, view.median_orbits)[index]
    err = np.hypot(d.error, v[s.jitter.name])
    return d, rv, predictions.velocity_model(log_prob, v, view.median_orbits, index), err


def removed_text(log_prob, *extra):
    """Legend title naming what was subtracted from the plotted RVs."""
    parts = ["offsets", *extra]
    if predictions.has_activity_model(log_prob):
        parts.append("activity (GP mean)")
    if log_prob.model.velocity.has_indicators:
        parts.append("activity-indicator terms")
    text = ", ".join(parts[:-1]) + (" and " if len(parts) > 1 else "") + parts[-1]
    return f"data: {text} removed"


def _instruments(ax, log_prob, draw_one):
    for i, d in enumerate(log_prob.velocities):
        x, y, e = draw_one(i)
        ax.errorbar(
            x,
            y,
            e,
            fmt=style.MARKERS[i % len(style.MARKERS)],
            color=style.CYCLE[i % len(style.CYCLE)],
            ms=3,
            elinewidth=0.7,
            label=d.name,
        )


def _panels(width_in, height_in, rows=2):
    fig = style.new_figure(width_in, height_in)
    axes = fig.subplots(rows, 1, sharex=True, height_ratios=(3,) + (2,) * (rows - 2) + (1.2,))
    axes[-1].axhline(0.0, color=style.MODEL_COLOUR)
    axes[-1].set_ylabel("Residual [m/s]")
    return fig, axes


def rv_phase_figure(log_prob, view, planet):
    """RVs folded on ``planet``'s period with offsets, activity and the other planets removed.

    Error bars include each spectrograph's median jitter. Phase 0 is the
    transit (inferior conjunction).

    Returns
    -------
    matplotlib.figure.Figure
        Two axes: velocity, residuals.
    """
    name = planet.name
    v, orbits = view.median, view.median_orbits
    period = v[planet.period.name]

    def phase(times):
        return phase_days(times, period, v[planet.transit_time.name]) / period

    def folded(i):
        d, rv, model, err = _corrected(log_prob, view, i)
        own = planet_rv_ms(v, orbits[name], planet, d.time)
        return phase(d.time), rv - (model - own), err

    def residual(i):
        d, rv, model, err = _corrected(log_prob, view, i)
        return phase(d.time), rv - model, err

    grid = np.linspace(-0.5, 0.5, GRID_POINTS)
    median = planet_rv_ms(v, orbits[name], planet, v[planet.transit_time.name] + grid * period)
    lo, hi = band(
        [
            planet_rv_ms(val, orb[name], planet, val[planet.transit_time.name] + grid * val[planet.period.name])
            for val, orb in view.draws
        ]
    )
    others = ["other planets"] if len(log_prob.planets) > 1 else []
    others += ["trend"] if log_prob.model.velocity.trend is not None else []
    with style.style():
        fig, (top, bottom) = _panels(style.COLUMN_WIDTH_IN, 3.4)
        top.fill_between(grid, lo, hi, color=style.MODEL_COLOUR, alpha=style.BAND_ALPHA, lw=0, label="68% of draws")
        top.plot(grid, median, color=style.MODEL_COLOUR, label="median model")
        _instruments(top, log_prob, folded)
        _instruments(bottom, log_prob, residual)
        top.set_ylabel("Radial velocity [m/s]")
        bottom.set_xlabel("Phase (0 = conjunction)")
        bottom.set_xlim(-0.5, 0.5)
        fig.legend(
            *top.get_legend_handles_labels(),
            loc="outside upper center",
            ncols=2,
            title=f"Planet {name}, P = {period:.4g} d\n{removed_text(log_prob, *others)}",
        )
    return fig


def _time_grid(log_prob, view):
    """Times of the whole RV series, the plotted range and a model grid resolving the shortest period."""
    v = view.median
    t_all = np.concatenate([d.time for d in log_prob.velocities])
    t0 = float(np.floor(t_all.min() / 100.0) * 100.0)
    span = t_all.max() - t_all.min()
    t_lo, t_hi = t_all.min() - 0.03 * span, t_all.max() + 0.03 * span
    shortest = min(v[p.period.name] for p in log_prob.planets)
    n = int(min(MAX_GRID_POINTS, max(GRID_POINTS, POINTS_PER_PERIOD * (t_hi - t_lo) / shortest)))
    return t0, t_lo, t_hi, np.linspace(t_lo, t_hi, n)


def _activity_panel(ax, log_prob, view, grid, t0):
    """RVs minus offsets, planets and trend, with the activity GP's mean and 68% band per spectrograph."""
    v = view.median
    prediction = predictions.activity_prediction(log_prob, v, view.median_orbits, grid)
    for i, (mean, sd) in enumerate(prediction):
        colour = style.CYCLE[i % len(style.CYCLE)]
        ax.fill_between(grid - t0, mean - sd, mean + sd, color=colour, alpha=0.2, lw=0)
        ax.plot(grid - t0, mean, color=colour, lw=0.8, label=f"GP mean ± 1σ ({log_prob.velocities[i].name})")

    def activity(i):
        d, rv, model, err = _corrected(log_prob, view, i)
        gp = predictions.velocity_noise_prediction(log_prob, v, view.median_orbits)[i]
        return d.time - t0, rv + gp - model, err

    _instruments(ax, log_prob, activity)
    ax.set_ylabel("Activity [m/s]")
    ax.set_title("data: offsets, planets and trend removed", loc="left", fontsize="small", pad=2)


def rv_time_figure(log_prob, view):
    """All RVs against time with the summed model of every planet (and the activity GP, when fitted).

    Returns
    -------
    matplotlib.figure.Figure
        Velocity, the activity panel (with ``rv_activity``), residuals.
    """
    v, orbits = view.median, view.median_orbits
    t0, t_lo, t_hi, grid = _time_grid(log_prob, view)

    def total(values, orbs):
        return predictions.trend_ms(log_prob, values, grid) + sum(
            planet_rv_ms(values, orbs[p.name], p, grid) for p in log_prob.planets
        )

    lo, hi = band([total(val, orb) for val, orb in view.draws])

    def data(i):
        d, rv, _, err = _corrected(log_prob, view, i)
        return d.time - t0, rv - log_prob.model.velocity.spectrographs[i].indicator_ms(v), err

    def residual(i):
        d, rv, model, err = _corrected(log_prob, view, i)
        return d.time - t0, rv - model, err

    activity = predictions.has_activity_model(log_prob)
    with style.style():
        fig, axes = _panels(style.PAGE_WIDTH_IN, 4.6 if activity else 3.3, rows=3 if activity else 2)
        top, bottom = axes[0], axes[-1]
        top.fill_between(
            grid - t0, lo, hi, color=style.MODEL_COLOUR, alpha=style.BAND_ALPHA, lw=0, label="68% of draws"
        )
        top.plot(grid - t0, total(v, orbits), color=style.MODEL_COLOUR, lw=0.8, label="median model (planets + trend)")
        _instruments(top, log_prob, data)
        if activity:
            _activity_panel(axes[1], log_prob, view, grid, t0)
        _instruments(bottom, log_prob, residual)
        top.set_ylabel("Radial velocity [m/s]")
        bottom.set_xlabel(f"Time [BJD$_\\mathrm{{TDB}}$ $-$ {t0:.0f}]")
        bottom.set_xlim(t_lo - t0, t_hi - t0)
        handles, labels = top.get_legend_handles_labels()
        if activity:  # the activity curves, not the same instruments' points again
            more = [(h, lab) for h, lab in zip(*axes[1].get_legend_handles_labels()) if lab.startswith("GP")]
            handles, labels = handles + [h for h, _ in more], labels + [lab for _, lab in more]
        fig.legend(
            handles,
            labels,
            loc="outside upper center",
            ncols=2 + len(log_prob.velocities),
            title=removed_text(log_prob) + " (top panel)" * activity,
        )
    return fig
