"""Element positions: lattices, rings, file import, orientation and masks.

Conventions: right-handed x, y, z in metres. Planar arrays lie in the x-y plane with broadside
along +z. Orientation of element n is a 3x3 rotation matrix whose columns are the element's
local x, y and z axes expressed in array coordinates (local -> global).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from .budget import require
from .errors import SteradianError, shown
from .validate import count, finite_array, positive, restore_frozen

__all__ = [
    "reciprocal_lattice",
    "PrincipalAxes",
    "principal_axes",
    "Geometry",
    "linear",
    "rectangular",
    "triangular",
    "ring",
    "concentric_rings",
    "rotation_to",
    "COINCIDENT_TOL",
    "MAX_COORDINATE_M",
    "coincident_pair",
    "LATTICE_KINDS",
]

COINCIDENT_TOL = 1e-9
"""Metres: elements closer than this are "at the same position"."""

MAX_COORDINATE_M = 1e8
"""Metres: a coordinate farther than this from the origin (100,000 km, eight Earth
diameters) is not a physical element position; it is refused, so that sums of squares and
the nearest-neighbour search stay far from overflow (a slip of units or a hostile file)."""


@dataclass(frozen=True, eq=False)
class Geometry:
    """Element positions with optional orientations and lattice description.

    Parameters
    ----------
    positions : array_like, shape (N, 3) or (N, 2)
        Element phase-centre positions in metres (2-column input gets z = 0).
    orientations : array_like, shape (N, 3, 3), optional
        Rotation matrices local -> array frame, one per element. ``None`` means every element's
        local frame coincides with the array frame.
    lattice : array_like, shape (1, 3) or (2, 3), optional
        Primitive lattice vectors in metres when the layout is a sampled periodic lattice; used
        to predict grating lobes. ``None`` for arbitrary layouts.
    """

    positions: np.ndarray
    orientations: np.ndarray | None = None
    lattice: np.ndarray | None = field(default=None)

    def __post_init__(self):
        pos = np.asarray(self.positions, dtype=float)
        if pos.ndim != 2 or pos.shape[1] not in (2, 3):
            raise SteradianError(f"positions must have shape (N, 3) or (N, 2), got {pos.shape}")
        if pos.shape[1] == 2:
            pos = np.column_stack([pos, np.zeros(len(pos))])
        if len(pos) == 0:
            raise SteradianError("geometry has zero elements")
        pos = finite_array("positions", pos)
        far = np.abs(pos) > MAX_COORDINATE_M
        if far.any():
            n, a = (int(i) for i in np.argwhere(far)[0])
            raise SteradianError(f"element {n} has {'xyz'[a]} = {float(pos[n, a]):.6g} m, beyond "
                                 f"+-{MAX_COORDINATE_M:g} m (not a physical position)")
        _check_coincident(pos)
        pos = np.ascontiguousarray(pos)
        pos.setflags(write=False)
        object.__setattr__(self, "positions", pos)
        if self.orientations is not None:
            R = finite_array("orientations", self.orientations)
            if R.shape != (len(pos), 3, 3):
                raise SteradianError(
                    f"orientations must have shape ({len(pos)}, 3, 3), got {R.shape}")
            err = np.abs(np.einsum("nji,njk->nik", R, R) - np.eye(3)).max()
            if err > 1e-6:
                raise SteradianError("orientations must be rotation matrices (orthonormal)")
            if np.allclose(R, np.eye(3), atol=1e-12):
                R = None
            else:
                R = np.ascontiguousarray(R)
                R.setflags(write=False)
            object.__setattr__(self, "orientations", R)
        if self.lattice is not None:
            L = finite_array("lattice", self.lattice)
            L = np.atleast_2d(L)
            if L.shape[1] == 2:
                L = np.column_stack([L, np.zeros(len(L))])
            if L.shape not in ((1, 3), (2, 3)):
                raise SteradianError(f"lattice must have 1 or 2 vectors of 3, got {L.shape}")
            L.setflags(write=False)
            object.__setattr__(self, "lattice", L)

    def __setstate__(self, state):
        restore_frozen(self, state)

    @property
    def n(self) -> int:
        """Number of elements."""
        return len(self.positions)

    @property
    def centroid(self) -> np.ndarray:
        """Mean of the element positions (m)."""
        return self.positions.mean(axis=0)

    def radius(self, centre: np.ndarray | None = None) -> float:
        """Largest element distance from ``centre`` (default: the centroid), in metres."""
        c = self.centroid if centre is None else np.asarray(centre, float)
        return float(np.sqrt(((self.positions - c) ** 2).sum(axis=1)).max())

    @property
    def common_orientation(self) -> np.ndarray | None:
        """The rotation every element shares, or ``None`` (default frame, or mixed)."""
        R = self.orientations
        if R is None or not np.allclose(R, R[0], atol=1e-12):
            return None
        return R[0]

    @property
    def is_planar(self) -> bool:
        """True when every element lies in the x-y plane (z = 0) with default orientation."""
        return bool(np.all(self.positions[:, 2] == 0.0)) and self.orientations is None

    def translated(self, offset) -> Geometry:
        """Return a copy moved by ``offset`` (m)."""
        off = np.asarray(offset, float).reshape(3)
        return Geometry(self.positions + off, self.orientations, self.lattice)

    def subset(self, keep) -> Geometry:
        """Return the elements selected by a boolean mask or index array (lattice dropped)."""
        keep = np.asarray(keep)
        R = None if self.orientations is None else self.orientations[keep]
        return Geometry(self.positions[keep], R, None)

    def extent(self) -> np.ndarray:
        """Bounding-box size along x, y, z (m)."""
        return np.ptp(self.positions, axis=0)


def coincident_pair(positions) -> tuple[int, int] | None:
    """The first element ``j`` (in index order) within :data:`COINCIDENT_TOL` of an earlier
    element ``i``, as ``(i, j)``; None when all positions are distinct."""
    pos = np.asarray(positions, float)
    if len(pos) < 2:
        return None
    from scipy.spatial import cKDTree

    pairs = cKDTree(pos).query_pairs(COINCIDENT_TOL, output_type="ndarray")
    if not len(pairs):
        return None
    i, j = sorted(pairs[np.argmin(pairs.max(axis=1))].tolist())
    return i, j


def _check_coincident(pos: np.ndarray) -> None:
    pair = coincident_pair(pos)
    if pair is not None:
        i, j = pair
        raise SteradianError(
            f"elements {i} and {j} are at the same position {pos[i].round(12).tolist()} m")


ELEMENT_BYTES = 300
"""Peak bytes per element of building a lattice (268 B measured with tracemalloc for a
300 x 300 rectangular panel: index grids, coordinates, positions, the coincidence check)."""


def _require_elements(n: int, what: str) -> None:
    require(int(n) * ELEMENT_BYTES, f"{what} ({int(n):,} elements)",
            "reduce the element count or raise the memory budget (STERADIAN_MEMORY_BUDGET)")


def linear(n: int, d: float, axis: str = "x") -> Geometry:
    """Uniform line of ``n`` elements spaced ``d`` metres, centred on the origin.

    Parameters
    ----------
    n : int
        Number of elements.
    d : float
        Spacing in metres.
    axis : {"x", "y", "z"}
        Line direction.
    """
    n = count("n", n)
    _require_elements(n, "a line")
    d = positive("spacing d", d, " m")
    ax = {"x": 0, "y": 1, "z": 2}.get(axis)
    if ax is None:
        raise SteradianError(f"axis must be 'x', 'y' or 'z', got {shown(axis)}")
    pos = np.zeros((n, 3))
    pos[:, ax] = (np.arange(n) - (n - 1) / 2) * d
    lat = np.zeros((1, 3))
    lat[0, ax] = d
    return Geometry(pos, lattice=lat)


def rectangular(nx: int, ny: int, dx: float, dy: float | None = None) -> Geometry:
    """Rectangular lattice of ``nx`` x ``ny`` elements in the x-y plane, centred on the origin.

    Element order is x fastest: index = ix + nx * iy.
    """
    nx = count("nx", nx)
    ny = count("ny", ny)
    _require_elements(nx * ny, f"a {nx:,} x {ny:,} rectangular lattice")
    dx = positive("spacing dx", dx, " m")
    dy = dx if dy is None else positive("spacing dy", dy, " m")
    ix, iy = np.meshgrid(np.arange(nx), np.arange(ny), indexing="xy")
    x = (ix.ravel() - (nx - 1) / 2) * dx
    y = (iy.ravel() - (ny - 1) / 2) * dy
    pos = np.column_stack([x, y, np.zeros_like(x)])
    return Geometry(pos, lattice=np.array([[dx, 0, 0], [0, dy, 0]], float))


def triangular(nx: int, ny: int, dx: float, dy: float | None = None) -> Geometry:
    """Triangular (offset-row) lattice: ``ny`` rows of ``nx`` elements, odd rows shifted dx/2.

    With ``dy = dx * sqrt(3) / 2`` (the default) the lattice is equilateral (hexagonal).
    Primitive vectors are (dx, 0) and (dx/2, dy).
    """
    nx = count("nx", nx)
    ny = count("ny", ny)
    _require_elements(nx * ny, f"a {nx:,} x {ny:,} triangular lattice")
    dx = positive("spacing dx", dx, " m")
    dy = dx * np.sqrt(3) / 2 if dy is None else positive("row spacing dy", dy, " m")
    ix, iy = np.meshgrid(np.arange(nx), np.arange(ny), indexing="xy")
    x = (ix + 0.5 * (iy % 2)).ravel() * dx
    y = iy.ravel() * dy
    x = x - x.mean()
    y = y - y.mean()
    pos = np.column_stack([x, y, np.zeros_like(x)])
    return Geometry(pos, lattice=np.array([[dx, 0, 0], [dx / 2, dy, 0]], float))


def ring(n: int, radius: float, phi0_deg: float = 0.0) -> Geometry:
    """``n`` elements equally spaced on a circle of ``radius`` metres in the x-y plane."""
    n = count("n", n)
    _require_elements(n, "a ring")
    r = positive("radius", radius, " m")
    phi = np.deg2rad(phi0_deg) + 2 * np.pi * np.arange(n) / n
    pos = np.column_stack([r * np.cos(phi), r * np.sin(phi), np.zeros(n)])
    return Geometry(pos)


def concentric_rings(radii, counts, centre_element: bool = False,
                     phi0_deg=0.0) -> Geometry:
    """Concentric rings in the x-y plane.

    Parameters
    ----------
    radii : sequence of float
        Ring radii in metres.
    counts : sequence of int
        Elements on each ring.
    centre_element : bool
        Add one element at the origin.
    phi0_deg : float or sequence of float
        Angle of the first element of each ring.
    """
    radii = list(radii)
    counts = list(counts)
    if len(radii) != len(counts) or not radii:
        raise SteradianError(
            f"radii and counts must be non-empty and of equal length, got {len(radii)} radii "
            f"and {len(counts)} counts")
    phi0 = np.broadcast_to(np.asarray(phi0_deg, float), (len(radii),))
    counts = [count(f"counts[{i}]", c) for i, c in enumerate(counts)]
    _require_elements(sum(counts) + bool(centre_element), f"{len(counts)} concentric rings")
    parts = [np.zeros((1, 3))] if centre_element else []
    for i, (r, c) in enumerate(zip(radii, counts, strict=True)):
        parts.append(ring(c, positive(f"radii[{i}]", r, " m"), phi0[i]).positions)
    return Geometry(np.vstack(parts))


def rotation_to(normal, reference=(1.0, 0.0, 0.0)) -> np.ndarray:
    """Rotation matrix whose local z axis is ``normal`` and local x axis lies toward ``reference``.

    Useful for conformal layouts: pass the outward surface normal of each element.
    Accepts shape (3,) or (N, 3) and returns (3, 3) or (N, 3, 3).
    """
    nrm = np.atleast_2d(np.asarray(normal, float))
    nrm = nrm / np.linalg.norm(nrm, axis=1, keepdims=True)
    ref = np.broadcast_to(np.asarray(reference, float), nrm.shape).copy()
    # Fall back to y when the reference is parallel to the normal.
    par = np.abs((ref * nrm).sum(axis=1)) > 1 - 1e-9
    ref[par] = (0.0, 1.0, 0.0)
    x = ref - (ref * nrm).sum(axis=1, keepdims=True) * nrm
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    y = np.cross(nrm, x)
    R = np.stack([x, y, nrm], axis=2)
    return R[0] if np.ndim(normal) == 1 else R


@dataclass(frozen=True)
class PrincipalAxes:
    """Shape of a point set about its centroid (see :func:`principal_axes`).

    Attributes
    ----------
    dimension : int
        0 (one point), 1 (collinear), 2 (coplanar) or 3.
    axes : ndarray (3, 3)
        Rows: unit principal directions, largest spread first; right-handed. For a line,
        ``axes[0]`` is its direction; for a plane, ``axes[2]`` is its normal.
    spread : ndarray (3,)
        Singular values of the centred positions, largest first (zeros beyond N - 1).
    centroid : ndarray (3,)
    """

    dimension: int
    axes: np.ndarray
    spread: np.ndarray
    centroid: np.ndarray


def principal_axes(positions, rtol: float = 1e-9) -> PrincipalAxes:
    """Collinear / planar / volumetric test of points (N, 3): the one place it is done.

    An economy SVD of the centred N x 3 positions (memory O(N), never an N x N factor);
    directions whose singular value is below ``rtol`` times the largest do not count.
    """
    pos = np.asarray(positions, float).reshape(-1, 3)
    c = pos.mean(axis=0) if len(pos) else np.zeros(3)
    d = pos - c
    spread = np.zeros(3)
    axes = np.eye(3)
    if len(pos) >= 2:
        _, s, vt = np.linalg.svd(d, full_matrices=False)
        spread[: len(s)] = s
        axes[: len(vt)] = vt
    dim = int(np.sum(spread > rtol * max(spread[0], 1e-300))) if spread[0] > 0 else 0
    # Complete a right-handed orthonormal set (fewer than 3 points give fewer rows).
    if len(pos) < 3 or dim < 3:
        a0 = axes[0] if dim >= 1 else np.array([1.0, 0.0, 0.0])
        if dim >= 2:
            a1 = axes[1]
        else:
            ref = np.array([0.0, 0.0, 1.0]) if abs(a0[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
            a1 = np.cross(ref, a0)
            a1 /= np.linalg.norm(a1)
        axes = np.array([a0, a1, np.cross(a0, a1)])
    elif np.linalg.det(axes) < 0:
        axes = axes.copy()
        axes[2] = -axes[2]
    return PrincipalAxes(dim, axes, spread, c)


# --------------------------------------------------------------------------------------------
# Design-file lattice kinds: [geometry] kind = "..."
# --------------------------------------------------------------------------------------------
def _linear_from(t, s: float) -> Geometry:
    return linear(t.integer("count", minimum=1), t.number("spacing", above=0) * s,
                  t.string("axis", "x", choices=("x", "y", "z")))


def _grid_from(make):
    def build(t, s: float) -> Geometry:
        nx = t.integer("count_x", minimum=1)
        ny = t.integer("count_y", minimum=1)
        dx = t.number("spacing_x", above=0) * s
        dy = t.number("spacing_y", None, above=0)
        return make(nx, ny, dx, None if dy is None else dy * s)
    return build


def _ring_from(t, s: float) -> Geometry:
    return ring(t.integer("count", minimum=1), t.number("radius", above=0) * s,
                t.number("start_angle_deg", 0.0))


def _rings_from(t, s: float) -> Geometry:
    radii = t.numbers("radii", above=0)
    counts = t.integers("counts", minimum=1)
    if len(radii) != len(counts):
        raise t.error("counts", f"has {len(counts)} entries but radii has {len(radii)}")
    start = t.data.get("start_angles_deg", 0.0)
    if isinstance(start, list):
        start = t.numbers("start_angles_deg")
        if len(start) != len(radii):
            raise t.error("start_angles_deg", f"has {len(start)} entries, radii has "
                          f"{len(radii)}")
    else:
        start = t.number("start_angles_deg", 0.0)
    return concentric_rings([r * s for r in radii], counts,
                            t.boolean("centre_element", False), start)


LATTICE_KINDS: dict[str, tuple[tuple[str, ...], Callable[..., Geometry]]] = {
    "linear": (("count", "spacing", "axis"), _linear_from),
    "rectangular": (("count_x", "count_y", "spacing_x", "spacing_y"), _grid_from(rectangular)),
    "triangular": (("count_x", "count_y", "spacing_x", "spacing_y"), _grid_from(triangular)),
    "ring": (("count", "radius", "start_angle_deg"), _ring_from),
    "rings": (("counts", "radii", "centre_element", "start_angles_deg"), _rings_from),
}
"""Design-file lattice kinds: name -> (keys of ``[geometry]`` besides the common ones,
``build(section, unit_m)``), the section a :class:`steradian.schema.Section` and ``unit_m``
the size of one length unit in metres. To add a lattice: its function above, a builder and
a line here."""


def reciprocal_lattice(lattice) -> tuple[np.ndarray, np.ndarray] | None:
    """Reciprocal vectors of a lattice's primitive vectors (rows of ``lattice``, 1 or 2 of
    them, metres): ``(B, P)`` with rows b_i such that b_i . a_j = delta_ij inside the lattice
    span, and P the 3 x 3 projector onto that span; None for a degenerate lattice.

    Grating lobes of a beam steered to direction cosines s0 lie at
    s0 + lambda (p b_1 + q b_2) for whole p, q.

    References
    ----------
    R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2.
    """
    L = np.asarray(lattice, float)
    gram = L @ L.T
    if abs(np.linalg.det(gram)) <= 1e-12 * np.prod(np.diag(gram)):
        return None
    B = np.linalg.solve(gram, L)
    return B, L.T @ B
