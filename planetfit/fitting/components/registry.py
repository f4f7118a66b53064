"""Which component class a config block builds.

The schema (:mod:`planetfit.inputs.schema`) decodes the config's words into
block classes; each component family maps those classes to the component
that implements them. This is the only place a block's kind decides code.
"""


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
