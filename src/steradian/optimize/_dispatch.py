"""One solve of an adaptive round on the path that fits it: the dense real-field interior
point (:mod:`._qp`) or the first-order method (:mod:`._admm`) when every constraint is a
linear inequality, else the general conic program (:mod:`._conic`, clarabel).

Paths (``solver``): "auto" (on real-field problems the interior point below 3,000 unknowns
and the first-order method above, else conic), "interior" and "first_order" (an
error where they do not apply), "conic" (clarabel for everything: the reference the faster
paths are tested against).
"""

from __future__ import annotations

import numpy as np

from ..errors import SteradianError
from ._admm import solve_admm
from ._assemble import assemble
from ._conic import SolverFailure
from ._qp import RealQP, solve_real_qp

__all__ = ["SOLVERS", "solve_round", "real_rows"]

SOLVERS = ("auto", "interior", "first_order", "conic")

_FIRST_ORDER_FROM = 3000  # unknowns (see _first_order_pays)

def real_rows(setup, rowsets, nrows, *, mode, tau, dr_lin, wng_min):
    """``(H, b)`` of the real-field program (``|H x| <= b``), or None when the problem has a
    limit the dense path does not take (cones, exact nulls, the dual problem, hardware
    limits)."""
    if mode != "max" or dr_lin is not None or wng_min is not None:
        return None
    Hs, bs = [], []
    for real, H, _, depth in nrows:
        if depth is None or not bool(np.all(real)):
            return None
        Hs.append(H)
        bs.append(np.full(len(H), depth))
    for rs in rowsets:
        if len(rs) == 0:
            continue
        bound = rs.fixed.copy()
        if tau is not None:
            ps = rs.coef > 0
            bound[ps] = np.minimum(bound[ps], rs.coef[ps] * tau)
        ok = np.isfinite(bound)
        if not np.all(rs.real[ok]):
            return None
        Hs.append(rs.H[ok])
        bs.append(bound[ok])
    if not Hs:
        return np.zeros((0, setup.n)), np.zeros(0)
    return np.vstack(Hs), np.concatenate(bs)


def _first_order_pays(qp) -> bool:
    """The first-order path only where the interior point's normal matrix is far the larger
    work: an interior-point iteration costs m n^2 (about 20 per round) against n^2 + m n per
    first-order iteration (thousands) plus one m n^2 Gram product per round. Measured on
    this machine, the interior point was faster at every size tried (16 x 16 to 64 x 64
    quadrant panels, up to 1,024 unknowns: 37 s against over 900 s at 64 x 64), so the
    switch sits at an estimated, not measured, crossover of 3,000 unknowns."""
    return qp.n >= _FIRST_ORDER_FROM


def solve_round(setup, rowsets, nrows, *, mode, tau, nonneg, dr_lin, w_prev, wng_min, p_max,
                solver: str, relax: float = 1.0, warm: dict | None = None):
    """Solve the current round's program. Returns ``(z, info, path)``; ``z`` starts with the
    weight parameters x (then the program's extra variables, conic path only).

    On the interior path ``info["certified_power"]`` is the dual bound on the (loaded)
    radiated power of any weights meeting the sampled limits within the factor ``relax``
    (the dense check's tolerance). ``warm`` (a dict kept across rounds) carries the
    first-order path's iterates to the next round."""
    warm = {} if warm is None else warm
    rows = None
    if solver in ("auto", "interior", "first_order"):
        rows = real_rows(setup, rowsets, nrows, mode=mode, tau=tau, dr_lin=dr_lin,
                         wng_min=wng_min)
        if rows is None and solver != "auto":
            raise SteradianError(f"solver={solver!r} needs a real-field problem (centro-"
                                 "symmetric or amplitude weights, no dynamic-range or white-"
                                 "noise-gain limit, no exact nulls); use solver='auto'")
    if rows is not None:
        H, b = rows
        qp = RealQP(setup.Qs, setup.c0, H, b,
                    nonneg and setup.param.weights == "amplitude")
        if solver == "first_order" or (solver == "auto" and _first_order_pays(qp)):
            prefix = len(rowsets) == 1 and not nrows
            x, info, state = solve_admm(qp, warm=warm.get("admm") if prefix else None)
            warm["admm"] = state
            info["certified_power"] = qp.bound(info.pop("multipliers"), relax=relax)
            return x, info, "first_order"
        x, info = solve_real_qp(qp)
        if info["status"] != "Solved" and solver == "interior":
            raise SolverFailure(info["status"], "the dense interior-point path stopped "
                                f"without an optimum ({info['status']} after "
                                f"{info['iterations']} iterations); use solver='auto'")
        if info["status"] == "Solved":
            info["certified_power"] = qp.bound(info.pop("multipliers"), relax=relax)
            return x, info, "interior"
    prog, P, q = assemble(setup, rowsets, nrows, mode=mode, tau=tau, nonneg=nonneg,
                          dr_lin=dr_lin, w_prev=w_prev, wng_min=wng_min, p_max=p_max)
    z, info = prog.solve(P, q, whiten=setup.whitener())
    return z, info, "conic"
