r"""Pattern metrics: principal cuts, beamwidths, sidelobes, grating lobes, scan loss.

Every pattern value comes from :func:`steradian.engine.field`. Angles are in degrees, levels
in dB. Crossings and nulls are refined by root finding and local optimisation, never read off
a sampling grid.

Definitions used throughout (after IEEE Std 145-2013):

- *Beam axis* :math:`\hat r_0`: the direction of maximum radiation intensity. When the
  maximum is not unique (the cone of a collinear array, the mirror lobe of a planar array of
  isotropic elements) the steering direction, or else +z, is taken when it reaches the peak
  intensity to 1e-9 relative.
- *Principal cuts*: two great circles through the beam axis. Cut 0 ("phi_plane") lies in the
  plane containing the beam axis and the z axis (the plane phi = phi_0; the x-z plane at
  broadside); its tangent at the peak is the unit vector theta-hat. Cut 1 ("cross_plane") is
  the orthogonal great circle through the peak (tangent phi-hat; the y-z plane at broadside).
  Positive cut angles point along the tangent.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._validate import count, positive
from .elements import angles_of
from .engine import field
from .errors import SteradianError
from .grids import Directions
from .radiation import Peak, RadiatedPower, peak_directivity, radiated_power, to_db

__all__ = ["Cut", "principal_cuts", "cut", "DB_FLOOR"]

DB_FLOOR = -300.0
"""Lowest level reported (dB); zero intensity maps to this instead of -inf."""

_TIE = 1e-9  # relative intensity tolerance for "reaches the peak"
_POLE = 1e-6  # rad; a beam axis this close to +-z counts as on the z axis


@dataclass(frozen=True, eq=False)
class Cut:
    """A pattern cut along a great circle.

    Attributes
    ----------
    name : str
        ``"phi_plane"`` / ``"cross_plane"`` for the principal cuts, ``"phi=<deg>"`` for a plain
        theta cut.
    angle_deg : ndarray, shape (n,)
        Signed angle along the cut: from the beam axis for principal cuts, theta for a plain
        cut (negative theta lies at phi + 180 deg).
    directions : ndarray, shape (n, 3)
        Unit vectors of the cut points.
    directivity_dbi : ndarray, shape (n,)
        Directivity in dBi, floored at :data:`DB_FLOOR` (never NaN or -inf).
    theta_deg, phi_deg : ndarray, shape (n,)
        Spherical angles of the cut points (theta in [0, 180], phi in (-180, 180]).
    """

    name: str
    angle_deg: np.ndarray
    directions: np.ndarray
    directivity_dbi: np.ndarray
    theta_deg: np.ndarray
    phi_deg: np.ndarray


def _intensity(array, vectors, frequency):
    """Radiation intensity (engine units) at unit vectors of shape (..., 3)."""
    v = np.asarray(vectors, float)
    u = field(array, Directions.from_vectors(v.reshape(-1, 3)), frequency=frequency).intensity
    return u.reshape(v.shape[:-1])


def _dbi(u, power_value):
    return np.maximum(to_db(4 * np.pi * np.asarray(u, float) / power_value), DB_FLOOR)


def _preferred_axis(array, peak: Peak, frequency) -> np.ndarray:
    """Beam axis: the peak found, or the steering direction / +z when they tie with it."""
    r_pk = peak.unit
    u_pk = float(_intensity(array, r_pk, frequency))
    prefs = []
    if array.steering is not None:
        prefs.append(array.steering.unit)
    prefs.append(np.array([0.0, 0.0, 1.0]))
    for p in prefs:
        if float(_intensity(array, p, frequency)) >= u_pk * (1 - _TIE):
            return np.asarray(p, float)
    return r_pk


def _cut_frame(r0) -> tuple[np.ndarray, np.ndarray]:
    """Tangents (theta-hat, phi-hat) at ``r0``; at the poles the x-z / y-z planes."""
    r0 = np.asarray(r0, float)
    theta = float(np.arccos(np.clip(r0[2], -1.0, 1.0)))
    if np.hypot(r0[0], r0[1]) < _POLE:
        phi = 0.0
        theta = 0.0 if r0[2] > 0 else np.pi
    else:
        phi = float(np.arctan2(r0[1], r0[0]))
    ct, st, cp, sp = np.cos(theta), np.sin(theta), np.cos(phi), np.sin(phi)
    t0 = np.array([ct * cp, ct * sp, -st])
    t1 = np.array([-sp, cp, 0.0])
    return t0, t1


def _angles_deg(dirs):
    th, ph = angles_of(dirs)
    th = np.rad2deg(th)
    ph = np.rad2deg(ph)
    pole = np.hypot(dirs[..., 0], dirs[..., 1]) < 1e-12
    ph = np.where(pole, 0.0, np.where(ph <= -180.0, ph + 360.0, ph))  # phi in (-180, 180]
    return th, ph


def _resolve_peak(array, frequency, peak):
    if peak is None:
        return peak_directivity(array, frequency=frequency)
    if not isinstance(peak, Peak):
        raise SteradianError(f"peak must be a steradian Peak (from peak_directivity), got "
                             f"{type(peak).__name__}")
    return peak


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
    pk = _resolve_peak(array, frequency, peak)
    r0 = _preferred_axis(array, pk, frequency)
    t0, t1 = _cut_frame(r0)
    alpha_deg = np.linspace(-span, span, n)
    a = np.deg2rad(alpha_deg)[:, None]
    out = []
    for name, t in (("phi_plane", t0), ("cross_plane", t1)):
        dirs = r0[None, :] * np.cos(a) + t[None, :] * np.sin(a)
        dirs /= np.linalg.norm(dirs, axis=1, keepdims=True)
        u = _intensity(array, dirs, frequency)
        th, ph = _angles_deg(dirs)
        out.append(Cut(name, alpha_deg.copy(), dirs, _dbi(u, pk.power.value), th, ph))
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
    t, ph = np.deg2rad(th), np.deg2rad(phi)
    dirs = np.column_stack([np.sin(t) * np.cos(ph), np.sin(t) * np.sin(ph), np.cos(t)])
    u = _intensity(array, dirs, frequency)
    tt, pp = _angles_deg(dirs)
    return Cut(f"phi={phi:g}", th.copy(), dirs, _dbi(u, p.value), tt, pp)
