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
``patterns``
    Sub-table of embedded pattern tables (element-table CSV files, peak-normalised, phase
    referenced to their own element) by name: ``centre``, ``edge``, ``corner`` (assigned
    from the lattice; corner falls back to edge, edge to centre), or any names with
    ``classes``. Levels come from the lossless balance of each port alone
    (:mod:`steradian.coupling._embedded`). With ``model = "touchstone"`` only.
``classes``
    Table name of every element, in element order (one table per element is allowed).
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

from ..directions import angles_deg, unit_vectors_deg
from ..errors import SteradianError, suggest
from ..radiation import peak_directivity, power_matrix, radiated_power, search_spacing
from ..schema import Section
from ..sphere import SearchSet, find_maxima
from ..units import db10
from ._embedded import CLASS_NAMES, embedded_coupling
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
        "scan_theta_step_deg", "scan_phi_deg", "blind_gamma", "beam_weights", "patterns",
        "classes")
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
    patterns: dict | None = None
    classes: list | None = None


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
    patterns = classes = None
    if "patterns" in t or "classes" in t:
        if model != "touchstone":
            raise t.error("patterns" if "patterns" in t else "classes",
                          "tabulated embedded patterns go with model = 'touchstone' (the "
                          "dipole model computes its own)")
        pt = t.child("patterns")
        if not pt.data:
            raise pt.error(None, "name at least one table (centre = \"file.csv\")")
        patterns = {k: pt.path(k, base_dir) for k in pt.data}
        classes = _classes(t, patterns)
    bw = t.string("beam_weights", "taper", choices=BEAM_WEIGHTS)
    if bw == "max_realized_gain" and model != "dipole" and patterns is None:
        raise t.error("beam_weights", "'max_realized_gain' needs embedded patterns (model = "
                      "'dipole', or [coupling.patterns] tables)")
    return CouplingSpec(model, radius, z0, f, ports, theta, phis,
                        t.number("blind_gamma", BLIND_GAMMA, above=0, maximum=1), bw,
                        patterns, classes)


def _classes(t: Section, patterns: dict):
    """``classes``: one table name per element, or None for centre/edge/corner tables."""
    if "classes" not in t:
        if "centre" not in patterns:
            raise t.error("patterns", "without coupling.classes the tables are centre, edge "
                          "and corner (centre required); got "
                          + ", ".join(sorted(patterns)))
        unknown = sorted(set(patterns) - set(CLASS_NAMES))
        if unknown:
            raise t.error(f"patterns.{unknown[0]}", "is not centre, edge or corner"
                          f"{suggest(unknown[0], CLASS_NAMES)}; name tables freely only with "
                          "coupling.classes")
        return None
    v = t.data["classes"]
    if not isinstance(v, list) or not all(isinstance(x, str) for x in v):
        raise t.error("classes", "must be an array of table names, one per element")
    for i, x in enumerate(v):
        if x not in patterns:
            raise t.error(f"classes[{i}]", f"names no table in coupling.patterns: {x!r}"
                          f"{suggest(x, list(patterns))}")
    return list(v)


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


def coupling_of(spec: CouplingSpec, array, *, frequency=None, network=None,
                tables=None) -> Coupling:
    """The :class:`Coupling` a spec describes for ``array``.

    ``network`` is the Touchstone content for ``model = "touchstone"`` (an object with
    ``frequencies``, ``s`` (F, P, P) and ``z0``), ``tables`` the embedded pattern tables by
    name ({name: Element}); both read by the caller (:mod:`steradian.io`).
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
    z0 = np.asarray(network.z0, float)[idx]
    if spec.patterns is not None:
        if tables is None:
            raise SteradianError("coupling.patterns: the tables were not read")
        return embedded_coupling(array, S, z0, tables, spec.classes, frequency=f,
                                 source=str(spec.file))
    return scattering_coupling(S, z0, frequency=f, source=str(spec.file))


def _realized_peak(array, coupling, a, frequency):
    """(theta, phi, realized gain) of the realized-gain peak of ``a`` (lobe search of
    :mod:`steradian.sphere`)."""
    search = SearchSet.fibonacci(search_spacing(array, frequency))

    def g(v):
        return realized_gain_toward(array, coupling, np.repeat(a[:, None], len(v), axis=1), v,
                                    frequency=frequency)

    starts = None if array.steering is None else array.steering.unit[None, :]
    refined, values = find_maxima(g, search, 6, starts=starts)
    t, p = angles_deg(refined[0], pole_tol=1e-11)
    return float(t), float(p), float(values[0])


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
        out["power_balance_relative_error"] = power_balance(
            array, coupling, a, frequency=frequency)["relative_error"]
    if coupling.patterns is not None:  # realized gain peak: the one lobe search
        t, p, g = _realized_peak(array, coupling, a, frequency)
        out.update({"peak_theta_deg": t, "peak_phi_deg": p,
                    "realized_gain_dbi": float(db10(efficiency * g))})
        return out
    if coupling.currents is not None:
        pk = peak_directivity(current_array(array, coupling, a), frequency=frequency)
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
