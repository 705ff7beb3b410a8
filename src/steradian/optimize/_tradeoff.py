"""The trade curve: maximum directivity against peak sidelobe level, so the engineer picks
the knee."""

from __future__ import annotations

import io
import math
import time
from dataclasses import dataclass, field

import numpy as np

from ..errors import SteradianError
from ..io.atomic import write_bytes, write_text
from ._convex import DEFAULT_LOADING, SynthesisInfeasible, _closed_form, _max_directivity
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
    """

    rows: list
    max_directivity_dbi: float
    knee: dict | None
    results: list = field(default_factory=list)
    seconds: float = 0.0

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

    def to_dict(self) -> dict:
        return {"max_directivity_dbi": self.max_directivity_dbi, "rows": self.rows,
                "knee_limit_db": None if self.knee is None else self.knee["limit_db"],
                "seconds": self.seconds}

    def write_csv(self, path) -> None:
        """Write the table as CSV (atomically)."""
        out = [",".join(COLUMNS)]
        for r in self.rows:
            out.append(",".join("" if r[c] is None else
                                (repr(float(r[c])) if isinstance(r[c], float) else
                                 str(r[c]).replace(",", ";")) for c in COLUMNS))
        write_text(path, "\n".join(out) + "\n")

    def figure(self, path, title: str | None = None) -> None:
        """Directivity against peak sidelobe level as a PNG (atomic write)."""
        from matplotlib.figure import Figure

        ok = [r for r in self.rows if r["directivity_dbi"] is not None]
        fig = Figure(figsize=(6.4, 4.2))
        ax = fig.add_subplot(1, 1, 1)
        if ok:
            x = [r["psl_db"] for r in ok]
            y = [r["directivity_dbi"] for r in ok]
            ax.plot(x, y, "o-", color="C0", label="optimum (dense-checked PSL)")
        ax.axhline(self.max_directivity_dbi, color="0.5", ls="--",
                   label=f"unconstrained {self.max_directivity_dbi:.2f} dBi")
        if self.knee is not None:
            ax.plot([self.knee["psl_db"]], [self.knee["directivity_dbi"]], "s", ms=10,
                    mfc="none", color="C3", label=f"knee ({self.knee['limit_db']:.1f} dB)")
        bad = [r["limit_db"] for r in self.rows if r["directivity_dbi"] is None]
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
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=120)
        write_bytes(path, buf.getvalue())


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
    _, pmin = _closed_form(setup)
    dmax = 10 * math.log10(4 * math.pi / pmin)
    rows, results = [], []
    seed = None
    for lv in levels:
        t1 = time.perf_counter()
        try:
            res, seed_new = _max_directivity(
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
