"""Pattern cuts: directivity against angle from the beam axis, in dB and in polar form.

The figures take sampled cuts (:class:`steradian.samples.Cut`) and the analysis summary's
numbers (the ``metrics`` block of :func:`steradian.workflows.analyze_design`): every number
printed comes from that block, never from the sampled curve.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from ..directions import unit_vectors_deg
from ._style import INK, new_figure, styled, title_lines

__all__ = ["CUT_LABELS", "cuts_figure", "polar_figure", "locate_on_cut"]

CUT_LABELS = {
    "phi_plane": "plane through the beam and z (phi = phi0)",
    "cross_plane": "orthogonal plane through the beam",
    "sidelobe_plane": "plane through the beam and the worst sidelobe",
}
"""Legend text of the cuts (:func:`steradian.metrics.principal_cuts` and the sidelobe cut)."""

ON_CUT_DEG = 0.25
"""A direction this close (deg) to a cut's great circle is drawn on that cut."""


def cut_label(cut, metrics: Mapping | None = None) -> str:
    """Legend text of a cut; the phi plane carries the value of phi0 from the analysis."""
    text = CUT_LABELS.get(cut.name, cut.name)
    if cut.name == "phi_plane" and metrics and metrics.get("beam_phi_deg") is not None:
        text = text.replace("phi = phi0", f"phi = {metrics['beam_phi_deg'] + 0.0:z.1f} deg")
    return text


def locate_on_cut(cut, theta_deg: float, phi_deg: float):
    """(signed angle along ``cut``, distance from its great circle), both in degrees, of the
    direction (theta, phi); the angle is measured like ``cut.angle_deg``."""
    dirs = np.asarray(cut.directions, float)
    i0 = int(np.argmin(np.abs(cut.angle_deg)))
    r0 = dirs[i0]
    j = i0 + 1 if i0 + 1 < len(dirs) else i0 - 1
    step = np.deg2rad(cut.angle_deg[j] - cut.angle_deg[i0])
    t = (dirs[j] - r0 * np.cos(step)) / np.sin(step)
    t /= np.linalg.norm(t)
    d = unit_vectors_deg(theta_deg, phi_deg)
    n = np.cross(r0, t)
    off = float(np.rad2deg(np.arcsin(min(1.0, abs(float(d @ n))))))
    ang = float(np.rad2deg(np.arctan2(float(d @ t), float(d @ r0))))
    lo, hi = float(np.min(cut.angle_deg)), float(np.max(cut.angle_deg))
    if ang < lo - 1e-9 or ang > hi + 1e-9:
        return ang, np.inf
    return ang, off


def _lobe_marks(cuts, metrics, peak):
    """[(cut index, angle, level dBi, label, kind)] of the worst sidelobe and grating lobes
    found, placed on the cut that holds them (lobes on no cut are left out)."""
    lobes = []
    if metrics.get("psl_db") is not None and metrics.get("psl_theta_deg") is not None:
        lobes.append(("worst sidelobe", metrics["psl_db"], metrics["psl_theta_deg"],
                      metrics["psl_phi_deg"], "psl"))
    lobes += [("grating lobe", g["level_db"], g["theta_deg"], g["phi_deg"], "grating")
              for g in metrics.get("grating_lobes_found") or []]
    marks = []
    for what, level, th, ph, kind in lobes:
        (ang, off), i = min(((locate_on_cut(c, th, ph), i) for i, c in enumerate(cuts)),
                            key=lambda w: w[0][1])
        if off <= ON_CUT_DEG:
            marks.append((i, ang, peak + level, f"{what} {level:.2f} dB at theta {th:.1f}, "
                                                f"phi {ph + 0.0:z.1f} deg", kind))
    return marks


def _level_lines(ax, peak, metrics, requirements, mask):
    psl = metrics.get("psl_db")
    if psl is not None:
        ax.axhline(peak + psl, color="#6b7780", ls="--", lw=0.9,
                   label=f"peak sidelobe level {psl:.2f} dB")
    lim = (requirements or {}).get("max_psl_db")
    if lim is not None:
        ax.axhline(peak + lim, color="#b03a5b", ls=(0, (6, 3)), lw=1.2,
                   label=f"requirement: sidelobes at most {lim:.1f} dB")
    if mask is not None:
        a, lvl = np.asarray(mask, float).T
        ax.step(a, peak + lvl, where="mid", color="#b03a5b", lw=1.0, ls=":",
                label="sidelobe mask")


def cuts_figure(cuts: Sequence, *, metrics: Mapping | None = None,
                peak_dbi: float | None = None, caption: str | None = None,
                requirements: Mapping | None = None, mask=None, range_db: float = 50.0):
    """Cuts in dB over the whole great circle, with zoomed main-beam panels.

    Parameters
    ----------
    cuts : sequence of Cut
        Principal cuts (:func:`steradian.metrics.principal_cuts`, best with
        ``span_deg=180``: the whole visible space), optionally followed by a cut named
        ``"sidelobe_plane"`` through the worst sidelobe.
    metrics : mapping, optional
        The ``metrics`` block of the analysis summary: the half-power edges of each plane
        (``planes``), the worst sidelobe and the grating lobes found are drawn from it.
    peak_dbi : float, optional
        The analysis peak directivity (the reference of every relative level); defaults to
        ``metrics["peak_directivity_dbi"]``, else the highest sample.
    caption : str, optional
        First title line (design, frequency, scan, taper).
    requirements : mapping, optional
        ``{key: limit}`` of the design's ``[requirements]``: ``max_psl_db`` is drawn as a
        level line and ``max_hpbw_deg`` on the main-beam panels.
    mask : array_like (n, 2), optional
        Sidelobe mask points (angle from the beam axis in degrees, level in dB relative to
        the peak), drawn as a step line.
    range_db : float
        Levels shown below the peak.

    Returns
    -------
    matplotlib.figure.Figure
        Axes 0 holds the full cuts (one line per cut, in order); axes 1 and 2 the main beam
        of the first two cuts.
    """
    metrics = dict(metrics or {})
    peak = (float(peak_dbi) if peak_dbi is not None else metrics.get("peak_directivity_dbi"))
    if peak is None:
        peak = max(float(np.max(c.directivity_dbi)) for c in cuts)
    with styled():
        fig = new_figure(8.6, 7.4)
        grid = fig.add_gridspec(2, 2, height_ratios=[1.35, 1.0])
        ax = fig.add_subplot(grid[0, :])
        zooms = [fig.add_subplot(grid[1, 0]), fig.add_subplot(grid[1, 1])]
        lines = [ax.plot(c.angle_deg, c.directivity_dbi, label=cut_label(c, metrics),
                         lw=1.4 if i < 2 else 1.0, ls="-" if i < 2 else "-.")[0]
                 for i, c in enumerate(cuts)]
        _level_lines(ax, peak, metrics, requirements, mask)
        for i, ang, lvl, label, kind in _lobe_marks(cuts, metrics, peak):
            ax.plot([ang], [lvl], "v" if kind == "psl" else "D", ms=8, mfc="none", mew=1.6,
                    color=lines[i].get_color() if kind == "psl" else "#c0582f",
                    label=label, ls="none")
        span = max(float(np.max(np.abs(c.angle_deg))) for c in cuts)
        ax.set_xlim(-span, span)
        ax.set_xticks(np.arange(-180, 181, 30 if span > 90 else 15))
        ax.set_xlim(-span, span)
        ax.set_ylim(peak - range_db, peak + 4.0)
        ax.set_xlabel("angle from the beam axis (deg)")
        ax.set_ylabel("directivity (dBi)")
        ax.set_title(title_lines(caption, f"pattern cuts over the whole circle, peak "
                                          f"{peak:.2f} dBi"))
        for k, z in enumerate(zooms):
            if k < len(cuts):
                _main_beam(z, cuts[k], lines[k].get_color(), metrics, peak, requirements)
            else:
                z.set_visible(False)
        handles, labels = ax.get_legend_handles_labels()
        fig.legend(handles, labels, loc="outside lower center", ncol=2, frameon=False)
    return fig


def _main_beam(ax, cut, color, metrics, peak, requirements):
    """One cut's main beam: the curve, its half-power width and first nulls."""
    plane = (metrics.get("planes") or {}).get(cut.name) or {}
    hp = plane.get("half_power_deg")
    hp = hp if hp and all(a is not None for a in hp) else None
    fn = [a for a in (plane.get("first_null_deg") or []) if a is not None]
    half = 3.0 * (max(abs(a) for a in fn) if fn else
                  (max(abs(hp[0]), abs(hp[1])) * 2.0 if hp else 30.0))
    half = min(max(half, 2.0), 180.0)
    ax.plot(cut.angle_deg, cut.directivity_dbi, color=color)
    ax.set_xlim(-half, half)
    ax.set_ylim(peak - 30.0, peak + 3.0)
    text = cut_label(cut, metrics)
    if hp:
        ax.plot(hp, [peak - 3.0] * 2, color=INK, lw=2.4, solid_capstyle="butt")
        ax.plot(hp, [peak - 3.0] * 2, "|", color=INK, ms=10)
        text += f"\nhalf-power width {plane['hpbw_deg']:.2f} deg"
    elif plane.get("hpbw_deg") is None:
        text += "\nno half-power width in this plane"
    for a in fn:
        ax.axvline(a, color="#6b7780", lw=0.8, ls=":")
    if plane.get("fnbw_deg") is not None:
        text += f", first nulls {plane['fnbw_deg']:.2f} deg apart"
    lim = (requirements or {}).get("max_hpbw_deg")
    if lim is not None:
        for s in (-0.5, 0.5):
            ax.axvline(s * lim, color="#b03a5b", lw=1.0, ls=(0, (6, 3)))
        text += f"\nrequirement: width at most {lim:.2f} deg (red)"
    ax.set_title(text, fontsize=8)
    ax.set_xlabel("angle from the beam axis (deg)")
    ax.set_ylabel("directivity (dBi)")


def polar_figure(cuts: Sequence, *, metrics: Mapping | None = None,
                 peak_dbi: float | None = None, caption: str | None = None,
                 range_db: float = 40.0):
    """Polar cuts: level relative to the analysis peak (dB) against angle from the beam axis,
    one polar panel per cut (at most three), zero at the top.

    The radius is the level in dB above ``-range_db`` (levels below are drawn at the
    centre). Returns a Figure whose polar axes hold one line each (angle in radians, radius
    = level + range_db).
    """
    metrics = dict(metrics or {})
    peak = (float(peak_dbi) if peak_dbi is not None else metrics.get("peak_directivity_dbi"))
    if peak is None:
        peak = max(float(np.max(c.directivity_dbi)) for c in cuts)
    cuts = list(cuts)[:3]
    with styled():
        fig = new_figure(3.4 * len(cuts) + 0.6, 4.6)
        psl = metrics.get("psl_db")
        for i, c in enumerate(cuts):
            ax = fig.add_subplot(1, len(cuts), i + 1, projection="polar")
            ax.set_theta_zero_location("N")
            ax.set_theta_direction(-1)
            r = np.clip(np.asarray(c.directivity_dbi) - peak + range_db, 0.0, None)
            ax.plot(np.deg2rad(c.angle_deg), r, color=f"C{i}", lw=1.2)
            if psl is not None and psl > -range_db:
                t = np.linspace(0, 2 * np.pi, 361)
                ax.plot(t, np.full_like(t, psl + range_db), color="#6b7780", ls="--", lw=0.8)
            ax.set_ylim(0, range_db + 1.0)
            ticks = np.arange(0, range_db + 0.1, 10.0)
            ax.set_yticks(ticks)
            ax.set_yticklabels([f"{t - range_db:.0f}" for t in ticks], fontsize=7)
            for lab in ax.get_yticklabels():
                lab.set_bbox({"facecolor": "white", "alpha": 0.8, "edgecolor": "none",
                              "pad": 0.6})
            ax.set_rlabel_position(157.5)
            ax.set_title(cut_label(c, metrics).replace(" (", "\n("), fontsize=8, pad=14)
        fig.suptitle(title_lines(caption, f"polar cuts, dB relative to the peak "
                                          f"{peak:.2f} dBi; angle from the beam axis (deg)"
                                 + ("" if psl is None else
                                    f"; dashed: peak sidelobe {psl:.2f} dB")),
                     fontsize=9)
    return fig
