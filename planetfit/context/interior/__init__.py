"""Interior structure: cold equations of state, a three-layer structure solver,
the shipped mass–radius grid, warm water layers and the composition verdict.

Modules: :mod:`~planetfit.context.interior.eos` (equations of state, with sources),
:mod:`~planetfit.context.interior.warm` (when water stays condensed; warm water worlds),
:mod:`~planetfit.context.interior.structure` (hydrostatic solver),
:mod:`~planetfit.context.interior.grid` (grid, reference curves, regeneration command
``python -m planetfit.context.interior.grid``), :mod:`~planetfit.context.interior.composition`
(verdict from samples).
"""

from planetfit.context.interior.composition import ASSUMPTIONS, composition, quick_verdict
from planetfit.context.interior.grid import REFERENCE_CURVES, load_grid, reference_curve, reference_radius_earth
from planetfit.context.interior.structure import Structure, solve_structure

__all__ = [
    "ASSUMPTIONS",
    "REFERENCE_CURVES",
    "Structure",
    "composition",
    "load_grid",
    "quick_verdict",
    "reference_curve",
    "reference_radius_earth",
    "solve_structure",
]
