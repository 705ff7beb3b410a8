r"""The lobe and peak search: the one place the package finds maxima of a pattern off-grid.

Every caller (peak directivity, pattern metrics, beam-table metrics, the optimizer's dense
re-check, the element-table peak) does the same three steps, here:

1. **Search set** (:class:`SearchSet`): near-uniform directions (a Fibonacci set from
   :func:`steradian.directions.fibonacci_directions`, a half great circle for patterns that
   depend on one angle only, or any supplied set) with each direction's nearest neighbours.
2. **Candidates** (:meth:`SearchSet.local_maxima`): the ``count`` highest samples that are not
   below any neighbour, optionally inside an *allowed region* (e.g. outside the main lobe);
   for many patterns at once (one column per beam) in one vectorised pass.
3. **Refinement** (:func:`refine_maxima`): a safeguarded Newton ascent in each candidate's
   tangent plane (or along its great circle), batched over all candidates of all patterns.
   With many candidates per pattern, :func:`estimate_maxima` first estimates each lobe's
   peak from one stencil and :func:`refine_best` refines only those that could be the
   highest.

Why this refinement: it is batched (one call of the pattern per iteration for every
candidate of every beam), never lowers the value it holds (so a pattern set to zero outside
an allowed region keeps points inside it, and a projection reaches maxima on a region's
edge), and converges quadratically once the model is concave. The alternatives it replaced
were a serial Nelder-Mead per candidate, a fixed number of unsafeguarded Newton steps and a
grid pattern search with linear convergence.

The search works on callables that map unit vectors to non-negative values (an intensity, a
ratio to a bound); it never sees an array or an element.

Why several candidates: two lobes within a fraction of a dB of each other are common
(quantization lobes, grating lobes); with a few samples per lobe the highest *sample* may sit
on the lower lobe, so the highest refined value over several local maxima is taken.

References
----------
R. Swinbank and R. J. Purser, "Fibonacci grids: A novel approach to global modelling,"
*Q. J. R. Meteorol. Soc.* 132 (2006) 1769-1793 (the search set).
J. Nocedal and S. J. Wright, *Numerical Optimization*, 2nd ed., Springer, 2006, ch. 3-4
(Newton steps with a safeguarded step length).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..budget import require
from ..directions import fibonacci_directions, normalise, tangent_frames

__all__ = ["SearchSet", "search_spacing", "refine_maxima", "estimate_maxima", "refine_best",
           "find_maxima", "find_maxima_many", "pointwise", "peak_value", "POINT_BYTES",
           "require_search"]

POINT_BYTES = 400
"""Peak bytes per direction of a search set and its first sampling: 314 B measured with
tracemalloc for building a Fibonacci set with 6 neighbours (vectors, KD-tree, neighbour
indices and distances), plus the sampled pattern value and its chunk of the field."""


def _require_points(n, what: str) -> None:
    many = f"{int(n):,}" if n < 2**62 else f"more than {2**62:.1e}"
    require(int(n) * POINT_BYTES, f"a lobe search set of {many} directions ({what})",
            "the lobes are too narrow to search at this electrical size; reduce the frequency "
            "or the array extent, or raise the memory budget (STERADIAN_MEMORY_BUDGET)")


def search_spacing(electrical_radius: float, per_null: float = 2.0,
                   cap: float = 0.2) -> float:
    """Sample spacing (rad) giving ``per_null`` samples per main-lobe null width.

    The null-to-null width of an aperture of radius R is about 2 pi / (k R) (R. J. Mailloux,
    *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 1); ``electrical_radius``
    is k R (taken as at least 1). The spacing never exceeds ``cap``.
    """
    kr = max(float(electrical_radius), 1.0)
    return min(2 * np.pi / kr / float(per_null), float(cap))


def pointwise(f):
    """Adapt ``f(vectors (M, 3)) -> (M,)`` to the ``fun(points, rows)`` form of
    :func:`refine_maxima` (the same function for every start)."""
    def fun(points, rows=None):
        p = np.asarray(points, float)
        return np.asarray(f(p.reshape(-1, 3)), float).reshape(p.shape[:-1])
    return fun


def _per_spacing(total: float, spacing: float, power: int, div: int = 1,
                 ceil: bool = False) -> int:
    """Points of a set with ``total / spacing**power / div`` points (floor, or ceil); a
    zero, negative or non-finite spacing counts as unbounded (2**62)."""
    s = float(spacing)
    try:
        x = total / s**power / div if s > 0 and math.isfinite(s) else math.inf
    except (ZeroDivisionError, OverflowError):  # s**power underflows to 0 or overflows
        x = math.inf if s < 1 else 0.0
    if not x < 2**62:
        return 2**62
    return math.ceil(x) if ceil else int(x)


def require_search(spacing: float, *, front_only: bool = False, min_points: int = 0) -> int:
    """Directions of :meth:`SearchSet.fibonacci` for these arguments, after refusing a set
    over the memory budget (:data:`POINT_BYTES` each). Cheap: a caller that will search
    later can check first, before other work."""
    n = max(_per_spacing(4 * np.pi, spacing, 2, 2 if front_only else 1), int(min_points))
    _require_points(n, f"spacing {spacing:.3g} rad")
    return n


@dataclass(frozen=True, eq=False)
class SearchSet:
    """Directions to sample, with each direction's nearest neighbours.

    Attributes
    ----------
    directions : ndarray, shape (M, 3)
        Unit vectors.
    neighbours : ndarray of int, shape (M, k)
        Indices of each direction's k nearest neighbours (in ``keys`` space when given).
    spacing : float
        Typical distance between neighbours (rad); the refinement's first step.
    normal : ndarray (3,) or None
        For a set on one great circle (a pattern that depends on one angle only), the
        circle's normal: refinement then stays on the circle.
    """

    directions: np.ndarray
    neighbours: np.ndarray
    spacing: float
    normal: np.ndarray | None = None

    @classmethod
    def from_points(cls, directions, spacing: float, *, keys=None, k: int | None = None,
                    normal=None) -> SearchSet:
        """Any set of directions; neighbours by distance between ``keys`` (default: the
        vectors). ``k`` defaults to 2 for one-dimensional keys or a great circle, else 6
        (the first ring of a near-uniform set)."""
        from scipy.spatial import cKDTree

        d = normalise(np.asarray(directions, float).reshape(-1, 3))
        _require_points(len(d), "given directions")
        kk = d if keys is None else np.asarray(keys, float).reshape(len(d), -1)
        one_d = normal is not None or kk.shape[1] == 1
        k = (2 if one_d else 6) if k is None else int(k)
        k = max(min(k, len(d) - 1), 0)
        if k == 0:
            nb = np.zeros((len(d), 1), np.int64) + np.arange(len(d))[:, None]
        else:
            nb = cKDTree(kk).query(kk, k=k + 1)[1][:, 1:]
        n = None if normal is None else normalise(np.asarray(normal, float))
        return cls(d, np.asarray(nb, np.int64).reshape(len(d), -1), float(spacing), n)

    @classmethod
    def fibonacci(cls, spacing: float, *, front_only: bool = False, rotation=None,
                  min_points: int = 0, k: int | None = None) -> SearchSet:
        """Near-uniform set on the sphere (or front hemisphere, turned by ``rotation``) with
        about one direction per ``spacing``\\ :sup:`2` steradians; ``k`` neighbours (default
        6: use 8 when every lobe spans three spacings or more, fewer samples of one lobe are
        then taken for separate maxima)."""
        n = require_search(spacing, front_only=front_only, min_points=min_points)
        d = fibonacci_directions(n, front_only)
        if rotation is not None:
            d = d @ np.asarray(rotation, float).T
        return cls.from_points(d, spacing, k=k)

    @classmethod
    def great_circle(cls, axis, toward, spacing: float) -> SearchSet:
        """Half great circle from ``axis`` to ``-axis`` through the side of ``toward``: the
        search set of a pattern that depends only on the angle from ``axis``."""
        a = normalise(np.asarray(axis, float))
        b = np.asarray(toward, float) - (np.asarray(toward, float) @ a) * a
        if np.linalg.norm(b) < 1e-9:
            b = tangent_frames(a)[0]
        b = normalise(b)
        n = max(_per_spacing(np.pi, spacing, 1, ceil=True) + 1, 8)
        _require_points(n, f"half great circle, spacing {spacing:.3g} rad")
        t = np.linspace(0.0, np.pi, n)
        d = np.cos(t)[:, None] * a + np.sin(t)[:, None] * b
        return cls.from_points(d, float(t[1] - t[0]), normal=np.cross(a, b))

    def __len__(self) -> int:
        return len(self.directions)

    def local_maxima(self, values, count: int, allowed=None) -> np.ndarray:
        """The ``count`` highest samples not below any neighbour, highest first.

        ``values``: shape (M,) for one pattern or (M, B) for B patterns; ``allowed``: a
        boolean mask of the same shape (or (M,)) where maxima may be picked. Non-positive and
        non-finite values are never picked. Returns indices, shape (count,) or (B, count),
        padded with -1 where there are fewer maxima.
        """
        v = np.asarray(values, float)
        one = v.ndim == 1
        V = v[:, None] if one else v
        M, B = V.shape
        A = None if allowed is None else np.asarray(allowed, bool)
        if A is not None and A.ndim == 1:
            A = A[:, None]
        count = max(int(count), 1)
        kk = min(count, M)
        out = np.full((B, count), -1, np.int64)
        chunk = max(1, int(2**24 // (8 * max(M, 1) * max(self.neighbours.shape[1], 1))))
        for b0 in range(0, B, chunk):
            Vb = V[:, b0:b0 + chunk]
            nmax = Vb[self.neighbours[:, 0]]
            for j in range(1, self.neighbours.shape[1]):
                np.maximum(nmax, Vb[self.neighbours[:, j]], out=nmax)
            ok = (Vb >= nmax) & (Vb > 0) & np.isfinite(Vb)
            if A is not None:
                ok &= A[:, b0:b0 + chunk] if A.shape[1] > 1 else A
            s = np.where(ok, Vb, -np.inf)
            top = np.argpartition(-s, kk - 1, axis=0)[:kk] if kk < M else np.argsort(-s, 0)
            vals = np.take_along_axis(s, top, 0)
            order = np.argsort(-vals, axis=0, kind="stable")
            top = np.take_along_axis(top, order, 0)
            vals = np.take_along_axis(vals, order, 0)
            out[b0:b0 + chunk, :kk] = np.where(np.isfinite(vals), top, -1).T
        return out[0] if one else out


_STENCIL_2D = np.array([(i, j) for i in (-1, 0, 1) for j in (-1, 0, 1)], float)
_STENCIL_1D = np.array([(-1, 0), (0, 0), (1, 0)], float)


def _local_frame(r, normal):
    """Tangents (e1, e2) at unit vectors r, the stencil and its Newton model: the tangent
    plane, or the great circle with ``normal`` (e2 = 0)."""
    if normal is None:
        e1, e2 = tangent_frames(r)
        return e1, e2, _STENCIL_2D, _newton_2d
    e1 = normalise(np.cross(np.asarray(normal, float)[None, :], r))
    return e1, np.zeros_like(e1), _STENCIL_1D, _newton_1d


def _newton_2d(fs, h):
    """Newton step of the quadratic model on a 3 x 3 stencil; (step (a, 2), concave)."""
    fc = fs[:, 4]
    gx = (fs[:, 7] - fs[:, 1]) / (2 * h)
    gy = (fs[:, 5] - fs[:, 3]) / (2 * h)
    hxx = (fs[:, 7] - 2 * fc + fs[:, 1]) / h**2
    hyy = (fs[:, 5] - 2 * fc + fs[:, 3]) / h**2
    hxy = (fs[:, 8] - fs[:, 6] - fs[:, 2] + fs[:, 0]) / (4 * h**2)
    det = hxx * hyy - hxy**2
    ok = (hxx < 0) & (det > 0)
    sdet = np.where(ok, det, 1.0)
    d = np.column_stack([np.where(ok, -(hyy * gx - hxy * gy) / sdet, 0.0),
                         np.where(ok, -(hxx * gy - hxy * gx) / sdet, 0.0)])
    return d, ok


def _newton_1d(fs, h):
    """Newton step of the quadratic model on a 3-point stencil; (step (a, 2), concave)."""
    g = (fs[:, 2] - fs[:, 0]) / (2 * h)
    hh = (fs[:, 2] - 2 * fs[:, 1] + fs[:, 0]) / h**2
    ok = hh < 0
    d = np.column_stack([np.where(ok, -g / np.where(ok, hh, -1.0), 0.0), np.zeros(len(g))])
    return d, ok


def refine_maxima(fun, starts, step: float, *, normal=None, project=None,
                  rtol: float = 1e-6, max_iter: int = 60):
    r"""Refine many local maxima at once by a safeguarded Newton ascent.

    Each start moves in its own tangent plane, :math:`\hat r(x) \propto \hat r_s +
    x_1\hat e_1 + x_2\hat e_2` (along its great circle only when ``normal`` is given).
    Every iteration evaluates, in one call of ``fun`` for all active starts, a 3 x 3 stencil
    (3 points on a circle) of step h about each current point. When the centre is worse than
    the best point so far the move is undone and h shrinks by 4; otherwise the point moves
    by the Newton step of the finite-difference quadratic model (limited to 2h), or to the
    best stencil point when the model is not concave, and h follows the move (between h/64
    and 2h). The best value
    never decreases, so a penalised ``fun`` (zero outside an allowed region) keeps every
    point inside its region. A maximum *on* the edge of a region where the pattern rises
    toward the edge is reached exactly with ``project``: stencil points are mapped into the
    region, and where that moved any of them the step is the move to the best stencil point
    (a pattern search along the edge, whose step at least halves each time) instead of the
    Newton step.

    Parameters
    ----------
    fun : callable
        ``fun(points, rows) -> values``: ``points`` (A, S, 3) unit vectors, ``rows`` (A,)
        the indices of the starts they belong to (so each start may have its own pattern,
        e.g. its own beam weights); returns non-negative values of shape (A, S). Wrap a
        plain ``f(vectors) -> values`` with :func:`pointwise`.
    starts : array_like, shape (K, 3)
        Start directions.
    step : float
        Initial step scale (rad), about the spacing of the samples that found the starts.
    normal : array_like (3,), optional
        Keep every point on the great circle with this normal.
    project : callable, optional
        ``project(points (P, 3), rows (P,)) -> (P, 3)``: the nearest point of an allowed
        region (identity inside it); ``rows`` name the start each point belongs to, so each
        start may have its own region.
    rtol : float
        Stop when every step is below ``rtol * step``.
    max_iter : int
        Iteration limit.

    Returns
    -------
    (ndarray (K, 3), ndarray (K,))
        Best directions and values.

    References
    ----------
    J. Nocedal and S. J. Wright, *Numerical Optimization*, 2nd ed., Springer, 2006, ch. 3-4.
    T. G. Kolda, R. M. Lewis and V. Torczon, "Optimization by direct search: new perspectives
    on some classical and modern methods," SIAM Review 45 (2003) 385-482 (pattern search).
    """
    r = normalise(np.asarray(starts, float).reshape(-1, 3))
    n = len(r)
    if n == 0:
        return r, np.zeros(0)
    e1, e2, stencil, model = _local_frame(r, normal)
    centre = len(stencil) // 2
    x = np.zeros((n, 2))
    bx = x.copy()
    bf = np.full(n, -np.inf)
    h_all = np.full(n, 0.25 * float(step))
    for _ in range(int(max_iter)):
        act = np.flatnonzero(h_all > rtol * step)
        if not len(act):
            break
        h = h_all[act]
        xs = x[act, None, :] + h[:, None, None] * stencil[None, :, :]  # (a, S, 2)
        pts = normalise(r[act, None, :] + xs[..., :1] * e1[act, None, :]
                        + xs[..., 1:] * e2[act, None, :])
        moved = np.zeros(len(act), bool)
        if project is not None:
            xs, pts, moved = _projected(project, pts, xs, r[act], e1[act], e2[act], act)
            x[act] = xs[:, centre]
        fs = np.asarray(fun(pts, act), float).reshape(len(act), len(stencil))
        fc = fs[:, centre]
        worse = fc < bf[act]
        move, stay = _move(model, fs, xs, x[act], h, moved)
        bf[act] = np.where(worse, bf[act], fc)
        bx[act] = np.where(worse[:, None], bx[act], x[act])
        dist = np.linalg.norm(move, axis=1)
        x[act] = np.where(worse[:, None], bx[act], x[act] + move)
        # A move along a region's edge (a projected stencil) is a pattern search: its step
        # halves at least, so creeping along a flat edge ends (Kolda, Lewis and Torczon).
        h_all[act] = np.where(worse | stay, 0.25 * h,
                              np.clip(dist, h / 64, np.where(moved, 0.5 * h, 2 * h)))
    return normalise(r + bx[:, :1] * e1 + bx[:, 1:] * e2), bf


def estimate_maxima(fun, starts, step: float, *, normal=None):
    """Peak value of the lobe at each start, from one stencil about it (9 evaluations, 3 on
    a great circle), without refining.

    The quadratic model of ln(value) on a stencil of step ``step / 4`` gives the lobe's
    vertex; where the model is concave and the vertex within one ``step``, the vertex value
    is the estimate (exact for a Gaussian lobe), else the best stencil value. Returns
    (estimates (K,), vertex directions (K, 3), modelled (K,): where the vertex was used).
    ``fun`` as for :func:`refine_maxima`.
    """
    r = normalise(np.asarray(starts, float).reshape(-1, 3))
    e1, e2, stencil, model = _local_frame(r, normal)
    h = np.full(len(r), 0.25 * float(step))
    xs = h[:, None, None] * stencil[None, :, :]
    pts = normalise(r[:, None, :] + xs[..., :1] * e1[:, None, :] + xs[..., 1:] * e2[:, None, :])
    fs = np.asarray(fun(pts, np.arange(len(r))), float).reshape(len(r), len(stencil))
    lf = np.log(np.maximum(fs, 1e-300))
    d, ok = model(lf, h)
    ok &= np.all(fs > 0, axis=1) & (np.linalg.norm(d, axis=1) <= float(step))
    c = len(stencil) // 2
    top = np.exp(lf[:, c] + 0.5 * np.sum(_gradient(lf, h, len(stencil)) * d, axis=1))
    est = np.where(ok, np.maximum(top, fs.max(axis=1)), fs.max(axis=1))
    ib = np.argmax(fs, axis=1)
    x = np.where(ok[:, None], d, xs[np.arange(len(r)), ib])
    return est, normalise(r + x[:, :1] * e1 + x[:, 1:] * e2), ok


def _gradient(fs, h, S):
    """Central-difference gradient (a, 2) on a stencil of S points."""
    if S == 3:
        return np.column_stack([(fs[:, 2] - fs[:, 0]) / (2 * h), np.zeros(len(h))])
    return np.column_stack([(fs[:, 7] - fs[:, 1]) / (2 * h), (fs[:, 5] - fs[:, 3]) / (2 * h)])


def refine_best(fun, starts, groups, step: float, *, keep: int = 4, margin_db: float = 0.2,
                unsure_db: float = 3.0, normal=None, rtol: float = 1e-6):
    """Best refined maximum of each group of starts, estimate first, refine the few best.

    Every start's lobe peak is estimated by :func:`estimate_maxima` (one stencil: ranks
    lobes whose samples misorder them). A start is refined by :func:`refine_maxima` to
    ``rtol`` when its lobe could be its group's highest: its estimate plus ``margin_db``
    (the model's error), or where the model did not apply its best stencil value plus
    ``unsure_db``, reaches the group's highest estimate (at most ``keep`` starts per group,
    highest first). ``groups`` (K,) labels the starts (e.g. the beam they belong to; ``fun``
    gets start indices as ``rows``); returns ``{group: (direction, value)}``.
    """
    starts = np.asarray(starts, float).reshape(-1, 3)
    groups = np.asarray(groups).reshape(-1)
    if len(starts) == 0:
        return {}
    est, vert, ok = estimate_maxima(fun, starts, step, normal=normal)
    upper = est * 10 ** (np.where(ok, margin_db, unsure_db) / 10)
    _, gi = np.unique(groups, return_inverse=True)
    gmax = np.full(gi.max() + 1, -np.inf)
    np.maximum.at(gmax, gi, est)
    order = np.lexsort((-upper, gi))
    g = gi[order]
    first = np.r_[True, g[1:] != g[:-1]]
    rank = np.arange(len(g)) - np.maximum.accumulate(np.where(first, np.arange(len(g)), 0))
    sel = order[(rank < keep) & (upper[order] >= gmax[g])]

    def fun2(points, rows):
        return fun(points, sel[rows])

    # The vertex estimate is close: start with a quarter of the step, same final tolerance.
    x2, f2 = refine_maxima(fun2, vert[sel], 0.25 * step, normal=normal, rtol=4 * rtol)
    best = {}
    for i, x, f in zip(sel, x2, f2, strict=True):
        if groups[i] not in best or f > best[groups[i]][1]:
            best[groups[i]] = (x, float(f))
    return best


def _move(model, fs, xs, x, h, moved):
    """One ascent move per point: the Newton step of the stencil's quadratic model (at most
    2h) where it is concave and no stencil point was projected, else to the best stencil
    point. Returns (move (a, 2), stay: the centre is best and the model not concave)."""
    d, ok = model(fs, h)
    ok &= ~moved
    dn = np.linalg.norm(d, axis=1)
    d *= np.minimum(1.0, 2 * h / np.where(dn > 0, dn, 1.0))[:, None]
    ib = np.argmax(fs, axis=1)
    stay = ~ok & (ib == fs.shape[1] // 2)
    return np.where(ok[:, None], d, xs[np.arange(len(x)), ib] - x), stay


def _projected(project, pts, xs, r, e1, e2, rows):
    """Stencil points mapped by ``project``, their tangent coordinates, and which stencils
    it changed."""
    rows = np.repeat(rows, pts.shape[1])
    q = normalise(np.asarray(project(pts.reshape(-1, 3), rows), float).reshape(pts.shape))
    changed = np.any(np.abs(q - pts) > 1e-14, axis=-1)
    if not changed.any():
        return xs, pts, np.zeros(len(pts), bool)
    c = np.sum(q * r[:, None, :], axis=-1, keepdims=True)
    v = q / np.where(c > 1e-12, c, 1e-12) - r[:, None, :]
    xq = np.stack([np.sum(v * e1[:, None, :], -1), np.sum(v * e2[:, None, :], -1)], -1)
    return np.where(changed[..., None], xq, xs), q, changed.any(axis=1)


def find_maxima(f, search: SearchSet, count: int, *, values=None, allowed=None,
                confine: bool = False, starts=None, rtol: float = 1e-6):
    """Refined local maxima of one pattern ``f(vectors (M, 3)) -> (M,)``, highest first.

    Parameters
    ----------
    f : callable
        The pattern (non-negative), vectorised over directions.
    search : SearchSet
        Where to look.
    count : int
        Number of candidates (local maxima of the samples) refined.
    values : ndarray (M,), optional
        ``f`` on the search set, when already computed.
    allowed : callable, optional
        ``allowed(vectors) -> bool mask``: candidates are picked where it holds.
    confine : bool
        Also keep the refinement inside ``allowed`` (the pattern is taken as zero outside).
        Use it when the region's edge is a null of the pattern (a main-lobe boundary at the
        first nulls); otherwise a start on a slope would stop at the edge.
    starts : array_like (K, 3), optional
        Extra start directions (e.g. the steering direction).
    rtol : float
        Refinement tolerance, see :func:`refine_maxima`.

    Returns
    -------
    (ndarray (L, 3), ndarray (L,))
        Refined maxima, highest first (duplicates from starts that met are kept; merge
        them with the caller's notion of "the same lobe").
    """
    v = np.asarray(f(search.directions), float) if values is None else values
    return find_maxima_many(lambda points, rows: f(points), search, count, [v],
                            allowed=allowed, confine=confine,
                            starts=None if starts is None else [starts], rtol=rtol)[0]


def find_maxima_many(f_rows, search: SearchSet, count: int, values, *, allowed=None,
                     confine: bool = False, starts=None, rtol: float = 1e-6) -> list:
    """:func:`find_maxima` of several patterns on one search set, refined together.

    ``f_rows(vectors (P, 3), owner (P,)) -> (P,)`` evaluates pattern ``owner[i]`` at
    ``vectors[i]`` (the beams of one aperture in one engine call); ``values[b]`` is pattern
    ``b`` on the search set; ``starts[b]`` its extra start directions (or None). The
    candidates of every pattern are refined by one :func:`refine_maxima` (one ascent step
    evaluates every pattern's points), each on its own pattern; a start's result does not
    depend on the others refined with it. Returns one ``(directions, values)`` pair per
    pattern, highest first, as :func:`find_maxima`.
    """
    d = search.directions
    mask = None if allowed is None else np.asarray(allowed(d), bool)
    starts_of, owner = [], []
    for b, v in enumerate(values):
        idx = search.local_maxima(np.asarray(v, float), count, mask)
        s = d[idx[idx >= 0]]
        if starts is not None and starts[b] is not None:
            s = np.vstack([np.asarray(starts[b], float).reshape(-1, 3), s])
        starts_of.append(s)
        owner += [b] * len(s)
    owner = np.asarray(owner, int)

    def fun(points, rows):
        p = np.asarray(points, float)
        ob = np.broadcast_to(owner[rows][:, None], p.shape[:-1]).reshape(-1)
        flat = p.reshape(-1, 3)
        got = np.asarray(f_rows(flat, ob), float)
        if confine and allowed is not None:
            got = got * np.asarray(allowed(flat), bool)
        return got.reshape(p.shape[:-1])

    xs, fs = refine_maxima(fun, np.concatenate(starts_of) if starts_of else np.zeros((0, 3)),
                           search.spacing, normal=search.normal, rtol=rtol)
    out = []
    for b in range(len(values)):
        mine = np.flatnonzero(owner == b)
        order = mine[np.argsort(-fs[mine], kind="stable")]
        out.append((xs[order], fs[order]))
    return out


def peak_value(f, *, front_only: bool = False, starts=(), n: int = 3000,
               count: int = 4) -> float:
    """Largest value of ``f(vectors (M, 3)) -> (M,)`` over the sphere (front hemisphere).

    Samples ``n`` Fibonacci directions, refines the ``count`` highest local maxima and the
    given ``starts`` (unit vectors), and returns the largest value found (never below the
    largest sample).
    """
    spacing = math.sqrt(4 * math.pi / n / (2 if front_only else 1))
    search = SearchSet.fibonacci(spacing, front_only=front_only)
    vals = np.asarray(f(search.directions), float)
    st = np.asarray(starts, float).reshape(-1, 3) if len(starts) else None
    _, fs = find_maxima(f, search, count, values=vals, starts=st, rtol=1e-9)
    return float(max(vals.max(), fs.max() if len(fs) else -np.inf))
