"""What the fitted model predicts, for figures: model light curves and RVs, and the noise models' predictions.

Every function takes a :class:`~planetfit.fitting.posterior.JointPosterior`,
one walker's parameter values (floats) and its orbits
(:meth:`~planetfit.fitting.posterior.JointPosterior.orbits`).
"""

import numpy as np


def photometry_model(posterior, values, orbits, index, planets=None, parts=None):
    """Model flux of photometric dataset ``index``, with the terms of ``planets`` and ``parts`` (default: all;
    parts ``"transit"``, ``"planet light"``)."""
    return posterior.model.photometry[index].flux(values, orbits, planets, parts)


def baseline_flux(posterior, values, index):
    """The baseline flux of photometric dataset ``index`` at its times."""
    return np.broadcast_to(
        posterior.model.photometry[index].baseline.flux(values), posterior.photometry[index].time.shape
    )


def photometry_noise_prediction(posterior, values, orbits, index):
    """The noise model's prediction of dataset ``index``'s residuals (the GP's variability; zeros if white)."""
    m = posterior.model.photometry[index]
    return m.noise.predict(m.data.flux - m.flux(values, orbits), values)


def has_regressor_trend(posterior, index):
    """Whether dataset ``index``'s baseline follows regressors (observing conditions) and time."""
    return hasattr(posterior.model.photometry[index].baseline, "trend")


def has_variability_model(posterior, index):
    """Whether dataset ``index``'s noise model predicts correlated variability (a GP)."""
    return posterior.model.photometry[index].noise.correlated


def keplerians_ms(posterior, values, orbits, times):
    """Sum of every planet's Keplerian RV (m/s) at ``times``."""
    return posterior.model.velocity.keplerians_ms(values, orbits, times)


def trend_ms(posterior, values, times):
    """The RV trend (m/s) at ``times`` (zeros without one)."""
    return posterior.model.velocity.trend_ms(values, times)


def velocity_model(posterior, values, orbits, index, times=None):
    """Model RV (m/s, without the offset) of spectrograph ``index``.

    At the spectrograph's times: Keplerians + trend + activity-indicator
    terms. At other ``times``: Keplerians + trend.
    """
    rv = posterior.model.velocity
    t = rv.data[index].time if times is None else times
    model = rv.keplerians_ms(values, orbits, t) + rv.trend_ms(values, t)
    if times is None:
        model += rv.spectrographs[index].indicator_ms(values)
    return model


def velocity_noise_prediction(posterior, values, orbits):
    """Per spectrograph, the noise model's prediction of its residuals (the activity GP; zeros if white)."""
    rv = posterior.model.velocity
    resid = rv.residuals(values, orbits)
    out = np.zeros(resid.size)
    out[rv.order] = rv.noise.predict(resid[rv.order], values)
    return np.split(out, np.cumsum([d.time.size for d in rv.data])[:-1])


def has_activity_model(posterior):
    """Whether the RVs have an activity process (a GP shared by the spectrographs)."""
    return posterior.model.velocity is not None and posterior.model.velocity.noise.correlated


def activity_prediction(posterior, values, orbits, times):
    """The RV activity process at ``times`` given the data: (mean, sd) per spectrograph (m/s).

    The shared process has unit amplitude; each spectrograph sees it times
    its own ``activity_amplitude_ms``.
    """
    rv = posterior.model.velocity
    mean, sd = rv.noise.predict(rv.residuals(values, orbits)[rv.order], values, times=times, return_sd=True)
    return [
        (values[s.activity_amplitude.name] * mean, values[s.activity_amplitude.name] * sd) for s in rv.spectrographs
    ]
