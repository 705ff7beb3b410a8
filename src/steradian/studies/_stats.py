"""Part of :mod:`steradian.studies` (see the package docstring): statistics of trial rows."""

from __future__ import annotations

import math

import numpy as np

from ..errors import SteradianError

__all__ = ["trial_statistics", "PERCENTILES", "WORST"]

PERCENTILES = (5, 50, 95)
"""Percentiles reported for every trial metric."""

WORST = {"directivity_dbi": "min", "directivity_loss_db": "max", "gain_dbi": "min",
         "psl_db": "max", "avg_sll_db": "max", "pointing_error_deg": "max",
         "n_failed": "max"}
"""Which end of each metric is the worst trial."""


def _num(x) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def trial_statistics(rows, seed: int) -> dict:
    """Mean, standard deviation (ddof 1), percentiles, extremes and the worst trial (with the
    run seed and its index, which replay it) of every metric in :data:`WORST`.

    Rows may come in any order; the result depends only on the set of rows (they are sorted
    by trial index first, so sums are taken in one order).
    """
    rows = sorted(rows, key=lambda r: int(r["trial"]))
    if not rows:
        raise SteradianError("no trials to summarise")
    idx = np.array([int(r["trial"]) for r in rows])
    out = {"trials": len(rows), "seed": int(seed)}
    for name, sense in WORST.items():
        v = np.array([float(r[name]) for r in rows])
        ok = np.isfinite(v)
        if not ok.any():
            out[name] = None
            continue
        vv = v[ok]
        j = int(np.argmin(np.where(ok, v, np.inf)) if sense == "min"
                else np.argmax(np.where(ok, v, -np.inf)))
        out[name] = {
            "mean": _num(vv.mean()), "std": _num(vv.std(ddof=1)) if len(vv) > 1 else None,
            **{f"p{p}": _num(np.percentile(vv, p)) for p in PERCENTILES},
            "min": _num(vv.min()), "max": _num(vv.max()),
            "worst": {"value": _num(v[j]), "trial": int(idx[j]), "seed": int(seed)}}
    return out
