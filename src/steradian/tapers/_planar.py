r"""Tapers for planar layouts: Taylor's and Bayliss's circular-aperture distributions sampled at
arbitrary element positions, and separable (x times y) or radial application of line tapers.

Planar layouts lie in the x-y plane (z is ignored); coordinates are taken about the centroid
of the elements. Every function returns one real weight per element, in element order.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from ..errors import SteradianError
from ..geometry import Geometry
from ..validate import count, doubtful, positive
from ._bayliss import circular_zero_set, circular_zeros
from ._common import aperture_positions, axis_coordinates, sidelobe_ratio

__all__ = ["taylor_circular", "bayliss_circular", "separable", "radial", "aperture_radius"]


def _positions(geometry) -> np.ndarray:
    """Element positions (N, 2|3) of a Geometry or an array."""
    if isinstance(geometry, Geometry):
        return geometry.positions
    pos = np.asarray(geometry, float)
    if pos.ndim != 2 or pos.shape[1] not in (2, 3):
        raise SteradianError(f"positions must have shape (N, 2) or (N, 3), got {pos.shape}")
    return pos


def _xy(geometry) -> np.ndarray:
    """x-y coordinates about the centroid."""
    pos = _positions(geometry)
    return pos[:, :2] - pos[:, :2].mean(axis=0)


def _median_spacing(xy: np.ndarray) -> float:
    if len(xy) < 2:
        return 0.0
    from scipy.spatial import cKDTree

    d, _ = cKDTree(xy).query(xy, k=2)
    return float(np.median(d[:, 1]))


def aperture_radius(geometry) -> float:
    r"""Default circular-aperture radius (m) for sampling a continuous distribution.

    The area-equivalent radius :math:`a = \sqrt{N A_{cell}/\pi}` (each element represents
    one lattice cell: :math:`A_{cell} = |a_1 \times a_2|` from ``geometry.lattice``, else the
    square of the median nearest-neighbour spacing) when it contains every element, as for a
    lattice filled out to a circle; otherwise the largest element radius plus half a spacing
    (layouts that are not filled circles, such as squares).
    """
    xy = _xy(geometry)
    s = _median_spacing(xy)
    lat = getattr(geometry, "lattice", None)
    if lat is not None and len(lat) == 2:
        cell = float(np.linalg.norm(np.cross(lat[0], lat[1])))
    else:
        cell = s * s
    rmax = float(np.sqrt((xy**2).sum(axis=1)).max())
    a_eq = math.sqrt(len(xy) * cell / math.pi)
    return a_eq if a_eq >= rmax * (1 + 1e-9) else rmax + 0.5 * s


def _rho(geometry, radius):
    xy = _xy(geometry)
    a = aperture_radius(geometry) if radius is None else positive("radius", radius, " m")
    r = np.sqrt((xy**2).sum(axis=1))
    if r.max() > a * (1 + 1e-9):
        raise SteradianError(f"an element lies {r.max():.6g} m from the centre, outside the "
                             f"aperture radius {a:.6g} m")
    return xy, r / a, a


def taylor_circular(geometry, nbar: int = 4, sll: float = 30.0, radius: float | None = None):
    r"""Taylor's circular-aperture n-bar distribution sampled at the element positions.

    .. math::
        g(\rho) = \sum_{m=0}^{\bar n-1} \frac{F(\mu_m)}{J_0^2(\pi\mu_m)} J_0(\pi\mu_m\rho),
        \qquad F(\mu_m) = \frac{-J_0(\pi\mu_m)\prod_{n=1}^{\bar n-1}(1-\mu_m^2/u_n^2)}
        {\prod_{n=1,n\ne m}^{\bar n-1}(1-\mu_m^2/\mu_n^2)},\ F(\mu_0) = 1,

    with :math:`J_1(\pi\mu_m) = 0` (:math:`\mu_0 = 0`), :math:`u_n = \sigma\sqrt{A^2 +
    (n-1/2)^2}`, :math:`\sigma = \mu_{\bar n}/\sqrt{A^2 + (\bar n-1/2)^2}`,
    :math:`A = \operatorname{arccosh}(R)/\pi`, :math:`\rho = r/a`.

    Parameters
    ----------
    geometry : Geometry or array_like (N, 2|3)
        Element positions (m), in the x-y plane.
    nbar : int
        Number of nearly equal sidelobes (:math:`\bar n` >= 2).
    sll : float
        Design sidelobe level in dB below the peak (positive).
    radius : float, optional
        Aperture radius a (m); default :func:`aperture_radius`.

    Returns
    -------
    ndarray, shape (N,)
        Real weights, largest 1.

    References
    ----------
    T. T. Taylor, "Design of circular apertures for narrow beamwidth and low sidelobes,"
    *IRE Trans. Antennas Propag.* AP-8 (1960) 17-22.
    """
    from scipy.special import j0, jn_zeros

    R = sidelobe_ratio(sll)
    nbar = count("nbar", nbar, minimum=2)
    _, rho, _ = _rho(geometry, radius)
    A = math.acosh(R) / math.pi
    mu = np.concatenate([[0.0], jn_zeros(1, nbar) / math.pi])  # mu_0 .. mu_nbar
    sigma = mu[nbar] / math.sqrt(A**2 + (nbar - 0.5) ** 2)
    un = sigma * np.sqrt(A**2 + (np.arange(1, nbar) - 0.5) ** 2)
    g = np.ones_like(rho)  # m = 0 term: F(0) / J0(0)^2 * J0(0) = 1
    for m in range(1, nbar):
        others = mu[1:nbar][np.arange(1, nbar) != m]
        F = -j0(math.pi * mu[m]) * np.prod(1 - mu[m] ** 2 / un**2) / np.prod(
            1 - mu[m] ** 2 / others**2)
        g = g + F / j0(math.pi * mu[m]) ** 2 * j0(math.pi * mu[m] * rho)
    return g / np.max(np.abs(g))


def bayliss_circular(geometry, nbar: int = 5, sll: float = 30.0, radius: float | None = None,
                     phi_deg: float = 0.0):
    r"""Bayliss circular-aperture difference distribution sampled at the element positions.

    .. math::
        g(\rho, \phi) = \cos(\phi - \phi_0) \sum_{m=0}^{\bar n-1} B_m J_1(\pi\mu_m\rho),\quad
        B_m = \frac{\pi\mu_m^2/2}{J_1(\pi\mu_m)}
        \frac{\prod_{n=1}^{\bar n-1}(1-\mu_m^2/z_n^2)}{\prod_{n\ne m}(1-\mu_m^2/\mu_n^2)},

    :math:`J_1'(\pi\mu_m) = 0`, :math:`z_n = \sigma\xi_n`, :math:`\sigma = \mu_{\bar n}/
    \xi_{\bar n}`. The difference pattern has its null on boresight and its difference lobes in
    the plane :math:`\phi = \phi_0`. :math:`\xi_1..\xi_4` solve Bayliss's equal-sidelobe
    condition numerically (see :func:`steradian.tapers._bayliss.circular_zeros`).

    Parameters
    ----------
    geometry : Geometry or array_like (N, 2|3)
    nbar : int
        :math:`\bar n` >= 5.
    sll : float
        Design sidelobe level in dB below the difference-lobe peak (positive).
    radius : float, optional
        Aperture radius a (m); default :func:`aperture_radius`.
    phi_deg : float
        Azimuth of the difference plane (degrees from +x).

    Returns
    -------
    ndarray, shape (N,)
        Real weights, largest magnitude 1, odd about the line through the centre
        perpendicular to :math:`\phi_0`.

    References
    ----------
    E. T. Bayliss, "Design of monopulse antenna difference patterns with low sidelobes,"
    *Bell Syst. Tech. J.* 47 (1968) 623-650.
    """
    from scipy.special import j1

    sidelobe_ratio(sll)
    nbar = count("nbar", nbar, minimum=5)
    xy, rho, _ = _rho(geometry, radius)
    A, near = circular_zeros(nbar, float(sll))
    mu, z = circular_zero_set(A, near, nbar)
    radial_part = np.zeros_like(rho)
    for m in range(nbar):
        others = mu[:nbar][np.arange(nbar) != m]
        B = (math.pi * mu[m] ** 2 / 2) / j1(math.pi * mu[m]) * np.prod(
            1 - mu[m] ** 2 / z**2) / np.prod(1 - mu[m] ** 2 / others**2)
        radial_part = radial_part + B * j1(math.pi * mu[m] * rho)
    phi0 = math.radians(float(phi_deg))
    cosphi = np.where(rho > 0, (xy[:, 0] * math.cos(phi0) + xy[:, 1] * math.sin(phi0))
                      / np.maximum(np.sqrt((xy**2).sum(axis=1)), 1e-300), 0.0)
    g = cosphi * radial_part
    if np.dot(g, xy @ np.array([math.cos(phi0), math.sin(phi0)])) < 0:
        g = -g
    return g / np.max(np.abs(g))


def _axis_weights(spec, coords, name):
    vals, idx = axis_coordinates(coords)
    if callable(spec):
        wv = np.asarray(spec(aperture_positions(vals)), float)
        if wv.shape != vals.shape:
            raise SteradianError(f"separable: the {name} function returned shape {wv.shape}, "
                                 f"expected {vals.shape}")
    else:
        wv = np.asarray(spec, complex).reshape(-1)
        if len(wv) != len(vals):
            raise SteradianError(f"separable: {name} taper has {len(wv)} weights but the layout "
                                 f"has {len(vals)} distinct {name} coordinates")
        if np.all(wv.imag == 0):
            wv = wv.real
    return wv[idx]


def separable(geometry, wx, wy) -> np.ndarray:
    r"""Separable planar taper :math:`w_n = w_x(x_n)\,w_y(y_n)`.

    Parameters
    ----------
    geometry : Geometry or array_like (N, 2|3)
        Element positions in the x-y plane.
    wx, wy : array_like or callable
        Either one weight per distinct x (resp. y) coordinate, in increasing coordinate order
        (e.g. ``taylor(16, 4, 30)`` for a 16-column lattice), or a continuous aperture
        function of the normalised coordinate :math:`t\in[-1/2, 1/2]` (e.g.
        ``lambda t: taylor_aperture(t, 4, 30)``) evaluated at each distinct coordinate, the
        aperture spanning the coordinate range plus one median spacing.

    Returns
    -------
    ndarray, shape (N,)
        Product weights (real when both factors are real).

    Notes
    -----
    The product pattern of a rectangular lattice is the product of the two line patterns, so
    the principal-plane sidelobes equal the line tapers' and the off-plane sidelobes are far
    lower (common practice; the optimizer exploits that margin).
    """
    pos = _positions(geometry)
    return _axis_weights(wx, pos[:, 0], "x") * _axis_weights(wy, pos[:, 1], "y")


def radial(geometry, f: Callable, radius: float | None = None) -> np.ndarray:
    r"""Apply a line aperture distribution radially: :math:`w_n = f(r_n / 2a)`.

    ``f`` is a function of the normalised line coordinate :math:`t\in[-1/2, 1/2]` (as the
    ``*_aperture`` functions are), evaluated at :math:`t = \rho/2`, :math:`\rho = r/a`, so the
    aperture centre gets f(0) and the rim f(1/2). The result is scaled to a largest
    magnitude of 1. A radially applied line taper is a common practical approximation; for a
    circular aperture designed to a sidelobe level use :func:`taylor_circular`.
    """
    _, rho, _ = _rho(geometry, radius)
    if not callable(f):
        raise SteradianError("radial: f must be a function of the normalised coordinate t")
    g = np.asarray(f(rho / 2), float)
    if g.shape != rho.shape:
        raise SteradianError(f"radial: f returned shape {g.shape}, expected {rho.shape}")
    if not np.all(np.isfinite(g)) or np.max(np.abs(g)) == 0:
        raise SteradianError("radial: f returned non-finite or all-zero values")
    if np.any(g < 0):
        doubtful("radial: the distribution has negative values (phase reversals)")
    return g / np.max(np.abs(g))
