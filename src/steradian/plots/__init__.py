"""Figures: pattern cuts, maps, layouts, curves and beam-table coverage, in the project's
own look, each a public function returning a :class:`matplotlib.figure.Figure`.

matplotlib is imported inside the functions (``import steradian`` and ``steradian --help``
stay fast) and figures are built from :class:`matplotlib.figure.Figure` directly, without
pyplot, so no global backend state is touched. :func:`save_figure` writes PNG, SVG or PDF by
the file's suffix, atomically.

- Pattern figures take sampled patterns (:class:`~steradian.samples.Cut`,
  :class:`~steradian.samples.UVMap`, grids) and the analysis summary's numbers (the
  ``metrics`` block of :func:`steradian.workflows.analyze_design`): :func:`cuts_figure`,
  :func:`polar_figure`, :func:`uv_figure`, :func:`angle_map_figure`,
  :func:`pattern_3d_figure`.
- :func:`layout_figure`: element positions coloured by amplitude, phase (and state).
- Plain rows: :func:`trade_curve_figure`, :func:`sweep_figure`, :func:`histogram_figure`,
  :func:`coverage_figure` (a beam table's per-beam metrics rows).
- :func:`full_cuts` and :func:`sphere_map`: a design's samples with the analysis's own peak
  and radiated power (:func:`steradian.report.design_figure` draws any kind by name).
- :func:`plot_cuts`, :func:`plot_uv` and :func:`plot_trade_curve` write PNG files (the
  earlier interface, kept).
"""

from __future__ import annotations

from collections.abc import Sequence

from ._curves import coverage_figure, histogram_figure, sweep_figure, trade_curve_figure
from ._cuts import CUT_LABELS, cuts_figure, locate_on_cut, polar_figure
from ._design import design_caption, full_cuts, sphere_map, summary_peak, taper_text
from ._layout import layout_figure
from ._maps import angle_map_figure, grating_diagram, lattice_orders, pattern_3d_figure, uv_figure
from ._style import COLORS, FIGURE_FORMATS, figure_bytes, frequency_text, save_figure

__all__ = ["CUT_LABELS", "cuts_figure", "polar_figure", "locate_on_cut", "uv_figure",
           "grating_diagram", "lattice_orders", "angle_map_figure", "pattern_3d_figure",
           "layout_figure", "trade_curve_figure", "sweep_figure", "histogram_figure",
           "coverage_figure", "design_caption", "taper_text",
           "full_cuts", "sphere_map", "summary_peak", "COLORS", "FIGURE_FORMATS",
           "figure_bytes", "frequency_text", "save_figure", "plot_cuts", "plot_uv",
           "plot_trade_curve", "write_figure"]


def write_figure(fig, path):
    """Write ``fig`` to ``path`` as PNG, SVG or PDF (by suffix), atomically."""
    return save_figure(fig, path)


def plot_cuts(cuts, path, *, hpbw_deg: Sequence[float | None] | None = None,
              psl_db: float | None = None, title: str | None = None,
              range_db: float = 50.0) -> None:
    """Write a figure of pattern cuts (:func:`cuts_figure`) to ``path`` (PNG, SVG or PDF).

    ``hpbw_deg``: the half-power beamwidth of each cut (deg), drawn centred on the beam
    axis; ``psl_db``: the peak sidelobe level relative to the peak (dB), drawn as a level
    line. Prefer :func:`cuts_figure` with the analysis ``metrics`` block, which places the
    half-power edges and the worst sidelobe where they are.
    """
    planes = {}
    for c, bw in zip(cuts, hpbw_deg or [], strict=False):
        if bw is not None:
            planes[c.name] = {"hpbw_deg": bw, "half_power_deg": [-bw / 2, bw / 2]}
    fig = cuts_figure(cuts, metrics={"psl_db": psl_db, "planes": planes}, caption=title,
                      range_db=range_db)
    save_figure(fig, path)


def plot_uv(uvmap, path, *, title: str | None = None, range_db: float = 40.0,
            peak_dbi: float | None = None) -> None:
    """Write the u-v map (:func:`uv_figure`) to ``path``; ``peak_dbi`` (the analysis peak)
    tops the colour scale and is the title's number (default: the grid's highest value)."""
    save_figure(uv_figure(uvmap, peak_dbi=peak_dbi, caption=title, range_db=range_db), path)


def plot_trade_curve(curve, path, *, title: str | None = None) -> None:
    """Write the trade-curve figure (:func:`trade_curve_figure`) to ``path``, atomically."""
    save_figure(trade_curve_figure(curve, title), path)
