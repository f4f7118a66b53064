"""Radial-velocity tables in the layouts published files have, read as they come.

Several instruments in one file with an instrument column, files without a
header line, repeated time stamps, times on a mission's reference date and
heliocentric UTC times: each is read, selected, converted or refused as
README's config reference says, with the message naming what to change.
"""

import numpy as np
import pytest
import yaml
from astropy import units as u
from astropy.coordinates import EarthLocation, SkyCoord
from astropy.time import Time
from synthetic import write_tiny_system

from planetfit import pipeline
from planetfit.core.errors import InputError

RA_DEG, DEC_DEG = 201.3, -23.7  # an invented star's position


def _rows(rng, n, start, instrument, offset):
    """n RV rows (BJD_TDB, m/s) of one instrument: its zero point plus noise."""
    t = np.sort(rng.uniform(start, start + 40, n))
    return [(ti, offset + rng.normal(0, 2), 1.5, instrument) for ti in t]


@pytest.fixture
def system(tmp_path):
    """The tiny system's config (photometry + one RV dataset), as a dict to edit, and its folder."""
    path = write_tiny_system(tmp_path)
    return yaml.safe_load(path.read_text()), tmp_path


def _check(folder, raw):
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(raw, sort_keys=False))
    return pipeline.check(path)


def _two_instrument_file(folder, header=True):
    """One table of two spectrographs, grouped by instrument as papers print them (so not in time order)."""
    rng = np.random.default_rng(4)
    rows = _rows(rng, 12, 2459985.0, "HARPS", -6700.0) + _rows(rng, 8, 2459990.0, "CORALIE", 12.0)
    lines = (["time rv err inst"] if header else []) + [f"{t:.6f} {v:.3f} {e:.2f} {i}" for t, v, e, i in rows]
    (folder / "all_rv.txt").write_text("# published radial velocities\n" + "\n".join(lines) + "\n")
    return rows


def test_one_dataset_per_instrument_from_one_file(system):
    raw, folder = system
    rows = _two_instrument_file(folder)
    base = dict(raw["velocities"][0], file="all_rv.txt", columns={"time": "time", "rv": "rv", "error": "err"})
    raw["velocities"] = [
        dict(base, name="harps", select={"inst": "HARPS"}),
        dict(base, name="coralie", select={"inst": "CORALIE"}, offset_ms={"uniform": [-50, 50]}),
    ]
    checked = _check(folder, raw)
    harps, coralie = checked.velocities
    assert harps.time.size == 12 and coralie.time.size == 8
    assert np.allclose(np.sort(harps.rv), np.sort([v for _, v, _, i in rows if i == "HARPS"]))
    assert harps.reading.rows_read == 20 and harps.reading.rows_selected == 12
    assert not [w for w in checked.warnings if "labels" in w]


def test_a_file_of_several_instruments_without_select_is_warned_about(system, capsys):
    raw, folder = system
    _two_instrument_file(folder)
    raw["velocities"][0].update(file="all_rv.txt", columns={"time": "time", "rv": "rv", "error": "err"})
    checked = _check(folder, raw)
    (warning,) = [w for w in checked.warnings if "labels" in w]
    for text in ("column 'inst'", "CORALIE (8 rows)", "HARPS (12 rows)", "select: {inst: <label>}"):
        assert text in warning
    # Grouped by instrument, the rows are out of time order: sorted, not refused.
    assert checked.velocities[0].reading.sorted_by_time
    assert np.all(np.diff(checked.velocities[0].time) >= 0)


def test_headerless_table_with_the_instrument_as_fourth_column(system):
    raw, folder = system
    _two_instrument_file(folder, header=False)
    raw["velocities"][0].update(
        file="all_rv.txt",
        header=False,
        columns={"time": 1, "rv": 2, "error": 3},
        select={4: "HARPS"},
        offset_ms={"uniform": [-7000, -6000]},
    )
    checked = _check(folder, raw)
    assert checked.velocities[0].time.size == 12
    assert abs(np.median(checked.velocities[0].rv) + 6700) < 5


def test_select_naming_a_missing_value_lists_the_values_there_are(system):
    raw, folder = system
    _two_instrument_file(folder)
    raw["velocities"][0].update(
        file="all_rv.txt", columns={"time": "time", "rv": "rv", "error": "err"}, select={"inst": "HARPS-N"}
    )
    with pytest.raises(InputError) as err:
        _check(folder, raw)
    assert "select.inst" in err.value.key
    assert "CORALIE (8 rows), HARPS (12 rows)" in err.value.problem


def test_repeated_time_stamps_are_two_measurements(system):
    raw, folder = system
    rv = (folder / "rv.txt").read_text().splitlines()
    rv.insert(3, rv[2])  # the same exposure time written twice (two exposures, one recorded mid-time)
    (folder / "rv.txt").write_text("\n".join(rv) + "\n")
    checked = _check(folder, raw)
    assert checked.velocities[0].reading.repeated_times == 1
    assert checked.velocities[0].time.size == 21
    assert "1 repeated time stamp(s) kept" in pipeline.overview(checked)[1][-1]


def _relative_rvs(folder, reference):
    """The RV table rewritten with times relative to ``reference`` (as many published tables give them)."""
    table = np.loadtxt(folder / "rv.txt", skiprows=1)
    table[:, 0] -= reference
    np.savetxt(folder / "rv.txt", table, header="bjd rv err", comments="", fmt="%.6f")


def test_kepler_reference_times_beside_full_bjd_priors_name_the_right_offset(system):
    raw, folder = system
    _relative_rvs(folder, 2454833.0)
    with pytest.raises(InputError) as err:
        _check(folder, raw)
    text = err.value.message()
    # The TESS reference (2457000) would also make the times a plausible BJD, six years after the transit
    # priors; only the Kepler/K2 one puts them beside the priors and the photometry.
    assert "2457000.0 (TESS BJD)" in text and "2454833.0 (Kepler/K2 BJD)" in text
    assert "'time_offset_days: 2454833.0'" in text
    assert "'time_offset_days: 2457000.0'" not in text
    assert err.value.key == "velocities[0].time_offset_days"


def test_no_single_guess_when_two_references_fit(system):
    raw, folder = system
    _relative_rvs(folder, 2454833.0)
    # Photometry from the transit priors' epoch to six years later: both references would fit.
    phot = np.loadtxt(folder / "phot.csv", delimiter=",", skiprows=1)
    phot = np.vstack([phot, phot + [2200.0, 0, 0]])
    np.savetxt(
        folder / "phot.csv",
        phot[np.argsort(phot[:, 0])],
        delimiter=",",
        header="time,flux,flux_err",
        comments="",
        fmt="%.7f",
    )
    with pytest.raises(InputError) as err:
        _check(folder, raw)
    assert "cannot tell" in err.value.fix and "2454833.0" in err.value.fix and "2457000.0" in err.value.fix


def test_hjd_utc_times_become_astropys_bjd_tdb(system):
    raw, folder = system
    table = np.loadtxt(folder / "rv.txt", skiprows=1)
    star = SkyCoord(RA_DEG * u.deg, DEC_DEG * u.deg)
    # source: astropy.time, the reference library: the arrival times at the geocentre (UTC) are the truth;
    # their heliocentric and barycentric forms come from astropy's light-travel times.
    arrival = Time(table[:, 0], format="jd", scale="utc", location=EarthLocation.from_geocentric(0, 0, 0, unit=u.m))
    hjd = arrival + arrival.light_travel_time(star, kind="heliocentric")
    bjd = arrival.tdb + arrival.light_travel_time(star, kind="barycentric")
    table[:, 0] = hjd.jd
    np.savetxt(folder / "rv.txt", table, header="bjd rv err", comments="", fmt="%.8f")
    raw["star"].update(ra_deg=RA_DEG, dec_deg=DEC_DEG)
    raw["velocities"][0]["time_system"] = "HJD_UTC"
    checked = _check(folder, raw)
    seconds = np.abs(checked.velocities[0].time - np.sort(bjd.jd)) * 86400
    assert seconds.max() < 1.0
    assert np.min(np.abs(hjd.jd - bjd.jd)) * 86400 > 60  # the file's times are not BJD_TDB: the test can fail
    assert "times HJD_UTC converted to BJD_TDB" in pipeline.overview(checked)[1][-1]
