r"""Array figures with coupling: active reflection and VSWR, accepted power, realized gain
over scan, scan blindness, the power balance, and the weights of maximum realized gain.

Realized gain toward :math:`\hat r` for incident waves a (IEEE Std 145-2013: gain reduced by
the mismatch at the ports) is

.. math:: G_R(\hat r) = D(\hat r)\,\frac{a^H (I - S^H S) a}{a^H a}

with D the directivity of the array the ports drive (the element currents T a under the
model's embedded patterns, or a itself without them). With embedded patterns the lossless
power balance makes this :math:`4\pi\,U(\hat r) / a^H a`, and the weights of maximum realized
gain are the conjugate of the embedded patterns (the largest eigenvector of a rank-2 form,
one per polarisation component).

References
----------
D. M. Pozar, "The active element pattern," IEEE Trans. Antennas Propag., vol. 42, no. 8,
pp. 1176-1178, 1994 (realized gain from embedded patterns and active reflection).
R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 7 (scan blindness).
IEEE Std 145-2013, *Definitions of Terms for Antennas* (realized gain).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..array import steering_phases
from ..budget import require
from ..directions import Directions, angles_deg, unit_vectors_deg
from ..engine import response_matrix
from ..errors import SteradianError
from ..radiation import power_matrix, radiated_power
from ..units import db10
from ._network import accepted_power, active_reflection, vswr

__all__ = ["ScanMap", "scan_excitations", "scan_map", "realized_gain_toward",
           "max_realized_gain_weights", "uncoupled_optimum_weights", "coupled_beam_weights",
    "power_balance",
           "current_array", "BLIND_GAMMA"]

BLIND_GAMMA = 0.9
"""|Gamma_active| at or above which a scan is flagged as (near) blind: 0.9 is VSWR 19, 7.2 dB
of mismatch loss on that port (a common practice threshold, chosen here)."""


def current_array(array, coupling, a):
    """The engine array radiating the fields of incident waves ``a``: the element currents
    as its taper, unsteered and without mask (a terminated port still carries current)."""
    return replace(array, taper=coupling.element_currents(a), steering=None, enabled=None)


def scan_excitations(array, theta_deg, phi_deg, frequency=None) -> np.ndarray:
    """Incident waves (N, K) of the design's taper and mask steered to each of K directions
    (phase steering at the design frequency, or delay at ``frequency``)."""
    th, ph = np.ravel(theta_deg).astype(float), np.ravel(phi_deg).astype(float)
    if not (np.all(np.isfinite(th)) and np.all(np.isfinite(ph))):
        raise SteradianError("scan directions must be finite angles in degrees")
    u = np.atleast_2d(unit_vectors_deg(th, ph))
    w = np.array(array.taper, complex)
    if array.enabled is not None:
        w = np.where(array.enabled, w, 0.0)
    mode = "phase" if array.steering is None else array.steering.mode
    k = array.k(frequency) if mode == "delay" else array.k()
    require(48.0 * array.n * len(u), f"excitations of {array.n:,} elements x {len(u):,} scans",
            "scan fewer directions")
    return w[:, None] * steering_phases(array.positions, u.T, k)


def _responses(array, coupling, vectors, frequency):
    """(2, K, N) responses of the ports (embedded when the model has them)."""
    if coupling.patterns is not None:
        from ._embedded import embedded_responses

        return embedded_responses(array, coupling.patterns, vectors, frequency)
    bare = replace(array, taper=None, steering=None, enabled=None)
    A = response_matrix(bare, Directions.from_vectors(vectors), frequency=frequency)
    if coupling.currents is not None:
        A = A @ coupling.currents
    return A


def realized_gain_toward(array, coupling, a, vectors, *, frequency=None,
                         power_mat=None) -> np.ndarray:
    """Realized gain (linear) of incident waves ``a`` (N, K) toward ``vectors`` (K, 3): column
    k of ``a`` toward direction k."""
    a = np.asarray(a, complex).reshape(coupling.n, -1)
    A = _responses(array, coupling, np.atleast_2d(vectors), frequency)
    u = np.einsum("ckn,nk->ck", A, a)
    inten = np.sum(np.abs(u) ** 2, axis=0)
    avail = np.sum(np.abs(a) ** 2, axis=0)
    if coupling.scale is not None:  # embedded patterns: 4 pi U / available power
        return 4 * np.pi * coupling.scale * inten / avail
    Q = power_matrix(array, frequency=frequency) if power_mat is None else power_mat
    prad = np.real(np.einsum("nk,nm,mk->k", a.conj(), Q, a))
    return 4 * np.pi * inten / prad * accepted_power(coupling.S, a) / avail


@dataclass(frozen=True)
class ScanMap:
    """Coupled figures of the design's taper steered over a set of directions.

    Attributes
    ----------
    theta_deg, phi_deg : ndarray (K,)
        Scan directions.
    gamma : ndarray (N, K) complex
        Active reflection coefficient of every port (NaN for disabled elements).
    worst_vswr, mean_gamma : ndarray (K,)
        Largest active VSWR and mean |Gamma| over the enabled ports.
    mismatch : ndarray (K,)
        Accepted over available power, a^H (I - S^H S) a / a^H a.
    realized_gain_dbi : ndarray (K,)
        Realized gain toward the scan direction.
    blind : ndarray (K,) of bool
        Some port's |Gamma| reaches :data:`BLIND_GAMMA`.
    """

    theta_deg: np.ndarray
    phi_deg: np.ndarray
    gamma: np.ndarray
    worst_vswr: np.ndarray
    mean_gamma: np.ndarray
    mismatch: np.ndarray
    realized_gain_dbi: np.ndarray
    blind: np.ndarray

    def blind_directions(self) -> list[tuple[float, float]]:
        """(theta, phi) in degrees of every scan flagged blind."""
        return [(float(t), float(p)) for t, p, b in
                zip(self.theta_deg, self.phi_deg, self.blind, strict=True) if b]


def scan_map(array, coupling, theta_deg, phi_deg, *, frequency=None,
             blind_gamma: float = BLIND_GAMMA, gain: bool = True) -> ScanMap:
    """Active reflection, active VSWR, accepted power and realized gain of the design's
    taper steered to each direction (``theta_deg``, ``phi_deg`` broadcast together).

    ``gain=False`` skips the realized gain (NaN), which needs the element responses.
    """
    if coupling.n != array.n:
        raise SteradianError(f"coupling has {coupling.n} ports but the array has {array.n} "
                             "elements")
    th, ph = (np.ravel(x).astype(float) for x in np.broadcast_arrays(theta_deg, phi_deg))
    a = scan_excitations(array, th, ph, frequency)
    gam = active_reflection(coupling.S, a)
    mag = np.abs(gam)
    on = ~np.isnan(mag[:, 0])
    worst = np.max(vswr(mag[on]), axis=0)
    mism = accepted_power(coupling.S, a) / np.sum(np.abs(a) ** 2, axis=0)
    if gain:
        g = realized_gain_toward(array, coupling, a, unit_vectors_deg(th, ph),
                                 frequency=frequency)
        g_db = np.asarray(db10(g), float)
    else:
        g_db = np.full(th.shape, np.nan)
    return ScanMap(th, ph, gam, worst, np.mean(mag[on], axis=0), mism, g_db,
                   np.max(mag[on], axis=0) >= blind_gamma)


def _best_weights(B, Q=None):
    """Maximise |B a|^2 / a^H Q a (Q = I when None) for each of K stacked (2, N) B.

    With C = B Q^-1 B^H (K, 2, 2) and x its top eigenvector, a = Q^-1 B^H x and the maximum
    is the top eigenvalue (the generalised Rayleigh quotient of a rank-2 form)."""
    BH = np.conj(np.swapaxes(B, 1, 2))  # (K, N, 2)
    QiBH = BH if Q is None else np.linalg.solve(Q, BH.transpose(1, 0, 2).reshape(
        Q.shape[0], -1)).reshape(Q.shape[0], B.shape[0], 2).transpose(1, 0, 2)
    lam, vec = np.linalg.eigh(B @ QiBH)
    a = np.einsum("knc,kc->nk", QiBH, vec[:, :, -1])
    a /= np.linalg.norm(a, axis=0)
    s = a.sum(axis=0)
    a *= np.where(np.abs(s) > 0, np.conj(s) / np.where(np.abs(s) > 0, np.abs(s), 1), 1)
    return a, lam[:, -1]


def max_realized_gain_weights(array, coupling, vectors, *, frequency=None):
    """Incident waves of maximum realized gain toward each direction (closed form).

    The realized gain of ``a`` is :math:`a^H M a / a^H a` with
    :math:`M = 4\\pi\\,\\mathrm{scale}\\,B^H B`, B (2 x N) the embedded responses of the ports
    in the two polarisation components; its maximum is the largest eigenvalue, reached by
    :math:`a = B^H x` with x the top eigenvector of the 2 x 2 matrix :math:`B B^H`.
    Disabled elements (the array's mask) are terminated ports with no incident wave.

    Returns
    -------
    weights : ndarray (N, K) complex
        Unit-norm incident waves, phase-referenced so that the sum of the weights is real.
    gain : ndarray (K,)
        The maximum realized gain (linear).
    """
    if coupling.scale is None:
        raise SteradianError("maximum realized gain needs embedded element patterns (a "
                             "coupling model with element currents, e.g. model = 'dipole')")
    v = np.atleast_2d(np.asarray(vectors, float))
    B = np.moveaxis(_responses(array, coupling, v, frequency), 1, 0)  # (K, 2, N)
    if array.enabled is None:
        a, lam = _best_weights(B)
        return a, 4 * np.pi * coupling.scale * lam
    on = np.flatnonzero(array.enabled)  # a disabled port is terminated: a_m = 0
    a_on, lam = _best_weights(B[:, :, on])
    a = np.zeros((array.n, len(v)), complex)
    a[on] = a_on
    return a, 4 * np.pi * coupling.scale * lam


def coupled_beam_weights(array, coupling, *, frequency=None):
    """A per-beam weight source for beam tables
    (:func:`steradian.beamtable.build_beam_table` ``weights=``): ``f(theta_deg, phi_deg)``
    gives the incident waves of maximum realized gain toward that direction
    (:func:`max_realized_gain_weights`), scaled to a largest magnitude of 1."""
    def weights(theta_deg, phi_deg):
        a, _ = max_realized_gain_weights(array, coupling, unit_vectors_deg(
            np.array([theta_deg]), np.array([phi_deg])), frequency=frequency)
        a = a[:, 0]
        return a / np.abs(a).max()

    return weights


def uncoupled_optimum_weights(array, vectors, *, frequency=None, power_mat=None):
    """Weights of maximum directivity toward each direction when coupling is ignored
    (isolated patterns, radiated-power matrix Q of
    :func:`steradian.radiation.power_matrix`): :math:`a = Q^{-1} B^H x`, the reference a
    coupling-aware taper is compared with. Returns (weights (N, K), directivity (K,))."""
    bare = replace(array, taper=None, steering=None, enabled=None)
    v = np.atleast_2d(np.asarray(vectors, float))
    B = np.moveaxis(response_matrix(bare, Directions.from_vectors(v), frequency=frequency),
                    1, 0)
    Q = power_matrix(bare, frequency=frequency) if power_mat is None else power_mat
    a, lam = _best_weights(B, Q)
    return a, 4 * np.pi * lam


def power_balance(array, coupling, a, *, frequency=None) -> dict:
    """Integrated radiated power of the embedded patterns against a^H (I - S^H S) a.

    For a lossless model the two are equal; the relative difference measures the model and
    the integrator together. Returns {"radiated_w", "accepted_w", "relative_error"}.
    """
    if coupling.scale is None:
        raise SteradianError("the power balance needs embedded element patterns")
    a = np.asarray(a, complex)
    if coupling.patterns is not None:
        from ._embedded import embedded_power_matrix

        Q = embedded_power_matrix(array, coupling.patterns, frequency)
        p = float(np.real(a.conj() @ Q @ a))
    else:
        p = coupling.scale * radiated_power(current_array(array, coupling, a),
                                            frequency=frequency).value
    acc = float(accepted_power(coupling.S, a))
    return {"radiated_w": p, "accepted_w": acc,
            "relative_error": abs(p - acc) / acc if acc > 0 else float("inf")}


def direction_of(vector) -> tuple[float, float]:
    """(theta, phi) in degrees of a unit vector."""
    t, p = angles_deg(np.asarray(vector, float))
    return float(t), float(p)
