"""Element models: complex vector far field in the element's own frame.

Every model is an :class:`Element`. :data:`ELEMENT_MODELS` maps the design-file names
(``[element] model = "..."``) onto the classes, their keys and builders; the design-file
reader (:mod:`steradian.io.design`) looks models up there.
"""

from ._base import Element, angles_of, element_power, spherical_basis, unit_vectors
from ._patch import Patch
from ._registry import ELEMENT_MODELS, DesignContext, ElementModel
from ._simple import MAX_DIPOLE_WL, CosinePower, Dipole, HalfWaveDipole, Isotropic, ShortDipole
from ._table import COLUMNS, GRID_TOL, SAME_TOL, TABLE_KEYS, TabulatedElement, table_grid

__all__ = [
    "Element",
    "Isotropic",
    "CosinePower",
    "Dipole",
    "ShortDipole",
    "HalfWaveDipole",
    "MAX_DIPOLE_WL",
    "Patch",
    "TabulatedElement",
    "element_power",
    "ELEMENT_MODELS",
    "ElementModel",
    "DesignContext",
    "COLUMNS",
    "TABLE_KEYS",
    "GRID_TOL",
    "SAME_TOL",
    "table_grid",
    "unit_vectors",
    "spherical_basis",
    "angles_of",
]
