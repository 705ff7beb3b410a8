"""Direction sets: arbitrary unit vectors, theta-phi grids and u-v (direction-cosine) grids.

The pattern engine accepts any of these. Grids carry their structure so fast paths (FFT,
NUFFT) can exploit it; the result of an evaluation has the grid's shape.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import SteradianError

__all__ = ["Directions", "ThetaPhiGrid", "UVGrid", "as_directions"]


@dataclass(frozen=True, eq=False)
class Directions:
    """Arbitrary unit direction vectors, shape (M, 3); ``shape`` is the result shape."""

    vectors: np.ndarray
    shape: tuple[int, ...]

    @classmethod
    def from_vectors(cls, v) -> Directions:
        """Wrap an (..., 3) array of unit vectors (normalised here)."""
        v = np.asarray(v, float)
        if v.shape[-1] != 3:
            raise SteradianError(f"direction vectors must have shape (..., 3), got {v.shape}")
        if not np.all(np.isfinite(v)):
            raise SteradianError("direction vectors contain NaN or infinity")
        nrm = np.linalg.norm(v, axis=-1, keepdims=True)
        if np.any(nrm == 0):
            raise SteradianError("direction vectors must be non-zero")
        shape = v.shape[:-1]
        return cls(np.ascontiguousarray((v / nrm).reshape(-1, 3)), shape)

    @classmethod
    def from_angles(cls, theta_deg, phi_deg) -> Directions:
        """Directions at angles in degrees (broadcast together)."""
        t, p = np.broadcast_arrays(np.deg2rad(theta_deg), np.deg2rad(phi_deg))
        st = np.sin(t)
        return cls.from_vectors(np.stack([st * np.cos(p), st * np.sin(p), np.cos(t)], -1))

    @property
    def visible(self) -> np.ndarray:
        """Boolean mask (flat) of real directions; all True here."""
        return np.ones(len(self.vectors), bool)


@dataclass(frozen=True, eq=False)
class ThetaPhiGrid:
    """Regular product grid of theta (rows) by phi (columns), angles in radians."""

    theta: np.ndarray
    phi: np.ndarray

    @classmethod
    def degrees(cls, theta_deg, phi_deg) -> ThetaPhiGrid:
        """Grid from angles in degrees."""
        return cls(np.deg2rad(np.asarray(theta_deg, float)),
                   np.deg2rad(np.asarray(phi_deg, float)))

    @property
    def shape(self) -> tuple[int, int]:
        return (len(self.theta), len(self.phi))

    @property
    def vectors(self) -> np.ndarray:
        t, p = np.meshgrid(self.theta, self.phi, indexing="ij")
        st = np.sin(t)
        return np.stack([st * np.cos(p), st * np.sin(p), np.cos(t)], -1).reshape(-1, 3)

    @property
    def visible(self) -> np.ndarray:
        return np.ones(self.shape[0] * self.shape[1], bool)


@dataclass(frozen=True, eq=False)
class UVGrid:
    """Regular grid in direction cosines u (columns) and v (rows) on one hemisphere.

    ``hemisphere=+1`` is the front (w >= 0), ``-1`` the back. Points with u^2 + v^2 > 1 are
    invisible: the engine returns NaN there.
    """

    u: np.ndarray
    v: np.ndarray
    hemisphere: int = 1

    @classmethod
    def square(cls, n: int, hemisphere: int = 1) -> UVGrid:
        """``n`` x ``n`` grid spanning [-1, 1] in u and v."""
        g = np.linspace(-1.0, 1.0, n)
        return cls(g, g.copy(), hemisphere)

    @property
    def shape(self) -> tuple[int, int]:
        return (len(self.v), len(self.u))

    @property
    def visible(self) -> np.ndarray:
        uu, vv = np.meshgrid(self.u, self.v, indexing="xy")
        return (uu**2 + vv**2 <= 1.0).ravel()

    @property
    def vectors(self) -> np.ndarray:
        """Unit vectors (M, 3); invisible points get w = 0 after clipping (masked later)."""
        uu, vv = np.meshgrid(self.u, self.v, indexing="xy")
        w2 = np.clip(1.0 - uu**2 - vv**2, 0.0, None)
        w = self.hemisphere * np.sqrt(w2)
        return np.stack([uu, vv, w], -1).reshape(-1, 3)


def as_directions(where) -> Directions | ThetaPhiGrid | UVGrid:
    """Accept a grid object or an (..., 3) array of vectors."""
    if isinstance(where, (Directions, ThetaPhiGrid, UVGrid)):
        return where
    return Directions.from_vectors(where)
