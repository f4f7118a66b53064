"""Phase-folded transit of one planet in one photometric dataset, with residuals."""

import math

import numpy as np

from planetfit.core.units import HOURS_PER_DAY, MINUTES_PER_DAY, PPM
from planetfit.fitting import predictions
from planetfit.fitting.components.transit import TransitLightCurve
from planetfit.report import style
from planetfit.report.figures.common import band, bin_points, phase_days

#: Half-width of the plotted window in transit durations, and its floor in hours.
WINDOW_DURATIONS = 1.5
MIN_HALF_WINDOW_HR = 2.0
#: Display bins per transit duration (never shorter than one exposure).
BINS_PER_DURATION = 12
GRID_POINTS = 400
#: Above this many points in the window, raw points are drawn smaller and fainter.
DENSE_POINTS = 1000


def _model_ppm(lc, values, orbit, planet, model, limb_darkening):
    """One planet's (diluted) transit (relative flux - 1, ppm) on ``lc``'s times, measured from mid-transit.

    ``model`` is the dataset's PhotometryLikelihood (for its dilution), ``limb_darkening`` its band's.
    """
    dilution = values[model.dilution.name] if model.dilution else 0.0
    u1, u2 = limb_darkening.coefficients(values)
    f = lc.flux(
        np.arange(lc.times.size),
        values[planet.period.name],
        0.0,
        orbit.a_over_rstar,
        math.acos(orbit.cos_i),
        orbit.eccentricity,
        orbit.omega_rad,
        values[planet.radius_ratio.name],
        u1,
        u2,
    )
    return (f - 1.0) * (1 - dilution) / PPM


def detrended(log_prob, values, orbits, index):
    """Dataset ``index``'s flux with the noise model's prediction (GP variability) removed, and its baseline."""
    d = log_prob.photometry[index]
    flux = d.flux - predictions.photometry_noise_prediction(log_prob, values, orbits, index)
    return flux, predictions.baseline_flux(log_prob, values, index)


def _folded_data(log_prob, view, planet, index, half_hr):
    """Times from mid-transit (h) within ``half_hr``, the planet's own transit signal and the residuals (ppm)."""
    d = log_prob.photometry[index]
    v, orbits = view.median, view.median_orbits
    flux, level = detrended(log_prob, v, orbits, index)
    full = predictions.photometry_model(log_prob, v, orbits, index)
    own = predictions.photometry_model(log_prob, v, orbits, index, planets=[planet.name], parts=["transit"])
    per, t0 = v[planet.period.name], v[planet.transit_time.name]
    x_days = phase_days(d.time, per, t0)
    if planet.timing is not None:  # folded on each transit's own mid-time
        x_days = x_days - planet.timing.point_offsets_days(v, d.time, per, t0)
    x_hr = x_days * HOURS_PER_DAY
    sel = np.abs(x_hr) <= half_hr
    return (x_hr[sel], ((flux - (full - own))[sel] / level[sel] - 1.0) / PPM, (flux - full)[sel] / level[sel] / PPM)


def _model_curves(log_prob, view, planet, index, half_hr):
    """A time grid (h from mid-transit), the median model and the 68% band of the draws on it (ppm)."""
    d = log_prob.photometry[index]
    grid_hr = np.linspace(-half_hr, half_hr, GRID_POINTS)
    lc = TransitLightCurve(grid_hr / HOURS_PER_DAY, d.exposure_days, log_prob.model.exposures[d.name].supersample)
    model, ld = log_prob.model.photometry[index], log_prob.model.bands[d.band]
    median = _model_ppm(lc, view.median, view.median_orbits[planet.name], planet, model, ld)
    lo, hi = band([_model_ppm(lc, val, orb[planet.name], planet, model, ld) for val, orb in view.draws])
    return grid_hr, median, lo, hi


def transit_figure(log_prob, view, planet, index, duration_hr):
    """Figure of ``planet``'s transits in photometric dataset ``index``.

    Data are folded on the median ephemeris (on each transit's own median
    mid-time with individual transit times) with the other planets' transits,
    the GP prediction of the variability (for ``baseline: gp``) and the
    baseline divided out; raw points faint, binned points with
    standard errors; the median-parameter model and the 68% band of
    posterior draws, both integrated over the exposure like the fit.

    Parameters
    ----------
    log_prob : LogProbability
    view : PosteriorView
    planet : PlanetConfig
    index : int
        Photometric dataset index.
    duration_hr : float
        Transit duration setting the plotted window.

    Returns
    -------
    matplotlib.figure.Figure
        Two axes: flux, residuals.
    """
    d = log_prob.photometry[index]
    half = max(WINDOW_DURATIONS * duration_hr, MIN_HALF_WINDOW_HR)
    x_hr, flux_ppm, resid_ppm = _folded_data(log_prob, view, planet, index, half)
    grid_hr, median_model, lo, hi = _model_curves(log_prob, view, planet, index, half)
    width_hr = max(duration_hr / BINS_PER_DURATION, d.exposure_days * HOURS_PER_DAY)

    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 3.3)
        top, bottom = fig.subplots(2, 1, sharex=True, height_ratios=(3, 1.2))
        model_span = np.r_[lo, hi, median_model]
        for ax, y, model in ((top, flux_ppm, model_span), (bottom, resid_ppm, np.zeros(1))):
            points(ax, x_hr, y, width_hr, model)
        top.plot([], [], ".", color=style.RAW_COLOUR, ms=4, label="each exposure")
        top.fill_between(grid_hr, lo, hi, color=style.MODEL_COLOUR, alpha=style.BAND_ALPHA, lw=0, label="68% of draws")
        top.plot(grid_hr, median_model, color=style.MODEL_COLOUR, label="median model")
        bottom.axhline(0.0, color=style.MODEL_COLOUR)
        top.set_ylabel("Relative flux $-$ 1 [ppm]")
        bottom.set_ylabel("Residual [ppm]")
        bottom.set_xlabel("Time from mid-transit [h]")
        bottom.set_xlim(-half, half)
        exposure = d.exposure_days * MINUTES_PER_DAY
        fig.legend(
            *top.get_legend_handles_labels(),
            loc="outside upper center",
            ncols=2,
            title=f"Planet {planet.name}, {d.name} ({exposure:.0f}-min exposures)\n"
            f"data: {_removed(log_prob, index)} removed",
        )
    return fig


def points(ax, x, y, width, model):
    """Each exposure faint and binned points with standard errors; y-limits from the data and the ``model`` curve.

    Sparse data read best point by point; with dense data the raw points may run off the axes so that the
    binned points and the model fill them.
    """
    dense = x.size > DENSE_POINTS
    raw_ms, raw_alpha = (1.5, 0.3) if dense else (2.5, 0.6)
    ax.plot(x, y, ".", color=style.RAW_COLOUR, ms=raw_ms, alpha=raw_alpha, mec="none", rasterized=True)
    bx, by, be = bin_points(x, y, width)
    ax.errorbar(
        bx, by, be, fmt="o", color=style.DATA_COLOUR, ms=2.5, elinewidth=0.7, label=f"binned ({width * 60:.0f} min)"
    )
    _limits(ax, np.r_[by - be, by + be] if dense and by.size else y, model)


def _removed(log_prob, index):
    """What the folded points have had subtracted or divided out."""
    parts = ["baseline"]
    if predictions.has_variability_model(log_prob, index):
        parts.append("variability (GP mean)")
    if len(log_prob.model.transiting) > 1:
        parts.append("other planets")
    if any(t.part == "planet light" for t in log_prob.model.photometry[index].terms):
        parts.append("planets' light")
    return ", ".join(parts[:-1]) + (" and " if len(parts) > 1 else "") + parts[-1]


def _limits(ax, data, model):
    """y-limits from the central 99% of ``data`` and the model, so a few outliers do not flatten the plot."""
    lo, hi = np.percentile(data, [0.5, 99.5]) if data.size else (0.0, 0.0)
    lo, hi = min(lo, model.min()), max(hi, model.max())
    pad = 0.15 * (hi - lo) if hi > lo else 1.0
    ax.set_ylim(lo - pad, hi + pad)


def light_curve_figure(log_prob, view, index):
    """Dataset ``index`` against time: data, the GP prediction or regressor trend with the model, and detrended.

    Returns
    -------
    matplotlib.figure.Figure
        Two axes: the data with the GP prediction added to the transit
        model (or the model with its baseline trend in observing conditions),
        and the data with the GP prediction and the baseline removed.
    """
    d = log_prob.photometry[index]
    v, orbits = view.median, view.median_orbits
    model = predictions.photometry_model(log_prob, v, orbits, index)
    gp = predictions.photometry_noise_prediction(log_prob, v, orbits, index)
    base = predictions.baseline_flux(log_prob, v, index)
    t0 = float(np.floor(d.time.min()))
    x = d.time - t0
    gaps = np.flatnonzero(np.diff(d.time) > 10 * np.median(np.diff(d.time))) + 1
    with style.style():
        fig = style.new_figure(style.PAGE_WIDTH_IN, 3.6)
        top, bottom = fig.subplots(2, 1, sharex=True)
        for ax, y, curve, label in (
            (top, d.flux, model + gp, "GP prediction + transit model" if gp.any() else "trend x transit model"),
            (bottom, (d.flux - gp) / base, model / base, "transit model"),
        ):
            ax.plot(
                x,
                (y - 1) / PPM,
                ".",
                color=style.RAW_COLOUR,
                ms=1.0,
                alpha=0.4,
                mec="none",
                rasterized=True,
                label="each exposure",
            )
            for part_x, part_y in zip(np.split(x, gaps), np.split((curve - 1) / PPM, gaps)):
                ax.plot(part_x, part_y, color=style.MODEL_COLOUR, lw=0.8, label=label)
                label = None
            ax.legend(loc="lower left", fontsize="small", markerscale=4)
        top.set_ylabel("Flux $-$ 1 [ppm]")
        bottom.set_ylabel("Detrended [ppm]")
        bottom.set_xlabel(f"Time [BJD$_\\mathrm{{TDB}}$ $-$ {t0:.0f}]")
        removed = "variability (GP)" if gp.any() else "trend in observing conditions (regressors)"
        if not gp.any():
            top.plot(x, (base - 1) / PPM, color=style.DATA_COLOUR, lw=0.8, ls="--", label="removed trend")
            top.legend(loc="lower left", fontsize="small", markerscale=4)
        fig.suptitle(f"{d.name}: {removed} and transits")
    return fig
