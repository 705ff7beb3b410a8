"""Part of :mod:`steradian.report`: figures of study results (sweep curves, tolerance
histograms), drawn from the rows a study wrote."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from ..plots import histogram_figure, sweep_figure

__all__ = ["SWEEP_COLUMNS", "TOLERANCE_COLUMNS", "sweep_result_figure",
           "tolerance_result_figure"]

SWEEP_COLUMNS = (("directivity_dbi", "directivity (dBi)"), ("psl_db", "peak sidelobe (dB)"),
                 ("pointing_error_deg", "pointing error (deg)"))
"""Columns of a sweep's rows drawn against its first axis, with their labels."""

TOLERANCE_COLUMNS = (("directivity_loss_db", "directivity loss (dB)"),
                     ("psl_db", "peak sidelobe (dB)"),
                     ("pointing_error_deg", "pointing error (deg)"))
"""Columns of a tolerance run's rows whose histograms are drawn, with their labels."""


def sweep_result_figure(rows: Sequence[Mapping], axes: Sequence[str], *,
                        caption: str | None = None):
    """Sweep curves of a study's rows: directivity, peak sidelobe and pointing error against
    the first axis, one line per value of the second axis (a grid of two)."""
    labels = dict(SWEEP_COLUMNS)
    cols = [c for c, _ in SWEEP_COLUMNS if any(r.get(c) is not None for r in rows)]
    return sweep_figure(rows, axes[0], cols, labels=labels, caption=caption,
                        what=f"sweep of {axes[0]}" + (f" and {axes[1]}" if len(axes) > 1
                                                      else ""),
                        group=axes[1] if len(axes) > 1 else None)


def tolerance_result_figure(rows: Sequence[Mapping], *, caption: str | None = None):
    """Histograms of a tolerance run's rows (directivity loss, peak sidelobe, pointing
    error), each with its mean and 95th percentile: one Figure per column, in
    :data:`TOLERANCE_COLUMNS` order."""
    return [histogram_figure(rows, label=c, caption=caption, axis_label=label,
                             what=f"tolerance study, {label}")
            for c, label in TOLERANCE_COLUMNS if any(r.get(c) is not None for r in rows)]
