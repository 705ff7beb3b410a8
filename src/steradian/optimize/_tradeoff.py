"""The trade curve: maximum directivity against peak sidelobe level, so the engineer picks
the knee."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np

from ..errors import SteradianError
from ..units import db10
from ._convex import DEFAULT_LOADING, closed_form, max_directivity_on
from ._diagnose import SynthesisInfeasible
from ._problem import make_setup

__all__ = ["TradeCurve", "tradeoff", "COLUMNS"]

COLUMNS = ("limit_db", "psl_db", "directivity_dbi", "peak_directivity_dbi", "loss_db",
           "taper_efficiency", "white_noise_gain_db", "dynamic_range_db", "mainlobe", "met",
           "status", "rounds", "seconds")
"""Columns of the trade-curve table."""


@dataclass(frozen=True, eq=False)
class TradeCurve:
    """Optimal directivity at each sidelobe limit.

    Attributes
    ----------
    rows : list of dict
        One per level, keys :data:`COLUMNS` (``status`` is "optimal" or "infeasible: ...";
        values are None for infeasible levels). ``mainlobe`` is the largest zone half-width.
    max_directivity_dbi : float
        Unconstrained maximum directivity (the curve's asymptote).
    knee : dict or None
        The row farthest from the chord between the curve's end points, both axes in dB
        (the usual L-curve rule, common practice).
    results : list
        The :class:`SynthesisResult` of each feasible level (same order, None if infeasible).
    seconds : float
        Wall time of the sweep.
    columns : tuple of str
        :data:`COLUMNS` (the keys of each row, in table order).

    Notes
    -----
    Synthesis produces values only: the CSV and PNG writers are in
    :mod:`steradian.io.trade_curve`.
    """

    rows: list
    max_directivity_dbi: float
    knee: dict | None
    results: list = field(default_factory=list)
    seconds: float = 0.0
    columns = COLUMNS

    def table(self) -> str:
        """Human-readable table."""
        head = (f"{'limit dB':>9} {'PSL dB':>9} {'D dBi':>9} {'loss dB':>8} {'eff':>6} "
                f"{'WNG dB':>7} {'DR dB':>6}  status")
        lines = [f"trade curve: unconstrained maximum directivity "
                 f"{self.max_directivity_dbi:.3f} dBi", head, "-" * len(head)]
        for r in self.rows:
            if r["directivity_dbi"] is None:
                lines.append(f"{r['limit_db']:9.2f} {'':>9} {'':>9} {'':>8} {'':>6} {'':>7} "
                             f"{'':>6}  {r['status']}")
                continue
            mark = "  <- knee" if self.knee is not None and r is self.knee else ""
            lines.append(f"{r['limit_db']:9.2f} {r['psl_db']:9.3f} {r['directivity_dbi']:9.3f} "
                         f"{r['loss_db']:8.3f} {r['taper_efficiency']:6.3f} "
                         f"{r['white_noise_gain_db']:7.2f} {r['dynamic_range_db']:6.1f}  "
                         f"{r['status']}{mark}")
        return "\n".join(lines)

    def write_csv(self, path) -> None:
        """Deprecated: use :func:`steradian.io.trade_curve.write_trade_curve_csv`."""
        import warnings

        from ..io.trade_curve import write_trade_curve_csv  # deprecated shim (see DEVELOPERS)

        warnings.warn("TradeCurve.write_csv is deprecated; use steradian.io.trade_curve."
                      "write_trade_curve_csv(path, curve)", DeprecationWarning, stacklevel=2)
        write_trade_curve_csv(path, self)

    def figure(self, path, title: str | None = None) -> None:
        """Deprecated: use :func:`steradian.plots.plot_trade_curve`."""
        import warnings

        from ..plots import plot_trade_curve  # deprecated shim (see DEVELOPERS)

        warnings.warn("TradeCurve.figure is deprecated; use steradian.plots.plot_trade_curve("
                      "curve, path, title=...)", DeprecationWarning, stacklevel=2)
        plot_trade_curve(self, path, title=title)

    def to_dict(self) -> dict:
        return {"max_directivity_dbi": self.max_directivity_dbi, "rows": self.rows,
                "knee_limit_db": None if self.knee is None else self.knee["limit_db"],
                "seconds": self.seconds}


def _knee(rows):
    ok = [r for r in rows if r["directivity_dbi"] is not None]
    if len(ok) < 3:
        return None
    x = np.array([r["psl_db"] for r in ok])
    y = np.array([r["directivity_dbi"] for r in ok])
    p0 = np.array([x[0], y[0]])
    p1 = np.array([x[-1], y[-1]])
    d = p1 - p0
    nrm = np.hypot(*d)
    if nrm == 0:
        return None
    dist = np.abs(d[0] * (y - p0[1]) - d[1] * (x - p0[0])) / nrm
    return ok[int(np.argmax(dist))]


def tradeoff(array, levels_db=None, *, start_db: float = -15.0, stop_db: float = -45.0,
             points: int = 20, mainlobe=None, weights: str = "complex",
             symmetry: str = "auto", nonnegative: bool = True,
             dynamic_range_db: float | None = None, wng_min_db: float | None = None,
             nulls=(), notches=(), loading: float = DEFAULT_LOADING, tol_db: float = 0.01,
             max_rounds: int = 30, oversample: float | None = None,
             dense_oversample: float | None = None) -> TradeCurve:
    """Maximum directivity at each of a range of peak sidelobe limits.

    Parameters
    ----------
    array : Array
    levels_db : sequence of float, optional
        Sidelobe limits (negative dB). Default ``points`` levels evenly from ``start_db`` to
        ``stop_db``.
    mainlobe : float or sequence, optional
        Fixed main-lobe zone; by default each level gets the Dolph-Chebyshev first null at
        that level (so the zone widens as the level falls, as any real main lobe does).
    Other parameters
        As in :func:`max_directivity`; one problem setup (power matrix, symmetry) serves the
        whole sweep and each level starts from the sidelobe maxima the previous level found.

    Returns
    -------
    TradeCurve
        Levels that no weights can reach are kept as rows marked infeasible with the cause.
    """
    t0 = time.perf_counter()
    if levels_db is None:
        if int(points) < 2:
            raise SteradianError(f"points must be at least 2, got {points}")
        levels = np.linspace(float(start_db), float(stop_db), int(points))
    else:
        levels = np.asarray(levels_db, float).reshape(-1)
        if len(levels) == 0:
            raise SteradianError("levels_db is empty")
    if not np.all(np.isfinite(levels)) or np.any(levels >= 0):
        raise SteradianError("trade-curve levels are sidelobe limits in negative dB, got "
                             f"{levels.tolist()}")
    levels = np.sort(levels)[::-1]  # from the loosest limit down
    setup = make_setup(array, weights, symmetry, loading)
    _, pmin = closed_form(setup)
    dmax = db10(4 * math.pi / pmin)
    rows, results = [], []
    seed = None
    for lv in levels:
        t1 = time.perf_counter()
        try:
            res, seed_new = max_directivity_on(
                setup, t_start=t1, psl_db=float(lv), mainlobe=mainlobe, mask=None,
                nulls=nulls, notches=notches, nonnegative=nonnegative,
                dynamic_range_db=dynamic_range_db, wng_min_db=wng_min_db, tol_db=tol_db,
                max_rounds=max_rounds, oversample=oversample,
                dense_oversample=dense_oversample, seed_dirs=seed)
        except SynthesisInfeasible as exc:
            rows.append({c: None for c in COLUMNS} | {
                "limit_db": float(lv), "met": False, "status": "infeasible: "
                + "; ".join(exc.causes), "seconds": time.perf_counter() - t1})
            results.append(None)
            continue
        seed = seed_new
        rows.append({"limit_db": float(lv), "psl_db": res.psl_db,
                     "directivity_dbi": res.directivity_dbi,
                     "peak_directivity_dbi": res.peak_directivity_dbi,
                     "loss_db": dmax - res.directivity_dbi,
                     "taper_efficiency": res.taper_efficiency,
                     "white_noise_gain_db": res.white_noise_gain_db,
                     "dynamic_range_db": res.dynamic_range_db,
                     "mainlobe": max(res.mainlobe) if res.mainlobe else None,
                     "met": res.met, "status": "optimal" if res.met else "tolerance not met",
                     "rounds": res.rounds, "seconds": res.seconds})
        results.append(res)
    return TradeCurve(rows, dmax, _knee(rows), results, time.perf_counter() - t0)
