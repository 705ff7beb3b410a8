"""Sums over element pairs for radiated power: sinc pair sum, Gram matrix, and their cost."""

from __future__ import annotations

import math

import numpy as np

from ..budget import require
from ..directions import as_directions
from . import _cost
from ._direct import budget_rows, kernels, re_im_columns, xyz_columns
from ._evaluate import DEFAULT_TOL, choose_path

__all__ = ["gram_matrix", "sinc_power_sum", "sinc_power_seconds", "field_seconds"]


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
