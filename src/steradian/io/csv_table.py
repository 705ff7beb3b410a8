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
from pathlib import Path

from ..errors import FileFormatError, suggest

__all__ = ["read_lines", "split_fields", "read_table", "parse_float", "unknown_column",
           "check_columns", "parse_index"]


def read_lines(path) -> tuple[list[tuple[int, str]], list[tuple[int, str]]]:
    """The lines of a text table: ``(comments, rows)``, each a list of ``(line, text)``.

    Line numbers are 1-based; ``comments`` holds the text after ``#`` (stripped), ``rows``
    every other non-blank line (stripped). Raises :class:`FileFormatError` for a file that is
    not UTF-8 text (a byte-order mark is allowed); ``OSError`` passes through.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise FileFormatError(path, f"not a UTF-8 text file ({exc.reason})") from None
    comments: list[tuple[int, str]] = []
    rows: list[tuple[int, str]] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append((lineno, s[1:].strip()))
        else:
            rows.append((lineno, s))
    return comments, rows


def split_fields(line: str) -> list[str]:
    """The comma-separated fields of one line (CSV quoting honoured), each stripped."""
    return [f.strip() for f in next(csv.reader(io.StringIO(line)))]


def read_table(path) -> tuple[list[str], list[tuple[int, list[str]]], int, list[str]]:
    """Read a comma-separated table with ``#`` comments.

    Returns ``(header, rows, header_line, comments)`` where ``rows`` holds
    ``(line_number, fields)`` pairs (1-based line numbers) and ``comments`` the comment lines
    without their ``#``. Raises :class:`FileFormatError` for an empty file or a row whose
    field count differs from the header's.
    """
    comments, lines = read_lines(path)
    if not lines:
        raise FileFormatError(path, "no header row (file is empty or only comments)")
    header_line, first = lines[0]
    header = [f.lower() for f in split_fields(first)]
    dup = [h for h in header if header.count(h) > 1]
    if dup:
        raise FileFormatError(path, f"column {dup[0]!r} appears twice", header_line)
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
    """Parse one numeric field, raising :class:`FileFormatError` naming line and column."""
    try:
        x = float(text)
    except ValueError:
        raise FileFormatError(path, f"column {column!r}: {text!r} is not a number",
                              lineno) from None
    if math.isnan(x) or (math.isinf(x) and not allow_inf):
        raise FileFormatError(path, f"column {column!r}: {text!r} is not a finite number",
                              lineno)
    return x


def unknown_column(path, column: str, allowed, lineno: int) -> FileFormatError:
    """Error for an unexpected column, suggesting the closest allowed name."""
    return FileFormatError(path, f"unknown column {column!r}{suggest(column, allowed)}; allowed: "
                           f"{', '.join(allowed)}", lineno)


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


def parse_index(path, lineno: int, column: str, text: str, count: int) -> int:
    """Parse an index field in ``0 .. count - 1`` (element numbers), naming line and column."""
    try:
        i = int(text)
    except ValueError:
        raise FileFormatError(path, f"column {column!r}: {text!r} is not a whole number",
                              lineno) from None
    if not 0 <= i < count:
        raise FileFormatError(path, f"column {column!r}: {i} is outside 0..{count - 1}", lineno)
    return i
