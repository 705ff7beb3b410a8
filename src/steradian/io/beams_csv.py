"""Beam-table CSV files for people: one row per beam and element.

Layout (``# key = value`` comment lines first, then a header and the rows)::

    # format = steradian-beam-weights
    # layout_version = 2
    # steradian_version = 0.1.0
    # encoding = codes
    # n_elements = 256
    # n_beams = 231
    # states = {"phase_step_deg": 5.625, "phase_states": 64, ...}
    # metadata = {...}
    # metrics = [{...}, ...]
    # beam_kinds = ["sum", "difference_az", ...]     (layout 3 only)
    beam,theta_deg,phi_deg,element,x_m,y_m,z_m,phase_offset_deg,enabled,amplitude,amplitude_db,phase_deg,phase_code,amplitude_code
    0,0.0,0.0,0,-0.1125,-0.1125,0.0,0.0,1,1.0,0.0,0.0,0,0

Columns:

``beam``, ``theta_deg``, ``phi_deg``
    Beam index and its commanded direction (the same on every row of the beam).
``element``, ``x_m``, ``y_m``, ``z_m``
    Element index and position in metres (positions are optional, all three or none).
``phase_offset_deg``
    Fixed phase of the element's channel path (randomised-offset mode; else 0).
``enabled``
    1 when the element is on, 0 when it is off (the same on every row of the element). An
    off element's state is the off flag 65535, 65535 (codes) or 0, 0 (I/Q); it reads
    amplitude 0, amplitude_db -inf, phase 0. Layout 1 files (no such column) are still read,
    with every element on.
``amplitude``, ``amplitude_db``, ``phase_deg``
    The commanded channel state in the form people read (linear, 20 log10, degrees), rounded
    to 10, 8 and 8 decimals (no float noise). They must agree with the state columns: edit
    the codes, these are for reading.
``phase_code``, ``amplitude_code`` (encoding ``codes``) or ``i_q15``, ``q_q15`` (``iq``)
    The hardware states: codes, or I/Q integers in Q1.15 (value = integer / 32768).

Every (beam, element) pair appears exactly once, in any order. ``metrics`` (one JSON list of
the predicted per-beam metrics) is optional. Floats are written in Python's shortest
round-trip form, so a write-read cycle returns bit-identical tables. ``beam_kinds`` (one JSON
list, the kind of each beam in beam order: "sum", "difference_az" or "difference_el") is
written for a table that holds a difference beam, and then ``layout_version`` is 3; a table
of sum beams only is written as layout 2 without it (every beam a sum beam).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np

from ..beamtable import BEAM_KINDS, IQ_SCALE, BeamTable
from ..errors import FileFormatError, SteradianError, shown
from ..quantize import StateMap
from ..units import db20, from_db20, wrap_deg
from .atomic import write_text
from .csv_table import parse_float, parse_int, read_lines, split_fields
from .formats import CODE_LIMIT, check_extras, json_value, not_a, weight_text

__all__ = ["write_beams_csv", "read_beams_csv"]

FORMAT_ID = "steradian-beam-weights"
LAYOUT_VERSION = 3
READS = (1, 2, 3)
_META = re.compile(r"^\s*([a-z_]+)\s*=\s*(.*)$")
_NOT_NUMERIC = re.compile(r"[^0-9eE+\-.,inf]")
"""A character no field of a well-formed row holds (then the strict row-by-row parse runs)."""
_READING = ("amplitude", "amplitude_db", "phase_deg")


def _state_cols(enc):
    return ["phase_code", "amplitude_code"] if enc == "codes" else ["i_q15", "q_q15"]


def _columns(enc, with_pos, version=LAYOUT_VERSION):
    cols = ["beam", "theta_deg", "phi_deg", "element"]
    if with_pos:
        cols += ["x_m", "y_m", "z_m"]
    cols.append("phase_offset_deg")
    if version >= 2:
        cols.append("enabled")
    return cols + [*_READING, *_state_cols(enc)]


def _reading(c):
    amp = np.abs(c)
    return amp, db20(amp, floor=None), np.angle(c, deg=True)


def _shown(x, decimals: int) -> str:
    """A reading column's value for people: rounded to ``decimals`` places (1e3 times finer
    than the reader's agreement check), so float noise such as -157.50000000000003 reads
    -157.5; the state columns hold the exact values."""
    return repr(round(float(x), decimals) + 0.0)


def write_beams_csv(path, table: BeamTable, encoding=None) -> None:
    """Write ``table`` as CSV (atomically), in ``encoding`` ("codes" or "iq"; default the
    table's own)."""
    from ..version import VERSION as __version__

    table = table if encoding is None else table.as_encoding(encoding)
    enc = table.encoding
    version = LAYOUT_VERSION if table.has_difference else 2
    head = [("format", FORMAT_ID), ("layout_version", str(version)),
            ("steradian_version", __version__), ("encoding", enc),
            ("n_elements", str(table.n_elements)), ("n_beams", str(table.n_beams)),
            ("states", json.dumps(table.states.to_dict())),
            ("metadata", json.dumps(table.metadata, allow_nan=False))]
    if table.metrics is not None:
        head.append(("metrics", json.dumps(list(table.metrics), allow_nan=False)))
    if table.has_difference:
        head.append(("beam_kinds", json.dumps(list(table.beam_kinds))))
    lines = [f"# {k} = {v}" for k, v in head]
    with_pos = table.positions is not None
    lines.append(",".join(_columns(enc, with_pos)))
    amp, db, ph = _reading(table.commanded())
    r = repr
    pos = [[r(float(x)) for x in p] for p in table.positions] if with_pos else None
    off = [f"{r(float(x))},{int(e)}" for x, e in zip(table.phase_offsets_deg, table.enabled,
                                                       strict=True)]
    for b in range(table.n_beams):
        head_b = f"{b},{r(float(table.directions[b, 0]))},{r(float(table.directions[b, 1]))}"
        cb = table.codes[b]
        for n in range(table.n_elements):
            f = [head_b, str(n)]
            if with_pos:
                f += pos[n]
            f += [off[n], _shown(amp[b, n], 10), _shown(db[b, n], 8), _shown(ph[b, n], 8),
                  str(int(cb[n, 0])), str(int(cb[n, 1]))]
            lines.append(",".join(f))
    write_text(path, "\n".join(lines) + "\n")


def read_beams_csv(path) -> BeamTable:
    """Read a beam-table CSV file.

    Raises
    ------
    FileFormatError
        Naming the line for a bad field, a missing or repeated (beam, element) row, values
        that should agree across rows but do not, reading columns that disagree with the
        state columns, or codes outside the states' range.
    """
    path = Path(path)
    weight_text(path, "csv")  # refuses a binary or non-UTF-8 file in one line
    comments, lines = read_lines(path)
    if not lines:
        raise FileFormatError(path, not_a("csv", "no header line"))
    (hline, first), body = lines[0], lines[1:]
    header = split_fields(first)
    meta = {}
    for i, text in comments:
        m = _META.match(text)
        if m and i < hline:
            meta[m.group(1)] = (m.group(2).strip(), i)

    enc, n, nb, states, jsons, ver = _header_values(path, meta)
    with_pos = "x_m" in header
    want = _columns(enc, with_pos, ver)
    if header != want:
        missing = [c for c in want if c not in header]
        extra = [c for c in header if c not in want]
        what = (f"missing column {shown(missing[0])}" if missing else
                f"unexpected column {shown(extra[0])}" if extra else "columns out of order")
        raise FileFormatError(path, f"{what}; expected {','.join(want)}", hline)
    if len(body) != n * nb:
        raise FileFormatError(path, f"has {len(body)} rows, expected n_beams x n_elements = "
                              f"{nb} x {n} = {n * nb}")
    on = None
    if ver >= 2:
        body, on = _enabled_column(path, body, want.index("enabled"), len(want), n)
        want.remove("enabled")
    parsed = _parse_fast(body, n, nb, with_pos, len(want))
    if parsed is None:  # something is wrong: the row-by-row pass names the line
        parsed = _parse_rows(path, body, n, nb, with_pos, enc, len(want))
    dirs, pos, off, codes, reading, row_line = parsed
    try:
        table = BeamTable(states, dirs, codes, enc, off, pos, jsons.get("metadata") or {},
                          None if jsons.get("metrics") is None else tuple(jsons["metrics"]),
                          on, jsons.get("beam_kinds"))
    except SteradianError as exc:
        m = re.search(r"beam (\d+), element (\d+)", str(exc))
        line = int(row_line[int(m.group(1)), int(m.group(2))]) if m else None
        raise FileFormatError(path, str(exc), line) from None
    _check_reading(path, table, reading, row_line)
    return table


def _enabled_column(path, body, col: int, ncol: int, n: int):
    """Rows without the ``enabled`` column, and the enable mask (N,) it gives."""
    on = np.full(n, -1)
    first = np.zeros(n, int)
    out = []
    for lineno, s in body:
        f = s.split(",")
        if len(f) != ncol:
            raise FileFormatError(path, f"expected {ncol} fields, got {len(f)}", lineno)
        v = f.pop(col)
        if v not in ("0", "1"):
            raise FileFormatError(path, f"column 'enabled' must be 0 or 1, got {shown(v)}", lineno)
        try:
            e = int(f[3])
        except ValueError:
            raise FileFormatError(path, f"column 'element': {shown(f[3])} is not a whole number",
                                  lineno) from None
        if 0 <= e < n:
            if on[e] < 0:
                on[e], first[e] = int(v), lineno
            elif on[e] != int(v):
                raise FileFormatError(path, f"element {e} 'enabled' differs from its row on "
                                      f"line {first[e]}", lineno)
        out.append((lineno, ",".join(f)))
    return out, np.where(on < 0, 1, on).astype(bool)


def _header_values(path, meta: dict):
    """(encoding, n_elements, n_beams, states, {json key: value}) from the ``#`` lines."""

    def need(key):
        if key not in meta:
            raise FileFormatError(path, f"missing '# {key} = ...' line")
        return meta[key]

    if "format" not in meta:
        raise FileFormatError(path, not_a("csv", f"no '# format = {FORMAT_ID}' line"))
    fmt, ln = meta["format"]
    if fmt != FORMAT_ID:
        raise FileFormatError(path, f"format must be {shown(FORMAT_ID)}, got {shown(fmt)}", ln)
    ver, ln = need("layout_version")
    if ver not in [str(v) for v in READS]:
        raise FileFormatError(path, f"layout_version {shown(ver)} is not supported (this "
                              f"steradian reads {' and '.join(map(str, READS))})", ln)
    enc, ln = need("encoding")
    if enc not in ("codes", "iq"):
        raise FileFormatError(path, f"encoding must be 'codes' or 'iq', got {shown(enc)}", ln)
    counts = {}
    for key in ("n_elements", "n_beams"):
        v, ln = need(key)
        if not (v.isascii() and v.isdigit()) or len(v) > 12 or int(v) < 1:
            raise FileFormatError(path, f"{key} must be a whole number >= 1, got {shown(v)}",
                                  ln)
        counts[key] = int(v)
    n, nb = counts["n_elements"], counts["n_beams"]
    jsons = {}
    for key in ("states", "metadata", "metrics", "beam_kinds"):
        if key in meta:
            v, ln = meta[key]
            jsons[key] = json_value(path, v, key, ln)
    if "states" not in jsons:
        need("states")
    try:
        states = StateMap.from_dict(jsons["states"])
    except (ValueError, TypeError, OverflowError) as exc:  # SteradianError is a ValueError
        raise FileFormatError(path, f"states: {exc}", meta["states"][1]) from None
    check_extras(path, jsons.get("metadata"), jsons.get("metrics"), counts["n_beams"],
                 tuple(meta[k][1] if k in meta else None for k in ("metadata", "metrics")))
    kinds = jsons.get("beam_kinds")
    if kinds is not None and (int(ver) < 3 or not isinstance(kinds, list) or len(kinds) != nb
                              or not all(k in BEAM_KINDS for k in kinds)):
        raise FileFormatError(path, f"beam_kinds must list n_beams = {nb} kinds of "
                              f"{', '.join(BEAM_KINDS)} (layout 3)", meta["beam_kinds"][1])
    return enc, n, nb, states, jsons, int(ver)


def _parse_fast(body, n, nb, with_pos, ncol):
    """Vectorised parse of well-formed rows; None at the first sign of trouble."""
    fields = [s.split(",") for _, s in body]
    if any(len(f) != ncol for f in fields):
        return None
    if any(_NOT_NUMERIC.search(s) for _, s in body):  # numpy's parser takes 1_5 and ٣
        return None
    A = np.array(fields)
    try:
        beam = A[:, 0].astype(np.int64)
        elem = A[:, 3].astype(np.int64)
        k_off = 7 if with_pos else 4
        fl = A[:, [1, 2, *range(4, k_off + 4)]].astype(float)
        st = A[:, k_off + 4:k_off + 6].astype(np.int64)
    except (ValueError, OverflowError):
        return None
    if np.isnan(fl).any() or np.any((beam < 0) | (beam >= nb) | (elem < 0) | (elem >= n)):
        return None
    idx = beam * n + elem
    if np.any(np.bincount(idx, minlength=n * nb) != 1):
        return None
    dirs = np.empty((nb, 2))
    dirs[beam] = fl[:, :2]
    per_el = fl[:, 2:k_off - 1]
    el = np.empty((n, per_el.shape[1]))
    el[elem] = per_el
    if np.any(dirs[beam] != fl[:, :2]) or np.any(el[elem] != per_el):
        return None
    codes = np.empty((nb, n, 2), np.int64)
    codes[beam, elem] = st
    reading = np.empty((nb, n, 3))
    reading[beam, elem] = fl[:, k_off - 1:]
    row_line = np.zeros((nb, n), int)
    row_line[beam, elem] = [ln for ln, _ in body]
    pos = el[:, :3] if with_pos else None
    return dirs, pos, el[:, -1].copy(), codes, reading, row_line


def _parse_rows(path, body, n, nb, with_pos, enc, ncol):
    """Row-by-row parse with a message naming the line of the first problem."""
    k_off = 7 if with_pos else 4
    dirs = np.full((nb, 2), np.nan)
    dir_line = np.zeros(nb, int)
    pos = np.full((n, 3), np.nan) if with_pos else None
    off = np.full(n, np.nan)
    el_line = np.zeros(n, int)
    codes = np.zeros((nb, n, 2), np.int64)
    reading = np.zeros((nb, n, 3))
    row_line = np.zeros((nb, n), int)

    def num(lineno, col, text):
        return parse_float(path, lineno, col, text, allow_inf=True)

    def whole(lineno, col, text, hi=None):
        if hi is None:  # a hardware code or I/Q integer
            return parse_int(path, lineno, col, text, -CODE_LIMIT, CODE_LIMIT)
        return parse_int(path, lineno, col, text, 0, hi)

    for lineno, s in body:
        f = s.split(",")
        if len(f) != ncol:
            raise FileFormatError(path, f"expected {ncol} fields, got {len(f)}", lineno)
        b = whole(lineno, "beam", f[0], nb)
        e = whole(lineno, "element", f[3], n)
        if row_line[b, e]:
            raise FileFormatError(path, f"beam {b}, element {e} appears twice (first on line "
                                  f"{row_line[b, e]})", lineno)
        row_line[b, e] = lineno
        d = (num(lineno, "theta_deg", f[1]), num(lineno, "phi_deg", f[2]))
        if not dir_line[b]:
            dirs[b], dir_line[b] = d, lineno
        elif tuple(dirs[b]) != d:
            raise FileFormatError(path, f"beam {b} direction differs from its row on line "
                                  f"{dir_line[b]}", lineno)
        p = [num(lineno, c, f[4 + j]) for j, c in enumerate(("x_m", "y_m", "z_m"))] \
            if with_pos else None
        o = num(lineno, "phase_offset_deg", f[k_off])
        if not el_line[e]:
            off[e], el_line[e] = o, lineno
            if with_pos:
                pos[e] = p
        elif off[e] != o or (with_pos and list(pos[e]) != p):
            raise FileFormatError(path, f"element {e} position or phase offset differs from "
                                  f"its row on line {el_line[e]}", lineno)
        reading[b, e] = [num(lineno, c, f[k_off + 1 + j]) for j, c in enumerate(_READING)]
        codes[b, e] = [whole(lineno, c, f[k_off + 4 + j])
                       for j, c in enumerate(_state_cols(enc))]
    return dirs, pos, off, codes, reading, row_line


def _check_reading(path, table, reading, row_line):
    amp, db, ph = _reading(table.commanded())
    tol = 1e-9 if table.encoding == "codes" else 1.0 / IQ_SCALE
    a_bad = np.abs(reading[..., 0] - amp) > tol
    big = amp > 1e-6
    with np.errstate(invalid="ignore"):
        d_bad = np.where(big, np.abs(reading[..., 1] - db) > 1e-6,
                         np.abs(from_db20(reading[..., 1]) - amp) > tol)
    p_bad = big & (np.abs(wrap_deg(reading[..., 2] - ph)) > 1e-6)
    for name, bad, want in (("amplitude", a_bad, amp), ("amplitude_db", d_bad, db),
                            ("phase_deg", p_bad, ph)):
        if bad.any():
            b, e = (int(i) for i in np.argwhere(bad)[0])
            k = _READING.index(name)
            cols = "/".join(_state_cols(table.encoding))
            raise FileFormatError(
                path, f"column {shown(name)} ({shown(reading[b, e, k])}) disagrees with the "
                f"{cols} of "
                f"beam {b}, element {e} ({shown(want[b, e])}); edit the state columns, the "
                "amplitude and phase columns are for reading", int(row_line[b, e]))
