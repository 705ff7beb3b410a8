"""Analysis settings: what an analysis evaluates beyond directivity.

A plain value, read from a design file's ``[analysis]`` table by :mod:`steradian.io.design`
and used by :func:`steradian.analysis.analyze`; it sits at the bottom of the package so both
can hold it without the file layer reaching the computation.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["AnalysisOptions", "BEAM_KINDS"]

BEAM_KINDS = ("sum", "difference_az", "difference_el")
"""Beam kinds: a sum beam, or a difference beam antisymmetric about the y-z plane (azimuth)
or the x-z plane (elevation); see :mod:`steradian.metrics`."""


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
    beam_kind : {"sum", "difference_az", "difference_el"}
        What the excitation forms (:data:`BEAM_KINDS`): difference beams get difference
        metrics, and a sum beam whose excitation is a difference is refused.
    """

    frequency: float | None = None
    radiation_efficiency: float = 1.0
    vswr: float | None = None
    return_loss_db: float | None = None
    element_power_w: float | None = None
    metrics: bool = True
    beam_kind: str = "sum"
