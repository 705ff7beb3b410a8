"""Array factors on the chosen path: :func:`array_factor`, :func:`choose_path`."""

from __future__ import annotations

import math
from dataclasses import dataclass
from dataclasses import field as dc_field
from typing import Literal

import numpy as np

from ..directions import Directions, ThetaPhiGrid, UVGrid, as_directions
from ..errors import SteradianError
from ..validate import choice
from ._layout import lattice_hint
from ._paths import PATHS, Problem, exact_path, route, too_small

__all__ = ["DEFAULT_TOL", "Method", "PathChoice", "check_method", "check_tol", "evaluate",
           "array_factor", "choose_path"]

DEFAULT_TOL = 1e-12
"""Default accuracy of the transform paths, relative to sum |w_n| (the largest |AF| can be).

Measured errors are 10 to 100 times smaller; directivity then agrees with direct summation to
better than 1e-10 relative.
"""

Method = Literal["auto", "direct", "reference", "fft", "nufft"]


def check_method(method) -> str:
    """``method`` if it is "auto" or a registered path, else one SteradianError."""
    if isinstance(method, str) and (method == "auto" or method in PATHS):
        return method
    return choice("method", method, ("auto", *PATHS))


def check_tol(tol) -> float:
    """``tol`` as a float in (0, 1), else one SteradianError naming the value."""
    try:
        t = float(tol)
    except (TypeError, ValueError):
        raise SteradianError(f"tol must be a number, got {tol!r}") from None
    if not (math.isfinite(t) and 0 < t < 1):
        raise SteradianError(f"tol must be in (0, 1), got {tol!r}")
    return t


@dataclass(frozen=True, eq=False)
class PathChoice:
    """The path the cost model picked for one evaluation, and why.

    Attributes
    ----------
    method : str
        "reference", "direct", "fft" or "nufft".
    detail : str
        Finer description ("nufft type 3, 2-D", "fft chirp-z, separable", "half grid", ...).
    estimates : dict
        Estimated seconds of every path considered.
    """

    method: str
    detail: str
    estimates: dict = dc_field(default_factory=dict)

    @property
    def seconds(self) -> float:
        """Estimated seconds of the chosen path."""
        return self.estimates[self.method]


def evaluate(pos, w, k, where, method, tol, hint=None):
    """Array factor at ``where`` (flat, in ``where.vectors`` order) on the chosen path."""
    n, m = len(pos), math.prod(where.shape)
    if method == "auto" and too_small(n, m):  # no transform can win: skip the analysis
        method = exact_path(n, m).name
    path = PATHS.get(method)
    if path is not None and path.sum is not None:
        return path.sum(pos, w, k, where.vectors)
    return route(Problem(pos, k, where, tol, hint, m), method).run(w)


def choose_path(positions, k: float, where, *, tol: float = DEFAULT_TOL,
                lattice=None) -> PathChoice:
    """The path the cost model picks for ``positions`` evaluated at ``where``.

    Parameters
    ----------
    positions : ndarray, shape (N, 3)
        Element positions (m).
    k : float
        Wavenumber (rad/m).
    where : Directions, ThetaPhiGrid, UVGrid or array_like (..., 3)
        Directions to evaluate.
    tol : float
        Requested accuracy (see :data:`DEFAULT_TOL`).
    lattice : ndarray, optional
        Primitive lattice vectors (a hint for the FFT path's lattice detection).

    Returns
    -------
    PathChoice
        The method, a detail string and the estimated seconds of each path considered
        (transforms are not priced when direct summation costs less than their overhead).
    """
    pos = np.asarray(positions, float).reshape(-1, 3)
    p = Problem(pos, float(k), as_directions(where), check_tol(tol), lattice_hint(lattice))
    r = route(p, "auto")
    return PathChoice(r.name, r.detail, {a: b[0] for a, b in r.est.items()})


def array_factor(positions, weights, k: float, directions, *, method: Method = "auto",
                 tol: float = DEFAULT_TOL):
    r"""Array factor :math:`AF(\hat r) = \sum_n w_n e^{+jk\hat r\cdot r_n}`.

    Parameters
    ----------
    positions : ndarray, shape (N, 3)
        Element positions (m).
    weights : ndarray of complex, shape (N,)
        Excitations.
    k : float
        Wavenumber (rad/m).
    directions : ndarray, shape (M, 3), or Directions, ThetaPhiGrid, UVGrid
        Unit vectors, or a grid (its structure enables the FFT paths; the result is flat, in
        the order of the grid's ``vectors``).
    method : {"auto", "direct", "reference", "fft", "nufft"}
        Path; callers leave this at "auto" (the cost model picks). "reference" is the
        plain-numpy definition the fast paths are tested against; "fft" and "nufft" force a
        transform (an error where it does not apply).
    tol : float
        Accuracy of the transform paths relative to :math:`\sum|w_n|` (default
        :data:`DEFAULT_TOL`). Direct summation is exact to rounding.

    Returns
    -------
    ndarray of complex, shape (M,)
    """
    check_method(method)
    tol = check_tol(tol)
    pos = np.asarray(positions, float)
    w = np.asarray(weights, complex)
    if isinstance(directions, (Directions, ThetaPhiGrid, UVGrid)):
        where = directions
    else:
        dirs = np.asarray(directions, float).reshape(-1, 3)
        where = Directions(dirs, (len(dirs),))
    return evaluate(pos, w, float(k), where, method, tol)


