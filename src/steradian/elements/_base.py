"""Element-model interface and the helpers every model shares."""

from __future__ import annotations

from abc import ABC, abstractmethod

import numpy as np

__all__ = ["Element", "unit_vectors", "spherical_basis"]


class Element(ABC):
    """A radiating element's far field in its own (local) frame.

    Subclasses implement :meth:`pattern`, returning the complex far-field components
    ``(E_theta, E_phi)`` at local angles, normalised so the peak of
    ``|E_theta|^2 + |E_phi|^2`` over the sphere is 1. Scalar models (no polarisation, e.g. the
    isotropic point source or an acoustic transducer) return their field in ``E_theta`` and zero
    in ``E_phi`` and set ``vector = False``; their contributions add as scalars.

    Attributes
    ----------
    vector : bool
        True for polarised (vector) models.
    front_only : bool
        True when the model radiates only into its local front half-space (z > 0); the
        integrator then splits its theta rule at the horizon.
    """

    vector: bool = True
    front_only: bool = False

    @abstractmethod
    def pattern(self, theta: np.ndarray, phi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Return ``(E_theta, E_phi)`` (complex arrays shaped like ``theta``) at local angles."""

    def degree(self, k: float) -> int:
        """Spherical-harmonic degree beyond which the power pattern has negligible content.

        Used to size quadrature rules. ``k`` is the wavenumber (rad/m) for models whose pattern
        depends on frequency.
        """
        return 0

    def describe(self) -> dict:
        """JSON-friendly description (model name and parameters)."""
        return {"model": type(self).__name__}

    def at_frequency(self, frequency: float) -> Element:
        """The model at another frequency (default: unchanged)."""
        return self


def unit_vectors(theta, phi) -> np.ndarray:
    """Unit direction vectors for angles in radians, shape ``theta.shape + (3,)``."""
    st = np.sin(theta)
    return np.stack([st * np.cos(phi), st * np.sin(phi), np.cos(theta)], axis=-1)


def spherical_basis(theta, phi) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors theta-hat and phi-hat, each shape ``theta.shape + (3,)``."""
    ct, st = np.cos(theta), np.sin(theta)
    cp, sp = np.cos(phi), np.sin(phi)
    th = np.stack([ct * cp, ct * sp, -st], axis=-1)
    ph = np.stack([-sp, cp, np.zeros_like(sp)], axis=-1)
    return th, ph


def angles_of(vectors: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Angles (theta, phi) in radians of unit vectors, shape (..., 3)."""
    v = np.asarray(vectors, float)
    theta = np.arccos(np.clip(v[..., 2], -1.0, 1.0))
    phi = np.arctan2(v[..., 1], v[..., 0])
    return theta, phi
