"""The one CSV tokenizer of steradian's file readers.

Every CSV file steradian reads (element positions, weights, pattern cuts and u-v maps,
calibration tables, beam directions, element pattern tables, beam-table CSV) is split into a
header and rows here: ``#`` comment lines (anywhere) and blank lines are skipped, fields are
stripped, column names lower-cased, and every error names the file and line. Format modules
then give the columns their meaning with :func:`parse_float` and :func:`unknown_column`.
"""

from __future__ import annotations

import csv
import io
import math
import re
from pathlib import Path

from ..errors import FileFormatError, shown, suggest
from .text import read_text

__all__ = ["read_lines", "split_fields", "read_table", "parse_float", "unknown_column",
           "check_columns", "parse_index", "parse_int", "NUMBER"]

NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
"""A number in a CSV field: ASCII digits, one optional leading sign (``+`` or ``-``), an
optional decimal point and an optional exponent, as C's ``strtod`` and every spreadsheet
write them. Python's ``float()`` also takes ``1_5``, Unicode digits (``٣``, ``１``) and
``infinity``; those are refused here, so a file reads the same in any program."""


def read_lines(path, max_rows: int | None = None, why: str = "",
               ) -> tuple[list[tuple[int, str]], list[tuple[int, str]]]:
    """The lines of a text table: ``(comments, rows)``, each a list of ``(line, text)``.

    Line numbers are 1-based; ``comments`` holds the text after ``#`` (stripped), ``rows``
    every other non-blank line (stripped). The file is read as bytes first
    (:func:`read_text`): :class:`FileFormatError` for one that is too large or not UTF-8
    text (a byte-order mark is allowed); ``OSError`` passes through. With ``max_rows``,
    reading stops with :class:`FileFormatError` at the first row past it (the header counts
    as a row; ``why`` is added to the message), so a file of a million rows is refused
    without splitting them all.
    """
    path = Path(path)
    text = read_text(path)
    comments: list[tuple[int, str]] = []
    rows: list[tuple[int, str]] = []
    for lineno, line in enumerate(io.StringIO(text, newline=None), start=1):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append((lineno, s[1:].strip()))
        else:
            if max_rows is not None and len(rows) >= max_rows:
                raise FileFormatError(path, f"has more than {max_rows - 1} data rows{why}; "
                                      "reading stopped here", lineno)
            rows.append((lineno, s))
    return comments, rows


def split_fields(line: str) -> list[str]:
    """The comma-separated fields of one line (CSV quoting honoured), each stripped."""
    return [f.strip() for f in next(csv.reader(io.StringIO(line)))]


def read_table(path, max_rows: int | None = None, why: str = "",
               ) -> tuple[list[str], list[tuple[int, list[str]]], int, list[str]]:
    """Read a comma-separated table with ``#`` comments.

    Returns ``(header, rows, header_line, comments)`` where ``rows`` holds
    ``(line_number, fields)`` pairs (1-based line numbers) and ``comments`` the comment lines
    without their ``#``. Raises :class:`FileFormatError` for an empty file, a row whose
    field count differs from the header's, or more than ``max_rows`` data rows (reading
    stops there; ``why`` says why in the message).
    """
    comments, lines = read_lines(path, None if max_rows is None else max_rows + 1, why)
    if not lines:
        raise FileFormatError(path, "no header row (file is empty or only comments)")
    header_line, first = lines[0]
    header = [f.lower() for f in split_fields(first)]
    dup = [h for h in header if header.count(h) > 1]
    if dup:
        raise FileFormatError(path, f"column {shown(dup[0])} appears twice", header_line)
    rows: list[tuple[int, list[str]]] = []
    for lineno, line in lines[1:]:
        fields = split_fields(line)
        if len(fields) != len(header):
            raise FileFormatError(
                path, f"expected {len(header)} fields ({', '.join(header)}), got {len(fields)}",
                lineno)
        rows.append((lineno, fields))
    return header, rows, header_line, [c for _, c in comments]


def parse_float(path, lineno: int, column: str, text: str, *, allow_inf: bool = False) -> float:
    """Parse one numeric field, raising :class:`FileFormatError` naming line and column.

    The one number parser of the CSV readers: :data:`NUMBER` (ASCII digits, optional
    leading ``+`` or ``-``, decimal point, exponent). ``allow_inf`` also takes ``inf``,
    ``+inf`` and ``-inf`` (any case; e.g. an amplitude of -inf dB). A number too large for a
    double (``1e999``) is not finite and refused like ``inf``.
    """
    t = text.strip()
    word = t.lower()[1:] if t[:1] in "+-" else t.lower()
    if NUMBER.fullmatch(t):
        x = float(t)
    elif word in ("inf", "infinity") and allow_inf:
        x = float(t)
    elif word in ("inf", "infinity", "nan"):
        raise FileFormatError(path, f"column {shown(column)}: {shown(text)} is not a finite number",
                              lineno)
    else:
        raise FileFormatError(path, f"column {shown(column)}: {shown(text)} is not a number "
                              "(digits 0-9, sign, point and exponent only)", lineno)
    if math.isinf(x) and not allow_inf:
        raise FileFormatError(path, f"column {shown(column)}: {shown(text)} is not a finite number",
                              lineno)
    return x


def unknown_column(path, column: str, allowed, lineno: int) -> FileFormatError:
    """Error for an unexpected column, suggesting the closest allowed name."""
    return FileFormatError(path, f"unknown column {shown(column)}{suggest(column, allowed)}; "
                           f"allowed: {', '.join(allowed)}", lineno)


def check_columns(path, header, allowed, required, line: int) -> dict[str, int]:
    """Check a header: every column in ``allowed``, every ``required`` one present.

    Returns ``{column: index}``. Raises :class:`FileFormatError` on ``line`` for an unknown
    column (with the closest allowed name) or the missing required ones.
    """
    for h in header:
        if h not in allowed:
            raise unknown_column(path, h, allowed, line)
    missing = [c for c in required if c not in header]
    if missing:
        raise FileFormatError(path, "missing column " + ", ".join(map(repr, missing)), line)
    return {h: i for i, h in enumerate(header)}


def parse_int(path, lineno: int | None, column: str, text: str, lo: int | None = None,
              hi: int | None = None) -> int:
    """Parse a whole-number field (ASCII digits, optional sign) in ``lo .. hi - 1``, raising
    :class:`FileFormatError` naming line and column (``1_5``, ``³`` and ``٣`` are refused)."""
    t = text.strip()
    if not (t.isascii() and t.lstrip("+-").isdigit() and len(t.lstrip("+-")) + 1 >= len(t)):
        raise FileFormatError(path, f"column {shown(column)}: {shown(text)} is not a whole number",
                              lineno)
    if len(t) > 30:
        raise FileFormatError(path, f"column {shown(column)}: {shown(text)} is out of range",
                              lineno)
    i = int(t)
    if (lo is not None and i < lo) or (hi is not None and i >= hi):
        span = f"{'' if lo is None else lo}..{'' if hi is None else hi - 1}"
        raise FileFormatError(path, f"column {shown(column)}: {shown(i)} is outside {span}", lineno)
    return i


def parse_index(path, lineno: int, column: str, text: str, count: int) -> int:
    """Parse an index field in ``0 .. count - 1`` (element numbers), naming line and column."""
    return parse_int(path, lineno, column, text, 0, count)
