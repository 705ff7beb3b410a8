r"""Upper masks: a sidelobe envelope as a function of the angle from the beam direction.

A :class:`Mask` gives a level in dB at each off-axis angle :math:`\gamma` (degrees from the
beam direction), either relative to the main-beam peak (``absolute=False``, dB) or as an
absolute directivity (``absolute=True``, dBi). Angles below the mask's start are not
constrained by it (the main lobe lives there).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..directions import angles_deg, unit_vectors
from ..errors import SteradianError
from ..validate import finite_array, positive

__all__ = ["Mask", "Null", "Notch", "itu_s465"]


@dataclass(frozen=True, eq=False)
class Mask:
    """Sidelobe envelope: level (dB or dBi) as a function of off-axis angle (degrees).

    Build one with :meth:`table` (piecewise-linear in dB between tabulated angles) or
    :meth:`log_envelope` (the regulatory form :math:`A - B\\log_{10}\\gamma` dBi).

    Attributes
    ----------
    level : callable
        ``level(gamma_deg) -> dB`` for an array of angles, ``+inf`` where unconstrained.
    absolute : bool
        True when levels are directivities in dBi; False for dB relative to the peak.
    start_deg : float
        Smallest constrained angle.
    description : str
        Human-readable summary (for reports).
    """

    level: Callable
    absolute: bool
    start_deg: float
    description: str

    @classmethod
    def table(cls, angles_deg, levels_db, absolute: bool = False) -> Mask:
        """Piecewise-linear mask through (angle, level) points, held flat after the last."""
        a = finite_array("mask angles", angles_deg).reshape(-1)
        lv = finite_array("mask levels", levels_db).reshape(-1)
        if len(a) != len(lv) or len(a) == 0:
            raise SteradianError(f"mask needs equal, non-zero numbers of angles and levels, got "
                                 f"{len(a)} and {len(lv)}")
        if np.any(np.diff(a) <= 0) or a[0] < 0 or a[-1] > 180:
            raise SteradianError("mask angles must increase strictly within [0, 180] degrees")

        def level(g):
            g = np.asarray(g, float)
            out = np.interp(g, a, lv)
            return np.where(g < a[0], np.inf, out)

        unit = "dBi" if absolute else "dB"
        pts = ", ".join(f"{x:g} deg: {y:g} {unit}" for x, y in zip(a, lv, strict=True))
        return cls(level, bool(absolute), float(a[0]), f"table ({pts})")

    @classmethod
    def log_envelope(cls, a_dbi: float, b: float, start_deg: float,
                     floor_dbi: float | None = None, name: str = "") -> Mask:
        r"""Absolute envelope :math:`G(\gamma) = A - B\log_{10}\gamma` dBi for
        :math:`\gamma \ge` ``start_deg``, never below ``floor_dbi`` when given."""
        s = positive("mask start_deg", start_deg, " deg")
        bb = float(b)
        aa = float(a_dbi)

        def level(g):
            g = np.asarray(g, float)
            out = aa - bb * np.log10(np.maximum(g, 1e-12))
            if floor_dbi is not None:
                out = np.maximum(out, float(floor_dbi))
            return np.where(g < s, np.inf, out)

        fl = f", floor {floor_dbi:g} dBi" if floor_dbi is not None else ""
        desc = name or f"{aa:g} - {bb:g} log10(gamma) dBi from {s:g} deg{fl}"
        return cls(level, True, s, desc)

    def relative_db(self, gamma_deg, peak_dbi: float | None = None) -> np.ndarray:
        """Levels relative to the peak (dB); absolute masks need the peak directivity."""
        lv = self.level(gamma_deg)
        if self.absolute:
            if peak_dbi is None:
                raise SteradianError("an absolute (dBi) mask needs the peak directivity")
            return lv - peak_dbi
        return lv


def itu_s465(d_over_lambda: float | None = None) -> Mask:
    r"""Reference sidelobe envelope of Recommendation ITU-R S.465-6 (earth-station antennas).

    :math:`G = 32 - 25\log_{10}\gamma` dBi for :math:`\gamma_{min} \le \gamma < 48^\circ` and
    -10 dBi from 48 to 180 degrees, with :math:`\gamma_{min} = \max(1^\circ, 100\lambda/D)`
    for :math:`D/\lambda \ge 50` and :math:`\max(2^\circ, 114 (D/\lambda)^{-1.09})` below
    (D the antenna diameter). Without ``d_over_lambda`` the start is 1 degree.

    Notes
    -----
    Transcribed from memory of ITU-R S.465-6 (01/2010), "Reference radiation pattern of
    earth station antennas in the fixed-satellite service for use in coordination and
    interference assessment in the frequency range from 2 to 31 GHz"; check the edition in
    force before regulatory use. Applying it as an optimizer mask about the beam direction is
    a design choice (the Recommendation defines the envelope about the main-beam axis).
    """
    if d_over_lambda is None:
        start = 1.0
    else:
        r = positive("d_over_lambda", d_over_lambda)
        start = max(1.0, 100.0 / r) if r >= 50 else max(2.0, 114.0 * r ** -1.09)
    return Mask.log_envelope(32.0, 25.0, start, floor_dbi=-10.0,
                             name=f"ITU-R S.465-6: 32 - 25 log10(gamma) dBi from {start:g} deg, "
                                  "-10 dBi from 48 deg")


@dataclass(frozen=True)
class Null:
    """A null toward (theta, phi) in degrees.

    ``depth_db=None`` asks for an exact zero (an equality constraint); a number (negative, dB
    relative to the main-beam peak) asks for at most that level.
    """

    theta_deg: float
    phi_deg: float
    depth_db: float | None = None

    def __post_init__(self):
        for name in ("theta_deg", "phi_deg"):
            if not math.isfinite(float(getattr(self, name))):
                raise SteradianError(f"null {name} must be finite")
        if self.depth_db is not None and not float(self.depth_db) < 0:
            raise SteradianError(f"null depth_db is a level below the peak (negative), got "
                                 f"{self.depth_db}")


@dataclass(frozen=True)
class Notch:
    """A sector (theta range x phi range, degrees) held at most ``depth_db`` (< 0) below the
    peak: an interference region or a protected arc of satellite positions."""

    theta_deg: tuple[float, float]
    phi_deg: tuple[float, float]
    depth_db: float

    def __post_init__(self):
        t = tuple(float(x) for x in self.theta_deg)
        p = tuple(float(x) for x in self.phi_deg)
        if len(t) != 2 or len(p) != 2 or not all(math.isfinite(x) for x in t + p):
            raise SteradianError("notch theta_deg and phi_deg must be (min, max) pairs")
        if not (0 <= t[0] <= t[1] <= 180) or p[0] > p[1]:
            raise SteradianError(f"notch ranges must satisfy 0 <= theta_min <= theta_max <= 180 "
                                 f"and phi_min <= phi_max, got theta {t}, phi {p}")
        if not float(self.depth_db) < 0:
            raise SteradianError(f"notch depth_db is a level below the peak (negative), got "
                                 f"{self.depth_db}")
        object.__setattr__(self, "theta_deg", t)
        object.__setattr__(self, "phi_deg", p)

    def contains(self, dirs: np.ndarray) -> np.ndarray:
        """Which unit vectors (M, 3) lie in the sector."""
        th, ph = angles_deg(np.asarray(dirs, float).reshape(-1, 3))
        lo, hi = self.phi_deg
        # phi ranges may be given in any 360-degree window: compare modulo 360.
        rel = np.mod(ph - lo, 360.0)
        inphi = rel <= (hi - lo) + 1e-9 if hi - lo < 360 else np.ones(len(ph), bool)
        return (th >= self.theta_deg[0] - 1e-9) & (th <= self.theta_deg[1] + 1e-9) & inphi

    def samples(self, spacing_rad: float) -> np.ndarray:
        """Directions covering the sector at about ``spacing_rad`` (edges included)."""
        t0, t1 = np.radians(self.theta_deg)
        p0, p1 = np.radians(self.phi_deg)
        nt = max(int(math.ceil((t1 - t0) / spacing_rad)) + 1, 2)
        th = np.linspace(t0, t1, nt)
        out = []
        for t in th:
            arc = (p1 - p0) * max(math.sin(t), 1e-3)
            npp = max(int(math.ceil(arc / spacing_rad)) + 1, 2)
            ph = np.linspace(p0, p1, npp)
            out.append(unit_vectors(np.full(npp, t), ph))
        return np.concatenate(out)
