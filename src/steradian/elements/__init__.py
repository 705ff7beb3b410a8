"""Element models: complex vector far field in the element's own frame.

Every model is an :class:`Element`. The design-file reader (:mod:`steradian.io.design`) maps
``[element] model = "..."`` names onto these classes.
"""

from ._base import Element, angles_of, element_power, spherical_basis, unit_vectors
from ._patch import Patch
from ._simple import CosinePower, Dipole, HalfWaveDipole, Isotropic, ShortDipole
from ._table import COLUMNS, GRID_TOL, SAME_TOL, TABLE_KEYS, TabulatedElement, table_grid

__all__ = [
    "Element",
    "Isotropic",
    "CosinePower",
    "Dipole",
    "ShortDipole",
    "HalfWaveDipole",
    "Patch",
    "TabulatedElement",
    "element_power",
    "COLUMNS",
    "TABLE_KEYS",
    "GRID_TOL",
    "SAME_TOL",
    "table_grid",
    "unit_vectors",
    "spherical_basis",
    "angles_of",
]
