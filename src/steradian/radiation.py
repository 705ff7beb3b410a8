r"""Radiation intensity, radiated power, directivity, gain, realized gain and EIRP.

Definitions (IEEE Std 145-2013, *IEEE Standard for Definitions of Terms for Antennas*):
radiation intensity :math:`U = r^2 |E|^2 / (2\eta)`; directivity
:math:`D = 4\pi U / P_{rad}`; gain :math:`G = \xi D` with radiation efficiency
:math:`\xi = P_{rad}/P_{in}`; realized gain :math:`G (1 - |\Gamma|^2)`.

Patterns here are relative (element fields are peak-normalised), so U is reported in the
engine's units, |E|^2 per steradian; D, G and ratios are absolute.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from .budget import require
from .directions import (
    Directions,
    ThetaPhiGrid,
    angles_deg,
    fibonacci_directions,  # noqa: F401  (old home, kept importable)
    unit_vectors_deg,
)
from .elements import Isotropic
from .engine import field, field_many, field_of_beams
from .errors import SteradianError
from .sphere import DEFAULT_MARGIN, SearchSet, find_maxima_many, require_search, rule_for
from .sphere import search_spacing as sphere_spacing
from .units import db10
from .validate import nonneg, positive

__all__ = [
    "power_rule",
    "RadiatedPower",
    "Peak",
    "radiated_power",
    "directivity",
    "peak_directivity",
    "peak_directivity_many",
    "beam_solid_angle",
    "taper_efficiency",
    "gain",
    "mismatch_factor",
    "realized_gain",
    "eirp",
    "to_db",
    "RF_EXPOSURE_CAUTION",
]

RF_EXPOSURE_CAUTION = (
    "Caution: EIRP and power density near a transmitting array can exceed safe RF exposure "
    "limits. Check them against the exposure limits of your local regulations and leave "
    "exposure assessment to licensed practice."
)

PowerMethod = Literal["auto", "quadrature", "closed_form"]


def to_db(x):
    """10 log10(x) of a power ratio as an array, floored at :data:`steradian.units.DB_FLOOR`
    (:func:`steradian.units.db10`)."""
    return np.asarray(db10(x))


@dataclass(frozen=True)
class RadiatedPower:
    """Radiated power :math:`\\int |E|^2 d\\Omega` with its error estimate.

    Attributes
    ----------
    value : float
        The integral (engine units: |E|^2 x sr).
    error : float
        Relative error estimate: for quadrature, the difference between the rule with the
        requested margin and one with 10 more nodes (the larger rule's value is returned); for
        the closed form, the rounding bound N * eps.
    method : str
        "quadrature" or "closed_form".
    n_theta, n_phi : int
        Rule size used (0 for the closed form).
    """

    value: float
    error: float
    method: str
    n_theta: int = 0
    n_phi: int = 0


def _is_isotropic(array) -> bool:
    return isinstance(array.element, Isotropic)


def _quadrature(array, frequency, margin):
    # Two rule sizes: the error estimate is the difference between the rule with ``margin``
    # and one with ``margin + 10`` extra nodes; the larger rule's value is returned, so the
    # estimate bounds the returned value's error from above (the rule converges
    # geometrically in the margin).
    rule = rule_for(array, frequency, margin)
    p = rule.integrate(field(array, rule.grid, frequency=frequency).intensity)
    fine = rule_for(array, frequency, margin + 10)
    pf = fine.integrate(field(array, fine.grid, frequency=frequency).intensity)
    return RadiatedPower(pf, abs(p - pf) / pf if pf > 0 else math.inf, "quadrature",
                         fine.n_theta, fine.n_phi)


def _closed_form_cheaper(array, frequency, margin) -> bool:
    """Cost model: the N^2/2 sinc pair sum against the two quadrature rules on the engine."""
    from .engine import field_seconds, sinc_power_seconds

    t_closed = sinc_power_seconds(array.n)
    if t_closed < 1e-3:  # not worth pricing the alternative
        return True
    t_quad = 0.0
    for c in (margin, margin + 10):
        try:
            rule = rule_for(array, frequency, c)
        except SteradianError:  # the rule is over the memory budget: the pair sum is O(N)
            return True
        t_quad += field_seconds(array.positions, array.k(frequency), rule.grid,
                                lattice=array.geometry.lattice)
    return t_closed <= t_quad


def closed_form_power(positions, weights, k) -> float:
    r"""Radiated power of isotropic elements (closed form, no quadrature).

    :math:`P = 4\pi\sum_{mn} w_m w_n^* \mathrm{sinc}(kr_{mn})` with
    sinc(x) = sin(x)/x, exact for the isotropic point-source model.

    References
    ----------
    R. J. Mailloux, *Phased Array Antenna Handbook*, 3rd ed., Artech House, 2018, ch. 2
    (directivity of arrays of isotropic elements).
    """
    from .engine import sinc_power_sum

    return 4 * np.pi * sinc_power_sum(positions, weights, k)


def radiated_power(array, *, frequency: float | None = None, method: PowerMethod = "auto",
                   margin: int = DEFAULT_MARGIN) -> RadiatedPower:
    """Radiated power of ``array`` (integral of |E|^2 over the sphere).

    Parameters
    ----------
    array : Array
    frequency : float, optional
        Evaluation frequency (Hz).
    method : {"auto", "quadrature", "closed_form"}
        "closed_form" needs isotropic elements. "auto" uses it for isotropic arrays of up to
        20,000 elements when the engine's cost model estimates it
        cheaper than the quadrature (small and mid-sized arrays; the N^2/2 pair sum loses to
        the two quadrature rules evaluated by non-uniform FFT from a few thousand elements)
        or when the quadrature rule would exceed the memory budget (electrically huge
        arrays: the pair sum needs O(N) memory), quadrature otherwise. Both agree to better
        than 1e-9 relative.
    margin : int
        Extra nodes beyond the band limit (see :mod:`steradian.sphere`).
    """
    if method == "closed_form" or (method == "auto" and _is_isotropic(array)
                                   and array.n <= 20_000
                                   and _closed_form_cheaper(array, frequency, margin)):
        if not _is_isotropic(array):
            raise SteradianError("closed-form radiated power needs isotropic elements")
        w = array.weights(frequency)
        val = closed_form_power(array.positions, w, array.k(frequency))
        return RadiatedPower(val, array.n * np.finfo(float).eps, "closed_form")
    return _quadrature(array, frequency, margin)


def directivity(array, where, *, frequency: float | None = None,
                power: RadiatedPower | None = None) -> np.ndarray:
    """Directivity D = 4 pi U / P_rad (linear) at ``where``, shaped like ``where``."""
    power = power or radiated_power(array, frequency=frequency)
    return 4 * np.pi * field(array, where, frequency=frequency).intensity / power.value


@dataclass(frozen=True)
class Peak:
    """Beam peak: direction and directivity."""

    directivity: float
    theta_deg: float
    phi_deg: float
    power: RadiatedPower

    @property
    def directivity_dbi(self) -> float:
        return float(to_db(self.directivity))

    @property
    def unit(self) -> np.ndarray:
        return unit_vectors_deg(self.theta_deg, self.phi_deg)


def search_spacing(array, frequency=None, per_null: float = 2.0) -> float:
    """Angular sample spacing (rad) giving ``per_null`` samples per main-lobe null width of
    ``array`` (see :func:`steradian.sphere.search_spacing`)."""
    return sphere_spacing(array.electrical_radius(frequency), per_null)


def peak_directivity(array, *, frequency: float | None = None,
                     power: RadiatedPower | None = None, aperture=None) -> Peak:
    """Peak directivity and its direction, refined off-grid.

    The package's lobe search (:mod:`steradian.sphere`): a near-uniform Fibonacci set with
    two samples per main-lobe null width finds every lobe's basin; the 6 highest local
    maxima and the steering direction are refined by a safeguarded Newton ascent in the
    tangent plane.

    ``aperture`` (:class:`steradian.aperture.Aperture` of ``array`` at ``frequency``)
    supplies the radiated power and the search set when analyses of many beams share them.
    """
    return peak_directivity_many([array], frequency=frequency, powers=[power],
                                 aperture=aperture)[0]


def peak_directivity_many(arrays, *, frequency: float | None = None, powers=None,
                          aperture=None) -> list[Peak]:
    """:func:`peak_directivity` of several arrays that share an aperture (the beams of a
    scan or taper family), in order: their candidates are refined together
    (:func:`steradian.sphere.find_maxima_many`, one engine call per ascent step for all the
    beams), each on its own beam's pattern, with the result :func:`peak_directivity` gives
    for that array alone. ``powers``: each array's :class:`RadiatedPower` (or None)."""
    arrays = list(arrays)
    powers = [None] * len(arrays) if powers is None else list(powers)
    searches, out = {}, []
    for array, power in zip(arrays, powers, strict=True):
        R = array.geometry.common_orientation
        front = array.element.front_only and (array.geometry.orientations is None
                                              or R is not None)
        spacing = search_spacing(array, frequency)
        require_search(spacing, front_only=front)  # refuse before the power integral
        key = (spacing, front, None if R is None or not front else np.asarray(R).tobytes())
        if key not in searches:
            make = SearchSet.fibonacci if aperture is None else aperture.search_set
            searches[key] = make(spacing, front_only=front, rotation=R if front else None)
        out.append((key, power or (radiated_power(array, frequency=frequency)
                                   if aperture is None else aperture.radiated_power(array))))
    peaks = [None] * len(arrays)
    for key, search in searches.items():
        idx = [i for i, (k, _) in enumerate(out) if k == key]
        group = [arrays[i] for i in idx]
        got = _refined_peaks(group, search, frequency)
        for i, (refined, values) in zip(idx, got, strict=True):
            peaks[i] = _peak_of(arrays[i], refined, values, out[i][1])
    return peaks


def _refined_peaks(arrays, search, frequency) -> list:
    """Refined maxima of each array's intensity (:func:`find_maxima_many`), highest first."""
    def inten(v, owner):
        return field_of_beams(arrays, v, owner, frequency=frequency).intensity

    d = search.directions
    values = list(field_many(arrays, Directions(d, (len(d),)), frequency=frequency).intensity)
    starts = [None if a.steering is None else a.steering.unit[None, :] for a in arrays]
    return find_maxima_many(inten, search, 6, values, starts=starts)


def _peak_of(array, refined, values, power) -> Peak:
    best_f = float(values[0])
    # Ties (a flat array's mirror lobe, a line array's cone) go to the lobe nearest the
    # steering direction, or nearest +z when unsteered, so the reported peak is the beam the
    # engineer pointed, not its mirror image.
    aim = array.steering.unit if array.steering is not None else np.array([0.0, 0.0, 1.0])
    tie = values >= best_f * (1 - 1e-9)
    j = int(np.argmax(refined[tie] @ aim))
    best_v, best_f = refined[tie][j], float(values[tie][j])
    theta, phi = angles_deg(best_v, pole_tol=1e-11)
    return Peak(4 * np.pi * best_f / power.value, theta, phi, power)


def beam_solid_angle(d_max: float) -> float:
    """Beam solid angle Omega_A = 4 pi / D_max (sr)."""
    return 4 * np.pi / positive("directivity", d_max)


def taper_efficiency(array, *, frequency: float | None = None) -> float:
    """Directivity of ``array`` over that of the same array with uniform amplitude.

    The uniform reference keeps the element mask, steering and element model; only the taper
    amplitudes (and fixed phases) become 1. For an equally spaced planar array at half-wave
    spacing this reduces to |sum w|^2 / (N sum |w|^2).
    """
    d = peak_directivity(array, frequency=frequency).directivity
    d0 = peak_directivity(array.with_taper(np.ones(array.n)), frequency=frequency).directivity
    return d / d0


def gain(d, efficiency: float = 1.0):
    """Gain G = xi D for radiation efficiency 0 < xi <= 1."""
    xi = positive("radiation_efficiency", efficiency)
    if xi > 1:
        raise SteradianError(f"radiation_efficiency must be at most 1, got {efficiency}")
    return xi * np.asarray(d)


def mismatch_factor(*, vswr: float | None = None, return_loss_db: float | None = None) -> float:
    """1 - |Gamma|^2 from a VSWR (>= 1) or a return loss in dB (>= 0, positive number)."""
    if (vswr is None) == (return_loss_db is None):
        raise SteradianError("give exactly one of vswr or return_loss_db")
    if vswr is not None:
        s = positive("vswr", vswr)
        if s < 1:
            raise SteradianError(f"vswr must be at least 1, got {vswr}")
        gamma = (s - 1) / (s + 1)
    else:
        gamma = 10 ** (-nonneg("return_loss_db", return_loss_db) / 20)
    return 1 - gamma**2


def realized_gain(g, *, vswr: float | None = None, return_loss_db: float | None = None):
    """Realized gain G (1 - |Gamma|^2)."""
    if vswr is None and return_loss_db is None:
        return np.asarray(g)
    return np.asarray(g) * mismatch_factor(vswr=vswr, return_loss_db=return_loss_db)


def eirp(realized_gain_linear: float, element_power_w: float, weights) -> dict:
    """EIRP of a transmit array.

    Each element's channel delivers ``element_power_w`` at full amplitude; element n delivers
    ``element_power_w * |w_n|^2 / max|w|^2``. EIRP = P_total * G_realized.

    Returns a dict with total input power (W), EIRP (W and dBW) and the RF exposure caution.
    """
    p = positive("element_power_w", element_power_w, " W")
    w = np.abs(np.asarray(weights))
    total = float(p * (w**2).sum() / (w.max() ** 2))
    e = total * float(realized_gain_linear)
    return {"total_power_w": total, "eirp_w": e, "eirp_dbw": float(to_db(e)),
            "caution": RF_EXPOSURE_CAUTION}


def power_rule(array, frequency=None, rule=None) -> tuple[np.ndarray, np.ndarray]:
    """The directions (M, 3) and weights (M,) of the power matrix of elements sharing one
    orientation: Q = sum_i omega_i |e(r_i)|^2 p_i^H p_i (:func:`power_matrix`).

    The element field factors out of the response (a_i = e(r_i) p_i), so both polarisation
    components fold into one intensity weight. For planar arrays (constant z) on a rule that
    is symmetric about the horizon, the phase rows of mirror directions differ by a factor
    common to every element, which cancels in p_i^H p_i: their weights are added and half
    the rows are used. ``rule`` defaults to :func:`steradian.sphere.rule_for` of the array.
    """
    if rule is None:
        rule = rule_for(array, frequency=frequency)
    el = array.element_at(frequency)
    th, ph = np.meshgrid(rule.theta, rule.phi, indexing="ij")
    e_t, e_p = el.pattern(th.ravel(), ph.ravel())
    g = (np.abs(e_t) ** 2 + np.abs(e_p) ** 2).reshape(rule.n_theta, rule.n_phi)
    wts = rule.w_theta[:, None] * rule.w_phi * g
    pos = array.positions
    nt = rule.n_theta
    symmetric = (not rule.front_only and np.ptp(pos[:, 2]) == 0.0
                 and np.abs(rule.theta + rule.theta[::-1] - np.pi).max() < 1e-14)
    if symmetric and nt > 1:
        h = (nt + 1) // 2
        folded = wts[:h].copy()
        folded[: nt - h] += wts[h:][::-1]
        return ThetaPhiGrid(rule.theta[:h], rule.phi).vectors, folded.ravel()
    return rule.grid.vectors, wts.ravel()


def _power_matrix_common(array, frequency, rule) -> np.ndarray:
    """Q for elements sharing one orientation (:func:`power_rule`, then the Gram matrix)."""
    from .engine import gram_matrix

    dirs, wts = power_rule(array, frequency, rule)
    return gram_matrix(array.positions, array.k(frequency), dirs, wts)


def power_matrix(array, *, frequency: float | None = None,
                 margin: int = DEFAULT_MARGIN) -> np.ndarray:
    r"""Hermitian radiated-power matrix Q with :math:`P_{rad} = w^H Q w` for any weights w.

    For isotropic elements :math:`Q_{mn} = 4\pi\,\mathrm{sinc}(k|r_m - r_n|)` (closed form);
    otherwise :math:`Q = \sum_i \omega_i a_i^H a_i` over the nodes of the sphere rule, with
    :math:`a_i` the element responses of :func:`steradian.engine.response_matrix`. Element
    mask and steering are not applied (Q acts on the full weight vector). Refused before
    anything is built when the N x N matrix and its intermediates (64 bytes per entry: the
    complex result and its Hermitian parts; for isotropic elements the distances and the
    sinc, measured peak 40 B per entry) would exceed the memory budget
    (:mod:`steradian.budget`).
    """
    from scipy.spatial.distance import pdist, squareform

    n = array.n
    require(64 * n * n, f"the radiated-power matrix of {n:,} x {n:,} elements",
            "it is dense in the element count; use radiated_power for given weights")
    k = array.k(frequency)
    if _is_isotropic(array):
        r = squareform(pdist(array.positions))
        return 4 * np.pi * np.sinc(k * r / np.pi)
    from .engine import response_matrix

    rule = rule_for(array, frequency, margin)
    if array.geometry.orientations is None:
        return _power_matrix_common(array, frequency, rule)
    A = response_matrix(array, rule.grid, frequency=frequency)  # (2, M, N)
    wts = (rule.w_theta[:, None] * np.full(rule.n_phi, rule.w_phi)[None, :]).ravel()
    Q = np.zeros((array.n, array.n), complex)
    for c in range(2):
        Ac = A[c]
        Q += (Ac.conj().T * wts) @ Ac
    # The plain sum w^H Q w must equal radiated_power; Q^T convention follows E = A w.
    return 0.5 * (Q + Q.conj().T)


__all__ += ["closed_form_power", "power_matrix", "search_spacing"]
