r"""The coupling of an array's ports: its scattering matrix and, when the model knows them,
the embedded element patterns.

A :class:`Coupling` holds the N-port scattering matrix S at one frequency with the
reference resistance of every port, and optionally the transformation T from incident waves
to the element currents of the array's own element model (``currents = T a``). With T the
embedded pattern of port m is the isolated pattern times the array factor of column m of T
(the induced-EMF dipole model: the current shape on every wire is fixed, only its amplitude
is coupled), so the engine evaluates every coupled pattern as an ordinary array whose weights
are the currents, and the physical radiation intensity is ``scale * |field|^2`` (W/sr per
W of incident power when ``a`` is in sqrt(W)).

Without T (a scattering matrix read from a file, no embedded patterns) the radiated pattern
is the isolated pattern times the array factor of ``a`` and the coupling enters through the
accepted power only: realized gain = directivity x (1 - |Sa|^2/|a|^2) (common practice, the
active-mismatch approximation; Hansen, ch. 7).

References
----------
D. M. Pozar, "The active element pattern," IEEE Trans. Antennas Propag., vol. 42, no. 8,
pp. 1176-1178, 1994.
C. A. Balanis, *Antenna Theory*, 4th ed., Wiley, 2016, sec. 8.6 (induced-EMF mutual
impedance), eq. 4-58 (far field of a sinusoidal current).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..budget import require
from ..elements import Dipole
from ..errors import SteradianError
from ..units import ETA0
from ._emf import mutual_impedance, self_impedance
from ._network import feed_currents, reference_resistances, z_to_s

__all__ = ["Coupling", "dipole_coupling", "dipole_impedance_matrix", "scattering_coupling",
           "PAIR_BYTES"]

PAIR_BYTES = 256
"""Peak bytes per element pair of the dipole model (Z, S, T and the sici temporaries of the
upper triangle): measured with tracemalloc at 188 B per pair for 1,024 dipoles; 256 leaves
room."""


def _frozen(x):
    x = np.array(x)
    x.setflags(write=False)
    return x


@dataclass(frozen=True, eq=False)
class Coupling:
    """Scattering matrix of an array's ports at one frequency, with the embedded patterns
    when the model gives them.

    Attributes
    ----------
    S : ndarray (N, N) complex
        Scattering matrix (ports in element order).
    z0 : ndarray (N,)
        Reference resistance of every port (ohm).
    frequency : float
        Frequency (Hz) at which S holds.
    currents : ndarray (N, N) complex or None
        T: element currents (amperes RMS, input-referred) = T a for incident waves a
        (sqrt(W)). None when only S is known.
    scale : float or None
        Radiation intensity (W/sr) per |engine field|^2 of the current-weighted array.
    Z : ndarray (N, N) complex or None
        Impedance matrix (ohm) when the model computes it.
    patterns : EmbeddedPatterns or None
        Tabulated embedded patterns (:mod:`steradian.coupling._embedded`), with scale 1.
    source : str
        What S comes from ("induced-EMF dipoles", a file name).
    """

    S: np.ndarray
    z0: np.ndarray
    frequency: float
    currents: np.ndarray | None = None
    scale: float | None = None
    Z: np.ndarray | None = None
    source: str = ""
    patterns: object | None = None

    def __post_init__(self):
        S = np.asarray(self.S, complex)
        if S.ndim != 2 or S.shape[0] != S.shape[1] or not np.all(np.isfinite(S)):
            raise SteradianError(f"coupling: S must be a finite square matrix, got shape "
                                 f"{S.shape}")
        object.__setattr__(self, "S", _frozen(S))
        object.__setattr__(self, "z0", _frozen(reference_resistances(self.z0, S.shape[0])))
        for name in ("currents", "Z"):
            v = getattr(self, name)
            if v is not None:
                object.__setattr__(self, name, _frozen(np.asarray(v, complex)))

    @property
    def n(self) -> int:
        """Number of ports."""
        return self.S.shape[0]

    @property
    def embedded(self) -> bool:
        """True when the model gives embedded patterns (element currents per incident wave,
        or tabulated patterns)."""
        return self.currents is not None or self.patterns is not None

    def element_currents(self, a) -> np.ndarray:
        """Weights of the engine array for incident waves ``a``: T a, or a itself without
        embedded patterns."""
        a = np.asarray(a, complex)
        return a if self.currents is None else self.currents @ a


def dipole_impedance_matrix(positions, axis, length: float, radius: float,
                            k: float) -> np.ndarray:
    """Impedance matrix (ohm) of parallel thin dipoles of one length along ``axis`` centred at
    ``positions`` (N, 3) by the induced-EMF method (:func:`mutual_impedance`,
    :func:`self_impedance`)."""
    pos = np.asarray(positions, float)
    ax = np.asarray(axis, float) / np.linalg.norm(axis)
    n = pos.shape[0]
    require(PAIR_BYTES * n * n, f"the induced-EMF impedance matrix of {n:,} dipoles",
            "the model is dense in the element count; use a Touchstone file instead")
    d = pos[:, None, :] - pos[None, :, :]
    dz = d @ ax
    rho = np.linalg.norm(d - dz[..., None] * ax, axis=-1)
    iu = np.triu_indices(n, 1)
    rho_u, dz_u = rho[iu], dz[iu]
    # positions along one axis are exactly collinear: floor rounding noise in rho
    rho_u = np.where(rho_u < 1e-12 * length, 0.0, rho_u)
    Z = np.zeros((n, n), complex)
    Z[iu] = mutual_impedance(k, length, rho_u, dz_u)
    Z = Z + Z.T
    Z[np.diag_indices(n)] = self_impedance(k, length, radius)
    return Z


def _dipole_scale(element: Dipole, k: float) -> float:
    """W/sr per |engine field|^2 for feed currents in A RMS: the engine's element is
    peak-normalised, the physical field of a sinusoidal current I_m is
    eta I_m / (2 pi r) [cos(kh cos psi) - cos kh] / sin psi (Balanis eq. 4-58a) and
    I_m = I_in / sin kh."""
    kh = 0.5 * k * element.length
    # broadside of the wire: any direction normal to the axis
    ax = element.axis
    n = np.cross(ax, [1.0, 0, 0] if abs(ax[0]) < 0.9 else [0, 1.0, 0])
    n /= np.linalg.norm(n)
    th, ph = np.arccos(np.clip(n[2], -1, 1)), np.arctan2(n[1], n[0])
    et, ep = element.pattern(np.array([th]), np.array([ph]))
    e_bs = float(np.hypot(abs(et[0]), abs(ep[0])))
    return ETA0 / (4 * np.pi**2) * ((1 - np.cos(kh)) / (e_bs * np.sin(kh))) ** 2


def dipole_coupling(array, *, radius: float, z0=50.0,
                    frequency: float | None = None) -> Coupling:
    """Coupling of an array of parallel thin dipoles by the induced-EMF method.

    Parameters
    ----------
    array : Array
        Its element must be a :class:`~steradian.elements.Dipole` of finite length shared
        by every element with one orientation (no per-element orientations).
    radius : float
        Wire radius (m).
    z0 : float or sequence of float
        Reference resistance of every port (ohm).
    frequency : float, optional
        Evaluation frequency (Hz), default the design frequency.

    Returns
    -------
    Coupling
        With the impedance matrix, S, the wave-to-current matrix and the intensity scale.
    """
    f = array.frequency if frequency is None else float(frequency)
    el = array.element_at(f)
    if not isinstance(el, Dipole) or el.length is None:
        raise SteradianError("coupling.model = 'dipole' needs [element] model = 'dipole' with "
                             "a length (the induced-EMF model couples finite wires)")
    if array.geometry.orientations is not None:
        raise SteradianError("coupling.model = 'dipole' needs every element in one "
                             "orientation (parallel wires)")
    k = array.k(f)
    Z = dipole_impedance_matrix(array.positions, el.axis, el.length, radius, k)
    r0 = reference_resistances(z0, array.n)
    return Coupling(S=z_to_s(Z, r0), z0=r0, frequency=f, currents=feed_currents(Z, r0),
                    scale=_dipole_scale(el, k), Z=Z, source="induced-EMF dipoles")


def scattering_coupling(S, z0=50.0, *, frequency: float, source: str = "") -> Coupling:
    """Coupling from a scattering matrix alone (no embedded patterns)."""
    return Coupling(S=S, z0=z0, frequency=frequency, source=source)
