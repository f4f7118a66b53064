"""The posterior's own warnings: parameters the data leave at their prior, jitters that swamp the errors."""

import re

import numpy as np

from planetfit.context import diagnostics
from planetfit.core.quantities import DATASET
from planetfit.fitting.parameters import Parameter, ParameterLayout
from planetfit.inputs.priors import LogUniform, Normal, Uniform


def _layout():
    return ParameterLayout(
        [
            Parameter("spec", "offset_ms", Uniform(-50, 50), DATASET["offset_ms"]),
            Parameter("spec", "jitter_ms", LogUniform(0.01, 100.0), DATASET["jitter_ms"]),
            Parameter("star", "mass_msun", Normal(0.9, 0.03), DATASET["offset_ms"]),
        ]
    )


def test_a_posterior_as_wide_as_its_flat_prior_is_called_unconstrained():
    rng = np.random.default_rng(0)
    n = 4000
    # Offset measured to +-1 m/s; ln(jitter) spread over its whole prior; mass as wide as its (informative) prior.
    samples = np.column_stack(
        [rng.normal(3.0, 1.0, n), rng.uniform(np.log(0.01), np.log(100.0), n), rng.normal(0.9, 0.03, n)]
    )
    (warning,) = diagnostics.unconstrained_warnings(_layout(), samples)
    # source: a uniform distribution over width w has standard deviation w / sqrt(12)
    assert re.match(
        r"spec.jitter_ms is not constrained by the data: its posterior is (9[89]|10[0-2])% as wide", warning
    )
    assert "logU(0.01, 100)" in warning


def test_a_jitter_far_above_the_errors_is_called_a_bad_model():
    samples = np.column_stack([np.zeros(100), np.full(100, np.log(40.0)), np.full(100, 0.9)])
    datasets = [("spec", 2.0, "spec.jitter_ms", "m/s")]
    (warning,) = diagnostics.jitter_warnings(_layout(), samples, datasets)
    assert "(40 m/s) is 20 times the median reported error (2 m/s)" in warning
    assert diagnostics.jitter_warnings(_layout(), samples, [("spec", 5.0, "spec.jitter_ms", "m/s")]) == []
