"""RV-only systems with a known ephemeris, fitted by nested sampling in seconds (evidence and model comparison)."""

import numpy as np
import pytest
from synthetic import planet_truth, radial_velocity, write_config, write_velocities

T_START, SPAN_DAYS, N_RV, SIGMA_MS = 2460000.0, 40.0, 30, 2.0
PERIOD, TC, K_MS, OFFSET_MS = 5.0, 2460001.3, 10.0, 4.0
STAR = {"mass_msun": 0.9, "radius_rsun": 0.85, "teff_k": 5300}


def rv_data(seed, planets, n=N_RV):
    """Times and RVs (offset and Gaussian errors of SIGMA_MS added) of ``planets`` over SPAN_DAYS."""
    rng = np.random.default_rng(seed)
    t = np.sort(rng.uniform(T_START, T_START + SPAN_DAYS, n))
    return t, radial_velocity(t, planets) + OFFSET_MS + rng.normal(0, SIGMA_MS, n)


def write_rv_model(folder, t, rv, planets, live_points=150, jitter_ms=0.0, **sampling):
    """An RV-only config of ``planets`` (config blocks) fitted by nested sampling; returns its path."""
    folder.mkdir(parents=True, exist_ok=True)
    entry = write_velocities(
        folder, "spec", "rv.txt", t, rv, SIGMA_MS, offset_ms={"uniform": [-50, 50]}, jitter_ms=jitter_ms
    )
    settings = {"method": "nested", "live_points": live_points, "min_effective_samples": 100, **sampling}
    return write_config(
        folder,
        {
            "system": "Model-1",
            "seed": 3,
            "output": "run",
            "star": STAR,
            "planets": planets,
            "velocities": [entry],
            "sampling": settings,
        },
    )


def circular(**priors):
    """Planet b with the known ephemeris (period and conjunction fixed, as from transits) and a free K."""
    return {
        "transits": False,
        "period_days": PERIOD,
        "transit_bjd": TC,
        "rv_amplitude_ms": {"uniform": [0, 40]},
    } | priors


def eccentric():
    return circular(orbit="eccentric")


def second_planet():
    """A second RV planet anywhere between 8 and 30 d, with any phase and K up to 20 m/s."""
    return {
        "transits": False,
        "period_days": {"uniform": [8, 30]},
        "transit_bjd": {"uniform": [T_START, T_START + 30]},
        "rv_amplitude_ms": {"uniform": [0, 20]},
    }


def interrupted_nested_run(folder, monkeypatch, live_points, after_calls):
    """Start a nested fit of planet b (RV seed 4) with a checkpoint at every iteration, and stop it by a
    KeyboardInterrupt after ``after_calls`` likelihood calls. Returns (config path, times, RVs)."""
    from planetfit import pipeline
    from planetfit.fitting.log_probability import LogProbability
    from planetfit.fitting.sampling import nested

    t, rv = rv_data(4, {"b": planet_truth(PERIOD, TC, K_MS)})
    config = write_rv_model(folder, t, rv, {"b": circular()}, live_points=live_points)
    monkeypatch.setattr(nested, "CHECKPOINT_SECONDS", 0.0)
    calls, original = [0], LogProbability.log_likelihood_many

    def interrupted(self, thetas):
        calls[0] += 1
        if calls[0] > after_calls:
            raise KeyboardInterrupt
        return original(self, thetas)

    monkeypatch.setattr(LogProbability, "log_likelihood_many", interrupted)
    with pytest.raises(KeyboardInterrupt):
        pipeline.run(config, quiet=True, figures=False)
    monkeypatch.setattr(LogProbability, "log_likelihood_many", original)
    return config, t, rv
