"""The Array value object: geometry + element model + weights at a design frequency."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal, get_args

import numpy as np

from .directions import unit_vectors_deg
from .elements import Element, Isotropic
from .errors import SteradianError
from .geometry import Geometry
from .units import C0
from .validate import choice, finite_array, positive, restore_frozen

__all__ = ["Array", "Steering", "direction", "steering_phases", "check_frequency",
           "FREQUENCY_RATIO_LIMIT"]

FREQUENCY_RATIO_LIMIT = 100.0
"""An evaluation frequency more than this factor above or below the design frequency is
refused by :func:`check_frequency`: the widest-band arrays in use cover about a decade, while
a unit slip (Hz for kHz, MHz or GHz) is a factor of 1000 or more (common practice)."""

SteerMode = Literal["phase", "delay"]


def direction(theta_deg: float, phi_deg: float) -> np.ndarray:
    """Unit vector for angles in degrees (theta from +z, phi from +x toward +y)."""
    return unit_vectors_deg(float(theta_deg), float(phi_deg))


def check_frequency(frequency: float, design_frequency: float,
                    name: str = "frequency") -> float:
    """``frequency`` (Hz) checked against the design frequency, as a float.

    Raises
    ------
    SteradianError
        When it is not a positive finite number, or more than :data:`FREQUENCY_RATIO_LIMIT`
        times above or below ``design_frequency`` (a unit slip: ``28`` meant as GHz is 28 Hz).
    """
    f = positive(name, frequency, " Hz")
    ratio = f / float(design_frequency)
    if not 1.0 / FREQUENCY_RATIO_LIMIT <= ratio <= FREQUENCY_RATIO_LIMIT:
        side = ((f"{1 / ratio:.3g}" if ratio > 1e-300 else "more than 1e300") + " times below"
                if ratio < 1 else f"{ratio:.3g} times above")
        raise SteradianError(
            f"{name} = {f:g} Hz is {side} the design frequency {design_frequency:g} Hz (more "
            f"than {FREQUENCY_RATIO_LIMIT:g}x away; frequencies are in Hz, e.g. 28e9 for "
            "28 GHz)")
    return f


@dataclass(frozen=True)
class Steering:
    """Beam steering to direction (theta, phi) in degrees.

    ``mode="phase"``: phase shifters set at the design frequency, so the beam squints when the
    array is evaluated at another frequency. ``mode="delay"``: true time delay, no squint.
    """

    theta_deg: float = 0.0
    phi_deg: float = 0.0
    mode: SteerMode = "phase"

    def __post_init__(self):
        choice("steering.mode", self.mode, get_args(SteerMode))
        for name in ("theta_deg", "phi_deg"):
            v = float(getattr(self, name))
            if not np.isfinite(v):
                raise SteradianError(f"steering.{name} must be finite, got {v}")
            object.__setattr__(self, name, v)
        if not 0.0 <= self.theta_deg <= 180.0:
            raise SteradianError(f"steering.theta_deg must be in [0, 180], got {self.theta_deg}")

    @property
    def unit(self) -> np.ndarray:
        """Steering direction as a unit vector."""
        return direction(self.theta_deg, self.phi_deg)


def steering_phases(positions: np.ndarray, unit: np.ndarray, k: float) -> np.ndarray:
    """Phase factors ``exp(-j k r0 . r_n)`` that point the beam along ``unit``."""
    return np.exp(-1j * k * (positions @ np.asarray(unit, float)))


@dataclass(frozen=True, eq=False)
class Array:
    """A phased array: where the elements are, what they radiate, how they are driven.

    Parameters
    ----------
    geometry : Geometry
        Element positions (m), orientations and lattice.
    frequency : float
        Design frequency in Hz (phase-shifter settings are computed here).
    element : Element
        Element model shared by every element (default isotropic).
    taper : array_like of complex, shape (N,), optional
        Excitation before steering (amplitude and any fixed phase). Default uniform ones.
    steering : Steering, optional
        Beam direction; ``None`` means no steering phases are applied.
    enabled : array_like of bool, shape (N,), optional
        Element on/off mask; disabled elements get zero weight.
    speed : float
        Propagation speed in m/s (default c0; set it for acoustic arrays).
    """

    geometry: Geometry
    frequency: float
    element: Element = None  # type: ignore[assignment]
    taper: np.ndarray | None = None
    steering: Steering | None = None
    enabled: np.ndarray | None = None
    speed: float = C0

    def __post_init__(self):
        if not isinstance(self.geometry, Geometry):
            raise SteradianError("geometry must be a steradian.Geometry")
        object.__setattr__(self, "frequency", positive("frequency", self.frequency, " Hz"))
        object.__setattr__(self, "speed", positive("speed", self.speed, " m/s"))
        if self.element is None:
            object.__setattr__(self, "element", Isotropic())
        n = self.geometry.n
        if self.taper is None:
            t = np.ones(n, complex)
        else:
            t = finite_array("taper", self.taper, dtype=complex).reshape(-1)
            if t.shape != (n,):
                raise SteradianError(f"taper has {t.size} weights but the array has {n} elements")
        t = t.copy()
        t.setflags(write=False)
        object.__setattr__(self, "taper", t)
        if self.enabled is not None:
            m = np.asarray(self.enabled, bool).reshape(-1)
            if m.shape != (n,):
                raise SteradianError(f"enabled mask has {m.size} entries, array has {n} elements")
            if not m.any():
                raise SteradianError("every element is disabled")
            m = m.copy()
            m.setflags(write=False)
            object.__setattr__(self, "enabled", m)
        if (self.steering is not None and self.element.front_only
                and self.geometry.orientations is None):
            if self.steering.unit[2] <= 0:
                raise SteradianError(
                    f"steering.theta_deg={self.steering.theta_deg} is at or below the horizon "
                    "of a front-half-space element (must be < 90)")

    # ---- derived quantities -------------------------------------------------------------
    @property
    def n(self) -> int:
        """Number of elements (enabled or not)."""
        return self.geometry.n

    @property
    def positions(self) -> np.ndarray:
        """Element positions (m), shape (N, 3)."""
        return self.geometry.positions

    @property
    def wavelength(self) -> float:
        """Wavelength at the design frequency (m)."""
        return self.speed / self.frequency

    def k(self, frequency: float | None = None) -> float:
        """Wavenumber (rad/m) at ``frequency`` (default: the design frequency)."""
        f = self.frequency if frequency is None else positive("frequency", frequency, " Hz")
        return 2 * np.pi * f / self.speed

    def weights(self, frequency: float | None = None) -> np.ndarray:
        """Complex excitation of every element at ``frequency``.

        Phase steering uses the design-frequency wavenumber (the beam squints off-frequency);
        true-time-delay steering uses the wavenumber at ``frequency``.
        """
        w = np.array(self.taper, complex)
        if self.enabled is not None:
            w = np.where(self.enabled, w, 0.0)
        if self.steering is not None:
            k = self.k(frequency) if self.steering.mode == "delay" else self.k()
            w = w * steering_phases(self.positions, self.steering.unit, k)
        return w

    def element_at(self, frequency: float | None = None) -> Element:
        """Element model at ``frequency``."""
        return self.element if frequency is None else self.element.at_frequency(frequency)

    def __setstate__(self, state):
        restore_frozen(self, state)

    def with_taper(self, taper) -> Array:
        """Copy with another taper."""
        return replace(self, taper=np.asarray(taper, complex))

    def with_steering(self, steering: Steering | None) -> Array:
        """Copy steered elsewhere (``None``: unsteered)."""
        return replace(self, steering=steering)

    def electrical_radius(self, frequency: float | None = None) -> float:
        """k R, R the largest element distance from the centroid of the enabled elements."""
        pos = self.positions if self.enabled is None else self.positions[self.enabled]
        c = pos.mean(axis=0)
        return self.k(frequency) * float(np.sqrt(((pos - c) ** 2).sum(axis=1)).max())
