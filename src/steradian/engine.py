"""The pattern engine: the one place in steradian that sums element contributions.

:func:`field` evaluates an :class:`~steradian.array.Array` at arbitrary directions or on a
theta-phi or u-v grid. Everything else in the project (integrator, metrics, synthesis, beam
tables, plots) calls it, or the lower-level :func:`array_factor` / :func:`response_matrix`,
so faster paths slot in here without touching any caller.

Conventions: time dependence exp(+j w t); AF(r) = sum_n w_n exp(+j k r . r_n).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from .elements import angles_of, spherical_basis
from .grids import Directions, ThetaPhiGrid, UVGrid, as_directions

__all__ = ["Field", "field", "array_factor", "response_matrix", "MEMORY_BUDGET"]

MEMORY_BUDGET = 64 * 2**20
"""Bytes of temporary complex storage any single evaluation may use (chunking limit)."""

Method = Literal["auto", "direct", "reference"]

_kernels = None


def _k():
    """Import the numba kernels on first use (keeps ``import steradian`` and --help fast)."""
    global _kernels
    if _kernels is None:
        from . import _kernels as kmod

        _kernels = kmod
    return _kernels


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


def _af_direct(pos, w, k, dirs):
    km = _k()
    out_re = np.empty(len(dirs))
    out_im = np.empty(len(dirs))
    p = np.ascontiguousarray(pos.T)
    d = np.ascontiguousarray(dirs.T)
    km.af_direct(p[0], p[1], p[2], np.ascontiguousarray(w.real), np.ascontiguousarray(w.imag),
                 float(k), d[0], d[1], d[2], out_re, out_im)
    return out_re + 1j * out_im


def array_factor(positions, weights, k: float, directions, *, method: Method = "auto"):
    r"""Array factor :math:`AF(\hat r) = \sum_n w_n e^{+jk\hat r\cdot r_n}`.

    Parameters
    ----------
    positions : ndarray, shape (N, 3)
        Element positions (m).
    weights : ndarray of complex, shape (N,)
        Excitations.
    k : float
        Wavenumber (rad/m).
    directions : ndarray, shape (M, 3)
        Unit vectors.
    method : {"auto", "direct", "reference"}
        Path; callers leave this at "auto" (the cost model picks). "reference" is the
        plain-numpy definition the fast paths are tested against.

    Returns
    -------
    ndarray of complex, shape (M,)
    """
    pos = np.asarray(positions, float)
    w = np.asarray(weights, complex)
    dirs = np.asarray(directions, float).reshape(-1, 3)
    if method == "reference":
        return _af_reference(pos, w, k, dirs)
    if method == "auto" and len(pos) * len(dirs) < 20_000:
        return _af_reference(pos, w, k, dirs)
    return _af_direct(pos, w, k, dirs)


def _groups(orientations, n):
    """Yield (rotation or None, element indices) for each distinct orientation."""
    if orientations is None:
        yield None, slice(None)
        return
    flat = np.round(orientations.reshape(n, 9), 12)
    uniq, inv = np.unique(flat, axis=0, return_inverse=True)
    for g in range(len(uniq)):
        yield uniq[g].reshape(3, 3), np.flatnonzero(inv.ravel() == g)


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


def field(array, where, *, frequency: float | None = None, method: Method = "auto") -> Field:
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
        Leave at "auto"; "reference" forces the plain-numpy path (for tests).

    Returns
    -------
    Field
        Components in the global (theta, phi) basis, shaped like ``where``.
    """
    where = as_directions(where)
    dirs = where.vectors
    k = array.k(frequency)
    w = array.weights(frequency)
    el = array.element_at(frequency)
    pos = array.positions
    if array.geometry.orientations is None:
        af = array_factor(pos, w, k, dirs, method=method)
        th, ph = angles_of(dirs)
        e_t, e_p = el.pattern(th, ph)
        e_t = e_t * af
        e_p = e_p * af
    else:
        scalar = np.zeros(len(dirs), complex)
        vec = np.zeros((len(dirs), 3), complex)
        for R, idx in _groups(array.geometry.orientations, array.n):
            af = array_factor(pos[idx], w[idx], k, dirs, method=method)
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
    vis = where.visible
    if not vis.all():
        e_t = np.where(vis, e_t, np.nan)
        e_p = np.where(vis, e_p, np.nan)
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
