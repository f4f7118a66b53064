"""Evaluation cost of the hot-giant example's posterior (transit, eclipse, phase curve, RVs) over the batman floor.

Run ``python benchmarks/planet_light_speed.py`` (or ``python benchmarks/speed.py --sections hot-giant``).
The floor is batman's compiled kernels alone on the points planetfit gives them for the same parameter
vectors: ``_rsky`` + ``_quadratic_ld`` in the transit windows and ``_rsky`` + ``_eclipse`` in the eclipse
windows, supersampled. What planetfit adds on top is the phase curve over every point, the RVs, the prior,
the orbit and the bookkeeping. Positions: 28 vectors 1e-4 prior widths around the truth, timed by
``clock.race`` (best of interleaved rounds), BLAS limited to one thread.
"""

import json
import math

import numpy as np
from batman import _eclipse, _quadratic_ld, _rsky
from clock import race  # beside this script
from threadpoolctl import threadpool_limits

from planetfit import pipeline
from planetfit.core.eclipse import eclipse_bjd, light_travel_delay_days
from planetfit.core.units import R_SUN_M
from planetfit.demo import EXAMPLES, hot_giant
from planetfit.fitting.components.transit import quadratic_coefficients

POSITIONS = 28


def truth_vector(log_prob):
    """Sampler coordinates of the example's truth (flux level 1, jitter 1 m/s)."""
    values = hot_giant.true_parameters()
    return log_prob.layout.to_sampler(np.array([values[n] for n in log_prob.layout.free]))


def kernel_calls(log_prob, theta):
    """(kernel, its arguments) of every batman call planetfit makes for ``theta``."""
    v = log_prob.layout.values(theta)
    o = log_prob.orbits(v)["b"]
    per, t0, k = v["b.period_days"], v["b.transit_bjd"], v["b.radius_ratio"]
    u1, u2 = quadratic_coefficients(v["camera.limb_darkening_q1"], v["camera.limb_darkening_q2"])
    lc = log_prob.model.photometry[0].terms[0].light_curve
    sin_i, inc = math.sqrt(1 - o.cos_i**2), math.acos(o.cos_i)
    a_m = o.a_over_rstar * v["star.radius_rsun"] * R_SUN_M
    half = lc.half_window_days(per, o.a_over_rstar, k, sin_i, o.eccentricity, o.omega_rad)
    t_ecl = float(eclipse_bjd(t0, per, o.eccentricity, o.omega_rad, a_m, sin_i))
    delay = float(light_travel_delay_days(a_m, o.eccentricity, o.omega_rad, sin_i))
    calls = []
    for centre, shift, kind in ((t0, 0.0, 1), (t_ecl, delay, 2)):
        idx = lc.window(per, centre, half)
        t = (lc.times[idx, None] - shift + lc.offsets[None, :]).ravel()
        calls.append((kind, (t, t0, per, o.a_over_rstar, inc, o.eccentricity, o.omega_rad, kind, 1), k, u1, u2))
    return calls


def floor_function(log_prob, thetas):
    """A callable running only batman's kernels for every position, and the kernel points per evaluation."""
    calls = [c for th in thetas for c in kernel_calls(log_prob, th)]

    def run():
        for kind, geometry, k, u1, u2 in calls:
            d = _rsky._rsky(*geometry)
            if kind == 1:
                _quadratic_ld._quadratic_ld(d, k, u1, u2, 1)
            else:
                _eclipse._eclipse(d, k, 1.0, 1)

    return run, sum(c[1][0].size for c in calls) / len(thetas)


def hot_giant_figures():
    """The hot-giant evaluation figures (planetfit over the batman floor), as a dict."""
    log_prob = pipeline.check(EXAMPLES["hot-giant"]).log_probability
    centre = truth_vector(log_prob)
    rng = np.random.default_rng(1)
    thetas = centre + 1e-4 * log_prob.layout.geometry()[1] * rng.standard_normal((POSITIONS, centre.size))
    floor, points = floor_function(log_prob, thetas)
    with threadpool_limits(limits=1):
        t = race({"planetfit": lambda: log_prob.log_prob_many(thetas), "floor": floor}, POSITIONS)
    planetfit_s, floor_s = t["planetfit"], t["floor"]
    return {
        "photometry_points": int(log_prob.photometry[0].time.size),
        "kernel_points_per_evaluation": round(points),
        "planetfit_microseconds_per_evaluation": round(planetfit_s * 1e6, 1),
        "floor_microseconds_per_evaluation": round(floor_s * 1e6, 1),
        "overhead_vs_floor": round(planetfit_s / floor_s, 2),
        "goal_overhead_vs_floor": 2.0,
    }


if __name__ == "__main__":
    print(json.dumps(hot_giant_figures(), indent=2))
