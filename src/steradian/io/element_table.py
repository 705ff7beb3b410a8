"""Element pattern tables (CSV): reader and writer.

The file layout is documented in :mod:`steradian.elements` (``TabulatedElement``): header
keys in ``# key = value`` comment lines, then one row per direction of a regular theta-phi
grid.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from ..elements import (
    COLUMNS,
    GRID_TOL,
    TABLE_KEYS,
    Element,
    TabulatedElement,
    element_power,
    table_grid,
)
from ..errors import FileFormatError, SteradianError, shown, suggest
from ..units import C0, db10, from_db20
from .atomic import atomic_open
from .csv_table import NUMBER, read_lines, split_fields

__all__ = ["read_element_table", "write_element_table", "MAX_GAIN_DBI"]


# ---- CSV reader ---------------------------------------------------------------------------

_KEY_RE = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(.*?)\s*$")


MAX_GAIN_DBI = 300.0
"""Largest gain value read (dBi): the most directive antennas reach about 80 dBi (common
practice); above 300 dBi the value is a slip, and past ~6,000 dB its linear field
overflows."""

_WORDS = ("inf", "infinity", "nan")
"""Words a table value may be besides a number (refused with their own message)."""


def _header_keys(path, comments, first_row: float) -> dict[str, tuple[str, int]]:
    """``# key = value`` lines before the first data row: {key: (value, line)}."""
    header: dict[str, tuple[str, int]] = {}
    for n, text in comments:
        m = _KEY_RE.match(text)
        if m is None or n > first_row:
            continue  # free-text comment (keys are read only before the data)
        key, value = m.group(1), m.group(2)
        if key not in TABLE_KEYS:
            raise FileFormatError(path, f"unknown header key {shown(key)}"
                                  f"{suggest(key, TABLE_KEYS)}; keys are "
                                  f"{', '.join(TABLE_KEYS)}", n)
        if key in header and key != "note":
            raise FileFormatError(path, f"header key {shown(key)} given twice (first on line "
                                  f"{header[key][1]})", n)
        header[key] = (value, n)
    return header


def read_element_table(path) -> TabulatedElement:
    """Read an element pattern table (the CSV layout in this module's documentation).

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    TabulatedElement

    Raises
    ------
    FileFormatError
        Naming the file and, where one is at fault, the line: unreadable rows, NaN values,
        duplicate or missing (theta, phi) points, a grid that does not cover the sphere (or
        the front half-space), unknown or missing header keys.
    """
    path = Path(path)
    try:
        comments, rows = read_lines(path)
    except OSError as exc:
        raise FileFormatError(path, f"cannot read element table: {exc}") from None
    header = _header_keys(path, comments, rows[0][0] if rows else math.inf)
    quantity, components, front_only, freq = _settings(path, header)
    expected = COLUMNS[(quantity, components)]
    cols = _columns(path, header, expected, f"quantity={quantity}, components={components}")
    if not rows:
        raise FileFormatError(path, "no data rows")
    data = _samples(path, rows, cols, expected, front_only)
    thetas, phis, vals = _grid(path, rows, data)
    if quantity == "field":
        comp = [vals[..., 2] + 1j * vals[..., 3]]
        if components == "theta_phi":
            comp.append(vals[..., 4] + 1j * vals[..., 5])
    else:
        comp = [from_db20(vals[..., 2]) * np.exp(1j * np.deg2rad(vals[..., 3]))]
        if components == "theta_phi":
            comp.append(from_db20(vals[..., 4]) * np.exp(1j * np.deg2rad(vals[..., 5])))
    try:
        return TabulatedElement(thetas, phis, comp[0], comp[1] if len(comp) > 1 else None,
                                front_only=front_only, source=str(path), quantity=quantity,
                                frequency_hz=freq)
    except SteradianError as exc:
        raise FileFormatError(path, str(exc)) from None


def _need(path, header, key):
    if key not in header:
        raise FileFormatError(path, f"missing header line '# {key} = ...'")
    return header[key]


def _settings(path, header) -> tuple[str, str, bool, float | None]:
    """(quantity, components, front_only, frequency_hz) from the header keys."""
    quantity, qline = _need(path, header, "quantity")
    if quantity not in ("field", "gain_dbi"):
        raise FileFormatError(path, f"quantity must be 'field' or 'gain_dbi', got {shown(quantity)}"
                              f"{suggest(quantity, ('field', 'gain_dbi'))}", qline)
    components, cline = header.get("components", ("theta_phi", qline))
    if components not in ("theta_phi", "scalar"):
        raise FileFormatError(path, f"components must be 'theta_phi' or 'scalar', got "
                              f"{shown(components)}{suggest(components, ('theta_phi', 'scalar'))}",
                              cline)
    front_txt, fline = header.get("front_only", ("false", None))
    if front_txt.lower() not in ("true", "false"):
        raise FileFormatError(path, f"front_only must be 'true' or 'false', got {shown(front_txt)}",
                              fline)
    freq = None
    if "frequency_hz" in header:
        ftxt, fl = header["frequency_hz"]
        freq = float(ftxt) if NUMBER.fullmatch(ftxt.strip()) else math.nan
        if not (math.isfinite(freq) and freq > 0):
            raise FileFormatError(path, f"frequency_hz must be a positive number, got "
                                  f"{shown(ftxt)}", fl)
    return quantity, components, front_txt.lower() == "true", freq


def _columns(path, header, expected, kind: str) -> list[str]:
    """The ``# columns = ...`` list, checked against the columns ``kind`` needs."""
    col_txt, col_line = _need(path, header, "columns")
    cols = [c.strip() for c in col_txt.split(",")]
    for c in cols:
        if c not in expected:
            raise FileFormatError(path, f"unknown column {shown(c)}{suggest(c, expected)} for "
                                  f"{kind}; expected {', '.join(expected)}", col_line)
    dup = [c for c in cols if cols.count(c) > 1]
    if dup:
        raise FileFormatError(path, f"column {shown(dup[0])} listed twice", col_line)
    missing = [c for c in expected if c not in cols]
    if missing:
        raise FileFormatError(path, f"columns lack {', '.join(missing)} ({kind} needs "
                              f"{', '.join(expected)})", col_line)
    return cols


def _samples(path, rows, cols, expected, front_only) -> np.ndarray:
    """The rows as numbers, shape (rows, len(expected)), in ``expected`` column order."""
    idx = {c: cols.index(c) for c in expected}
    db_cols = {c for c in expected if c.endswith("dbi")}
    data = np.empty((len(rows), len(expected)))
    for r, (n, line) in enumerate(rows):
        fields = split_fields(line)
        if len(fields) != len(cols):
            raise FileFormatError(path, f"expected {len(cols)} comma-separated values "
                                  f"({', '.join(cols)}), got {len(fields)}", n)
        for j, c in enumerate(expected):
            s = fields[idx[c]]
            t = s.strip()
            if not (NUMBER.fullmatch(t) or t.lower().lstrip("+-") in _WORDS):
                raise FileFormatError(path, f"cannot read {c}={shown(s)} as a number (digits "
                                      "0-9, sign, point and exponent only)", n)
            x = float(t)
            if math.isnan(x):
                raise FileFormatError(path, f"{c} is NaN", n)
            if math.isinf(x) and not (c in db_cols and x < 0):
                raise FileFormatError(path, f"{c} is infinite"
                                      + (" (only -inf dBi, a zero field, is allowed)"
                                         if c in db_cols else ""), n)
            if c in db_cols and x > MAX_GAIN_DBI:
                raise FileFormatError(path, f"{c}={x:g} is above {MAX_GAIN_DBI:g} dBi", n)
            data[r, j] = x
        th = data[r, 0]
        if not 0.0 <= th <= 180.0:
            raise FileFormatError(path, f"theta_deg={th:g} is outside 0..180", n)
        if not abs(data[r, 1]) <= 720.0:
            raise FileFormatError(path, f"phi_deg={data[r, 1]:g} is outside -720..720", n)
        if front_only and th > 90.0 + GRID_TOL:
            raise FileFormatError(path, f"theta_deg={th:g} is behind the front half-space of a "
                                  "front_only table (theta must be at most 90)", n)
    return data


def _grid(path, rows, data):
    """(thetas, phis, values (n_theta, n_phi, ncol)): every (theta, phi) exactly once."""
    lines = np.array([n for n, _ in rows])
    tkey = np.round(data[:, 0], 6)
    pkey = np.round(data[:, 1], 6)
    thetas = np.unique(tkey)
    phis = np.unique(pkey)
    it = np.searchsorted(thetas, tkey)
    ip = np.searchsorted(phis, pkey)
    seen = np.full((len(thetas), len(phis)), -1)
    for r in range(len(rows)):
        if seen[it[r], ip[r]] >= 0:
            raise FileFormatError(path, f"duplicate point theta={data[r, 0]:g}, "
                                  f"phi={data[r, 1]:g} (first on line "
                                  f"{lines[seen[it[r], ip[r]]]})", int(lines[r]))
        seen[it[r], ip[r]] = r
    if (seen < 0).any():
        a, b = np.argwhere(seen < 0)[0]
        raise FileFormatError(
            path, f"missing point theta={thetas[a]:g}, phi={phis[b]:g}: the rows must form the "
            f"full grid of {len(thetas)} theta x {len(phis)} phi values "
            f"({int((seen < 0).sum())} of {seen.size} points missing)")
    if phis[-1] - phis[0] > 360.0 + GRID_TOL:
        raise FileFormatError(path, f"phi values span {phis[-1] - phis[0]:g} deg, more than "
                              "the full circle")
    return thetas, phis, data[seen]


# ---- CSV writer ---------------------------------------------------------------------------

def write_element_table(path, element: Element, *, theta_step_deg: float | None = None,
                        phi_step_deg: float | None = None, quantity: str = "field",
                        frequency_hz: float | None = None, note: str | None = None,
                        digits: int = 17) -> None:
    """Sample ``element`` on a regular grid and write it as an element table (atomically).

    Parameters
    ----------
    path : str or Path
    element : Element
        Any model; its ``front_only`` and ``vector`` flags set the table's.
    theta_step_deg, phi_step_deg : float, optional
        Grid steps (default: a table's own grid, else 2 degrees).
    quantity : {"field", "gain_dbi"}
        ``gain_dbi`` writes partial directivities in dBi (lossless element, gain = directivity)
        with phases in degrees; the radiated power is integrated numerically.
    frequency_hz : float, optional
        Recorded in the header.
    note : str, optional
        A one-line note recorded in the header.
    digits : int
        Significant digits written (17 round-trips doubles exactly).
    """
    if quantity not in ("field", "gain_dbi"):
        raise SteradianError(f"quantity must be 'field' or 'gain_dbi', got {shown(quantity)}")
    if isinstance(element, TabulatedElement):
        dth, dph = element.steps_deg
    else:
        dth = dph = 2.0
    dth = dth if theta_step_deg is None else float(theta_step_deg)
    dph = dph if phi_step_deg is None else float(phi_step_deg)
    th, ph = table_grid(element.front_only, dth, dph)
    t, p = np.meshgrid(np.deg2rad(th), np.deg2rad(ph), indexing="ij")
    e_t, e_p = element.pattern(t, p)
    components = "theta_phi" if element.vector else "scalar"
    cols = COLUMNS[(quantity, components)]
    comps = [e_t, e_p] if element.vector else [e_t]
    if quantity == "gain_dbi":
        k = None if frequency_hz is None else 2 * math.pi * frequency_hz / C0
        scale = 4 * math.pi / element_power(element, k)
        out = []
        for c in comps:
            g = scale * np.abs(c) ** 2
            out += [np.where(g > 0, db10(g), -np.inf),  # -inf: a zero field
                    np.where(g > 0, np.rad2deg(np.angle(c)), 0.0)]
    else:
        out = [x for c in comps for x in (c.real, c.imag)]

    def fmt(x):
        return "-inf" if x == -np.inf else f"{x:.{digits}g}"

    with atomic_open(path, "w", encoding="utf-8", newline="\n") as fh:
        fh.write("# steradian element pattern table\n")
        fh.write(f"# quantity = {quantity}\n")
        fh.write(f"# components = {components}\n")
        fh.write(f"# front_only = {'true' if element.front_only else 'false'}\n")
        if frequency_hz is not None:
            fh.write(f"# frequency_hz = {float(frequency_hz):.12g}\n")
        if note:
            fh.write(f"# note = {' '.join(str(note).split())}\n")
        fh.write(f"# columns = {', '.join(cols)}\n")
        for i in range(len(th)):
            for j in range(len(ph)):
                vals = ",".join(fmt(o[i, j]) for o in out)
                fh.write(f"{th[i]:.10g},{ph[j]:.10g},{vals}\n")
