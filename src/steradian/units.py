"""Physical constants, decibels, angle wrapping and grid decimals: the one place each is
defined.

Every module that turns a ratio into decibels, or decibels back into a ratio, calls these, so
a floor or a sign convention cannot differ between a report, a file and a figure.
"""

from __future__ import annotations

import numpy as np

__all__ = ["C0", "ETA0", "DB_FLOOR", "db10", "db20", "from_db10", "from_db20", "wrap_deg",
           "grid_decimals"]

C0 = 299_792_458.0
"""Speed of light in vacuum, m/s (exact, SI 2019)."""

ETA0 = 376.730313412
"""Impedance of free space, ohm (CODATA 2018)."""

DB_FLOOR = -300.0
"""Lowest level reported, dB: power ratios at or below 1e-30 (and zero) read -300 dB, so no
report, file or figure ever holds -inf or NaN for a dark direction."""


def db10(x):
    """10 log10(x) of a power ratio, floored at :data:`DB_FLOOR` (zero and negatives too).

    Returns a float for scalar input, an array otherwise.
    """
    a = np.asarray(x, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.maximum(10.0 * np.log10(np.maximum(a, 0.0)), DB_FLOOR)
    out = np.where(np.isnan(a), np.nan, out)
    return float(out) if out.ndim == 0 else out


def db20(x, floor: float | None = DB_FLOOR):
    """20 log10(|x|) of a field (amplitude) ratio, floored at ``floor`` (default
    :data:`DB_FLOOR`; ``None``: no floor, so a zero amplitude reads -inf, as the weight files
    write a switched-off element).

    Computed as 20 log10 |x| (not 10 log10 |x|^2), so the last digit written to a file is the
    one the plain formula gives.
    """
    a = np.abs(np.asarray(x))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 20.0 * np.log10(a)
    if floor is not None:
        out = np.where(np.isnan(out), np.nan, np.maximum(out, floor))
    out = np.asarray(out, float)
    return float(out) if out.ndim == 0 else out


def from_db10(db):
    """Power ratio 10^(dB/10)."""
    out = 10.0 ** (np.asarray(db, float) / 10.0)
    return float(out) if out.ndim == 0 else out


def from_db20(db):
    """Field (amplitude) ratio 10^(dB/20)."""
    out = 10.0 ** (np.asarray(db, float) / 20.0)
    return float(out) if out.ndim == 0 else out


def wrap_deg(x):
    """Wrap angles in degrees into [-180, 180)."""
    return (np.asarray(x, float) + 180.0) % 360.0 - 180.0


def grid_decimals(values, step: float) -> np.ndarray:
    """Values of an equally spaced grid of ``step`` rounded to a billionth of the step, so
    a grid keeps its own decimals (0 + 3 x 3 is 9.0, not 9.000000000000002; 0.4 + 4 x 0.05
    is 0.6, not 0.6000000000000001). Values with too many digits to round exactly, and a
    zero step, are returned as they are."""
    v = np.asarray(values, float)
    step = abs(float(step))
    if step == 0 or not np.isfinite(step) or v.size == 0:
        return v
    d = int(min(max(9 - np.floor(np.log10(step)), 0), 15))
    scale = 10.0**d
    if not np.max(np.abs(v)) < 2**52 / scale:  # too many digits to round exactly (or NaN)
        return v
    return np.rint(v * scale) / scale
