"""Warnings about a finished posterior: parameters the data do not constrain, noise the model cannot explain.

Each check returns plain sentences for ``summary.json["sampling"]["warnings"]``.
"""

import math

import numpy as np

#: A posterior at least this wide (standard deviation, sampler coordinates) relative to its flat prior is unconstrained.
UNCONSTRAINED_WIDTH_RATIO = 0.8
#: A fitted jitter this many times the median reported error says the model does not describe the data.
JITTER_ALARM_RATIO = 10.0
#: Flat priors (uniform in the sampler coordinate), for which a posterior as wide as the prior means "no information".
_FLAT_PRIORS = ("uniform", "loguniform")
#: Standard deviation of a uniform distribution over unit width, 1 / sqrt(12).
_UNIFORM_SD = 1.0 / math.sqrt(12.0)


def unconstrained_warnings(layout, samples):
    """A sentence per free parameter with a flat prior whose posterior is nearly as wide as the prior.

    Parameters
    ----------
    layout : ParameterLayout
    samples : ndarray, shape (n, ndim)
        Posterior samples in sampler coordinates.
    """
    out = []
    for j, name in enumerate(layout.free):
        prior = layout.priors[name]
        spec = prior.as_config()
        if not isinstance(spec, dict) or next(iter(spec)) not in _FLAT_PRIORS:
            continue
        lo, hi = (prior.to_sampler(b) for b in prior.bounds)
        ratio = float(np.std(samples[:, j])) / ((hi - lo) * _UNIFORM_SD)
        if ratio >= UNCONSTRAINED_WIDTH_RATIO:
            out.append(
                f"{name} is not constrained by the data: its posterior is {ratio:.0%} as wide as its prior "
                f"{prior.describe()}, so its value and interval restate the prior, not a measurement."
            )
    return out


def jitter_warnings(layout, samples, datasets):
    """A sentence per dataset whose fitted jitter is far above its reported errors.

    Parameters
    ----------
    layout : ParameterLayout
    samples : ndarray, shape (n, ndim)
    datasets : list of (name, median error in the jitter's unit, jitter parameter name, unit text)
    """
    values = layout.values(samples)
    out = []
    for name, error, jitter, unit in datasets:
        if jitter not in layout.free:
            continue
        median = float(np.median(values[jitter]))
        if median > JITTER_ALARM_RATIO * error:
            out.append(
                f"dataset '{name}': the fitted jitter ({median:.3g} {unit}) is {median / error:.0f} times the "
                f"median reported error ({error:.3g} {unit}): the model does not describe these data (several "
                "instruments fitted as one, a missing signal, or wrong units?)."
            )
    return out
