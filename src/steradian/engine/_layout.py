"""What the cost model needs to know about positions and grids (computed once, memoised)."""

from __future__ import annotations

import numpy as np

from ._cache import LRU

__all__ = ["Layout", "layout", "lattice_hint", "mirror_rows"]


class Layout:
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
        self._pos, self._k, self._tol = pos, k, tol
        self._r_xy = None
        self._rows: dict = {}  # by lattice hint: one or two per layout, never evicted

    @property
    def r_xy(self) -> float:
        if self._r_xy is None:
            d = self._pos[:, :2] - self._pos[:, :2].mean(axis=0)
            self._r_xy = float(np.sqrt((d**2).sum(axis=1)).max(initial=0.0))
        return self._r_xy

    def rows(self, hint):
        """Row structure for the chirp-z path (:func:`._fft.detect_rows`), None if not planar
        or not a lattice."""
        if hint not in self._rows:
            from . import _fft

            self._rows[hint] = (_fft.detect_rows(self._pos, self._k, self._tol, hint)
                                if self.planar else None)
        return self._rows[hint]


_LAYOUTS = LRU(size=64)


def layout(pos: np.ndarray, k: float, tol: float) -> Layout:
    """Layout of ``pos``, memoised for frozen arrays (geometry positions) by identity."""
    return _LAYOUTS.by_identity(pos, (float(k), float(tol)), lambda p: Layout(p, k, tol))


def lattice_hint(lattice):
    """(dx, dy) from primitive vectors with the first along x, else None."""
    if lattice is None:
        return None
    L = np.atleast_2d(np.asarray(lattice, float))
    a1 = L[0]
    if a1[0] == 0 or abs(a1[1]) > 1e-12 * abs(a1[0]) or abs(a1[2]) > 1e-12 * abs(a1[0]):
        return None
    dy = abs(float(L[1][1])) if len(L) > 1 and L[1][1] != 0 else None
    return (abs(float(a1[0])), dy)


def mirror_rows(theta, kr: float, tol: float):
    """Number of upper rows h when theta_i + theta_(n-1-i) = pi for all i (else None)."""
    t = np.asarray(theta, float)
    n = len(t)
    if n < 2:
        return None
    slack = max(0.1 * tol / max(kr, 1.0), 8 * np.finfo(float).eps * np.pi)
    if np.abs(t + t[::-1] - np.pi).max() > slack:
        return None
    return (n + 1) // 2
