"""Radial-velocity terms besides the planets: each spectrograph's offset, jitter and activity-indicator
terms, and a long-term trend."""

import numpy as np

from planetfit.core.quantities import DATASET
from planetfit.fitting.components.base import TRENDS
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema


def decorrelation_name(dataset, column):
    """Owner of a spectrograph's coefficient for one activity indicator (``<dataset> <column>``)."""
    return f"{dataset} {column}"


class Spectrograph:
    """One spectrograph's zero point, jitter, activity-indicator coefficients and activity amplitude.

    The indicator part is linear: sum_j c_j (x_j - median x_j) at the
    spectrograph's times, c_j in m/s per unit of indicator j.

    Parameters
    ----------
    block : schema.VelocitiesBlock
    data : Velocities
        Its RVs, with the centred indicators.
    """

    def __init__(self, block, data):
        def declare(key, prior, owner=block.name, linear=False):
            return Parameter(owner, key, prior, DATASET[key], linear=linear)

        self.name, self.size = block.name, np.size(data.time)
        self.offset = declare("offset_ms", block.offset_ms, linear=True)
        self.jitter = declare("jitter_ms", block.jitter_ms)
        self.coefficients = [
            declare("activity_coefficient", prior, decorrelation_name(block.name, col), linear=True)
            for col, prior in block.decorrelate.items()
        ]
        self.indicators = [np.asarray(data.indicators[col], dtype=float) for col in block.decorrelate]
        amp = block.activity_amplitude_ms
        self.activity_amplitude = None if amp is None else declare("activity_amplitude_ms", amp)
        self.parameters = [self.offset, self.jitter, *self.coefficients] + (
            [self.activity_amplitude] if amp is not None else []
        )

    def indicator_ms(self, values):
        """The activity-indicator part (m/s) at the spectrograph's times (0.0 without indicators)."""
        total = 0.0
        for c, x in zip(self.coefficients, self.indicators):
            total = total + values[c.name] * x
        return total

    def columns(self):
        """Design column of each linear parameter at the spectrograph's points: the offset's ones, the indicators."""
        return {self.offset.name: np.ones(self.size), **{c.name: x for c, x in zip(self.coefficients, self.indicators)}}


@TRENDS.register(schema.LinearTrendBlock)
class LinearTrend:
    """Trend c_1 (t - t_ref) for a long-period companion; the offsets absorb the constant term.

    Parameters
    ----------
    block : schema.LinearTrendBlock
    rv_times : ndarray
        Every RV time; t_ref is the middle of their span unless the block gives it.
    """

    def __init__(self, block, rv_times):
        self.coefficients = [
            Parameter("rv_trend", "slope_ms_per_day", block.slope_ms_per_day, DATASET["slope_ms_per_day"], linear=True)
        ]
        ref = block.reference_bjd
        self.reference_bjd = float(0.5 * (rv_times.min() + rv_times.max()) if ref is None else ref)

    @property
    def parameters(self):
        return self.coefficients

    def velocity_ms(self, values, times):
        """sum_k c_k (t - t_ref)^k at ``times``, m/s."""
        return sum(values[name] * column for name, column in self.columns(times).items())

    def columns(self, times):
        """Design column of each coefficient at ``times``: {name: (t - t_ref)^k}."""
        dt = np.asarray(times, dtype=float) - self.reference_bjd
        return {c.name: dt**power for power, c in enumerate(self.coefficients, 1)}


@TRENDS.register(schema.QuadraticTrendBlock)
class QuadraticTrend(LinearTrend):
    """c_1 (t - t_ref) + c_2 (t - t_ref)^2."""

    def __init__(self, block, rv_times):
        super().__init__(block, rv_times)
        self.coefficients.append(
            Parameter(
                "rv_trend",
                "curvature_ms_per_day2",
                block.curvature_ms_per_day2,
                DATASET["curvature_ms_per_day2"],
                linear=True,
            )
        )
