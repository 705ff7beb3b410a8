"""Single-beam weight CSV files: one complex excitation per element.

Layout (``#`` lines are comments; ``# key = value`` lines carry metadata)::

    # steradian beam weights
    # beam = boresight
    element,x_m,y_m,z_m,real,imag,amplitude,amplitude_db,phase_deg
    0,-0.0075,0.0,0.0,0.5,0.0,0.5,-6.020599913279624,0.0
    1,0.0075,0.0,0.0,0.0,1.0,1.0,0.0,90.0

Columns:

``element`` (required)
    Element index 0 .. N-1, each exactly once (any row order).
``x_m``, ``y_m``, ``z_m`` (optional, together)
    Element positions in metres, for reference: a design that loads the file checks them
    against its geometry.
``real``, ``imag`` (optional, together)
    The weight itself. Written with Python's shortest round-trip float representation, so a
    write-read cycle returns bit-identical weights.
``amplitude`` (linear), ``amplitude_db`` (20 log10 of it), ``phase_deg``
    The same weight in the form beamformer engineers read. Without ``real``/``imag`` the
    weight is built from the amplitude (either form) and ``phase_deg``. When several forms are
    present they must agree, so a hand edit of one column alone is caught rather than ignored.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import FileFormatError, SteradianError, shown
from ..units import db20, from_db20, wrap_deg
from .atomic import write_text
from .csv_table import check_columns, parse_float, parse_index, read_table

__all__ = ["WeightsTable", "read_weights", "read_weights_table", "write_weights"]

_COLUMNS = ["element", "x_m", "y_m", "z_m", "real", "imag", "amplitude", "amplitude_db",
            "phase_deg"]
_META = re.compile(r"^([A-Za-z_][\w.\-]*)\s*=\s*(.*)$")

# Agreement tolerances between redundant columns (relative to the peak amplitude).
_AMP_RTOL = 1e-9
_DB_TOL = 1e-6
_PHASE_TOL_DEG = 1e-6


@dataclass(frozen=True, eq=False)
class WeightsTable:
    """Contents of a weights file.

    Attributes
    ----------
    weights : ndarray of complex, shape (N,)
        In element order.
    positions : ndarray, shape (N, 3), or None
        Positions in metres when the file has them.
    meta : dict of str
        ``# key = value`` comment lines.
    """

    weights: np.ndarray
    positions: np.ndarray | None = None
    meta: dict = field(default_factory=dict)

    @property
    def steering_included(self) -> bool | None:
        """The ``# steering_included = yes|no`` line (written by ``synth``): True when the
        weights already hold the steering phases; None when the file does not say."""
        v = self.meta.get("steering_included")
        if v is None:
            return None
        v = v.strip().lower()
        if v not in ("yes", "no"):
            raise SteradianError(f"steering_included = {shown(v)}: expected yes or no")
        return v == "yes"


def _fmt(x: float) -> str:
    return repr(float(x))


def write_weights(path, weights, positions=None, meta: dict | None = None) -> None:
    """Write one beam's complex weights to ``path`` (atomically).

    Parameters
    ----------
    path : path-like
    weights : array_like of complex, shape (N,)
    positions : array_like, shape (N, 3) or (N, 2), optional
        Element positions in metres (written as ``x_m, y_m, z_m``).
    meta : dict, optional
        Written as ``# key = value`` lines (keys: letters, digits, ``_.-``; values on one
        line).
    """
    w = np.asarray(weights, complex).reshape(-1)
    if w.size == 0:
        raise SteradianError("weights are empty")
    if not np.all(np.isfinite(w)):
        i = int(np.flatnonzero(~np.isfinite(w))[0])
        raise SteradianError(f"weight {i} is not finite: {w[i]}")
    pos = None
    if positions is not None:
        pos = np.asarray(positions, float)
        if pos.ndim == 2 and pos.shape[1] == 2:
            pos = np.column_stack([pos, np.zeros(len(pos))])
        if pos.shape != (w.size, 3):
            raise SteradianError(f"positions must have shape ({w.size}, 3), got {pos.shape}")
    lines = ["# steradian beam weights"]
    for k, v in (meta or {}).items():
        k = str(k)
        v = str(v)
        if not _META.match(f"{k} = x") or "\n" in v or "\r" in v:
            raise SteradianError(f"meta key {shown(k)} or its value cannot be written on one line")
        lines.append(f"# {k} = {v}")
    cols = ["element"] + (["x_m", "y_m", "z_m"] if pos is not None else [])
    cols += ["real", "imag", "amplitude", "amplitude_db", "phase_deg"]
    lines.append(",".join(cols))
    amp = np.abs(w)
    db = db20(amp, floor=None)
    ph = np.angle(w, deg=True)
    for i in range(w.size):
        f = [str(i)]
        if pos is not None:
            f += [_fmt(v) for v in pos[i]]
        f += [_fmt(w[i].real), _fmt(w[i].imag), _fmt(amp[i]), _fmt(db[i]), _fmt(ph[i])]
        lines.append(",".join(f))
    write_text(path, "\n".join(lines) + "\n")


def read_weights_table(path, n: int | None = None) -> WeightsTable:
    """Read a weights file with its positions and metadata.

    Parameters
    ----------
    path : path-like
    n : int, optional
        Expected number of elements; a different count is an error.

    Raises
    ------
    FileFormatError
        Naming the line for unparsable or NaN fields, a wrong field count, a duplicate or
        missing element index, or columns that disagree.
    """
    path = Path(path)
    header, rows, hline, comments = read_table(
        path, None if n is None else n, "" if n is None else f" (the array has {n} elements)")
    col = _weight_columns(path, header, hline)
    if not rows:
        raise FileFormatError(path, "no element rows after the header", hline)
    m = len(rows)
    if n is not None and m != n:
        raise FileFormatError(path, f"has {m} element rows, the array has {n} elements")
    w, pos, amp, db, ph, line_of = _weight_rows(path, rows, col, m)
    if "real" not in col:
        a = amp if "amplitude" in col else from_db20(db)
        w = a * np.exp(1j * np.deg2rad(ph))
    _check_agreement(path, w, amp, db, ph, line_of)
    meta = {}
    for c in comments:
        mm = _META.match(c)
        if mm:
            meta[mm.group(1)] = mm.group(2).strip()
    return WeightsTable(w, pos, meta)


def _weight_columns(path, header, hline) -> dict[str, int]:
    """{column: index} of a weights header, checking which columns go together."""
    col = check_columns(path, header, _COLUMNS, ("element",), hline)
    has_ri = ("real" in col, "imag" in col)
    if any(has_ri) and not all(has_ri):
        raise FileFormatError(path, "columns 'real' and 'imag' go together", hline)
    has_pos = [c in col for c in ("x_m", "y_m", "z_m")]
    if any(has_pos) and not all(has_pos):
        raise FileFormatError(path, "position columns x_m, y_m, z_m go together", hline)
    if not all(has_ri):
        if "phase_deg" not in col or not ({"amplitude", "amplitude_db"} & set(col)):
            raise FileFormatError(path, "need columns real and imag, or amplitude (or "
                                  "amplitude_db) and phase_deg", hline)
    return col


def _weight_rows(path, rows, col, m):
    """Per-element values of the rows: (w, positions, amplitude, dB, phase, line)."""
    w = np.zeros(m, complex)
    pos = np.zeros((m, 3)) if "x_m" in col else None
    amp, db, ph = np.full(m, np.nan), np.full(m, np.nan), np.full(m, np.nan)
    line_of = np.zeros(m, int)
    for lineno, f in rows:
        i = parse_index(path, lineno, "element", f[col["element"]], m)
        if line_of[i]:
            raise FileFormatError(path, f"element {i} appears twice (first on line "
                                  f"{line_of[i]})", lineno)
        line_of[i] = lineno
        if pos is not None:
            pos[i] = [parse_float(path, lineno, c, f[col[c]]) for c in ("x_m", "y_m", "z_m")]
        if "amplitude" in col:
            amp[i] = parse_float(path, lineno, "amplitude", f[col["amplitude"]])
            if amp[i] < 0:
                raise FileFormatError(path, f"column 'amplitude': {amp[i]} is negative",
                                      lineno)
        if "amplitude_db" in col:
            db[i] = parse_float(path, lineno, "amplitude_db", f[col["amplitude_db"]],
                                allow_inf=True)
            if db[i] == math.inf:
                raise FileFormatError(path, "column 'amplitude_db': +inf is not allowed",
                                      lineno)
        if "phase_deg" in col:
            ph[i] = parse_float(path, lineno, "phase_deg", f[col["phase_deg"]])
        if "real" in col:
            w[i] = complex(parse_float(path, lineno, "real", f[col["real"]]),
                           parse_float(path, lineno, "imag", f[col["imag"]]))
    return w, pos, amp, db, ph, line_of


def _check_agreement(path, w, amp, db, ph, line_of) -> None:
    a = np.abs(w)
    peak = max(float(a.max()), np.finfo(float).tiny)
    a_ref = np.where(np.isnan(amp), a, amp)
    checks = []
    if not np.all(np.isnan(amp)):
        checks.append(("amplitude", np.abs(amp - a) > _AMP_RTOL * peak))
    if not np.all(np.isnan(db)):
        big = a_ref > 1e-6 * peak
        with np.errstate(divide="ignore", invalid="ignore"):
            db_w = db20(np.where(big, a_ref, 1.0), floor=None)
            bad = np.where(big, np.abs(db - db_w) > _DB_TOL,
                           np.abs(from_db20(db) - a_ref) > _AMP_RTOL * peak)
        checks.append(("amplitude_db", bad))
    if not np.all(np.isnan(ph)):
        d = np.abs(wrap_deg(ph - np.angle(w, deg=True)))
        checks.append(("phase_deg", (a > 1e-6 * peak) & (d > _PHASE_TOL_DEG)))
    for name, bad in checks:
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise FileFormatError(
                path, f"column {shown(name)} disagrees with the other weight columns for element "
                f"{i} (weight {w[i]:.6g})", int(line_of[i]))


def read_weights(path, n: int | None = None) -> np.ndarray:
    """Read one beam's complex weights (element order) from a weights CSV file.

    See :func:`read_weights_table` for the parameters and errors.
    """
    return read_weights_table(path, n).weights
