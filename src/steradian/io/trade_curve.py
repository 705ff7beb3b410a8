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
    the values of infeasible levels; commas inside a status become semicolons).

    ``limit_db``, the level asked for, is written rounded to 9 decimals (a person reads
    -9.0, not the -9.000000000000002 of evenly spaced levels); measured columns keep full
    precision (shortest round-trip form)."""
    out = [",".join(curve.columns)]
    for r in curve.rows:
        out.append(",".join(_cell(round(r[c], 9) + 0.0 if c == "limit_db"
                                  and isinstance(r[c], float) else r[c])
                            for c in curve.columns))
    return "\n".join(out) + "\n"


def write_trade_curve_csv(path, curve) -> None:
    """Write the trade-curve table as CSV (atomically)."""
    write_text(path, trade_curve_csv(curve))
