"""Radial-velocity terms besides the planets: a long-term trend and activity decorrelation."""

import numpy as np


class PolynomialTrend:
    """Trend sum_k c_k (t - t_ref)^k, k = 1 .. order, for a long-period companion.

    Parameters
    ----------
    coefficient_names : list of str
        Parameter names of c_1 (m/s/day), c_2 (m/s/day^2), ...
    reference_bjd : float
        t_ref; the offsets absorb the constant term.
    """

    def __init__(self, coefficient_names, reference_bjd):
        self.names = list(coefficient_names)
        self.reference_bjd = float(reference_bjd)

    def velocity_ms(self, values, times):
        dt = times - self.reference_bjd
        total = np.zeros(dt.size)
        for power, name in enumerate(self.names, 1):
            total += values[name] * dt**power
        return total


class LinearDecorrelation:
    """One spectrograph's RV part linear in its activity indicators: sum_j c_j (x_j - median x_j).

    Parameters
    ----------
    coefficient_names : list of str
        One coefficient (m/s per unit of the indicator) per indicator.
    indicators : list of ndarray
        Centred indicator values at the spectrograph's times.
    """

    def __init__(self, coefficient_names, indicators):
        self.names = list(coefficient_names)
        self.indicators = [np.asarray(x, dtype=float) for x in indicators]

    def velocity_ms(self, values):
        total = 0.0
        for name, x in zip(self.names, self.indicators):
            total = total + values[name] * x
        return total
