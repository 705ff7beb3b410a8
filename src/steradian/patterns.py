r"""Pattern views of an array: cuts, u-v maps, the beam axis and the pattern's symmetry.

Every pattern value comes from :func:`steradian.engine.field`; directivity is normalised by
the radiated power of :mod:`steradian.radiation`. Angles are in degrees, levels in dB,
floored at :data:`steradian.units.DB_FLOOR`.

- *Beam axis* :math:`\hat r_0` (:func:`beam_axis`): the direction of maximum radiation
  intensity U. When the maximum is not unique (the cone of a collinear array, the mirror lobe
  of a planar array of isotropic elements) the steering direction, or else +z, is taken when
  it reaches the peak intensity to 1e-9 relative; otherwise the peak found by
  :func:`steradian.radiation.peak_directivity`.
- *Principal cuts* (:func:`principal_cuts`): two great circles through the beam axis. Cut 0
  ("phi_plane") lies in the plane containing the beam axis and the z axis (the plane
  phi = phi_0; the x-z plane at broadside); its tangent at the peak is theta-hat. Cut 1
  ("cross_plane") is the orthogonal great circle through the peak (tangent phi-hat; the y-z
  plane at broadside). Positive cut angles point along the tangent.
- *Symmetry* (:func:`symmetry`): a collinear array's pattern is a cone about its axis
  ("band"); a planar array whose pattern is mirror symmetric about the array plane (isotropic
  elements) is "mirror"; anything else is "radial".

References
----------
IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas*.
C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, ch. 2 (pattern
cuts, principal planes).
"""

from __future__ import annotations

import numpy as np

from .directions import (
    Directions,
    UVGrid,
    angles_deg,
    angles_of,
    spherical_basis,
    unit_vectors_deg,
)
from .engine import field, field_of_beams
from .errors import SteradianError
from .geometry import principal_axes
from .radiation import Peak, RadiatedPower, directivity, peak_directivity, radiated_power
from .samples import Cut, UVMap
from .units import db10
from .validate import count, positive

__all__ = ["Cut", "principal_cuts", "cut", "UVMap", "uv_map", "intensity", "intensity_of_beams",
           "directivity_dbi", "beam_axis", "beam_axis_many", "cut_frame", "symmetry",
           "symmetry_many", "resolve_peak", "TIE"]

TIE = 1e-9
"""Relative intensity tolerance for "reaches the peak"."""

_POLE = 1e-6  # rad; a beam axis this close to +-z counts as on the z axis


def intensity(array, vectors, frequency=None) -> np.ndarray:
    """Radiation intensity (engine units) at unit vectors of shape (..., 3)."""
    v = np.asarray(vectors, float)
    u = field(array, Directions.from_vectors(v.reshape(-1, 3)), frequency=frequency).intensity
    return u.reshape(v.shape[:-1])


def intensity_of_beams(arrays, vectors, owner, frequency=None) -> np.ndarray:
    """Radiation intensity (engine units) at ``vectors`` (..., 3) of ``arrays[owner]``
    (``owner`` shaped like the vectors without their last axis): the beams of one aperture
    in one engine call (:func:`steradian.engine.field_of_beams`)."""
    v = np.asarray(vectors, float)
    u = field_of_beams(arrays, v.reshape(-1, 3), np.asarray(owner).reshape(-1),
                       frequency=frequency).intensity
    return u.reshape(v.shape[:-1])


def directivity_dbi(u, power_value: float) -> np.ndarray:
    """Directivity in dBi of intensities ``u`` for radiated power ``power_value``."""
    return np.asarray(db10(4 * np.pi * np.asarray(u, float) / power_value))


def resolve_peak(array, frequency, peak, aperture=None) -> Peak:
    """``peak`` checked, or :func:`steradian.radiation.peak_directivity` when None."""
    if peak is None:
        return peak_directivity(array, frequency=frequency, aperture=aperture)
    if not isinstance(peak, Peak):
        raise SteradianError(f"peak must be a steradian Peak (from peak_directivity), got "
                             f"{type(peak).__name__}")
    return peak


def _enabled_axes(array):
    pos = array.positions if array.enabled is None else array.positions[array.enabled]
    return principal_axes(pos), len(pos)


def symmetry(array, frequency=None) -> tuple[str, np.ndarray | None]:
    """("band", axis) for collinear arrays, ("mirror", normal) for planar arrays whose pattern
    is mirror symmetric about their plane, else ("radial", None).

    The shape test is :func:`steradian.geometry.principal_axes` of the enabled elements; the
    mirror symmetry is tested on four fixed directions and their mirror images (1e-9
    relative).
    """
    return symmetry_many([array], frequency)[0]


_MIRROR_TEST = np.asarray(
    [[0.48, 0.6, 0.64], [-0.8, 0.36, 0.48], [0.0, -0.6, 0.8], [0.36, -0.48, -0.8]], float)
_MIRROR_TEST /= np.linalg.norm(_MIRROR_TEST, axis=1, keepdims=True)


def symmetry_many(arrays, frequency=None) -> list:
    """:func:`symmetry` of several arrays; the mirror tests of every planar one in one engine
    call (:func:`intensity_of_beams`: beams of one aperture are summed together)."""
    arrays = list(arrays)
    out: list = [("radial", None)] * len(arrays)
    planar = []
    for b, array in enumerate(arrays):
        pa, n = _enabled_axes(array)
        if n >= 2 and pa.dimension == 1:
            out[b] = ("band", pa.axes[0])
        elif n >= 3 and pa.dimension == 2:
            planar.append((b, pa.axes[2]))
    if not planar:
        return out
    pts, owner = [], []
    for b, nrm in planar:
        mir = _MIRROR_TEST - 2.0 * (_MIRROR_TEST @ nrm)[:, None] * nrm
        pts += [_MIRROR_TEST, mir]
        owner += [b] * (2 * len(_MIRROR_TEST))
    u = intensity_of_beams(arrays, np.concatenate(pts), np.asarray(owner), frequency)
    u = u.reshape(len(planar), 2, len(_MIRROR_TEST))
    for (b, nrm), (u1, u2) in zip(planar, u, strict=True):
        if np.all(np.abs(u1 - u2) <= 1e-9 * max(u1.max(), u2.max(), 1e-300)):
            out[b] = ("mirror", nrm)
    return out


def _on_cone(axis, c, toward):
    """Point of the cone d . axis = c nearest to ``toward`` (None if ``toward`` is the axis)."""
    perp = toward - (toward @ axis) * axis
    nrm = np.linalg.norm(perp)
    if nrm < 1e-9:
        return None
    return c * axis + np.sqrt(max(1.0 - c * c, 0.0)) * perp / nrm


def beam_axis(array, peak: Peak, frequency=None, sym=None) -> np.ndarray:
    """Beam axis: the peak found, or a standard direction when it ties with the peak.

    Standard directions, in order: the steering direction, +z, and for a collinear array the
    points of the peak's cone nearest +z and +x. When the pattern is mirror symmetric about
    the plane of a planar array, a peak found behind that plane (relative to the steering
    direction, else +z) is reflected to the front first. ``sym``: the array's
    :func:`symmetry` when the caller has it.
    """
    return beam_axis_many([array], [peak], frequency, [sym])[0][0]


def beam_axis_many(arrays, peaks, frequency=None, syms=None) -> list:
    """:func:`beam_axis` of several arrays, with the intensity there: ``[(axis, U), ...]``.
    The candidate directions of every array are evaluated in one engine call
    (:func:`intensity_of_beams`)."""
    arrays = list(arrays)
    syms = [None] * len(arrays) if syms is None else list(syms)
    cands, owner = [], []
    for b, (array, peak, sym) in enumerate(zip(arrays, peaks, syms, strict=True)):
        r_pk = peak.unit
        kind, vec = symmetry(array, frequency) if sym is None else sym
        if kind == "mirror":
            side = (array.steering.unit if array.steering is not None
                    else np.array([0.0, 0.0, 1.0])) @ vec
            if side * (r_pk @ vec) < 0:
                r_pk = r_pk - 2.0 * (r_pk @ vec) * vec
        prefs = [r_pk]
        if array.steering is not None:
            prefs.append(array.steering.unit)
        ez, ex = np.array([0.0, 0.0, 1.0]), np.array([1.0, 0.0, 0.0])
        prefs.append(ez)
        if kind == "band":
            c = float(r_pk @ vec)
            prefs += [p for p in (_on_cone(vec, c, ez), _on_cone(vec, c, ex)) if p is not None]
        cands.append(np.asarray(prefs, float))
        owner += [b] * len(prefs)
    u = intensity_of_beams(arrays, np.concatenate(cands), np.asarray(owner), frequency)
    out, at = [], 0
    for c in cands:
        uc, at = u[at:at + len(c)], at + len(c)
        tie = np.flatnonzero(uc[1:] >= uc[0] * (1 - TIE))
        i = 1 + int(tie[0]) if len(tie) else 0
        out.append((c[i], float(uc[i])))
    return out


def cut_frame(r0) -> tuple[np.ndarray, np.ndarray]:
    """Tangents (theta-hat, phi-hat) at ``r0``; at the poles the x-z / y-z planes."""
    r0 = np.asarray(r0, float)
    theta, phi = angles_of(r0)
    if np.hypot(r0[0], r0[1]) < _POLE:
        theta, phi = (0.0 if r0[2] > 0 else np.pi), 0.0
    return spherical_basis(float(theta), float(phi))


def _cut(array, name, angle_deg, dirs, frequency, power_value) -> Cut:
    u = intensity(array, dirs, frequency)
    th, ph = angles_deg(dirs)
    return Cut(name, np.array(angle_deg, float), dirs, directivity_dbi(u, power_value), th, ph)


def principal_cuts(array, *, frequency: float | None = None, peak: Peak | None = None,
                   n: int = 721, span_deg: float = 90.0) -> list[Cut]:
    """Two orthogonal great-circle cuts through the beam peak.

    Parameters
    ----------
    array : Array
        The array.
    frequency : float, optional
        Evaluation frequency in Hz (default: the design frequency).
    peak : Peak, optional
        Result of :func:`steradian.radiation.peak_directivity` at ``frequency`` (computed
        when omitted). Its ``power`` normalises the directivity.
    n : int
        Points per cut (odd keeps the peak itself on the cut).
    span_deg : float
        Half-span: the cut runs from -span_deg to +span_deg about the peak (at most 180).

    Returns
    -------
    list of Cut
        ``[phi_plane, cross_plane]``. Cut 0 lies in the plane containing the beam axis and the
        z axis (phi = phi_0; the x-z plane at broadside), positive angles toward increasing
        theta. Cut 1 is the orthogonal great circle through the peak (the y-z plane at
        broadside), positive angles toward increasing phi.

    Notes
    -----
    A point at signed angle :math:`\\alpha` on a cut with tangent :math:`\\hat t` is
    :math:`\\hat r_0\\cos\\alpha + \\hat t\\sin\\alpha`. When the maximum is not unique (the
    cone of a collinear array at broadside) the beam axis is the steering direction or +z if
    either reaches the peak intensity, else the peak found; see the module notes.
    """
    n = count("n", n, 2)
    span = positive("span_deg", span_deg, " deg")
    if span > 180.0:
        raise SteradianError(f"span_deg must be at most 180, got span_deg={span_deg}")
    pk = resolve_peak(array, frequency, peak)
    r0 = beam_axis(array, pk, frequency)
    t0, t1 = cut_frame(r0)
    alpha_deg = np.linspace(-span, span, n)
    a = np.deg2rad(alpha_deg)[:, None]
    out = []
    for name, t in (("phi_plane", t0), ("cross_plane", t1)):
        dirs = r0[None, :] * np.cos(a) + t[None, :] * np.sin(a)
        dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
        out.append(_cut(array, name, alpha_deg, dirs, frequency, pk.power.value))
    return out


def cut(array, plane_phi_deg: float, theta_deg=None, *, frequency: float | None = None,
        power: RadiatedPower | None = None) -> Cut:
    """Plain theta cut at fixed phi (for tables and CSV export).

    Parameters
    ----------
    array : Array
    plane_phi_deg : float
        Azimuth of the cut plane (deg).
    theta_deg : array_like, optional
        Signed theta values (deg); negative theta lies at phi + 180. Default 721 points from
        -90 to 90 (the front hemisphere of a planar array).
    frequency : float, optional
        Evaluation frequency in Hz.
    power : RadiatedPower, optional
        Radiated power for the directivity normalisation (computed when omitted).

    Returns
    -------
    Cut
        With ``angle_deg`` equal to ``theta_deg``.
    """
    phi = float(plane_phi_deg)
    if not np.isfinite(phi):
        raise SteradianError(f"plane_phi_deg must be finite, got {plane_phi_deg}")
    th = np.linspace(-90.0, 90.0, 721) if theta_deg is None else np.asarray(theta_deg, float)
    th = np.atleast_1d(th)
    if th.ndim != 1 or not np.all(np.isfinite(th)):
        raise SteradianError("theta_deg must be a finite 1-D sequence of angles")
    p = power or radiated_power(array, frequency=frequency)
    dirs = unit_vectors_deg(th, phi)
    return _cut(array, f"phi={phi:g}", th, dirs, frequency, p.value)


def uv_map(array, n: int = 201, *, frequency: float | None = None,
           power: RadiatedPower | None = None, hemisphere: int = 1) -> UVMap:
    """Directivity of ``array`` on an ``n`` x ``n`` u-v grid spanning [-1, 1].

    Parameters
    ----------
    array : Array
    n : int
        Grid points per axis (>= 3).
    frequency : float, optional
        Evaluation frequency (Hz); default the design frequency.
    power : RadiatedPower, optional
        Radiated power for the normalisation (computed when omitted).
    hemisphere : {1, -1}
        Front (w >= 0) or back hemisphere.
    """
    n = count("uv points", n, 3)
    if hemisphere not in (1, -1):
        raise SteradianError(f"hemisphere must be 1 or -1, got {hemisphere!r}")
    grid = UVGrid.square(n, hemisphere)
    p = power or radiated_power(array, frequency=frequency)
    d = directivity(array, grid, frequency=frequency, power=p)
    vis = grid.visible.reshape(grid.shape)
    db = np.where(vis, db10(np.where(vis, d, 1.0)), np.nan)
    return UVMap(grid.u.copy(), grid.v.copy(), db, hemisphere)
