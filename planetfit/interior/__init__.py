"""Interior structure: cold equations of state, a three-layer structure solver,
the shipped mass–radius grid and the composition verdict.

Modules: :mod:`~planetfit.interior.eos` (equations of state, with sources),
:mod:`~planetfit.interior.structure` (hydrostatic solver),
:mod:`~planetfit.interior.grid` (grid, reference curves, regeneration command
``python -m planetfit.interior.grid``), :mod:`~planetfit.interior.composition`
(verdict from samples).
"""

from planetfit.interior.composition import ASSUMPTIONS, composition, quick_verdict
from planetfit.interior.grid import (REFERENCE_CURVES, load_grid, reference_curve,
                                     reference_radius_earth)
from planetfit.interior.structure import Structure, solve_structure

__all__ = [
    "ASSUMPTIONS", "REFERENCE_CURVES", "Structure", "composition", "load_grid",
    "quick_verdict", "reference_curve", "reference_radius_earth", "solve_structure",
]
