r"""Difference (monopulse) beams: the beam kind, the boresight null, the two difference lobes
and the difference slope. Definitions are in :mod:`steradian.metrics`.

A difference beam's excitation is antisymmetric about a plane through the array centre: the
y-z plane for ``"difference_az"`` (the difference is taken along x), the x-z plane for
``"difference_el"`` (along y); for a line, about its centre (along the line, whatever the
kind). Its pattern has a null at boresight (the steering direction) between two lobes of
equal level, so a sum beam's figures (peak sidelobe beside the main lobe, pointing) do not
apply: the twin lobe would be reported as a 0 dB sidelobe.

References
----------
E. T. Bayliss, "Design of monopulse antenna difference patterns with low sidelobes," Bell
Syst. Tech. J. 47 (1968) 623-650.
S. M. Sherman and D. K. Barton, *Monopulse Principles and Techniques*, 2nd ed., Artech House,
2011 (difference slope and normalised monopulse slope; patterns normalised so that their
squares are directivities).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..directions import angle_between_deg, angles_deg
from ..errors import SteradianError
from ..geometry import principal_axes
from ..patterns import intensity
from ..radiation import radiated_power
from ..settings import BEAM_KINDS
from ..sphere import pointwise, refine_maxima
from ..units import db20
from ._beam import KSECTION_MINIMUM, arc, ksection, rel_db

__all__ = ["BEAM_KINDS", "SUM_NULL_DB", "LOBE_DB", "reference_direction",
           "coherent_level_db", "boresight_level_db", "check_sum_beam", "check_beam_kind",
           "DifferenceBeam", "difference_beam", "DifferenceNull", "difference_null",
           "difference_axis"]

SUM_NULL_DB = -20.0
"""A declared sum beam whose excitation puts the array factor at boresight this far below its
co-phased maximum, with the pattern peak within a null width of boresight, is refused; a
declared difference beam must reach it."""

LOBE_DB = -10.0
"""Each difference lobe (the first maximum beside boresight along the difference axis) must
be within this many dB of the pattern's peak."""

_EZ = np.array([0.0, 0.0, 1.0])


def check_beam_kind(kind) -> str:
    """``kind`` checked against :data:`BEAM_KINDS`."""
    if kind not in BEAM_KINDS:
        raise SteradianError(f"beam_kind must be one of {', '.join(BEAM_KINDS)}, got {kind!r}")
    return kind


def _axes(array):
    pos = array.positions if array.enabled is None else array.positions[array.enabled]
    return principal_axes(pos)


def reference_direction(array) -> np.ndarray:
    """Boresight: the steering direction, else broadside (the plane's normal on the +z side
    for a planar array; the direction perpendicular to a line nearest +z, or +x for a line
    along z; +z otherwise)."""
    if array.steering is not None:
        return np.asarray(array.steering.unit, float)
    pa = _axes(array)
    if pa.dimension == 2:
        nrm = pa.axes[2]
        return nrm if nrm @ _EZ >= 0 else -nrm
    if pa.dimension == 1:
        a = pa.axes[0]
        for toward in (_EZ, np.array([1.0, 0.0, 0.0])):
            perp = toward - (toward @ a) * a
            if np.linalg.norm(perp) > 1e-6:
                return perp / np.linalg.norm(perp)
    return _EZ


def coherent_level_db(positions, k: float, weights, directions) -> np.ndarray:
    r"""Array factor of each beam at its direction relative to its co-phased maximum, in dB:
    :math:`20\log_{10}(|\sum_n w_{bn} e^{jk\hat r_b\cdot r_n}| / \sum_n|w_{bn}|)`, weights
    (B, N), directions (B, 3) -> (B,) (0 dB for a sum beam steered there, the floor for an
    antisymmetric excitation)."""
    W = np.atleast_2d(np.asarray(weights, complex))
    r = np.atleast_2d(np.asarray(directions, float))
    af = np.abs(np.sum(W * np.exp(1j * k * (r @ np.asarray(positions, float).T)), axis=1))
    return np.asarray(db20(af / np.maximum(np.sum(np.abs(W), axis=1), 1e-300)), float)


def boresight_level_db(array) -> float:
    """:func:`coherent_level_db` of the array's weights at boresight (design frequency)."""
    return float(coherent_level_db(array.positions, array.k(), array.weights(),
                                   reference_direction(array))[0])


def check_sum_beam(ctx) -> None:
    """Refuse a declared sum beam whose excitation is a difference: a boresight array factor
    :data:`SUM_NULL_DB` or more below its co-phased maximum, with the pattern peak within a
    null width (2 pi / kR) of boresight. An unsteered three-dimensional array has no
    boresight and is not checked."""
    if ctx.array.steering is None and _axes(ctx.array).dimension == 3:
        return
    level = boresight_level_db(ctx.array)
    r0 = reference_direction(ctx.array)
    near = np.deg2rad(angle_between_deg(ctx.r0, r0)) < 2 * np.pi / ctx.kr
    if level > SUM_NULL_DB or not near:
        return
    off = ctx.r0 - r0
    guess = "difference_az" if abs(off[0]) >= abs(off[1]) else "difference_el"
    th, ph = angles_deg(r0)
    raise SteradianError(
        f"the excitation has a boresight null ({level:.1f} dB at theta {th:.2f}, phi "
        f"{ph:.2f} deg) between two lobes: it is a difference beam, so a sum beam's peak "
        f"sidelobe would be its twin lobe; declare beam_kind = '{guess}' ([analysis] "
        "beam_kind in a design file) for difference metrics")


def difference_axis(array, kind: str) -> np.ndarray:
    """Unit vector along which the excitation is antisymmetric: x for ``difference_az``, y for
    ``difference_el``; the line's axis for a collinear array."""
    pa = _axes(array)
    if pa.dimension == 1:
        return pa.axes[0]
    return np.array([1.0, 0.0, 0.0]) if kind == "difference_az" else np.array([0.0, 1.0, 0.0])


class _Union:
    """Main lobe of a difference beam: the union of its two lobes."""

    def __init__(self, lobes):
        self.lobes = lobes

    def inside(self, d):
        return self.lobes[0].inside(d) | self.lobes[1].inside(d)


@dataclass
class DifferenceBeam:
    """The measured difference beam (directions are unit vectors; ``g`` values relative to
    the pattern's peak intensity)."""

    boresight: np.ndarray
    tangent: np.ndarray
    peaks: np.ndarray
    peak_g: np.ndarray
    null: np.ndarray
    boresight_g: float
    slope_per_rad: float
    sum_reference_dbi: float
    contexts: tuple

    def main_lobe(self, key):
        """(union of the two lobes, their power, model name, ``key``)."""
        parts = [c._sum_main_lobe() for c in self.contexts]
        model = f"difference ({parts[0][2]} x 2)"
        return _Union([p[0] for p in parts]), parts[0][1] + parts[1][1], model, key


def _lobe_starts(g, r0, t, h, span):
    """The two highest local maxima of ``g`` on the great circle through ``r0`` along ``t``,
    sampled every ``h`` within ``span`` either side: (signed arc angles (2,), directions
    (2, 3), values (2,)), the larger angle first; None when there are fewer than two."""
    n = int(np.ceil(span / h))
    rho = np.arange(-n, n + 1) * h
    vals = g(arc(r0, np.broadcast_to(t, (len(rho), 3)), rho))
    i = np.flatnonzero((vals[1:-1] > vals[:-2]) & (vals[1:-1] >= vals[2:])) + 1
    if len(i) < 2:
        return None
    top = np.sort(i[np.argsort(vals[i])[-2:]])[::-1]
    return rho[top], arc(r0, np.broadcast_to(t, (2, 3)), rho[top]), vals[top]


def _field_slope(g_abs, r0, t, delta):
    r"""d|E|/d rho at ``r0`` along ``t`` from |E| at +-delta and +-2 delta (Richardson):
    :math:`S(\delta) = (|E(\delta)| + |E(-\delta)|)/(2\delta)` is exact for a field linear
    through a null anywhere within delta, with an O(delta^2) error that the extrapolation
    :math:`(4S(\delta) - S(2\delta))/3` removes."""
    s = np.array([delta, -delta, 2 * delta, -2 * delta])
    e = np.sqrt(g_abs(arc(r0, np.broadcast_to(t, (4, 3)), s)))
    s1 = (e[0] + e[1]) / (2 * delta)
    s2 = (e[2] + e[3]) / (4 * delta)
    return float((4 * s1 - s2) / 3)


@dataclass(frozen=True)
class DifferenceNull:
    """The two lobes of a difference pattern and the null between them, found along the
    great circle through ``r0`` in the tangent direction ``t`` (:func:`difference_null`):
    ``peaks`` and ``peak_g`` refined, ``start_g`` the pattern at the two samples on the
    circle they were refined from."""

    r0: np.ndarray
    t: np.ndarray
    peaks: np.ndarray
    peak_g: np.ndarray
    start_g: np.ndarray
    null: np.ndarray
    rho: float
    lo: float
    hi: float

    def slope(self, g_abs) -> float:
        """d|E|/d rho at the null (per radian) of the pattern ``g_abs`` (directivity: |E| is
        its square root), by :func:`_field_slope` with delta a fiftieth of the way to the
        nearer lobe."""
        delta = 0.02 * min(self.hi - self.rho, self.rho - self.lo)
        t_null = self.t * np.cos(self.rho) - self.r0 * np.sin(self.rho)  # the arc's tangent
        return _field_slope(g_abs, self.null, t_null, delta)


def difference_null(g, r0, t, h: float, span: float, *, line: bool = False):
    """The difference lobes and null of pattern ``g`` (callable on unit vectors (m, 3)) along
    the great circle through ``r0`` in direction ``t``.

    The two highest local maxima within ``span`` (rad) either side, sampled every ``h``, are
    refined by the shared lobe search (on the great circle for a ``line``, whose pattern is
    a cone about its axis); the null is the k-section minimum of ``g`` between them. The one
    null search of the package: analysis (:func:`difference_beam`) and beam tables use it.

    Returns
    -------
    DifferenceNull or None
        None when there are fewer than two local maxima within ``span``.
    """
    found = _lobe_starts(g, r0, t, h, span)
    if found is None:
        return None
    peaks, peak_g = refine_maxima(pointwise(g), found[1], h,
                                  normal=np.cross(r0, t) if line else None)
    hi, lo = (np.sign(rho) * np.arccos(np.clip(p @ r0, -1, 1))
              for rho, p in zip(found[0], peaks, strict=True))
    s = ksection(lambda act, x: g(arc(r0, t[None, :], x)), [lo], [hi], [KSECTION_MINIMUM])[0]
    null = arc(r0, t[None, :], np.array([s]))[0]
    return DifferenceNull(r0, t, peaks, peak_g, found[2], null, float(s), float(lo), float(hi))


def difference_beam(ctx) -> DifferenceBeam:
    """Measure the difference beam of ``ctx`` (a metrics Context with a difference kind)."""
    arr, f = ctx.array, ctx.frequency
    r0 = reference_direction(arr)
    e = difference_axis(arr, ctx.beam_kind)
    t = e - (e @ r0) * r0
    if np.linalg.norm(t) < 1e-6:
        raise SteradianError(f"beam_kind {ctx.beam_kind!r}: boresight is along the difference "
                             "axis; no difference pattern to measure")
    t /= np.linalg.norm(t)
    if boresight_level_db(arr) > SUM_NULL_DB:
        th, ph = angles_deg(r0)
        raise SteradianError(
            f"beam_kind {ctx.beam_kind!r}, but the excitation has no boresight null: "
            f"{boresight_level_db(arr):.1f} dB at theta {th:.2f}, phi {ph:.2f} deg relative to "
            "its co-phased sum (is it antisymmetric about the "
            f"{'y-z' if ctx.beam_kind == 'difference_az' else 'x-z'} plane?)")
    g = ctx.beam.g
    line = _axes(arr).dimension == 1
    found = difference_null(g, r0, t, ctx.h, min(4 * np.pi / ctx.kr, 0.5 * np.pi), line=line)
    if found is None or found.start_g.min() < 10 ** (LOBE_DB / 10):
        raise SteradianError(
            f"beam_kind {ctx.beam_kind!r}, but the pattern has no difference lobe along "
            f"{'x' if ctx.beam_kind == 'difference_az' else 'y'}: the second maximum beside "
            "boresight is "
            + ("missing" if found is None else f"{-rel_db(found.start_g.min()):.1f} dB below "
               "the pattern's peak") + " (is the difference taken in the other plane?)")
    peaks, peak_g, null = found.peaks, found.peak_g, found.null
    power = ctx.peak.power.value
    u0 = ctx.beam.u0

    def g_abs(v):  # directivity
        return 4 * np.pi * u0 * g(v) / power

    # Slopes at the null (boresight at the design frequency; squinted off it).
    slope = found.slope(g_abs)
    uni = arr.with_taper(np.ones(arr.n))
    p_sum = radiated_power(uni, frequency=f).value
    d_sum = 4 * np.pi * float(intensity(uni, null, f)) / p_sum
    ctx.notes.append("difference beam: the beamwidths are those of the difference lobe at "
                     "the beam axis; its two lobes together are the main lobe")
    make = type(ctx)
    subs = tuple(make(arr, f, ctx.peak, ctx.grating_lobe_db, axis=p) for p in peaks)
    g0 = float(g(r0[None, :])[0])
    return DifferenceBeam(r0, t, peaks, peak_g, null, g0, slope, rel_db(d_sum), subs)
