r"""The reduced radiated-power matrix :math:`Q_s = \Re\,T^H(Q + \delta I)T` in its cheap exact
form.

For elements that share one pattern and orientation, :math:`Q_{mn} = q(r_n - r_m)` with

.. math::
    q(d) = \oint |e(\hat r)|^2 e^{jk\hat r\cdot d}\,d\Omega
    \quad\Bigl(= 4\pi\,\frac{\sin k|d|}{k|d|}\ \text{for isotropic elements}\Bigr),

a function of the pair's separation alone (translation invariance). On a lattice the
:math:`N^2` separations take only :math:`O(N)` distinct values (a block-Toeplitz matrix), so
:math:`q` is evaluated once per distinct separation, with the same sphere rule as
:func:`steradian.radiation.power_matrix` (identical values to rounding), and the full
:math:`N \times N` matrix is never held: :math:`Q_s` is accumulated from row blocks of
:math:`Q` times the sparse parametrisation :math:`T`. Isotropic elements use the closed form
per pair. Rotated elements (their own orientations) fall back to
:func:`~steradian.radiation.power_matrix`.

References
----------
R. M. Gray, "Toeplitz and circulant matrices: a review," *Foundations and Trends in
Communications and Information Theory* 2 (2006) 155-239 (Toeplitz structure of
translation-invariant kernels on a lattice).
"""

from __future__ import annotations

import numpy as np

from ..budget import require
from ..elements import Isotropic
from ..radiation import power_matrix, power_rule
from ..validate import choice
from ._qp import blas_threads

__all__ = ["reduced_power", "reference_reduced_power"]

_BLOCK = 256  # rows of Q per block
_DENSE_UP_TO = 2048  # elements: the dense Gram form is faster up to here (rule quadrature)
_ROUND = 1e-7  # separations equal within this fraction of the element spacing are one


def reference_reduced_power(array, T, enabled, loading: float, Q=None):
    """Plain form (the reference the structured one is tested against): the dense power
    matrix (or the given one, e.g. a coupled array's accepted power), loaded, projected.
    Returns ``(Qs, delta)``."""
    Q = power_matrix(array) if Q is None else Q
    delta = float(loading) * float(np.mean(np.real(np.diag(Q))[enabled]))
    QL = Q + delta * np.eye(array.n)
    Qs = np.real(T.conj().T @ QL @ T)
    return 0.5 * (Qs + Qs.T), delta


def _kernel(array):
    """q as a function of separations (K, 3) -> (K,) complex, or None (rotated elements)."""
    if array.geometry.orientations is not None:
        return None
    k = array.k()
    if isinstance(array.element, Isotropic):
        return lambda d: 4 * np.pi * np.sinc(k * np.linalg.norm(d, axis=-1) / np.pi)
    dirs, wts = power_rule(array)  # the sphere rule and fold of radiation.power_matrix
    keep = wts > 0
    dirs, wts = dirs[keep], wts[keep]

    def q(d):
        out = np.empty(len(d), complex)
        step = max(1, 4_000_000 // max(len(dirs), 1))
        for s in range(0, len(d), step):
            out[s:s + step] = np.exp(1j * k * (d[s:s + step] @ dirs.T)) @ wts
        return out

    q.rule = (dirs, wts)
    return q


def _lattice_separations(pos, k, q):
    """q at every pair separation of a row lattice, as ``(values, index)``
    (:func:`steradian.engine.lattice_gram_table` on q's sphere rule), or None."""
    from ..engine import lattice_gram_table

    dirs, wts = q.rule
    return lattice_gram_table(pos, k, dirs, wts)


def reduced_power(array, T, enabled, loading: float, form: str = "auto"):
    """``(Qs, delta)``: :math:`\\Re\\,T^H(Q + \\delta I)T` with :math:`\\delta` = ``loading``
    times the mean diagonal of Q over the enabled elements.

    ``form`` "structured" (per distinct separation, never holding the N x N matrix),
    "dense" (the plain form, :func:`reference_reduced_power`) or "auto" (the faster).
    """
    choice("form", form, ("auto", "structured", "dense"))
    if form == "dense":
        return reference_reduced_power(array, T, enabled, loading)
    with blas_threads(1):  # small products: threads cost more than they save here
        return _structured(array, T, enabled, loading, form)


def _structured(array, T, enabled, loading, form):
    import scipy.sparse as sp

    q = _kernel(array)
    isotropic = isinstance(array.element, Isotropic)
    pos = array.positions[enabled]
    table = None
    if q is not None and not isotropic:
        table = _lattice_separations(pos, array.k(), q)
    if q is None or (form == "auto" and table is None and not isotropic
                     and len(enabled) <= _DENSE_UP_TO):
        # Off a lattice, below a few thousand elements, the BLAS Gram product over the
        # sphere rule beats one quadrature per distinct separation (measured: 0.4 s against
        # 1.0 s at 624 elements).
        return reference_reduced_power(array, T, enabled, loading)
    Te = sp.csr_matrix(T[enabled])
    ne, n = len(enabled), T.shape[1]
    require(8 * n * n * 3 + 16 * _BLOCK * ne * 4, f"the reduced power matrix of {n:,} unknowns",
            "it is dense in the unknowns")
    q0 = 4 * np.pi if isotropic else None
    if not isotropic:
        values, inverse = table if table is not None else _distinct_separations(pos, q)
        q0 = float(values[inverse[0, 0]].real)
    delta = float(loading) * q0
    Qs = np.zeros((n, n))
    for s in range(0, ne, _BLOCK):
        if isotropic:
            blk = q(pos[None, :, :] - pos[s:s + _BLOCK, None, :])
        else:
            blk = values[inverse[s:s + _BLOCK]]
        QT = (Te.T @ blk.T).T  # rows s.. of Q times T: (b, n)
        Qs += np.real(Te[s:s + _BLOCK].conj().T @ QT)
    Qs += delta * np.real((Te.conj().T @ Te).toarray())
    return 0.5 * (Qs + Qs.T), delta


def _distinct_separations(pos, q):
    """q at each distinct separation r_n - r_m, and the (N, N) index of each pair's."""
    from scipy.spatial import cKDTree

    n = len(pos)
    require(24 * n * n * 2, f"the separations of {n:,} elements", "they are N x N")
    nn, _ = cKDTree(pos).query(pos, k=2)
    unit = float(np.median(nn[:, 1])) * _ROUND
    d = (pos[None, :, :] - pos[:, None, :]).reshape(-1, 3)
    keys = np.round(d / unit).astype(np.int64)
    # q(-d) = conj(q(d)) (the power pattern is real): one of each pair of opposite
    # separations is evaluated. The sign of the first non-zero key component picks it.
    lead = np.where(keys[:, 0] != 0, keys[:, 0], np.where(keys[:, 1] != 0, keys[:, 1],
                                                          keys[:, 2]))
    flip = lead < 0
    keys[flip] *= -1
    d[flip] *= -1
    _, first, inverse = np.unique(keys, axis=0, return_index=True, return_inverse=True)
    vals = q(d[first])
    values = np.concatenate([vals, np.conj(vals)])
    idx = inverse.reshape(-1) + np.where(flip, len(vals), 0)
    return values, idx.reshape(n, n)
