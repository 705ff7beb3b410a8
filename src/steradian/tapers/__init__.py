"""Closed-form tapers: the classical distributions, with their published parameters.

Line tapers return N real samples (element 0 at the most negative coordinate); planar
functions take a :class:`~steradian.geometry.Geometry` (x-y plane) and return one weight per
element. ``sll`` is always the design sidelobe level in dB *below* the peak (positive), as in
:mod:`scipy.signal.windows`. :func:`from_spec` builds a taper from a design file's
``[taper]`` table.

Use a taper with an array: ``Array(geometry, f, taper=steradian.tapers.taylor(16, 4, 30))``.
"""

from ._bayliss import line_table_zeros
from ._common import cell_centres, sidelobe_ratio
from ._line import (
    bayliss,
    bayliss_aperture,
    binomial,
    cosine_pedestal,
    cosine_pedestal_aperture,
    dolph_chebyshev,
    taylor,
    taylor_aperture,
    taylor_coefficients,
    uniform,
    window,
)
from ._planar import aperture_radius, bayliss_circular, radial, separable, taylor_circular
from ._spec import KINDS, from_spec

__all__ = [
    "uniform",
    "binomial",
    "dolph_chebyshev",
    "taylor",
    "taylor_aperture",
    "taylor_coefficients",
    "bayliss",
    "bayliss_aperture",
    "cosine_pedestal",
    "cosine_pedestal_aperture",
    "window",
    "taylor_circular",
    "bayliss_circular",
    "separable",
    "radial",
    "aperture_radius",
    "cell_centres",
    "sidelobe_ratio",
    "line_table_zeros",
    "from_spec",
    "KINDS",
]
