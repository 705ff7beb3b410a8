r"""Conventions every taper shares: the sidelobe-level argument, peak normalisation and the
sampling of a continuous aperture function at element coordinates.

* ``sll`` is the design sidelobe level in dB **below** the main-beam peak, a positive number
  (``sll=30`` means sidelobes at -30 dB), as in :mod:`scipy.signal.windows`.
* Continuous aperture functions take the normalised coordinate :math:`t = x/L` with
  :math:`t\in[-1/2, 1/2]` over an aperture of length L. N equally spaced elements sit at the
  centres of N equal cells, :math:`t_n = (n - (N-1)/2)/N`, so L = N d; for any set of
  coordinates along an axis the aperture spans their range plus one median spacing.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import SteradianError
from ..validate import count

__all__ = ["MAX_SLL_DB", "sidelobe_ratio", "cell_centres", "normalise_peak", "axis_coordinates",
           "aperture_length", "aperture_positions"]


MAX_SLL_DB = 300.0
"""Largest design sidelobe level accepted (dB): far below double-precision rounding of the
weights (about 313 dB in power), so nothing larger is meaningful (common practice)."""


def sidelobe_ratio(sll) -> float:
    """Main-lobe to sidelobe voltage ratio :math:`R = 10^{sll/20}` for ``sll`` in dB (> 0)."""
    try:
        x = float(sll)
    except (TypeError, ValueError):
        raise SteradianError(f"sll must be a number of dB, got {sll!r}") from None
    if not math.isfinite(x) or x <= 0:
        hint = f" (did you mean sll={-x:g}?)" if math.isfinite(x) and x < 0 else ""
        raise SteradianError(
            "sll is the sidelobe level in dB below the peak and must be positive, "
            f"got sll={sll!r}{hint}")
    if x > MAX_SLL_DB:
        raise SteradianError(f"sll must be at most {MAX_SLL_DB:g} dB (a ratio of 1e15 in voltage "
                             f"already lies below double-precision rounding), got sll={x:g}")
    return 10.0 ** (x / 20.0)


def cell_centres(n: int) -> np.ndarray:
    """Normalised coordinates :math:`t_n = (n - (N-1)/2)/N` of N equal cells (length 1)."""
    n = count("N", n)
    return (np.arange(n) - (n - 1) / 2) / n


def normalise_peak(w: np.ndarray) -> np.ndarray:
    """``w`` scaled to a largest magnitude of 1 (all-zero input returned as is)."""
    m = np.max(np.abs(w))
    return w / m if m > 0 else w


def axis_coordinates(coords: np.ndarray, tol: float = 1e-9):
    """Distinct coordinate values along one axis (sorted) and each element's index into them.

    A value joins the group of the smallest value before it when within ``tol`` (relative,
    at least 1 absolute) of that first value.
    """
    c = np.asarray(coords, float)
    order = np.argsort(c, kind="stable")
    cs = c[order]
    if len(cs) == 0:
        return np.zeros(0), np.zeros(0, int)
    gap = np.diff(cs) > tol * np.maximum(1.0, np.abs(cs[1:]))
    start = np.concatenate([[0], np.flatnonzero(gap) + 1])
    group = np.cumsum(np.concatenate([[False], gap]))
    # Groups split only where neighbours differ by more than tol; when every group spans no
    # more than tol from its first value this is the first-value rule exactly.
    if np.all(cs - cs[start][group] <= tol * np.maximum(1.0, np.abs(cs))):
        keys = np.empty(len(c), int)
        keys[order] = group
        return cs[start], keys
    keys = np.empty(len(c), int)
    vals: list[float] = []
    for i in order:
        if not vals or c[i] - vals[-1] > tol * max(1.0, abs(c[i])):
            vals.append(c[i])
        keys[i] = len(vals) - 1
    return np.array(vals), keys


def aperture_length(vals: np.ndarray) -> float:
    """Aperture length of sorted distinct coordinates: their range plus one median spacing
    (1 for a single coordinate)."""
    if len(vals) < 2:
        return 1.0
    return float(vals[-1] - vals[0] + np.median(np.diff(vals)))


def aperture_positions(vals: np.ndarray) -> np.ndarray:
    """Normalised coordinates t in [-1/2, 1/2] of sorted distinct coordinates ``vals``, about
    their midpoint, over :func:`aperture_length`."""
    return (vals - 0.5 * (vals[0] + vals[-1])) / aperture_length(vals)
