"""Photometric baselines: the out-of-transit flux a dataset's transits are cut into.

Each baseline is linear in its coefficients, flux = basis @ coefficients,
the first basis column being all ones: :attr:`basis` (N, k) is fixed,
:meth:`coefficients` and :meth:`flux` take parameter values. A dataset
whose variability is a Gaussian process has a constant baseline; the
process is its noise model (:mod:`planetfit.fitting.components.gp`).

The flux level F0 multiplies the whole model, so it enters the mean
linearly: :meth:`columns` gives its column (the baseline at unit level),
which the likelihood multiplies by the transmitted fraction. The slope of
:class:`LinearBaseline` and the regressor coefficients of
:class:`RegressorBaseline` do not: F0 s is linear, but a prior on s is not
a prior on F0 s, so they stay sampled parameters and the prior the config
gives them keeps its meaning. The coefficients of
:class:`PolynomialBaseline` are added to F0, not multiplied by it, so each
is linear with its own prior, and all are marginalised. Times are days
from the middle of the dataset's span (:func:`days_from_middle`).
"""

import numpy as np

from planetfit.core.quantities import DATASET, regressor_quantity, time_power_quantity
from planetfit.fitting.components.base import BASELINES
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema


def days_from_middle(times):
    """Days from the middle of the dataset's time span (the first and last times)."""
    return times - 0.5 * (times[0] + times[-1])


@BASELINES.register(schema.PhotometryBlock)
class ConstantBaseline:
    """One flux level F0 for the whole dataset."""

    def __init__(self, block, data):
        self.level = Parameter(block.name, "flux_level", block.flux_level, DATASET["flux_level"], linear=True)
        self.parameters = [self.level]
        self.basis = np.ones((np.size(data.time), 1))

    def coefficients(self, values):
        return [values[self.level.name]]

    def flux(self, values):
        return values[self.level.name]

    def columns(self, values):
        """Design column of each linear parameter: {name: the baseline at unit level (scalar or (N,))}."""
        return {self.level.name: 1.0}


@BASELINES.register(schema.LinearBaselineBlock)
class LinearBaseline(ConstantBaseline):
    """F0 [1 + s (t - t_mid)], with t_mid the middle of the dataset's time span."""

    def __init__(self, block, data):
        super().__init__(block, data)
        self.slope = Parameter(block.name, "slope_per_day", block.slope_per_day, DATASET["slope_per_day"])
        self.parameters = [self.level, self.slope]
        self.dt_days = days_from_middle(data.time)
        self.basis = np.column_stack([np.ones(self.dt_days.size), self.dt_days])

    def coefficients(self, values):
        level = values[self.level.name]
        return [level, level * values[self.slope.name]]

    def flux(self, values):
        return values[self.level.name] * self.columns(values)[self.level.name]

    def columns(self, values):
        return {self.level.name: 1 + values[self.slope.name] * self.dt_days}


@BASELINES.register(schema.PolynomialBaselineBlock)
class PolynomialBaseline(ConstantBaseline):
    """F0 + sum_k a_k dt^k, k = 1 to the block's degree: the basis is 1, dt, ..., dt^degree, every coefficient
    a linear parameter whose column is its basis column."""

    def __init__(self, block, data):
        super().__init__(block, data)
        prior = block.polynomial_coefficient
        self.powers = [
            Parameter(block.name, f"time_power_{k}", prior, time_power_quantity(k), linear=True)
            for k in range(1, block.degree + 1)
        ]
        self.parameters = [self.level, *self.powers]
        self.basis = days_from_middle(data.time)[:, None] ** np.arange(block.degree + 1)

    def coefficients(self, values):
        return [values[p.name] for p in self.parameters]

    def flux(self, values):
        return sum(values[p.name] * column for p, column in zip(self.parameters, self.basis.T))

    def columns(self, values):
        return {p.name: column for p, column in zip(self.parameters, self.basis.T)}


@BASELINES.register(schema.RegressorBaselineBlock)
class RegressorBaseline(ConstantBaseline):
    """F0 (1 + sum_j c_j z_j + sum_k p_k dt^k) for ground-based light curves.

    z_j is regressor j (airmass, seeing, centroid, ...) standardised over the
    dataset (mean removed, divided by its standard deviation), dt the time
    from the middle of the span in days. The coefficients c_j and p_k are
    sampled (see the module's note); the level F0 is linear.
    """

    def __init__(self, block, data):
        super().__init__(block, data)
        spec, name = block.baseline, block.name
        columns = [np.asarray(data.regressors[c], dtype=float) for c in spec.regressors]
        z = [(x - x.mean()) / (x.std() if x.std() > 0 else 1.0) for x in columns]
        dt = days_from_middle(data.time)
        self.terms = z + [dt**k for k in range(1, spec.time_degree + 1)]
        self.coefficient_parameters = [
            Parameter(name, f"regressor_{c}", spec.coefficient, regressor_quantity(c)) for c in spec.regressors
        ] + [
            Parameter(name, f"time_power_{k}", spec.coefficient, time_power_quantity(k))
            for k in range(1, spec.time_degree + 1)
        ]
        self.parameters = [self.level, *self.coefficient_parameters]
        self.basis = np.column_stack([np.ones(dt.size), *self.terms])

    def coefficients(self, values):
        level = values[self.level.name]
        return [level] + [level * values[p.name] for p in self.coefficient_parameters]

    def trend(self, values):
        """The relative trend 1 + sum of the terms (without the level), at the dataset's times."""
        return 1 + sum(values[p.name] * term for p, term in zip(self.coefficient_parameters, self.terms))

    def flux(self, values):
        return values[self.level.name] * self.trend(values)

    def columns(self, values):
        return {self.level.name: self.trend(values)}
