r"""The conic program of one solve of the convex methods, from the problem setup and the
constraint samples gathered so far.

Unknowns: the real weight parameters x (``setup.n``), then, when asked, the amplitude bound t
of the dynamic-range limit and, for the dual problem, the sidelobe level :math:`\tau`.
Blocks in order: the beam normalisation :math:`c_0^Tx = 1`, nulls, sidelobe and mask
samples, non-negative amplitudes, dynamic range, white-noise gain, and for the dual problem
the radiated-power budget. See :mod:`steradian.optimize._convex` for the formulation.
"""

from __future__ import annotations

import math

import numpy as np

from ..directions import unit_vectors_deg
from ..units import from_db20
from ._conic import ConicProgram
from ._problem import Setup, cholesky, rows_at

__all__ = ["assemble", "assemble_scan", "null_rows"]


def null_rows(setup: Setup, nulls):
    """Constraint rows of each null: (real, H, V, depth) with depth None for an exact zero."""
    out = []
    for nl in nulls:
        real, H, V = rows_at(setup, unit_vectors_deg(nl.theta_deg, nl.phi_deg)[None, :])
        depth = None if nl.depth_db is None else from_db20(nl.depth_db)
        out.append((bool(real[0]), H, V, depth))
    return out


class _Blocks:
    """Pads n-column rows to the program's nv variables."""

    def __init__(self, prog: ConicProgram, n: int):
        self.prog, self.n, self.nv = prog, n, prog.nvar

    def pad(self, A):
        A = np.atleast_2d(A)
        return np.hstack([A, np.zeros((A.shape[0], self.nv - self.n))])

    def pad_v(self, V):
        return np.concatenate([V, np.zeros((len(V), V.shape[1], self.nv - self.n))], axis=2)


def _nulls(b: _Blocks, rows):
    """Nulls: exact (equalities) or to a depth (cones)."""
    for real, H, V, depth in rows:
        if depth is None:
            b.prog.zero(b.pad(H) if real else b.pad(V[0]), 0.0)
        elif real:
            b.prog.leq(np.vstack([b.pad(H), -b.pad(H)]), depth)
        else:
            b.prog.socs(np.zeros((1, b.nv)), [depth], b.pad_v(V))


def _samples_max(b: _Blocks, rs, tau):
    """|E_i| <= min(fixed_i, coef_i tau): the primal problem's sample constraints."""
    re, Hp, Vp = rs.real, b.pad(rs.H), b.pad_v(rs.V)
    bound = rs.fixed.copy()
    if tau is not None:
        ps = rs.coef > 0
        bound[ps] = np.minimum(bound[ps], rs.coef[ps] * tau)
    ok = np.isfinite(bound)
    r = re & ok
    b.prog.leq(np.vstack([Hp[r], -Hp[r]]), np.concatenate([bound[r], bound[r]]))
    c = ~re & ok
    if np.any(c):
        b.prog.socs(np.zeros((int(c.sum()), b.nv)), bound[c], Vp[c])


def _samples_dual(b: _Blocks, rs, itau):
    """|E_i| <= coef_i tau (tau a variable) and |E_i| <= fixed_i: the dual problem's."""
    re, Hp, Vp, coef, fixed = rs.real, b.pad(rs.H), b.pad_v(rs.V), rs.coef, rs.fixed
    for sel, trow in ((coef > 0, True), (np.isfinite(fixed), False)):
        r = re & sel
        if np.any(r):
            G = np.vstack([Hp[r], -Hp[r]])
            if trow:
                G[:, itau] = -np.concatenate([coef[r], coef[r]])
                b.prog.leq(G, 0.0)
            else:
                b.prog.leq(G, np.concatenate([fixed[r], fixed[r]]))
        c = ~re & sel
        if np.any(c):
            m = int(c.sum())
            if trow:
                tr = np.zeros((m, b.nv))
                tr[:, itau] = coef[c]
                b.prog.socs(tr, np.zeros(m), Vp[c])
            else:
                b.prog.socs(np.zeros((m, b.nv)), fixed[c], Vp[c])


def _dynamic_range(b: _Blocks, setup: Setup, it: int, dr_lin: float, w_prev):
    """t/rho <= |w_n| <= t: exact for amplitudes, linearised about ``w_prev`` for complex."""
    n, nv = b.n, b.nv
    if setup.param.weights == "amplitude":
        G = np.zeros((2 * n, nv))
        G[:n, :n] = np.eye(n)
        G[:n, it] = -1.0
        G[n:, :n] = -np.eye(n)
        G[n:, it] = 1.0 / dr_lin
        b.prog.leq(G, 0.0)
        return
    groups = setup.param.magnitude_groups
    Vs = np.zeros((len(groups), 2, nv))
    tr = np.zeros((len(groups), nv))
    tr[:, it] = 1.0
    Gl = np.zeros((len(groups), nv))
    xp = np.linalg.lstsq(setup.param.T, w_prev, rcond=None)[0].real
    for gi, g in enumerate(groups):
        for k, j in enumerate(g):
            Vs[gi, k, j] = 1.0
        xg = xp[g]
        nrm = np.linalg.norm(xg)
        Gl[gi, g] = -(xg / nrm if nrm > 0 else np.ones(len(g)) / math.sqrt(len(g)))
        Gl[gi, it] = 1.0 / dr_lin
    b.prog.socs(tr, np.zeros(len(groups)), Vs)
    b.prog.leq(Gl, 0.0)


def _white_noise_gain(b: _Blocks, setup: Setup, wng_min: float):
    """sum g_n |w_n|^2 <= 1 / G_min (with c_0^T x = 1)."""
    n, nv = b.n, b.nv
    Gw = np.real(setup.param.T.conj().T @ (setup.g_wng[:, None] * setup.param.T))
    L = cholesky(0.5 * (Gw + Gw.T) + 1e-300 * np.eye(n), "weight-norm")
    b.prog.socs(np.zeros((1, nv)), [math.sqrt(1.0 / wng_min)],
                np.concatenate([L.T, np.zeros((n, nv - n))], axis=1)[None])


def assemble(setup: Setup, rowsets, nulls, *, mode: str, tau, nonneg: bool,
             dr_lin: float | None, w_prev, wng_min: float | None, p_max: float | None):
    """The program of one solve: returns ``(program, P, q)`` for ``program.solve(P, q)``.

    ``mode`` "max" (the primal: minimise radiated power, the level ``tau`` fixed) or "dual"
    (minimise the level, the power at most ``p_max``); ``nulls`` from :func:`null_rows`.
    """
    n = setup.n
    extra_t = dr_lin is not None
    nv = n + int(extra_t) + int(mode == "dual")
    b = _Blocks(ConicProgram(nv), n)
    b.prog.zero(b.pad(setup.c0), 1.0)
    _nulls(b, nulls)
    for rs in rowsets:
        if len(rs) == 0:
            continue
        if mode == "max":
            _samples_max(b, rs, tau)
        else:
            _samples_dual(b, rs, nv - 1)
    if nonneg and setup.param.weights == "amplitude":
        b.prog.leq(-np.eye(n, nv), 0.0)
    if extra_t:
        _dynamic_range(b, setup, n, dr_lin, w_prev)
    if wng_min is not None:
        _white_noise_gain(b, setup, wng_min)
    # The objective / power constraint are written in whitened variables y = L^T x
    # (ConicProgram.solve maps the other blocks through x = L^{-T} y).
    if mode == "dual":
        b.prog.socs(np.zeros((1, nv)), [math.sqrt(p_max)],
                    np.concatenate([np.linalg.inv(setup.whitener()), np.zeros((n, nv - n))],
                                   axis=1)[None])
        q = np.zeros(nv)
        q[nv - 1] = 1.0
        return b.prog, None, q
    P = np.zeros((nv, nv))
    P[:n, :n] = 2.0 * np.eye(n)
    return b.prog, P, None


def assemble_scan(setups, rowsets, alphas, *, tau, nonneg: bool, dr_lin: float | None):
    r"""The program of one solve of the scan-volume problem (one real taper, many beams).

    Unknowns: the taper parameters x (shared by every beam: ``setups`` are the same array
    steered to each beam, with one amplitude parametrisation), the amplitude bound of the
    dynamic-range limit when asked, and last the epigraph variable t. With
    :math:`\hat c^Tx = 1` (``setups[0].c0 / alphas[0]``; beam b's main-beam field is then
    :math:`\alpha_b`) the program is

    .. math::
        \min t \quad\text{s.t.}\quad \|L_b^Tx\|/|\alpha_b| \le t,\quad
        |E^b_i(x)| \le \tau|\alpha_b| \ \ (i \in \text{samples of beam } b),

    :math:`L_bL_b^T = Q_{s,b}`. ``rowsets`` holds one list of :class:`Rows` per beam. Returns
    ``(program, None, q)`` for ``program.solve(None, q)``.
    """
    s0 = setups[0]
    n = s0.n
    extra_t = dr_lin is not None
    nv = n + int(extra_t) + 1
    b = _Blocks(ConicProgram(nv), n)
    b.prog.zero(b.pad(s0.c0 / alphas[0]), 1.0)
    for rsets, a in zip(rowsets, alphas, strict=True):
        for rs in rsets:
            if len(rs):
                _samples_max(b, rs, None if tau is None else tau * abs(a))
    if nonneg:
        b.prog.leq(-np.eye(n, nv), 0.0)
    if extra_t:
        _dynamic_range(b, s0, n, dr_lin, None)
    tr = np.zeros((len(setups), nv))
    tr[:, nv - 1] = 1.0
    V = np.stack([b.pad(cholesky(s.Qs, "radiated-power").T / abs(a))
                  for s, a in zip(setups, alphas, strict=True)])
    b.prog.socs(tr, np.zeros(len(setups)), V)
    q = np.zeros(nv)
    q[nv - 1] = 1.0
    return b.prog, None, q
