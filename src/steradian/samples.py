"""Sampled patterns as plain values: a cut along a great circle and a u-v map.

These are what the pattern views of :mod:`steradian.patterns` return and what the pattern
files of :mod:`steradian.io.pattern_csv` read and write; they hold numbers only, so the file
layer can carry them without reaching the computations.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Cut", "UVMap"]


@dataclass(frozen=True, eq=False)
class Cut:
    """A pattern cut along a great circle.

    Attributes
    ----------
    name : str
        ``"phi_plane"`` / ``"cross_plane"`` for the principal cuts, ``"phi=<deg>"`` for a plain
        theta cut.
    angle_deg : ndarray, shape (n,)
        Signed angle along the cut: from the beam axis for principal cuts, theta for a plain
        cut (negative theta lies at phi + 180 deg).
    directions : ndarray, shape (n, 3)
        Unit vectors of the cut points.
    directivity_dbi : ndarray, shape (n,)
        Directivity in dBi, floored at :data:`steradian.units.DB_FLOOR` (never NaN or -inf).
    theta_deg, phi_deg : ndarray, shape (n,)
        Spherical angles of the cut points (theta in [0, 180], phi in (-180, 180]).
    """

    name: str
    angle_deg: np.ndarray
    directions: np.ndarray
    directivity_dbi: np.ndarray
    theta_deg: np.ndarray
    phi_deg: np.ndarray


@dataclass(frozen=True, eq=False)
class UVMap:
    """Directivity on a regular u-v grid over one hemisphere.

    Attributes
    ----------
    u, v : ndarray, shape (nu,), (nv,)
        Direction cosines u = sin(theta) cos(phi) (columns), v = sin(theta) sin(phi) (rows).
    directivity_dbi : ndarray, shape (nv, nu)
        Directivity in dBi; NaN outside the unit circle (invisible space).
    hemisphere : int
        +1 for the front (w >= 0), -1 for the back.
    """

    u: np.ndarray
    v: np.ndarray
    directivity_dbi: np.ndarray
    hemisphere: int = 1
