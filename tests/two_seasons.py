"""The two-season RV system with period aliases (tests of separated modes, MCMC and nested sampling).

An RV-only circular planet observed in two seasons 200 d apart: the cycle
count across the gap is ambiguous, so the period posterior has aliases
0.11 d apart, two of them of nearly equal weight.
"""

import numpy as np
from scipy import signal
from scipy.special import erf, logsumexp
from synthetic import planet_truth, radial_velocity, write_config, write_velocities

T0, GAP_DAYS, SEASON_DAYS, PER_SEASON = 2460000.0, 200.0, 18.0, 12
PERIOD, K_MS, SIGMA_MS, OFFSET_MS = 4.75, 5.0, 1.5, 3.0
TC = T0 + SEASON_DAYS / 2
PERIOD_PRIOR, TC_HALF_WIDTH, K_MAX = (4.6, 5.0), 2.3, 30.0  # the Tc prior is 4.6 d wide: each phase once at most


def write_two_season_system(folder, seed=11, noise=True, walkers=32, max_steps=8000, moves="differential_evolution"):
    """RVs of one circular planet in two 18-d seasons 200 d apart, and a config fitting them; returns its path.

    Jitter is fixed at zero and the star's mass and radius are fixed (they enter no RV-only circular fit),
    so the posterior is the one :func:`alias_weights` integrates.
    """
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    t = np.sort(np.concatenate([s + rng.uniform(0, SEASON_DAYS, PER_SEASON) for s in (T0, T0 + GAP_DAYS)]))
    rv = radial_velocity(t, {"b": planet_truth(PERIOD, TC, K_MS)}) + OFFSET_MS
    if noise:
        rv += rng.normal(0, SIGMA_MS, t.size)
    entry = write_velocities(folder, "spec", "rv.txt", t, rv, SIGMA_MS, offset_ms={"uniform": [-50, 50]}, jitter_ms=0.0)
    return write_config(
        folder,
        {
            "system": "Twoseason-1",
            "seed": 5,
            "output": "run",
            "star": {"mass_msun": 0.9, "radius_rsun": 0.85, "teff_k": {"normal": [5300, 80]}},
            "planets": {
                "b": {
                    "transits": False,
                    "period_days": {"uniform": list(PERIOD_PRIOR)},
                    "transit_bjd": {"uniform": [TC - TC_HALF_WIDTH, TC + TC_HALF_WIDTH]},
                    "rv_amplitude_ms": {"uniform": [0.0, K_MAX]},
                }
            },
            "velocities": [entry],
            "sampling": {
                "walkers": walkers,
                "max_steps": max_steps,
                "check_every": 100,
                "optimiser_starts": 4,
                "moves": moves,
            },
        },
    )


def alias_weights(folder):
    """Posterior weight of each period alias, by brute-force integration: [(period of its peak, weight)].

    On a grid of period (2e-4 d) x conjunction time (0.004 d; halving both steps changes no weight by more than
    0.001) over the whole prior. The model RV = -K sin(2 pi (t - Tc) / P) + c is linear in K and the offset c,
    whose integrals are analytic: c's uniform prior (100 m/s wide) holds its whole Gaussian (sd 0.3 m/s), and
    K's uniform prior [0, 30] m/s is integrated with the error function. The aliases are split at the minima
    of the period marginal between its peaks.
    """
    t, y, err = np.loadtxt(folder / "rv.txt", skiprows=1, unpack=True)
    w = 1 / err**2
    y = y - np.sum(w * y) / np.sum(w)
    periods = np.arange(PERIOD_PRIOR[0] + 1e-4, PERIOD_PRIOR[1], 2e-4)
    tcs = np.arange(TC - TC_HALF_WIDTH + 2e-3, TC + TC_HALF_WIDTH, 4e-3)
    marginal = np.empty(periods.size)
    with np.errstate(divide="ignore"):  # the erf terms cancel to 0 for phases whose best K is far below 0
        for i, p in enumerate(periods):
            s = -np.sin(2 * np.pi * (t - tcs[:, None]) / p)
            s -= (s @ w)[:, None] / np.sum(w)  # the offset marginalised
            sss, sys_ = (s**2) @ w, (s * y) @ w
            k_best, root = sys_ / sss, np.sqrt(sss / 2)
            log_k_integral = 0.5 * np.log(np.pi / (2 * sss)) + np.log(erf((K_MAX - k_best) * root) + erf(k_best * root))
            marginal[i] = logsumexp(0.5 * sys_**2 / sss + log_k_integral)
    density = np.exp(marginal - marginal.max())
    peaks = signal.find_peaks(density)[0]
    edges = [0] + [a + int(np.argmin(density[a:b])) for a, b in zip(peaks[:-1], peaks[1:])] + [periods.size]
    return [(periods[p], density[lo:hi].sum() / density.sum()) for p, lo, hi in zip(peaks, edges[:-1], edges[1:])]
