"""Which component class a config block builds, and every family of them.

The schema (:mod:`planetfit.inputs.schema`) decodes the config's words into
block classes; each component registers for the block class it implements
(:meth:`~planetfit.fitting.components.base.Family.register`), which builds
its family's {block class: component class} mapping. This is the only place
a block's kind decides code.
"""

from planetfit.fitting.components import base, baselines, gp, orbits, photometry, stability, transit, velocity

#: The modules whose component classes register themselves in the families (imported here so every family is full).
MODULES = (baselines, gp, orbits, photometry, stability, transit, velocity)

#: Every component family: {name: (its {block class: component class} registry, the Protocol its classes keep)}.
FAMILIES = {family.name: (family, family.protocol) for family in base.FAMILIES}


def component_for(block, family):
    """The component class ``family`` (a {block class: component class} mapping) gives ``block``.

    The most derived registered class among the block's classes decides
    (a linear-baseline block is also a photometry block: its own entry wins).

    Raises
    ------
    TypeError
        If no entry matches: a schema variant without a component (a bug, not a user mistake).
    """
    for kind in type(block).__mro__:
        if kind in family:
            return family[kind]
    raise TypeError(f"no component for {type(block).__name__} among {', '.join(k.__name__ for k in family)}")
