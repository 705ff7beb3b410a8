"""Trade-curve files: the table of :class:`steradian.optimize.TradeCurve` as CSV, written
atomically (its figure is :func:`steradian.plots.plot_trade_curve`).

The curve is taken as a value (its ``rows``, ``columns``, ``knee`` and
``max_directivity_dbi``); this module never runs the synthesis.
"""

from __future__ import annotations

from .atomic import write_text

__all__ = ["trade_curve_csv", "write_trade_curve_csv"]


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
