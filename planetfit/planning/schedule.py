"""When the new RVs are taken: random nights of an observing window, at most a few per night.

Night k of the window begins at START + k days and is ``NIGHT_HOURS`` long;
it holds ``per_night`` equal slots, one RV at most in each (near its
middle). The RVs fill slots drawn at random without replacement, so they
spread uniformly over the window, and the first n of a schedule are a
schedule of n: the counts of a plan are nested.
"""

import numpy as np

from planetfit.core.errors import InputError
from planetfit.core.units import HOURS_PER_DAY

#: Usable dark time of one night, hours. # common practice, no published source: about 8 h at mid latitudes
NIGHT_HOURS = 8.0
#: An RV lies within this fraction of its slot's width around the slot's middle.
SLOT_SPREAD = 0.5


def window_capacity(window_bjd, per_night):
    """How many RVs the window holds: whole nights x ``per_night``."""
    start, end = window_bjd
    return int(np.floor(end - start)) * per_night


def check_window(window_bjd, per_night, count):
    """Raise :class:`InputError` unless ``count`` RVs fit into the window at ``per_night`` per night."""
    start, end = window_bjd
    if not end - start >= 1:
        raise InputError(
            f"the observing window {start:.3f}-{end:.3f} is shorter than one night.",
            key="--window-days",
            fix="give START END at least a day apart (BJD_TDB, or days after the run's last data point).",
        )
    if per_night < 1:
        raise InputError(
            f"--per-night must be at least 1, got {per_night}.", key="--per-night", fix="e.g. --per-night 2."
        )
    capacity = window_capacity(window_bjd, per_night)
    if count > capacity:
        raise InputError(
            f"{count} RVs do not fit into {capacity // per_night} nights at {per_night} per night.",
            key="--counts",
            fix="widen the window (--window-days), allow more per night (--per-night) or ask for fewer RVs.",
        )


def observation_times(rng, count, window_bjd, per_night):
    """Times (BJD_TDB) of ``count`` new RVs, in random order (any first n of them are a schedule of n).

    Parameters
    ----------
    rng : numpy.random.Generator
    count : int
    window_bjd : (float, float)
        Start of the first night and end of the window.
    per_night : int
    """
    check_window(window_bjd, per_night, count)
    slots = rng.choice(window_capacity(window_bjd, per_night), size=count, replace=False)
    night, slot = np.divmod(slots, per_night)
    width = NIGHT_HOURS / HOURS_PER_DAY / per_night
    offset = 0.5 + SLOT_SPREAD * rng.uniform(-0.5, 0.5, count)
    return window_bjd[0] + night + (slot + offset) * width
