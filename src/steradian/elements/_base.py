"""Element-model interface and the helpers every model shares (the direction helpers are
:mod:`steradian.directions`'s, re-exported for the models)."""

from __future__ import annotations

from abc import ABC, abstractmethod

import numpy as np

from ..directions import angles_of, spherical_basis, unit_vectors

__all__ = ["Element", "element_power", "unit_vectors", "spherical_basis", "angles_of"]


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


def element_power(element: Element, k: float | None = None) -> float:
    """Integral of ``|E_theta|^2 + |E_phi|^2`` of ``element`` over the sphere (or its front
    half-space), by a Gauss-Legendre x uniform rule sized from :meth:`Element.degree`.

    ``k`` is the wavenumber (rad/m) for frequency-dependent models. ``4 pi / element_power``
    scales the peak-normalised power pattern to directivity (lossless element).
    """
    from ..sphere import sphere_rule

    n = max(element.degree(k) // 2 + 40, 64)
    rule = sphere_rule(n, 2 * n, front_only=element.front_only)
    t, p = np.meshgrid(rule.theta, rule.phi, indexing="ij")
    a, b = element.pattern(t, p)
    return rule.integrate(np.abs(a) ** 2 + np.abs(b) ** 2)
