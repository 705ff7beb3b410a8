"""The exact paths: the plain-numpy definition and numba direct summation."""

from __future__ import annotations

import numpy as np

from . import _cost
from ._cache import LRU

__all__ = ["kernels", "af_reference", "af_direct", "af_direct_rows",
           "budget_rows", "xyz_columns", "re_im_columns", "exact_rows", "LATTICE_MIN"]

LATTICE_MIN = 64
"""Elements from which direct sums over a planar lattice of rows take the lattice kernels
(measured per direction against the element-by-element kernel: 1.2x at 8 x 8, 1.8x at
16 x 16, 3.2x at 64 x 64)."""

LATTICE_FILL = 1.25
"""Most lattice cells per element the lattice kernels take (a thinned layout sums its
empty cells too)."""

EXACT_TOL = 1e-13
"""Phase error (rad) within which positions count as on their lattice for the exact path."""

MEMORY_BUDGET = 64 * 2**20
"""Bytes of temporary complex storage any single evaluation may use (chunking limit)."""

_kernels = None


def kernels():
    """The numba kernels module, imported on first use (keeps ``import steradian`` fast)."""
    global _kernels
    if _kernels is None:
        from . import _kernels as kmod

        _kernels = kmod
    return _kernels


def budget_rows(row_bytes: int) -> int:
    """Rows of ``row_bytes`` bytes each that fit in :data:`MEMORY_BUDGET` (at least one)."""
    return max(1, MEMORY_BUDGET // max(int(row_bytes), 1))


def af_reference(pos, w, k, dirs):
    """Plain-numpy array factor, chunked to MEMORY_BUDGET."""
    m = len(dirs)
    out = np.empty(m, complex)
    step = budget_rows(16 * len(pos))
    for i in range(0, m, step):
        out[i:i + step] = np.exp(1j * k * (dirs[i:i + step] @ pos.T)) @ w
    return out


_COLUMNS = LRU(size=64)  # contiguous columns of frozen positions and weights


def _xyz(pos):
    return tuple(np.ascontiguousarray(c) for c in np.asarray(pos, float).T)


def _re_im(w):
    return np.ascontiguousarray(w.real), np.ascontiguousarray(w.imag)


def xyz_columns(pos) -> tuple:
    """Contiguous x, y, z columns of positions (N, 3), as the kernels take them (memoised
    for frozen arrays)."""
    return _COLUMNS.by_identity(pos, "xyz", _xyz)


def re_im_columns(w) -> tuple:
    """Contiguous real and imaginary parts of complex weights (memoised for frozen arrays)."""
    return _COLUMNS.by_identity(w, "re-im", _re_im)


def exact_rows(pos, k):
    """The planar lattice of rows (:class:`._fft.Rows`) that positions ``pos`` lie on to
    rounding (:data:`EXACT_TOL`), with at most :data:`LATTICE_FILL` cells per element and at
    least :data:`LATTICE_MIN` elements, else None (memoised for frozen positions; the answer
    never depends on whether they are, so results do not either)."""
    if len(pos) < LATTICE_MIN:
        return None

    def make(p):
        from ._fft import detect_rows

        r = detect_rows(p, float(k), EXACT_TOL)
        return r if r is not None and r.cells <= LATTICE_FILL * len(p) else None

    return _COLUMNS.by_identity(pos, ("rows", float(k)), make)


def _lattice_sum(rows, W, k, dirs, owner):
    """Direction ``m`` with weights ``W[owner[m]]`` on the lattice ``rows`` (the lattice
    kernels: directions sorted by beam, in chunks of one beam)."""
    km = kernels()
    m = len(dirs)
    order = np.argsort(owner, kind="stable") if len(W) > 1 else np.arange(m)
    ob = np.ascontiguousarray(owner[order], np.int64)
    grid = np.zeros((len(W), rows.ny, rows.nx), complex)
    grid[:, rows.j, rows.i] = W
    d = np.ascontiguousarray(dirs[order].T)
    out_re, out_im = np.empty(m), np.empty(m)
    kern = (km.af_lattice_serial if rows.cells * m < _cost.SERIAL_TERMS else km.af_lattice)
    kern(np.ascontiguousarray(grid.real), np.ascontiguousarray(grid.imag),
         np.ascontiguousarray(rows.x0, float), float(rows.dx), float(rows.dy),
         float(rows.y0), float(rows.z0), float(k), d[0], d[1], d[2], ob,
         km.lattice_chunks(ob), out_re, out_im)
    out = np.empty(m, complex)
    out[order] = out_re + 1j * out_im
    return out


def af_direct(pos, w, k, dirs):
    """numba direct summation (one thread below :data:`._cost.SERIAL_TERMS` terms); on a
    planar lattice of rows (:func:`exact_rows`) by the lattice kernels."""
    rows = exact_rows(pos, k)
    if rows is not None:
        return _lattice_sum(rows, np.asarray(w, complex)[None, :], k, dirs,
                            np.zeros(len(dirs), np.int64))
    km = kernels()
    out_re = np.empty(len(dirs))
    out_im = np.empty(len(dirs))
    px, py, pz = xyz_columns(pos)
    wr, wi = re_im_columns(w)
    d = np.ascontiguousarray(dirs.T)
    kern = km.af_direct_serial if len(pos) * len(dirs) < _cost.SERIAL_TERMS else km.af_direct
    kern(px, py, pz, wr, wi, float(k), d[0], d[1], d[2], out_re, out_im)
    return out_re + 1j * out_im


def af_direct_rows(pos, W, k, dirs, owner):
    """numba direct summation, direction ``m`` with weights ``W[owner[m]]`` (W (B, N)): the
    beams of one aperture at their own directions in one call; on a planar lattice of rows
    (:func:`exact_rows`) by the lattice kernels."""
    rows = exact_rows(pos, k)
    if rows is not None:
        return _lattice_sum(rows, np.asarray(W, complex), k, dirs,
                            np.asarray(owner, np.int64))
    km = kernels()
    out_re = np.empty(len(dirs))
    out_im = np.empty(len(dirs))
    px, py, pz = xyz_columns(pos)
    W = np.asarray(W, complex)
    d = np.ascontiguousarray(dirs.T)
    kern = km.af_rows_serial if len(pos) * len(dirs) < _cost.SERIAL_TERMS else km.af_rows
    kern(px, py, pz, np.ascontiguousarray(W.real), np.ascontiguousarray(W.imag), float(k),
         d[0], d[1], d[2], np.ascontiguousarray(owner, np.int64), out_re, out_im)
    return out_re + 1j * out_im
