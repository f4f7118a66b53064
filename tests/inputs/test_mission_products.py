"""Kepler and TESS light-curve products as the archives deliver them, read with no quality column or exposure named.

The files are written here with the missions' header keywords and columns (TELESCOP, BJDREFI/BJDREFF,
TIMESYS, TIMEREF, TIMEDEL, FRAMETIM, NUM_FRM, EXPOSURE; TIME, PDCSAP_FLUX, SAP_FLUX, SAP_QUALITY or
QUALITY), with flagged cadences holding zero flux and zero error, and NaN times.
"""

import json

import numpy as np
import pytest
from astropy.io import fits
from synthetic import light_curve, planet_truth, star_priors, write_config

from planetfit import pipeline
from planetfit.core.errors import InputError
from planetfit.inputs.config import load_config
from planetfit.inputs.datasets import read_photometry
from planetfit.inputs.fits import MISSIONS

STAR = {"mass_msun": 0.95, "radius_rsun": 0.9}
#: One transit seen by Kepler (short cadence) and another, 1,100 orbits later, by TESS (2-min cadence).
PLANET = planet_truth(3.0, 2455900.25, 0.0, radius_ratio=0.05, impact=0.25)
TESS_TRANSIT = PLANET["transit_bjd"] + 1100 * PLANET["period_days"]
NOISE = 5e-4
# Header values as the missions write them (value from memory: Kepler Archive Manual KDMC-10008-006 and the
# TESS Science Data Products Description; short cadence 9 x 6.54 s frames, TESS 2-min 60 x 2 s frames).
KEPLER = {
    "primary": {"TELESCOP": "Kepler", "INSTRUME": "Kepler Photometer", "MISSION": "Kepler", "OBSMODE": "short cadence"},
    "table": {"TIMEDEL": 0.000681119, "FRAMETIM": 6.538751429, "NUM_FRM": 9, "INT_TIME": 6.019802903},
    "refs": (2454833, 0.0),
    "quality": "SAP_QUALITY",
    "exposure_days": 22.1,
}
TESS = {
    "primary": {"TELESCOP": "TESS", "INSTRUME": "TESS Photometer"},
    "table": {"TIMEDEL": 0.001388888888888889, "FRAMETIM": 2.0, "NUM_FRM": 60, "INT_TIME": 1.98},
    "refs": (2457000, 0.0),
    "quality": "QUALITY",
    "exposure_days": 8.95,
}


def write_product(path, product, centre_bjd, rng, days=0.8, drop_keywords=()):
    """A mission light-curve file around ``centre_bjd``; returns (times, quality) as written (BJD_TDB)."""
    step = product["table"]["TIMEDEL"]
    t = np.arange(centre_bjd - days / 2, centre_bjd + days / 2, step)
    flux = light_curve(t, {"b": PLANET}, step * 1440, star=STAR) + rng.normal(0, NOISE, t.size)
    error = np.full(t.size, NOISE)
    quality = np.zeros(t.size, dtype=np.int32)
    rows = rng.choice(t.size, 40, replace=False)
    quality[rows[:20]] = 32  # bit 6, reaction-wheel desaturation: an event flag, flux and error 0.0
    flux[rows[:20]] = error[rows[:20]] = 0.0
    quality[rows[20:30]] = 1024  # bit 11, an informative flag: good data, kept
    time_rel = t - sum(product["refs"])
    time_rel[rows[30:]] = np.nan  # cadences without a time stamp
    level = 41000.0
    columns = [
        fits.Column(name="TIME", format="D", unit="BJD - 2457000, days", array=time_rel),
        fits.Column(name="TIMECORR", format="E", array=np.zeros(t.size, dtype=np.float32)),
        fits.Column(name="CADENCENO", format="J", array=np.arange(t.size, dtype=np.int32)),
        fits.Column(name="SAP_FLUX", format="E", array=(flux * level * 0.97).astype(np.float32)),
        fits.Column(name="SAP_FLUX_ERR", format="E", array=(error * level).astype(np.float32)),
        fits.Column(name="PDCSAP_FLUX", format="E", array=(flux * level).astype(np.float32)),
        fits.Column(name="PDCSAP_FLUX_ERR", format="E", array=(error * level).astype(np.float32)),
        fits.Column(name=product["quality"], format="J", array=quality),
        fits.Column(name="MOM_CENTR1", format="D", array=rng.normal(500.0, 0.01, t.size)),
    ]
    table = fits.BinTableHDU.from_columns(columns, name="LIGHTCURVE")
    header = {"TIMEREF": "SOLARSYSTEM", "TASSIGN": "SPACECRAFT", "TIMESYS": "TDB", "TIMEUNIT": "d"}
    header |= {"BJDREFI": product["refs"][0], "BJDREFF": product["refs"][1], "EXPOSURE": product["exposure_days"]}
    header |= product["table"]
    for key, value in header.items():
        if key not in drop_keywords:
            table.header[key] = value
    primary = fits.PrimaryHDU()
    for key, value in product["primary"].items():
        primary.header[key] = value
    fits.HDUList([primary, table]).writeto(path, overwrite=True)
    return t, quality, time_rel


def config_for(folder, *datasets, **planet):
    """A transit-only config of the planet with the given photometry entries (no RVs)."""
    return write_config(
        folder,
        {
            "system": "Archive-1",
            "seed": 4,
            "output": "run",
            "star": star_priors(STAR, 5600),
            "planets": {
                "b": {
                    "period_days": {"uniform": [3.0 - 2e-5, 3.0 + 2e-5]},
                    "transit_bjd": {"uniform": [PLANET["transit_bjd"] - 0.02, PLANET["transit_bjd"] + 0.02]},
                    "radius_ratio": {"uniform": [0.01, 0.1]},
                    "impact": {"uniform": [0.0, 1.0]},
                    **planet,
                }
            },
            "photometry": list(datasets),
            "sampling": {"walkers": 24, "max_steps": 200, "check_every": 100, "optimiser_starts": 2},
        },
    )


@pytest.fixture
def products(tmp_path):
    rng = np.random.default_rng(11)
    kepler = write_product(tmp_path / "kplr_llc.fits", KEPLER, PLANET["transit_bjd"], rng)
    tess = write_product(tmp_path / "tess_lc.fits", TESS, TESS_TRANSIT, rng)
    return tmp_path, kepler, tess


def _dataset(cfg, i):
    return read_photometry(cfg.photometry[i], cfg.star)


def test_mission_products_need_no_quality_column_or_exposure(products):
    folder, kepler, tess = products
    cfg = load_config(
        config_for(folder, {"name": "kepler", "file": "kplr_llc.fits"}, {"name": "tess", "file": "tess_lc.fits"})
    )
    for i, (product, (t, quality, time_rel)) in enumerate(((KEPLER, kepler), (TESS, tess))):
        d = _dataset(cfg, i)
        counts = d.counts()
        # source: the header's TIMEDEL (days), not EXPOSURE (the whole file's exposure, days)
        assert counts["exposure_min"] == pytest.approx(product["table"]["TIMEDEL"] * 1440)
        assert counts["exposure_from"] == "TIMEDEL"
        dropped = np.isfinite(time_rel) & (quality == 32)
        assert d.dropped_quality == dropped.sum() == 20 - np.sum(~np.isfinite(time_rel) & (quality == 32))
        assert d.dropped_nan == np.sum(~np.isfinite(time_rel))
        # The informative flag's rows stay, the event flag's rows (zero flux and error) are gone.
        kept = np.isfinite(time_rel) & (quality != 32)
        assert d.time.size == kept.sum() and np.all(d.error > 0)
        assert np.allclose(d.time, t[kept], rtol=0, atol=1e-8)
        assert "Kepler" in counts["quality_flags"] or "TESS" in counts["quality_flags"]


def test_frame_time_times_coadds_without_timedel(tmp_path):
    write_product(
        tmp_path / "k.fits", KEPLER, PLANET["transit_bjd"], np.random.default_rng(1), drop_keywords=("TIMEDEL",)
    )
    d = _dataset(load_config(config_for(tmp_path, {"name": "k", "file": "k.fits"})), 0)
    # source: Kepler short cadence is 9 co-added frames of 6.538751429 s (value from memory)
    assert d.counts()["exposure_min"] == pytest.approx(9 * 6.538751429 / 60)
    assert d.counts()["exposure_from"] == "FRAMETIM x NUM_FRM"


def test_simple_aperture_flux_is_selectable(products):
    folder, *_ = products
    entry = {"name": "tess", "file": "tess_lc.fits", "normalise": False}
    pdc = _dataset(load_config(config_for(folder, entry)), 0)
    sap = _dataset(load_config(config_for(folder, dict(entry, mission_flux="sap"))), 0)
    # the file's SAP column is 0.97 times its PDCSAP column
    assert np.allclose(sap.flux / pdc.flux, 0.97, rtol=1e-5)


def test_quality_overrides(products):
    folder, _, (t, quality, time_rel) = products
    entry = {"name": "tess", "file": "tess_lc.fits"}
    keep = _dataset(load_config(config_for(folder, dict(entry, quality_keep_bits=[11]))), 0)
    assert keep.dropped_quality == np.sum(np.isfinite(time_rel) & (quality == 32))
    with pytest.raises(InputError, match="zero or negative uncertainties") as err:
        _dataset(load_config(config_for(folder, dict(entry, quality_column="none"))), 0)
    assert "quality_column" in str(err.value)
    named = _dataset(load_config(config_for(folder, dict(entry, quality_column="QUALITY"))), 0)
    assert named.dropped_quality == np.sum(np.isfinite(time_rel) & (quality != 0))


def test_flagged_zero_errors_kept_by_request_are_named(products):
    folder, *_ = products
    cfg = load_config(config_for(folder, {"name": "tess", "file": "tess_lc.fits", "quality_keep_bits": [6, 11]}))
    with pytest.raises(InputError) as err:
        _dataset(cfg, 0)
    text = str(err.value)
    assert "flagged in the quality column 'QUALITY'" in text and "bits 6" in text
    assert "quality_keep_bits" in text


def test_missing_quality_column_of_a_mission_product(tmp_path):
    write_product(tmp_path / "k.fits", KEPLER, PLANET["transit_bjd"], np.random.default_rng(1))
    with fits.open(tmp_path / "k.fits", mode="update") as hdul:
        hdul[1].columns.change_name("SAP_QUALITY", "FLAGS")
    with pytest.raises(InputError, match="no quality column 'SAP_QUALITY'") as err:
        _dataset(load_config(config_for(tmp_path, {"name": "k", "file": "k.fits"})), 0)
    assert "quality_column" in str(err.value)


def test_mission_bitmasks():
    # source: bit n of a mission quality column has value 2**(n - 1) (Kepler Archive Manual, table 2-3)
    assert MISSIONS["TESS"].drop_mask & 32 and not MISSIONS["TESS"].drop_mask & 1024
    assert MISSIONS["KEPLER"].drop_mask & 1 and not MISSIONS["KEPLER"].drop_mask & 128


@pytest.mark.slow
def test_kepler_and_tess_products_fit(products):
    folder, *_ = products
    path = config_for(folder, {"name": "kepler", "file": "kplr_llc.fits"}, {"name": "tess", "file": "tess_lc.fits"})
    run_dir = pipeline.run(path, quiet=True, figures=False).path
    summary = json.loads((run_dir / "summary.json").read_text())
    for name, product in (("kepler", KEPLER), ("tess", TESS)):
        assert summary["data"][name]["dropped_quality"] > 0
        assert summary["data"][name]["exposure_min"] == pytest.approx(product["table"]["TIMEDEL"] * 1440)
    k = summary["planets"]["b"]["radius_ratio"]
    # common practice, no published source: a short chain still holds the truth within 3 sigma
    assert abs(k["median"] - PLANET["radius_ratio"]) < 3 * 0.5 * (k["upper"] - k["lower"])
