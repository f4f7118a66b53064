"""Write the demo system's light curves and radial velocities from a fixed seed.

Run ``python -m planetfit.demo.generate [OUTDIR]`` (default: this package's
``data/`` folder). The system is invented: a K dwarf, Keldra-4, with a
transiting super-Earth (b) and an outer planet seen only in RVs (c). The
light curves are made with batman's public ``TransitModel`` (independent of
planetfit's windowed evaluation) and the RVs with radvel's ``rv_drive``.
The star is spotted: its rotation modulates the photometry by several
times the transit depth and the RVs by a few m/s (:func:`quasi_periodic`,
made independently of planetfit's Gaussian-process kernels).
"""

import json
import sys
from pathlib import Path

import batman
import numpy as np
from radvel import kepler, orbit
from scipy.interpolate import CubicSpline

from planetfit.core.geometry import solve_orbit
from planetfit.core.units import M_EARTH_KG, MINUTES_PER_DAY, PPM, R_EARTH_M, R_SUN_M

SEED = 20261201
BTJD_OFFSET = 2457000.0

TRUTH = {
    "star": {"mass_msun": 0.78, "radius_rsun": 0.74, "teff_k": 4900.0},
    "b": {
        "period_days": 6.13712,
        "transit_bjd": 2460003.4172,
        "radius_earth": 1.52,
        "impact": 0.32,
        "rv_amplitude_ms": 2.10,
        "e": 0.0,
        "omega_deg": 90.0,
    },
    "c": {"period_days": 42.31, "transit_bjd": 2460021.7, "rv_amplitude_ms": 4.6, "e": 0.15, "omega_deg": 55.0},
    "limb_darkening_u": [0.50, 0.17],
    # Spots: rotation period, photometric and RV amplitudes, spot-pattern lifetime.
    "activity": {
        "rotation_days": 23.4,
        "photometric_amplitude_ppm": 2500.0,
        "rv_amplitude_ms": 2.5,
        "evolution_days": 40.0,
    },
}

# Sectors: (name, start BTJD, days, cadence min, white noise per point in ppm).
SECTORS = [
    ("camera-30min", 2400.0, 27.0, 30.0, 110.0),
    ("camera-2min", 3000.0, 27.0, 2.0, 420.0),
    ("camera-2min", 3027.4, 27.0, 2.0, 420.0),
]
# Spectrographs: (name, points, error m/s, jitter m/s, offset m/s).
# Spectrographs: (name, points, error m/s, jitter m/s, offset m/s, scale of the activity signal).
SPECTROGRAPHS = [("spectrograph-a", 50, 1.2, 1.0, -12.3, 1.0), ("spectrograph-b", 35, 1.8, 1.6, 31.0, 0.7)]
RV_SPAN_BJD = (2459930.0, 2460190.0)


def quasi_periodic(times, period_days, amplitude, rng, evolution_days):
    """Spot-like signal: the rotation frequency and its first harmonic with wandering amplitudes and phases.

    Amplitudes and phases take new random values every ``evolution_days``
    and are joined by cubic splines, the shape of light curves of spotted
    rotating stars (e.g. Aigrain et al. 2012, MNRAS 419, 3147, section 2).
    """
    knots = np.arange(times.min() - evolution_days, times.max() + 2 * evolution_days, evolution_days)
    total = np.zeros(times.size)
    for harmonic, weight in ((1, 1.0), (2, 0.5)):
        amp = CubicSpline(knots, weight * amplitude * rng.uniform(0.5, 1.0, knots.size))(times)
        phase = CubicSpline(knots, rng.normal(0, 0.6, knots.size))(times)
        total += amp * np.sin(2 * np.pi * harmonic * times / period_days + phase + rng.uniform(0, 2 * np.pi))
    return total


def sector_times(start, days, cadence_min):
    """Regular cadence with a one-day data-downlink gap in the middle of the sector."""
    t = np.arange(start, start + days, cadence_min / MINUTES_PER_DAY)
    mid = start + days / 2
    return t[(t < mid - 0.5) | (t > mid + 0.5)]


def light_curve(t_bjd, cadence_min):
    """Noise-free relative flux of planet b (batman, exposure-integrated)."""
    s, b = TRUTH["star"], TRUTH["b"]
    k = b["radius_earth"] * R_EARTH_M / (s["radius_rsun"] * R_SUN_M)
    a_r, cos_i, _ = solve_orbit(
        b["period_days"], b["rv_amplitude_ms"], b["impact"], 0.0, np.pi / 2, s["mass_msun"], s["radius_rsun"]
    )
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a = b["transit_bjd"], b["period_days"], k, a_r
    p.inc, p.ecc, p.w = np.degrees(np.arccos(cos_i)), 0.0, 90.0
    p.u = list(TRUTH["limb_darkening_u"])
    p.limb_dark = "quadratic"
    ss = max(1, int(np.ceil(cadence_min / 2.0)))
    model = batman.TransitModel(p, t_bjd, supersample_factor=ss, exp_time=cadence_min / MINUTES_PER_DAY)
    return model.light_curve(p)


def radial_velocity(t_bjd):
    """Noise-free stellar RV (m/s) from both planets."""
    total = np.zeros_like(t_bjd)
    for name in ("b", "c"):
        p = TRUTH[name]
        w = np.radians(p["omega_deg"])
        tp = orbit.timetrans_to_timeperi(p["transit_bjd"], p["period_days"], p["e"], w)
        total += kepler.rv_drive(t_bjd, np.array([p["period_days"], tp, p["e"], w, p["rv_amplitude_ms"]]))
    return total


def _write_photometry(outdir, rng, act):
    """The sectors' light curves: transits, spots, noise, lost exposures, cosmic rays and flagged rows."""
    by_name = {}
    for name, start, days, cadence, noise_ppm in SECTORS:
        t = sector_times(start, days, cadence)
        spots = quasi_periodic(
            t, act["rotation_days"], act["photometric_amplitude_ppm"] * PPM, rng, act["evolution_days"]
        )
        flux = light_curve(t + BTJD_OFFSET, cadence) + spots + rng.normal(0, noise_ppm * PPM, t.size)
        err = np.full(t.size, noise_ppm * PPM)
        flux[rng.choice(t.size, 5, replace=False)] = np.nan  # a few lost exposures, as in real products
        hits = rng.choice(t.size, 6, replace=False)
        flux[hits] += rng.uniform(8, 15, hits.size) * noise_ppm * PPM  # cosmic-ray hits: outliers to clip
        quality = np.zeros(t.size, dtype=int)
        flagged = rng.choice(t.size, t.size // 400, replace=False)
        quality[flagged] = 1 << 4  # bit 5: scattered light, the flux of those rows offset
        flux[flagged] -= rng.uniform(5, 20, flagged.size) * noise_ppm * PPM
        by_name.setdefault(name, []).append((t, flux, err, quality))
    for name, parts in by_name.items():
        t, f, e, q = (np.concatenate(x) for x in zip(*parts))
        scale = 18450.0  # electrons per second, arbitrary: the pipeline normalises
        np.savetxt(
            outdir / f"{name}.csv",
            np.column_stack([t, f * scale, e * scale, q]),
            delimiter=",",
            fmt=["%.6f", "%.3f", "%.3f", "%d"],
            header="btjd,flux_e_per_s,flux_err_e_per_s,quality",
            comments="",
        )


def _write_velocities(outdir, rng, act):
    """Each spectrograph's RVs: planets, spot activity at its scale, offset, noise with jitter."""
    times = [np.sort(rng.uniform(*RV_SPAN_BJD, n)) for _, n, *_ in SPECTROGRAPHS]
    spots = quasi_periodic(
        np.concatenate(times), act["rotation_days"], act["rv_amplitude_ms"], rng, act["evolution_days"]
    )
    for (name, n, err, jitter, offset, scale), t, part in zip(SPECTROGRAPHS, times, np.split(spots, [times[0].size])):
        rv = radial_velocity(t) + scale * part + offset + rng.normal(0, np.hypot(err, jitter), n)
        e = err * rng.uniform(0.85, 1.15, n)
        np.savetxt(
            outdir / f"{name}.txt",
            np.column_stack([t, rv, e]),
            fmt=["%.5f", "%.3f", "%.3f"],
            header="bjd_tdb rv_ms sigma_rv_ms",
            comments="",
        )


def write(outdir):
    """Write the demo tables and ``truth.json`` into ``outdir``."""
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(SEED)
    _write_photometry(outdir, rng, TRUTH["activity"])
    _write_velocities(outdir, rng, TRUTH["activity"])
    spectrographs = {n: {"jitter_ms": j, "offset_ms": o, "activity_scale": a} for n, _, _, j, o, a in SPECTROGRAPHS}
    truth = dict(TRUTH, seed=SEED, spectrographs=spectrographs)
    star, b = TRUTH["star"], TRUTH["b"]
    mass_kg = solve_orbit(
        b["period_days"], b["rv_amplitude_ms"], b["impact"], 0.0, np.pi / 2, star["mass_msun"], star["radius_rsun"]
    )[2]
    truth["b"]["mass_earth"] = float(mass_kg / M_EARTH_KG)
    (outdir / "truth.json").write_text(json.dumps(truth, indent=2) + "\n")


if __name__ == "__main__":
    write(sys.argv[1] if len(sys.argv) > 1 else Path(__file__).resolve().parent / "data")
