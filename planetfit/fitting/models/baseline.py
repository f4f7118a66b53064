"""Photometric baselines: the out-of-transit flux a dataset's transits are cut into.

Each baseline is linear in its coefficients: flux = basis @ coefficients,
the first basis column being all ones. A baseline is a small class with
``entries(cfg)`` (its parameters and priors for the layout),
``coefficients(values)``, the fixed ``basis`` (N, k) and ``flux(values)``
(the baseline at the data times, a scalar or an array). ``baseline: gp``
uses the constant baseline with a Gaussian-process noise model
(:mod:`planetfit.fitting.models.gp`).
"""

import numpy as np


class ConstantBaseline:
    """One flux level F0 for the whole dataset."""

    def __init__(self, name, times):
        self.level_name = f"{name}.flux_level"
        self.basis = np.ones((np.size(times), 1))

    @staticmethod
    def entries(cfg):
        return [(f"{cfg.name}.flux_level", cfg.flux_level)]

    def coefficients(self, values):
        return [values[self.level_name]]

    def flux(self, values):
        return values[self.level_name]


class LinearBaseline:
    """F0 [1 + s (t - t_mid)], with t_mid the middle of the dataset's time span."""

    def __init__(self, name, times):
        self.level_name, self.slope_name = f"{name}.flux_level", f"{name}.slope_per_day"
        self.dt_days = times - 0.5 * (times[0] + times[-1])
        self.basis = np.column_stack([np.ones(self.dt_days.size), self.dt_days])

    @staticmethod
    def entries(cfg):
        return [(f"{cfg.name}.flux_level", cfg.flux_level), (f"{cfg.name}.slope_per_day", cfg.slope_per_day)]

    def coefficients(self, values):
        level = values[self.level_name]
        return [level, level * values[self.slope_name]]

    def flux(self, values):
        return values[self.level_name] * (1 + values[self.slope_name] * self.dt_days)


#: The config's ``baseline`` choice -> the mean-flux class.
BASELINES = {"constant": ConstantBaseline, "linear": LinearBaseline, "gp": ConstantBaseline}
