"""Prior distributions: log-density, draws from the prior, support.

Each prior is a small class with the same interface, chosen by the config
spelling (``uniform``, ``normal``, ``loguniform``, ``truncnormal``; a bare
number is :class:`Fixed`). Construction validates the arguments and raises
``ValueError`` with a plain sentence; the config stage adds file and key.
"""

import math
import reprlib

import numpy as np
from scipy import special, stats

from .yamlfile import number_as_text

#: An unbounded normal prior's span: mean +- this many standard deviations.
NORMAL_SPAN_SD = 3.0
#: Least sqrt(y) in the Jacobian 1 / (2 sqrt(y)) of a prior sampled as y = x^2.
ROOT_FLOOR = 1e-6


class Prior:
    """Base class: a one-dimensional prior."""

    fixed = False

    def log_density(self, x):
        """Log prior density at scalar ``x`` (``-inf`` outside the support)."""
        raise NotImplementedError

    def sample(self, rng, size=None):
        """Draw from the prior with numpy Generator ``rng``."""
        raise NotImplementedError

    @property
    def bounds(self):
        """(lower, upper) of the support; infinite where unbounded."""
        return (-math.inf, math.inf)

    def describe(self):
        """Short text form for tables, e.g. ``U(0, 1)``."""
        raise NotImplementedError

    @property
    def span(self):
        """(lower, upper) physical range holding the prior's mass: the support, or mean +- 3 sd if unbounded."""
        return self.bounds

    @property
    def centre(self):
        """The centre of :attr:`span` in the sampler coordinate, as a physical value (geometric mean for ln x)."""
        lo, hi = self.span
        return float(self.from_sampler(0.5 * (self.to_sampler(lo) + self.to_sampler(hi))))

    @property
    def half_width(self):
        """The largest distance from :attr:`centre` to an end of :attr:`span`: centre +- half_width covers it."""
        lo, hi = self.span
        return max(hi - self.centre, self.centre - lo)

    @property
    def sampler_width(self):
        """Width of :attr:`span` in the sampler coordinate (the optimiser's scale)."""
        lo, hi = self.span
        return float(self.to_sampler(hi) - self.to_sampler(lo))

    def sampler_label(self, name):
        """Name of the sampler coordinate of parameter ``name``: ``ln(name)`` where log-transformed."""
        return f"ln({name})" if type(self).to_sampler is not Prior.to_sampler else name

    def from_unit(self, u):
        """Inverse cumulative distribution: the physical value at quantile ``u`` in [0, 1] (arrays too)."""
        raise NotImplementedError

    # The sampler works in its own coordinate y; identity unless a subclass
    # has a better-conditioned one (log for scale parameters).
    def to_sampler(self, x):
        """Sampler coordinate of physical value ``x``."""
        return x

    def from_sampler(self, y):
        """Physical value of sampler coordinate ``y``."""
        return y

    def log_density_sampler(self, y):
        """Log density of the prior in the sampler coordinate (with the Jacobian)."""
        return self.log_density(y)

    def as_config(self):
        """The config spelling of this prior (round-trips through the loader)."""
        raise NotImplementedError


_REPR = reprlib.Repr()
_REPR.maxlevel, _REPR.maxlist, _REPR.maxdict, _REPR.maxstring, _REPR.maxother = 2, 6, 4, 40, 40
#: A user's value as messages show it: nested and long values cut short (a config can hold megabytes).
_short = _REPR.repr


def _texts(scale, *values):
    """``values`` as text with at least 6 significant digits, and enough to show ``scale`` (a width) to two.

    ``U(2460412.05, 2460412.25)``, not ``U(2.46e+06, 2.46e+06)``.
    """
    largest = max((abs(v) for v in values if v), default=1.0)
    digits = 6
    if scale > 0 and math.isfinite(scale):
        digits = max(digits, math.floor(math.log10(largest)) - math.floor(math.log10(scale)) + 2)
    return [f"{v:.{digits}g}" for v in values]


def _finite(*values):
    hints = [h for h in map(number_as_text, values) if h]
    if hints:
        raise ValueError(f"all arguments must be finite numbers; {hints[0]}")
    if not all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in values):
        raise ValueError("all arguments must be finite numbers")


class Fixed(Prior):
    """A parameter held at one value (not sampled)."""

    fixed = True

    def __init__(self, value):
        _finite(value)
        self.value = float(value)

    def log_density(self, x):
        return 0.0 if x == self.value else -math.inf

    def sample(self, rng, size=None):
        return np.full(size, self.value) if size is not None else self.value

    @property
    def bounds(self):
        return (self.value, self.value)

    def describe(self):
        return f"fixed {self.value:.15g}"

    def from_unit(self, u):
        return np.full(np.shape(u), self.value) if np.ndim(u) else self.value

    def as_config(self):
        return self.value


class Uniform(Prior):
    """Uniform density on ``[lo, hi]``."""

    def __init__(self, lo, hi):
        _finite(lo, hi)
        if not lo < hi:
            raise ValueError(f"lower bound {lo} must be below upper bound {hi}")
        self.lo, self.hi = float(lo), float(hi)
        self._logp = -math.log(self.hi - self.lo)

    def log_density(self, x):
        return self._logp if self.lo <= x <= self.hi else -math.inf

    def sample(self, rng, size=None):
        return rng.uniform(self.lo, self.hi, size)

    @property
    def bounds(self):
        return (self.lo, self.hi)

    def describe(self):
        return "U({}, {})".format(*_texts(self.hi - self.lo, self.lo, self.hi))

    def from_unit(self, u):
        return self.lo + np.asarray(u) * (self.hi - self.lo)

    def as_config(self):
        return {"uniform": [self.lo, self.hi]}


class SquaredUniform(Uniform):
    """A uniform prior on ``[lo, hi]``, ``0 <= lo``, sampled as y = x^2 (for the impact parameter).

    A transit's duration depends on the impact parameter b through (1 + k)^2 - b^2 (Seager & Mallen-Ornelas
    2003, ApJ 585, 1038, eq. 3; equation number from memory; Winn 2010 as in core.geometry.transit_duration_days),
    so where the light curve fixes the duration and the ingress only loosely,
    the posterior is close to a Gaussian in b^2 and skewed in b (a tail towards b = 0) -- the curved ridge
    with a/R* that differential evolution and a fitted Gaussian proposal follow badly. The prior stays uniform in
    x: its density in y is 1 / ((hi - lo) 2 sqrt(y)), with sqrt(y) held at :data:`ROOT_FLOOR` or above (keeps it
    finite at b = 0; changes the prior only for x below that floor).
    """

    def __init__(self, lo, hi):
        super().__init__(lo, hi)
        if lo < 0:
            raise ValueError(f"needs a lower bound of 0 or above, got {lo}")

    def to_sampler(self, x):
        return np.square(x)

    def from_sampler(self, y):
        return np.sqrt(np.maximum(y, 0.0))

    def log_density_sampler(self, y):
        if not self.lo**2 <= y <= self.hi**2:
            return -math.inf
        return self._logp - math.log(2 * max(math.sqrt(y), ROOT_FLOOR))

    def sampler_label(self, name):
        return f"{name}^2"


def sampled_squared(prior):
    """``prior`` sampled as x^2 (:class:`SquaredUniform`) if it is uniform and non-negative, else ``prior``."""
    return SquaredUniform(prior.lo, prior.hi) if type(prior) is Uniform and prior.lo >= 0 else prior


class LogUniform(Prior):
    """Density proportional to ``1/x`` on ``[lo, hi]``, ``0 < lo < hi``."""

    def __init__(self, lo, hi):
        _finite(lo, hi)
        if not 0 < lo < hi:
            raise ValueError(f"needs 0 < lower < upper, got [{lo}, {hi}]")
        self.lo, self.hi = float(lo), float(hi)
        self._lognorm = math.log(math.log(self.hi / self.lo))
        self._ylo, self._yhi = math.log(self.lo), math.log(self.hi)

    def log_density(self, x):
        return -math.log(x) - self._lognorm if self.lo <= x <= self.hi else -math.inf

    def sample(self, rng, size=None):
        return np.exp(rng.uniform(math.log(self.lo), math.log(self.hi), size))

    @property
    def bounds(self):
        return (self.lo, self.hi)

    def describe(self):
        return "logU({}, {})".format(*_texts(self.hi - self.lo, self.lo, self.hi))

    def from_unit(self, u):
        return np.exp(self._ylo + np.asarray(u) * (self._yhi - self._ylo))

    # Sampled as y = ln x, where the density is flat: scale parameters such
    # as jitters then mix as well near the lower bound as near the upper.
    def to_sampler(self, x):
        return np.log(x)

    def from_sampler(self, y):
        return np.exp(y)

    def log_density_sampler(self, y):
        return -self._lognorm if self._ylo <= y <= self._yhi else -math.inf

    def as_config(self):
        return {"loguniform": [self.lo, self.hi]}


class Normal(Prior):
    """Gaussian density with mean and standard deviation ``sd > 0``."""

    def __init__(self, mean, sd):
        _finite(mean, sd)
        if not sd > 0:
            raise ValueError(f"standard deviation must be positive, got {sd}")
        self.mean, self.sd = float(mean), float(sd)
        self._lognorm = -0.5 * math.log(2 * math.pi) - math.log(self.sd)

    def log_density(self, x):
        z = (x - self.mean) / self.sd
        return self._lognorm - 0.5 * z * z

    def sample(self, rng, size=None):
        return rng.normal(self.mean, self.sd, size)

    def describe(self):
        return "N({}, {})".format(*_texts(self.sd, self.mean, self.sd))

    @property
    def span(self):
        return (self.mean - NORMAL_SPAN_SD * self.sd, self.mean + NORMAL_SPAN_SD * self.sd)

    def from_unit(self, u):
        return self.mean + self.sd * special.ndtri(u)

    def as_config(self):
        return {"normal": [self.mean, self.sd]}


class TruncNormal(Prior):
    """Gaussian density truncated to ``[lo, hi]``."""

    def __init__(self, mean, sd, lo, hi):
        _finite(mean, sd, lo, hi)
        if not sd > 0:
            raise ValueError(f"standard deviation must be positive, got {sd}")
        if not lo < hi:
            raise ValueError(f"lower bound {lo} must be below upper bound {hi}")
        self.mean, self.sd, self.lo, self.hi = map(float, (mean, sd, lo, hi))
        self._a, self._b = (self.lo - self.mean) / self.sd, (self.hi - self.mean) / self.sd
        mass = special.ndtr(self._b) - special.ndtr(self._a)
        if not mass > 0:
            raise ValueError("the interval holds no probability of the normal distribution")
        self._lognorm = -0.5 * math.log(2 * math.pi) - math.log(self.sd) - math.log(mass)

    def log_density(self, x):
        if not self.lo <= x <= self.hi:
            return -math.inf
        z = (x - self.mean) / self.sd
        return self._lognorm - 0.5 * z * z

    def sample(self, rng, size=None):
        return stats.truncnorm.rvs(self._a, self._b, loc=self.mean, scale=self.sd, size=size, random_state=rng)

    @property
    def bounds(self):
        return (self.lo, self.hi)

    def describe(self):
        return "N({}, {}) in [{}, {}]".format(
            *_texts(min(self.sd, self.hi - self.lo), self.mean, self.sd, self.lo, self.hi)
        )

    def from_unit(self, u):
        lo, hi = special.ndtr(self._a), special.ndtr(self._b)
        return np.clip(self.mean + self.sd * special.ndtri(lo + np.asarray(u) * (hi - lo)), self.lo, self.hi)

    def as_config(self):
        return {"truncnormal": [self.mean, self.sd, self.lo, self.hi]}


#: Config spelling -> (class, number of arguments).
PRIOR_KINDS = {
    "uniform": (Uniform, 2),
    "normal": (Normal, 2),
    "loguniform": (LogUniform, 2),
    "truncnormal": (TruncNormal, 4),
}


def make_prior(spec):
    """Build a prior from its config form.

    Parameters
    ----------
    spec : float or dict
        A bare number (fixed) or a one-key mapping such as
        ``{"uniform": [lo, hi]}``.

    Returns
    -------
    Prior

    Raises
    ------
    ValueError
        With a sentence saying what is wrong and the accepted forms.
    """
    forms = "a number (fixed) or one of " + ", ".join(f"{{{k}: [{n} numbers]}}" for k, (_, n) in PRIOR_KINDS.items())
    if isinstance(spec, bool):
        raise ValueError(f"expected {forms}, got {_short(spec)}")
    if isinstance(spec, (int, float)):
        return Fixed(spec)
    if not isinstance(spec, dict) or len(spec) != 1:
        raise ValueError(f"expected {forms}, got {_short(spec)}")
    ((kind, args),) = spec.items()
    if kind not in PRIOR_KINDS:
        raise ValueError(f"unknown prior {_short(kind)}; expected {forms}")
    cls, nargs = PRIOR_KINDS[kind]
    if not isinstance(args, (list, tuple)) or len(args) != nargs:
        raise ValueError(f"{_short(kind)} takes a list of {nargs} numbers, got {_short(args)}")
    return cls(*args)
