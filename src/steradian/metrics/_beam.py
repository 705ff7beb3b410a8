"""The pattern about one beam axis, and the main-lobe models (radial, mirror, band).

Crossings and nulls are refined by vectorised k-section on the continuous pattern, never read
off a sampling grid. See :mod:`steradian.metrics` for the definitions.
"""

from __future__ import annotations

import numpy as np

from ..directions import angles_deg
from ..elements import Isotropic
from ..errors import SteradianError
from ..patterns import cut_frame, intensity, intensity_of_beams
from ..sphere import gauss_legendre
from ..units import db10
from ._results import Lobe, PlaneWidths

__all__ = ["N_RADIALS", "Beam", "RadialLobe", "BandLobe", "arc", "rel_db", "plane_widths", "g_of",
           "ksection", "KSECTION_MINIMUM", "BOUNDARY_SHRINK", "march_beams", "radial_edge",
           "dot_rows"]

N_RADIALS = 96
"""Radials for the main-lobe boundary (a multiple of 4: the principal cuts are four of them)."""


def rel_db(ratio) -> float:
    """A power ratio in dB (floored, a float)."""
    return float(db10(ratio))


def arc(r0, tangents, rho):
    """Points r0 cos(rho) + t sin(rho); r0 (3,) or one per tangent (m,3), tangents (m,3),
    rho (m,) or (m,k) -> (m,[k,]3)."""
    rho = np.asarray(rho, float)
    r0 = np.asarray(r0, float)
    r0 = r0 if r0.ndim == 2 else r0[None, :]
    if rho.ndim == 1:
        return r0 * np.cos(rho)[:, None] + tangents * np.sin(rho)[:, None]
    return r0[:, None, :] * np.cos(rho)[..., None] + tangents[:, None, :] * np.sin(rho)[..., None]


_HALF, _EDGE, _MIN = 0, 1, 2  # refinement kinds: half-power root, zero edge, minimum
KSECTION_MINIMUM = _MIN
"""The :func:`ksection` kind that brackets a minimum."""


FINISH_SHRINK = {0: 64, 2: 1024}
"""A half-power (kind 0) or minimum (kind 2) bracket is finished by interpolation once
k-section has shrunk it by this factor: two steps for a crossing, five for a minimum at
k = 8. The cubic through four of the last step's samples then places a half-power crossing
to about 1e-12 rad and a true null (a zero of the field, where U is quadratic) to about
1e-12 rad; the errors fall with the fourth and the third power of the sample spacing."""

BOUNDARY_SHRINK = 4
"""Finishing factor of a first null that only bounds the main lobe (a radial off the
principal cuts): one k-section step, then the cubic, place it to about 3e-8 rad (the
march's bracket of two steps of 1/16 null width; 2.5e-10 rad after a second step). The
boundary's error enters the main-lobe power at third order (U vanishes quadratically at a
null): over a 16 x 16 panel's sweep ISLR moved by at most 3e-10 dB against the second
step, and the sidelobe region not at all unless a lobe peak lies within it."""

_MARCH_BLOCK = 24
"""Radial steps evaluated per block of the march (16 steps per null width: a first null
within 1.5 null widths, as of a broadside beam, is found in the first block)."""


# Inverse Vandermonde of the nodes t = 0, 1, 2, 3: cubic coefficients c0..c3 from 4 values.
_CUBIC = np.linalg.inv(np.vander(np.arange(4.0), 4, increasing=True))


def ksection(fun, a, b, kind, k: int = 8, tol: float = 1e-13, iters: int = 40, *,
             fa=None, fb=None, shrink=None):
    """Vectorised k-section refinement of many brackets at once (one ``fun`` call per step).

    ``fun(x)`` maps bracket coordinates (n, k+1) to values of the same shape. Each step
    samples every bracket [a, b] at k+1 equally spaced points and keeps the sub-bracket
    holding the event: for ``_HALF`` the first fall below 0.5, for ``_EDGE`` the first exact
    zero, for ``_MIN`` the neighbours of the smallest sample (the bracket shrinks by k for
    roots, by k/2 for minima). Once a half-power or minimum bracket has shrunk by
    :data:`FINISH_SHRINK` (or below ``tol``) it is finished on the last step's samples: the
    cubic through the four samples about the event, solved for 0.5 by safeguarded Newton
    steps, or for its stationary point (both converge far faster than further sections on
    the smooth pattern). An exact-zero edge is a jump and is sectioned down to ``tol``.
    Returns the refined points.

    ``fa``, ``fb``: the values at the brackets' ends when the caller has them (as the march
    does); a step then evaluates only the k - 1 interior samples, as every later step does.
    ``shrink``: a finishing factor per bracket in place of :data:`FINISH_SHRINK` (the
    march finishes the main-lobe boundary's nulls after two steps: see
    :data:`BOUNDARY_SHRINK`).

    References
    ----------
    R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973,
    ch. 3-5 (interpolation within a bracket).
    """
    a, b = np.array(a, float), np.array(b, float)
    kind = np.asarray(kind)
    out = np.full(len(a), np.nan)
    ends = [np.full(len(a), np.nan) if f is None else np.array(f, float) for f in (fa, fb)]
    t = np.linspace(0.0, 1.0, k + 1)
    if shrink is None:
        shrink = np.where(kind == _HALF, FINISH_SHRINK[_HALF], FINISH_SHRINK[_MIN])
    finish = np.where(kind == _EDGE, tol, np.maximum((b - a) * (1 + 1e-9) / shrink, tol))
    for _ in range(iters):
        act = np.flatnonzero(np.isnan(out) & (b - a > tol))
        if not len(act):
            break
        x = a[act, None] + (b - a)[act, None] * t[None, :]
        x[:, 0], x[:, -1] = a[act], b[act]
        v = _sample(fun, act, x, ends[0][act], ends[1][act])
        kd = kind[act]
        good = np.where((kd == _HALF)[:, None], v >= 0.5, v > 0.0)
        i_root = np.clip(np.argmin(good, axis=1), 1, k)  # first sample past the event
        i_min = np.argmin(v, axis=1)
        rows = np.arange(len(act))
        lo_i = np.where(kd == _MIN, np.maximum(i_min - 1, 0), i_root - 1)
        hi_i = np.where(kd == _MIN, np.minimum(i_min + 1, k), i_root)
        lo, hi = x[rows, lo_i], x[rows, hi_i]
        a[act], b[act] = lo, hi
        ends[0][act], ends[1][act] = v[rows, lo_i], v[rows, hi_i]
        done = ((hi - lo) <= finish[act]) & (kd != _EDGE)
        if done.any():
            out[act[done]] = _finish(kd[done], x[done], v[done], lo_i[done], hi_i[done])
    return np.where(np.isnan(out), 0.5 * (a + b), out)


def _sample(fun, act, x, va, vb):
    """``fun`` on the samples ``x`` of brackets ``act``, evaluating only the interior where
    both ends' values ``va``, ``vb`` are known."""
    known = np.isfinite(va) & np.isfinite(vb)
    v = np.empty(x.shape)
    if known.any():
        v[known, 1:-1] = fun(act[known], x[known, 1:-1])
        v[known, 0], v[known, -1] = va[known], vb[known]
    if not known.all():
        v[~known] = fun(act[~known], x[~known])
    return v


def _finish(kind, x, v, lo_i, hi_i):
    """The event in brackets [x[lo_i], x[hi_i]] from the cubic through four of the equally
    spaced samples ``v`` at ``x`` (rows): the crossing of 0.5 (``_HALF``) or the stationary
    point (``_MIN``), kept inside the bracket."""
    r = np.arange(len(kind))
    k = x.shape[1] - 1
    j0 = np.clip(lo_i - 1 if k >= 3 else 0, 0, k - 3)
    c = v[r[:, None], j0[:, None] + np.arange(4)] @ _CUBIC.T  # p(t) = sum c_i t^i
    t_lo, t_hi = (lo_i - j0).astype(float), (hi_i - j0).astype(float)
    half = kind == _HALF
    # Crossing: Newton from the chord's root, kept in the bracket.
    f_lo = _poly(c, t_lo) - 0.5
    f_hi = _poly(c, t_hi) - 0.5
    den = np.where(f_lo != f_hi, f_lo - f_hi, 1.0)
    s = np.clip(t_lo + (t_hi - t_lo) * f_lo / den, t_lo, t_hi)
    for _ in range(6):
        d1 = c[:, 1] + 2 * c[:, 2] * s + 3 * c[:, 3] * s**2
        step = np.where(d1 != 0, (_poly(c, s) - 0.5) / np.where(d1 != 0, d1, 1.0), 0.0)
        s = np.clip(s - step, t_lo, t_hi)
    # Minimum: the root of p' (a quadratic) with p'' > 0 in the bracket, else the vertex of
    # the parabola through the bracket's three samples.
    A, B, C = 3 * c[:, 3], 2 * c[:, 2], c[:, 1]
    disc = B * B - 4 * A * C
    sq = np.sqrt(np.maximum(disc, 0.0))
    lin = np.abs(A) < 1e-300
    q = -0.5 * (B + np.copysign(sq, B))
    roots = np.stack([np.where(lin, -C / np.where(B != 0, B, 1.0), q / np.where(A != 0, A, 1.0)),
                      np.where(q != 0, C / np.where(q != 0, q, 1.0), np.inf)], axis=1)
    curv = 2 * c[:, 2, None] + 6 * c[:, 3, None] * roots
    ok = (disc[:, None] >= 0) & (curv > 0) & (roots >= t_lo[:, None]) & (roots <= t_hi[:, None])
    m = np.where(ok[:, 0], roots[:, 0], np.where(ok[:, 1], roots[:, 1], np.nan))
    mid = 0.5 * (t_lo + t_hi)
    ym, y0, yp = _poly(c, t_lo), _poly(c, mid), _poly(c, t_hi)
    cv = ym - 2 * y0 + yp
    vert = mid + np.where(cv > 0, 0.25 * (t_hi - t_lo) * (ym - yp) / np.where(cv > 0, cv, 1.0),
                          0.0)
    m = np.where(np.isnan(m), np.clip(vert, t_lo, t_hi), m)
    got = np.where(half, s, m)
    step_x = x[r, 1] - x[r, 0]
    return x[r, j0] + got * step_x


def _poly(c, t):
    return c[:, 0] + t * (c[:, 1] + t * (c[:, 2] + t * c[:, 3]))


class Beam:
    """The pattern about one beam axis: relative intensity g = U / U(r0)."""

    def __init__(self, array, frequency, r0, power_value, u0=None):
        self.array = array
        self.frequency = frequency
        self.r0 = np.asarray(r0, float)
        self.u0 = float(intensity(array, self.r0, frequency) if u0 is None else u0)
        if not self.u0 > 0:
            raise SteradianError("the pattern is zero at the beam peak; nothing to measure")
        self.power = power_value
        self.t0, self.t1 = cut_frame(self.r0)

    def g(self, vectors):
        return intensity(self.array, vectors, self.frequency) / self.u0

    def dbi(self, u_rel) -> float:
        return rel_db(4 * np.pi * self.u0 * u_rel / self.power)

    def lobe(self, v, u_rel) -> Lobe:
        th, ph = angles_deg(np.asarray(v, float))
        return Lobe(th, ph, rel_db(u_rel), self.dbi(u_rel))

    def march(self, tangents, h, rho_max):
        """Half-power and first-null angles along radials, refined off the sampling grid
        (:func:`march_beams` of this beam alone).

        Returns ``(rho_hp, rho_null)`` in radians, NaN where not found within ``rho_max``.
        """
        return march_beams([self], [tangents], h, [rho_max])[0]


def g_of(beams, points, owner) -> np.ndarray:
    """Relative intensity g of ``beams[owner[i]]`` at ``points[i]`` (``points`` (..., 3),
    ``owner`` of the leading shape): beams of one frequency in one engine call
    (:func:`steradian.patterns.intensity_of_beams`), each value as its beam's :meth:`Beam.g`
    to rounding."""
    pts = np.asarray(points, float)
    ob = np.broadcast_to(np.asarray(owner), pts.shape[:-1]).reshape(-1)
    flat = pts.reshape(-1, 3)
    f0 = beams[0].frequency
    if all(b.frequency == f0 for b in beams):
        u = intensity_of_beams([b.array for b in beams], flat, ob, f0)
        return (u / np.array([b.u0 for b in beams])[ob]).reshape(pts.shape[:-1])
    out = np.empty(len(flat))
    for b in np.unique(ob):
        sel = ob == b
        out[sel] = beams[b].g(flat[sel])
    return out.reshape(pts.shape[:-1])


def march_beams(beams, tangents_of, h: float, rho_max_of, half_power_of=None):
    """Half-power and first-null angles along the radials of several beams at once.

    Beam ``b`` marches along its radials with tangents ``tangents_of[b]`` (m_b, 3) out to
    ``rho_max_of[b]`` (scalar or (m_b,)), in steps of ``h``: each block of steps evaluates
    every beam's active radials (one pattern call per beam); the first null is the first
    local minimum below the peak, the half-power point the first sample below 1/2 before it.
    Both are then refined together by :func:`ksection`. ``half_power_of[b]``: the radials
    (indices or a mask) whose half-power angle is wanted (default: all; the others' is NaN,
    and their refinement is skipped); the others' first null only bounds the main lobe and
    is finished at :data:`BOUNDARY_SHRINK`. A radial's result does not depend on the other
    radials or beams marched with it. Returns ``[(rho_hp, rho_null), ...]`` per beam, in
    radians, NaN where not found.
    """
    parts = [np.asarray(t, float).reshape(-1, 3) for t in tangents_of]
    T = np.concatenate(parts)
    sizes = [len(t) for t in parts]
    owner = np.repeat(np.arange(len(beams)), sizes)
    R0 = np.stack([b.r0 for b in beams])[owner]
    rho_max = np.concatenate([np.broadcast_to(np.asarray(r, float), (n,))
                              for r, n in zip(rho_max_of, sizes, strict=True)])
    m = len(T)
    want_hp = np.ones(m, bool)
    if half_power_of is not None:
        want_hp[:] = False
        for start, n, sel in zip(np.cumsum([0] + sizes[:-1]), sizes, half_power_of,
                                 strict=True):
            want_hp[start:start + n][sel] = True

    def g_rows(pts, rows):  # pts (A, K, 3) on radials ``rows`` (A,)
        return g_of(beams, pts, owner[rows][:, None])

    nmax = int(np.ceil(rho_max.max() / h)) + 2 if m else 0
    G = np.full((m, nmax + 1), np.nan)
    G[:, 0] = 1.0
    i_hp = np.full(m, -1)
    i_null = np.full(m, -1)
    done = np.zeros(m, bool)
    lim = np.floor(rho_max / h).astype(int)  # last index within rho_max
    filled = 0
    block = _MARCH_BLOCK
    while not done.all() and filled < nmax:
        hi = min(filled + block, nmax)
        act = np.flatnonzero(~done)
        rho = np.minimum(np.arange(filled + 1, hi + 1) * h, np.pi)
        G[act, filled + 1:hi + 1] = g_rows(
            arc(R0[act], T[act], np.broadcast_to(rho, (len(act), len(rho)))), act)
        filled = hi
        Gs = G[act, :filled + 1]
        idx = np.arange(filled + 1)[None, :]
        dec = np.zeros(Gs.shape, bool)
        dec[:, 1:-1] = (Gs[:, 2:] >= Gs[:, 1:-1]) & (Gs[:, 1:-1] < 1 - 1e-6)
        dec &= idx <= lim[act, None]
        i_null[act] = np.where(dec.any(axis=1), dec.argmax(axis=1), i_null[act])
        top = np.where(i_null[act] > 0, i_null[act], lim[act])
        below = np.zeros(Gs.shape, bool)
        below[:, 1:] = Gs[:, 1:] < 0.5
        below &= idx <= top[:, None]
        i_hp[act] = np.where(below.any(axis=1), below.argmax(axis=1), i_hp[act])
        done[act] = (i_null[act] > 0) | (filled >= lim[act] + 1)
    # Refine every half-power crossing and first null together, off the sampling grid.
    hp = np.flatnonzero((i_hp > 0) & want_hp)
    nl = np.flatnonzero(i_null > 0)
    edge = G[nl, i_null[nl]] == 0.0  # exact zero: the edge of a front-only pattern
    rows = np.concatenate([hp, nl])
    kind = np.concatenate([np.full(len(hp), _HALF), np.where(edge, _EDGE, _MIN)])
    i_lo = np.concatenate([i_hp[hp] - 1, i_null[nl] - 1])
    i_hi = np.concatenate([i_hp[hp], np.where(edge, i_null[nl], i_null[nl] + 1)])
    lo, hi = i_lo * h, np.minimum(i_hi * h, np.pi)
    # The march's samples at the brackets' ends (the same points, rho = i h clipped to pi).
    fa, fb = G[rows, i_lo], G[rows, i_hi]

    def fun(act, x):
        return g_rows(arc(R0[rows[act]], T[rows[act]], x), rows[act])

    shrink = np.concatenate([np.full(len(hp), FINISH_SHRINK[_HALF]),
                             np.where(want_hp[nl], FINISH_SHRINK[_MIN], BOUNDARY_SHRINK)])
    ref = (ksection(fun, lo, hi, kind, fa=fa, fb=fb, shrink=shrink) if len(rows)
           else np.zeros(0))
    rho_hp = np.full(m, np.nan)
    rho_null = np.full(m, np.nan)
    rho_hp[hp] = ref[:len(hp)]
    rho_null[nl] = ref[len(hp):]
    cuts = np.cumsum([0] + sizes)
    return [(rho_hp[a:b], rho_null[a:b]) for a, b in zip(cuts[:-1], cuts[1:], strict=True)]


def plane_widths(name, hp_pos, hp_neg, null_pos, null_neg) -> PlaneWidths:
    def deg(x, sign):
        return None if not np.isfinite(x) else float(sign * np.rad2deg(x))

    hp = (deg(hp_neg, -1), deg(hp_pos, 1))
    nl = (deg(null_neg, -1), deg(null_pos, 1))
    hpbw = None if None in hp else hp[1] - hp[0]
    fnbw = None if None in nl else nl[1] - nl[0]
    return PlaneWidths(name, hpbw, fnbw, hp, nl)


# ---- main-lobe models ---------------------------------------------------------------------

def radial_edge(psi, rho, which=None):
    """The main-lobe edge at azimuths ``psi`` (rad): linear interpolation, periodic, in the
    table ``rho`` of first-null angles on equally spaced radials (psi = 2 pi i / m); with
    ``which``, ``rho`` holds one table per beam (B, m) and ``which[i]`` is the beam of
    ``psi[i]``."""
    rho = np.asarray(rho, float)
    m = rho.shape[-1]
    pos = np.asarray(psi, float) * (m / (2 * np.pi))
    i0 = np.floor(pos)
    f = pos - i0
    i0 = i0.astype(np.int64) % m
    i1 = (i0 + 1) % m
    if which is None:
        return rho[i0] * (1.0 - f) + rho[i1] * f
    return rho[which, i0] * (1.0 - f) + rho[which, i1] * f


def dot_rows(d, v):
    """Row-wise d . v for d (P, 3) and v (3,) or (P, 3), the same sum whether v is shared
    or per row (so a batched region test equals the single one bit for bit)."""
    return d[..., 0] * v[..., 0] + d[..., 1] * v[..., 1] + d[..., 2] * v[..., 2]


class RadialLobe:
    """Main lobe bounded by the first null along each radial (optionally plus its mirror)."""

    def __init__(self, beam: Beam, rho_null: np.ndarray, mirror_normal=None):
        self.beam = beam
        self.rho = np.where(np.isfinite(rho_null), rho_null, np.pi)
        self.n = None if mirror_normal is None else np.asarray(mirror_normal, float)

    def inside_one(self, d):
        b = self.beam
        return _inside_radial(d, b.r0, b.t0, b.t1, self.rho)

    def mirror(self, d):
        return d - 2.0 * dot_rows(d, self.n)[..., None] * self.n

    def inside(self, d):
        d = np.asarray(d, float)
        ins = self.inside_one(d)
        if self.n is not None:
            ins |= self.inside_one(self.mirror(d))
        return ins

    @staticmethod
    def inside_many(lobes, d, which):
        """:meth:`inside` of ``lobes[which[i]]`` at ``d[i]``, for all at once (lobes with
        tables of equal length), equal to each lobe's own test."""
        d = np.asarray(d, float)
        which = np.asarray(which)
        beams = [lb.beam for lb in lobes]
        R0, T0, T1 = (np.stack([getattr(b, a) for b in beams])[which]
                      for a in ("r0", "t0", "t1"))
        rho = np.stack([lb.rho for lb in lobes])
        ins = _inside_radial(d, R0, T0, T1, rho, which)
        mirrored = np.array([lb.n is not None for lb in lobes])
        if mirrored.any():
            sel = np.flatnonzero(mirrored[which])
            n = np.stack([lb.n for lb in lobes if lb.n is not None])
            n = n[np.cumsum(mirrored)[which[sel]] - 1]
            md = d[sel] - 2.0 * dot_rows(d[sel], n)[:, None] * n
            ins[sel] |= _inside_radial(md, R0[sel], T0[sel], T1[sel], rho, which[sel])
        return ins

    def power(self, kr: float) -> float:
        """Integral of U over the main lobe: Gauss-Legendre in rho x trapezoid in psi."""
        return RadialLobe.power_many([self], kr)[0]

    def _rule(self, kr: float):
        """The main-lobe rule: nodes (P, 3) and weights (P,) with int U = sum w U(nodes)."""
        b = self.beam
        rmax = float(self.rho.max())
        n_rho = int(np.ceil(kr * rmax)) + 24
        m = max(N_RADIALS, 4 * int(np.ceil(kr * np.sin(min(rmax, np.pi / 2)))) + 16)
        psi = 2 * np.pi * np.arange(m) / m
        edge = radial_edge(psi, self.rho)
        x, w = gauss_legendre(n_rho)
        rho = 0.5 * (x[None, :] + 1.0) * edge[:, None]  # (m, n_rho)
        wr = 0.5 * w[None, :] * edge[:, None] * np.sin(rho) * (2 * np.pi / m)
        T = b.t0[None, :] * np.cos(psi)[:, None] + b.t1[None, :] * np.sin(psi)[:, None]
        return arc(b.r0, T, rho).reshape(-1, 3), wr.reshape(-1)

    @staticmethod
    def power_many(lobes, kr: float) -> list[float]:
        """:meth:`power` of several lobes (beams of one aperture: one ``kr``), their pattern
        values from one engine call (:func:`g_of`)."""
        rules = [lb._rule(kr) for lb in lobes]
        owner = np.concatenate([np.full(len(p), i) for i, (p, _) in enumerate(rules)])
        g = g_of([lb.beam for lb in lobes], np.concatenate([p for p, _ in rules]), owner)
        out, at = [], 0
        for lb, (pts, wr) in zip(lobes, rules, strict=True):
            u, at = g[at:at + len(pts)] * lb.beam.u0, at + len(pts)
            if lb.n is not None:
                # U is mirror symmetric, so the union of the lobe R and its mirror M(R)
                # holds int_R U (1 + [M d not in R]) dOmega.
                u = u * (1.0 + ~lb.inside_one(lb.mirror(pts)))
            out.append(float((u * wr).sum()))
        return out


def _inside_radial(d, r0, t0, t1, rho, which=None):
    """Directions ``d`` (P, 3) closer to the beam axis ``r0`` than the lobe edge (the
    first-null table ``rho``) at their azimuth about it (frame t0, t1); per-row axes and
    tables with ``which`` (see :func:`radial_edge`)."""
    ang = np.arccos(np.clip(dot_rows(d, r0), -1.0, 1.0))
    psi = np.mod(np.arctan2(dot_rows(d, t1), dot_rows(d, t0)), 2 * np.pi)
    return ang < radial_edge(psi, rho, which)


class BandLobe:
    """Collinear array: main lobe = band c_lo < d . a < c_hi of cone angles about axis a."""

    def __init__(self, beam: Beam, axis, c_lo, c_hi):
        self.beam = beam
        self.a = np.asarray(axis, float)
        self.c_lo, self.c_hi = float(c_lo), float(c_hi)

    def inside(self, d):
        c = np.asarray(d, float) @ self.a
        return (c > self.c_lo) & (c < self.c_hi)

    def power(self, k_length: float) -> float:
        """Integral of U over the band: Gauss-Legendre in c = d . a x a rule in azimuth."""
        b = self.beam
        arr = b.array
        a = self.a
        zp = np.array([0.0, 0.0, 1.0]) - a[2] * a
        if np.linalg.norm(zp) < 1e-9:
            zp = cut_frame(a)[0]
        f2 = zp / np.linalg.norm(zp)
        f1 = np.cross(f2, a)
        iso = isinstance(arr.element, Isotropic) and arr.geometry.orientations is None
        if iso:  # U depends on c only
            beta, wb = np.array([0.0]), np.array([2 * np.pi])
        elif arr.element.front_only and abs(a[2]) < 1e-12 and arr.geometry.orientations is None:
            # The horizon is at beta = 0, pi: Gauss-Legendre on each half avoids the kink.
            x, w = gauss_legendre(32)
            half = 0.5 * np.pi * (x + 1.0)
            beta = np.concatenate([half, half + np.pi])
            wb = np.concatenate([w, w]) * 0.5 * np.pi
        else:
            nb = 720 if arr.element.front_only else 64
            beta = 2 * np.pi * np.arange(nb) / nb
            wb = np.full(nb, 2 * np.pi / nb)
        n_c = int(np.ceil(k_length * (self.c_hi - self.c_lo) / 2)) + 24
        x, w = gauss_legendre(n_c)
        c = self.c_lo + 0.5 * (x + 1.0) * (self.c_hi - self.c_lo)
        wc = 0.5 * w * (self.c_hi - self.c_lo)
        s = np.sqrt(np.clip(1 - c**2, 0.0, None))
        ring = np.cos(beta)[None, :, None] * f1 + np.sin(beta)[None, :, None] * f2
        pts = c[:, None, None] * a + s[:, None, None] * ring
        u = b.g(pts.reshape(-1, 3)).reshape(len(c), len(beta)) * b.u0
        return float(wc @ u @ wb)
