"""The pattern engine: the one place in steradian that sums element contributions.

:func:`field` evaluates an :class:`~steradian.array.Array` at arbitrary directions or on a
theta-phi or u-v grid. Everything else in the project (integrator, metrics, synthesis, beam
tables, plots) calls it, or the lower-level :func:`array_factor` / :func:`response_matrix`,
so faster paths slot in here without touching any caller.

Conventions: time dependence exp(+j w t); AF(r) = sum_n w_n exp(+j k r . r_n).

Paths (``method``), picked by a cost model (:mod:`steradian._cost`) from the number of
elements and directions, the structure of positions and grid, and the tolerance:

``"reference"``
    The plain-numpy definition; every other path is tested against it.
``"direct"``
    numba direct summation (:mod:`steradian._kernels`); exact to rounding.
``"fft"``
    Planar lattices (rows of equally spaced elements) onto regular u-v grids by chirp-z
    transforms (:mod:`steradian._fft`); exact to rounding.
``"nufft"``
    Arbitrary positions by non-uniform FFTs (:mod:`steradian._nufft`): type 1 onto regular
    u-v grids for planar layouts, type 3 onto anything else; accurate to ``tol``.

Planar arrays (constant z) evaluated on a theta-phi grid that is symmetric about the horizon
(full-sphere Gauss-Legendre rules) are summed on the upper half only: the planar sum depends
on (u, v) alone, and the mirror direction differs by the exact factor exp(-2jk w z0).
"""

from __future__ import annotations

import math
import weakref
from dataclasses import dataclass
from dataclasses import field as dc_field
from typing import Literal, get_args

import numpy as np

from . import _cost
from .directions import Directions, ThetaPhiGrid, UVGrid, as_directions
from .elements import Isotropic, angles_of, spherical_basis
from .errors import SteradianError

__all__ = ["Field", "field", "array_factor", "response_matrix", "MEMORY_BUDGET", "DEFAULT_TOL",
           "PathChoice", "choose_path", "clear_plan_cache", "sinc_power_sum", "gram_matrix"]

MEMORY_BUDGET = 64 * 2**20
"""Bytes of temporary complex storage any single evaluation may use (chunking limit)."""

DEFAULT_TOL = 1e-12
"""Default accuracy of the transform paths, relative to sum |w_n| (the largest |AF| can be).

Measured errors are 10 to 100 times smaller; directivity then agrees with direct summation to
better than 1e-10 relative.
"""

Method = Literal["auto", "direct", "reference", "fft", "nufft"]

_kernels = None


def _k():
    """Import the numba kernels on first use (keeps ``import steradian`` and --help fast)."""
    global _kernels
    if _kernels is None:
        from . import _kernels as kmod

        _kernels = kmod
    return _kernels


def clear_plan_cache() -> None:
    """Forget cached non-uniform FFT plans (they are reused while positions and directions
    stay the same)."""
    from . import _nufft

    _nufft.clear_cache()


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


def _af_reference(pos, w, k, dirs):
    """Plain-numpy array factor, chunked to MEMORY_BUDGET."""
    m = len(dirs)
    out = np.empty(m, complex)
    step = max(1, MEMORY_BUDGET // (16 * max(len(pos), 1)))
    for i in range(0, m, step):
        out[i:i + step] = np.exp(1j * k * (dirs[i:i + step] @ pos.T)) @ w
    return out


_SOA: dict = {}


def _frozen(a) -> bool:
    """True when neither ``a`` nor any array it views can be written (safe to memoise)."""
    while isinstance(a, np.ndarray):
        if a.flags.writeable:
            return False
        a = a.base
    return a is None


def _split(a: np.ndarray, fn):
    """``fn(a)`` memoised by identity for frozen arrays (positions, memoised weights)."""
    if not _frozen(a):
        return fn(a)
    got = _SOA.get(id(a))
    if got is not None and got[0]() is a:
        return got[1]
    if len(_SOA) > 64:
        _SOA.clear()
    val = fn(a)
    _SOA[id(a)] = (weakref.ref(a), val)
    return val


def _pos_soa(pos):
    return tuple(np.ascontiguousarray(c) for c in np.asarray(pos, float).T)


def _w_soa(w):
    return np.ascontiguousarray(w.real), np.ascontiguousarray(w.imag)


def _af_direct(pos, w, k, dirs):
    km = _k()
    out_re = np.empty(len(dirs))
    out_im = np.empty(len(dirs))
    px, py, pz = _split(pos, _pos_soa)
    wr, wi = _split(w, _w_soa)
    d = np.ascontiguousarray(dirs.T)
    kern = km.af_direct_serial if len(pos) * len(dirs) < _cost.SERIAL_TERMS else km.af_direct
    kern(px, py, pz, wr, wi, float(k), d[0], d[1], d[2], out_re, out_im)
    return out_re + 1j * out_im


# ---- path selection -------------------------------------------------------------------------

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


def _check_tol(tol) -> float:
    try:
        t = float(tol)
    except (TypeError, ValueError):
        raise SteradianError(f"tol must be a number, got {tol!r}") from None
    if not (math.isfinite(t) and 0 < t < 1):
        raise SteradianError(f"tol must be in (0, 1), got {tol!r}")
    return t


class _Layout:
    """What the cost model needs to know about a set of positions (computed once per array).

    ``keep``: coordinates that vary (a column whose half-range is a phase below tol/100 counts
    as constant, its mid-range going into ``offset``); ``half``: half-widths (m) of the kept
    columns; ``planar``: constant z (at ``z0``); ``r_xy``: largest distance from the centroid
    in x-y.
    """

    def __init__(self, pos: np.ndarray, k: float, tol: float):
        lo, hi = pos.min(axis=0), pos.max(axis=0)
        mid = 0.5 * (lo + hi)  # exact for a constant column
        half = 0.5 * (hi - lo)
        self.keep = [i for i in range(3) if k * half[i] > 1e-2 * tol]
        self.offset = np.where([i not in self.keep for i in range(3)], mid, 0.0)
        self.half = [float(half[i]) for i in self.keep]
        self.planar = 2 not in self.keep
        self.z0 = float(mid[2]) if self.planar else 0.0
        self._pos = pos
        self._r_xy = None
        self._rows: dict = {}

    @property
    def r_xy(self) -> float:
        if self._r_xy is None:
            d = self._pos[:, :2] - self._pos[:, :2].mean(axis=0)
            self._r_xy = float(np.sqrt((d**2).sum(axis=1)).max(initial=0.0))
        return self._r_xy

    def rows(self, pos, k, tol, hint):
        key = hint
        if key not in self._rows:
            from . import _fft

            self._rows[key] = _fft.detect_rows(pos, k, tol, hint) if self.planar else None
        return self._rows[key]


_LAYOUTS: dict = {}


def _layout(pos: np.ndarray, k: float, tol: float) -> _Layout:
    """Layout of ``pos``, memoised for frozen arrays (geometry positions) by identity."""
    if not _frozen(pos):
        return _Layout(pos, k, tol)
    key = (id(pos), float(k), float(tol))
    got = _LAYOUTS.get(key)
    if got is not None and got[0]() is pos:
        return got[1]
    if len(_LAYOUTS) > 64:
        for kk in [kk for kk, v in _LAYOUTS.items() if v[0]() is None] or list(_LAYOUTS):
            del _LAYOUTS[kk]
    lay = _Layout(pos, k, tol)
    _LAYOUTS[key] = (weakref.ref(pos), lay)
    return lay


def _nufft_ok(ndim, tol):
    from . import _nufft

    return _nufft.available() and ndim >= 1 and tol >= _nufft.min_tol(ndim)


def _min_tol_msg(ndim):
    from . import _nufft

    return f"{_nufft.min_tol(max(ndim, 1)):.1e}" if _nufft.available() else "(unavailable)"


def _too_small(n, m):
    """No transform can beat direct summation by MARGIN (its fixed overhead alone is too
    much): skip the analysis."""
    return _cost.direct(n, m) < _cost.MARGIN * min(_cost.OVERHEADS)


def _threads(estimate: float) -> int:
    """Threads for a transform: one below THREADS_FROM seconds (pool wake-up costs more)."""
    from . import _nufft

    return 1 if estimate < _cost.THREADS_FROM else _nufft.nthreads()


@dataclass(eq=False)
class _Route:
    name: str
    detail: str
    est: dict
    run: object  # callable(weights) -> flat complex array


def _pick(est, forced, what):
    """Cheapest admissible path; direct unless another is MARGIN times faster."""
    if forced != "auto":
        if forced not in est or not math.isfinite(est[forced][0]):
            raise SteradianError(f"method={forced!r} does not apply to {what}")
        return forced
    # The exact paths are the baseline; a transform must beat it by MARGIN.
    best = "reference" if est["reference"][0] < est["direct"][0] else "direct"
    t_best = est[best][0] / _cost.MARGIN
    for name, (t, _) in est.items():
        if name not in ("direct", "reference") and t < t_best:
            best, t_best = name, t
    return best


def _base_est(n, m):
    return {"reference": (_cost.reference(n, m), "numpy"),
            "direct": (_cost.direct(n, m), "numba, one thread" if n * m < _cost.SERIAL_TERMS
                       else "numba, all threads")}


def _route_vectors(pos, k, dirs, tol, forced) -> _Route:
    """Route for arbitrary direction vectors (M, 3)."""
    n, m = len(pos), len(dirs)
    est = _base_est(n, m)
    lay = None
    if forced in ("nufft", "fft") or (forced == "auto" and not _too_small(n, m)):
        lay = _layout(pos, k, tol)
        if _nufft_ok(len(lay.keep), tol):
            if m:
                span = dirs.max(axis=0) - dirs.min(axis=0)
                sh = [0.5 * float(span[i]) for i in lay.keep]
            else:
                sh = [0.0] * len(lay.keep)
            est["nufft"] = (_cost.nufft3(n, m, [k * h for h in lay.half], sh, tol),
                            f"type 3, {len(lay.keep)}-D")
        elif forced == "nufft":
            raise SteradianError(
                f"method='nufft' needs tol >= {_min_tol_msg(len(lay.keep))}, got tol={tol:g}")
    name = _pick(est, forced, "arbitrary directions (use 'direct' or 'nufft')")

    def run(w):
        if name == "reference":
            return _af_reference(pos, w, k, dirs)
        if name == "direct":
            return _af_direct(pos, w, k, dirs)
        from . import _nufft

        return _nufft.type3(pos, w, k, dirs, tol, lay.keep, lay.offset,
                            _threads(est[name][0]))

    return _Route(name, est[name][1], est, run)


def _route_uv(pos, k, grid: UVGrid, tol, forced, hint) -> _Route:
    from . import _fft

    n, nu, nv = len(pos), len(grid.u), len(grid.v)
    m = nu * nv
    if forced == "auto" and _too_small(n, m):
        return _route_vectors(pos, k, grid.vectors, tol, forced)
    su, sv = _fft.uniform_step(grid.u), _fft.uniform_step(grid.v)
    steps_ok = su is not None and sv is not None
    lay = _layout(pos, k, tol)
    est = _base_est(n, m)
    rows = None
    if steps_ok and lay.planar:
        rows = lay.rows(pos, k, tol, hint)
        if rows is not None and rows.cells <= 8 * n + 64:
            # Priced as non-separable (the weights may not factor): an upper bound.
            est["fft"] = (_cost.fft_lattice(rows.nx, rows.ny, nu, nv, False,
                                            not rows.common_offset), "chirp-z")
        if _nufft_ok(2, tol):
            est["nufft"] = (_cost.nufft1(n, nu, nv, tol), "type 1, u-v grid")
    if forced == "fft" and "fft" not in est:
        raise SteradianError(
            "method='fft' needs a planar lattice (rows of equally spaced elements at one "
            "height) and a u-v grid with equal steps")
    if "nufft" not in est:
        # Not planar or not equally spaced: arbitrary directions.
        return _route_vectors(pos, k, grid.vectors, tol, forced)
    name = _pick(est, forced, "this u-v grid")
    u0, v0 = float(grid.u[0]), float(grid.v[0])

    def run(w):
        if name == "fft":
            return _fft.lattice_uv(rows, w, k, u0, su, nu, v0, sv, nv, grid.hemisphere, tol,
                                   workers=-1 if est[name][0] > _cost.THREADS_FROM else 1)
        if name == "nufft":
            from . import _nufft

            s = _nufft.type1_uv(pos, w, k, u0, su, nu, v0, sv, nv, tol, _threads(est[name][0]))
            if lay.z0 != 0.0:
                w2 = 1.0 - grid.u[None, :] ** 2 - grid.v[:, None] ** 2
                s *= np.exp(1j * k * lay.z0 * grid.hemisphere
                            * np.sqrt(np.clip(w2, 0.0, None)))
            return s.ravel()
        dirs = grid.vectors
        return _af_reference(pos, w, k, dirs) if name == "reference" else _af_direct(
            pos, w, k, dirs)

    return _Route(name, est[name][1], est, run)


def _mirror_rows(theta, kr: float, tol: float):
    """Number of upper rows h when theta_i + theta_(n-1-i) = pi for all i (else None)."""
    t = np.asarray(theta, float)
    n = len(t)
    if n < 2:
        return None
    slack = max(0.1 * tol / max(kr, 1.0), 8 * np.finfo(float).eps * np.pi)
    if np.abs(t + t[::-1] - np.pi).max() > slack:
        return None
    return (n + 1) // 2


def _route_thetaphi(pos, k, grid: ThetaPhiGrid, tol, forced) -> _Route:
    n, m = len(pos), grid.shape[0] * grid.shape[1]
    if forced == "auto" and _too_small(n, m):
        return _route_vectors(pos, k, grid.vectors, tol, forced)
    lay = _layout(pos, k, tol)
    h = _mirror_rows(grid.theta, k * lay.r_xy, tol) if lay.planar else None
    if h is None or h >= len(grid.theta):
        return _route_vectors(pos, k, grid.vectors, tol, forced)
    theta = np.asarray(grid.theta, float)
    nt = len(theta)
    inner = _route_vectors(pos, k, ThetaPhiGrid(theta[:h], grid.phi).vectors, tol, forced)

    def run(w):
        s = inner.run(w).reshape(h, -1)
        full = np.empty((nt, s.shape[1]), complex)
        full[:h] = s
        full[h:] = s[: nt - h][::-1]
        if lay.z0 != 0.0:
            # AF = S exp(jk w z0) with S even in w: the mirror row differs by the w change.
            dw = np.cos(theta[h:]) - np.cos(theta[: nt - h][::-1])
            full[h:] *= np.exp(1j * k * lay.z0 * dw)[:, None]
        return full.ravel()

    est = {a: b for a, b in inner.est.items()}
    return _Route(inner.name, inner.detail + ", upper half of a mirror-symmetric grid", est,
                  run)


def _route(pos, k, where, tol, forced, hint=None) -> _Route:
    if isinstance(where, UVGrid):
        return _route_uv(pos, k, where, tol, forced, hint)
    if isinstance(where, ThetaPhiGrid):
        return _route_thetaphi(pos, k, where, tol, forced)
    return _route_vectors(pos, k, where.vectors, tol, forced)


def _af_grid(pos, w, k, where, method, tol, hint=None):
    """Array factor at ``where`` (flat, in ``where.vectors`` order) on the chosen path."""
    if method == "reference":
        return _af_reference(pos, w, k, where.vectors)
    if method == "direct":
        return _af_direct(pos, w, k, where.vectors)
    if method == "auto":
        n, m = len(pos), math.prod(where.shape)
        if _too_small(n, m):  # no transform can win: skip building a route
            dirs = where.vectors
            if _cost.reference(n, m) < _cost.direct(n, m):
                return _af_reference(pos, w, k, dirs)
            return _af_direct(pos, w, k, dirs)
    return _route(pos, k, where, tol, method, hint).run(w)


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
    r = _route(pos, float(k), as_directions(where), _check_tol(tol), "auto",
               _lattice_hint(lattice))
    return PathChoice(r.name, r.detail, {a: b[0] for a, b in r.est.items()})


def _lattice_hint(lattice):
    """(dx, dy) from primitive vectors with the first along x, else None."""
    if lattice is None:
        return None
    L = np.atleast_2d(np.asarray(lattice, float))
    a1 = L[0]
    if a1[0] == 0 or abs(a1[1]) > 1e-12 * abs(a1[0]) or abs(a1[2]) > 1e-12 * abs(a1[0]):
        return None
    dy = abs(float(L[1][1])) if len(L) > 1 and L[1][1] != 0 else None
    return (abs(float(a1[0])), dy)


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
    if method not in get_args(Method):
        raise SteradianError(f"method must be one of {get_args(Method)}, got {method!r}")
    tol = _check_tol(tol)
    pos = np.asarray(positions, float)
    w = np.asarray(weights, complex)
    if isinstance(directions, (Directions, ThetaPhiGrid, UVGrid)):
        where = directions
    else:
        dirs = np.asarray(directions, float).reshape(-1, 3)
        where = Directions(dirs, (len(dirs),))
    return _af_grid(pos, w, float(k), where, method, tol)


# ---- per-array memo (weights, element at frequency) ------------------------------------------

_MEMO: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _drive(array, frequency):
    """(k, weights, element) of ``array`` at ``frequency``, memoised per array object.

    Arrays are immutable, so repeated evaluations (peak refinement, synthesis loops) skip
    recomputing N steering phases per call.
    """
    try:
        memo = _MEMO.setdefault(array, {})
    except TypeError:  # pragma: no cover - not weak-referenceable
        memo = {}
    key = None if frequency is None else float(frequency)
    got = memo.get(key)
    if got is None:
        w = np.asarray(array.weights(frequency), complex)
        w.setflags(write=False)
        got = (array.k(frequency), w, array.element_at(frequency))
        if len(memo) > 8:
            memo.clear()
        memo[key] = got
    return got


_GROUP_CACHE: dict[int, tuple[np.ndarray, list]] = {}


def _groups(orientations, n):
    """(rotation or None, element indices) for each distinct orientation.

    Geometry orientations are read-only arrays, so the grouping is cached on the array's
    identity (checked with ``is``) and computed once per geometry, not once per evaluation.
    """
    if orientations is None:
        return [(None, slice(None))]
    hit = _GROUP_CACHE.get(id(orientations))
    if hit is not None and hit[0] is orientations:
        return hit[1]
    flat = np.round(orientations.reshape(n, 9), 12)
    uniq, inv = np.unique(flat, axis=0, return_inverse=True)
    inv = inv.ravel()
    groups = [(uniq[g].reshape(3, 3), np.flatnonzero(inv == g)) for g in range(len(uniq))]
    if len(_GROUP_CACHE) >= 8:
        _GROUP_CACHE.pop(next(iter(_GROUP_CACHE)))
    _GROUP_CACHE[id(orientations)] = (orientations, groups)
    return groups


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
    if method not in get_args(Method):
        raise SteradianError(f"method must be one of {get_args(Method)}, got {method!r}")
    tol = _check_tol(tol)
    where = as_directions(where)
    k, w, el = _drive(array, frequency)
    pos = array.positions
    geo = array.geometry
    if geo.orientations is None:
        af = _af_grid(pos, w, k, where, method, tol, _lattice_hint(geo.lattice))
        if type(el) is Isotropic:  # unit pattern: skip the angles
            e_t, e_p = af, np.zeros(af.shape, complex)
        else:
            th, ph = angles_of(where.vectors)
            e_t, e_p = el.pattern(th, ph)
            e_t = e_t * af
            e_p = e_p * af
    else:
        dirs = where.vectors
        scalar = np.zeros(len(dirs), complex)
        vec = np.zeros((len(dirs), 3), complex)
        for R, idx in _groups(geo.orientations, array.n):
            af = _af_grid(pos[idx], w[idx], k, where, method, tol)
            s, v = _element_global(el, dirs, R)
            if v is None:
                scalar += s * af
            else:
                vec += v * af[:, None]
        th, ph = angles_of(dirs)
        if el.vector:
            bt, bp = spherical_basis(th, ph)
            e_t = (vec * bt).sum(axis=1)
            e_p = (vec * bp).sum(axis=1)
        else:
            e_t, e_p = scalar, np.zeros_like(scalar)
    hidden = _invisible(where)
    if hidden is not None:
        # e_t and e_p are fresh arrays here (products, or the array factor itself).
        e_t[hidden] = np.nan
        e_p[hidden] = np.nan
    return Field(e_t.reshape(where.shape), e_p.reshape(where.shape), where)


def response_matrix(array, where, *, frequency: float | None = None) -> np.ndarray:
    """Per-element responses: ``E = A @ w`` for any weights ``w``.

    Returns an array of shape (2, M, N): the theta and phi field components of each element
    (element pattern times its phase term) at the M directions, without weights. For scalar
    models the second component is zero. Used by synthesis, which needs patterns linear in the
    weights.
    """
    where = as_directions(where)
    dirs = where.vectors
    k = array.k(frequency)
    el = array.element_at(frequency)
    pos = array.positions
    n = array.n
    out = np.zeros((2, len(dirs), n), complex)
    th, ph = angles_of(dirs)
    bt, bp = spherical_basis(th, ph)
    for R, idx in _groups(array.geometry.orientations, n):
        sub = pos[idx]
        ph_m = np.exp(1j * k * (dirs @ sub.T))
        s, v = _element_global(el, dirs, R)
        if v is None:
            out[0][:, idx] = s[:, None] * ph_m
        else:
            out[0][:, idx] = (v * bt).sum(axis=1)[:, None] * ph_m
            out[1][:, idx] = (v * bp).sum(axis=1)[:, None] * ph_m
    return out


def gram_matrix(positions, k: float, dirs: np.ndarray, weights: np.ndarray) -> np.ndarray:
    r"""Hermitian :math:`G_{mn} = \sum_i \omega_i e^{-jk\hat r_i\cdot r_m}
    e^{+jk\hat r_i\cdot r_n}`.

    For non-negative ``weights`` (M,) at directions ``dirs`` (M, 3). The phase block of each
    chunk of directions (within :data:`MEMORY_BUDGET`) comes from the numba kernel and is
    accumulated by a rank-k Hermitian update (BLAS zherk: half the work of a general product).
    """
    from scipy.linalg.blas import zherk

    pos = np.asarray(positions, float)
    n = len(pos)
    wts = np.asarray(weights, float)
    keep = wts > 0
    dirs, wts = np.asarray(dirs, float)[keep], wts[keep]
    km = _k()
    px, py, pz = (np.ascontiguousarray(c) for c in pos.T)
    G = np.zeros((n, n), complex, order="F")
    step = max(1, MEMORY_BUDGET // (16 * max(n, 1)))
    for i in range(0, len(dirs), step):
        d = np.ascontiguousarray(dirs[i:i + step].T)
        P = np.empty((d.shape[1], n), complex)
        km.phase_matrix(px, py, pz, float(k), d[0], d[1], d[2], P)
        np.conjugate(P, out=P)
        P *= np.sqrt(wts[i:i + step])[:, None]
        # A = conj(P)^T is Fortran-ordered (N, Mc) without a copy; G <- A A^H + G (upper).
        G = zherk(1.0, P.T, beta=1.0, c=G, trans=0, lower=0, overwrite_c=1)
    up = np.triu(G)
    return up + np.triu(G, 1).conj().T


def sinc_power_sum(positions, weights, k: float) -> float:
    r""":math:`\sum_{mn} w_m w_n^* \mathrm{sinc}(k|r_m - r_n|)` with sinc(x) = sin(x)/x
    (half the pairs, numba; one thread below a few million pairs, where waking the thread
    pool costs more than it saves)."""
    km = _k()
    p = np.ascontiguousarray(np.asarray(positions, float).T)
    w = np.asarray(weights, complex)
    kern = km.sinc_power_serial if len(w) ** 2 < 4_000_000 else km.sinc_power
    return float(kern(p[0], p[1], p[2], np.ascontiguousarray(w.real),
                      np.ascontiguousarray(w.imag), float(k)))
