"""The interfaces every component family keeps, written down as Protocols.

Components are plain classes: they conform by having the attributes and
methods named here, not by inheriting (``isinstance`` checks presence only,
:func:`typing.runtime_checkable`). The contract test
(tests/fitting/test_components_contract.py) checks behaviour over every
registered class: parameters declared once, batch equals one by one, shapes.
"""

from typing import Protocol, runtime_checkable


@runtime_checkable
class Component(Protocol):
    """Anything that declares fitted parameters: a list of :class:`~planetfit.fitting.parameters.Parameter`."""

    parameters: list


@runtime_checkable
class FluxTerm(Protocol):
    """A photometric term: the flux one planet removes from a dataset.

    ``deficit(values, orbit)`` returns (indices, 1 - flux there) or None;
    ``sparse`` says whether it touches only some points (transit windows).
    """

    sparse: bool

    def deficit(self, values, orbit): ...


@runtime_checkable
class NoiseModel(Protocol):
    """A likelihood of residuals: white noise or a Gaussian process."""

    parameters: list
    correlated: bool

    def log_likelihood_many(self, residuals, values_list): ...

    def gram_many(self, stacks, values_list): ...

    def predict(self, residual, values): ...


@runtime_checkable
class Kernel(Protocol):
    """A GP kernel: declared parameters and the celerite2 term for one set of values."""

    parameters: list

    def term(self, values): ...


@runtime_checkable
class Orbit(Protocol):
    """An orbit's shape: (e, omega_rad) of parameter values and which eccentricities are allowed."""

    parameters: list
    eccentric: bool

    def shape(self, values): ...

    def allowed(self, e): ...


@runtime_checkable
class LimbDarkening(Protocol):
    """A band's limb-darkening law: its coefficients of parameter values."""

    parameters: list

    def coefficients(self, values): ...


@runtime_checkable
class Trend(Protocol):
    """A radial-velocity trend: m/s at given times."""

    parameters: list

    def velocity_ms(self, values, times): ...


@runtime_checkable
class Baseline(Protocol):
    """A photometric baseline, linear in its coefficients: flux = basis @ coefficients."""

    parameters: list

    def coefficients(self, values): ...

    def flux(self, values): ...

    def columns(self, values): ...


@runtime_checkable
class OrbitPrior(Protocol):
    """A prior on the solved orbits (Hill stability): which parameter values it allows, a boolean per walker."""

    parameters: list

    def allowed(self, values, orbits): ...


class Family(dict):
    """One family of components: {schema block class: the component class that implements it}.

    A component states the block class it implements once, by registering
    (``@BASELINES.register(schema.LinearBaselineBlock)``); the family is
    built from those declarations, never written out by hand.

    Parameters
    ----------
    name : str
    protocol : type
        The Protocol its classes keep (checked by the contract test).
    """

    def __init__(self, name, protocol):
        super().__init__()
        self.name, self.protocol = name, protocol

    def register(self, block_class):
        """Class decorator: the decorated component implements ``block_class`` (kept as its ``configures``)."""

        def declare(component):
            if block_class in self:
                raise TypeError(f"{block_class.__name__} already has the {self.name} {self[block_class].__name__}")
            component.configures = block_class
            self[block_class] = component
            return component

        return declare


KERNELS = Family("kernel", Kernel)
ORBITS = Family("orbit", Orbit)
LIMB_DARKENING = Family("limb_darkening", LimbDarkening)
TRENDS = Family("trend", Trend)
BASELINES = Family("baseline", Baseline)
JITTERS = Family("jitter", Component)
DILUTIONS = Family("dilution", Component)
STABILITY_PRIORS = Family("stability_prior", OrbitPrior)
#: Every family, filled when the modules of :mod:`planetfit.fitting.components.registry` are imported.
FAMILIES = (KERNELS, ORBITS, LIMB_DARKENING, TRENDS, BASELINES, JITTERS, DILUTIONS, STABILITY_PRIORS)
