"""Sums over element pairs for radiated power: sinc pair sum, Gram matrix, and their cost."""

from __future__ import annotations

import math

import numpy as np

from ..budget import require
from ..directions import as_directions
from . import _cost
from ._direct import budget_rows, kernels, re_im_columns, xyz_columns
from ._evaluate import DEFAULT_TOL, choose_path

__all__ = ["gram_matrix", "lattice_gram_matrix", "lattice_gram_table", "dense_gram_matrix",
           "sinc_power_sum",
           "sinc_power_seconds", "field_seconds", "lattice_gram_seconds",
           "sinc_matrix_seconds"]

GRAM_CHUNK = 1024
"""Directions per block of the lattice Gram table (its phase powers stay in cache)."""

LATTICE_OFFSETS = 16
"""Most distinct row-offset differences the lattice form of the Gram matrix takes (one
table each: 1 for a rectangular lattice, 3 for a triangular one)."""


def gram_matrix(positions, k: float, dirs: np.ndarray, weights: np.ndarray) -> np.ndarray:
    r"""Hermitian :math:`G_{mn} = \sum_i \omega_i e^{-jk\hat r_i\cdot r_m}
    e^{+jk\hat r_i\cdot r_n}`.

    For non-negative ``weights`` (M,) at directions ``dirs`` (M, 3). On a planar row lattice
    (rectangular, triangular) :func:`lattice_gram_matrix` (one value per distinct
    separation), else :func:`dense_gram_matrix` (its plain reference, tested equal).
    """
    n = len(positions)
    # G, its upper triangle, the conjugate part and the sum: 64 bytes per entry at the peak.
    require(64 * n * n, f"a Gram matrix of {n:,} x {n:,} elements",
            "it is dense in the element count")
    G = lattice_gram_matrix(positions, k, dirs, weights)
    return dense_gram_matrix(positions, k, dirs, weights) if G is None else G


def lattice_gram_matrix(positions, k: float, dirs: np.ndarray,
                        weights: np.ndarray) -> np.ndarray | None:
    """:func:`gram_matrix` of a planar row lattice (:func:`lattice_gram_table` gathered into
    the N x N matrix), or None for other layouts."""
    n = len(positions)
    if n > 1:
        require(40 * n * n, f"a Gram matrix of {n:,} x {n:,} elements",
                "it is dense in the element count")  # index, gather and Hermitian part
    table = lattice_gram_table(positions, k, dirs, weights)
    if table is None:
        return None
    values, index = table
    G = values[index]
    return 0.5 * (G + G.conj().T)  # Hermitian to rounding, as the dense form


def lattice_gram_table(positions, k: float, dirs: np.ndarray, weights: np.ndarray):
    r"""The Gram matrix of a planar row lattice as a table of its distinct values:
    ``(values, index)`` with :math:`G_{mn}` = ``values[index[m, n]]``, or None for other
    layouts (callers that never hold the N x N matrix gather rows of it).

    :math:`G_{mn} = q(r_n - r_m)` depends on the separation alone (translation
    invariance), and on a lattice of rows (element n at :math:`(x_{0,j_n} + i_n d_x,
    y_0 + j_n d_y, z_0)`) the :math:`N^2` separations take only
    :math:`(2n_x - 1)(2n_y - 1)` values per distinct row-offset difference :math:`\delta`
    (1 for a rectangular lattice, 3 for a triangular one; at most :data:`LATTICE_OFFSETS`):

    .. math::
        q = \sum_r \omega_r e^{jku_r\delta}\, e^{jku_r d_x\Delta i}\,
        e^{jkv_r d_y\Delta j},

    one matrix product over the directions per :math:`\delta` (separable exponentials, by
    repeated products). Work O(M n_x n_y) instead of O(M N^2).

    References
    ----------
    R. M. Gray, "Toeplitz and circulant matrices: a review," *Foundations and Trends in
    Communications and Information Theory* 2 (2006) 155-239 (Toeplitz structure of
    translation-invariant kernels on a lattice).
    """
    from ._fft import detect_rows

    pos = np.asarray(positions, float)
    n = len(pos)
    rows = detect_rows(pos, float(k), 1e-10) if n > 1 else None
    if rows is None:
        return None
    off = rows.x0[rows.j]
    delta = (off[None, :] - off[:, None]).ravel()
    unit = max(rows.dx, 1e-300) * 1e-7  # offsets equal within this are one (exact value kept)
    dkeys, first, dinv = np.unique(np.round(delta / unit).astype(np.int64),
                                   return_index=True, return_inverse=True)
    if len(dkeys) > LATTICE_OFFSETS:
        return None
    require(24 * n * n, f"the separation index of {n:,} x {n:,} elements",
            "it is dense in the element count")
    wts = np.asarray(weights, float)
    keep = wts > 0
    d, wts = np.asarray(dirs, float)[keep], wts[keep]
    mi, mj = 2 * rows.nx - 1, 2 * rows.ny - 1
    # q(-di, -dj; -delta) = conj q(di, dj; delta) for real weights: only dj >= 0 is summed.
    half = np.zeros((len(first), mi, rows.ny), complex)
    for s in range(0, len(d), GRAM_CHUNK):  # temporaries of a chunk stay in cache
        u, v, wc = d[s:s + GRAM_CHUNK, 0], d[s:s + GRAM_CHUNK, 1], wts[s:s + GRAM_CHUNK]
        Ei = _phase_powers(np.exp(1j * k * rows.dx * u), rows.nx)
        Ej = _powers(np.exp(1j * k * rows.dy * v), rows.ny).T
        for t, dv in enumerate(delta[first]):
            half[t] += (Ei * (wc * np.exp(1j * k * u * dv))) @ Ej
    opposite = np.searchsorted(dkeys, -dkeys)  # the table of -delta (the set is symmetric)
    tables = np.empty((len(first), mi, mj), complex)
    tables[:, :, rows.ny - 1:] = half
    tables[:, :, :rows.ny - 1] = half[opposite][:, ::-1, :0:-1].conj()
    di = rows.i[None, :] - rows.i[:, None] + rows.nx - 1
    dj = rows.j[None, :] - rows.j[:, None] + rows.ny - 1
    index = dinv.reshape(n, n) * (mi * mj) + di * mj + dj
    return tables.ravel(), index


def _powers(base: np.ndarray, n: int) -> np.ndarray:
    """Rows ``base**p`` for p = 0 .. n-1 (repeated products: n - 1 multiplications per
    direction instead of n complex exponentials; rounding grows to about n ulp, 1e-14 for
    n = 64)."""
    P = np.empty((n, len(base)), complex)
    P[0] = 1.0
    for p in range(1, n):
        np.multiply(P[p - 1], base, out=P[p])
    return P


def _phase_powers(base: np.ndarray, n: int) -> np.ndarray:
    """Rows ``base**p`` for p = -(n-1) .. n-1 of unit-modulus ``base`` (M,): :func:`_powers`
    and their conjugates."""
    P = _powers(base, n)
    return np.concatenate([P[:0:-1].conj(), P])


def dense_gram_matrix(positions, k: float, dirs: np.ndarray, weights: np.ndarray) -> np.ndarray:
    """:func:`gram_matrix` for any layout: the phase block of each chunk of directions
    (within :data:`MEMORY_BUDGET`) from the numba kernel, accumulated by a rank-k Hermitian
    update (BLAS zherk: half the work of a general product)."""
    from scipy.linalg.blas import zherk

    pos = np.asarray(positions, float)
    n = len(pos)
    # G, its upper triangle, the conjugate part and the sum: 64 bytes per entry at the peak.
    require(64 * n * n, f"a Gram matrix of {n:,} x {n:,} elements",
            "it is dense in the element count")
    wts = np.asarray(weights, float)
    keep = wts > 0
    dirs, wts = np.asarray(dirs, float)[keep], wts[keep]
    km = kernels()
    px, py, pz = xyz_columns(pos)
    G = np.zeros((n, n), complex, order="F")
    step = budget_rows(16 * n)
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
    km = kernels()
    w = np.asarray(weights, complex)
    n = len(w)
    kern = km.sinc_power_serial if n * (n - 1) / 2 < _cost.SINC_SERIAL_PAIRS else km.sinc_power
    return float(kern(*xyz_columns(np.asarray(positions, float)), *re_im_columns(w), float(k)))


def sinc_matrix_seconds(n: int) -> float:
    """Estimated seconds of the closed-form power matrix of ``n`` isotropic elements (the
    cost model)."""
    return _cost.sinc_matrix(n)


def sinc_power_seconds(n: int) -> float:
    """Estimated seconds of :func:`sinc_power_sum` for ``n`` elements (the cost model)."""
    return _cost.sinc_pairs(n)


def field_seconds(positions, k: float, where, *, tol: float = DEFAULT_TOL,
                  lattice=None) -> float:
    """Estimated seconds of :func:`field` at ``where``: the array factor on the path
    :func:`choose_path` picks plus the per-direction work (element pattern, intensity)."""
    where = as_directions(where)
    pc = choose_path(positions, k, where, tol=tol, lattice=lattice)
    return pc.seconds + _cost.per_direction(math.prod(where.shape))


def lattice_gram_seconds(positions, k: float, m: int) -> float | None:
    """Estimated seconds of :func:`lattice_gram_matrix` over ``m`` directions (the cost
    model), or None when the positions are not a planar row lattice (the dense form then
    costs O(M N^2))."""
    from ._fft import detect_rows

    pos = np.asarray(positions, float)
    rows = detect_rows(pos, float(k), 1e-10) if len(pos) > 1 else None
    if rows is None:
        return None
    off = np.round(rows.x0 / max(rows.dx, 1e-300) * 1e7)
    deltas = len(np.unique(off[:, None] - off[None, :]))
    if deltas > LATTICE_OFFSETS:
        return None
    return _cost.lattice_gram(m, rows.nx, rows.ny, len(pos), deltas)
