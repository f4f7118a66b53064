"""FITS light curves in the usual mission layout: times, quality flags, sectors, and a fit."""

import json

import numpy as np
import pytest
import yaml
from astropy.io import fits
from synthetic import TINY_TRUTH as TRUTH
from synthetic import tiny_light_curve as light_curve
from synthetic import write_tiny_system as write_system

from planetfit import pipeline
from planetfit.core.errors import InputError
from planetfit.inputs.cleaning import near_transits
from planetfit.inputs.config import load_config
from planetfit.inputs.datasets import load_photometry, quality_mask

BJDREFI, BJDREFF = 2457000, 0.25
CADENCE_DAYS = 10.0 / 1440.0


def write_light_curve(path, time_rel, flux, error, quality, timesys="TDB", level=20000.0, refs=(BJDREFI, BJDREFF)):
    """A binary-table light curve as mission pipelines write it: time in days from BJDREFI + BJDREFF,
    a simple-aperture and a corrected flux (each with errors) in electrons/s and a quality bitmask."""
    columns = [
        fits.Column(name="TIME", format="D", unit="BJD - 2457000, days", array=time_rel),
        fits.Column(name="SAP_FLUX", format="E", array=(flux * level * 1.02).astype(np.float32)),
        fits.Column(name="SAP_FLUX_ERR", format="E", array=(error * level).astype(np.float32)),
        fits.Column(name="PDCSAP_FLUX", format="E", array=(flux * level).astype(np.float32)),
        fits.Column(name="PDCSAP_FLUX_ERR", format="E", array=(error * level).astype(np.float32)),
        fits.Column(name="QUALITY", format="J", array=quality),
    ]
    table = fits.BinTableHDU.from_columns(columns, name="LIGHTCURVE")
    table.header["TIMESYS"] = timesys
    table.header["BJDREFI"], table.header["BJDREFF"] = refs
    table.header["TIMEUNIT"] = "d"
    fits.HDUList([fits.PrimaryHDU(), table]).writeto(path, overwrite=True)


def sector(rng, start_bjd, days, noise=4e-4):
    """Times (BJD_TDB), flux with transits of the tiny system, errors, and a quality column with a few flags."""
    t = np.arange(start_bjd, start_bjd + days, CADENCE_DAYS)
    flux = light_curve(t, TRUTH) + rng.normal(0, noise, t.size)
    quality = np.zeros(t.size, dtype=np.int32)
    flagged = rng.choice(t.size, 12, replace=False)
    quality[flagged[:6]] = 1 << 4  # bit 5: a stray-light style flag, dropped by default
    quality[flagged[6:]] = 1 << 12  # bit 13: a flag the tests ask to keep
    flux[flagged] = 0.9  # flagged rows hold junk, as they often do
    return t, flux, np.full(t.size, noise), quality


def config_for(folder, files, **extra):
    path = write_system(folder, max_steps=200, n_rv=12)
    raw = yaml.safe_load(path.read_text())
    raw["photometry"] = [
        dict(
            {
                "name": "cam",
                "file": files,
                "exposure_min": 10.0,
                "supersample": 1,
                "columns": {"time": "TIME", "flux": "PDCSAP_FLUX", "error": "PDCSAP_FLUX_ERR"},
                "quality_column": "QUALITY",
            },
            **extra,
        )
    ]
    path.write_text(yaml.safe_dump(raw, sort_keys=False))
    return path


@pytest.fixture
def two_sectors(tmp_path):
    rng = np.random.default_rng(5)
    files, truth = [], []
    # Second sector written first: the reader orders files by time.
    for name, start, level in (
        ("s2.fits", TRUTH["transit_bjd"] + 5.5, 31000.0),
        ("s1.fits", TRUTH["transit_bjd"] - 0.5, 20000.0),
    ):
        t, f, e, q = sector(rng, start, 1.0)
        write_light_curve(tmp_path / name, t - BJDREFI - BJDREFF, f, e, q, level=level)
        files.append(name)
        truth.append((t, q))
    return tmp_path, files, truth


def test_times_are_bjd_tdb_and_flagged_rows_are_dropped(two_sectors):
    folder, files, truth = two_sectors
    cfg = load_config(config_for(folder, files))
    data = load_photometry(cfg.photometry[0])
    expected = np.concatenate([t[q == 0] for t, q in truth[::-1]])
    # source: FITS time keywords, Rots et al. 2015, A&A 574, A36, section 4.1.2 (time = TIME + BJDREFI + BJDREFF)
    assert np.allclose(data.time, expected, rtol=0, atol=1e-8)
    assert data.dropped_quality == 24 and data.time.size == expected.size
    # common practice, no published source: each sector is normalised to its own median
    for label in np.unique(data.segment):
        assert abs(np.median(data.flux[data.segment == label]) - 1.0) < 1e-6
    assert np.unique(data.segment).size == 2


def test_kept_quality_bits_keep_their_rows(two_sectors):
    folder, files, _ = two_sectors
    cfg = load_config(config_for(folder, files, quality_keep_bits=[13], clip_sigma=0))
    data = load_photometry(cfg.photometry[0])
    assert data.dropped_quality == 12
    assert np.sum(data.flux < 0.95) == 12  # the junk rows flagged only with bit 13 stay when asked


def test_quality_mask_bit_numbering():
    # source: mission data products number quality bits from 1, bit n having value 2**(n-1)
    q = np.array([0, 1, 2, 4096, 4097])
    assert quality_mask(q, ()).tolist() == [False, True, True, True, True]
    assert quality_mask(q, (13,)).tolist() == [False, True, True, False, True]


def test_clipping_removes_outliers_outside_transits_only(two_sectors):
    folder, files, _ = two_sectors
    cfg = load_config(config_for(folder, files, quality_keep_bits=[13]))
    planets, star = cfg.planets, cfg.star
    raw = load_photometry(cfg.photometry[0])
    data = load_photometry(cfg.photometry[0], planets, star)
    protected = near_transits(raw.time, planets, star)
    junk = raw.flux < 0.95  # the rows flagged only with bit 13, kept on request
    assert 0 < np.sum(junk & ~protected) < 12
    # common practice, no published source: outliers are clipped, points in predicted transits never
    assert data.clipped == np.sum(junk & ~protected)
    assert np.sum(data.flux < 0.95) == np.sum(junk & protected)


@pytest.mark.parametrize("timesys", ["UTC", "TT"])
def test_time_scale_other_than_tdb_is_refused(tmp_path, timesys):
    t, f, e, q = sector(np.random.default_rng(1), 2460000.0, 1.0)
    write_light_curve(tmp_path / "lc.fits", t - BJDREFI - BJDREFF, f, e, q, timesys=timesys)
    cfg = load_config(config_for(tmp_path, "lc.fits"))
    with pytest.raises(InputError, match="TDB"):
        load_photometry(cfg.photometry[0])


def test_missing_reference_date_is_refused(tmp_path):
    t, f, e, q = sector(np.random.default_rng(1), 2460000.0, 1.0)
    write_light_curve(tmp_path / "lc.fits", t, f, e, q)
    with fits.open(tmp_path / "lc.fits", mode="update") as hdul:
        del hdul[1].header["BJDREFF"]
    cfg = load_config(config_for(tmp_path, "lc.fits"))
    with pytest.raises(InputError, match="BJDREFI and BJDREFF"):
        load_photometry(cfg.photometry[0])


def test_fits_light_curve_fits(two_sectors):
    folder, files, _ = two_sectors
    run_dir = pipeline.run(config_for(folder, files), quiet=True, figures=False).path
    summary = json.loads((run_dir / "summary.json").read_text())
    k = summary["planets"]["b"]["radius_ratio"]
    # common practice, no published source: a calibrated posterior holds the truth within 3 sigma
    assert abs(k["median"] - TRUTH["radius_ratio"]) < 3 * 0.5 * (k["upper"] - k["lower"])
    assert summary["data"]["cam"]["dropped_quality"] == 24
