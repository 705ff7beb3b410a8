"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

import csv
import difflib
import io
import math
from pathlib import Path
from typing import Literal, get_args

import numpy as np

from ..errors import DesignError, FileFormatError, SteradianError
from ..validate import check_table_keys, positive


# ---------------------------------------------------------------------------------------
# Steering grids
# ---------------------------------------------------------------------------------------
def span(start: float, stop: float, step: float) -> np.ndarray:
    """Values start, start + step, ... up to stop inclusive (to 1e-9 of a step)."""
    step = positive("step", step)
    if stop < start:
        raise SteradianError(f"stop {stop} is below start {start}")
    n = math.floor((stop - start) / step + 1e-9) + 1
    return start + step * np.arange(n)


def theta_phi_directions(theta_deg, phi_deg) -> np.ndarray:
    """Product grid of theta and phi values (degrees), shape (B, 2).

    theta = 0 (and 180) is one direction whatever phi, so it appears once (phi = 0).
    """
    th = np.atleast_1d(np.asarray(theta_deg, float))
    ph = np.atleast_1d(np.asarray(phi_deg, float))
    if np.any((th < 0) | (th > 180)):
        raise SteradianError(f"theta_deg values must be in [0, 180], got {th.min()}..{th.max()}")
    out = []
    for t in th:
        if t in (0.0, 180.0):
            out.append((t, 0.0))
        else:
            out.extend((t, p) for p in ph)
    return np.array(out, float).reshape(-1, 2)


def az_el_to_theta_phi(az_deg, el_deg) -> tuple[np.ndarray, np.ndarray]:
    """Azimuth-elevation (degrees) to theta-phi (degrees); see the module conventions."""
    az, el = np.deg2rad(np.asarray(az_deg, float)), np.deg2rad(np.asarray(el_deg, float))
    x, y, z = np.cos(el) * np.sin(az), np.sin(el), np.cos(el) * np.cos(az)
    theta = np.rad2deg(np.arccos(np.clip(z, -1, 1)))
    phi = np.where(np.hypot(x, y) > 1e-15, np.rad2deg(np.arctan2(y, x)), 0.0)
    return theta, phi


def az_el_directions(az_deg, el_deg) -> np.ndarray:
    """Product grid of azimuth by elevation values (degrees) as (theta, phi), shape (B, 2)."""
    az = np.atleast_1d(np.asarray(az_deg, float))
    el = np.atleast_1d(np.asarray(el_deg, float))
    if np.any(np.abs(el) > 90):
        raise SteradianError(f"el_deg values must be in [-90, 90], got {el.min()}..{el.max()}")
    a, e = np.meshgrid(az, el, indexing="ij")
    t, p = az_el_to_theta_phi(a.ravel(), e.ravel())
    return np.column_stack([t, p])


def read_directions(path) -> np.ndarray:
    """Beam directions from a CSV file, shape (B, 2) as (theta_deg, phi_deg).

    Columns ``theta_deg,phi_deg`` or ``az_deg,el_deg`` (one pair, any order; ``#`` comment
    lines and blank lines ignored).
    """
    path = Path(path)
    header, rows = None, []
    for lineno, line in enumerate(path.read_text(encoding="utf-8-sig").splitlines(), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        f = [x.strip() for x in next(csv.reader(io.StringIO(s)))]
        if header is None:
            header = f
            pairs = ({"theta_deg", "phi_deg"}, {"az_deg", "el_deg"})
            if set(header) not in pairs:
                raise FileFormatError(path, f"columns must be theta_deg,phi_deg or az_deg,"
                                      f"el_deg, got {','.join(header)}", lineno)
            continue
        if len(f) != 2:
            raise FileFormatError(path, f"expected 2 fields, got {len(f)}", lineno)
        try:
            vals = dict(zip(header, map(float, f), strict=True))
        except ValueError:
            raise FileFormatError(path, f"not a number in {s!r}", lineno) from None
        if not all(math.isfinite(v) for v in vals.values()):
            raise FileFormatError(path, f"non-finite angle in {s!r}", lineno)
        if "theta_deg" in vals and not 0 <= vals["theta_deg"] <= 180:
            raise FileFormatError(path, f"theta_deg {vals['theta_deg']} is outside [0, 180]",
                                  lineno)
        if "el_deg" in vals and abs(vals["el_deg"]) > 90:
            raise FileFormatError(path, f"el_deg {vals['el_deg']} is outside [-90, 90]",
                                  lineno)
        rows.append(vals)
    if not rows:
        raise FileFormatError(path, "no directions (need a header and one row per beam)")
    if "theta_deg" in header:
        return np.array([[r["theta_deg"], r["phi_deg"]] for r in rows], float)
    t, p = az_el_to_theta_phi([r["az_deg"] for r in rows], [r["el_deg"] for r in rows])
    return np.column_stack([t, p])


BEAMS_KEYS = ("grid", "theta_deg", "phi_deg", "az_deg", "el_deg", "file", "directions",
              "max_scan_deg")
"""Keys of a design file's ``[beams]`` table."""

GridKind = Literal["theta_phi", "az_el", "list"]


def beams_from_table(table: dict, *, source=None, base_dir=None,
                     section: str = "beams") -> np.ndarray:
    """Beam directions (theta_deg, phi_deg), shape (B, 2), from a design's ``[beams]`` table.

    ``grid = "theta_phi"`` with ``theta_deg`` and ``phi_deg``; ``grid = "az_el"`` with
    ``az_deg`` and ``el_deg``; each axis a list of values or ``{start, stop, step}``.
    ``grid = "list"`` with ``file`` (CSV, see :func:`read_directions`) or ``directions``
    (``[[theta, phi], ...]``). Optional ``max_scan_deg`` drops beams with larger theta.

    Raises
    ------
    DesignError
        Naming ``beams.<key>``, with the closest valid key for an unknown one.
    """
    src = None if source is None else str(source)
    check_table_keys(section, table, BEAMS_KEYS, src)
    kinds = get_args(GridKind)
    grid = table.get("grid")
    if grid not in kinds:
        hint = difflib.get_close_matches(str(grid), kinds, n=1)
        extra = f" (did you mean {hint[0]!r}?)" if hint else ""
        raise DesignError(f"{section}.grid", f"must be one of {', '.join(map(repr, kinds))}, "
                          f"got {grid!r}{extra}", src)
    need = {"theta_phi": ("theta_deg", "phi_deg"), "az_el": ("az_deg", "el_deg"), "list": ()}
    allowed = set(need[grid]) | {"grid", "max_scan_deg"} | (
        {"file", "directions"} if grid == "list" else set())
    for k in table:
        if k not in allowed:
            raise DesignError(f"{section}.{k}", f"does not apply to grid = {grid!r}", src)

    def axis(key):
        if key not in table:
            raise DesignError(f"{section}.{key}", f"is required for grid = {grid!r}", src)
        v = table[key]
        try:
            if isinstance(v, dict):
                extra = set(v) - {"start", "stop", "step"}
                if extra or len(v) != 3:
                    raise SteradianError("give start, stop and step")
                return span(float(v["start"]), float(v["stop"]), float(v["step"]))
            if isinstance(v, list) and v and all(
                    isinstance(x, (int, float)) and not isinstance(x, bool) for x in v):
                return np.array(v, float)
            raise SteradianError("must be a list of numbers or {start, stop, step}")
        except (SteradianError, TypeError, ValueError) as exc:
            raise DesignError(f"{section}.{key}", f"{exc} (got {v!r})", src) from None

    try:
        if grid == "theta_phi":
            d = theta_phi_directions(axis("theta_deg"), axis("phi_deg"))
        elif grid == "az_el":
            d = az_el_directions(axis("az_deg"), axis("el_deg"))
        else:
            if ("file" in table) == ("directions" in table):
                raise DesignError(f"{section}.file", "grid = 'list' needs file or "
                                  "directions (one of them)", src)
            if "file" in table:
                p = Path(str(table["file"]))
                if not p.is_absolute() and base_dir is not None:
                    p = Path(base_dir) / p
                if not p.is_file():
                    raise DesignError(f"{section}.file", f"file not found: {p}", src)
                d = read_directions(p)
            else:
                v = table["directions"]
                try:
                    d = np.array(v, float)
                except (TypeError, ValueError):
                    d = np.zeros((0, 0))
                if d.ndim != 2 or d.shape[1] != 2 or len(d) == 0:
                    raise DesignError(f"{section}.directions",
                                      "must be a list of [theta_deg, phi_deg] pairs", src)
                if np.any((d[:, 0] < 0) | (d[:, 0] > 180)) or not np.all(np.isfinite(d)):
                    raise DesignError(f"{section}.directions",
                                      "theta_deg values must be in [0, 180]", src)
    except DesignError:
        raise
    except SteradianError as exc:
        raise DesignError(section, str(exc), src) from None
    if "max_scan_deg" in table:
        m = table["max_scan_deg"]
        if isinstance(m, bool) or not isinstance(m, (int, float)) or not 0 <= m <= 180:
            raise DesignError(f"{section}.max_scan_deg", f"must be a number in [0, 180], "
                              f"got {m!r}", src)
        d = d[d[:, 0] <= m + 1e-9]
        if len(d) == 0:
            raise DesignError(f"{section}.max_scan_deg", f"{m} leaves no beams", src)
    return d


