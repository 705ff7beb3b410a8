"""Trade-curve files: the table of :class:`steradian.optimize.TradeCurve` as CSV, and its
figure (maximum directivity against peak sidelobe level) as PNG. Both written atomically.

The curve is taken as a value (its ``rows``, ``columns``, ``knee`` and
``max_directivity_dbi``); this module never runs the synthesis.
"""

from __future__ import annotations

import io

from ._atomic import write_bytes, write_text

__all__ = ["trade_curve_csv", "write_trade_curve_csv", "trade_curve_figure",
           "write_trade_curve_png"]


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(float(v))
    return str(v).replace(",", ";")


def trade_curve_csv(curve) -> str:
    """The CSV text: a header of ``curve.columns``, then one line per level (empty cells for
    the values of infeasible levels; commas inside a status become semicolons)."""
    out = [",".join(curve.columns)]
    for r in curve.rows:
        out.append(",".join(_cell(r[c]) for c in curve.columns))
    return "\n".join(out) + "\n"


def write_trade_curve_csv(path, curve) -> None:
    """Write the trade-curve table as CSV (atomically)."""
    write_text(path, trade_curve_csv(curve))


def trade_curve_figure(curve, title: str | None = None):
    """Directivity against peak sidelobe level, the knee marked: a matplotlib Figure.

    (A plot: it belongs with the figures of :mod:`steradian.plots`; kept here beside its
    writer until it moves.)
    """
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


def write_trade_curve_png(path, curve, title: str | None = None) -> None:
    """Write the trade-curve figure as a PNG (atomically)."""
    buf = io.BytesIO()
    trade_curve_figure(curve, title).savefig(buf, format="png", dpi=120)
    write_bytes(path, buf.getvalue())
