"""RV injection-recovery: rotation-modulated activity, a long-term trend, and activity-indicator decorrelation."""

import json

from variability import RV_PLANET, TREND, write_active_star, write_trend_star

from planetfit import pipeline

SEED = 5


def fitted(folder, config):
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    return json.loads((run_dir / "summary.json").read_text())


def sigmas_off(stat, truth):
    return abs(stat["median"] - truth) / (0.5 * (stat["upper"] - stat["lower"]))


def test_activity_gp_recovers_semi_amplitude_that_white_noise_blurs_and_biases(tmp_path):
    truth = RV_PLANET["rv_amplitude_ms"]
    gp = fitted(tmp_path, write_active_star(tmp_path / "gp", SEED, activity_gp=True))
    white = fitted(tmp_path, write_active_star(tmp_path / "white", SEED, activity_gp=False))
    k_gp, k_white = gp["planets"]["b"]["rv_amplitude_ms"], white["planets"]["b"]["rv_amplitude_ms"]
    # common practice, no published source: a calibrated posterior holds the truth within 2 sigma
    assert sigmas_off(k_gp, truth) < 2, k_gp
    # Activity at the rotation period leaks into K when only a white jitter describes it, and the inflated
    # jitter widens K's posterior. (Seeds 5-7: white-noise K 0.33-1.22 m/s off the truth against the GP's
    # 0.01-0.07 m/s, with intervals 3.2-3.8 times wider; 0.5-2.0 of its own sigmas off.)
    assert abs(k_white["median"] - truth) > 3 * abs(k_gp["median"] - truth)
    assert k_white["upper"] - k_white["lower"] > 2.5 * (k_gp["upper"] - k_gp["lower"])
    # The shared GP finds the injected rotation period (13 d) and the ratio of the spectrographs' amplitudes (0.6).
    period = gp["fitted_parameters"]["rv_activity.rotation_period_days"]
    assert sigmas_off(period, 13.0) < 3, period
    ratio = (
        gp["fitted_parameters"]["spec-b.activity_amplitude_ms"]["median"]
        / gp["fitted_parameters"]["spec-a.activity_amplitude_ms"]["median"]
    )
    assert 0.4 < ratio < 0.8, ratio


def test_quadratic_trend_and_indicator_coefficient_are_recovered(tmp_path):
    summary = fitted(tmp_path, write_trend_star(tmp_path, 3))
    got = summary["fitted_parameters"]
    # common practice, no published source: a calibrated posterior holds the truth within 3 sigma
    assert sigmas_off(got["rv_trend.slope_ms_per_day"], TREND["slope_ms_per_day"]) < 3
    assert sigmas_off(got["rv_trend.curvature_ms_per_day2"], TREND["curvature_ms_per_day2"]) < 3
    assert sigmas_off(got["spec fwhm_kms.activity_coefficient"], TREND["indicator_coefficient"]) < 3
    assert sigmas_off(summary["planets"]["b"]["rv_amplitude_ms"], RV_PLANET["rv_amplitude_ms"]) < 3
    # the trend is real: zero slope lies far outside the posterior
    assert sigmas_off(got["rv_trend.slope_ms_per_day"], 0.0) > 5
