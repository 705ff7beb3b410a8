"""Figures of a design by kind (``steradian figure``): each samples the pattern with the
analysis's own peak and radiated power and prints the analysis's numbers."""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from ..errors import SteradianError, suggest
from ..plots import design_caption, full_cuts, sphere_map, summary_peak

__all__ = ["FIGURE_KINDS", "design_figure"]

FIGURE_KINDS = {
    "cuts": "cuts in dB over the whole circle, main-beam panels, worst sidelobe marked",
    "polar": "polar cuts, dB relative to the peak",
    "uv": "u-v map with visible circle, theta rings, grating lobes and lattice diagram",
    "theta-phi": "directivity over theta and phi (whole sphere)",
    "az-el": "directivity over azimuth and elevation (whole sphere)",
    "3d": "3-D pattern view",
    "layout": "element layout coloured by amplitude and phase",
    "coverage": "beam-table coverage: gain, sidelobe and quantization lobe per beam",
    "trade": "trade curve: maximum directivity against peak sidelobe level",
}
"""Figure kinds of :func:`design_figure` (and ``steradian figure``) with one line each."""

def _uv_parts(design, summary, points):
    from ..patterns import uv_map
    from ..plots import lattice_orders

    uvm = uv_map(design.array, points, frequency=summary["frequency_hz"],
                 power=summary_peak(summary).power)
    lat = lattice_orders(design.array.geometry.lattice, summary["wavelength_m"])
    scan = None
    if design.sections.get("beams") is not None:
        from ..workflows import beam_directions_of_design

        d = beam_directions_of_design(design)
        if d is not None:
            t, p = np.deg2rad(d[:, 0]), np.deg2rad(d[:, 1])
            scan = np.column_stack([np.sin(t) * np.cos(p), np.sin(t) * np.sin(p)])
    return uvm, lat, scan


def design_figure(design, kind: str, summary: Mapping | None = None, *,
                  uv_points: int = 301, build=None, curve=None, beam: int = 0):
    """One figure of ``design`` (a kind of :data:`FIGURE_KINDS`) as a matplotlib Figure.

    ``summary``: the design's analysis (:func:`steradian.workflows.analyze_design`), computed
    when omitted; every printed number comes from it. ``build``: a
    :class:`~steradian.beamtable.BeamBuild` for ``coverage`` (built from the design's
    ``[channel]`` and ``[beams]`` when omitted) and, for ``layout``, the source of a third
    panel: the phase codes of beam ``beam``; ``curve``: a trade curve for ``trade``
    (computed from ``[synthesis]`` when omitted).

    Raises
    ------
    SteradianError
        An unknown kind (with the closest one); DesignError when the kind needs a table the
        design lacks (``coverage`` without ``[channel]``/``[beams]``).
    """
    from ..workflows import analyze_design, requirements_of_design

    if kind not in FIGURE_KINDS:
        raise SteradianError(f"unknown figure kind {kind!r}{suggest(kind, FIGURE_KINDS)}; "
                             f"kinds: {', '.join(FIGURE_KINDS)}")
    if kind == "trade":
        from ..plots import frequency_text, trade_curve_figure
        from ..workflows import tradeoff_of_design

        curve = tradeoff_of_design(design) if curve is None else curve
        return trade_curve_figure(curve, caption=f"{design.name}: "
                                  f"{frequency_text(design.array.frequency)}")
    summary = analyze_design(design) if summary is None else summary
    cap = design_caption(design, summary)
    m = summary.get("metrics") or {}
    peak = summary["peak_directivity_dbi"]
    return _draw(design, kind, summary, cap, m, peak, uv_points, build,
                 requirements_of_design(design), beam)


def _draw(design, kind, summary, cap, m, peak, uv_points, build, reqs, beam=0):
    from .. import plots

    arr = design.array
    if kind in ("cuts", "polar"):
        cuts = full_cuts(arr, summary_peak(summary), m, summary["frequency_hz"])
        if kind == "cuts":
            return plots.cuts_figure(cuts, metrics=m, peak_dbi=peak, caption=cap,
                                     requirements=reqs)
        return plots.polar_figure(cuts, metrics=m, peak_dbi=peak, caption=cap)
    if kind == "uv":
        uvm, lat, scan = _uv_parts(design, summary, uv_points)
        return plots.uv_figure(uvm, peak_dbi=peak, metrics=m, lattice_uv=lat, scan_uv=scan,
                               caption=cap)
    if kind in ("theta-phi", "az-el"):
        k = kind.replace("-", "_")
        a, b, d = sphere_map(arr, summary, k)
        return plots.angle_map_figure(a, b, d, kind=k, peak_dbi=peak, metrics=m, caption=cap)
    if kind == "3d":
        a, b, d = sphere_map(arr, summary, "theta_phi", 2.0)
        return plots.pattern_3d_figure(b, a, d, peak_dbi=peak, caption=cap)
    if kind == "layout":
        states, label = None, ""
        if build is not None:
            b = int(beam)
            if not 0 <= b < build.table.n_beams:
                raise SteradianError(f"beam {b} is not in the table (beams 0 to "
                                     f"{build.table.n_beams - 1})")
            states = np.asarray(build.table.codes[b][:, 0], float)
            th, ph = build.table.directions[b]
            label = f"phase code of beam {b} (theta {th:.1f}, phi {ph:.1f} deg)"
        return plots.layout_figure(arr.positions, arr.weights(summary["frequency_hz"]),
                                   enabled=arr.enabled, states=states, state_label=label,
                                   state_cyclic=True, caption=cap)
    from ..workflows import beam_table_from_design  # coverage

    build = beam_table_from_design(design) if build is None else build
    return plots.coverage_figure(build.metrics.rows(), requirements=reqs, caption=cap)
