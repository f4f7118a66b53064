"""One contract over every registered component of every family, built from each class's example config block.

A new variant adds its row to ``EXAMPLES``; a registered class without a row fails
``test_every_registered_class_has_an_example``.
"""

import types

import numpy as np
import pytest
from synthetic import tiny_log_prob

from planetfit.core.quantities import DATASET
from planetfit.fitting.components import base
from planetfit.fitting.components.planets import Planet, Star
from planetfit.fitting.components.registry import FAMILIES
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema
from planetfit.inputs.priors import Prior
from planetfit.inputs.schema import planets as planet_schema

# common practice, no published source: the contract checks software properties (parameters declared once with a
# prior, a label and a unit, the family's Protocol, batch evaluation equal to one-by-one evaluation, shapes); the
# kernels' checks (k(0) > 0, |k(tau)| <= k(0)) hold for any stationary covariance function, no published values.
N_POINTS, N_WALKERS = 40, 5
TIMES = np.linspace(2460000.0, 2460030.0, N_POINTS)
#: Unit endings of parameter keys (a key whose quantity has a unit names it).
UNIT_ENDINGS = ("_ppm", "_days", "_ms", "_per_day", "_ms_per_day", "_ms_per_day2", "_bjd", "_deg")
#: Baseline coefficients whose unit follows from their regressor or power, stated in their quantity, not their key.
UNIT_IN_QUANTITY_ONLY = ("regressor_", "time_power_")

_PHOT = {"name": "d", "file": "d.csv", "exposure_min": 2.0}
_PLANET = {"period_days": 3.0, "transit_bjd": 2460001.0, "radius_ratio": 0.1, "impact": 0.3}
#: A Hill-stability prior's system: a transiting planet and one seen only in RVs at a period ratio of 1.2, their
#: semi-amplitudes spanning masses that pass and fail the criterion.
_STAR = {"mass_msun": {"normal": [1.0, 0.05]}, "radius_rsun": {"normal": [1.0, 0.05]}, "teff_k": 5800}
_K = {"loguniform": [0.1, 1000]}
_PAIR = {
    "b": (planet_schema.TransitingCircular, dict(_PLANET, rv_amplitude_ms=_K)),
    "c": (
        planet_schema.RvOnlyCircular,
        {"transits": False, "period_days": 3.6, "transit_bjd": 2460001.5, "rv_amplitude_ms": _K},
    ),
}
#: (family, block class) -> raw config block, validated by that class (the real pydantic schema).
EXAMPLES = {
    ("kernel", schema.OscillatorGP): dict(_PHOT, baseline="gp", gp_kernel="sho"),
    ("kernel", schema.Matern32GP): dict(_PHOT, baseline="gp", gp_kernel="matern32"),
    ("kernel", schema.RotationGP): dict(
        _PHOT, baseline="gp", gp_kernel="rotation", gp_period_days={"uniform": [5, 15]}
    ),
    ("orbit", schema.CircularKeys): dict(_PLANET, orbit="circular"),
    ("orbit", schema.EccentricKeys): dict(_PLANET, orbit="eccentric"),
    ("limb_darkening", schema.QuadraticLaw): {},
    ("trend", schema.LinearTrendBlock): {"kind": "linear"},
    ("trend", schema.QuadraticTrendBlock): {"kind": "quadratic"},
    ("baseline", schema.PhotometryBlock): dict(_PHOT),
    ("baseline", schema.LinearBaselineBlock): dict(_PHOT, baseline="linear"),
    ("baseline", schema.PolynomialBaselineBlock): dict(_PHOT, baseline="polynomial", degree=3),
    ("baseline", schema.RegressorBaselineBlock): dict(_PHOT, baseline={"regressors": ["airmass"], "time_degree": 2}),
    ("jitter", schema.PhotometryBlock): dict(_PHOT, jitter_ppm={"loguniform": [1, 1000]}),
    ("dilution", schema.PhotometryBlock): dict(_PHOT, dilution={"uniform": [0, 0.2]}),
    ("stability_prior", schema.Dynamics): {"stability_prior": "hill"},
}
#: Block classes that are mixins of a full block: the full class the example validates as.
FULL_CLASS = {
    schema.CircularKeys: planet_schema.TransitingCircular,
    schema.EccentricKeys: planet_schema.TransitingEccentric,
}


def _block(family, kind):
    block = FULL_CLASS.get(kind, kind).model_validate(EXAMPLES[family, kind])
    if isinstance(block, planet_schema.PlanetBlock):
        block._name = "b"
    return block


def _build(family, component, block):
    """The component as the model builds it for ``block``."""
    if family == "limb_darkening":
        photometry = schema.PhotometryBlock.model_validate(_PHOT)
        return component("band", photometry.limb_darkening_q1, photometry.limb_darkening_q2)
    if family == "trend":
        return component(block, TIMES)
    if family == "baseline":
        rng = np.random.default_rng(1)
        return component(block, types.SimpleNamespace(time=TIMES, regressors={"airmass": rng.uniform(1, 2, N_POINTS)}))
    if family == "stability_prior":
        planets = []
        for name, (kind, raw) in _PAIR.items():
            planet = kind.model_validate(raw)
            planet._name = name
            planets.append(Planet(planet))
        return component(planets, Star(schema.StarBlock.model_validate(_STAR)))
    return component(block)


def _rows():
    return [(f, kind, comp) for f, (registry, _) in FAMILIES.items() for kind, comp in registry.items()]


def _values(component, rng, walkers=None):
    """Parameter values drawn from each prior: floats, or (walkers, 1) arrays."""
    size = None if walkers is None else (walkers, 1)
    return {p.name: p.prior.sample(rng, size) for p in component.parameters}


def check_parameters(component):
    """Every parameter declared in full, none twice."""
    names = [p.name for p in component.parameters]
    assert len(names) == len(set(names)), f"a parameter declared twice: {names}"
    for p in component.parameters:
        assert isinstance(p, Parameter), p
        assert p.owner and p.key, p
        assert isinstance(p.prior, Prior), p
        assert p.quantity.label, p
        if p.quantity.unit_text and not p.key.startswith(UNIT_IN_QUANTITY_ONLY):
            assert p.key.endswith(UNIT_ENDINGS), f"{p.key} has unit {p.quantity.unit_text} but its key names none"


def check_orbit_prior(prior, rng, walkers=40):
    """A batch's verdicts equal the walkers' one by one, and the example system has both."""
    many = {p.name: p.prior.sample(rng, walkers) for body in (prior.star, *prior.planets) for p in body.parameters}
    batch = prior.allowed(many, {p.name: p.solve(many, prior.star) for p in prior.planets})
    assert batch.shape == (walkers,) and batch.any() and not batch.all(), batch
    for w in range(walkers):
        one = {name: x[w] for name, x in many.items()}
        assert prior.allowed(one, {p.name: p.solve(one, prior.star) for p in prior.planets}) == batch[w]


def check_evaluation(family, component, rng):
    """Batch evaluation equals one by one; shapes are right."""
    if family in ("jitter", "dilution"):
        return  # parameters only: the noise models and likelihoods use them (tests/fitting/test_log_probability.py)
    if family == "stability_prior":
        check_orbit_prior(component, rng)
        return
    values = _values(component, rng)
    if family == "kernel":
        tau = np.linspace(0.0, 5.0, 7)
        term = component.term(values)
        k = term.get_value(tau)
        assert k.shape == tau.shape and np.all(np.isfinite(k)) and k[0] > 0
        np.testing.assert_allclose(k, [term.get_value(np.array([t]))[0] for t in tau])
        assert np.all(np.abs(k) <= k[0] * (1 + 1e-12)), "a covariance exceeds the variance"
        return
    if family == "trend":
        v = component.velocity_ms(values, TIMES)
        assert v.shape == TIMES.shape
        np.testing.assert_allclose(v, [component.velocity_ms(values, TIMES[i : i + 1])[0] for i in range(N_POINTS)])
        return
    many = _values(component, rng, N_WALKERS)
    one = [{n: x[w, 0] for n, x in many.items()} for w in range(N_WALKERS)]
    if family == "baseline":
        batch = np.broadcast_to(component.flux(many), (N_WALKERS, N_POINTS))
        np.testing.assert_allclose(batch, [np.broadcast_to(component.flux(v), N_POINTS) for v in one])
        for v in one:
            basis_flux = component.basis @ np.asarray(component.coefficients(v), dtype=float)
            np.testing.assert_allclose(basis_flux, np.broadcast_to(component.flux(v), N_POINTS))
        return
    method = component.shape if family == "orbit" else component.coefficients
    batch = [np.broadcast_to(x, (N_WALKERS, 1)) for x in method(many)]
    for w, v in enumerate(one):
        np.testing.assert_allclose([b[w, 0] for b in batch], method(v))


def test_every_registered_class_has_an_example():
    missing = [(f, k.__name__) for f, k, _ in _rows() if (f, k) not in EXAMPLES]
    assert not missing, f"registered without an example block in EXAMPLES: {missing}"


@pytest.mark.parametrize("family,kind,component", _rows(), ids=lambda x: getattr(x, "__name__", x))
def test_component_contract(family, kind, component):
    check_component(family, kind, component)


def check_component(family, kind, component):
    """The whole contract for one registered (block class, component class) row."""
    built = _build(family, component, _block(family, kind))
    assert isinstance(built, FAMILIES[family][1]), f"{component.__name__} breaks the {family} Protocol"
    assert isinstance(built, base.Component)
    check_parameters(built)
    check_evaluation(family, built, np.random.default_rng(7))


class _BrokenTrend:
    """A deliberately broken trend: one parameter declared twice, batch and one-by-one disagree."""

    def __init__(self, block, rv_times):
        slope = Parameter("rv_trend", "slope_ms_per_day", block.slope_ms_per_day, DATASET["slope_ms_per_day"])
        self.parameters = [slope, slope]

    def velocity_ms(self, values, times):
        return np.full(times.size, float(times.size))


class _NoTerm:
    """A kernel without ``term``: breaks the Protocol."""

    parameters = []


def test_contract_fails_on_broken_components():
    with pytest.raises(AssertionError, match="declared twice"):
        check_component("trend", schema.LinearTrendBlock, _BrokenTrend)
    broken = _BrokenTrend(_block("trend", schema.LinearTrendBlock), TIMES)
    assert isinstance(broken, base.Trend)
    with pytest.raises(AssertionError):
        check_evaluation("trend", broken, np.random.default_rng(7))
    assert not isinstance(_NoTerm(), base.Kernel)


def test_built_models_keep_the_flux_term_and_noise_protocols(tmp_path):
    # Terms and noise models are built per dataset by the model, not registered: check them as built.
    log_prob = tiny_log_prob(tmp_path, baseline="gp", gp_kernel="rotation", gp_period_days={"uniform": [1, 10]})
    white = tiny_log_prob(tmp_path / "white")
    for model in [*log_prob.model.photometry, *white.model.photometry]:
        assert model.terms and all(isinstance(t, base.FluxTerm) for t in model.terms)
        assert isinstance(model.noise, base.NoiseModel)
    assert isinstance(log_prob.model.photometry[0].noise.kernel, base.Kernel)
    assert isinstance(white.model.velocity.noise, base.NoiseModel)
