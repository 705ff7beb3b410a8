"""Fields of arrays: :func:`field` (pattern x array factor) and :func:`response_matrix`."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..budget import require
from ..directions import Directions, ThetaPhiGrid, UVGrid, angles_of, as_directions, spherical_basis
from ..elements import Isotropic
from ..errors import SteradianError
from . import _cost
from ._cache import LRU
from ._direct import af_direct_rows, budget_rows, exact_rows
from ._evaluate import DEFAULT_TOL, Method, check_method, check_tol, evaluate
from ._layout import lattice_hint
from ._paths import Problem, route, too_small

__all__ = ["Field", "field", "field_of_beams", "field_many", "response_matrix",
           "response_blocks"]


@dataclass(frozen=True, eq=False)
class Field:
    """Far field of an array on a set of directions.

    Attributes
    ----------
    e_theta, e_phi : ndarray of complex
        Field components in the global spherical basis, shaped like ``where.shape``; NaN at
        invisible u-v points. Scalar element models put their field in ``e_theta``.
    where : Directions, ThetaPhiGrid or UVGrid
        The directions evaluated.
    """

    e_theta: np.ndarray
    e_phi: np.ndarray
    where: Directions | ThetaPhiGrid | UVGrid

    @property
    def intensity(self) -> np.ndarray:
        """|E_theta|^2 + |E_phi|^2 (radiation intensity up to a constant)."""
        return np.abs(self.e_theta) ** 2 + np.abs(self.e_phi) ** 2


_DRIVES = LRU(size=64)  # (k, weights, element) by array identity and frequency


def _drive(array, frequency):
    """(k, weights, element) of ``array`` at ``frequency``, memoised per array object.

    Arrays are immutable, so repeated evaluations (peak refinement, synthesis loops) skip
    recomputing N steering phases per call.
    """
    def make(a):
        w = np.asarray(a.weights(frequency), complex)
        w.setflags(write=False)
        return a.k(frequency), w, a.element_at(frequency)

    key = None if frequency is None else float(frequency)
    return _DRIVES.by_identity(array, key, make, immutable=True)


_GROUPS = LRU(size=8)  # orientation groups by identity of a frozen orientations array


def _groups(orientations, n):
    """(rotation or None, element indices) for each distinct orientation.

    Geometry orientations are read-only arrays, so the grouping is memoised on the array's
    identity and computed once per geometry, not once per evaluation.
    """
    if orientations is None:
        return [(None, slice(None))]

    def make(R):
        flat = np.round(R.reshape(n, 9), 12)
        uniq, inv = np.unique(flat, axis=0, return_inverse=True)
        inv = inv.ravel()
        return [(uniq[g].reshape(3, 3), np.flatnonzero(inv == g)) for g in range(len(uniq))]

    return _GROUPS.by_identity(orientations, n, make)


def _element_global(element, dirs, R):
    """Element field at global directions for local->global rotation R.

    Returns (scalar, None) for scalar models or (None, cartesian (M,3) complex) for vector
    models, in the global frame.
    """
    local = dirs if R is None else dirs @ R
    th, ph = angles_of(local)
    e_t, e_p = element.pattern(th, ph)
    if not element.vector:
        return e_t, None
    bt, bp = spherical_basis(th, ph)
    vec = e_t[:, None] * bt + e_p[:, None] * bp
    if R is not None:
        vec = vec @ R.T
    return None, vec


def _invisible(where):
    """Boolean mask (flat) of invisible u-v points, or None when every point is visible."""
    if isinstance(where, (Directions, ThetaPhiGrid)):
        return None  # always visible
    if not isinstance(where, UVGrid):
        vis = where.visible
        return None if vis.all() else ~vis
    u = np.asarray(where.u, float)
    v = np.asarray(where.v, float)
    if u.size and v.size and np.abs(u).max() ** 2 + np.abs(v).max() ** 2 <= 1.0:
        return None
    return ((u[None, :] ** 2 + v[:, None] ** 2) > 1.0).ravel()


def _grouped(array, el, pos, w, k, where, method, tol):
    """(e_theta, e_phi) flat for elements with orientations: one array factor per group of
    equal orientation, each times its rotated element pattern."""
    dirs = where.vectors
    scalar = np.zeros(len(dirs), complex)
    vec = np.zeros((len(dirs), 3), complex)
    for R, idx in _groups(array.geometry.orientations, array.n):
        af = evaluate(pos[idx], w[idx], k, where, method, tol)
        s, v = _element_global(el, dirs, R)
        if v is None:
            scalar += s * af
        else:
            vec += v * af[:, None]
    if not el.vector:
        return scalar, np.zeros_like(scalar)
    bt, bp = spherical_basis(*angles_of(dirs))
    return (vec * bt).sum(axis=1), (vec * bp).sum(axis=1)


def field(array, where, *, frequency: float | None = None, method: Method = "auto",
          tol: float = DEFAULT_TOL) -> Field:
    """Far field of ``array`` at ``where`` (directions or a grid).

    Parameters
    ----------
    array : Array
        The array (geometry, element, weights).
    where : Directions, ThetaPhiGrid, UVGrid or array_like (..., 3)
        Directions to evaluate.
    frequency : float, optional
        Evaluation frequency in Hz (default: the design frequency). Phase-steered arrays squint
        off-frequency; true-time-delay arrays do not.
    method : str
        Leave at "auto" (the cost model picks); "reference" forces the plain-numpy path, and
        "direct", "fft", "nufft" force the others (for tests).
    tol : float
        Accuracy of the transform paths relative to the sum of |weights| (default
        :data:`DEFAULT_TOL`: directivity within 1e-9 of direct summation).

    Returns
    -------
    Field
        Components in the global (theta, phi) basis, shaped like ``where``.
    """
    check_method(method)
    tol = check_tol(tol)
    where = as_directions(where)
    k, w, el = _drive(array, frequency)
    pos = array.positions
    geo = array.geometry
    if geo.orientations is not None:
        e_t, e_p = _grouped(array, el, pos, w, k, where, method, tol)
    else:
        af = evaluate(pos, w, k, where, method, tol, lattice_hint(geo.lattice))
        if type(el) is Isotropic:  # unit pattern: skip the angles
            e_t, e_p = af, np.zeros(af.shape, complex)
        else:
            e_t, e_p = el.pattern(*angles_of(where.vectors))
            e_t = e_t * af
            e_p = e_p * af
    hidden = _invisible(where)
    if hidden is not None:
        # e_t and e_p are fresh arrays here (products, or the array factor itself).
        e_t[hidden] = np.nan
        e_p[hidden] = np.nan
    return Field(e_t.reshape(where.shape), e_p.reshape(where.shape), where)


def _one_aperture(arrays, frequency) -> bool:
    """True when ``arrays`` differ only in their weights at ``frequency``: the same positions,
    element model and wavenumber, and no element orientations."""
    a0 = arrays[0]
    p0, el0, k0 = a0.positions, a0.element_at(frequency), a0.k(frequency)
    for a in arrays:
        if a.geometry.orientations is not None or a.k(frequency) != k0:
            return False
        if a.positions is not p0 and not np.array_equal(a.positions, p0):
            return False
        el = a.element_at(frequency)
        if el is not el0 and (type(el) is not type(el0) or el.describe() != el0.describe()):
            return False
    return True


FRESH_PLAN_SHARE = 4.0
"""On a lattice of rows, :func:`field_of_beams` sums a beam's directions exactly (in the
one rows call) while that is estimated to cost at most this many times a transform's fixed
cost: its directions are new to the transforms (march steps, brackets, quadrature nodes
about the beam), and a fresh type-3 plan made the transform slower than the lattice sum up
to about 3,500 directions of a 16 x 16 panel (measured: 1.04 ms exact, 1.26 ms transform)."""


def field_of_beams(arrays, vectors, owner, *, frequency: float | None = None,
                   tol: float = DEFAULT_TOL) -> Field:
    """Far field at ``vectors[m]`` of ``arrays[owner[m]]``: many beams, each at its own
    directions, in one call.

    Arrays that differ only in their weights (the beams of a scan or taper family: equal
    positions, element model and wavenumber, no element orientations) are summed together:
    the beams with few directions (where no transform can win; on a lattice of rows, up to
    :data:`FRESH_PLAN_SHARE` transform overheads of exact work) by one direct summation
    with a row of weights per direction, the others each on the path :func:`field` would
    take for it; the element pattern is evaluated once for all directions. Other arrays are
    evaluated one by one by :func:`field`. Every value equals :func:`field` of its array to
    rounding.

    Parameters
    ----------
    arrays : sequence of Array
        The beams.
    vectors : array_like, shape (M, 3)
        Directions (unit vectors).
    owner : array_like of int, shape (M,)
        The beam of each direction.
    frequency : float, optional
        Evaluation frequency in Hz (default: each array's design frequency).
    tol : float
        As for :func:`field`.

    Returns
    -------
    Field
        Components at the M directions, flat.
    """
    tol = check_tol(tol)
    arrays = list(arrays)
    where = as_directions(np.asarray(vectors, float).reshape(-1, 3))
    dirs = where.vectors
    owner = np.asarray(owner, np.int64).reshape(-1)
    if len(owner) != len(dirs):
        raise SteradianError(f"field_of_beams: {len(owner)} owners for {len(dirs)} directions")
    e_t = np.zeros(len(dirs), complex)
    e_p = np.zeros(len(dirs), complex)
    if not len(dirs):
        return Field(e_t, e_p, where)
    if not _one_aperture(arrays, frequency):
        for b in np.unique(owner):
            sel = np.flatnonzero(owner == b)
            f = field(arrays[b], Directions(dirs[sel], (len(sel),)), frequency=frequency,
                      tol=tol)
            e_t[sel], e_p[sel] = f.e_theta, f.e_phi
        return Field(e_t, e_p, where)
    drives = [_drive(a, frequency) for a in arrays]
    k, el = drives[0][0], drives[0][2]
    pos = arrays[0].positions
    counts = np.bincount(owner, minlength=len(arrays))
    lat = exact_rows(pos, k)
    if lat is None:
        small = np.array([too_small(len(pos), int(c)) for c in counts])
    else:  # a beam's directions here are new to the transforms: their plan costs it too
        small = np.array([_cost.lattice(lat.cells, lat.nx + lat.ny, int(c))
                          <= FRESH_PLAN_SHARE * _cost.NUFFT_OVERHEAD for c in counts])
    af = np.empty(len(dirs), complex)
    rows = np.flatnonzero(small[owner])
    if len(rows):
        W = np.stack([d[1] for d in drives])
        af[rows] = af_direct_rows(pos, W, k, dirs[rows], owner[rows])
    hint = lattice_hint(arrays[0].geometry.lattice)
    for b in np.flatnonzero(~small & (counts > 0)):
        sel = np.flatnonzero(owner == b)
        af[sel] = evaluate(pos, drives[b][1], k, Directions(dirs[sel], (len(sel),)), "auto",
                           tol, hint)
    if type(el) is Isotropic:
        return Field(af, e_p, where)
    e_t, e_p = el.pattern(*angles_of(dirs))
    return Field(e_t * af, e_p * af, where)


def field_many(arrays, where, *, frequency: float | None = None,
               tol: float = DEFAULT_TOL) -> Field:
    """Far fields of several beams at the same directions: components of shape (B, M).

    Beams that differ only in their weights (a scan or taper family on a lobe-search set)
    share one path choice; on the non-uniform FFT path they share one transform plan and
    one execution for all weight vectors (the transform's several-vector form). Anything
    else is :func:`field` of each array. Each row equals :func:`field` of its array to the
    engine's tolerance.

    Parameters
    ----------
    arrays : sequence of Array
        The beams.
    where : Directions or array_like (M, 3)
        Directions.
    frequency : float, optional
        Evaluation frequency in Hz.
    tol : float
        As for :func:`field`.

    Returns
    -------
    Field
        ``e_theta`` and ``e_phi`` of shape (B, M).
    """
    tol = check_tol(tol)
    arrays = list(arrays)
    where = as_directions(where)
    r = None
    if arrays and isinstance(where, Directions) and _one_aperture(arrays, frequency):
        drives = [_drive(a, frequency) for a in arrays]
        k, el, pos = drives[0][0], drives[0][2], arrays[0].positions
        if not too_small(len(pos), len(where.vectors)):
            p = Problem(pos, k, where, tol, lattice_hint(arrays[0].geometry.lattice))
            r = _many_route(p, route(p, "auto"), len(arrays))
    if r is None:
        got = [field(a, where, frequency=frequency, tol=tol) for a in arrays]
        return Field(np.stack([g.e_theta.reshape(-1) for g in got]),
                     np.stack([g.e_phi.reshape(-1) for g in got]), where)
    af = np.asarray(r.run(np.stack([d[1] for d in drives]))).reshape(len(arrays), -1)
    if type(el) is Isotropic:
        return Field(af, np.zeros_like(af), where)
    e_t, e_p = el.pattern(*angles_of(where.vectors))
    return Field(af * e_t[None, :], af * e_p[None, :], where)


def _many_route(p, r, beams: int):
    """The non-uniform FFT route for ``beams`` weight vectors at the same directions when it
    is chosen for one, or when one plan and one execution for all of them are estimated
    :data:`._cost.MARGIN` times cheaper than the chosen exact path for each (its fixed cost
    counted once); else None (each beam on its own). Decided from the sizes alone."""
    if r.name == "nufft":
        return r
    if "nufft" not in r.est:
        return None
    t_n, t_d = r.est["nufft"][0], r.est[r.name][0]
    t_many = t_n + (beams - 1) * max(t_n - _cost.NUFFT_OVERHEAD, 0.0)
    return route(p, "nufft") if _cost.MARGIN * t_many < beams * t_d else None


def _responses_into(out, el, k, pos, groups, dirs):
    """Fill ``out`` (2, m, N), zero on entry, with the element responses at ``dirs``."""
    bt = bp = None
    if el.vector:
        bt, bp = spherical_basis(*angles_of(dirs))
    for R, idx in groups:
        ph_m = np.exp(1j * k * (dirs @ pos[idx].T))
        s, v = _element_global(el, dirs, R)
        if v is None:
            out[0][:, idx] = s[:, None] * ph_m
        else:
            out[0][:, idx] = (v * bt).sum(axis=1)[:, None] * ph_m
            out[1][:, idx] = (v * bp).sum(axis=1)[:, None] * ph_m


def _response_setup(array, where, frequency):
    dirs = as_directions(where).vectors
    return (dirs, array.k(frequency), array.element_at(frequency), array.positions,
            _groups(array.geometry.orientations, array.n))


def response_blocks(array, where, *, frequency: float | None = None, rows: int | None = None):
    """The rows of :func:`response_matrix` a chunk of directions at a time.

    Yields ``(start, block)`` with ``block`` of shape (2, m, N) for directions
    ``start .. start + m - 1`` of ``where`` (in ``where.vectors`` order); ``rows`` directions
    per block (default: as many as fit in :data:`MEMORY_BUDGET`). For callers that reduce the
    responses as they go (a Gram matrix, a pattern for many weight vectors).
    """
    dirs, k, el, pos, groups = _response_setup(array, where, frequency)
    step = int(rows) if rows else budget_rows(64 * array.n)
    m = min(step, len(dirs))
    require(2 * m * array.n * 16, f"response blocks of {m:,} directions x {array.n:,} elements",
            "ask for fewer rows per block")
    for i in range(0, len(dirs), step):
        d = dirs[i:i + step]
        block = np.zeros((2, len(d), array.n), complex)
        _responses_into(block, el, k, pos, groups, d)
        yield i, block


def response_matrix(array, where, *, frequency: float | None = None) -> np.ndarray:
    """Per-element responses: ``E = A @ w`` for any weights ``w``.

    Returns an array of shape (2, M, N): the theta and phi field components of each element
    (element pattern times its phase term) at the M directions, without weights. For scalar
    models the second component is zero. Used by synthesis, which needs patterns linear in the
    weights. Intermediates are computed in chunks of directions within
    :data:`MEMORY_BUDGET`; a result over the memory budget (:mod:`steradian.budget`) is
    refused before it is allocated (use :func:`response_blocks`).
    """
    where = as_directions(where)
    m = math.prod(where.shape)
    require(2 * m * array.n * 16, f"response_matrix of {m:,} directions x {array.n:,} "
            "elements", "use engine.response_blocks to take the directions a chunk at a time")
    dirs, k, el, pos, groups = _response_setup(array, where, frequency)
    m, n = len(dirs), array.n
    out = np.zeros((2, m, n), complex)
    step = budget_rows(32 * n)
    for i in range(0, m, step):
        _responses_into(out[:, i:i + step], el, k, pos, groups, dirs[i:i + step])
    return out
