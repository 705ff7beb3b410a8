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

__all__ = ["BEAM_KINDS", "SUM_NULL_DB", "DIFFERENCE_NULL_DB", "LOBE_DB", "reference_direction",
           "coherent_level_db", "boresight_level_db", "check_sum_beam", "check_beam_kind",
           "DifferenceBeam", "difference_beam"]

SUM_NULL_DB = -20.0
"""A declared sum beam whose excitation puts the array factor at boresight this far below its
co-phased maximum, with the pattern peak within a null width of boresight, is refused."""

DIFFERENCE_NULL_DB = -10.0
"""A declared difference beam must be at least this far below its difference peak at
boresight (else it is not a difference beam)."""

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
    null width (2 pi / kR) of boresight."""
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


def _first_rise(g, r0, t, h):
    """Direction of the first local maximum of ``g`` along the great circle from ``r0``
    toward ``t`` (sampled every ``h`` up to pi/2), or of the largest sample."""
    rho = np.arange(1, int(np.ceil(0.5 * np.pi / h)) + 1) * h
    vals = g(arc(r0, np.broadcast_to(t, (len(rho), 3)), rho))
    i = next((i for i in range(len(vals) - 1) if vals[i] > 0 and vals[i] >= vals[i + 1]),
             int(np.argmax(vals)))
    return arc(r0, t[None, :], rho[i:i + 1])[0]


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
    g = ctx.beam.g
    starts = np.array([_first_rise(g, r0, t, ctx.h), _first_rise(g, r0, -t, ctx.h)])
    g_start = g(starts)
    if g_start.min() < 10 ** (LOBE_DB / 10):
        raise SteradianError(
            f"beam_kind {ctx.beam_kind!r}, but the pattern has no difference lobe along "
            f"{'x' if ctx.beam_kind == 'difference_az' else 'y'}: the first maximum beside "
            f"boresight is {-rel_db(g_start.min()):.1f} dB below the pattern's peak (is the "
            "difference taken in the other plane?)")
    # A line's pattern is a cone about its axis: refine on the great circle through boresight.
    line = _axes(arr).dimension == 1
    peaks, peak_g = refine_maxima(pointwise(g), starts, ctx.h,
                                  normal=np.cross(r0, t) if line else None)
    g0 = float(g(r0[None, :])[0])
    if not g0 <= 10 ** (DIFFERENCE_NULL_DB / 10) * peak_g.max():
        th, ph = angles_deg(r0)
        raise SteradianError(
            f"beam_kind {ctx.beam_kind!r}, but the pattern has no boresight null: "
            f"{rel_db(g0 / peak_g.max()):.1f} dB at theta {th:.2f}, phi {ph:.2f} deg relative "
            "to the difference lobes (is the excitation antisymmetric about the "
            f"{'y-z' if ctx.beam_kind == 'difference_az' else 'x-z'} plane?)")
    # The null between the lobes: k-section minimisation along the great circle through them.
    lo = -np.arccos(np.clip(peaks[1] @ r0, -1, 1))
    hi = np.arccos(np.clip(peaks[0] @ r0, -1, 1))
    s = ksection(lambda act, x: g(arc(r0, t[None, :], x)), [lo], [hi], [KSECTION_MINIMUM])[0]
    null = arc(r0, t[None, :], np.array([s]))[0]
    power = ctx.peak.power.value
    u0 = ctx.beam.u0

    def g_abs(v):  # directivity
        return 4 * np.pi * u0 * g(v) / power

    delta = 0.02 * min(hi, -lo)
    slope = _field_slope(g_abs, r0, t, delta)
    uni = arr.with_taper(np.ones(arr.n))
    p_sum = radiated_power(uni, frequency=f).value
    d_sum = 4 * np.pi * float(intensity(uni, r0, f)) / p_sum
    ctx.notes.append("difference beam: the beamwidths are those of the difference lobe at "
                     "the beam axis; its two lobes together are the main lobe")
    make = type(ctx)
    subs = tuple(make(arr, f, ctx.peak, ctx.grating_lobe_db, axis=p) for p in peaks)
    return DifferenceBeam(r0, t, peaks, peak_g, null, g0, slope, rel_db(d_sum), subs)
