"""transit_times.csv: every individual transit time with its O-C, one row per planet and epoch."""

import io

from planetfit.core.units import MINUTES_PER_DAY
from planetfit.report.files import write_text_atomic

COLUMNS = (
    "planet",
    "epoch",
    "bjd_tdb_median",
    "bjd_tdb_lower",
    "bjd_tdb_upper",
    "o_minus_c_minutes",
    "o_minus_c_error_minutes",
)


def write_transit_times_csv(path, timing):
    """Write transit_times.csv from :func:`planetfit.context.transit_times.transit_times` results.

    Times are BJD_TDB (median, 15.87th and 84.13th percentiles); O-C is the
    median time minus the weighted least-squares linear ephemeris, its error
    half the 68 % interval.
    """
    buf = io.StringIO()
    buf.write(",".join(COLUMNS) + "\n")
    for t in timing.values():
        for row in zip(t.epochs, t.median, t.lower, t.upper, t.o_minus_c_minutes, t.sigma_days * MINUTES_PER_DAY):
            buf.write(f"{t.planet},{row[0]:d},{row[1]:.6f},{row[2]:.6f},{row[3]:.6f},{row[4]:.3f},{row[5]:.3f}\n")
    write_text_atomic(path, buf.getvalue())
