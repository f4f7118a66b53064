"""Every figure of a run, one module per figure family.

:func:`figure_builders` lists them as (record, builder) pairs: the record
(:class:`planetfit.report.captions.Drawn`) says what the figure shows and
names its file; the builder returns a :class:`matplotlib.figure.Figure`
that the caller saves as PNG and PDF.
"""

from functools import partial

import numpy as np

from planetfit.fitting import predictions
from planetfit.fitting.sampling.chainfile import read_chain
from planetfit.report.captions import Drawn
from planetfit.report.figures.common import PosteriorView
from planetfit.report.figures.convergence import convergence_figure, physical_chain
from planetfit.report.figures.corners import physical_corner, sampled_corner
from planetfit.report.figures.habitable_zone import habitable_zone_figure
from planetfit.report.figures.mass_radius import mass_radius_figure
from planetfit.report.figures.phase_curve import phase_curve_figure
from planetfit.report.figures.transit import light_curve_figure, transit_figure
from planetfit.report.figures.transit_times import o_minus_c_figure
from planetfit.report.figures.velocity import rv_phase_figure, rv_time_figure


def _convergence(run_dir, log_prob, summary, target_factor):
    history, raw = read_chain(run_dir.samples)
    chain = physical_chain(raw, log_prob.layout)
    return convergence_figure(history, chain, log_prob.layout.free, summary.sampling.discard, target_factor)


def _light_builders(log_prob, view, summary):
    """The planet-light figure of every dataset whose band carries a planet's light."""
    out = []
    for (band, name), light in log_prob.model.lights.items():
        entry = summary.planets[name]
        for i, d in enumerate(log_prob.photometry):
            if d.band == band:
                build = partial(
                    phase_curve_figure,
                    log_prob,
                    view,
                    light,
                    i,
                    entry.stat("eclipse_bjd").median,
                    entry.stat("transit_duration_hr").median,
                )
                out.append((Drawn("planet_light", name, d.name), build))
    return out


def figure_builders(run_dir, checked, log_prob, samples, derived, summary):
    """``(Drawn record, builder)`` pairs for every figure of a run, the longest to draw first.

    Parameters are those of :func:`planetfit.report.outputs.write_all`.
    """
    view = PosteriorView(log_prob, samples, seed=checked.config.seed)
    planets = log_prob.planets
    transiting = [p for p in planets if p.transits]
    out = [(Drawn("corner_sampled"), partial(sampled_corner, derived))]  # the two longest to draw first
    if not summary.sampling.nested:  # a chain's figure; nested sampling has no walkers
        converge = partial(_convergence, run_dir, log_prob, summary, checked.config.sampling.autocorr_factor)
        out.append((Drawn("convergence"), converge))
    for p in transiting:
        duration_hr = summary.planets[p.name].stat("transit_duration_hr").median
        for i, d in enumerate(log_prob.photometry):
            out.append((Drawn("transit", p.name, d.name), partial(transit_figure, log_prob, view, p, i, duration_hr)))
    out += _light_builders(log_prob, view, summary)
    for i, c in enumerate(checked.config.photometry):
        if predictions.has_variability_model(log_prob, i) or predictions.has_regressor_trend(log_prob, i):
            out.append((Drawn("light_curve", dataset=c.name), partial(light_curve_figure, log_prob, view, i)))
    if log_prob.velocities:
        out += [(Drawn("rv_phase", p.name), partial(rv_phase_figure, log_prob, view, p)) for p in planets]
        out.append((Drawn("rv_time"), partial(rv_time_figure, log_prob, view)))
    out += [(Drawn("corner", p.name), partial(physical_corner, derived, p)) for p in planets]
    out += [(Drawn("o_minus_c", n), partial(o_minus_c_figure, t)) for n, t in derived["transit_times"].items()]
    # Planets with a measured mass (a transit-only fit has none) go on the mass-radius diagram.
    weighed = [
        p
        for p in transiting
        if np.any(
            np.isfinite(derived["planets"][p.name]["mass_earth"]) & (derived["planets"][p.name]["mass_earth"] > 0)
        )
    ]
    if weighed:
        out.append((Drawn("mass_radius"), partial(mass_radius_figure, derived, weighed)))
    out.append((Drawn("habitable_zone"), partial(habitable_zone_figure, derived, planets)))
    return out
