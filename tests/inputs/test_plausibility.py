"""Plausibility warnings (data that may be real but odd) and no false alarms on sound data.

The refusals (km/s as m/s, errors in ppm, magnitudes, no transit in the data, rows used twice, FITS time
references) are cases of the bad-input catalogue (tests/end_to_end/bad_inputs/r_*).
"""

# common practice, no published source: the thresholds (1 cm/s, 10 km/s, a tenth of the flux) are planetfit's
# own plausibility bounds (issue 29); no physics is checked.

from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from synthetic import write_tiny_system

from planetfit import pipeline
from planetfit.core.errors import InputError
from planetfit.demo import DEMO_CONFIG
from planetfit.inputs.plausibility import check_rows_used_once


def _rewrite_column(path, column, change, sep=None):
    """Apply ``change`` to one column of a text table with a header line."""
    lines = Path(path).read_text().splitlines()
    header = lines[0].split(sep)
    k = header.index(column)
    rows = [line.split(sep) for line in lines[1:]]
    values = change(np.array([float(r[k]) for r in rows]))
    for r, v in zip(rows, values):
        r[k] = repr(float(v))
    joiner = sep or " "
    Path(path).write_text("\n".join([lines[0]] + [joiner.join(r) for r in rows]) + "\n")


def _new_warnings(checked, text):
    return [w for w in checked.warnings if text in w]


def test_sound_data_raise_no_plausibility_warning(tmp_path):
    for config in (write_tiny_system(tmp_path), DEMO_CONFIG):
        checked = pipeline.check(config)
        for text in ("of the flux (", "more than 10 km/s", "below 1 cm/s"):
            assert not _new_warnings(checked, text)


def test_large_relative_flux_errors_are_warned_with_their_size(tmp_path):
    config = write_tiny_system(tmp_path)
    _rewrite_column(tmp_path / "phot.csv", "flux_err", lambda e: np.full(e.size, 0.25), sep=",")
    (warning,) = _new_warnings(pipeline.check(config), "of the flux (")
    assert "0.25 of the flux (2500" in warning and "Fix:" in warning


def test_rv_scatter_beyond_10_km_s_is_warned_with_its_size(tmp_path):
    config = write_tiny_system(tmp_path)
    _rewrite_column(tmp_path / "rv.txt", "rv", lambda v: v + np.where(np.arange(v.size) % 2, 2.0e4, -2.0e4))
    (warning,) = _new_warnings(pipeline.check(config), "more than 10 km/s")
    assert "scatter by 2e+04 m/s" in warning


def test_rvs_without_scatter_are_warned(tmp_path):
    # Placeholder tables of zeros (benchmarks/calibration.py) are legitimate, so this one warns only.
    config = write_tiny_system(tmp_path)
    _rewrite_column(tmp_path / "rv.txt", "rv", np.zeros_like)
    (warning,) = _new_warnings(pipeline.check(config), "below 1 cm/s")
    assert "scatter by 0 m/s" in warning


def _dataset(name, file, select=None, section="velocities[0]"):
    return SimpleNamespace(name=name, files=[Path(file)], select=select, section=section)


@pytest.mark.parametrize(
    ("first", "second", "overlap"),
    [
        ({"inst": "A"}, {"inst": "B"}, False),  # one instrument each: disjoint
        ({"inst": "A"}, {"inst": "A"}, True),
        (None, {"inst": "B"}, True),  # all rows contain B's
        ({"inst": "A"}, {"night": 3}, True),  # different columns: they may share rows
    ],
)
def test_one_file_read_by_two_datasets_only_with_disjoint_selections(first, second, overlap):
    config = SimpleNamespace(
        photometry=[],
        velocities=[_dataset("a", "/x/rv.txt", first), _dataset("b", "/x/rv.txt", second, "velocities[1]")],
    )
    if overlap:
        with pytest.raises(InputError, match="count twice"):
            check_rows_used_once(config)
    else:
        check_rows_used_once(config)
