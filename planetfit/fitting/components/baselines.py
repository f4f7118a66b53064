"""Photometric baselines: the out-of-transit flux a dataset's transits are cut into.

Each baseline is linear in its coefficients, flux = basis @ coefficients,
the first basis column being all ones: :attr:`basis` (N, k) is fixed,
:meth:`coefficients` and :meth:`flux` take parameter values. A dataset
whose variability is a Gaussian process has a constant baseline; the
process is its noise model (:mod:`planetfit.fitting.components.gp`).

The flux level F0 multiplies the whole model, so it enters the mean
linearly: :meth:`columns` gives its column (the baseline at unit level),
which the likelihood multiplies by the transmitted fraction. The slope of
:class:`LinearBaseline` does not: F0 s is linear, but a prior on s is not a
prior on F0 s, so the slope stays a sampled parameter and the prior the
config gives it keeps its meaning.
"""

import numpy as np

from planetfit.core.quantities import DATASET
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema


class ConstantBaseline:
    """One flux level F0 for the whole dataset."""

    def __init__(self, block, times):
        self.level = Parameter(block.name, "flux_level", block.flux_level, DATASET["flux_level"], linear=True)
        self.parameters = [self.level]
        self.basis = np.ones((np.size(times), 1))

    def coefficients(self, values):
        return [values[self.level.name]]

    def flux(self, values):
        return values[self.level.name]

    def columns(self, values):
        """Design column of each linear parameter: {name: the baseline at unit level (scalar or (N,))}."""
        return {self.level.name: 1.0}


class LinearBaseline(ConstantBaseline):
    """F0 [1 + s (t - t_mid)], with t_mid the middle of the dataset's time span."""

    def __init__(self, block, times):
        super().__init__(block, times)
        self.slope = Parameter(block.name, "slope_per_day", block.slope_per_day, DATASET["slope_per_day"])
        self.parameters = [self.level, self.slope]
        self.dt_days = times - 0.5 * (times[0] + times[-1])
        self.basis = np.column_stack([np.ones(self.dt_days.size), self.dt_days])

    def coefficients(self, values):
        level = values[self.level.name]
        return [level, level * values[self.slope.name]]

    def flux(self, values):
        return values[self.level.name] * self.columns(values)[self.level.name]

    def columns(self, values):
        return {self.level.name: 1 + values[self.slope.name] * self.dt_days}


BASELINES = {schema.LinearBaseline: LinearBaseline, schema.Photometry: ConstantBaseline}
