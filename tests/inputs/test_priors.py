"""Priors against scipy.stats: densities, the log-uniform Jacobian, truncation, inverse CDFs, geometry."""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from planetfit.inputs.priors import Fixed, LogUniform, Normal, TruncNormal, Uniform, make_prior

CASES = [
    (Uniform(1.0, 3.0), stats.uniform(1.0, 2.0)),
    (LogUniform(0.1, 10.0), stats.loguniform(0.1, 10.0)),
    (Normal(2.0, 0.5), stats.norm(2.0, 0.5)),
    (TruncNormal(0.45, 0.1, 0.0, 1.0), stats.truncnorm(-4.5, 5.5, loc=0.45, scale=0.1)),
    (TruncNormal(0.0, 1.0, 0.5, 3.0), stats.truncnorm(0.5, 3.0)),  # mostly cut away: the normalisation matters
]


@pytest.mark.parametrize("prior, reference", CASES)
def test_density_and_inverse_cdf_equal_scipy(prior, reference):
    # source: scipy.stats, the reference implementation of each distribution
    x = reference.ppf(np.linspace(0.01, 0.99, 25))
    assert [prior.log_density(v) for v in x] == pytest.approx(reference.logpdf(x), abs=1e-10)
    u = np.linspace(0.0, 1.0, 11)[1:-1]
    assert prior.from_unit(u) == pytest.approx(reference.ppf(u), rel=1e-10)


@pytest.mark.parametrize("prior, reference", CASES)
def test_draws_follow_the_distribution(prior, reference):
    draws = prior.sample(np.random.default_rng(2), 20000)
    # source: Kolmogorov-Smirnov test against scipy's CDF (scipy.stats.kstest)
    assert stats.kstest(draws, reference.cdf).pvalue > 1e-3


def test_log_uniform_sampler_coordinate_carries_the_jacobian():
    prior = LogUniform(0.01, 20.0)
    # source: change of variables, p_y(y) = p_x(e^y) e^y for y = ln x; the density in y is flat and integrates to 1
    y = np.linspace(math.log(0.01), math.log(20.0), 7)
    assert [prior.log_density_sampler(v) for v in y] == pytest.approx(
        [prior.log_density(math.exp(v)) + v for v in y], abs=1e-12
    )
    total, _ = integrate.quad(lambda v: math.exp(prior.log_density_sampler(v)), math.log(0.01), math.log(20.0))
    assert total == pytest.approx(1.0, abs=1e-9)


def test_geometry_centre_and_span_cover_the_prior():
    # common practice, no published source: the optimiser starts at the centre, the transit windows cover the span
    assert LogUniform(0.1, 10.0).centre == pytest.approx(1.0)  # geometric mean: the middle in ln x
    assert Normal(5.0, 2.0).span == (-1.0, 11.0)
    prior = LogUniform(1.0, 100.0)
    lo, hi = prior.span
    assert prior.centre - prior.half_width <= lo and hi <= prior.centre + prior.half_width
    assert prior.sampler_label("b.jitter") == "ln(b.jitter)" and Uniform(0, 1).sampler_label("x") == "x"


@pytest.mark.parametrize(
    "spec, problem",
    [
        ({"uniform": [3, 1]}, "below upper"),
        ({"normal": [1, -1]}, "positive"),
        ({"loguniform": [0, 1]}, "0 < lower"),
        ({"gamma": [1, 2]}, "unknown prior"),
        ({"uniform": [1]}, "2 numbers"),
        (True, "expected"),
    ],
)
def test_bad_spellings_say_what_is_wrong(spec, problem):
    with pytest.raises(ValueError, match=problem):
        make_prior(spec)
    assert make_prior(2.5).value == 2.5 and isinstance(make_prior(2.5), Fixed)


def test_descriptions_keep_the_digits_that_tell_the_bounds_apart():
    # Issue 29: a transit-time prior printed as "U(2.46e+06, 2.46e+06)".
    assert Uniform(2460412.05, 2460412.25).describe() == "U(2460412.05, 2460412.25)"
    assert Normal(2460412.1234, 0.0012).describe() == "N(2460412.1234, 0.0012)"
    assert Fixed(2460412.12345).describe() == "fixed 2460412.12345"
    assert Uniform(0, 1).describe() == "U(0, 1)" and LogUniform(0.01, 20).describe() == "logU(0.01, 20)"
    assert TruncNormal(0.42, 0.1, 0, 1).describe() == "N(0.42, 0.1) in [0, 1]"


def test_messages_cut_long_values_and_name_numbers_yaml_reads_as_text():
    with pytest.raises(ValueError) as err:
        make_prior({"uniform": ["y" * 50_000]})
    assert len(str(err.value)) < 300
    with pytest.raises(ValueError, match=r"write 0.01 or 1.0e-2"):
        make_prior({"uniform": ["1e-2", 5.0]})
