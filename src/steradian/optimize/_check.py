"""Dense re-check of a synthesised pattern, independent of the constraint samples.

Every pattern value comes from :func:`steradian.engine.field`. The check evaluates a shifted,
finer grid than the constraint samples, picks the local maxima of the field-to-bound ratio
and refines them off-grid with the package's lobe search (:mod:`steradian.sphere`), so the
reported levels are those of the continuous pattern, not of any grid. The ratio is zero where
a family sets no bound (inside the main-lobe zone, outside a notch), and the refinement never
lowers the value it holds, so a maximum on the edge of a region is approached from inside.
"""

from __future__ import annotations

import numpy as np

from ..directions import Directions
from ..engine import field
from ..sphere import SearchSet, pointwise, refine_maxima

__all__ = ["field_magnitude", "check_family", "main_peak"]


def field_magnitude(array, dirs) -> np.ndarray:
    """|E| of ``array`` at unit vectors (M, 3)."""
    dirs = np.asarray(dirs, float).reshape(-1, 3)
    if len(dirs) == 0:
        return np.zeros(0)
    return np.sqrt(field(array, Directions.from_vectors(dirs)).intensity)


def _circle_normal(holder):
    """Normal of the great circle a line domain samples (its pattern is constant on cones
    about the axis, so refinement stays on the circle); None for other domains."""
    dom = getattr(holder, "domain", None)
    if dom is not None and getattr(dom, "kind", None) == "line":
        return np.cross(dom.e1, dom.b)
    return None


def _projector(family):
    """The family's region as a projection: its neighbourhood of zero size moves a point
    into the region (onto the main-lobe zone's edge, into a notch sector)."""
    def project(d, rows):
        return family.neighbourhood(d, 0.0, 0)[:, 0, :]
    return project


def main_peak(array, setup, step: float):
    """Peak |E| of the main beam: refined from the beam direction. Returns (|E|, direction)."""
    r0 = setup.r0[None, :]
    d, v = refine_maxima(pointwise(lambda x: field_magnitude(array, x)), r0, step,
                         normal=_circle_normal(setup))
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
    keys = np.asarray(family.keys(dense), float).reshape(len(dense), -1)
    search = SearchSet.from_points(dense, family.dense_spacing, keys=keys,
                                   k=2 if keys.shape[1] == 1 else 8,
                                   normal=_circle_normal(family))
    idx = search.local_maxima(ratio(dense), k)
    idx = idx[idx >= 0]
    if len(idx) == 0:
        return {"dirs": np.zeros((0, 3)), "ratio": np.zeros(0), "worst": 0.0,
                "worst_dir": None, "field": 0.0}
    d, v = refine_maxima(pointwise(ratio), dense[idx], family.dense_spacing,
                         normal=search.normal, project=_projector(family))
    i = int(np.argmax(v))
    return {"dirs": d, "ratio": v, "worst": float(v[i]), "worst_dir": d[i],
            "field": float(field_magnitude(array, d[i:i + 1])[0])}
