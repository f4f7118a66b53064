"""The ``dynamics`` block: how the orbital stability of a multi-planet posterior is judged."""

from typing import Literal

from .base import Block
from .fields import Count, PositiveNumber


class Dynamics(Block):
    """Stability checks of multi-planet posteriors.

    ``stability: hill`` (default) applies Gladman's (1993) two-planet Hill
    criterion and the orbit-crossing test to every posterior sample;
    ``stability: nbody`` adds short N-body integrations (rebound, the
    ``dynamics`` extra) of ``nbody_samples`` random samples over
    ``nbody_orbits`` orbits of the outermost planet, each with its MEGNO
    chaos indicator. ``stability_prior: hill`` rejects Hill-unstable
    samples during the fit (a prior that the system be Hill stable).
    """

    stability: Literal["hill", "nbody"] = "hill"
    nbody_orbits: PositiveNumber = 1000.0
    nbody_samples: Count = 200
    stability_prior: Literal["none", "hill"] = "none"

    @property
    def nbody(self):
        """Whether N-body integrations are asked for."""
        return self.stability == "nbody"

    @property
    def hill_prior(self):
        """Whether Hill-unstable samples are rejected as a prior."""
        return self.stability_prior == "hill"
