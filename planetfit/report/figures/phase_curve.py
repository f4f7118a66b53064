"""The planet's light: the full orbit folded on the period, and the secondary eclipse, with residuals."""

import numpy as np

from planetfit.core.units import HOURS_PER_DAY, MINUTES_PER_DAY, PPM
from planetfit.fitting import predictions
from planetfit.fitting.components.light import PlanetLightTerm
from planetfit.fitting.components.transit import TransitLightCurve, TransitTerm
from planetfit.report import style
from planetfit.report.figures.common import bin_points
from planetfit.report.figures.transit import detrended, points

GRID_POINTS = 1500
#: Display bins per orbit (left panel) and the eclipse panel's half-width in eclipse durations.
BINS_PER_ORBIT = 60
ECLIPSE_HALF_DURATIONS = 1.5
ECLIPSE_BINS = 24


def _phase(times, period, transit_bjd):
    """Orbital phase in [-0.25, 0.75): 0 at mid-transit."""
    return np.mod((times - transit_bjd) / period + 0.25, 1.0) - 0.25


def _model_ppm(log_prob, view, light, index, times):
    """The planet's transit and light (relative flux - 1, ppm) at ``times`` for the median parameters."""
    view_values, orbits = view.median, view.median_orbits
    d, model = log_prob.photometry[index], log_prob.model.photometry[index]
    lc = TransitLightCurve(times, d.exposure_days, log_prob.model.exposures[d.name].supersample)
    ld = log_prob.model.bands[d.band]
    orbit = orbits[light.planet.name]
    deficit = np.zeros(times.size)
    for term in (TransitTerm(light.planet, lc, ld), PlanetLightTerm(light, lc, log_prob.model.star)):
        part = term.deficit(view_values, orbit)
        if part is not None:
            deficit[part[0]] += part[1]
    dilution = view_values[model.dilution.name] if model.dilution else 0.0
    return -deficit * (1 - dilution) / PPM


def _folded(log_prob, view, light, index):
    """Phase, the planet's own signal (ppm) and the residuals (ppm) of dataset ``index``."""
    v, orbits = view.median, view.median_orbits
    name = light.planet.name
    flux, level = detrended(log_prob, v, orbits, index)
    full = predictions.photometry_model(log_prob, v, orbits, index)
    own = predictions.photometry_model(log_prob, v, orbits, index, planets=[name])
    d = log_prob.photometry[index]
    phase = _phase(d.time, v[light.planet.period.name], v[light.planet.transit_time.name])
    return phase, ((flux - (full - own)) / level - 1.0) / PPM, (flux - full) / level / PPM


def phase_curve_figure(log_prob, view, light, index, eclipse_bjd, duration_hr):
    """Figure of one planet's light in photometric dataset ``index``.

    Left: the whole orbit folded on the median ephemeris (phase 0 at
    transit), binned points, the median model. Right: hours from the
    median mid-eclipse, with residuals below. Other planets, the baseline
    and any GP prediction are removed from the data.

    Returns
    -------
    matplotlib.figure.Figure
    """
    v = view.median
    per, t0 = v[light.planet.period.name], v[light.planet.transit_time.name]
    d = log_prob.photometry[index]
    phase, own, resid = _folded(log_prob, view, light, index)
    grid_phase = np.linspace(-0.25, 0.75, GRID_POINTS)
    model = _model_ppm(log_prob, view, light, index, t0 + per * grid_phase)
    half_hr = ECLIPSE_HALF_DURATIONS * duration_hr
    ecl_phase = (eclipse_bjd - t0) / per
    x_hr = (phase - ecl_phase) * per * HOURS_PER_DAY
    near = np.abs(x_hr) <= half_hr
    grid_hr = np.linspace(-half_hr, half_hr, 400)
    ecl_model = _model_ppm(log_prob, view, light, index, eclipse_bjd + grid_hr / HOURS_PER_DAY)
    with style.style():
        fig = style.new_figure(style.PAGE_WIDTH_IN, 3.4)
        grid = fig.add_gridspec(2, 2, height_ratios=(3, 1.2), width_ratios=(1.6, 1))
        left = fig.add_subplot(grid[:, 0])
        top = fig.add_subplot(grid[0, 1])
        bottom = fig.add_subplot(grid[1, 1], sharex=top)
        bx, by, be = bin_points(phase, own, 1.0 / BINS_PER_ORBIT)
        left.errorbar(bx, by, be, fmt="o", color=style.DATA_COLOUR, ms=2.5, elinewidth=0.7, label="binned")
        left.plot(grid_phase, model, color=style.MODEL_COLOUR, label="median model")
        peak = max(model.max(), 1.0)
        left.set_ylim(-0.4 * peak, 1.4 * peak)  # the planet's light fills the panel; the transit runs below
        left.set_xlim(-0.25, 0.75)
        left.set_xlabel("Orbital phase (0: mid-transit)")
        left.set_ylabel("Relative flux $-$ 1 [ppm]")
        left.legend(loc="lower right", fontsize="small")
        width_hr = max(2 * half_hr / ECLIPSE_BINS, d.exposure_days * HOURS_PER_DAY)
        points(top, x_hr[near], own[near], width_hr, ecl_model)
        top.plot(grid_hr, ecl_model, color=style.MODEL_COLOUR)
        points(bottom, x_hr[near], resid[near], width_hr, np.zeros(1))
        bottom.axhline(0.0, color=style.MODEL_COLOUR)
        bottom.set_xlim(-half_hr, half_hr)
        bottom.set_xlabel("Time from mid-eclipse [h]")
        bottom.set_ylabel("Residual [ppm]")
        top.tick_params(labelbottom=False)
        fig.suptitle(
            f"Planet {light.planet.name}: its light in {d.name} ({d.exposure_days * MINUTES_PER_DAY:.0f}-min exposures)"
        )
    return fig
