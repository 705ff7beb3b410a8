"""Closed-form element models: isotropic, cosine power, dipoles."""

from __future__ import annotations

import math
from typing import Literal, get_args

import numpy as np

from ..errors import SteradianError, shown
from ..units import C0
from ..validate import choice, nonneg, positive
from ._base import Element, spherical_basis, unit_vectors

__all__ = ["Isotropic", "CosinePower", "Dipole", "ShortDipole", "HalfWaveDipole",
           "MAX_DIPOLE_WL"]

_SHORT_KL2 = 1e-6
"""Below kL/2 = 1e-6 the finite-length factor equals the short-dipole sin(psi) to within
(kL)^2 < 1e-11 relative (the finite-length dipole field of Balanis ch. 4
expanded in kL), and is used as such, so a wire
of 1e-320 wavelengths does not normalise 0/0."""

MAX_DIPOLE_WL = 1000.0
"""Longest dipole element, in wavelengths at its frequency: the peak of the normalisation is
found on 20,001 samples of cos(psi), about 20 per lobe at 1,000 wavelengths; a longer wire is
a travelling-wave antenna rather than an array element (and kL/2 past ~1e15 loses every
digit of its phase). Longer ones are refused in one line instead of a math domain error."""

ExponentOn = Literal["power", "field"]

_DEGREE_CAP = 2**53
"""Cap of a model's degree: far past any rule the memory budget allows, so an extreme
exponent or length (even inf) is refused by the rule's size check, not by an overflow."""


def _degree(x: float, extra: int) -> int:
    """ceil(x) + extra, capped at :data:`_DEGREE_CAP` (inf and NaN included)."""
    return int(math.ceil(x)) + extra if x < _DEGREE_CAP else _DEGREE_CAP


class Isotropic(Element):
    """Isotropic point source (scalar): unit field in every direction. D = 1."""

    vector = False

    def pattern(self, theta, phi):
        theta = np.asarray(theta, float)
        return np.ones(theta.shape, complex), np.zeros(theta.shape, complex)

    def describe(self):
        return {"model": "isotropic"}


class CosinePower(Element):
    r"""Front-half-space cosine-power element (scalar).

    The **power** pattern is :math:`\cos^q\theta` for :math:`\theta < 90^\circ` and zero behind
    (``exponent_on="power"``, the default). With ``exponent_on="field"`` the exponent applies to
    the field, so the power pattern is :math:`\cos^{2q}\theta`.

    Parameters
    ----------
    q : float
        Exponent, >= 0.
    exponent_on : {"power", "field"}
        Which quantity ``q`` is the exponent of.

    Notes
    -----
    Directivity of the power pattern :math:`\cos^q\theta` on the front half-space is
    :math:`D = 2(q+1)` (integrate :math:`\int_0^{\pi/2}\cos^q\theta\sin\theta\,d\theta = 1/(q+1)`).
    """

    vector = False
    front_only = True

    def __init__(self, q: float = 1.0, exponent_on: ExponentOn = "power"):
        self.q = nonneg("element.q", q)
        self.exponent_on = choice("element.exponent_on", exponent_on, get_args(ExponentOn))

    @property
    def power_exponent(self) -> float:
        """Exponent of cos(theta) in the power pattern."""
        return self.q if self.exponent_on == "power" else 2 * self.q

    def pattern(self, theta, phi):
        c = np.cos(np.asarray(theta, float))
        f = np.where(c > 0, np.abs(c) ** (self.power_exponent / 2), 0.0)
        return f.astype(complex), np.zeros(c.shape, complex)

    def degree(self, k):
        return _degree(self.power_exponent, 2)

    def describe(self):
        return {"model": "cosine_power", "q": self.q, "exponent_on": self.exponent_on}


class Dipole(Element):
    r"""Thin centre-fed wire dipole of length ``length`` along a local axis.

    The far field of a sinusoidal current distribution (Balanis, *Antenna Theory*, 4th ed.,
    2016, eq. 4-62):

    .. math:: E \propto \frac{\cos(\tfrac{kL}{2}\cos\psi) - \cos(\tfrac{kL}{2})}{\sin\psi}

    where :math:`\psi` is the angle from the dipole axis; the field is polarised along the
    projection of the axis on the plane transverse to the direction. ``length=None`` gives the
    short (Hertzian) dipole, :math:`E \propto \sin\psi`.

    Parameters
    ----------
    length : float or None
        Physical length in metres (``None``: infinitesimal).
    axis : sequence of 3 floats or {"x", "y", "z"}
        Dipole axis in the element's local frame.
    frequency : float
        Frequency in Hz at which ``length`` is evaluated (needed unless ``length`` is None).
    speed : float
        Propagation speed (m/s).

    References
    ----------
    C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, ch. 4.
    """

    def __init__(self, length: float | None = None, axis="z", frequency: float | None = None,
                 speed: float = C0):
        if isinstance(axis, str):
            ax = {"x": (1, 0, 0), "y": (0, 1, 0), "z": (0, 0, 1)}.get(axis)
            if ax is None:
                raise ValueError(f"element.axis must be 'x', 'y', 'z' or 3 numbers, got "
                                 f"{shown(axis)}")
            axis = ax
        a = np.asarray(axis, float).reshape(3)
        if not np.all(np.isfinite(a)) or np.linalg.norm(a) == 0:
            raise ValueError(f"element.axis must be a non-zero finite vector, got {shown(axis)}")
        self.axis = a / np.linalg.norm(a)
        self.length = None if length is None else positive("element.length", length, " m")
        self.speed = speed
        self.frequency = frequency
        if self.length is not None:
            f = positive("frequency", frequency, " Hz")
            wl = self.length / positive("speed", speed, " m/s") * f
            if not wl <= MAX_DIPOLE_WL:
                size = f"{wl:.3g}" if math.isfinite(wl) else "more than 1e308"
                raise SteradianError(f"element.length = {self.length:.6g} m is {size} "
                                     f"wavelengths at {f:g} Hz; a dipole element is at most "
                                     f"{MAX_DIPOLE_WL:g} wavelengths long")
            self._kl2 = math.pi * f / speed * self.length  # k L / 2
            self._norm = self._peak()
        else:
            self._kl2 = 0.0
            self._norm = 1.0

    def _shape(self, cpsi: np.ndarray) -> np.ndarray:
        """Field magnitude factor as a function of cos(psi), before normalisation."""
        s2 = np.clip(1.0 - cpsi**2, 0.0, None)
        if self.length is None or self._kl2 < _SHORT_KL2:
            return np.sqrt(s2)
        s = np.sqrt(s2)
        # cos(x c) - cos(x) as a product, free of cancellation for short wires
        x = self._kl2
        num = 2.0 * np.sin(0.5 * x * (1.0 + cpsi)) * np.sin(0.5 * x * (1.0 - cpsi))
        with np.errstate(invalid="ignore", divide="ignore"):
            f = np.where(s > 1e-12, num / np.where(s > 1e-12, s, 1.0), 0.0)
        return f

    def _peak(self) -> float:
        c = np.linspace(-1, 1, 20001)
        return float(np.abs(self._shape(c)).max())

    def pattern(self, theta, phi):
        theta = np.asarray(theta, float)
        phi = np.asarray(phi, float)
        r = unit_vectors(theta, phi)
        cpsi = r @ self.axis
        f = self._shape(cpsi) / self._norm
        # Polarisation: projection of the axis transverse to r, normalised.
        t = self.axis - cpsi[..., None] * r
        tn = np.linalg.norm(t, axis=-1)
        with np.errstate(invalid="ignore", divide="ignore"):
            t = np.where(tn[..., None] > 1e-12, t / np.where(tn > 1e-12, tn, 1.0)[..., None], 0.0)
        th, ph = spherical_basis(theta, phi)
        e_th = f * (t * th).sum(axis=-1)
        e_ph = f * (t * ph).sum(axis=-1)
        return e_th.astype(complex), e_ph.astype(complex)

    def degree(self, k):
        return _degree(2 * self._kl2, 12)

    def at_frequency(self, frequency):
        if self.length is None:
            return self
        return Dipole(self.length, self.axis, frequency, self.speed)

    def describe(self):
        return {"model": "dipole", "length_m": self.length, "axis": self.axis.tolist()}


def ShortDipole(axis="z") -> Dipole:  # noqa: N802 - factory reads like a class
    """Infinitesimal (Hertzian) dipole along ``axis``: D = 1.5 (1.76 dBi)."""
    return Dipole(None, axis)


def HalfWaveDipole(frequency: float, axis="z", speed: float = C0) -> Dipole:  # noqa: N802
    """Half-wave dipole at ``frequency``: D = 1.64 (2.15 dBi)."""
    lam = speed / positive("frequency", frequency, " Hz")
    return Dipole(lam / 2, axis, frequency, speed)
