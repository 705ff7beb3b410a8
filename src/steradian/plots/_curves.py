"""Curves and tables as figures: the trade curve, sweep curves, tolerance histograms and a
beam table's coverage map. Each takes plain values (rows as dictionaries, arrays), so any
part that produces such rows can be drawn without this module knowing it."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from ..units import DB_FLOOR
from ._style import new_figure, styled, title_lines

__all__ = ["trade_curve_figure", "sweep_figure", "histogram_figure", "coverage_figure"]


def _plottable(v) -> bool:
    """A value to draw: present, finite and above the dB floor (the floor means "none",
    e.g. no sidelobe found, and would stretch the axis by 300 dB)."""
    return v is not None and bool(np.isfinite(v)) and v > DB_FLOOR + 1


def _legend_below(fig, ax, ncol: int = 2, title: str | None = None):
    h, lab = ax.get_legend_handles_labels()
    if h:
        fig.legend(h, lab, loc="outside lower center", ncol=ncol, frameon=False,
                   title=title)


def trade_curve_figure(curve, title: str | None = None, *, caption: str | None = None):
    """Directivity against peak sidelobe level, the knee marked: a matplotlib Figure.

    ``curve``: a :class:`steradian.optimize.TradeCurve` (its ``rows``, ``knee`` and
    ``max_directivity_dbi``). Line 0 of the axes is the feasible optimum (x = PSL, y =
    directivity, from the rows).
    """
    ok = [r for r in curve.rows if r["directivity_dbi"] is not None]
    with styled():
        fig = new_figure(6.8, 4.8)
        ax = fig.add_subplot(1, 1, 1)
        if ok:
            ax.plot([r["psl_db"] for r in ok], [r["directivity_dbi"] for r in ok], "o-",
                    color="C0", ms=4, label="optimum (dense-checked peak sidelobe)")
        ax.axhline(curve.max_directivity_dbi, color="#6b7780", ls="--",
                   label=f"unconstrained {curve.max_directivity_dbi:.2f} dBi")
        if curve.knee is not None:
            ax.plot([curve.knee["psl_db"]], [curve.knee["directivity_dbi"]], "s", ms=11,
                    mfc="none", mew=1.6, color="C1",
                    label=f"knee: limit {curve.knee['limit_db']:.1f} dB, "
                          f"{curve.knee['directivity_dbi']:.2f} dBi")
        bad = [r["limit_db"] for r in curve.rows if r["directivity_dbi"] is None]
        for b in bad:
            ax.axvline(b, color="C6", alpha=0.25, lw=4)
        if bad:
            ax.plot([], [], color="C6", alpha=0.25, lw=4, label="infeasible limit")
        ax.margins(y=0.12)
        ax.set_xlabel("peak sidelobe level (dB)")
        ax.set_ylabel("directivity (dBi)")
        ax.set_title(title or title_lines(
            caption, "maximum directivity against peak sidelobe level"))
        _legend_below(fig, ax)
    return fig


def sweep_figure(rows: Sequence[Mapping], x: str, y: Sequence[str] | str, *,
                 labels: Mapping[str, str] | None = None, limits: Mapping[str, float] |
                 None = None, caption: str | None = None, what: str = "sweep",
                 group: str | None = None):
    """Sweep curves: each column ``y`` of ``rows`` against column ``x``, one panel per
    column (rows with a missing value are skipped).

    ``labels``: axis text per column (with units); ``limits``: a requirement level per
    column, drawn as a dashed line; ``group``: a second sweep column, one line per value
    (a grid of two axes). Panel k's line g is column y[k] against x for the g-th value of
    ``group`` (line 0 without one).
    """
    if group is not None:
        return _grouped_sweep(rows, x, y, group, labels, limits, caption, what)
    ys = [y] if isinstance(y, str) else list(y)
    labels = dict(labels or {})
    limits = dict(limits or {})
    with styled():
        fig = new_figure(6.6, 2.4 + 2.0 * len(ys))
        axes = [fig.add_subplot(len(ys), 1, k + 1) for k in range(len(ys))]
        for k, (ax, col) in enumerate(zip(axes, ys, strict=True)):
            pts = [(r[x], r[col]) for r in rows if r.get(x) is not None
                   and _plottable(r.get(col))]
            if pts:
                a = np.asarray(pts, float)
                ax.plot(a[:, 0], a[:, 1], "o-", ms=3.5, color=f"C{k}")
            if col in limits:
                ax.axhline(limits[col], color="#b03a5b", ls=(0, (6, 3)), lw=1.1,
                           label=f"requirement {limits[col]:g}")
                ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), frameon=False)
            ax.set_ylabel(labels.get(col, col))
            ax.set_xlabel(labels.get(x, x))
        axes[0].set_title(title_lines(caption, what))
    return fig


def _grouped_sweep(rows, x, y, group, labels, limits, caption, what):
    """:func:`sweep_figure` with one line per value of the column ``group``."""
    ys = [y] if isinstance(y, str) else list(y)
    labels = dict(labels or {})
    limits = dict(limits or {})
    values = sorted({r[group] for r in rows if r.get(group) is not None},
                    key=lambda v: (isinstance(v, str), v))
    with styled():
        fig = new_figure(6.6, 2.6 + 2.0 * len(ys))
        axes = [fig.add_subplot(len(ys), 1, k + 1) for k in range(len(ys))]
        for ax, col in zip(axes, ys, strict=True):
            for g, val in enumerate(values):
                pts = [(r[x], r[col]) for r in rows if r.get(group) == val
                       and r.get(x) is not None and _plottable(r.get(col))]
                if pts:
                    a = np.asarray(pts, float)
                    ax.plot(a[:, 0], a[:, 1], "o-", ms=3, color=f"C{g % 10}",
                            label=f"{val:g}" if isinstance(val, float) else f"{val}")
            if col in limits:
                ax.axhline(limits[col], color="#b03a5b", ls=(0, (6, 3)), lw=1.1,
                           label=f"requirement {limits[col]:g}")
            ax.set_ylabel(labels.get(col, col))
            ax.set_xlabel(labels.get(x, x))
        axes[0].set_title(title_lines(caption, what))
        # The swept quantity names the legend once; its entries are the values.
        _legend_below(fig, axes[-1], ncol=min(8, max(1, len(values))),
                      title=labels.get(group, group))
    return fig


def histogram_figure(values, *, label: str, limit: float | None = None,
                     caption: str | None = None, what: str = "tolerance study",
                     bins: int | str = "auto", axis_label: str | None = None):
    """Histogram of a Monte Carlo result (``values``: numbers, or rows as dictionaries with
    the column ``label``), with its mean, its 95th percentile and a requirement ``limit``;
    ``axis_label`` (default ``label``) names the value axis, with its unit."""
    if len(values) and isinstance(values[0], Mapping):
        values = [r[label] for r in values if r.get(label) is not None]
    v = np.asarray(values, float)
    v = v[np.isfinite(v)]
    with styled():
        fig = new_figure(6.4, 4.4)
        ax = fig.add_subplot(1, 1, 1)
        if v.size:
            ax.hist(v, bins=bins, color="C0", alpha=0.85, edgecolor="white")
            ax.axvline(float(v.mean()), color="C5", lw=1.2,
                       label=f"mean {v.mean():.3f}")
            ax.axvline(float(np.percentile(v, 95)), color="C4", lw=1.2, ls="--",
                       label=f"95th percentile {np.percentile(v, 95):.3f}")
        if limit is not None:
            ax.axvline(limit, color="#b03a5b", ls=(0, (6, 3)), lw=1.4,
                       label=f"requirement {limit:g}")
        ax.set_xlabel(axis_label or label)
        ax.set_ylabel("trials")
        ax.set_title(title_lines(caption, f"{what}: {v.size} trials"))
        _legend_below(fig, ax, ncol=3)
    return fig


_COVERAGE = (("gain_dbi", "peak gain (dBi)", None, "dBi"),
             ("psl_db", "peak sidelobe (dB)", "max_psl_db", "dB"),
             ("qlobe_db", "quantization lobe (dB)", "max_qlobe_db", "dB"))


HORIZON_DEG = 60.0
"""A coverage with a beam farther than this from +z is drawn over theta and phi (sine space
crowds beams near the horizon onto its rim and folds the two sides of it together)."""


SPAN_DB = 40.0
"""Colour span of the sidelobe and quantization-lobe panels below their worst beam."""


def _coverage_axes(ax, rows, uv: bool):
    """Beam coordinates and the frame of one coverage panel."""
    th = np.asarray([r["theta_deg"] for r in rows], float)
    ph = np.asarray([r["phi_deg"] for r in rows], float)
    if not uv:
        ax.set_xlabel("phi (deg)")
        ax.set_ylabel("theta (deg)")
        pad = 5.0
        ax.set_xlim(ph.min() - pad, ph.max() + pad)
        ax.set_ylim(th.max() + pad, th.min() - pad)
        return ph, th
    t = np.linspace(0, 2 * np.pi, 361)
    ax.plot(np.cos(t), np.sin(t), color="#22303c", lw=1.0)
    ax.set_aspect("equal")
    ax.set_xlim(-1.05, 1.05)
    ax.set_ylim(-1.05, 1.05)
    ax.set_xlabel("u = sin(theta) cos(phi)")
    ax.set_ylabel("v = sin(theta) sin(phi)")
    a, b = np.deg2rad(th), np.deg2rad(ph)
    return np.sin(a) * np.cos(b), np.sin(a) * np.sin(b)


def coverage_figure(rows: Sequence[Mapping], *, requirements: Mapping | None = None,
                    caption: str | None = None, coords: str = "auto"):
    """A beam table's coverage: each beam's direction coloured by its peak gain, peak
    sidelobe and quantization-lobe level (the table's own metrics rows,
    :meth:`steradian.beamtable.BeamMetrics.rows`); beams over a requirement are ringed.

    ``coords``: ``"uv"`` (sine space), ``"theta_phi"``, or ``"auto"``: sine space unless a
    beam lies more than :data:`HORIZON_DEG` from +z. Panel k's scatter colours are the k-th
    quantity of the rows, in beam order.
    """
    reqs = dict(requirements or {})
    uv = coords == "uv" or (coords == "auto" and max(r["theta_deg"] for r in rows)
                            <= HORIZON_DEG)
    size = float(np.clip(4000.0 / max(len(rows), 1), 20.0, 110.0))
    with styled():
        fig = new_figure(13.0, 5.0)
        for k, (key, label, req, unit) in enumerate(_COVERAGE):
            ax = fig.add_subplot(1, 3, k + 1)
            x, y = _coverage_axes(ax, rows, uv)
            vals = np.asarray([np.nan if r.get(key) is None else r[key] for r in rows], float)
            ok = np.isfinite(vals)
            lo = hi = None
            if ok.any() and key != "gain_dbi":  # a beam without the lobe sits at the floor
                lo = max(float(np.nanmin(vals)), float(np.nanmax(vals)) - SPAN_DB)
            if ok.any() and np.ptp(vals[ok]) < 1e-6:  # one level: a scale of rounding noise
                mid = round(float(np.mean(vals[ok])), 6)
                lo, hi = mid - 0.5, mid + 0.5
            sc = ax.scatter(x[ok], y[ok], c=vals[ok], s=size, edgecolors="#22303c",
                            linewidths=0.3, vmin=lo, vmax=hi,
                            cmap=None if key == "gain_dbi" else "cividis")
            worst = (np.nanmin(vals) if key == "gain_dbi" else np.nanmax(vals)) if ok.any() \
                else float("nan")
            title = f"{label}\n{'lowest' if key == 'gain_dbi' else 'worst'} {worst:.2f} {unit}"
            if req in reqs:
                over = ok & (vals > reqs[req])
                ax.scatter(x[over], y[over], s=size * 2.2, facecolors="none",
                           edgecolors="#b03a5b", lw=1.4)
                title += f"; ringed: {int(over.sum())} over {reqs[req]:g} {unit}"
            ax.set_title(title, fontsize=8.5)
            fig.colorbar(sc, ax=ax, label=label, shrink=0.8, location="bottom")
        fig.suptitle(title_lines(caption, f"beam-table coverage: {len(rows)} beams"),
                     fontsize=9)
    return fig
