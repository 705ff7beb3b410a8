"""Element-position CSV files: one element per row, the length unit in the column names.

Layout (comment lines start with ``#`` and may appear anywhere; blank lines are ignored)::

    # steradian element positions
    element,x_m,y_m,z_m,normal_x,normal_y,normal_z,enabled
    0,-0.0375,0.0,0.0,0.0,0.0,1.0,1
    1,0.0375,0.0,0.0,0.0,0.0,1.0,0

Columns, in any order:

``x_<unit>``, ``y_<unit>`` (required), ``z_<unit>`` (optional, default 0)
    Phase-centre coordinates. ``<unit>`` is ``m`` (metres), ``mm`` (millimetres) or ``wl``
    (wavelengths at the design frequency) and must be the same for all three. A column named
    plain ``x`` is an error: the unit is always explicit.
``element`` (optional)
    Element index; when present the rows must be numbered 0, 1, 2, ... in order.
``normal_x``, ``normal_y``, ``normal_z`` (optional, all three or none)
    Outward normal (the element's local +z, its boresight) for conformal layouts; any
    non-zero length, normalised on reading.
``enabled`` (optional)
    ``1``/``0``, ``true``/``false`` or ``yes``/``no``: whether the element is driven.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import FileFormatError, SteradianError, shown
from ..geometry import MAX_COORDINATE_M, Geometry, coincident_pair, rotation_to
from .atomic import write_text
from .csv_table import check_columns, parse_float, read_table

__all__ = ["ElementLayout", "read_layout", "read_positions", "write_positions", "LENGTH_UNITS"]

LENGTH_UNITS = {"m": 1.0, "mm": 1e-3, "wl": None}
"""Allowed unit suffixes of coordinate columns and their size in metres (``wl``: one
wavelength, supplied by the caller)."""

_NORMALS = ("normal_x", "normal_y", "normal_z")
_TRUE = {"1", "true", "yes", "on"}
_FALSE = {"0", "false", "no", "off"}


@dataclass(frozen=True, eq=False)
class ElementLayout:
    """What a positions file holds: the geometry and the optional on/off mask.

    Attributes
    ----------
    geometry : Geometry
        Positions in metres (and orientations when the file has normal columns).
    enabled : ndarray of bool or None
        Per-element drive mask from the ``enabled`` column (``None`` when absent).
    unit : str
        Unit suffix the file used (``"m"``, ``"mm"`` or ``"wl"``).
    """

    geometry: Geometry
    enabled: np.ndarray | None
    unit: str


def _coordinate_unit(path, header: list[str], header_line: int) -> str:
    units = {}
    for axis in "xyz":
        if axis in header:
            raise FileFormatError(
                path, f"column {shown(axis)} has no unit: name it {axis}_m (metres), {axis}_mm "
                f"(millimetres) or {axis}_wl (wavelengths)", header_line)
        for u in LENGTH_UNITS:
            if f"{axis}_{u}" in header:
                units[axis] = u
    for axis in "xy":
        if axis not in units:
            raise FileFormatError(
                path, f"missing coordinate column {axis}_m, {axis}_mm or {axis}_wl",
                header_line)
    if len(set(units.values())) != 1:
        raise FileFormatError(
            path, "coordinate columns mix units: "
            + ", ".join(f"{a}_{u}" for a, u in units.items()), header_line)
    return units["x"]


def read_layout(path, wavelength: float | None = None,
                local_x_toward=(1.0, 0.0, 0.0)) -> ElementLayout:
    """Read a positions file into an :class:`ElementLayout`.

    Parameters
    ----------
    path : path-like
        The CSV file (layout in the module docstring).
    wavelength : float, optional
        Wavelength in metres; required when the coordinates are in wavelengths (``*_wl``).
    local_x_toward : sequence of 3 floats
        For files with normal columns: each element's local x axis is the projection of this
        vector on its aperture plane (see :func:`steradian.rotation_to`). It sets the
        polarisation reference of vector element models.

    Raises
    ------
    FileFormatError
        With the line number for unparsable rows, NaN, a wrong field count, unknown columns,
        a missing unit, coincident elements or a file without rows.
    """
    path = Path(path)
    header, rows, hline, _ = read_table(path)
    unit = _coordinate_unit(path, header, hline)
    col = _layout_columns(path, header, unit, hline)
    if not rows:
        raise FileFormatError(path, "no element rows after the header", hline)
    scale = LENGTH_UNITS[unit]
    if scale is None:
        if wavelength is None:
            raise FileFormatError(path, "coordinates are in wavelengths (*_wl) but no "
                                  "wavelength was given (set the design frequency)", hline)
        scale = float(wavelength)
    pos, normals, enabled = _layout_rows(path, rows, col, unit, scale)
    pair = coincident_pair(pos)
    if pair is not None:
        i, j = pair
        raise FileFormatError(path, f"element {j} is at the same position as element {i} "
                              f"(line {rows[i][0]})", rows[j][0])
    if enabled is not None and not enabled.any():
        raise FileFormatError(path, "every element is disabled (column 'enabled')")
    R = None
    if normals is not None:
        R = rotation_to(normals, np.asarray(local_x_toward, float))
    try:
        geom = Geometry(pos, R)
    except SteradianError as exc:
        raise FileFormatError(path, str(exc)) from None
    return ElementLayout(geom, enabled, unit)


def _layout_columns(path, header, unit: str, hline: int) -> dict[str, int]:
    has_normals = [c in header for c in _NORMALS]
    if any(has_normals) and not all(has_normals):
        missing = [c for c, h in zip(_NORMALS, has_normals, strict=True) if not h]
        raise FileFormatError(path, f"normal columns need all three; missing "
                              f"{', '.join(missing)}", hline)
    allowed = ["element", *(f"{a}_{unit}" for a in "xyz"), *_NORMALS, "enabled"]
    return check_columns(path, header, allowed, (), hline)


def _layout_rows(path, rows, col, unit: str, scale: float):
    """(positions in metres, normals or None, enabled mask or None) of the rows."""
    coords = [f"{a}_{unit}" for a in "xyz"]
    n = len(rows)
    pos = np.zeros((n, 3))
    normals = np.zeros((n, 3)) if "normal_x" in col else None
    enabled = np.ones(n, bool) if "enabled" in col else None
    for r, (lineno, fields) in enumerate(rows):
        if "element" in col:
            idx = fields[col["element"]]
            if idx != str(r):
                raise FileFormatError(path, f"column 'element': expected {r} (rows numbered "
                                      f"0, 1, 2, ... in order), got {shown(idx)}", lineno)
        for a, c in enumerate(coords):
            if c in col:
                pos[r, a] = parse_float(path, lineno, c, fields[col[c]]) * scale
                if not abs(pos[r, a]) <= MAX_COORDINATE_M:
                    raise FileFormatError(path, f"column {shown(c)}: {shown(fields[col[c]])} is "
                                          f"{pos[r, a]:.6g} m from the origin, beyond "
                                          f"+-{MAX_COORDINATE_M:g} m (not a physical "
                                          "position)", lineno)
        if normals is not None:
            for a, c in enumerate(_NORMALS):
                normals[r, a] = parse_float(path, lineno, c, fields[col[c]])
            big = float(np.abs(normals[r]).max())
            if big == 0:
                raise FileFormatError(path, "normal vector is zero", lineno)
            normals[r] /= big  # any length: scaled first, so its norm cannot overflow
        if enabled is not None:
            v = fields[col["enabled"]].lower()
            if v not in _TRUE | _FALSE:
                raise FileFormatError(path, f"column 'enabled': {shown(fields[col['enabled']])} "
                                      "is not 1/0, true/false or yes/no", lineno)
            enabled[r] = v in _TRUE
    return pos, normals, enabled


def read_positions(path, wavelength: float | None = None) -> Geometry:
    """Read a positions file and return its :class:`~steradian.Geometry` (metres).

    See :func:`read_layout` for the parameters and the ``enabled`` column.
    """
    return read_layout(path, wavelength).geometry


def _fmt(x: float) -> str:
    return repr(float(x))


def write_positions(path, geometry: Geometry, *, unit: str = "m",
                    wavelength: float | None = None, enabled=None,
                    comments: list[str] | None = None) -> None:
    """Write ``geometry`` as a positions CSV (atomically).

    Parameters
    ----------
    path : path-like
    geometry : Geometry
    unit : {"m", "mm", "wl"}
        Coordinate unit; ``"wl"`` needs ``wavelength``.
    wavelength : float, optional
        Wavelength in metres for ``unit="wl"``.
    enabled : array_like of bool, optional
        Writes an ``enabled`` column.
    comments : list of str, optional
        Extra ``#`` lines at the top.

    Coordinates are written with Python's shortest round-trip representation, so reading the
    file back gives the same floats (for ``unit="m"``).
    """
    if unit not in LENGTH_UNITS:
        raise SteradianError(f"unit must be one of {', '.join(map(repr, LENGTH_UNITS))}, "
                             f"got {shown(unit)}")
    scale = LENGTH_UNITS[unit]
    if scale is None:
        if wavelength is None or not wavelength > 0:
            raise SteradianError("unit='wl' needs a positive wavelength (m)")
        scale = float(wavelength)
    n = geometry.n
    cols = ["element", f"x_{unit}", f"y_{unit}", f"z_{unit}"]
    R = geometry.orientations
    if R is not None:
        cols += list(_NORMALS)
    if enabled is not None:
        enabled = np.asarray(enabled, bool).reshape(-1)
        if enabled.shape != (n,):
            raise SteradianError(f"enabled has {enabled.size} entries, geometry has {n}")
        cols.append("enabled")
    lines = ["# steradian element positions"]
    lines += [f"# {c}" for c in (comments or [])]
    lines.append(",".join(cols))
    p = geometry.positions / scale if unit != "m" else geometry.positions
    for i in range(n):
        f = [str(i), *(_fmt(v) for v in p[i])]
        if R is not None:
            f += [_fmt(v) for v in R[i][:, 2]]
        if enabled is not None:
            f.append("1" if enabled[i] else "0")
        lines.append(",".join(f))
    write_text(path, "\n".join(lines) + "\n")
