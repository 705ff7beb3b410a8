r"""Tabulated embedded element patterns: one pattern per element or per element class
(centre, edge, corner), each with its phase referenced to its own element's position.

An embedded pattern is what one port radiates with every other port terminated in its
reference resistance (Hannan; Pozar 1994). Tables are peak-normalised
(:class:`~steradian.elements.TabulatedElement`), so each element's absolute level comes from
the lossless power balance of a single driven port: the pattern of port m integrates to the
power it accepts alone,

.. math:: \int |e_m|^2 d\Omega = 1 - \sum_n |S_{nm}|^2 ,

and the realized gain of any excitation is
:math:`4\pi |\sum_m a_m e_m(\hat r) e^{jk\hat r\cdot r_m}|^2 / a^H a`. With exact embedded
patterns of a lossless array the power balance then holds for every excitation; with
patterns shared by a class it is a check of how well the class represents its members.

References
----------
P. W. Hannan, "The element-gain paradox for a phased-array antenna," IEEE Trans. Antennas
Propag., vol. 12, no. 4, pp. 423-433, 1964.
D. M. Pozar, "The active element pattern," IEEE Trans. Antennas Propag., vol. 42, no. 8,
pp. 1176-1178, 1994.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..directions import Directions
from ..engine import response_matrix
from ..errors import SteradianError
from ..geometry import Geometry
from ..radiation import radiated_power
from ..sphere import rule_for
from ._model import Coupling

__all__ = ["EmbeddedPatterns", "element_classes", "embedded_coupling", "CLASS_NAMES",
           "embedded_responses", "embedded_power_matrix"]

CLASS_NAMES = ("centre", "edge", "corner")


@dataclass(frozen=True, eq=False)
class EmbeddedPatterns:
    """Per-element embedded patterns: ``elements[index[m]] * amplitude[m]`` is port m's
    realized-gain field (sqrt(W/sr) per sqrt(W) incident), phase at element m."""

    names: tuple
    elements: tuple
    index: np.ndarray
    amplitude: np.ndarray


def element_classes(geometry: Geometry) -> list[str]:
    """"centre", "edge" or "corner" for every element of a lattice layout: an element
    lacking a neighbour along one primitive vector is on an edge, along two on a corner
    (a line's two ends are edges).

    Raises
    ------
    SteradianError
        For a layout without lattice vectors (give ``classes`` per element instead).
    """
    from scipy.spatial import cKDTree

    if geometry.lattice is None:
        raise SteradianError("coupling.patterns: the layout has no lattice to tell centre, "
                             "edge and corner elements apart; list coupling.classes per "
                             "element")
    pos = geometry.positions
    tree = cKDTree(pos)
    tol = 1e-6 * float(np.min(np.linalg.norm(geometry.lattice, axis=1)))
    missing = np.zeros(len(pos), int)
    for a in geometry.lattice:
        gone = np.zeros(len(pos), bool)
        for sign in (1, -1):
            d, _ = tree.query(pos + sign * a, distance_upper_bound=tol)
            gone |= ~np.isfinite(d)
        missing += gone
    return [CLASS_NAMES[min(m, 2)] for m in missing]


def _resolve(name, tables):
    """The table of a class name, falling back corner -> edge -> centre."""
    chain = {"corner": ("corner", "edge", "centre"), "edge": ("edge", "centre")}
    for n in chain.get(name, (name,)):
        if n in tables:
            return n
    raise SteradianError(f"coupling.patterns has no table for class {name!r} (tables: "
                         f"{', '.join(sorted(tables))})")


def embedded_coupling(array, S, z0, tables: dict, classes=None, *, frequency=None,
                      source: str = "") -> Coupling:
    """A :class:`Coupling` with tabulated embedded patterns.

    Parameters
    ----------
    array : Array
        Geometry and design frequency (its own element is the isolated one, unused here).
    S, z0 : the ports' scattering matrix (element order) and reference resistances.
    tables : dict of str -> Element
        Peak-normalised embedded patterns by class name.
    classes : sequence of str, optional
        Class name of every element; default :func:`element_classes` (centre, edge,
        corner; a missing corner table falls back to edge, a missing edge to centre).
    """
    f = array.frequency if frequency is None else float(frequency)
    S = np.asarray(S, complex)
    names = element_classes(array.geometry) if classes is None else list(classes)
    if len(names) != array.n:
        raise SteradianError(f"coupling.classes names {len(names)} classes for {array.n} "
                             "elements")
    keys = sorted({_resolve(n, tables) for n in names})
    index = np.array([keys.index(_resolve(n, tables)) for n in names])
    one = Geometry(np.zeros((1, 3)))
    power = [radiated_power(replace(array, geometry=one, element=tables[k], taper=None,
                                    steering=None, enabled=None), frequency=f).value
             for k in keys]
    accepted = 1 - np.sum(np.abs(S) ** 2, axis=0)
    if np.any(accepted <= 0):
        m = int(np.argmin(accepted))
        raise SteradianError(f"coupling: port {m + 1} accepts no power alone (column norm of "
                             "S >= 1): its embedded pattern has no level")
    amp = np.sqrt(accepted / np.asarray(power)[index])
    pats = EmbeddedPatterns(tuple(keys), tuple(tables[k] for k in keys), index, amp)
    return Coupling(S=S, z0=z0, frequency=f, scale=1.0, patterns=pats, source=source)


def embedded_responses(array, patterns: EmbeddedPatterns, vectors, frequency=None):
    """(2, K, N) realized-gain fields of every port toward ``vectors`` (phase at the array
    origin)."""
    dirs = Directions.from_vectors(np.atleast_2d(vectors))
    out = np.zeros((2, len(dirs.vectors), array.n), complex)
    for j, el in enumerate(patterns.elements):
        cols = np.flatnonzero(patterns.index == j)
        sub = replace(array, geometry=Geometry(array.positions[cols]), element=el,
                      taper=None, steering=None, enabled=None)
        out[:, :, cols] = response_matrix(sub, dirs, frequency=frequency) * \
            patterns.amplitude[cols]
    return out


def embedded_power_matrix(array, patterns: EmbeddedPatterns, frequency=None, margin=20):
    """Radiated-power matrix of the embedded patterns, P_rad = a^H Q a, by the sphere rule
    sized for the most detailed table."""
    j = int(np.argmax([el.degree(array.k(frequency)) for el in patterns.elements]))
    rule = rule_for(replace(array, element=patterns.elements[j], taper=None, steering=None,
                            enabled=None), frequency, margin)
    A = embedded_responses(array, patterns, rule.grid.vectors, frequency)
    w = (rule.w_theta[:, None] * np.full(rule.n_phi, rule.w_phi)[None, :]).ravel()
    Q = sum((A[c].conj().T * w) @ A[c] for c in range(2))
    return 0.5 * (Q + Q.conj().T)
