"""Posterior summaries shared by every stage that reports numbers."""

import numpy as np

# One-sigma percentiles of a normal distribution, in percent.
LOWER_PERCENTILE = 15.865525393145708
UPPER_PERCENTILE = 84.13447460685429


def stat(samples):
    """Summarise samples as ``{"median", "lower", "upper"}``.

    Parameters
    ----------
    samples : array_like
        One-dimensional samples; non-finite values are ignored.

    Returns
    -------
    dict or None
        Median and the 15.87th / 84.13th percentile *values* (not
        differences); ``None`` when no finite sample exists.
    """
    x = np.asarray(samples, dtype=float).ravel()
    x = x[np.isfinite(x)]
    if x.size == 0:
        return None
    lo, med, hi = np.percentile(x, [LOWER_PERCENTILE, 50.0, UPPER_PERCENTILE])
    return {"median": float(med), "lower": float(lo), "upper": float(hi)}
