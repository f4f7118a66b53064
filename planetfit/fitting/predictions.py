"""What the fitted model predicts, for figures: model light curves and RVs, and the noise models' predictions.

Every function takes a :class:`~planetfit.fitting.log_probability.LogProbability`,
one walker's parameter values (floats) and its orbits
(:meth:`~planetfit.fitting.log_probability.LogProbability.orbits`).
"""

import numpy as np


def photometry_model(log_prob, values, orbits, index, planets=None, parts=None):
    """Model flux of photometric dataset ``index``, with the terms of ``planets`` and ``parts`` (default: all;
    parts ``"transit"``, ``"planet light"``)."""
    return log_prob.model.photometry[index].flux(values, orbits, planets, parts)


def baseline_flux(log_prob, values, index):
    """The baseline flux of photometric dataset ``index`` at its times."""
    return np.broadcast_to(
        log_prob.model.photometry[index].baseline.flux(values), log_prob.photometry[index].time.shape
    )


def photometry_noise_prediction(log_prob, values, orbits, index):
    """The noise model's prediction of dataset ``index``'s residuals (the GP's variability; zeros if white)."""
    m = log_prob.model.photometry[index]
    return m.noise.predict(m.data.flux - m.flux(values, orbits), values)


def has_regressor_trend(log_prob, index):
    """Whether dataset ``index``'s baseline follows regressors (observing conditions) and time."""
    return hasattr(log_prob.model.photometry[index].baseline, "trend")


def has_variability_model(log_prob, index):
    """Whether dataset ``index``'s noise model predicts correlated variability (a GP)."""
    return log_prob.model.photometry[index].noise.correlated


def keplerians_ms(log_prob, values, orbits, times):
    """Sum of every planet's Keplerian RV (m/s) at ``times``."""
    return log_prob.model.velocity.keplerians_ms(values, orbits, times)


def trend_ms(log_prob, values, times):
    """The RV trend (m/s) at ``times`` (zeros without one)."""
    return log_prob.model.velocity.trend_ms(values, times)


def velocity_model(log_prob, values, orbits, index, times=None):
    """Model RV (m/s, without the offset) of spectrograph ``index``.

    At the spectrograph's times: Keplerians + trend + activity-indicator
    terms. At other ``times``: Keplerians + trend.
    """
    rv = log_prob.model.velocity
    t = rv.data[index].time if times is None else times
    model = rv.keplerians_ms(values, orbits, t) + rv.trend_ms(values, t)
    if times is None:
        model += rv.spectrographs[index].indicator_ms(values)
    return model


def velocity_noise_prediction(log_prob, values, orbits):
    """Per spectrograph, the noise model's prediction of its residuals (the activity GP; zeros if white)."""
    rv = log_prob.model.velocity
    resid = rv.residuals(values, orbits)
    out = np.zeros(resid.size)
    out[rv.order] = rv.noise.predict(resid[rv.order], values)
    return np.split(out, np.cumsum([d.time.size for d in rv.data])[:-1])


def has_activity_model(log_prob):
    """Whether the RVs have an activity process (a GP shared by the spectrographs)."""
    return log_prob.model.velocity is not None and log_prob.model.velocity.noise.correlated


def activity_prediction(log_prob, values, orbits, times):
    """The RV activity process at ``times`` given the data: (mean, sd) per spectrograph (m/s).

    The shared process has unit amplitude; each spectrograph sees it times
    its own ``activity_amplitude_ms``.
    """
    rv = log_prob.model.velocity
    mean, sd = rv.noise.predict(rv.residuals(values, orbits)[rv.order], values, times=times, return_sd=True)
    return [
        (values[s.activity_amplitude.name] * mean, values[s.activity_amplitude.name] * sd) for s in rv.spectrographs
    ]
