r"""Pattern metrics: principal cuts, beamwidths, sidelobes, grating lobes, scan loss.

Every pattern value comes from :func:`steradian.engine.field`. Angles are in degrees, levels
in dB. Crossings and nulls are refined by root finding and local optimisation, never read off
a sampling grid.

Definitions used throughout (after IEEE Std 145-2013 where it defines the term):

- *Beam axis* :math:`\hat r_0`: the direction of maximum radiation intensity U. When the
  maximum is not unique (the cone of a collinear array, the mirror lobe of a planar array of
  isotropic elements) the steering direction, or else +z, is taken when it reaches the peak
  intensity to 1e-9 relative; otherwise the peak found by
  :func:`steradian.radiation.peak_directivity`.
- *Principal cuts*: two great circles through the beam axis. Cut 0 ("phi_plane") lies in the
  plane containing the beam axis and the z axis (the plane phi = phi_0; the x-z plane at
  broadside); its tangent at the peak is the unit vector theta-hat. Cut 1 ("cross_plane") is
  the orthogonal great circle through the peak (tangent phi-hat; the y-z plane at broadside).
  Positive cut angles point along the tangent.
- *Radial*: the great-circle arc :math:`\hat r_0\cos\rho + \hat t(\psi)\sin\rho` leaving the
  beam axis in tangent direction :math:`\hat t(\psi) = \hat t_0\cos\psi + \hat t_1\sin\psi`.
- *First null* along a radial: the first local minimum of U (a true zero or a shallow
  minimum); *half-power point*: the first angle where U falls to half the peak.
- *Main lobe*: the directions reached from the beam axis along a radial before its first null,
  :math:`\rho < \rho_{null}(\psi)`. Two symmetric cases are treated exactly: for a collinear
  array the main lobe is the band of cone angles about the array axis between the first nulls
  of the cut containing the axis; when the array is planar and its pattern is mirror symmetric
  about the array plane (isotropic elements), the mirror image of the main lobe is main lobe
  too.

All levels are floored at :data:`DB_FLOOR` dB so reports never hold NaN or infinity.

References
----------
IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas*.
R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 1-3.
R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 2-3.
C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, ch. 2 and 6.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .directions import Directions
from .elements import Isotropic, angles_of
from .engine import field
from .errors import SteradianError
from .radiation import Peak, RadiatedPower, peak_directivity, radiated_power, to_db
from .validate import count, positive

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


def _collinear_axis(array):
    """Unit axis of a collinear array (enabled elements), else None."""
    pos = array.positions if array.enabled is None else array.positions[array.enabled]
    if len(pos) < 2:
        return None
    _, s, vt = np.linalg.svd(pos - pos.mean(axis=0), full_matrices=True)
    return vt[0] if s[1] <= 1e-9 * s[0] else None


def _on_cone(axis, c, toward):
    """Point of the cone d . axis = c nearest to ``toward`` (None if ``toward`` is the axis)."""
    perp = toward - (toward @ axis) * axis
    nrm = np.linalg.norm(perp)
    if nrm < 1e-9:
        return None
    return c * axis + np.sqrt(max(1.0 - c * c, 0.0)) * perp / nrm


def _preferred_axis(array, peak: Peak, frequency) -> np.ndarray:
    """Beam axis: the peak found, or a standard direction when it ties with the peak.

    Standard directions, in order: the steering direction, +z, and for a collinear array the
    points of the peak's cone nearest +z and +x. When the pattern is mirror symmetric about
    the plane of a planar array, a peak found behind that plane (relative to the steering
    direction, else +z) is reflected to the front first.
    """
    r_pk = peak.unit
    kind, nrm = _symmetry(array, frequency)
    if kind == "mirror":
        side = (array.steering.unit if array.steering is not None
                else np.array([0.0, 0.0, 1.0])) @ nrm
        if side * (r_pk @ nrm) < 0:
            r_pk = r_pk - 2.0 * (r_pk @ nrm) * nrm
    u_pk = float(_intensity(array, r_pk, frequency))
    prefs = []
    if array.steering is not None:
        prefs.append(array.steering.unit)
    ez, ex = np.array([0.0, 0.0, 1.0]), np.array([1.0, 0.0, 0.0])
    prefs.append(ez)
    a = _collinear_axis(array)
    if a is not None:
        c = float(r_pk @ a)
        prefs += [p for p in (_on_cone(a, c, ez), _on_cone(a, c, ex)) if p is not None]
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


# ---- pattern metrics ----------------------------------------------------------------------

_N_RADIALS = 96  # radials for the main-lobe boundary (multiple of 4: the principal cuts)
_SEARCH_PER_NULL = 3.0  # sidelobe search samples per main-lobe null width
_N_REFINE = 16  # sidelobe candidates refined by local optimisation
_MAX_REPORTED = 8  # sidelobes listed in the result
_MAX_PREDICTED = 100  # predicted grating lobes listed


@dataclass(frozen=True)
class PlaneWidths:
    """Beamwidths in one principal cut.

    Attributes
    ----------
    name : str
        ``"phi_plane"`` or ``"cross_plane"`` (see :func:`principal_cuts`).
    hpbw_deg : float or None
        Half-power beamwidth: angle between the two -3.01 dB (half-intensity) points either
        side of the peak. None when a side never falls to half power before its first null.
    fnbw_deg : float or None
        First-null beamwidth: angle between the first nulls either side. None when a side has
        no null on its half great circle (a flat cut, e.g. along the cone of a collinear array).
    half_power_deg, first_null_deg : tuple of (float or None)
        Signed cut angles (negative side, positive side) of those points.
    """

    name: str
    hpbw_deg: float | None
    fnbw_deg: float | None
    half_power_deg: tuple[float | None, float | None]
    first_null_deg: tuple[float | None, float | None]

    def to_dict(self) -> dict:
        return {"hpbw_deg": self.hpbw_deg, "fnbw_deg": self.fnbw_deg,
                "half_power_deg": list(self.half_power_deg),
                "first_null_deg": list(self.first_null_deg)}


@dataclass(frozen=True)
class Lobe:
    """A local maximum of the pattern outside the main lobe.

    ``level_db`` is 10 log10(U / U_peak) (negative); ``directivity_dbi`` its directivity.
    """

    theta_deg: float
    phi_deg: float
    level_db: float
    directivity_dbi: float

    def to_dict(self) -> dict:
        return {"theta_deg": self.theta_deg, "phi_deg": self.phi_deg,
                "level_db": self.level_db, "directivity_dbi": self.directivity_dbi}


@dataclass(frozen=True)
class GratingLobe:
    """A grating lobe predicted from the lattice and the scan.

    Attributes
    ----------
    p, q : int
        Reciprocal-lattice indices (q = 0 for a one-dimensional lattice).
    theta_deg, phi_deg : float
        Direction of the lobe. For a planar lattice the lobe on the beam's side of the lattice
        plane; for a one-dimensional lattice the lobe is a cone about the lattice axis and this
        is its direction in the plane of the beam axis and the lattice axis.
    u, v : float
        Direction cosines sin(theta) cos(phi), sin(theta) sin(phi) of that direction.
    level_db : float
        Pattern level there relative to the peak (includes the element pattern).
    """

    p: int
    q: int
    theta_deg: float
    phi_deg: float
    u: float
    v: float
    level_db: float

    def to_dict(self) -> dict:
        return {"p": self.p, "q": self.q, "theta_deg": self.theta_deg,
                "phi_deg": self.phi_deg, "u": self.u, "v": self.v, "level_db": self.level_db}


@dataclass(frozen=True)
class PatternMetrics:
    """Metrics of one beam. Every definition is given in :func:`pattern_metrics`.

    Angles in degrees, levels in dB (relative to the peak unless ``_dbi``); None marks a
    metric that does not exist for this pattern (e.g. no sidelobe region).
    """

    peak_directivity_dbi: float
    beam_theta_deg: float
    beam_phi_deg: float
    planes: tuple[PlaneWidths, PlaneWidths]
    psl_db: float | None
    psl_theta_deg: float | None
    psl_phi_deg: float | None
    sidelobes: tuple[Lobe, ...]
    islr_db: float | None
    main_lobe_power_fraction: float
    main_lobe_model: str
    lattice: bool
    grating_lobes_predicted: tuple[GratingLobe, ...] | None
    grating_lobe_free_scan_deg: float | None
    grating_lobe_free_scan_phi_plane_deg: float | None
    grating_lobes_found: tuple[Lobe, ...]
    pointing_error_deg: float | None
    front_to_back_db: float
    front_to_back_hemisphere_db: float
    scan_loss_db: float
    unsteered_peak_directivity_dbi: float
    notes: tuple[str, ...] = ()

    @property
    def hpbw_deg(self) -> dict:
        """Half-power beamwidth per principal plane."""
        return {p.name: p.hpbw_deg for p in self.planes}

    @property
    def fnbw_deg(self) -> dict:
        """First-null beamwidth per principal plane."""
        return {p.name: p.fnbw_deg for p in self.planes}

    def to_dict(self) -> dict:
        """JSON-friendly dictionary (floats, ints, strings, lists, None)."""
        gp = self.grating_lobes_predicted
        return {
            "peak_directivity_dbi": self.peak_directivity_dbi,
            "beam_theta_deg": self.beam_theta_deg,
            "beam_phi_deg": self.beam_phi_deg,
            "hpbw_deg": self.hpbw_deg,
            "fnbw_deg": self.fnbw_deg,
            "planes": {p.name: p.to_dict() for p in self.planes},
            "psl_db": self.psl_db,
            "psl_theta_deg": self.psl_theta_deg,
            "psl_phi_deg": self.psl_phi_deg,
            "sidelobes": [lb.to_dict() for lb in self.sidelobes],
            "islr_db": self.islr_db,
            "main_lobe_power_fraction": self.main_lobe_power_fraction,
            "main_lobe_model": self.main_lobe_model,
            "lattice": self.lattice,
            "grating_lobes_predicted": None if gp is None else [g.to_dict() for g in gp],
            "grating_lobe_free_scan_deg": self.grating_lobe_free_scan_deg,
            "grating_lobe_free_scan_phi_plane_deg": self.grating_lobe_free_scan_phi_plane_deg,
            "grating_lobes_found": [lb.to_dict() for lb in self.grating_lobes_found],
            "pointing_error_deg": self.pointing_error_deg,
            "front_to_back_db": self.front_to_back_db,
            "front_to_back_hemisphere_db": self.front_to_back_hemisphere_db,
            "scan_loss_db": self.scan_loss_db,
            "unsteered_peak_directivity_dbi": self.unsteered_peak_directivity_dbi,
            "notes": list(self.notes),
        }


def _rel_db(ratio) -> float:
    return float(np.maximum(to_db(ratio), DB_FLOOR))


def _arc(r0, tangents, rho):
    """Points r0 cos(rho) + t sin(rho); tangents (m,3), rho (m,) or (m,k) -> (m,[k,]3)."""
    rho = np.asarray(rho, float)
    if rho.ndim == 1:
        return r0[None, :] * np.cos(rho)[:, None] + tangents * np.sin(rho)[:, None]
    return (r0[None, None, :] * np.cos(rho)[..., None]
            + tangents[:, None, :] * np.sin(rho)[..., None])


_HALF, _EDGE, _MIN = 0, 1, 2  # refinement kinds: half-power root, zero edge, minimum


def _ksection(fun, a, b, kind, k: int = 8, tol: float = 1e-13, iters: int = 40):
    """Vectorised k-section refinement of many brackets at once (one ``fun`` call per step).

    ``fun(x)`` maps bracket coordinates (n, k+1) to values of the same shape. Each step
    samples every bracket [a, b] at k+1 equally spaced points and keeps the sub-bracket
    holding the event: for ``_HALF`` the first fall below 0.5, for ``_EDGE`` the first exact
    zero, for ``_MIN`` the neighbours of the smallest sample (the bracket shrinks by k for
    roots, by k/2 for minima). Returns the bracket midpoints.
    """
    a, b = np.array(a, float), np.array(b, float)
    kind = np.asarray(kind)
    t = np.linspace(0.0, 1.0, k + 1)
    for _ in range(iters):
        act = np.flatnonzero(b - a > tol)
        if not len(act):
            break
        x = a[act, None] + (b - a)[act, None] * t[None, :]
        v = fun(act, x)
        kd = kind[act]
        good = np.where((kd == _HALF)[:, None], v >= 0.5, v > 0.0)
        i_root = np.clip(np.argmin(good, axis=1), 1, k)  # first sample past the event
        i_min = np.argmin(v, axis=1)
        rows = np.arange(len(act))
        lo = np.where(kd == _MIN, x[rows, np.maximum(i_min - 1, 0)], x[rows, i_root - 1])
        hi = np.where(kd == _MIN, x[rows, np.minimum(i_min + 1, k)], x[rows, i_root])
        a[act], b[act] = lo, hi
    return 0.5 * (a + b)


class _Beam:
    """The pattern about one beam axis: relative intensity g = U / U(r0)."""

    def __init__(self, array, frequency, r0, power_value):
        self.array = array
        self.frequency = frequency
        self.r0 = np.asarray(r0, float)
        self.u0 = float(_intensity(array, self.r0, frequency))
        if not self.u0 > 0:
            raise SteradianError("the pattern is zero at the beam peak; nothing to measure")
        self.power = power_value
        self.t0, self.t1 = _cut_frame(self.r0)

    def g(self, vectors):
        return _intensity(self.array, vectors, self.frequency) / self.u0

    def dbi(self, u_rel) -> float:
        return _rel_db(4 * np.pi * self.u0 * u_rel / self.power)

    def lobe(self, v, u_rel) -> Lobe:
        th, ph = _angles_deg(np.asarray(v, float)[None, :])
        return Lobe(float(th[0]), float(ph[0]), _rel_db(u_rel), self.dbi(u_rel))

    def march(self, tangents, h, rho_max):
        """Half-power and first-null angles along radials, refined off the sampling grid.

        Returns ``(rho_hp, rho_null)`` in radians, NaN where not found within ``rho_max``.
        """
        T = np.asarray(tangents, float)
        m = len(T)
        rho_max = np.broadcast_to(np.asarray(rho_max, float), (m,)).copy()
        nmax = int(np.ceil(rho_max.max() / h)) + 2
        G = np.full((m, nmax + 1), np.nan)
        G[:, 0] = 1.0
        i_hp = np.full(m, -1)
        i_null = np.full(m, -1)
        done = np.zeros(m, bool)
        filled = 0
        block = 48
        while not done.all() and filled < nmax:
            hi = min(filled + block, nmax)
            act = np.flatnonzero(~done)
            rho = np.minimum(np.arange(filled + 1, hi + 1) * h, np.pi)
            pts = _arc(self.r0, T[act], np.broadcast_to(rho, (len(act), len(rho))))
            G[act, filled + 1:hi + 1] = self.g(pts.reshape(-1, 3)).reshape(len(act), -1)
            filled = hi
            for j in act:
                row = G[j, :filled + 1]
                lim = int(np.floor(rho_max[j] / h))  # last index within rho_max
                dec = np.flatnonzero((row[2:] >= row[1:-1]) & (row[1:-1] < 1 - 1e-6)) + 1
                dec = dec[dec <= lim]
                if len(dec):
                    i_null[j] = dec[0]
                below = np.flatnonzero(row[1:] < 0.5) + 1
                top = i_null[j] if i_null[j] > 0 else lim
                below = below[below <= top]
                if len(below):
                    i_hp[j] = below[0]
                done[j] = i_null[j] > 0 or filled >= lim + 1
        # Refine every half-power crossing and first null together, off the sampling grid.
        hp = np.flatnonzero(i_hp > 0)
        nl = np.flatnonzero(i_null > 0)
        edge = G[nl, i_null[nl]] == 0.0  # exact zero: the edge of a front-only pattern
        rows = np.concatenate([hp, nl])
        kind = np.concatenate([np.full(len(hp), _HALF), np.where(edge, _EDGE, _MIN)])
        lo = np.concatenate([(i_hp[hp] - 1) * h, (i_null[nl] - 1) * h])
        hi = np.concatenate([i_hp[hp] * h, np.where(edge, i_null[nl], i_null[nl] + 1) * h])
        hi = np.minimum(hi, np.pi)

        def fun(act, x):
            pts = _arc(self.r0, T[rows[act]], x)
            return self.g(pts.reshape(-1, 3)).reshape(x.shape)

        ref = _ksection(fun, lo, hi, kind) if len(rows) else np.zeros(0)
        rho_hp = np.full(m, np.nan)
        rho_null = np.full(m, np.nan)
        rho_hp[hp] = ref[:len(hp)]
        rho_null[nl] = ref[len(hp):]
        return rho_hp, rho_null


def _plane_widths(name, hp_pos, hp_neg, null_pos, null_neg) -> PlaneWidths:
    def deg(x, sign):
        return None if not np.isfinite(x) else float(sign * np.rad2deg(x))

    hp = (deg(hp_neg, -1), deg(hp_pos, 1))
    nl = (deg(null_neg, -1), deg(null_pos, 1))
    hpbw = None if None in hp else hp[1] - hp[0]
    fnbw = None if None in nl else nl[1] - nl[0]
    return PlaneWidths(name, hpbw, fnbw, hp, nl)


# ---- main-lobe models ---------------------------------------------------------------------

class _RadialLobe:
    """Main lobe bounded by the first null along each radial (optionally plus its mirror)."""

    def __init__(self, beam: _Beam, rho_null: np.ndarray, mirror_normal=None):
        self.beam = beam
        m = len(rho_null)
        self.psi = 2 * np.pi * np.arange(m) / m
        self.rho = np.where(np.isfinite(rho_null), rho_null, np.pi)
        self.n = None if mirror_normal is None else np.asarray(mirror_normal, float)

    def _inside_one(self, d):
        b = self.beam
        rho = np.arccos(np.clip(d @ b.r0, -1.0, 1.0))
        psi = np.mod(np.arctan2(d @ b.t1, d @ b.t0), 2 * np.pi)
        edge = np.interp(psi, self.psi, self.rho, period=2 * np.pi)
        return rho < edge

    def _mirror(self, d):
        return d - 2.0 * (d @ self.n)[..., None] * self.n

    def inside(self, d):
        d = np.asarray(d, float)
        ins = self._inside_one(d)
        if self.n is not None:
            ins |= self._inside_one(self._mirror(d))
        return ins

    def power(self, kr: float) -> float:
        """Integral of U over the main lobe: Gauss-Legendre in rho x trapezoid in psi."""
        b = self.beam
        rmax = float(self.rho.max())
        n_rho = int(np.ceil(kr * rmax)) + 24
        m = max(_N_RADIALS, 4 * int(np.ceil(kr * np.sin(min(rmax, np.pi / 2)))) + 16)
        psi = 2 * np.pi * np.arange(m) / m
        edge = np.interp(psi, self.psi, self.rho, period=2 * np.pi)
        x, w = np.polynomial.legendre.leggauss(n_rho)
        rho = 0.5 * (x[None, :] + 1.0) * edge[:, None]  # (m, n_rho)
        wr = 0.5 * w[None, :] * edge[:, None] * np.sin(rho)
        T = b.t0[None, :] * np.cos(psi)[:, None] + b.t1[None, :] * np.sin(psi)[:, None]
        pts = _arc(b.r0, T, rho).reshape(-1, 3)
        u = b.g(pts) * b.u0
        if self.n is not None:
            # U is mirror symmetric, so the union of the lobe R and its mirror M(R) holds
            # int_R U (1 + [M d not in R]) dOmega.
            u = u * (1.0 + ~self._inside_one(self._mirror(pts)))
        return float((u.reshape(wr.shape) * wr).sum() * (2 * np.pi / m))


class _BandLobe:
    """Collinear array: main lobe = band c_lo < d . a < c_hi of cone angles about axis a."""

    def __init__(self, beam: _Beam, axis, c_lo, c_hi):
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
            zp = _cut_frame(a)[0]
        f2 = zp / np.linalg.norm(zp)
        f1 = np.cross(f2, a)
        iso = isinstance(arr.element, Isotropic) and arr.geometry.orientations is None
        if iso:  # U depends on c only
            beta, wb = np.array([0.0]), np.array([2 * np.pi])
        elif arr.element.front_only and abs(a[2]) < 1e-12 and arr.geometry.orientations is None:
            # The horizon is at beta = 0, pi: Gauss-Legendre on each half avoids the kink.
            x, w = np.polynomial.legendre.leggauss(32)
            half = 0.5 * np.pi * (x + 1.0)
            beta = np.concatenate([half, half + np.pi])
            wb = np.concatenate([w, w]) * 0.5 * np.pi
        else:
            nb = 720 if arr.element.front_only else 64
            beta = 2 * np.pi * np.arange(nb) / nb
            wb = np.full(nb, 2 * np.pi / nb)
        n_c = int(np.ceil(k_length * (self.c_hi - self.c_lo) / 2)) + 24
        x, w = np.polynomial.legendre.leggauss(n_c)
        c = self.c_lo + 0.5 * (x + 1.0) * (self.c_hi - self.c_lo)
        wc = 0.5 * w * (self.c_hi - self.c_lo)
        s = np.sqrt(np.clip(1 - c**2, 0.0, None))
        ring = np.cos(beta)[None, :, None] * f1 + np.sin(beta)[None, :, None] * f2
        pts = c[:, None, None] * a + s[:, None, None] * ring
        u = b.g(pts.reshape(-1, 3)).reshape(len(c), len(beta)) * b.u0
        return float(wc @ u @ wb)


def _symmetry(array, frequency):
    """("band", axis) for collinear arrays, ("mirror", normal) for mirror-symmetric planar
    patterns, else ("radial", None)."""
    a = _collinear_axis(array)
    if a is not None:
        return "band", a
    pos = array.positions if array.enabled is None else array.positions[array.enabled]
    if len(pos) < 3:
        return "radial", None
    _, s, vt = np.linalg.svd(pos - pos.mean(axis=0), full_matrices=True)
    if s[2] > 1e-9 * s[0]:
        return "radial", None
    n = vt[2]
    test = np.asarray(
        [[0.48, 0.6, 0.64], [-0.8, 0.36, 0.48], [0.0, -0.6, 0.8], [0.36, -0.48, -0.8]], float)
    test /= np.linalg.norm(test, axis=1, keepdims=True)
    mir = test - 2.0 * (test @ n)[:, None] * n
    u1 = _intensity(array, test, frequency)
    u2 = _intensity(array, mir, frequency)
    if np.all(np.abs(u1 - u2) <= 1e-9 * max(u1.max(), u2.max(), 1e-300)):
        return "mirror", n
    return "radial", None


# ---- grating lobes from the lattice -------------------------------------------------------

def _grating_prediction(array, frequency, beam: _Beam):
    """Predicted grating lobes, free scan cone and free scan in the phi plane (degrees)."""
    L = array.geometry.lattice
    if L is None:
        return None, None, None
    L = np.asarray(L, float)
    gram = L @ L.T
    if abs(np.linalg.det(gram)) <= 1e-12 * np.prod(np.diag(gram)):
        return None, None, None
    B = np.linalg.solve(gram, L)  # rows b_i with b_i . a_j = delta_ij, in the lattice span
    P = L.T @ B  # projector onto the lattice span
    lam = 2 * np.pi / array.k(frequency)
    if array.steering is None:
        s0 = np.zeros(3)
    else:
        ratio = 1.0 if array.steering.mode == "delay" else array.k() / array.k(frequency)
        s0 = ratio * (P @ array.steering.unit)
    r0 = beam.r0
    if len(L) == 2:
        nrm = np.cross(L[0], L[1])
        nrm /= np.linalg.norm(nrm)
        if r0 @ nrm < -1e-12 or (abs(r0 @ nrm) <= 1e-12 and nrm[2] < 0):
            nrm = -nrm
    else:
        perp = r0 - P @ r0
        nrm = perp / np.linalg.norm(perp) if np.linalg.norm(perp) > 1e-9 else _cut_frame(
            L[0] / np.linalg.norm(L[0]))[0]
    lim = [int(np.floor(2 * np.linalg.norm(a) / lam)) + 1 for a in L]
    qs = range(-lim[1], lim[1] + 1) if len(L) == 2 else [0]
    lobes = []
    shortest = np.inf
    # Scan direction of the phi plane in the lattice plane: the projected beam axis, or at
    # broadside the projected cut-0 tangent.
    e_hat = None
    for t in (P @ r0, P @ beam.t0):
        if np.linalg.norm(t) > 1e-9:
            e_hat = t / np.linalg.norm(t)
            break
    free_plane = 1.0
    for p in range(-lim[0], lim[0] + 1):
        for q in qs:
            if p == 0 and q == 0:
                continue
            g = lam * (p * B[0] + (q * B[1] if len(L) == 2 else 0.0))
            gn = float(np.linalg.norm(g))
            shortest = min(shortest, gn)
            if e_hat is not None:
                bq, cq = float(e_hat @ g), gn**2 - 1.0
                disc = bq**2 - cq
                if disc >= 0:
                    roots = [x for x in (-bq - np.sqrt(disc), -bq + np.sqrt(disc)) if x >= 0]
                    if cq <= 0:
                        roots = [0.0]
                    if roots:
                        free_plane = min(free_plane, min(roots))
            s = s0 + g
            sn = float(np.linalg.norm(s))
            if sn <= 1.0 + 1e-12:
                d = s + np.sqrt(max(1.0 - sn**2, 0.0)) * nrm
                d /= np.linalg.norm(d)
                th, ph = _angles_deg(d[None, :])
                lobes.append(GratingLobe(p, q, float(th[0]), float(ph[0]), float(d[0]),
                                         float(d[1]), _rel_db(beam.g(d[None, :])[0])))
    lobes.sort(key=lambda x: (-x.level_db, abs(x.p) + abs(x.q)))
    free = shortest - 1.0
    free_deg = None if free < 0 else float(np.rad2deg(np.arcsin(min(free, 1.0))))
    if len(L) == 1:  # a line: every scan plane containing the axis is the same
        fp_deg = free_deg
    else:
        fp_deg = None if e_hat is None else float(np.rad2deg(np.arcsin(min(free_plane, 1.0))))
    return tuple(lobes[:_MAX_PREDICTED]), free_deg, fp_deg


# ---- lobe search --------------------------------------------------------------------------

def _frames(r):
    """Orthonormal tangent frames (e1, e2) at unit vectors r (K, 3)."""
    a = np.where((np.abs(r[:, 2]) < 0.9)[:, None], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0])
    e1 = np.cross(a, r)
    e1 /= np.linalg.norm(e1, axis=1, keepdims=True)
    return e1, np.cross(r, e1)


_STENCIL = np.array([(i, j) for i in (-1, 0, 1) for j in (-1, 0, 1)], float)


def _refine_maxima(fun, starts, scale: float, *, rtol: float = 1e-6, max_iter: int = 60):
    r"""Refine many local maxima of ``fun(unit_vectors (M,3)) -> (M,)`` at once.

    Each start moves in its own tangent plane, :math:`\hat r(x) \propto \hat r_s +
    x_1\hat e_1 + x_2\hat e_2`. Every iteration evaluates, in one call of ``fun`` for all
    starts, a 3 x 3 stencil of step h about each current point. When the centre is worse than
    the best point so far the move is undone and h shrinks by 4; otherwise the point moves by
    the Newton step of the finite-difference quadratic model (limited to 2h), or to the best
    stencil point when the model is not concave, and h follows the move. The best value never
    decreases, so a penalised ``fun`` (zero outside an allowed region) keeps points inside it.

    Parameters
    ----------
    fun : callable
        Vectorised objective.
    starts : ndarray, shape (K, 3)
        Start directions.
    scale : float
        Initial step (rad), about the sampling spacing that found the starts.
    rtol : float
        Stop when every step is below ``rtol * scale``.

    Returns
    -------
    (ndarray (K, 3), ndarray (K,))
        Best directions and values.

    References
    ----------
    J. Nocedal and S. J. Wright, *Numerical Optimization*, 2nd ed., Springer, 2006, ch. 3-4
    (Newton steps with a safeguarded step length).
    """
    r = np.asarray(starts, float).reshape(-1, 3)
    r = r / np.linalg.norm(r, axis=1, keepdims=True)
    n = len(r)
    e1, e2 = _frames(r)
    x = np.zeros((n, 2))
    bx = x.copy()
    bf = np.full(n, -np.inf)
    step = np.full(n, 0.25 * scale)
    for _ in range(max_iter):
        act = np.flatnonzero(step > rtol * scale)
        if not len(act):
            break
        h = step[act]
        xs = x[act, None, :] + h[:, None, None] * _STENCIL[None, :, :]  # (a, 9, 2)
        rep = [np.repeat(z[act], 9, axis=0) for z in (r, e1, e2)]
        fs = np.asarray(fun(_unit_sub(*rep, xs.reshape(-1, 2))), float).reshape(len(act), 9)
        fc = fs[:, 4]
        worse = fc < bf[act]
        gx = (fs[:, 7] - fs[:, 1]) / (2 * h)
        gy = (fs[:, 5] - fs[:, 3]) / (2 * h)
        hxx = (fs[:, 7] - 2 * fc + fs[:, 1]) / h**2
        hyy = (fs[:, 5] - 2 * fc + fs[:, 3]) / h**2
        hxy = (fs[:, 8] - fs[:, 6] - fs[:, 2] + fs[:, 0]) / (4 * h**2)
        det = hxx * hyy - hxy**2
        ok = (hxx < 0) & (det > 0)
        sdet = np.where(ok, det, 1.0)
        d = np.column_stack([np.where(ok, -(hyy * gx - hxy * gy) / sdet, 0.0),
                             np.where(ok, -(hxx * gy - hxy * gx) / sdet, 0.0)])
        dn = np.linalg.norm(d, axis=1)
        d *= np.minimum(1.0, 2 * h / np.where(dn > 0, dn, 1.0))[:, None]
        ib = np.argmax(fs, axis=1)
        sb = xs[np.arange(len(act)), ib] - x[act]
        stay = ~ok & (ib == 4)
        move = np.where(ok[:, None], d, sb)
        # Record the centre as the best point where it improved.
        better = ~worse
        bf[act] = np.where(better, fc, bf[act])
        bx[act] = np.where(better[:, None], x[act], bx[act])
        dist = np.linalg.norm(move, axis=1)
        new_x = np.where(worse[:, None], bx[act], x[act] + move)
        new_h = np.where(worse | stay, 0.25 * h, np.clip(dist, 0.25 * h, 2 * h))
        x[act] = new_x
        step[act] = new_h
    return _unit_sub(r, e1, e2, bx), bf


def _unit_sub(r, e1, e2, x):
    """Unit vectors r + x1 e1 + x2 e2, normalised."""
    v = r + x[:, :1] * e1 + x[:, 1:] * e2
    return v / np.linalg.norm(v, axis=1, keepdims=True)


def _refined_lobes(beam: _Beam, dirs, vals, allowed, spacing, count, key):
    """Local maxima of g among ``dirs`` where ``allowed``, refined with the constraint kept."""
    from .radiation import local_maxima_candidates

    m = allowed(dirs)
    if not m.any():
        return []
    d, v = dirs[m], vals[m]
    cand = local_maxima_candidates(v, d, spacing, count=4 * count)
    picked = []
    for i in cand:
        kk = key(d[i][None, :])[0]
        if all(np.linalg.norm(kk - key(d[j][None, :])[0]) > 0.5 * spacing for j in picked):
            picked.append(i)
        if len(picked) >= count:
            break

    def fun(x):
        return beam.g(x) * allowed(x)

    xs, fs = _refine_maxima(fun, d[picked], spacing)
    out = []
    for x, f in sorted(zip(xs, fs, strict=True), key=lambda t: -t[1]):
        kk = key(x[None, :])[0]
        if all(np.linalg.norm(kk - key(y[None, :])[0]) > 0.05 * spacing for y, _ in out):
            out.append((x, float(f)))
    return out


def pattern_metrics(array, *, frequency: float | None = None, peak: Peak | None = None,
                    grating_lobe_db: float = 3.0) -> PatternMetrics:
    r"""Beamwidths, sidelobes, grating lobes, pointing, front-to-back and scan loss of a beam.

    Parameters
    ----------
    array : Array
        Any geometry (linear, planar, 3-D, rings), steered or not, any element model.
    frequency : float, optional
        Evaluation frequency in Hz (default: the design frequency).
    peak : Peak, optional
        :func:`steradian.radiation.peak_directivity` at ``frequency`` (computed when omitted);
        its radiated power normalises every directivity.
    grating_lobe_db : float
        A lobe outside the main lobe within this many dB of the peak is reported as a grating
        lobe found in the pattern (default 3 dB).

    Returns
    -------
    PatternMetrics

    Notes
    -----
    Definitions (beam axis, principal cuts, radials, first null, main lobe: see
    :mod:`steradian.metrics`):

    - **HPBW / FNBW** per principal cut: the angle between the half-power points (bisection on
      U - U_0/2) or between the first nulls (golden-section minimisation of sqrt(U)) either
      side of the peak, searched along the whole half great circle.
    - **Main-lobe boundary**: the first null along 96 radials, :math:`\rho_{null}(\psi)`,
      interpolated linearly (periodic) in between.
    - **PSL** (peak sidelobe level): :math:`10\log_{10}(\max_{outside} U / U_0)` over all
      directions outside the main lobe (front hemisphere only for front-half-space elements,
      where U is zero behind). Found on a Fibonacci set with 3 samples per null width of the
      array's electrical size, the 16 best local maxima refined by Nelder-Mead with the main
      lobe excluded. Its direction is reported.
    - **ISLR** (integrated sidelobe ratio): :math:`(P_{rad} - P_{main}) / P_{main}` in dB,
      :math:`P_{main} = \int_0^{2\pi}\int_0^{\rho_{null}(\psi)} U \sin\rho\,d\rho\,d\psi`
      (Gauss-Legendre in :math:`\rho`, trapezoid in :math:`\psi`) and :math:`P_{rad}` from
      ``peak.power``. The main lobe's share :math:`P_{main}/P_{rad}` is reported as well.
    - **Grating lobes predicted** from ``geometry.lattice``: with primitive vectors
      :math:`a_i` and reciprocal vectors :math:`b_i` (:math:`a_i\cdot b_j = \delta_{ij}`, in
      the lattice plane), the lobe :math:`(p, q) \ne (0, 0)` sits where the projection of the
      direction on the lattice plane is :math:`s_0 + \lambda(p b_1 + q b_2)`, visible when
      its length is at most 1. :math:`s_0` is the projection of the steering direction (times
      :math:`f_0/f` for phase steering evaluated off the design frequency: the beam squints).
      For a lattice in the x-y plane this is :math:`(u, v) = (u_0, v_0) + \lambda(p b_1 +
      q b_2)`. The **free scan cone** is the largest :math:`\theta_0` (from the lattice normal;
      from broadside for a line) with no visible grating lobe at any azimuth,
      :math:`\sin\theta_0 < \min_{(p,q)\ne 0}|\lambda(p b_1 + q b_2)| - 1`
      (None when lobes are visible even at broadside); the **free scan in the phi plane** is
      the same limit for scans along the phi-plane cut only. For a line of spacing d this is
      :math:`d/\lambda < 1/(1 + |\sin\theta_0|)`.
    - **Grating lobes found**: refined lobes outside the main lobe within ``grating_lobe_db``
      of the peak.
    - **Pointing error**: angle between the beam axis and the steering direction (None when
      unsteered); it shows beam squint off-frequency and the pull of the element pattern.
    - **Front-to-back ratio**: :math:`U_0 / U(-\hat r_0)` in dB; **front-to-back
      (hemisphere)**: :math:`U_0` over the largest U more than 90 degrees from the beam axis.
      Both are capped at -DB_FLOOR (300 dB) when the rear is dark.
    - **Scan loss**: peak directivity of the array minus that of the same array with its
      steering removed, in dB (negative when steering costs directivity; 0 when unsteered).

    References
    ----------
    IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas* (beamwidth,
    sidelobe level, front-to-back ratio, grating lobe).
    R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2
    (grating lobes of rectangular and triangular lattices; scan loss).
    R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 2 (beamwidth, sidelobes,
    integrated sidelobe ratio).
    R. Swinbank and R. J. Purser, "Fibonacci grids: A novel approach to global modelling,"
    *Q. J. R. Meteorol. Soc.* 132 (2006) 1769-1793 (the search set).
    """
    from .radiation import fibonacci_directions, search_spacing

    grating_lobe_db = positive("grating_lobe_db", grating_lobe_db, " dB")
    pk = _resolve_peak(array, frequency, peak)
    r0 = _preferred_axis(array, pk, frequency)
    beam = _Beam(array, frequency, r0, pk.power.value)
    kr = max(array.electrical_radius(frequency), 1.0)
    notes = []

    # Principal cuts and the main-lobe boundary: one march along 96 radials.
    h = 2 * np.pi / kr / 16  # 16 samples per main-lobe null width
    m = _N_RADIALS
    psi = 2 * np.pi * np.arange(m) / m
    T = beam.t0[None, :] * np.cos(psi)[:, None] + beam.t1[None, :] * np.sin(psi)[:, None]
    rho_hp, rho_null = beam.march(T, h, np.pi)
    q = m // 4
    planes = (_plane_widths("phi_plane", rho_hp[0], rho_hp[2 * q], rho_null[0], rho_null[2 * q]),
              _plane_widths("cross_plane", rho_hp[q], rho_hp[3 * q], rho_null[q],
                            rho_null[3 * q]))

    kind, vec = _symmetry(array, frequency)
    if kind == "band":
        a = vec
        c0 = float(np.clip(r0 @ a, -1.0, 1.0))
        perp = a - c0 * r0
        gamma0 = float(np.arccos(c0))
        if np.linalg.norm(perp) > 1e-9:
            tp = perp / np.linalg.norm(perp)
            lims = (gamma0, np.pi - gamma0)
        else:  # endfire: both directions of the cut lead away from the axis
            tp = beam.t0
            lims = (np.pi, np.pi)
        _, rn = beam.march(np.array([tp, -tp]), h, np.array(lims))
        cs = [np.nan if not np.isfinite(x) else float(_arc(r0, t[None, :], [x])[0] @ a)
              for x, t in zip(rn, (tp, -tp), strict=True)]
        if np.linalg.norm(perp) > 1e-9:
            c_hi = 1.0 if np.isnan(cs[0]) else cs[0]
            c_lo = -1.0 if np.isnan(cs[1]) else cs[1]
        elif not np.isfinite(cs).any():
            c_lo, c_hi = -1.0, 1.0
        elif c0 > 0:
            c_lo, c_hi = float(np.nanmax(cs)), 1.0
        else:
            c_lo, c_hi = -1.0, float(np.nanmin(cs))
        lobe = _BandLobe(beam, a, c_lo, c_hi)
        ext = array.positions @ a
        p_main = lobe.power(array.k(frequency) * float(np.ptp(ext)))
        model = "band"
        notes.append("collinear array: the pattern is a cone about the array axis; the main "
                     "lobe is the band of cone angles between the first nulls")

        side = r0 - c0 * a  # unit normal to the axis in the plane of r0 and the axis
        side = side / np.linalg.norm(side) if np.linalg.norm(side) > 1e-9 else beam.t0

        def key(x):
            # A cone is reported at its point in the plane of the beam axis and array axis.
            c = np.clip(x @ a, -1.0, 1.0)
            return c[:, None] * a + np.sqrt(1 - c**2)[:, None] * side
    else:
        lobe = _RadialLobe(beam, rho_null, vec if kind == "mirror" else None)
        p_main = lobe.power(kr)
        model = "radial+mirror" if kind == "mirror" else "radial"
        if kind == "mirror":
            notes.append("planar array with a mirror-symmetric pattern: the mirror image of "
                         "the main lobe behind the array plane counts as main lobe")

            def key(x):
                flip = (x @ vec) * (r0 @ vec if abs(r0 @ vec) > 1e-12 else 1.0) < 0
                return np.where(flip[:, None], lobe._mirror(x), x)
        else:
            def key(x):
                return x

    # Search set for sidelobes and the rear hemisphere.
    front = array.element.front_only and array.geometry.orientations is None
    sp = search_spacing(array, frequency, per_null=_SEARCH_PER_NULL)
    n_search = max(int(4 * np.pi / sp**2 / (2 if front else 1)), 2000)
    dirs = fibonacci_directions(n_search, front)
    vals = beam.g(dirs)

    outside = _refined_lobes(beam, dirs, vals, lambda x: ~lobe.inside(x), sp, _N_REFINE, key)
    lobes = [beam.lobe(key(x[None, :])[0], f) for x, f in outside]
    if lobes:
        psl = lobes[0]
        psl_db, psl_t, psl_p = psl.level_db, psl.theta_deg, psl.phi_deg
    else:
        psl_db = psl_t = psl_p = None
        notes.append("no direction lies outside the main lobe: no sidelobes")
    found = tuple(lb for lb in lobes if lb.level_db >= -grating_lobe_db)

    p_rad = pk.power.value
    frac = float(min(p_main / p_rad, 1.0))
    islr = None if not lobes else _rel_db(max(p_rad - p_main, 0.0) / p_main)

    predicted, free_deg, free_plane_deg = _grating_prediction(array, frequency, beam)

    # Front-to-back.
    back = float(beam.g(-r0[None, :])[0])
    rear = _refined_lobes(beam, dirs, vals, lambda x: (x @ r0) < 0, sp, 4, lambda x: x)
    rear_max = max([back] + [f for _, f in rear])
    fb = 0.0 - _rel_db(back)
    fbh = 0.0 - _rel_db(rear_max)

    # Pointing error and scan loss.
    pointing = None
    scan_loss = 0.0
    d_unsteered = pk.directivity_dbi
    d0 = beam.dbi(1.0)
    if array.steering is not None:
        cosang = float(np.clip(r0 @ array.steering.unit, -1.0, 1.0))
        pointing = float(np.rad2deg(np.arccos(cosang)))
        un = peak_directivity(array.with_steering(None), frequency=frequency)
        d_unsteered = un.directivity_dbi
        scan_loss = d0 - d_unsteered
    bt, bp = _angles_deg(r0[None, :])
    return PatternMetrics(
        peak_directivity_dbi=d0,
        beam_theta_deg=float(bt[0]),
        beam_phi_deg=float(bp[0]),
        planes=planes,
        psl_db=psl_db,
        psl_theta_deg=psl_t,
        psl_phi_deg=psl_p,
        sidelobes=tuple(lobes[:_MAX_REPORTED]),
        islr_db=islr,
        main_lobe_power_fraction=frac,
        main_lobe_model=model,
        lattice=array.geometry.lattice is not None,
        grating_lobes_predicted=predicted,
        grating_lobe_free_scan_deg=free_deg,
        grating_lobe_free_scan_phi_plane_deg=free_plane_deg,
        grating_lobes_found=found,
        pointing_error_deg=pointing,
        front_to_back_db=fb,
        front_to_back_hemisphere_db=fbh,
        scan_loss_db=float(scan_loss),
        unsteered_peak_directivity_dbi=float(d_unsteered),
        notes=tuple(notes),
    )


__all__ += ["PatternMetrics", "PlaneWidths", "Lobe", "GratingLobe", "pattern_metrics"]
