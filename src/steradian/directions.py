"""Directions: the sets the engine evaluates on, and every coordinate conversion.

Direction sets: arbitrary unit vectors, theta-phi grids and u-v (direction-cosine) grids.
The pattern engine accepts any of these. Grids carry their structure so fast paths (FFT,
NUFFT) can exploit it; the result of an evaluation has the grid's shape.

Conversions (the only place each is written): angles to unit vectors and back, the
spherical unit vectors theta-hat and phi-hat, azimuth-elevation, tangent frames, the angle
between directions, and near-uniform Fibonacci direction sets.

Conventions: right-handed x, y, z; theta from +z, phi from +x toward +y; u = sin(theta)
cos(phi), v = sin(theta) sin(phi), w = cos(theta). Azimuth-elevation: the boresight is +z,
azimuth turns from +z toward +x about the y axis, elevation rises toward +y:
x = cos(el) sin(az), y = sin(el), z = cos(el) cos(az).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .budget import require
from .errors import SteradianError

__all__ = ["Directions", "ThetaPhiGrid", "UVGrid", "as_directions", "unit_vectors",
           "unit_vectors_deg", "angles_of", "angles_deg", "spherical_basis",
           "az_el_to_theta_phi", "theta_phi_directions", "az_el_directions",
           "tangent_frames", "angle_between_deg", "fibonacci_directions", "normalise",
           "ANGLE_LIMIT_DEG"]


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
        return cls.from_vectors(unit_vectors_deg(theta_deg, phi_deg))

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
        return unit_vectors(t, p).reshape(-1, 3)

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


# --------------------------------------------------------------------------------------------
# Conversions
# --------------------------------------------------------------------------------------------
def normalise(v) -> np.ndarray:
    """``v`` scaled to unit length along its last axis."""
    v = np.asarray(v, float)
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def unit_vectors(theta, phi) -> np.ndarray:
    """Unit vectors at angles in radians (broadcast together), shape (..., 3)."""
    t, p = np.broadcast_arrays(np.asarray(theta, float), np.asarray(phi, float))
    st = np.sin(t)
    return np.stack([st * np.cos(p), st * np.sin(p), np.cos(t)], -1)


def unit_vectors_deg(theta_deg, phi_deg) -> np.ndarray:
    """Unit vectors at angles in degrees (broadcast together), shape (..., 3)."""
    return unit_vectors(np.deg2rad(theta_deg), np.deg2rad(phi_deg))


def angles_of(vectors) -> tuple[np.ndarray, np.ndarray]:
    """Angles (theta, phi) in radians of unit vectors, shape (..., 3); phi in (-pi, pi]."""
    v = np.asarray(vectors, float)
    theta = np.arccos(np.clip(v[..., 2], -1.0, 1.0))
    phi = np.arctan2(v[..., 1], v[..., 0])
    return theta, phi


def angles_deg(vectors, pole_tol: float = 1e-12) -> tuple[np.ndarray, np.ndarray]:
    """Angles (theta, phi) in degrees as reported: phi in (-180, 180], and phi = 0 on the z
    axis (within ``pole_tol`` of it), where phi has no meaning."""
    v = np.asarray(vectors, float)
    th, ph = angles_of(v)
    th, ph = np.rad2deg(th), np.rad2deg(ph)
    pole = np.hypot(v[..., 0], v[..., 1]) < pole_tol
    ph = np.where(pole, 0.0, np.where(ph <= -180.0, ph + 360.0, ph))
    if np.ndim(th) == 0:
        return float(th), float(ph)
    return th, ph


def spherical_basis(theta, phi) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors theta-hat and phi-hat, each shape ``theta.shape + (3,)``."""
    ct, st = np.cos(theta), np.sin(theta)
    cp, sp = np.cos(phi), np.sin(phi)
    th = np.stack([ct * cp, ct * sp, -st], axis=-1)
    ph = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    return th, ph


def az_el_to_theta_phi(az_deg, el_deg) -> tuple[np.ndarray, np.ndarray]:
    """Azimuth-elevation (degrees) to theta-phi (degrees); see the module conventions."""
    az, el = np.deg2rad(np.asarray(az_deg, float)), np.deg2rad(np.asarray(el_deg, float))
    v = np.stack([np.cos(el) * np.sin(az), np.sin(el), np.cos(el) * np.cos(az)], -1)
    return angles_deg(v, pole_tol=1e-15)


GRID_DIRECTION_BYTES = 128
"""Peak bytes per direction of building a beam grid (the (B, 2) result and its
intermediates: 90 B measured with tracemalloc for an az-el grid, 40 B for theta-phi)."""


def _require_grid(n_a: int, n_b: int, what: str) -> None:
    require(n_a * n_b * GRID_DIRECTION_BYTES,
            f"{what} grid of {n_a:,} x {n_b:,} = {n_a * n_b:,} directions",
            "use larger steps or fewer values, or raise the memory budget "
            "(STERADIAN_MEMORY_BUDGET)")


def theta_phi_directions(theta_deg, phi_deg) -> np.ndarray:
    """Product grid of theta and phi values (degrees), shape (B, 2).

    theta = 0 (and 180) is one direction whatever phi, so it appears once (phi = 0). A grid
    over the memory budget (:mod:`steradian.budget`) is refused before it is built.
    """
    th = np.atleast_1d(np.asarray(theta_deg, float)).ravel()
    ph = np.atleast_1d(np.asarray(phi_deg, float)).ravel()
    if not np.all((th >= 0) & (th <= 180)):
        raise SteradianError(f"theta_deg values must be in [0, 180], got {th.min()}..{th.max()}")
    _check_turn("phi_deg", ph)
    _require_grid(len(th), len(ph), "a theta-phi")
    pole = (th == 0.0) | (th == 180.0)
    counts = np.where(pole, 1, len(ph))
    first = np.cumsum(counts) - counts
    t = np.repeat(th, counts)
    j = np.arange(len(t)) - np.repeat(first, counts)  # index of phi within its theta row
    p = np.where(np.repeat(pole, counts), 0.0, np.append(ph, 0.0)[j])
    return np.column_stack([t, p]).reshape(-1, 2)


ANGLE_LIMIT_DEG = 720.0
"""Largest |phi| or |azimuth| accepted (degrees): two turns either way covers every way of
writing an angle; anything larger is a typing slip, not an angle (common practice)."""


def _check_turn(name: str, a: np.ndarray) -> None:
    if a.size and not np.all(np.abs(a) <= ANGLE_LIMIT_DEG):
        bad = a[~(np.abs(a) <= ANGLE_LIMIT_DEG)][0]
        raise SteradianError(f"{name} values must lie within +-{ANGLE_LIMIT_DEG:g} degrees, "
                             f"got {float(bad):.6g}")


def az_el_directions(az_deg, el_deg) -> np.ndarray:
    """Product grid of azimuth by elevation values (degrees) as (theta, phi), shape (B, 2).

    A grid over the memory budget (:mod:`steradian.budget`) is refused before it is built.
    """
    az = np.atleast_1d(np.asarray(az_deg, float))
    el = np.atleast_1d(np.asarray(el_deg, float))
    if np.any(np.abs(el) > 90):
        raise SteradianError(f"el_deg values must be in [-90, 90], got {el.min()}..{el.max()}")
    _check_turn("az_deg", az)
    _require_grid(az.size, el.size, "an az-el")
    a, e = np.meshgrid(az, el, indexing="ij")
    t, p = az_el_to_theta_phi(a.ravel(), e.ravel())
    return np.column_stack([t, p])


def tangent_frames(r) -> tuple[np.ndarray, np.ndarray]:
    """Orthonormal tangent vectors (e1, e2) at unit vectors ``r`` (..., 3).

    (e1, e2, r) is right-handed; e1 is perpendicular to +z (to +x near the z axis). The frame
    is smooth away from the switch at |r_z| = 0.9, which is all a local search needs.
    """
    r = np.asarray(r, float)
    a = np.where((np.abs(r[..., 2]) < 0.9)[..., None], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0])
    e1 = normalise(np.cross(a, r))
    return e1, np.cross(r, e1)


def angle_between_deg(a, b) -> np.ndarray:
    """Angle (degrees) between unit vectors, row-wise, accurate for small angles."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    return np.rad2deg(np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1),
                                 np.sum(a * b, axis=-1)))


def fibonacci_directions(n: int, front_only: bool = False) -> np.ndarray:
    """Near-uniform directions on the sphere (or the front hemisphere z > 0): a Fibonacci
    lattice of ``max(n, 8)`` points, shape (n, 3).

    References
    ----------
    R. Swinbank and R. J. Purser, "Fibonacci grids: A novel approach to global modelling,"
    *Q. J. R. Meteorol. Soc.* 132 (2006) 1769-1793.
    """
    n = max(int(n), 8)
    i = np.arange(n) + 0.5
    z = 1 - 2 * i / n if not front_only else 1 - i / n
    golden = np.pi * (3 - np.sqrt(5))
    phi = golden * i
    r = np.sqrt(np.clip(1 - z**2, 0, None))
    return np.column_stack([r * np.cos(phi), r * np.sin(phi), z])
