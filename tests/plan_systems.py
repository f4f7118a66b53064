"""Small invented systems for the planner's tests: one planet seen in RVs, configs written to a folder."""

import numpy as np
from synthetic import BTJD, write_config, write_photometry, write_velocities

from planetfit.fitting.keplerian import periastron_bjd, radial_velocity_ms

PERIOD_DAYS, TRANSIT_BJD = 4.3137, 2460000.35
STAR = {"mass_msun": {"normal": [0.80, 0.04]}, "radius_rsun": {"normal": [0.78, 0.02]}, "teff_k": 5100}


def keplerian_ms(times, k_ms, period_days=PERIOD_DAYS, transit_bjd=TRANSIT_BJD):
    """The circular orbit's RV (m/s) at ``times``."""
    w = np.pi / 2
    tp = periastron_bjd(transit_bjd, period_days, 0.0, w)
    return radial_velocity_ms(np.asarray(times, dtype=float), period_days, tp, 0.0, w, k_ms)


def planet_block(period, transit, k_prior, transits=False):
    """Planet b: a circular orbit, K with ``k_prior``; ephemeris priors (or fixed numbers) given."""
    block = {"period_days": period, "transit_bjd": transit, "rv_amplitude_ms": k_prior, "orbit": "circular"}
    if transits:
        block.update(impact={"truncnormal": [0.3, 0.02, 0.0, 1.0]})
    else:
        block = {"transits": False, **block}
    return block


def write_rv_system(folder, datasets, planet, max_steps=600):
    """Config of planet ``planet`` (a :func:`planet_block`) with RV ``datasets`` [(name, times, rv, error)].

    Offsets are free (uniform +-30 m/s), jitters fixed at zero.
    """
    velocities = [
        write_velocities(folder, name, f"{name}.txt", t, rv, err, offset_ms={"uniform": [-30, 30]}, jitter_ms=0.0)
        for name, t, rv, err in datasets
    ]
    config = {
        "system": "Plan-1",
        "seed": 5,
        "output": "run",
        "star": STAR,
        "planets": {"b": planet},
        "velocities": velocities,
        "sampling": {"walkers": 24, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 1},
    }
    return write_config(folder, config)


def write_transiting_system(folder, k_prior=0.0, radius_ratio=0.025, velocities=()):
    """A transiting planet with a flat light curve of 60 points; without ``velocities`` K is fixed at zero.

    ``velocities``: (name, times, rv, error) datasets as for :func:`write_rv_system`.
    """
    t = BTJD + 3000 + np.linspace(0, 2, 60)
    phot = write_photometry(folder, t, np.ones(t.size), 1e-3, 2.0, supersample=1)
    planet = planet_block(PERIOD_DAYS, TRANSIT_BJD, k_prior, transits=True)
    planet["radius_ratio"] = {"normal": [radius_ratio, 0.0005]}
    config = {"system": "Plan-2", "seed": 5, "output": "run", "star": STAR, "planets": {"b": planet}}
    config["photometry"] = [phot]
    config["velocities"] = [
        write_velocities(folder, name, f"{name}.txt", t, rv, err, offset_ms={"uniform": [-30, 30]}, jitter_ms=0.0)
        for name, t, rv, err in velocities
    ]
    if not velocities:
        del config["velocities"]
    return write_config(folder, config)
