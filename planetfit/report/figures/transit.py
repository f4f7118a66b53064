"""Phase-folded transit of one planet in one photometric dataset, with residuals."""

import math

import numpy as np

from planetfit.fitting.models.transit import TransitLightCurve, quadratic_coefficients
from planetfit.core.units import HOURS_PER_DAY, MINUTES_PER_DAY, PPM
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


def _model_ppm(lc, values, orbit, planet, band_name, dilution_name=None):
    """One planet's (diluted) transit (relative flux - 1, ppm) on ``lc``'s times, measured from mid-transit."""
    n = planet.name
    dilution = values[dilution_name] if dilution_name else 0.0
    u1, u2 = quadratic_coefficients(values[f"{band_name}.limb_darkening_q1"],
                                    values[f"{band_name}.limb_darkening_q2"])
    f = lc.flux(np.arange(lc.times.size), values[f"{n}.period_days"], 0.0, orbit["a_over_rstar"],
                math.acos(orbit["cos_i"]), orbit["e"], orbit["omega_rad"], values[f"{n}.radius_ratio"], u1, u2)
    return (f - 1.0) * (1 - dilution) / PPM


def detrended(posterior, values, orbits, index):
    """Dataset ``index``'s flux with the noise model's prediction (GP variability) removed, and its baseline."""
    d = posterior.photometry[index]
    flux = d.flux - posterior.photometry_noise_prediction(values, orbits, index)
    return flux, np.broadcast_to(posterior.baselines[index].flux(values), d.time.shape)


def transit_figure(posterior, view, planet, index, duration_hr):
    """Figure of ``planet``'s transits in photometric dataset ``index``.

    Data are folded on the median ephemeris with the other planets' transits,
    the GP prediction of the variability (for ``baseline: gp``) and the
    baseline divided out; raw points faint, binned points with
    standard errors; the median-parameter model and the 68% band of
    posterior draws, both integrated over the exposure like the fit.

    Parameters
    ----------
    posterior : JointPosterior
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
    d = posterior.photometry[index]
    v, orbits = view.median, view.median_orbits
    flux, level = detrended(posterior, v, orbits, index)
    full = posterior.photometry_model(v, orbits, index)
    own = posterior.photometry_model(v, orbits, index, planets=[planet.name])
    x_hr = phase_days(d.time, v[f"{planet.name}.period_days"], v[f"{planet.name}.transit_bjd"]) * HOURS_PER_DAY
    half = max(WINDOW_DURATIONS * duration_hr, MIN_HALF_WINDOW_HR)
    sel = np.abs(x_hr) <= half
    x_hr = x_hr[sel]
    flux_ppm = ((flux - (full - own))[sel] / level[sel] - 1.0) / PPM
    resid_ppm = (flux - full)[sel] / level[sel] / PPM

    grid_hr = np.linspace(-half, half, GRID_POINTS)
    lc = TransitLightCurve(grid_hr / HOURS_PER_DAY, d.exposure_days, d.supersample)
    dilution = posterior.dilution_names[index]
    median_model = _model_ppm(lc, v, orbits[planet.name], planet, d.band, dilution)
    lo, hi = band([_model_ppm(lc, val, orb[planet.name], planet, d.band, dilution) for val, orb in view.draws])
    width_hr = max(duration_hr / BINS_PER_DURATION, d.exposure_days * HOURS_PER_DAY)

    with style.style():
        fig = style.new_figure(style.COLUMN_WIDTH_IN, 3.3)
        top, bottom = fig.subplots(2, 1, sharex=True, height_ratios=(3, 1.2))
        # Sparse data may be seen more clearly than thousands of points.
        # Dense data: raw points may run off the axes so the binned points and the transit fill them.
        dense = x_hr.size > DENSE_POINTS
        raw_ms, raw_alpha = (1.5, 0.3) if dense else (2.5, 0.6)
        model_span = np.r_[lo, hi, median_model]
        for ax, y, model in ((top, flux_ppm, model_span), (bottom, resid_ppm, np.zeros(1))):
            ax.plot(x_hr, y, ".", color=style.RAW_COLOUR, ms=raw_ms, alpha=raw_alpha, mec="none", rasterized=True)
            bx, by, be = bin_points(x_hr, y, width_hr)
            ax.errorbar(bx, by, be, fmt="o", color=style.DATA_COLOUR, ms=2.5, elinewidth=0.7,
                        label=f"binned ({width_hr * 60:.0f} min)")
            _limits(ax, np.r_[by - be, by + be] if dense and by.size else y, model)
        top.plot([], [], ".", color=style.RAW_COLOUR, ms=4, label="each exposure")
        top.fill_between(grid_hr, lo, hi, color=style.MODEL_COLOUR, alpha=style.BAND_ALPHA, lw=0,
                         label="68% of draws")
        top.plot(grid_hr, median_model, color=style.MODEL_COLOUR, label="median model")
        bottom.axhline(0.0, color=style.MODEL_COLOUR)
        top.set_ylabel("Relative flux $-$ 1 [ppm]")
        bottom.set_ylabel("Residual [ppm]")
        bottom.set_xlabel("Time from mid-transit [h]")
        bottom.set_xlim(-half, half)
        exposure = d.exposure_days * MINUTES_PER_DAY
        fig.legend(*top.get_legend_handles_labels(), loc="outside upper center", ncols=2,
                   title=f"Planet {planet.name}, {d.name} ({exposure:.0f}-min exposures)\n"
                         f"data: {_removed(posterior, index)} removed")
    return fig


def _removed(posterior, index):
    """What the folded points have had subtracted or divided out."""
    parts = ["baseline"]
    if posterior.config.photometry[index].baseline == "gp":
        parts.append("variability (GP mean)")
    if len(posterior.transiting) > 1:
        parts.append("other planets")
    return ", ".join(parts[:-1]) + (" and " if len(parts) > 1 else "") + parts[-1]


def _limits(ax, data, model):
    """y-limits from the central 99% of ``data`` and the model, so a few outliers do not flatten the plot."""
    lo, hi = np.percentile(data, [0.5, 99.5]) if data.size else (0.0, 0.0)
    lo, hi = min(lo, model.min()), max(hi, model.max())
    pad = 0.15 * (hi - lo) if hi > lo else 1.0
    ax.set_ylim(lo - pad, hi + pad)


def light_curve_figure(posterior, view, index):
    """Dataset ``index`` against time: data, the GP prediction plus the model, and the detrended light curve.

    Returns
    -------
    matplotlib.figure.Figure
        Two axes: the data with the GP prediction added to the transit
        model, and the data with the GP prediction removed.
    """
    d = posterior.photometry[index]
    v, orbits = view.median, view.median_orbits
    model = posterior.photometry_model(v, orbits, index)
    gp = posterior.photometry_noise_prediction(v, orbits, index)
    base = posterior.baselines[index].flux(v)
    t0 = float(np.floor(d.time.min()))
    x = d.time - t0
    gaps = np.flatnonzero(np.diff(d.time) > 10 * np.median(np.diff(d.time))) + 1
    with style.style():
        fig = style.new_figure(style.PAGE_WIDTH_IN, 3.6)
        top, bottom = fig.subplots(2, 1, sharex=True)
        for ax, y, curve, label in ((top, d.flux, model + gp, "GP prediction + transit model"),
                                    (bottom, (d.flux - gp) / base, model / base, "transit model")):
            ax.plot(x, (y - 1) / PPM, ".", color=style.RAW_COLOUR, ms=1.0, alpha=0.4, mec="none", rasterized=True,
                    label="each exposure")
            for part_x, part_y in zip(np.split(x, gaps), np.split((curve - 1) / PPM, gaps)):
                ax.plot(part_x, part_y, color=style.MODEL_COLOUR, lw=0.8, label=label)
                label = None
            ax.legend(loc="lower left", fontsize="small", markerscale=4)
        top.set_ylabel("Flux $-$ 1 [ppm]")
        bottom.set_ylabel("Detrended [ppm]")
        bottom.set_xlabel(f"Time [BJD$_\\mathrm{{TDB}}$ $-$ {t0:.0f}]")
        fig.suptitle(f"{d.name}: variability (GP) and transits")
    return fig
