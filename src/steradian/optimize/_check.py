"""Dense re-check of a synthesised pattern, independent of the constraint samples.

Every pattern value comes from :func:`steradian.engine.field`. The check evaluates a shifted,
finer grid than the constraint samples, picks the local maxima of the field-to-bound ratio
and refines them off-grid by a vectorised shrinking pattern search, so the reported levels
are those of the continuous pattern, not of any grid.
"""

from __future__ import annotations

import numpy as np

from ..directions import Directions
from ..engine import field

__all__ = ["field_magnitude", "check_family", "main_peak", "local_maxima", "refine_max"]


def field_magnitude(array, dirs) -> np.ndarray:
    """|E| of ``array`` at unit vectors (M, 3)."""
    dirs = np.asarray(dirs, float).reshape(-1, 3)
    if len(dirs) == 0:
        return np.zeros(0)
    return np.sqrt(field(array, Directions.from_vectors(dirs)).intensity)


def local_maxima(keys: np.ndarray, vals: np.ndarray, radius: float, k: int) -> np.ndarray:
    """Indices of up to ``k`` largest values that are maxima within ``radius`` (in key space)."""
    from scipy.spatial import cKDTree

    if len(vals) == 0:
        return np.zeros(0, int)
    order = np.argsort(-vals)[: max(25 * k, 400)]
    tree = cKDTree(keys)
    picked = []
    for i in order:
        if not np.isfinite(vals[i]) or vals[i] <= 0:
            break
        nb = tree.query_ball_point(keys[i], radius)
        if vals[i] >= np.max(vals[nb]):
            picked.append(i)
            if len(picked) >= k:
                break
    return np.array(picked, int)


def refine_max(fun, neighbourhood, dirs, step, rounds: int = 11, m: int = 3):
    """Vectorised shrinking pattern search for local maxima of ``fun``.

    Each round evaluates a (2m+1)^d local grid of spacing ``step`` around every current point,
    moves to the best, and divides the step by m; the true maximum stays inside the next
    window, so after r rounds the position is known to ``step / m**r``.
    """
    cur = np.asarray(dirs, float).reshape(-1, 3)
    if len(cur) == 0:
        return cur, np.zeros(0)
    best = fun(cur)
    for _ in range(rounds):
        cand = neighbourhood(cur, step, m)  # (K, P, 3)
        K, P, _ = cand.shape
        vals = fun(cand.reshape(-1, 3)).reshape(K, P)
        j = np.argmax(vals, axis=1)
        v = vals[np.arange(K), j]
        better = v > best
        cur = np.where(better[:, None], cand[np.arange(K), j], cur)
        best = np.where(better, v, best)
        step = step / m
    return cur, best


def main_peak(array, setup, step: float):
    """Peak |E| of the main beam: refined from the beam direction. Returns (|E|, direction)."""
    r0 = setup.r0[None, :]
    d, v = refine_max(lambda x: field_magnitude(array, x), setup.domain.neighbourhood, r0,
                      step, rounds=12)
    e0 = field_magnitude(array, r0)[0]
    if v[0] < e0:
        return e0, setup.r0
    return float(v[0]), d[0]


def check_family(array, family, e0: float, tau: float | None, k: int = 48):
    """Dense check of one constraint family.

    Returns a dict: ``dirs`` and ``ratio`` of the refined local maxima of
    |E| / (e0 * bound) (ratio 1 = exactly at the bound), ``worst`` (largest ratio),
    ``worst_dir``, and ``field`` (|E| at the worst point) for reporting.
    """
    def bound_of(d):
        coef, fixed = family.bounds(d)
        b = fixed.copy()
        if tau is not None:
            b = np.minimum(b, np.where(coef > 0, coef * tau, np.inf))
        return b

    def ratio(d):
        b = bound_of(d)
        out = np.zeros(len(d))
        ok = np.isfinite(b)
        if np.any(ok):
            out[ok] = field_magnitude(array, d[ok]) / (e0 * b[ok])
        return out

    dense = family.dense()
    r = ratio(dense)
    idx = local_maxima(family.keys(dense), r, 1.6 * family.dense_spacing, k)
    if len(idx) == 0:
        return {"dirs": np.zeros((0, 3)), "ratio": np.zeros(0), "worst": 0.0,
                "worst_dir": None, "field": 0.0}
    d, v = refine_max(ratio, family.neighbourhood, dense[idx], family.dense_spacing)
    i = int(np.argmax(v))
    return {"dirs": d, "ratio": v, "worst": float(v[i]), "worst_dir": d[i],
            "field": float(field_magnitude(array, d[i:i + 1])[0])}
