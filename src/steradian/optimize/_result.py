"""Result records of synthesis runs."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..units import db20

__all__ = ["SynthesisResult"]


@dataclass(frozen=True, eq=False)
class SynthesisResult:
    """Weights found by a synthesis method, with their independent re-check.

    Attributes
    ----------
    array : Array
        The input array with the new taper; its steering is kept, so ``array.weights()``
        equals :attr:`weights` at the design frequency (and beam tables can re-steer it).
    weights : ndarray of complex, shape (N,)
        Element excitations at the design frequency (steering included), largest magnitude 1.
    method : str
        "closed_form", "max_directivity", "min_sidelobe", "phase_only" or "thinning".
    directivity_dbi : float
        Directivity toward the beam direction, from an independent radiated-power
        evaluation of the final weights (:func:`steradian.radiation.radiated_power`).
    peak_directivity_dbi : float
        Peak directivity (refined off-grid).
    taper_efficiency : float
        Directivity over that of uniform amplitudes with the same steering and mask.
    psl_db : float or None
        Peak sidelobe level in dB relative to the main-beam peak, from the dense re-check
        outside the main-lobe zone (refined off-grid, independent of the constraint samples).
    psl_direction : tuple of float or None
        (theta, phi) in degrees of that sidelobe.
    limit_db : float or None
        The requested peak sidelobe level (or, for min_sidelobe, the level found).
    margin_db : float
        Largest excess of the dense-checked pattern over its constraint envelope (PSL, mask,
        notches) in dB; at most the tolerance when :attr:`met`.
    met : bool
        Every constraint holds on the dense check to within the tolerance.
    white_noise_gain_db : float
        :math:`|E_0|^2/\\sum_n |a_n(r_0)|^2|w_n|^2` in dB; :math:`10\\log_{10}N` for uniform
        weights. Far below that means superdirective, tolerance-sensitive weights.
    dynamic_range_db : float
        Largest over smallest weight magnitude in dB, among weights above -80 dB (lower ones
        are effectively off; a note counts them).
    null_depths_db : list of float
        Level toward each requested null, dB relative to the main-beam peak.
    mainlobe : list of float
        Main-lobe zone half-widths (direction cosines along the array's principal axes).
    certificate : dict
        Solver status, iterations, primal and dual objectives and their relative gap, and
        ``directivity_bound_dbi``: no weights meeting the constraints at every direction can
        exceed it (loaded objective); empty for non-convex methods.
    rounds : int
        Adaptive sampling rounds (solves).
    samples : int
        Constraint samples in the final solve.
    unknowns : int
        Real unknowns after exploiting symmetry.
    symmetry : str
        Symmetry used ("none", "centro", "quadrant").
    notes : list of str
        Warnings and remarks (superdirectivity, tolerance not met, stopping rule...).
    seconds : float
        Wall time.
    path : str
        The solve path of the final round: "interior" (dense interior point on the
        real-field program), "first_order" (ADMM on it), "conic" (clarabel) or "" (closed
        form, non-convex methods).
    bound_dbi : float or None
        Upper bound on the directivity of any weights meeting the constraints at every
        direction, from a dual-feasible point of the final round (loaded objective). On the
        "interior" and "first_order" paths it is computed independently of the solver and
        holds for weights meeting the limits within ``tol_db`` (as the reached weights do);
        on the "conic" path it is the solver's dual objective at the exact limits.
    gap_db : float or None
        ``bound_dbi`` less the directivity the weights reach on the same (loaded) objective
        (``certificate["loading_effect_db"]`` is the loading's own share, typically under
        1e-4 dB). Non-negative on the interior and first-order paths; on the conic path it
        can be a few 1e-5 dB negative (weights within the tolerance, bound at the limit).
    stages : dict
        Wall time per stage in seconds: ``setup`` (power matrix, parametrisation),
        ``samples`` (initial constraint rows), ``solve``, ``check`` (dense re-check of each
        round and new rows), ``finish`` (the independent final evaluation).
    beams : list of dict
        Scan-volume synthesis only (:func:`~steradian.optimize.max_worst_directivity`): per
        scan direction ``theta_deg``, ``phi_deg``, ``directivity_dbi``, ``psl_db``,
        ``psl_direction_deg``, ``margin_db`` and ``met``; the headline figures above are then
        those of the worst beam. Empty for single-beam methods.
    """

    array: object
    weights: np.ndarray
    method: str
    directivity_dbi: float
    peak_directivity_dbi: float
    taper_efficiency: float
    psl_db: float | None
    psl_direction: tuple | None
    limit_db: float | None
    margin_db: float
    met: bool
    white_noise_gain_db: float
    dynamic_range_db: float
    null_depths_db: list = field(default_factory=list)
    mainlobe: list = field(default_factory=list)
    certificate: dict = field(default_factory=dict)
    rounds: int = 0
    samples: int = 0
    unknowns: int = 0
    symmetry: str = "none"
    notes: list = field(default_factory=list)
    seconds: float = 0.0
    beams: list = field(default_factory=list)
    path: str = ""
    bound_dbi: float | None = None
    gap_db: float | None = None
    stages: dict = field(default_factory=dict)

    def summary(self) -> dict:
        """JSON-friendly summary (no weights)."""
        return {
            "method": self.method,
            "directivity_dbi": self.directivity_dbi,
            "peak_directivity_dbi": self.peak_directivity_dbi,
            "taper_efficiency": self.taper_efficiency,
            "psl_db": self.psl_db,
            "psl_direction_deg": list(self.psl_direction) if self.psl_direction else None,
            "limit_db": self.limit_db,
            "margin_db": self.margin_db,
            "met": self.met,
            "white_noise_gain_db": self.white_noise_gain_db,
            "dynamic_range_db": self.dynamic_range_db,
            "null_depths_db": list(self.null_depths_db),
            "mainlobe": list(self.mainlobe),
            "certificate": dict(self.certificate),
            "rounds": self.rounds,
            "samples": self.samples,
            "unknowns": self.unknowns,
            "symmetry": self.symmetry,
            "notes": list(self.notes),
            "seconds": self.seconds,
            "path": self.path,
            "bound_dbi": self.bound_dbi,
            "gap_db": self.gap_db,
            "stages": dict(self.stages),
            "elements": int(self.array.n),
        } | ({"beams": [dict(b) for b in self.beams]} if self.beams else {})

    def to_dict(self) -> dict:
        """Summary plus the weights (real and imaginary parts, amplitude dB, phase deg)."""
        w = self.weights
        out = self.summary()
        out["weights"] = {"re": w.real.tolist(), "im": w.imag.tolist(),
                          "amplitude_db": np.atleast_1d(db20(w)).tolist(),
                          "phase_deg": np.degrees(np.angle(w)).tolist()}
        return out
