"""Write the hot-giant example's light curve and radial velocities from a fixed seed.

Run ``python -m planetfit.demo.hot_giant [OUTDIR]`` (default: this package's
``hot-giant/`` folder). The system is invented: an F star, Orvane-2, with a
close-in giant (b) on a slightly eccentric orbit whose infrared (4.5 um) light curve shows the
transit, the secondary eclipse and the phase curve. The transit is made with
batman's public ``TransitModel``; the eclipse with its secondary-eclipse mode,
given the eclipse time (superior conjunction from batman's own
``get_t_secondary`` plus 2a/c-type light time) through a fresh parameter
object; the phase curve from radvel's true anomaly -- independent of
planetfit's own evaluation. Exposures are averaged over 15 sub-exposures.
"""

import copy
import json
import math
import sys
from pathlib import Path

import batman
import numpy as np
from radvel import kepler, orbit

from planetfit.core.geometry import solve_orbit
from planetfit.core.units import C_SI, MINUTES_PER_DAY, PPM, R_SUN_M, SECONDS_PER_DAY

SEED = 20261202
FOLDER = Path(__file__).resolve().parent / "hot-giant"
CONFIG = FOLDER / "hot-giant.yaml"
TRUTH = {
    "star": {"mass_msun": 1.25, "radius_rsun": 1.40, "teff_k": 6300.0},
    "b": {
        "period_days": 1.91372,
        "transit_bjd": 2460101.2731,
        "radius_ratio": 0.105,
        "impact": 0.25,
        "rv_amplitude_ms": 215.0,
        "e": 0.08,
        "omega_deg": 70.0,
    },
    # At 4.5 um: blackbody brightness temperatures of 2356 K (day) and 1437 K (night) against a
    # 6300 K blackbody star, which Cowan & Agol (2011) eqs. 4-5 give for Bond albedo 0.1 and redistribution 0.3
    # (over the whole warm-Spitzer 4.5 um band the example's config names, 2364 K and 1444 K).
    "light": {"eclipse_depth_ppm": 2526.4, "nightside_ppm": 883.3, "hotspot_offset_deg": 20.0},
    "limb_darkening_u": [0.08, 0.15],
}
PHOTOMETRY = {"start_bjd": 2460100.5, "days": 12.0, "cadence_min": 10.0, "noise_ppm": 150.0}
RVS = {"points": 30, "error_ms": 12.0, "offset_ms": -8.0, "span_bjd": (2460080.0, 2460160.0)}
SUBEXPOSURES = 15


def _params(star, b):
    """batman parameters of the truth, and a/R* and sin i."""
    w = np.radians(b["omega_deg"])
    a_r, cos_i, _ = solve_orbit(
        b["period_days"], b["rv_amplitude_ms"], b["impact"], b["e"], w, star["mass_msun"], star["radius_rsun"]
    )
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a = b["transit_bjd"], b["period_days"], b["radius_ratio"], float(a_r)
    p.inc, p.ecc, p.w = float(np.degrees(np.arccos(cos_i))), b["e"], b["omega_deg"]
    p.u, p.fp = list(TRUTH["limb_darkening_u"]), 1.0
    p.limb_dark = "quadratic"
    return p, float(a_r), float(np.sqrt(1 - cos_i**2))


def light_curve(t, truth=TRUTH, subexposures=SUBEXPOSURES, exposure_min=PHOTOMETRY["cadence_min"]):
    """Noise-free flux relative to the star: transit plus the planet's phase curve, occulted in eclipse."""
    star, b, light = truth["star"], truth["b"], truth["light"]
    offsets = exposure_min / MINUTES_PER_DAY * ((np.arange(subexposures) + 0.5) / subexposures - 0.5)
    ts = (t[:, None] + offsets).ravel()
    p, a_r, sin_i = _params(star, b)
    transit = batman.TransitModel(p, ts).light_curve(p)
    e, w = b["e"], np.radians(b["omega_deg"])
    delay = 2 * a_r * star["radius_rsun"] * R_SUN_M * (1 - e * e) * sin_i / (1 - (e * np.sin(w)) ** 2) / C_SI
    secondary = copy.copy(p)
    secondary.t_secondary = batman.TransitModel(p, ts[:2]).get_t_secondary(p) + delay / SECONDS_PER_DAY
    seen = batman.TransitModel(secondary, ts, transittype="secondary").light_curve(secondary) - 1.0
    tp = orbit.timetrans_to_timeperi(b["transit_bjd"], b["period_days"], e, w)
    theta = orbit.true_anomaly(ts, tp, b["period_days"], e) + w
    delta = np.radians(light["hotspot_offset_deg"])
    big, small = light["eclipse_depth_ppm"], light["nightside_ppm"]
    planet = 0.5 * (big + small) + 0.5 * (big - small) * np.cos(theta - 1.5 * np.pi + delta) / np.cos(delta)
    return (transit + PPM * planet * seen).reshape(-1, subexposures).mean(axis=1)


def radial_velocity(t, truth=TRUTH):
    """Noise-free stellar RV (m/s)."""
    b = truth["b"]
    w = np.radians(b["omega_deg"])
    tp = orbit.timetrans_to_timeperi(b["transit_bjd"], b["period_days"], b["e"], w)
    return kepler.rv_drive(t, np.array([b["period_days"], tp, b["e"], w, b["rv_amplitude_ms"]]))


def true_parameters(truth=TRUTH):
    """The example config's parameters at the truth (flux level 1, jitter 1 m/s), by parameter name.

    Light parameters are given for band ``camera``; a model without them simply does not look them up.
    """
    b, w = truth["b"], math.radians(truth["b"]["omega_deg"])
    u1, u2 = truth["limb_darkening_u"]
    values = {f"b.{k}": b[k] for k in ("period_days", "transit_bjd", "radius_ratio", "impact", "rv_amplitude_ms")}
    values.update({f"b.camera.{k}": v for k, v in truth["light"].items()})
    values.update(
        {
            "star.mass_msun": truth["star"]["mass_msun"],
            "star.radius_rsun": truth["star"]["radius_rsun"],
            "b.sqrt_e_cos_w": math.sqrt(b["e"]) * math.cos(w),
            "b.sqrt_e_sin_w": math.sqrt(b["e"]) * math.sin(w),
            "camera.limb_darkening_q1": (u1 + u2) ** 2,
            "camera.limb_darkening_q2": u1 / (2 * (u1 + u2)),
            "camera.flux_level": 1.0,
            "spectrograph.offset_ms": RVS["offset_ms"],
            "spectrograph.jitter_ms": 1.0,
        }
    )
    return values


def write(outdir, seed=SEED, truth=TRUTH):
    """Write ``photometry.csv``, ``rv.txt`` and ``truth.json`` into ``outdir``."""
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    ph = PHOTOMETRY
    t = np.arange(ph["start_bjd"], ph["start_bjd"] + ph["days"], ph["cadence_min"] / MINUTES_PER_DAY)
    flux = light_curve(t, truth) + rng.normal(0, ph["noise_ppm"] * PPM, t.size)
    np.savetxt(
        outdir / "photometry.csv",
        np.column_stack([t, flux, np.full(t.size, ph["noise_ppm"] * PPM)]),
        delimiter=",",
        fmt=["%.6f", "%.8f", "%.8f"],
        header="bjd_tdb,flux,flux_err",
        comments="",
    )
    t_rv = np.sort(rng.uniform(*RVS["span_bjd"], RVS["points"]))
    rv = radial_velocity(t_rv, truth) + RVS["offset_ms"] + rng.normal(0, RVS["error_ms"], t_rv.size)
    np.savetxt(
        outdir / "rv.txt",
        np.column_stack([t_rv, rv, np.full(t_rv.size, RVS["error_ms"])]),
        fmt=["%.5f", "%.3f", "%.3f"],
        header="bjd_tdb rv_ms sigma_rv_ms",
        comments="",
    )
    (outdir / "truth.json").write_text(json.dumps(dict(truth, seed=seed), indent=2) + "\n")


if __name__ == "__main__":
    write(sys.argv[1] if len(sys.argv) > 1 else FOLDER)
