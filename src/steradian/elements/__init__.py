"""Element models: complex vector far field in the element's own frame.

Every model is an :class:`Element`. Models are looked up by name through :data:`MODELS`
(used by the design-file reader).
"""

from ._base import Element, angles_of, spherical_basis, unit_vectors
from ._patch import Patch
from ._simple import CosinePower, Dipole, HalfWaveDipole, Isotropic, ShortDipole
from ._table import TabulatedElement, read_element_table, write_element_table

__all__ = [
    "Element",
    "Isotropic",
    "CosinePower",
    "Dipole",
    "ShortDipole",
    "HalfWaveDipole",
    "Patch",
    "TabulatedElement",
    "read_element_table",
    "write_element_table",
    "unit_vectors",
    "spherical_basis",
    "angles_of",
]
