"""Plots: principal-cut and u-v directivity PNGs.

matplotlib is imported inside the functions (``import steradian`` and ``steradian --help`` stay
fast) and figures are built with :class:`matplotlib.figure.Figure` directly, without pyplot,
so no global backend state is touched. Files are written atomically.
"""

from __future__ import annotations

import io
from collections.abc import Sequence

import numpy as np

from .io.atomic import write_bytes

__all__ = ["plot_cuts", "plot_uv", "trade_curve_figure", "plot_trade_curve", "CUT_LABELS"]

CUT_LABELS = {
    "phi_plane": "plane through the beam and z (phi = phi0)",
    "cross_plane": "orthogonal plane through the beam",
}
"""Legend text of the principal cuts of :func:`steradian.metrics.principal_cuts`."""

_DPI = 120


def _save(fig, path) -> None:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=_DPI)
    write_bytes(path, buf.getvalue())


def plot_cuts(cuts, path, *, hpbw_deg: Sequence[float | None] | None = None,
              psl_db: float | None = None, title: str | None = None,
              range_db: float = 50.0) -> None:
    """Write a PNG of pattern cuts: directivity (dBi) against angle from the beam axis.

    Parameters
    ----------
    cuts : sequence of Cut
        E.g. the two cuts of :func:`steradian.metrics.principal_cuts`.
    path : path-like
        Output PNG (written atomically).
    hpbw_deg : sequence of float or None, optional
        Half-power beamwidth of each cut (deg), drawn as a bar 3 dB below the peak and given
        in the legend.
    psl_db : float, optional
        Peak sidelobe level in dB relative to the peak (negative), drawn as a dashed line.
    title : str, optional
    range_db : float
        Dynamic range shown below the highest peak.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8.0, 4.8), layout="constrained")
    ax = fig.subplots()
    top = max(float(np.max(c.directivity_dbi)) for c in cuts)
    for i, c in enumerate(cuts):
        label = CUT_LABELS.get(c.name, c.name)
        bw = None if hpbw_deg is None or i >= len(hpbw_deg) else hpbw_deg[i]
        if bw is not None and np.isfinite(bw):
            label += f", HPBW {bw:.2f} deg"
        (line,) = ax.plot(c.angle_deg, c.directivity_dbi, lw=1.2, label=label)
        if bw is not None and np.isfinite(bw):
            k = int(np.argmax(c.directivity_dbi))
            a0 = float(c.angle_deg[k])
            lvl = float(c.directivity_dbi[k]) - 3.0
            ax.plot([a0 - bw / 2, a0 + bw / 2], [lvl, lvl], color=line.get_color(), lw=3,
                    alpha=0.6)
    if psl_db is not None and np.isfinite(psl_db):
        ax.axhline(top + psl_db, color="0.3", ls="--", lw=0.9,
                   label=f"peak sidelobe {psl_db:.2f} dB")
    ax.set_ylim(top - range_db, top + 3.0)
    ax.set_xlim(float(min(np.min(c.angle_deg) for c in cuts)),
                float(max(np.max(c.angle_deg) for c in cuts)))
    ax.set_xlabel("angle from beam axis (deg)")
    ax.set_ylabel("directivity (dBi)")
    ax.grid(True, alpha=0.3)
    ax.legend(loc="upper right", fontsize=7, framealpha=0.9)
    ax.set_title(title or f"principal cuts, peak {top:.2f} dBi", fontsize=10)
    _save(fig, path)


def plot_uv(uvmap, path, *, title: str | None = None, range_db: float = 40.0) -> None:
    """Write a PNG map of directivity (dBi) over direction cosines u, v.

    Parameters
    ----------
    uvmap : UVMap
        From :func:`steradian.patterns.uv_map` (or :func:`steradian.io.pattern_csv.read_uv`).
    path : path-like
        Output PNG (written atomically).
    title : str, optional
    range_db : float
        Colour range below the peak.
    """
    from matplotlib.figure import Figure

    d = np.asarray(uvmap.directivity_dbi, float)
    top = float(np.nanmax(d))
    fig = Figure(figsize=(6.0, 5.0), layout="constrained")
    ax = fig.subplots()
    mesh = ax.pcolormesh(uvmap.u, uvmap.v, np.ma.masked_invalid(d), shading="nearest",
                         vmin=top - range_db, vmax=top, cmap="viridis")
    t = np.linspace(0, 2 * np.pi, 361)
    ax.plot(np.cos(t), np.sin(t), color="0.2", lw=0.8)
    ax.set_aspect("equal")
    ax.set_xlim(-1.02, 1.02)
    ax.set_ylim(-1.02, 1.02)
    ax.set_xlabel("u = sin(theta) cos(phi)")
    ax.set_ylabel("v = sin(theta) sin(phi)")
    side = "front" if getattr(uvmap, "hemisphere", 1) == 1 else "back"
    ax.set_title(title or f"directivity, {side} hemisphere, peak {top:.2f} dBi", fontsize=10)
    fig.colorbar(mesh, ax=ax, label="directivity (dBi)")
    _save(fig, path)


def trade_curve_figure(curve, title: str | None = None):
    """Directivity against peak sidelobe level, the knee marked: a matplotlib Figure."""
    from matplotlib.figure import Figure

    ok = [r for r in curve.rows if r["directivity_dbi"] is not None]
    fig = Figure(figsize=(6.4, 4.2))
    ax = fig.add_subplot(1, 1, 1)
    if ok:
        x = [r["psl_db"] for r in ok]
        y = [r["directivity_dbi"] for r in ok]
        ax.plot(x, y, "o-", color="C0", label="optimum (dense-checked PSL)")
    ax.axhline(curve.max_directivity_dbi, color="0.5", ls="--",
               label=f"unconstrained {curve.max_directivity_dbi:.2f} dBi")
    if curve.knee is not None:
        ax.plot([curve.knee["psl_db"]], [curve.knee["directivity_dbi"]], "s", ms=10,
                mfc="none", color="C3", label=f"knee ({curve.knee['limit_db']:.1f} dB)")
    bad = [r["limit_db"] for r in curve.rows if r["directivity_dbi"] is None]
    for b in bad:
        ax.axvline(b, color="C3", alpha=0.25, lw=4)
    if bad:
        ax.plot([], [], color="C3", alpha=0.25, lw=4, label="infeasible level")
    ax.set_xlabel("peak sidelobe level (dB)")
    ax.set_ylabel("directivity (dBi)")
    ax.grid(True, alpha=0.4)
    ax.set_title(title or "maximum directivity against peak sidelobe level")
    ax.legend(loc="lower right", fontsize=8)
    fig.tight_layout()
    return fig


def plot_trade_curve(curve, path, *, title: str | None = None) -> None:
    """Write the trade-curve figure (:func:`trade_curve_figure`) as a PNG, atomically."""
    _save(trade_curve_figure(curve, title), path)
