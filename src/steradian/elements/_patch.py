r"""Rectangular microstrip patch on a ground plane: the two-slot (cavity) model.

Local frame: the patch lies in the x-y plane over an infinite ground plane, radiating into
z > 0. Its resonant length L runs along local x (so the E-plane is the x-z plane and the field
at broadside is x-polarised) and its width W along local y (H-plane: the y-z plane).
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import SteradianError, shown
from ..units import C0
from ..validate import doubtful, positive
from ._base import Element
from ._table import peak_intensity

__all__ = ["Patch", "effective_permittivity", "length_extension", "PATCH_SIZE_WL", "MAX_EPS_R"]

PATCH_SIZE_WL = (1e-6, 10.0)
"""Width, length and substrate height of a patch, in free-space wavelengths, must lie in this
range: real patches are about half a wavelength wide on substrates 0.003 to 0.05 wavelength
thick (common practice); far outside it the transmission-line model means nothing and its
formulas overflow or divide 0 by 0 (a unit slip or a hostile file)."""

MAX_EPS_R = 1e4
"""Largest substrate permittivity accepted (ferroelectric ceramics reach a few thousand;
common practice)."""


def _check_sizes(frequency: float, speed: float, eps_r: float, **dims) -> None:
    """Refuse a permittivity above :data:`MAX_EPS_R` or a dimension outside
    :data:`PATCH_SIZE_WL` (in wavelengths at ``frequency``), naming the key."""
    if eps_r > MAX_EPS_R:
        raise SteradianError(f"element.eps_r must be at most {MAX_EPS_R:g}, got {eps_r:g}")
    lo, hi = PATCH_SIZE_WL
    for name, v in dims.items():
        wl = v / speed * frequency
        if not lo <= wl <= hi:
            size = f"{wl:.3g}" if math.isfinite(wl) else "more than 1e308"
            raise SteradianError(f"element.{name} = {v:.6g} m is {size} wavelengths at "
                                 f"{frequency:g} Hz; a patch dimension must be {lo:g} to "
                                 f"{hi:g} wavelengths")


def effective_permittivity(eps_r: float, height_m: float, width_m: float) -> float:
    r"""Effective relative permittivity of a microstrip line of width W on height h.

    .. math:: \varepsilon_{reff} = \frac{\varepsilon_r + 1}{2}
              + \frac{\varepsilon_r - 1}{2}\left(1 + 12\frac{h}{W}\right)^{-1/2}

    valid for W/h > 1 (the transmission-line model of the patch).

    References
    ----------
    C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, sec. 14.2.1
    (transmission-line model, effective dielectric constant).
    """
    return (eps_r + 1) / 2 + (eps_r - 1) / 2 / math.sqrt(1 + 12 * height_m / width_m)


def length_extension(eps_eff: float, height_m: float, width_m: float) -> float:
    r"""Fringing length extension :math:`\Delta L` of each radiating edge (metres).

    Hammerstad's fit:

    .. math:: \frac{\Delta L}{h} = 0.412\,
              \frac{(\varepsilon_{reff} + 0.3)(W/h + 0.264)}
                   {(\varepsilon_{reff} - 0.258)(W/h + 0.8)}

    References
    ----------
    E. O. Hammerstad, "Equations for microstrip circuit design," *Proc. 5th European
    Microwave Conf.*, Hamburg, 1975, pp. 268-272; as given in C. A. Balanis, *Antenna Theory*,
    4th ed., Wiley, 2016, sec. 14.2.1.
    """
    wh = width_m / height_m
    return 0.412 * height_m * (eps_eff + 0.3) * (wh + 0.264) / ((eps_eff - 0.258) * (wh + 0.8))


class Patch(Element):
    r"""Rectangular microstrip patch (TM\ :sub:`010` mode), two-slot cavity model.

    Two radiating slots of width W and height h, a distance :math:`L_e = L + 2\Delta L` apart
    along local x, radiate over an infinite ground plane. With direction cosines
    :math:`u = \sin\theta\cos\phi`, :math:`v = \sin\theta\sin\phi`, :math:`w = \cos\theta`
    (local frame) the far field for :math:`w \ge 0` is

    .. math::

        \mathbf E \propto (\hat y \times \hat r)\;
        \frac{\sin X}{X}\,\frac{\sin Z}{Z}\,\cos\!\left(\frac{k L_e}{2} u\right),
        \qquad X = \frac{k h}{2} w,\quad Z = \frac{k W}{2} v,

    that is :math:`E_\theta = F\cos\phi`, :math:`E_\phi = -F\cos\theta\sin\phi`, and zero
    behind the ground plane. This is Balanis' total field of the two slots (his eqs. for the
    cavity-model radiated fields, sec. 14.2.2) rewritten in this frame: his x (the patch
    normal), y (the length) and z (the width) are our z, x and y. The field is normalised so
    the peak of :math:`|E_\theta|^2 + |E_\phi|^2` is 1 (at broadside for any patch shorter
    than a wavelength).

    Parameters
    ----------
    frequency : float
        Frequency in Hz at which the pattern is evaluated.
    width_m : float
        Patch width W (local y), metres.
    length_m : float
        Physical resonant length L (local x), metres.
    eps_r : float
        Substrate relative permittivity (>= 1).
    height_m : float
        Substrate height h, metres.
    speed : float
        Propagation speed in the medium above the patch (m/s), default c0.

    Notes
    -----
    :math:`\varepsilon_{reff}` and :math:`\Delta L` come from the transmission-line model
    (:func:`effective_permittivity`, :func:`length_extension`); they are quasi-static, so
    :meth:`at_frequency` only changes k. The model ignores surface waves, the finite ground
    plane and mutual coupling, as the cavity model does.

    References
    ----------
    C. A. Balanis, *Antenna Theory: Analysis and Design*, 4th ed., Wiley, 2016, ch. 14
    (sec. 14.2.1 transmission-line model; sec. 14.2.2 cavity model, radiated fields and
    directivity).

    Examples
    --------
    Balanis' design example (eps_r = 2.2, h = 0.1588 cm, 10 GHz) gives W = 1.186 cm and
    L = 0.906 cm:

    >>> p = Patch.resonant(10e9, 2.2, 1.588e-3)
    >>> round(p.width_m * 100, 3), round(p.length_m * 100, 3)
    (1.185, 0.905)
    """

    vector = True
    front_only = True

    def __init__(self, frequency: float, width_m: float, length_m: float, eps_r: float,
                 height_m: float, speed: float = C0):
        self.frequency = positive("frequency", frequency, " Hz")
        self.width_m = positive("element.width_m", width_m, " m")
        self.length_m = positive("element.length_m", length_m, " m")
        self.height_m = positive("element.height_m", height_m, " m")
        self.speed = positive("speed", speed, " m/s")
        er = positive("element.eps_r", eps_r)
        if er < 1:
            raise SteradianError(f"element.eps_r must be at least 1, got eps_r={shown(eps_r)}")
        self.eps_r = er
        _check_sizes(self.frequency, self.speed, er, width_m=self.width_m,
                     length_m=self.length_m, height_m=self.height_m)
        if self.width_m < self.height_m:
            doubtful(f"patch width W={self.width_m} m is less than the substrate height "
                     f"h={self.height_m} m: the transmission-line formulas assume W/h > 1")
        self.eps_eff = effective_permittivity(er, self.height_m, self.width_m)
        self.delta_l = length_extension(self.eps_eff, self.height_m, self.width_m)
        self.effective_length_m = self.length_m + 2 * self.delta_l
        self._k = 2 * math.pi * self.frequency / self.speed
        self._norm = 1.0
        peak = peak_intensity(self._raw, front_only=True, starts=[(0.0, 0.0, 1.0)])
        self._norm = 1.0 / math.sqrt(peak)

    @classmethod
    def resonant(cls, frequency: float, eps_r: float, height_m: float,
                 width_m: float | None = None) -> Patch:
        r"""Patch designed to resonate (TM\ :sub:`010`) at ``frequency``.

        Width, unless given, by the usual radiation-efficiency formula
        :math:`W = \frac{c_0}{2 f_r}\sqrt{2/(\varepsilon_r + 1)}`; length
        :math:`L = \frac{c_0}{2 f_r \sqrt{\varepsilon_{reff}}} - 2\Delta L`.

        References
        ----------
        C. A. Balanis, *Antenna Theory*, 4th ed., Wiley, 2016, sec. 14.2.1 (design procedure).
        """
        f = positive("frequency", frequency, " Hz")
        er = positive("element.eps_r", eps_r)
        h = positive("element.height_m", height_m, " m")
        if er < 1:
            raise SteradianError(f"element.eps_r must be at least 1, got eps_r={shown(eps_r)}")
        if width_m is None:
            w = C0 / (2 * f) * math.sqrt(2 / (er + 1))
        else:
            w = positive("element.width_m", width_m, " m")
        _check_sizes(f, C0, er, height_m=h, width_m=w)
        ee = effective_permittivity(er, h, w)
        length = C0 / (2 * f * math.sqrt(ee)) - 2 * length_extension(ee, h, w)
        if length <= 0:
            raise SteradianError(
                f"no resonant length: substrate height h={h} m is too large for "
                f"frequency={f} Hz (the fringing extension exceeds half a guided wavelength)")
        return cls(f, w, length, er, h)

    @property
    def resonant_frequency(self) -> float:
        r"""TM\ :sub:`010` resonance :math:`c_0 / (2 L_e \sqrt{\varepsilon_{reff}})` (Hz)."""
        return C0 / (2 * self.effective_length_m * math.sqrt(self.eps_eff))

    def _raw(self, theta, phi):
        theta = np.asarray(theta, float)
        phi = np.asarray(phi, float)
        st, ct = np.sin(theta), np.cos(theta)
        cp, sp = np.cos(phi), np.sin(phi)
        k = self._k
        u, v = st * cp, st * sp
        # np.sinc(x) = sin(pi x)/(pi x)
        f = (np.sinc(k * self.height_m * ct / (2 * np.pi))
             * np.sinc(k * self.width_m * v / (2 * np.pi))
             * np.cos(k * self.effective_length_m * u / 2))
        f = np.where(ct >= 0, f * self._norm, 0.0)
        return (f * cp).astype(complex), (-f * ct * sp).astype(complex)

    def pattern(self, theta, phi):
        return self._raw(theta, phi)

    def degree(self, k):
        # The field is a product of entire functions of the direction cosines with
        # "frequencies" k Le/2 (in u), k W/2 (in v), k h/2 (in w), times a degree-1
        # polarisation factor, so its power pattern is effectively band limited to about
        # k (Le + W + h) plus a Taylor tail. 1.2 x that + 12 is the degree beyond which the
        # content is below 1e-13 (measured on the hemisphere rule for patches up to 3
        # wavelengths wide; checked in the tests).
        k = self._k if k is None else k
        s = k * (self.effective_length_m + self.width_m + self.height_m)
        return int(math.ceil(1.2 * s)) + 12

    def at_frequency(self, frequency):
        return Patch(frequency, self.width_m, self.length_m, self.eps_r, self.height_m,
                     self.speed)

    def describe(self):
        return {"model": "patch", "frequency_hz": self.frequency, "width_m": self.width_m,
                "length_m": self.length_m, "eps_r": self.eps_r, "height_m": self.height_m,
                "eps_eff": self.eps_eff, "effective_length_m": self.effective_length_m,
                "resonant_frequency_hz": self.resonant_frequency}
