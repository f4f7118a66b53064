"""A ground-based transit night: the baseline follows airmass and seeing (``baseline: {regressors: [...]}``).

For test time the posterior is summarised by its maximum and the Laplace approximation around it, on the
expected (noise-free) light curve with the stated errors: a bias shows as an offset from the truth in units of
the posterior width that a noisy light curve would have.
"""

import numpy as np
import pytest
from synthetic import light_curve, planet_truth, star_priors, write_config

from planetfit import pipeline
from planetfit.cli import main
from planetfit.fitting.sampling.laplace import laplace_covariance
from planetfit.fitting.sampling.optimiser import find_map

STAR = {"mass_msun": 0.9, "radius_rsun": 0.85}
PLANET = planet_truth(2.7, 2460200.70, 0.0, radius_ratio=0.11, impact=0.3)
ERROR = 1.2e-3


def write_night(folder):
    """One night at 1.5-min cadence: the transit, an airmass trend and a seeing bump around mid-transit."""
    t = np.arange(2460200.55, 2460200.85, 1.5 / 1440)
    airmass = 1.05 + 1.2 * ((t - t[0]) / np.ptp(t)) ** 2  # a setting target
    fwhm = 1.3 + 0.9 * np.exp(-0.5 * ((t - PLANET["transit_bjd"] - 0.01) / 0.03) ** 2)  # arcsec, worse mid-night
    # Extinction of 0.12 mag per airmass (first order: 11% of the flux) and aperture losses of 1% per arcsec of
    # seeing (common practice, no published source: typical sizes of the two effects for a small telescope).
    trend = (1 - 0.4 * np.log(10) * 0.12 * (airmass - airmass.mean())) * (1 - 0.01 * (fwhm - fwhm.mean()))
    flux = light_curve(t, {"b": PLANET}, 1.5, star=STAR) * trend
    columns = np.column_stack([t, flux, np.full(t.size, ERROR), airmass, fwhm])
    np.savetxt(
        folder / "night.csv", columns, delimiter=",", header="bjd,flux,err,airmass,fwhm", comments="", fmt="%.8f"
    )


def config(folder, baseline, **extra):
    return write_config(
        folder,
        {
            "system": "Ground-1",
            "output": "run",
            "star": star_priors(STAR, 5300),
            "planets": {
                "b": {
                    "period_days": 2.7,
                    "transit_bjd": {"uniform": [PLANET["transit_bjd"] - 0.03, PLANET["transit_bjd"] + 0.03]},
                    "radius_ratio": {"uniform": [0.02, 0.2]},
                    "impact": {"uniform": [0.0, 1.0]},
                }
            },
            "photometry": [
                {
                    "name": "ground",
                    "file": "night.csv",
                    "columns": {"time": "bjd", "flux": "flux", "error": "err"},
                    "exposure_min": 1.5,
                    # around the injected u1 = 0.45, u2 = 0.2 (tests/synthetic.py) as Kipping's q1, q2
                    "limb_darkening_q1": {"truncnormal": [0.4225, 0.05, 0, 1]},
                    "limb_darkening_q2": {"truncnormal": [0.346, 0.05, 0, 1]},
                    "normalise": False,
                    "clip_sigma": 0,
                    "baseline": baseline,
                    **extra,
                }
            ],
        },
    )


def _radius_ratio(path):
    """MAP radius ratio and its Laplace standard deviation."""
    log_prob = pipeline.check(path).log_probability
    layout = log_prob.layout
    best = find_map(log_prob, layout, np.random.default_rng(2), starts=3)[0][0]
    cov = laplace_covariance(log_prob.log_prob_many, best, layout.geometry()[1])
    i = layout.free.index("b.radius_ratio")
    return best[i], float(np.sqrt(cov[i, i]))


@pytest.mark.slow
def test_regressors_remove_the_airmass_and_seeing_trends(tmp_path):
    write_night(tmp_path)
    with_regressors = _radius_ratio(config(tmp_path, {"regressors": ["airmass", "fwhm"]}))
    # The best baseline without regressors: a line in time, steep enough for the night's trend.
    without = _radius_ratio(config(tmp_path, "linear", slope_per_day={"uniform": [-2, 2]}))
    print(
        f"radius ratio {with_regressors[0]:.4f} +- {with_regressors[1]:.4f} with regressors, "
        f"{without[0]:.4f} +- {without[1]:.4f} with a linear baseline (truth {PLANET['radius_ratio']})"
    )
    # common practice, no published source: an unbiased fit lands within 1 sigma of the truth on expected data
    assert abs(with_regressors[0] - PLANET["radius_ratio"]) < with_regressors[1]
    assert abs(without[0] - PLANET["radius_ratio"]) > 3 * without[1]


def test_missing_regressor_column_is_named(tmp_path, capsys):
    write_night(tmp_path)
    path = config(tmp_path, {"regressors": ["airmass", "seeing"]})
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "night.csv" in err and "photometry[0].baseline.regressors" in err and "'seeing'" in err
