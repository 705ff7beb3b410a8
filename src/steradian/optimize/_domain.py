"""Where the pattern is constrained and checked: the directions of real space, sampled.

Three domains, chosen from the layout and element model:

* ``line``: a collinear array of isotropic elements. The pattern depends only on
  u = r . e1, so one direction per u value represents its whole cone.
* ``plane``: a planar array with one element orientation. Directions are parametrised by the
  in-plane direction cosines (u, v) and a hemisphere; with isotropic elements the pattern is
  mirror symmetric about the array plane and one hemisphere represents both.
* ``sphere``: anything else (volumetric or conformal layouts, lines of directive elements):
  near-uniform Fibonacci directions on the sphere, or the front hemisphere for
  front-half-space elements.

Every domain makes regular grids at a given spacing (a shifted copy for the independent dense
check) and local neighbourhoods for vectorised off-grid refinement of maxima.
"""

from __future__ import annotations

import math

import numpy as np

from ..directions import fibonacci_directions, tangent_frames
from ._frame import Frame

__all__ = ["Domain", "choose_domain"]


class Domain:
    """A sampled region of directions.

    Parameters
    ----------
    kind : {"line", "plane", "sphere"}
    frame : Frame
        Principal axes of the array.
    r0 : ndarray (3,)
        Beam direction.
    hemispheres : tuple of int
        Plane domain: which sides of the array plane (+1 along e3, -1 behind) are sampled.
    front_only : bool
        Sphere domain: sample only z >= 0.
    symmetric : str
        "cone" (line: the pattern is constant on each cone about the axis), "mirror" (plane
        with isotropic elements: mirror images have equal fields) or "none".
    """

    def __init__(self, kind: str, frame: Frame, r0: np.ndarray, hemispheres=(1,),
                 front_only: bool = False, symmetric: str = "none"):
        self.kind = kind
        self.frame = frame
        self.r0 = np.asarray(r0, float)
        self.hemispheres = tuple(hemispheres)
        self.front_only = front_only
        self.symmetric = symmetric
        e = frame.axes
        self.e1, self.e2, self.e3 = e[:, 0], e[:, 1], e[:, 2]
        if kind == "line":
            perp = self.r0 - (self.r0 @ self.e1) * self.e1
            nrm = np.linalg.norm(perp)
            self.b = perp / nrm if nrm > 1e-9 else self.e2

    @property
    def dim(self) -> int:
        return 1 if self.kind == "line" else 2

    # ---- direction <-> parameters -------------------------------------------------------------
    def from_u(self, u: np.ndarray) -> np.ndarray:
        u = np.clip(np.asarray(u, float), -1.0, 1.0)
        return np.multiply.outer(u, self.e1) + np.multiply.outer(np.sqrt(1 - u**2), self.b)

    def from_uv(self, u, v, s) -> np.ndarray:
        u = np.asarray(u, float)
        v = np.asarray(v, float)
        r = np.hypot(u, v)
        over = r > 1.0
        if np.any(over):
            u = np.where(over, u / np.maximum(r, 1e-300), u)
            v = np.where(over, v / np.maximum(r, 1e-300), v)
        w = np.sqrt(np.clip(1 - u**2 - v**2, 0, None)) * s
        return (np.multiply.outer(u, self.e1) + np.multiply.outer(v, self.e2)
                + np.multiply.outer(w, self.e3))

    # ---- grids --------------------------------------------------------------------------------
    def grid(self, spacing: float, shifted: bool = False) -> np.ndarray:
        """Directions (M, 3) covering the domain at ``spacing`` (direction cosines / rad)."""
        h = float(spacing)
        off = 0.5 * h if shifted else 0.0
        if self.kind == "line":
            n = max(int(math.ceil(2.0 / h)), 2)
            u = np.linspace(-1.0, 1.0, n + 1)
            if shifted:
                u = np.concatenate([[-1.0], 0.5 * (u[1:] + u[:-1]), [1.0]])
            return self.from_u(u)
        if self.kind == "plane":
            g = np.arange(-1.0 - off, 1.0 + h, h)
            uu, vv = np.meshgrid(g, g, indexing="xy")
            keep = uu**2 + vv**2 <= 1.0
            uu, vv = uu[keep], vv[keep]
            nring = max(int(math.ceil(2 * math.pi / h)), 8)
            t = 2 * math.pi * (np.arange(nring) + (0.5 if shifted else 0.0)) / nring
            uu = np.concatenate([uu, np.cos(t)])
            vv = np.concatenate([vv, np.sin(t)])
            parts = [self.from_uv(uu, vv, s) for s in self.hemispheres]
            return np.concatenate(parts)
        n = max(int(math.ceil(4 * math.pi / h**2)), 64)
        d = fibonacci_directions(n, False)
        if shifted:
            # A fixed rotation (about an irrational axis) makes the dense set independent.
            a = np.array([1.0, math.sqrt(2.0), math.sqrt(3.0)])
            a /= np.linalg.norm(a)
            ang = 0.5 * h / (1 + math.sqrt(5))
            K = np.array([[0, -a[2], a[1]], [a[2], 0, -a[0]], [-a[1], a[0], 0]])
            Rm = np.eye(3) + math.sin(ang) * K + (1 - math.cos(ang)) * K @ K
            d = d @ Rm.T
        if self.front_only:
            d = d[d[:, 2] >= 0]
        return d

    def zone_ring(self, halfwidths: np.ndarray, spacing: float) -> np.ndarray:
        """Directions on the boundary of the main-lobe zone (line and plane domains)."""
        h = np.asarray(halfwidths, float)
        if self.kind == "line":
            u0 = self.r0 @ self.e1
            u = np.array([u0 - h[0], u0 + h[0]])
            return self.from_u(u[np.abs(u) <= 1])
        if self.kind == "plane":
            u0, v0 = self.r0 @ self.e1, self.r0 @ self.e2
            per = 2 * math.pi * max(h[0], h[1])
            n = max(int(math.ceil(per / spacing)), 16)
            t = 2 * math.pi * np.arange(n) / n
            uu, vv = u0 + h[0] * np.cos(t), v0 + h[1] * np.sin(t)
            keep = uu**2 + vv**2 <= 1.0
            return np.concatenate([self.from_uv(uu[keep], vv[keep], s) for s in
                                   self.hemispheres])
        return np.zeros((0, 3))

    # ---- refinement ---------------------------------------------------------------------------
    def neighbourhood(self, dirs: np.ndarray, step: float, m: int = 3) -> np.ndarray:
        """Local grids of (2m+1)^dim directions around each of K directions: (K, P, 3)."""
        dirs = np.asarray(dirs, float).reshape(-1, 3)
        o = step * np.arange(-m, m + 1)
        if self.kind == "line":
            u = dirs @ self.e1
            return self.from_u(u[:, None] + o[None, :])
        oa, ob = np.meshgrid(o, o, indexing="ij")
        oa, ob = oa.ravel(), ob.ravel()
        if self.kind == "plane":
            u = dirs @ self.e1
            v = dirs @ self.e2
            s = np.where(dirs @ self.e3 < 0, -1.0, 1.0)
            return self.from_uv(u[:, None] + oa, v[:, None] + ob, s[:, None])
        return tangent_neighbourhood(dirs, oa, ob, self.front_only)


def tangent_neighbourhood(dirs, oa, ob, front_only=False):
    """Directions r + a t1 + b t2 (normalised) in the tangent plane of each r: (K, P, 3)."""
    t1, t2 = tangent_frames(dirs)
    p = dirs[:, None, :] + oa[None, :, None] * t1[:, None, :] + ob[None, :, None] * t2[:, None, :]
    if front_only:
        p[..., 2] = np.maximum(p[..., 2], 0.0)
    return p / np.linalg.norm(p, axis=-1, keepdims=True)


def choose_domain(array, frame: Frame, r0: np.ndarray) -> Domain:
    """Pick the cheapest domain that represents every direction of ``array``'s pattern."""
    from ..elements import Isotropic

    el = array.element
    oriented = array.geometry.orientations is not None
    iso = isinstance(el, Isotropic)
    if frame.rank == 1 and iso and not oriented:
        return Domain("line", frame, r0, symmetric="cone")
    if frame.rank == 2 and not oriented:
        if iso:
            return Domain("plane", frame, r0, (1,), symmetric="mirror")
        e3 = frame.axes[:, 2]
        if el.front_only and abs(abs(e3[2]) - 1) < 1e-12:
            return Domain("plane", frame, r0, (1 if e3[2] > 0 else -1,))
        return Domain("plane", frame, r0, (1, -1))
    return Domain("sphere", frame, r0, front_only=bool(el.front_only and not oriented))
