"""One-call analysis of an array: the summary behind ``steradian analyze``.

Combines radiation (radiated power, peak directivity, gain, realized gain, EIRP) with the
pattern metrics of :mod:`steradian.metrics` into one JSON-friendly dictionary.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .radiation import (
    RF_EXPOSURE_CAUTION,
    beam_solid_angle,
    eirp,
    gain,
    mismatch_factor,
    peak_directivity,
    radiated_power,
    to_db,
)

__all__ = ["AnalysisOptions", "analyze"]


@dataclass(frozen=True)
class AnalysisOptions:
    """What to evaluate beyond directivity.

    Attributes
    ----------
    frequency : float, optional
        Evaluation frequency in Hz (default: design frequency).
    radiation_efficiency : float
        xi = P_rad / P_in, 0 < xi <= 1.
    vswr, return_loss_db : float, optional
        Mismatch for realized gain (give at most one).
    element_power_w : float, optional
        Transmit power per element channel at full amplitude (W), for EIRP.
    metrics : bool
        Compute beamwidths, sidelobes, grating lobes (slower than directivity alone).
    """

    frequency: float | None = None
    radiation_efficiency: float = 1.0
    vswr: float | None = None
    return_loss_db: float | None = None
    element_power_w: float | None = None
    metrics: bool = True


def analyze(array, options: AnalysisOptions | None = None) -> dict:
    """Analyse ``array`` and return a JSON-friendly summary dictionary.

    Keys include ``peak_directivity_dbi``, ``peak_theta_deg``, ``peak_phi_deg``, ``gain_dbi``,
    ``realized_gain_dbi``, ``radiated_power`` (value, method, rule size, relative error
    estimate) and, with ``options.metrics``, a ``metrics`` block (beamwidths in two principal
    planes, peak sidelobe level, integrated sidelobe ratio, grating lobes, pointing error,
    front-to-back ratio, scan loss).
    """
    opt = options or AnalysisOptions()
    f = opt.frequency
    power = radiated_power(array, frequency=f)
    pk = peak_directivity(array, frequency=f, power=power)
    g = float(gain(pk.directivity, opt.radiation_efficiency))
    mm = 1.0
    if opt.vswr is not None or opt.return_loss_db is not None:
        mm = mismatch_factor(vswr=opt.vswr, return_loss_db=opt.return_loss_db)
    out = {
        "n_elements": array.n,
        "n_enabled": int(array.n if array.enabled is None else np.count_nonzero(array.enabled)),
        "design_frequency_hz": array.frequency,
        "frequency_hz": array.frequency if f is None else f,
        "wavelength_m": array.speed / (array.frequency if f is None else f),
        "element": array.element.describe(),
        "steering": None if array.steering is None else {
            "theta_deg": array.steering.theta_deg, "phi_deg": array.steering.phi_deg,
            "mode": array.steering.mode},
        "peak_directivity_dbi": pk.directivity_dbi,
        "peak_directivity": pk.directivity,
        "peak_theta_deg": pk.theta_deg,
        "peak_phi_deg": pk.phi_deg,
        "radiation_efficiency": opt.radiation_efficiency,
        "gain_dbi": float(to_db(g)),
        "mismatch_factor": mm,
        "realized_gain_dbi": float(to_db(g * mm)),
        "beam_solid_angle_sr": beam_solid_angle(pk.directivity),
        "radiated_power": {"value": power.value, "method": power.method,
                           "n_theta": power.n_theta, "n_phi": power.n_phi,
                           "relative_error_estimate": power.error},
        "integrator_error_estimate": power.error,
    }
    if opt.element_power_w is not None:
        out["eirp"] = eirp(g * mm, opt.element_power_w, array.weights(f))
        out["rf_exposure_caution"] = RF_EXPOSURE_CAUTION
    if opt.metrics:
        from .metrics import pattern_metrics

        out["metrics"] = pattern_metrics(array, frequency=f, peak=pk).to_dict()
    return out
