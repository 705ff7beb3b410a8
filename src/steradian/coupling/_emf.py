r"""Self and mutual impedance of parallel thin dipoles by the induced-EMF method.

Two centre-fed dipoles of equal half-length h carry sinusoidal currents
:math:`I(z) = I_m \sin k(h - |z - z_n|)`. The exact near field of such a filament along its
axis direction is (Balanis, eq. 8-54; Elliott, ch. 7)

.. math:: E_z(\rho, z) = -j\frac{\eta I_m}{4\pi}\Big[\frac{e^{-jkR_1}}{R_1}
          + \frac{e^{-jkR_2}}{R_2} - 2\cos kh\,\frac{e^{-jkR_0}}{R_0}\Big]

(:math:`R_{1,2,0}` the distances from the ends and the centre), and the induced EMF gives the
mutual impedance referred to the current maxima,
:math:`Z_{21} = -\frac{1}{I_{m1} I_{m2}}\int E_{z1}(\rho, z)\,I_2(z)\,dz`. With the
substitution :math:`v = R \pm (z - z_c)` every term is an exponential integral of a real
argument, :math:`\int e^{-jkv}/v\,dv = \mathrm{Ci}(kv) - j\,\mathrm{Si}(kv)`, so the whole
impedance is a sum of sine and cosine integrals (``scipy.special.sici``) for any parallel
placement: side by side, collinear and in echelon. Impedances are referred to the input
(centre) current, :math:`Z_{in} = Z_m / \sin^2 kh`.

The self impedance is the same integral between the axis filament and the wire surface
(radius a) for the reactance, and between two filaments (the far-field radiation resistance)
for the resistance, as in Balanis eqs. 8-57 and 8-60a.

References
----------
C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, sec. 8.5-8.6
(induced-EMF method, self and mutual impedance, eqs. 8-57, 8-60, 8-71).
R. S. Elliott, *Antenna Theory and Design*, rev. ed., Wiley-IEEE Press, 2003, ch. 7.
H. E. King, "Mutual impedance of unequal length antennas in echelon," IRE Trans. Antennas
Propag., vol. 5, no. 3, pp. 306-313, 1957.
"""

from __future__ import annotations

import numpy as np
from scipy.special import sici

from ..errors import SteradianError
from ..units import ETA0

__all__ = ["mutual_impedance", "self_impedance", "FILAMENT_RHO", "TOUCH"]

TOUCH = 1e-12
"""Collinear dipoles whose ends touch (centres one length apart, a common half-wave
layout) are evaluated with a gap of TOUCH lengths. The impedance is continuous there and
moves like gap x log(1/gap): measured, the mutual resistance of touching half-wave dipoles
changes by 2.4e-9 relative from a gap of 1e-12 to 1e-9, so TOUCH leaves about 1e-11."""

FILAMENT_RHO = 1e-9
"""Radial offset, in units of the half-length, at which the filament-to-filament
radiation resistance is evaluated: the resistance is analytic in rho^2, so the offset changes
it by about 1e-18 relative while keeping every logarithm finite."""


def _cisi(x):
    """Ci(x) - j Si(x) for x > 0 (elementwise)."""
    si, ci = sici(x)
    return ci - 1j * si


def _segment(k, s, zc, za, zb, rho):
    r"""Integral of :math:`e^{-jk(R + s(z - z_c))}/R` over z in [za, zb], R = sqrt(rho^2 +
    (z - zc)^2), s = +-1, for segments that do not pass through z = zc when rho = 0."""
    ta, tb = za - zc, zb - zc

    def v(t):
        r = np.hypot(rho, t)
        st = s * t
        # R + s t without cancellation: rho^2 / (R - s t) when s t < 0
        return np.where(st >= 0, r + st, rho**2 / np.where(st >= 0, 1.0, r - st))

    va, vb = v(ta), v(tb)
    with np.errstate(divide="ignore", invalid="ignore"):
        general = s * (_cisi(k * vb) - _cisi(k * va))
        # rho = 0 on the side where R + s t vanishes: the integrand is 1/|t|
        zero = np.log(np.abs(tb) / np.abs(ta)) * np.sign(tb)
    on_axis = (va == 0) & (vb == 0)
    return np.where(on_axis, zero, general)


def _emf(k, h, rho, dz):
    """Mutual impedance referred to the current maxima of two parallel dipoles of half-length
    h, the second at radial distance rho and axial offset dz (arrays broadcast)."""
    total = 0.0
    ckh = np.cos(k * h)
    lo, mid, hi = dz - h, dz, dz + h
    for zc, alpha in ((h, 1.0), (-h, 1.0), (0.0, -2.0 * ckh)):
        b = k * (h - dz + zc)
        a = k * (h + dz - zc)
        lower = (np.exp(1j * b) * _segment(k, -1, zc, lo, mid, rho)
                 - np.exp(-1j * b) * _segment(k, 1, zc, lo, mid, rho))
        upper = (np.exp(1j * a) * _segment(k, 1, zc, mid, hi, rho)
                 - np.exp(-1j * a) * _segment(k, -1, zc, mid, hi, rho))
        total = total + alpha * (lower + upper) / 2j
    return 1j * ETA0 / (4 * np.pi) * total


def _check_length(k, h):
    skh = np.sin(k * h)
    if not np.isfinite(skh) or abs(skh) < 1e-3:
        raise SteradianError(
            f"coupling: a dipole of {2 * k * h / (2 * np.pi):.6g} wavelengths has (almost) no "
            "current at its feed point; the induced-EMF model needs a length away from "
            "whole wavelengths")
    return skh


def mutual_impedance(k: float, length: float, rho, dz=0.0) -> np.ndarray:
    r"""Mutual impedance (ohm, referred to the feed currents) of two parallel thin dipoles.

    Parameters
    ----------
    k : float
        Wavenumber (rad/m).
    length : float
        Length of each dipole (m).
    rho : array_like
        Distance between the two axes (m); 0 for collinear dipoles.
    dz : array_like
        Offset of the second centre along the axis (m); 0 for side by side. Collinear
        dipoles (rho = 0) must not overlap: |dz| >= length.

    Returns
    -------
    ndarray of complex
        :math:`Z_{21} = Z_{12}`, shaped like the broadcast of ``rho`` and ``dz``.

    References
    ----------
    C. A. Balanis, *Antenna Theory*, 4th ed., 2016, sec. 8.6 (eqs. 8-71: side by side and
    collinear); H. E. King, IRE Trans. AP-5, 1957 (echelon).
    """
    h = 0.5 * float(length)
    skh = _check_length(k, h)
    rho, dz = np.broadcast_arrays(np.abs(np.asarray(rho, float)), np.abs(np.asarray(dz, float)))
    if np.any((rho == 0) & (dz < 2 * h * (1 - TOUCH))):
        raise SteradianError("coupling: two collinear dipoles overlap (their centres are "
                             "closer than one dipole length along the axis)")
    # ends that touch: the impedance is continuous there; evaluate TOUCH of a length apart
    dz = np.where((rho == 0) & (dz < 2 * h * (1 + TOUCH)), 2 * h * (1 + TOUCH), dz)
    return _emf(k, h, rho, dz) / skh**2


def self_impedance(k: float, length: float, radius: float) -> complex:
    r"""Input impedance (ohm) of an isolated thin centre-fed dipole by the induced-EMF method.

    The resistance is the radiation resistance of the filament (far-field power), the
    reactance the EMF between the axis current and the field at the wire surface (radius
    ``radius``). A half-wave dipole gives 73.1 + j42.5 ohm (Balanis, eq. 8-60a, for a thin
    wire: the radius enters the reactance through sin(kl) only).

    References
    ----------
    C. A. Balanis, *Antenna Theory*, 4th ed., 2016, eqs. 8-57 and 8-60.
    """
    h = 0.5 * float(length)
    if not 0 < radius < h:
        raise SteradianError(f"coupling: the wire radius {radius:g} m must be positive and "
                             f"shorter than half the dipole ({h:g} m)")
    skh = _check_length(k, h)
    r = _emf(k, h, np.array(FILAMENT_RHO * h), np.array(0.0)).real
    x = _emf(k, h, np.array(float(radius)), np.array(0.0)).imag
    return complex(r, x) / skh**2
