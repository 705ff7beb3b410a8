"""Part of :mod:`steradian.beamtable`: the ``[beams]`` table of a design file."""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path
from typing import Literal, get_args

import numpy as np

from ..budget import require
from ..directions import az_el_directions, theta_phi_directions
from ..errors import DesignError, SteradianError
from ..schema import Section
from ..units import grid_decimals
from ..validate import positive


def span(start: float, stop: float, step: float) -> np.ndarray:
    """Values start, start + step, ... up to stop inclusive (to 1e-9 of a step).

    Each value is rounded to 1e-9 of the step from the start (so 0 + 3 x 3 is 9.0, not
    9.000000000000002: the commanded directions in the weight files are the grid's own
    decimals). A span over the memory budget (16 bytes per value) is refused before it is
    built.
    """
    step = positive("step", step)
    if stop < start:
        raise SteradianError(f"stop {stop} is below start {start}")
    x = (stop - start) / step + 1e-9
    n = math.floor(x) + 1 if x < 2**62 else 2**62
    many = f"{n:,}" if n < 2**62 else f"more than {2**62:.1e}"
    require(16 * n, f"a span of {many} values ({start:g} to {stop:g} in steps of {step:g})",
            "use a larger step")
    return grid_decimals(start + step * np.arange(n), step)


BEAMS_KEYS = ("grid", "theta_deg", "phi_deg", "az_deg", "el_deg", "file", "directions",
              "max_scan_deg", "kinds")
"""Keys of a design file's ``[beams]`` table."""

GridKind = Literal["theta_phi", "az_el", "list"]

_NEEDS = {"theta_phi": ("theta_deg", "phi_deg"), "az_el": ("az_deg", "el_deg"), "list": ()}


def _axis(t: Section, key: str, grid: str) -> np.ndarray:
    """One axis of a product grid: a list of numbers or ``{start, stop, step}``."""
    if key not in t:
        raise t.error(key, f"is required for grid = {grid!r}")
    v = t.data[key]
    try:
        if isinstance(v, dict):
            if set(v) != {"start", "stop", "step"}:
                raise SteradianError("give start, stop and step")
            return span(float(v["start"]), float(v["stop"]), float(v["step"]))
        if isinstance(v, list) and v and all(
                isinstance(x, (int, float)) and not isinstance(x, bool) for x in v):
            return np.array(v, float)
        raise SteradianError("must be a list of numbers or {start, stop, step}")
    except (SteradianError, TypeError, ValueError) as exc:
        raise t.error(key, f"{exc} (got {v!r})") from None


def _listed(t: Section, base_dir, read_file) -> np.ndarray:
    """Directions of ``grid = "list"``: a CSV file or inline ``[[theta, phi], ...]``."""
    if ("file" in t) == ("directions" in t):
        raise t.error("file", "grid = 'list' needs file or directions (one of them)")
    if "file" in t:
        p = t.path("file", Path(base_dir) if base_dir is not None else Path())
        if read_file is None:
            raise t.error("file", "reading a directions file needs read_file (e.g. "
                          "steradian.io.directions_csv.read_directions)")
        return read_file(p)
    try:
        d = np.array(t.data["directions"], float)
    except (TypeError, ValueError):
        d = np.zeros((0, 0))
    if d.ndim != 2 or d.shape[1] != 2 or len(d) == 0:
        raise t.error("directions", "must be a list of [theta_deg, phi_deg] pairs")
    if np.any((d[:, 0] < 0) | (d[:, 0] > 180)) or not np.all(np.isfinite(d)):
        raise t.error("directions", "theta_deg values must be in [0, 180]")
    return d


def beam_kinds_from_table(table: dict, *, source=None, section: str = "beams") -> tuple:
    """The ``kinds`` of a design's ``[beams]`` table: beam kinds per direction, distinct
    values of "sum", "difference_az", "difference_el" in table order (default ("sum",)).

    Raises
    ------
    DesignError
        Naming ``beams.kinds`` for an unknown, repeated or empty list.
    """
    from ._table import BEAM_KINDS

    t = Section(section, table, None if source is None else str(source))
    if "kinds" not in t:
        return ("sum",)
    v = t.data["kinds"]
    if (not isinstance(v, list) or not v or not all(isinstance(k, str) for k in v)
            or len(set(v)) != len(v)):
        raise t.error("kinds", f"must be a list of distinct beam kinds of "
                      f"{', '.join(BEAM_KINDS)} (got {v!r})")
    bad = [k for k in v if k not in BEAM_KINDS]
    if bad:
        raise t.error("kinds", f"{bad[0]!r} is not a beam kind ({', '.join(BEAM_KINDS)})")
    return tuple(v)


def beams_from_table(table: dict, *, source=None, base_dir=None, section: str = "beams",
                     read_file: Callable[[Path], np.ndarray] | None = None) -> np.ndarray:
    """Beam directions (theta_deg, phi_deg), shape (B, 2), from a design's ``[beams]`` table.

    ``grid = "theta_phi"`` with ``theta_deg`` and ``phi_deg``; ``grid = "az_el"`` with
    ``az_deg`` and ``el_deg``; each axis a list of values or ``{start, stop, step}``.
    ``grid = "list"`` with ``file`` (a directions CSV, relative to ``base_dir``, read by
    ``read_file``: :func:`steradian.io.directions_csv.read_directions`) or ``directions``
    (``[[theta, phi], ...]``). Optional ``max_scan_deg`` drops beams with larger theta.

    Raises
    ------
    DesignError
        Naming ``beams.<key>``, with the closest valid key for an unknown one.
    """
    t = Section(section, table, None if source is None else str(source))
    t.only(BEAMS_KEYS)
    grid = t.string("grid", choices=get_args(GridKind))
    allowed = set(_NEEDS[grid]) | {"grid", "max_scan_deg", "kinds"} | (
        {"file", "directions"} if grid == "list" else set())
    for k in t.data:
        if k not in allowed:
            raise t.error(k, f"does not apply to grid = {grid!r}")
    try:
        if grid == "theta_phi":
            d = theta_phi_directions(_axis(t, "theta_deg", grid), _axis(t, "phi_deg", grid))
        elif grid == "az_el":
            d = az_el_directions(_axis(t, "az_deg", grid), _axis(t, "el_deg", grid))
        else:
            d = _listed(t, base_dir, read_file)
    except DesignError:
        raise
    except SteradianError as exc:
        raise t.error(None, str(exc)) from None
    m = t.number("max_scan_deg", None, minimum=0, maximum=180)
    if m is not None:
        d = d[d[:, 0] <= m + 1e-9]
        if len(d) == 0:
            raise t.error("max_scan_deg", f"{t.data['max_scan_deg']} leaves no beams")
    return d
