"""Physical constants, decibels and angle wrapping: the one place each is defined.

Every module that turns a ratio into decibels, or decibels back into a ratio, calls these, so
a floor or a sign convention cannot differ between a report, a file and a figure.
"""

from __future__ import annotations

import numpy as np

__all__ = ["C0", "ETA0", "DB_FLOOR", "db10", "db20", "from_db10", "from_db20", "wrap_deg"]

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
