"""The ``[coupling]`` design table and the coupled summary ``analyze`` reports.

Keys (all checked with :class:`steradian.schema.Section`):

``model``
    ``"dipole"`` (induced-EMF parallel thin dipoles: needs ``[element] model = "dipole"``)
    or ``"touchstone"`` (a scattering matrix from a Touchstone file, no embedded patterns).
``radius_wl`` / ``radius_m``
    Wire radius of the dipole model (one of them; default 0.001 wavelength).
``z0_ohm``
    Reference resistance of every port: one number or one per element (default 50).
``file``
    The ``.sNp`` file of ``model = "touchstone"``; its reference resistance is used.
``ports``
    Touchstone port number (1-based) of every element, in element order (default 1..N).
``scan_theta_max_deg``, ``scan_theta_step_deg``, ``scan_phi_deg``
    The scan cuts reported (default 0 to 60 degrees in steps of 10 in the planes phi = 0
    and 90).
``blind_gamma``
    |Gamma_active| from which a scan is flagged blind (default :data:`BLIND_GAMMA`).
``beam_weights``
    ``"taper"`` (default: beam tables steer the design's taper) or ``"max_realized_gain"``
    (beam tables hold the coupling-aware weights of maximum realized gain of every beam;
    needs embedded patterns).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, replace

import numpy as np

from ..directions import unit_vectors_deg
from ..errors import SteradianError
from ..radiation import peak_directivity, power_matrix, radiated_power
from ..schema import Section
from ..units import db10
from ._figures import (
    BLIND_GAMMA,
    current_array,
    max_realized_gain_weights,
    power_balance,
    realized_gain_toward,
    scan_map,
    uncoupled_optimum_weights,
)
from ._model import Coupling, dipole_coupling, scattering_coupling
from ._network import accepted_power, active_reflection, passivity_margin, reciprocity_error, vswr

__all__ = ["CouplingSpec", "coupling_spec", "coupling_of", "coupled_summary", "KEYS",
           "interpolate_frequency"]

KEYS = ("model", "radius_wl", "radius_m", "z0_ohm", "file", "ports", "scan_theta_max_deg",
        "scan_theta_step_deg", "scan_phi_deg", "blind_gamma", "beam_weights")
BEAM_WEIGHTS = ("taper", "max_realized_gain")
MODELS = ("dipole", "touchstone")


@dataclass(frozen=True)
class CouplingSpec:
    """What a ``[coupling]`` table asks for (files not yet read)."""

    model: str
    radius_m: float | None
    z0: float | list | None
    file: object | None
    ports: list | None
    theta_deg: np.ndarray
    phi_deg: tuple
    blind_gamma: float
    beam_weights: str = "taper"


def coupling_spec(table, *, wavelength: float, base_dir, source=None) -> CouplingSpec:
    """Read and check a ``[coupling]`` table (unknown keys with the closest valid one)."""
    t = Section("coupling", table, source)
    t.only(KEYS)
    model = t.string("model", choices=MODELS)
    radius = None
    if model == "dipole":
        if "radius_wl" in t and "radius_m" in t:
            raise t.error("radius_m", "give radius_wl or radius_m, not both")
        radius = (t.number("radius_m", above=0) if "radius_m" in t
                  else t.number("radius_wl", 0.001, above=0) * wavelength)
        for key in ("file", "ports"):
            if key in t:
                raise t.error(key, "is read with model = 'touchstone' only")
    f = t.path("file", base_dir) if model == "touchstone" else None
    z0 = (t.numbers("z0_ohm", above=0) if isinstance(t.data.get("z0_ohm"), list)
          else t.number("z0_ohm", 50.0, above=0))
    if model == "touchstone" and "z0_ohm" in t:
        raise t.error("z0_ohm", "comes from the Touchstone file with model = 'touchstone'")
    ports = t.integers("ports", None, minimum=1)
    tmax = t.number("scan_theta_max_deg", 60.0, minimum=0, maximum=90)
    step = t.number("scan_theta_step_deg", 10.0, minimum=0.1, maximum=90)
    phis = tuple(t.numbers("scan_phi_deg", [0.0, 90.0]))
    theta = np.arange(0.0, tmax + 1e-9, step)
    if theta[-1] < tmax - 1e-9:
        theta = np.append(theta, tmax)
    bw = t.string("beam_weights", "taper", choices=BEAM_WEIGHTS)
    if bw == "max_realized_gain" and model != "dipole":
        raise t.error("beam_weights", "'max_realized_gain' needs embedded patterns (model = "
                      "'dipole')")
    return CouplingSpec(model, radius, z0, f, ports, theta, phis,
                        t.number("blind_gamma", BLIND_GAMMA, above=0, maximum=1), bw)


def interpolate_frequency(freqs, S, frequency: float, name: str = "the file"):
    """S at ``frequency``: the sample itself within 1e-9 relative, else linear in the real
    and imaginary parts between the two neighbouring samples (refused outside the file's
    band)."""
    freqs = np.asarray(freqs, float)
    i = int(np.argmin(np.abs(freqs - frequency)))
    if abs(freqs[i] - frequency) <= 1e-9 * frequency:
        return np.asarray(S[i])
    if not freqs[0] <= frequency <= freqs[-1]:
        raise SteradianError(f"coupling: {frequency:g} Hz is outside the {freqs[0]:g} to "
                             f"{freqs[-1]:g} Hz of {name}")
    j = int(np.searchsorted(freqs, frequency))
    t = (frequency - freqs[j - 1]) / (freqs[j] - freqs[j - 1])
    return (1 - t) * np.asarray(S[j - 1]) + t * np.asarray(S[j])


def _doubtful(S, path, f) -> None:
    """Warn (legal but doubtful) when a file's S is not passive or not reciprocal: a
    measured passive array is both, to within its measurement noise."""
    margin, recip = passivity_margin(S), reciprocity_error(S)
    if margin < -1e-6:
        warnings.warn(f"coupling.file {path}: S at {f:g} Hz is not passive (largest singular "
                      f"value {1 - margin:.6g} > 1)", UserWarning, stacklevel=3)
    if recip > 1e-6:
        warnings.warn(f"coupling.file {path}: S at {f:g} Hz is not reciprocal (max |S - S^T| "
                      f"/ max |S| = {recip:.3g})", UserWarning, stacklevel=3)


def coupling_of(spec: CouplingSpec, array, *, frequency=None, network=None) -> Coupling:
    """The :class:`Coupling` a spec describes for ``array``.

    ``network`` is the Touchstone content for ``model = "touchstone"`` (an object with
    ``frequencies``, ``s`` (F, P, P) and ``z0``), read by the caller (:mod:`steradian.io`).
    """
    f = array.frequency if frequency is None else float(frequency)
    if spec.model == "dipole":
        return dipole_coupling(array, radius=spec.radius_m, z0=spec.z0, frequency=f)
    if network is None:
        raise SteradianError("coupling.file: the Touchstone file was not read")
    nports = network.s.shape[1]
    ports = list(range(1, array.n + 1)) if spec.ports is None else spec.ports
    if len(ports) != array.n:
        raise SteradianError(f"coupling.ports lists {len(ports)} ports for {array.n} elements")
    if nports != array.n and spec.ports is None:
        raise SteradianError(f"coupling.file has {nports} ports for {array.n} elements: list "
                             "the port of every element in coupling.ports")
    if max(ports) > nports or len(set(ports)) != len(ports):
        raise SteradianError(f"coupling.ports must name distinct ports 1..{nports}")
    idx = np.asarray(ports) - 1
    S = interpolate_frequency(network.frequencies, network.s, f, str(spec.file))[
        np.ix_(idx, idx)]
    _doubtful(S, spec.file, f)
    return scattering_coupling(S, np.asarray(network.z0, float)[idx],
                               frequency=f, source=str(spec.file))


def _design_point(array, coupling, frequency, efficiency, peak):
    """Figures of the design's own excitation."""
    a = array.weights(frequency)
    gam = active_reflection(coupling.S, a)
    on = a != 0
    mag = np.abs(gam[on])
    worst = int(np.flatnonzero(on)[np.argmax(mag)])
    frac = float(accepted_power(coupling.S, a) / np.sum(np.abs(a) ** 2))
    out = {"worst_active_vswr": float(vswr(mag.max())), "worst_element": worst,
           "mean_active_gamma": float(mag.mean()), "accepted_fraction": frac,
           "mismatch_loss_db": float(-db10(frac))}
    if coupling.embedded:
        pk = peak_directivity(current_array(array, coupling, a), frequency=frequency)
        out["power_balance_relative_error"] = power_balance(
            array, coupling, a, frequency=frequency)["relative_error"]
    else:
        pk = peak or peak_directivity(array, frequency=frequency,
                                      power=radiated_power(array, frequency=frequency))
    out.update({"peak_theta_deg": pk.theta_deg, "peak_phi_deg": pk.phi_deg,
                "realized_gain_dbi": float(db10(efficiency * pk.directivity * frac))})
    return out


def _scan_rows(array, coupling, spec, frequency, efficiency):
    rows, blind = [], []
    Q = None
    if coupling.embedded:
        Q = power_matrix(replace(array, taper=None, steering=None, enabled=None),
                         frequency=frequency)
    for phi in spec.phi_deg:
        m = scan_map(array, coupling, spec.theta_deg, phi, frequency=frequency,
                     blind_gamma=spec.blind_gamma)
        best = plain = None
        if coupling.embedded:
            dirs = unit_vectors_deg(m.theta_deg, np.full(m.theta_deg.shape, phi))
            _, g = max_realized_gain_weights(array, coupling, dirs, frequency=frequency)
            best = np.asarray(db10(efficiency * g), float)
            w, _ = uncoupled_optimum_weights(array, dirs, frequency=frequency, power_mat=Q)
            plain = np.asarray(db10(efficiency * realized_gain_toward(
                array, coupling, w, dirs, frequency=frequency)), float)
        for i, th in enumerate(m.theta_deg):
            r = {"theta_deg": float(th), "phi_deg": float(phi),
                 "worst_active_vswr": float(m.worst_vswr[i]),
                 "mean_active_gamma": float(m.mean_gamma[i]),
                 "accepted_fraction": float(m.mismatch[i]),
                 "realized_gain_dbi": float(m.realized_gain_dbi[i] + db10(efficiency)),
                 "blind": bool(m.blind[i])}
            if best is not None:
                r["max_realized_gain_dbi"] = float(best[i])
                r["uncoupled_optimum_realized_gain_dbi"] = float(plain[i])
            rows.append(r)
        blind += m.blind_directions()
    return rows, blind


def coupled_summary(array, coupling: Coupling, spec: CouplingSpec, *, frequency=None,
                    efficiency: float = 1.0, peak=None) -> dict:
    """The ``coupling`` block of the analysis summary: the model, its reciprocity and
    passivity, the design excitation's active reflection, accepted power and realized gain
    (with the power balance for embedded patterns), and the scan cuts (worst active VSWR,
    realized gain of the design's taper and, with embedded patterns, the maximum realized
    gain of coupling-aware weights and the realized gain of the weights that would be best
    without coupling; blind directions).

    ``peak`` (the uncoupled analysis' :class:`~steradian.radiation.Peak`) is reused for a
    model without embedded patterns, so that with S = 0 the realized gain equals the
    uncoupled analysis' exactly.
    """
    if coupling.n != array.n:
        raise SteradianError(f"coupling has {coupling.n} ports but the array has {array.n} "
                             "elements")
    out = {"model": spec.model, "source": coupling.source,
           "frequency_hz": coupling.frequency,
           "z0_ohm": (float(coupling.z0[0]) if np.all(coupling.z0 == coupling.z0[0])
                      else coupling.z0.tolist()),
           "embedded_patterns": coupling.embedded,
           "reciprocity_error": reciprocity_error(coupling.S),
           "passivity_margin": passivity_margin(coupling.S)}
    if coupling.Z is not None:
        z = complex(coupling.Z[0, 0])
        out["self_impedance_ohm"] = [z.real, z.imag]
    out["design_excitation"] = _design_point(array, coupling, frequency, efficiency, peak)
    rows, blind = _scan_rows(array, coupling, spec, frequency, efficiency)
    out["scan"] = rows
    out["blind_directions"] = [list(b) for b in blind]
    return out
