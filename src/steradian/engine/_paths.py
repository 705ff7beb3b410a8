"""The engine's paths as one registry, and the choice between them.

Each path is one :class:`Path` entry in :data:`PATHS`: a name, an ``estimate`` that returns
the estimated seconds and a detail for a :class:`Problem`, or the one-line reason it does
not apply, and either ``sum`` (an exact path: a sum at explicit directions) or ``run`` (a
transform, which must beat the exact paths by :data:`._cost.MARGIN`). Adding a path is one
entry here plus its module; the choice (:func:`route`) takes the cheapest admissible entry.

Planar arrays (constant z) on a theta-phi grid that is symmetric about the horizon
(full-sphere Gauss-Legendre rules) are routed on the upper half only: the planar sum depends
on (u, v) alone, and the mirror direction differs by the exact factor exp(-2jk w z0).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..directions import ThetaPhiGrid, UVGrid
from ..errors import SteradianError
from . import _cost
from ._direct import af_direct, af_reference, exact_rows
from ._layout import layout, mirror_rows

__all__ = ["Problem", "Path", "PATHS", "Route", "route", "too_small", "exact_path"]


class Problem:
    """One evaluation: positions (N, 3), wavenumber, where (a grid or Directions), tolerance
    and the lattice hint; the structure the paths ask about is computed on first use."""

    def __init__(self, pos, k: float, where, tol: float, hint=None, m: int | None = None):
        self.pos, self.k, self.where, self.tol, self.hint = pos, k, where, tol, hint
        self.n = len(pos)
        self.m = math.prod(where.shape) if m is None else m
        self._dirs = self._layout = self._uv = None

    @property
    def dirs(self) -> np.ndarray:
        if self._dirs is None:
            self._dirs = self.where.vectors
        return self._dirs

    @property
    def layout(self):
        if self._layout is None:
            self._layout = layout(self.pos, self.k, self.tol)
        return self._layout

    @property
    def uv_steps(self):
        """(du, dv) of a u-v grid with equal steps, else None."""
        if self._uv is None:
            self._uv = (None,)
            if isinstance(self.where, UVGrid):
                from ._fft import uniform_step

                su, sv = uniform_step(self.where.u), uniform_step(self.where.v)
                if su is not None and sv is not None:
                    self._uv = ((su, sv),)
        return self._uv[0]

    @property
    def uv_planar(self) -> bool:
        """Planar positions on a u-v grid with equal steps (the grid-to-grid transforms)."""
        return self.uv_steps is not None and self.layout.planar


@dataclass(frozen=True, eq=False)
class Path:
    """One way of evaluating an array factor.

    ``estimate(problem)`` returns (seconds, detail) or the reason the path does not apply.
    An exact path gives ``sum(positions, weights, k, directions)``; a transform gives
    ``run(problem, weights, seconds)`` and must beat the exact paths by MARGIN. Either
    returns the array factor flat, in ``where.vectors`` order.
    """

    name: str
    estimate: Callable
    sum: Callable | None = None
    run: Callable | None = None
    overhead: float = 0.0
    """Fixed seconds a transform costs whatever the size (plan, pool); the smallest decides
    when no transform can win and the analysis is skipped."""

    @property
    def transform(self) -> bool:
        return self.sum is None

    def evaluate(self, p: Problem, w, seconds: float) -> np.ndarray:
        if self.sum is not None:
            return self.sum(p.pos, w, p.k, p.dirs)
        return self.run(p, w, seconds)


def _threads(seconds: float) -> int:
    """Threads for a transform: one below THREADS_FROM seconds (pool wake-up costs more)."""
    from . import _nufft

    return 1 if seconds < _cost.THREADS_FROM else _nufft.nthreads()


def _direct_estimate(p):
    threads = "one thread" if p.n * p.m < _cost.SERIAL_TERMS else "all threads"
    rows = exact_rows(p.pos, p.k)
    if rows is not None:
        return (_cost.lattice(rows.cells, rows.nx + rows.ny, p.m),
                f"numba, lattice of rows, {threads}")
    return _cost.direct(p.n, p.m), f"numba, {threads}"


def _fft_estimate(p):
    if p.uv_planar:
        rows = p.layout.rows(p.hint)
        if rows is not None and rows.cells <= 8 * p.n + 64:
            # Priced as non-separable (the weights may not factor): an upper bound.
            nu, nv = len(p.where.u), len(p.where.v)
            return _cost.fft_lattice(rows.nx, rows.ny, nu, nv, False,
                                     not rows.common_offset), "chirp-z"
    if isinstance(p.where, UVGrid):
        return ("method='fft' needs a planar lattice (rows of equally spaced elements at one "
                "height) and a u-v grid with equal steps")
    return "method='fft' does not apply to arbitrary directions (use 'direct' or 'nufft')"


def _fft_run(p, w, seconds):
    from . import _fft

    g, (su, sv) = p.where, p.uv_steps
    return _fft.lattice_uv(p.layout.rows(p.hint), w, p.k, float(g.u[0]), su, len(g.u),
                           float(g.v[0]), sv, len(g.v), g.hemisphere, p.tol,
                           workers=-1 if seconds > _cost.THREADS_FROM else 1)


def _nufft_estimate(p):
    from . import _nufft

    ndim = 2 if p.uv_planar else len(p.layout.keep)
    if not (_nufft.available() and ndim >= 1 and p.tol >= _nufft.min_tol(ndim)):
        floor = f"{_nufft.min_tol(max(ndim, 1)):.1e}" if _nufft.available() else \
            "(unavailable)"
        return f"method='nufft' needs tol >= {floor}, got tol={p.tol:g}"
    if p.uv_planar:
        return _cost.nufft1(p.n, len(p.where.u), len(p.where.v), p.tol), "type 1, u-v grid"
    lay = p.layout
    span = p.dirs.max(axis=0) - p.dirs.min(axis=0) if p.m else np.zeros(3)
    s_half = [0.5 * float(span[i]) for i in lay.keep]
    return (_cost.nufft3(p.n, p.m, [p.k * h for h in lay.half], s_half, p.tol),
            f"type 3, {len(lay.keep)}-D")


def _nufft_run(p, w, seconds):
    from . import _nufft
    from ._fft import height_phase

    lay = p.layout
    if not p.uv_planar:
        return _nufft.type3(p.pos, w, p.k, p.dirs, p.tol, lay.keep, lay.offset,
                            _threads(seconds))
    g, (su, sv) = p.where, p.uv_steps
    s = _nufft.type1_uv(p.pos, w, p.k, float(g.u[0]), su, len(g.u), float(g.v[0]), sv,
                        len(g.v), p.tol, _threads(seconds))
    height_phase(s, p.k, lay.z0, g.u, g.v, g.hemisphere)
    return s.ravel()


PATHS: dict[str, Path] = {p.name: p for p in (
    Path("reference", lambda p: (_cost.reference(p.n, p.m), "numpy"), sum=af_reference),
    Path("direct", _direct_estimate, sum=af_direct),
    Path("fft", _fft_estimate, run=_fft_run, overhead=_cost.FFT_OVERHEAD),
    Path("nufft", _nufft_estimate, run=_nufft_run, overhead=_cost.NUFFT_OVERHEAD),
)}
"""Every evaluation path by name; the exact ones (not transforms) are the baseline."""


@dataclass(eq=False)
class Route:
    """The chosen path, its detail, the estimates considered ({name: (seconds, detail)}) and
    ``run(weights)``."""

    name: str
    detail: str
    est: dict
    run: Callable


def too_small(n: int, m: int, t_direct: float | None = None) -> bool:
    """No transform can beat direct summation by MARGIN (its fixed overhead alone is too
    much): skip the analysis. ``t_direct``: the direct sum's estimate when the caller knows
    a better one than N x M terms (a lattice of rows, :func:`._cost.lattice`)."""
    least = min(p.overhead for p in PATHS.values() if p.transform)
    return (_cost.direct(n, m) if t_direct is None else t_direct) < _cost.MARGIN * least


def exact_path(n: int, m: int) -> Path:
    """The cheaper of the two exact paths."""
    return PATHS["reference" if _cost.reference(n, m) < _cost.direct(n, m) else "direct"]


def _pick(est: dict, forced: str) -> str:
    """Cheapest admissible path; an exact one unless a transform is MARGIN times faster."""
    if forced != "auto":
        if not math.isfinite(est[forced][0]):
            raise SteradianError(f"method={forced!r} does not apply here: its transform "
                                 f"grid would exceed {_cost.GRID_LIMIT} cells")
        return forced
    exact = [n for n in est if not PATHS[n].transform]
    best = min(exact[::-1], key=lambda n: est[n][0])  # a tie goes to the later entry
    t_best = est[best][0] / _cost.MARGIN
    for name, (t, _) in est.items():
        if PATHS[name].transform and t < t_best:
            best, t_best = name, t
    return best


def _route_flat(p: Problem, forced: str) -> Route:
    """Route without symmetry reduction: price every admissible path and pick."""
    skip = forced == "auto" and too_small(p.n, p.m)
    est = {}
    for path in PATHS.values():
        if path.transform and (skip or forced not in ("auto", path.name)):
            continue
        got = path.estimate(p)
        if isinstance(got, str):
            if forced == path.name:
                raise SteradianError(got)
            continue
        est[path.name] = got
    name = _pick(est, forced)
    chosen = PATHS[name]
    return Route(name, est[name][1], est, lambda w: chosen.evaluate(p, w, est[name][0]))


def route(p: Problem, forced: str) -> Route:
    """The route for ``p``: a mirror-symmetric theta-phi grid of a planar layout is routed on
    its upper half and unfolded; everything else directly."""
    g = p.where
    if not isinstance(g, ThetaPhiGrid) or (forced == "auto" and too_small(p.n, p.m)):
        return _route_flat(p, forced)
    lay = p.layout
    h = mirror_rows(g.theta, p.k * lay.r_xy, p.tol) if lay.planar else None
    theta = np.asarray(g.theta, float)
    nt = len(theta)
    if h is None or h >= nt:
        return _route_flat(p, forced)
    inner = _route_flat(Problem(p.pos, p.k, ThetaPhiGrid(theta[:h], g.phi), p.tol, p.hint),
                        forced)

    def run(w):
        s = inner.run(w).reshape(h, -1)
        full = np.empty((nt, s.shape[1]), complex)
        full[:h] = s
        full[h:] = s[: nt - h][::-1]
        if lay.z0 != 0.0:
            # AF = S exp(jk w z0) with S even in w: the mirror row differs by the w change.
            dw = np.cos(theta[h:]) - np.cos(theta[: nt - h][::-1])
            full[h:] *= np.exp(1j * p.k * lay.z0 * dw)[:, None]
        return full.ravel()

    return Route(inner.name, inner.detail + ", upper half of a mirror-symmetric grid",
                 inner.est, run)
