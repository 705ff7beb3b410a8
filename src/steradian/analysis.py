"""One-call analysis of an array: the summary behind ``steradian analyze``.

Combines radiation (radiated power, peak directivity, gain, realized gain, EIRP) with the
pattern metrics of :mod:`steradian.metrics` into one frozen :class:`Analysis`, whose
``to_dict()`` is the JSON-friendly summary.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .radiation import (
    RF_EXPOSURE_CAUTION,
    Peak,
    RadiatedPower,
    beam_solid_angle,
    eirp,
    gain,
    mismatch_factor,
    peak_directivity_many,
    radiated_power,
)
from .settings import AnalysisOptions
from .units import db10

__all__ = ["AnalysisOptions", "Analysis", "analyze", "analyze_many"]


@dataclass(frozen=True)
class Analysis(Mapping):
    """Result of :func:`analyze`: radiation figures of one array and, optionally, its
    pattern metrics.

    :meth:`to_dict` gives the JSON-friendly summary the command line prints and writes; the
    object also reads as that mapping (``result["gain_dbi"]``).

    Attributes
    ----------
    n_elements, n_enabled : int
    design_frequency_hz, frequency_hz, wavelength_m : float
    element : dict
        The element model's description.
    steering : dict or None
        ``theta_deg``, ``phi_deg`` and ``mode`` of the steering.
    peak : Peak
        Peak directivity and its direction (with the radiated power).
    radiation_efficiency, gain_dbi, mismatch_factor, realized_gain_dbi : float
    beam_solid_angle_sr : float
    eirp : dict or None
        From :func:`steradian.radiation.eirp` when a transmit power was given.
    metrics : PatternMetrics or None
        When ``options.metrics``.
    """

    n_elements: int
    n_enabled: int
    design_frequency_hz: float
    frequency_hz: float
    wavelength_m: float
    element: dict
    steering: dict | None
    peak: Peak
    radiation_efficiency: float
    gain_dbi: float
    mismatch_factor: float
    realized_gain_dbi: float
    beam_solid_angle_sr: float
    eirp: dict | None = None
    metrics: object | None = None

    @property
    def power(self) -> RadiatedPower:
        """Radiated power used for every directivity."""
        return self.peak.power

    def to_dict(self) -> dict:
        """The JSON-friendly summary (key order as printed)."""
        pk, power = self.peak, self.peak.power
        out = {
            "n_elements": self.n_elements, "n_enabled": self.n_enabled,
            "design_frequency_hz": self.design_frequency_hz, "frequency_hz": self.frequency_hz,
            "wavelength_m": self.wavelength_m, "element": self.element,
            "steering": self.steering,
            "peak_directivity_dbi": pk.directivity_dbi, "peak_directivity": pk.directivity,
            "peak_theta_deg": pk.theta_deg, "peak_phi_deg": pk.phi_deg,
            "radiation_efficiency": self.radiation_efficiency, "gain_dbi": self.gain_dbi,
            "mismatch_factor": self.mismatch_factor,
            "realized_gain_dbi": self.realized_gain_dbi,
            "beam_solid_angle_sr": self.beam_solid_angle_sr,
            "radiated_power": {"value": power.value, "method": power.method,
                               "n_theta": power.n_theta, "n_phi": power.n_phi,
                               "relative_error_estimate": power.error},
            "integrator_error_estimate": power.error,
        }
        if self.eirp is not None:
            out["eirp"] = self.eirp
            out["rf_exposure_caution"] = RF_EXPOSURE_CAUTION
        if self.metrics is not None:
            out["metrics"] = self.metrics.to_dict()
        return out

    def __getitem__(self, key):
        return self.to_dict()[key]

    def __iter__(self):
        return iter(self.to_dict())

    def __len__(self) -> int:
        return len(self.to_dict())


def analyze(array, options: AnalysisOptions | None = None, *, aperture=None) -> Analysis:
    """Analyse ``array``: radiated power, peak directivity, gain, realized gain, EIRP and,
    with ``options.metrics``, the pattern metrics (beamwidths in two principal planes, peak
    sidelobe level, integrated sidelobe ratio, grating lobes, pointing error, front-to-back
    ratio, scan loss).

    Returns an :class:`Analysis`; ``.to_dict()`` is the JSON-friendly summary with keys
    ``peak_directivity_dbi``, ``peak_theta_deg``, ``peak_phi_deg``, ``gain_dbi``,
    ``realized_gain_dbi``, ``radiated_power`` (value, method, rule size, relative error
    estimate), ``metrics`` and the rest.

    ``aperture``: an :class:`steradian.aperture.Aperture` shared by analyses of arrays that
    differ only in their weights (a scan or taper sweep) at ``options.frequency``: the
    radiated-power matrices, search sets and the unsteered reference beam are then built
    once for all of them. The results are the same to rounding.
    """
    return analyze_many([array], options, aperture=aperture)[0]


def analyze_many(arrays, options: AnalysisOptions | None = None, *,
                 aperture=None) -> list[Analysis]:
    """:func:`analyze` of several arrays that share one aperture (the beams of a scan or a
    taper sweep), in order. Each result is what :func:`analyze` gives for that array alone;
    the sidelobe refinements of all of them run together (see
    :func:`steradian.metrics.pattern_metrics_many`)."""
    opt = options or AnalysisOptions()
    f = opt.frequency
    arrays = list(arrays)
    if opt.metrics:
        from .metrics import require_metrics_search

        for array in arrays:
            require_metrics_search(array, f)  # refuse an oversized search before any work
    powers = [radiated_power(array, frequency=f) if aperture is None
              else aperture.radiated_power(array)  # refuses an array of another aperture
              for array in arrays]
    peaks = peak_directivity_many(arrays, frequency=f, powers=powers, aperture=aperture)
    metrics = [None] * len(arrays)
    if opt.metrics:
        from .metrics import pattern_metrics_many

        metrics = pattern_metrics_many(arrays, frequency=f, peaks=peaks,
                                       beam_kind=opt.beam_kind, aperture=aperture)
    return [_result(a, opt, pk, m) for a, pk, m in zip(arrays, peaks, metrics, strict=True)]


def _result(array, opt: AnalysisOptions, pk, metrics) -> Analysis:
    f = opt.frequency
    g = float(gain(pk.directivity, opt.radiation_efficiency))
    mm = 1.0
    if opt.vswr is not None or opt.return_loss_db is not None:
        mm = mismatch_factor(vswr=opt.vswr, return_loss_db=opt.return_loss_db)
    freq = array.frequency if f is None else f
    return Analysis(
        n_elements=array.n,
        n_enabled=int(array.n if array.enabled is None else np.count_nonzero(array.enabled)),
        design_frequency_hz=array.frequency, frequency_hz=freq,
        wavelength_m=array.speed / freq, element=array.element.describe(),
        steering=None if array.steering is None else {
            "theta_deg": array.steering.theta_deg, "phi_deg": array.steering.phi_deg,
            "mode": array.steering.mode},
        peak=pk, radiation_efficiency=opt.radiation_efficiency, gain_dbi=float(db10(g)),
        mismatch_factor=mm, realized_gain_dbi=float(db10(g * mm)),
        beam_solid_angle_sr=beam_solid_angle(pk.directivity),
        eirp=None if opt.element_power_w is None else eirp(g * mm, opt.element_power_w,
                                                            array.weights(f)),
        metrics=metrics)
