r"""N-port network figures: Z <-> S with a reference resistance per port, active reflection,
active VSWR, accepted power, reciprocity and passivity.

Waves are power waves (Kurokawa): with the port voltages and currents V, I (RMS) and the
reference resistances :math:`R_0` (a diagonal matrix, :math:`D = R_0^{1/2}`),

.. math:: a = \tfrac12 D^{-1}(V + R_0 I),\quad b = \tfrac12 D^{-1}(V - R_0 I),\quad
          S = D^{-1}(Z - R_0)(Z + R_0)^{-1} D,

so :math:`|a_m|^2` is the power available at port m and the power the array accepts is
:math:`|a|^2 - |b|^2 = a^H (I - S^H S) a`. The feed currents are :math:`I = T a` with
:math:`T = 2 (Z + R_0)^{-1} D`.

References
----------
K. Kurokawa, "Power waves and the scattering matrix," IEEE Trans. Microwave Theory Tech.,
vol. 13, no. 2, pp. 194-202, 1965.
D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 4.3 (scattering matrix,
reciprocity, lossless networks).
R. C. Hansen, *Phased Array Antennas*, 2nd ed., Wiley, 2009, ch. 7 (active reflection and
scan blindness).
"""

from __future__ import annotations

import numpy as np

from ..errors import SteradianError

__all__ = ["reference_resistances", "z_to_s", "s_to_z", "feed_currents", "active_reflection",
           "vswr", "accepted_power", "accepted_power_matrix", "reciprocity_error",
           "passivity_margin"]


def reference_resistances(z0, n: int) -> np.ndarray:
    """Per-port reference resistances (ohm), shape (n,), from one number or n numbers."""
    r = np.broadcast_to(np.asarray(z0, float), (n,)).copy() if np.ndim(z0) == 0 else \
        np.asarray(z0, float).reshape(-1)
    if r.shape != (n,):
        raise SteradianError(f"coupling.z0_ohm has {r.size} values for {n} ports")
    if not np.all(np.isfinite(r)) or np.any(r <= 0):
        raise SteradianError("coupling.z0_ohm must be positive finite resistances (ohm)")
    return r


def _square(m, name):
    m = np.asarray(m, complex)
    if m.ndim != 2 or m.shape[0] != m.shape[1]:
        raise SteradianError(f"{name} must be a square matrix, got shape {m.shape}")
    if not np.all(np.isfinite(m)):
        raise SteradianError(f"{name} holds a value that is not finite")
    return m


def z_to_s(Z, z0=50.0) -> np.ndarray:
    """Scattering matrix of the impedance matrix ``Z`` with reference resistances ``z0``."""
    Z = _square(Z, "the impedance matrix")
    r = reference_resistances(z0, Z.shape[0])
    d = np.sqrt(r)
    R = np.diag(r)
    try:
        X = np.linalg.solve((Z + R).T, (Z - R).T).T  # (Z - R)(Z + R)^-1
    except np.linalg.LinAlgError:
        raise SteradianError("Z + Z0 is singular: no scattering matrix") from None
    return X / d[:, None] * d[None, :]


def s_to_z(S, z0=50.0) -> np.ndarray:
    """Impedance matrix of the scattering matrix ``S`` (inverse of :func:`z_to_s`)."""
    S = _square(S, "the scattering matrix")
    r = reference_resistances(z0, S.shape[0])
    d = np.sqrt(r)
    X = S * d[:, None] / d[None, :]  # (Z - R)(Z + R)^-1
    eye = np.eye(S.shape[0])
    try:
        # Z = (I - X)^-1 (I + X) R
        return np.linalg.solve(eye - X, (eye + X) * r[None, :])
    except np.linalg.LinAlgError:
        raise SteradianError("I - S is singular: the network has no impedance matrix") from None


def feed_currents(Z, z0=50.0) -> np.ndarray:
    """T with feed currents I = T a for incident waves a: T = 2 (Z + R0)^-1 R0^(1/2)."""
    Z = _square(Z, "the impedance matrix")
    r = reference_resistances(z0, Z.shape[0])
    return 2 * np.linalg.solve(Z + np.diag(r), np.diag(np.sqrt(r)))


def active_reflection(S, a) -> np.ndarray:
    r"""Active reflection coefficient :math:`\Gamma_m = \sum_n S_{mn} a_n / a_m` of every port
    (NaN where :math:`a_m = 0`). ``a`` may be (N,) or (N, K) for K excitations."""
    a = np.asarray(a, complex)
    b = np.asarray(S) @ a
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(a != 0, b / np.where(a != 0, a, 1), np.nan)


def vswr(gamma):
    """VSWR (1 + |Gamma|) / (1 - |Gamma|); inf at |Gamma| >= 1, NaN stays NaN."""
    g = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(g < 1, (1 + g) / (1 - g), np.where(np.isnan(g), np.nan, np.inf))


def accepted_power_matrix(S) -> np.ndarray:
    """I - S^H S (Hermitian): the accepted power is a^H (I - S^H S) a."""
    S = _square(S, "the scattering matrix")
    A = np.eye(S.shape[0]) - S.conj().T @ S
    return 0.5 * (A + A.conj().T)


def accepted_power(S, a) -> np.ndarray:
    """Power accepted by the ports, |a|^2 - |Sa|^2, for (N,) or (N, K) incident waves."""
    a = np.asarray(a, complex)
    b = np.asarray(S) @ a
    return np.sum(np.abs(a) ** 2, axis=0) - np.sum(np.abs(b) ** 2, axis=0)


def reciprocity_error(S) -> float:
    """max |S - S^T| / max(max |S|, tiny): 0 for a reciprocal network."""
    S = np.asarray(S)
    return float(np.abs(S - S.T).max() / max(np.abs(S).max(), 1e-300))


def passivity_margin(S) -> float:
    """1 - (largest singular value of S): >= 0 for a passive network."""
    return float(1 - np.linalg.svd(np.asarray(S), compute_uv=False)[0])
