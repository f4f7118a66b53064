"""The information new RVs carry: the RV model's derivatives at one parameter set and the noise covariance.

For Gaussian noise of covariance C, RVs at times t_1..t_N measure the
parameters theta of the mean model v(t; theta) with the Fisher information
F = J^T C^-1 J, J_ij = dv(t_i) / dtheta_j (Tegmark, Taylor & Heavens 1997,
ApJ 480, 22, for a covariance that does not depend on theta); for a model
linear in theta it is exact. Added to the precision of the existing posterior, it
gives the expected posterior covariance after the new RVs.

The derivatives are central differences in standardised coordinates
z = (x - centre) / scale, scale being the posterior standard deviation of
each parameter, so one step size suits every parameter.
"""

import numpy as np
from scipy.linalg import solve_triangular

from planetfit.context.derived import planet_quantities
from planetfit.fitting.keplerian import periastron_bjd, radial_velocity_ms

#: Central-difference step in posterior standard deviations. # common practice, no published source
STEP_Z = 1e-3


def velocity_ms(model, values, times):
    """Every planet's Keplerian plus the run's trend (m/s) at ``times``, for one parameter set (floats)."""
    total = np.zeros(np.size(times))
    for p in model.planets:
        e, w = p.orbit.shape(values)
        per, t0 = values[p.period.name], values[p.transit_time.name]
        total += radial_velocity_ms(times, per, periastron_bjd(t0, per, e, w), e, w, values[p.amplitude.name])
    if model.velocity is not None and model.velocity.trend is not None:
        total += model.velocity.trend.velocity_ms(values, times)
    return total


def perturbed(values, names, scale):
    """The parameter set with each of ``names`` moved by +-STEP_Z sd: arrays of length 2d, rows (+j, -j)."""
    d = len(names)
    out = dict(values)
    for j, name in enumerate(names):
        column = np.full(2 * d, float(values[name]))
        column[2 * j] += STEP_Z * scale[j]
        column[2 * j + 1] -= STEP_Z * scale[j]
        out[name] = column
    return out


def _row(values, k):
    return {n: (v[k] if np.ndim(v) else v) for n, v in values.items()}


def velocity_jacobian(model, moved, names, times):
    """dv(t_i) / dz_j (m/s per sd) from :func:`perturbed` values, plus a last column of ones (the new offset)."""
    d = len(names)
    rows = [velocity_ms(model, _row(moved, k), times) for k in range(2 * d)]
    jac = np.empty((np.size(times), d + 1))
    for j in range(d):
        jac[:, j] = (rows[2 * j] - rows[2 * j + 1]) / (2 * STEP_Z)
    jac[:, d] = 1.0
    return jac


def mass_radius_gradients(planet, star, moved, names):
    """d(mass_earth)/dz and d(radius_earth)/dz (radius None for a planet that does not transit)."""
    q = planet_quantities(planet, star, moved)
    d = len(names)

    def gradient(x):
        x = np.broadcast_to(x, (2 * d,))
        return np.append((x[0::2] - x[1::2]) / (2 * STEP_Z), 0.0)

    return gradient(q["mass_earth"]), (gradient(q["radius_earth"]) if "radius_earth" in q else None)


class PlannedRvNoise:
    """Covariance of the new RVs: white (error^2 + jitter^2) plus, optionally, the run's activity process.

    Parameters
    ----------
    error_ms, jitter_ms : float
    activity : (celerite2 term, float) or None
        The activity kernel of unit amplitude and the new spectrograph's amplitude (m/s).
    """

    def __init__(self, error_ms, jitter_ms, activity=None):
        self.white = error_ms**2 + jitter_ms**2
        self.activity = activity

    def covariance(self, times):
        cov = np.diag(np.full(np.size(times), self.white))
        if self.activity is not None:
            term, amplitude = self.activity
            cov += amplitude**2 * term.get_value(np.abs(times[:, None] - times[None, :]))
        return cov


def whitened(jac, cov):
    """L^-1 J for the Cholesky factor L of C (L L^T = C).

    The information of the first n RVs is F_n = W_n^T W_n with W_n the first
    n rows (the factor of a leading block of C is the leading block of L),
    and noise simulated as eps = L u, u standard normal, scores as W_n^T u_n.
    """
    diagonal = np.diag(cov)
    if np.count_nonzero(cov - np.diag(diagonal)) == 0:
        return jac / np.sqrt(diagonal)[:, None]
    return solve_triangular(np.linalg.cholesky(cov), jac, lower=True)
