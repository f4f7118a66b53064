"""Which component class a config block builds, and every family of them.

The schema (:mod:`planetfit.inputs.schema`) decodes the config's words into
block classes; each component family maps those classes to the component
that implements them. This is the only place a block's kind decides code.
"""

from planetfit.fitting.components import base
from planetfit.fitting.components.baselines import BASELINES
from planetfit.fitting.components.gp import KERNELS
from planetfit.fitting.components.orbits import ORBITS
from planetfit.fitting.components.photometry import DILUTIONS, JITTERS
from planetfit.fitting.components.stability import STABILITY_PRIORS
from planetfit.fitting.components.transit import LIMB_DARKENING
from planetfit.fitting.components.velocity import TRENDS

#: Every component family: {name: (its {block class: component class} registry, the Protocol its classes keep)}.
FAMILIES = {
    "kernel": (KERNELS, base.Kernel),
    "orbit": (ORBITS, base.Orbit),
    "limb_darkening": (LIMB_DARKENING, base.LimbDarkening),
    "trend": (TRENDS, base.Trend),
    "baseline": (BASELINES, base.Baseline),
    "jitter": (JITTERS, base.Component),
    "dilution": (DILUTIONS, base.Component),
    "stability_prior": (STABILITY_PRIORS, base.OrbitPrior),
}


def component_for(block, family):
    """The component class ``family`` (a {block class: component class} dict) gives ``block``.

    Raises
    ------
    TypeError
        If no entry matches: a schema variant without a component (a bug, not a user mistake).
    """
    for kind, component in family.items():
        if isinstance(block, kind):
            return component
    raise TypeError(f"no component for {type(block).__name__} among {', '.join(k.__name__ for k in family)}")
