r"""Quadrature on the sphere: Gauss-Legendre in cos(theta) times a uniform rule in phi.

The radiation intensity of elements inside a sphere of radius R about the phase centre is
band limited to spherical-harmonic degree about :math:`L = 2kR` plus the element pattern's
own degree. A Gauss-Legendre rule with :math:`n_\theta` nodes in :math:`\cos\theta`
integrates polynomials up to degree :math:`2n_\theta - 1` exactly and the uniform
:math:`n_\phi`-point rule integrates trigonometric polynomials up to degree
:math:`n_\phi - 1` exactly, so :math:`n_\theta = \lceil L/2\rceil + c` and
:math:`n_\phi = \lceil L\rceil + 2c` integrate the pattern to near machine precision with a
margin c (default 20: measured residual 1e-11 to 1e-15 relative for random planar arrays).

References
----------
P. J. Davis and P. Rabinowitz, *Methods of Numerical Integration*, 2nd ed., Academic Press,
1984, sec. 2.7 (Gauss-Legendre) and sec. 5.6 (product rules on the sphere).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .grids import ThetaPhiGrid

__all__ = ["SphereRule", "sphere_rule", "rule_for"]

DEFAULT_MARGIN = 20


@dataclass(frozen=True, eq=False)
class SphereRule:
    """A product rule: nodes ``theta`` x ``phi`` with weights ``w_theta`` x ``w_phi``.

    ``integrate(f)`` with ``f`` of shape (n_theta, n_phi) approximates
    :math:`\\int f\\,d\\Omega`.
    """

    theta: np.ndarray
    w_theta: np.ndarray
    phi: np.ndarray
    w_phi: float
    front_only: bool = False

    @property
    def n_theta(self) -> int:
        return len(self.theta)

    @property
    def n_phi(self) -> int:
        return len(self.phi)

    @property
    def grid(self) -> ThetaPhiGrid:
        """The nodes as a :class:`ThetaPhiGrid`."""
        return ThetaPhiGrid(self.theta, self.phi)

    def integrate(self, values: np.ndarray) -> float:
        """Integral over the sphere of samples at the nodes, shape (n_theta, n_phi)."""
        v = np.asarray(values).reshape(self.n_theta, self.n_phi)
        return float(self.w_theta @ v.sum(axis=1) * self.w_phi)


def sphere_rule(n_theta: int, n_phi: int, front_only: bool = False) -> SphereRule:
    """Gauss-Legendre(cos theta) x uniform(phi) rule on the sphere or the front hemisphere."""
    x, wx = np.polynomial.legendre.leggauss(int(n_theta))
    if front_only:  # map [-1, 1] onto cos(theta) in [0, 1]
        x = 0.5 * (x + 1.0)
        wx = 0.5 * wx
    theta = np.arccos(x)[::-1].copy()
    wt = wx[::-1].copy()
    n_phi = int(n_phi)
    phi = 2 * np.pi * np.arange(n_phi) / n_phi
    return SphereRule(theta, wt, phi, 2 * np.pi / n_phi, front_only)


def rule_for(array, frequency: float | None = None, margin: int = DEFAULT_MARGIN) -> SphereRule:
    """Rule sized for ``array``'s band limit (electrical radius and element degree).

    Front-half-space elements with a common orientation get a rule on the front hemisphere
    only (the split at the horizon), where their pattern is smooth.
    """
    kr = array.electrical_radius(frequency)
    el = array.element_at(frequency)
    L = 2 * kr + el.degree(array.k(frequency))
    n_theta = math.ceil(L / 2) + margin
    n_phi = math.ceil(L) + 2 * margin
    front = el.front_only and array.geometry.orientations is None
    return sphere_rule(n_theta, n_phi, front_only=front)
