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

__all__ = ["read_table", "parse_float", "unknown_column"]


def read_table(path) -> tuple[list[str], list[tuple[int, list[str]]], int, list[str]]:
    """Read a comma-separated table with ``#`` comments.

    Returns ``(header, rows, header_line, comments)`` where ``rows`` holds
    ``(line_number, fields)`` pairs (1-based line numbers) and ``comments`` the comment lines
    without their ``#``. Raises :class:`FileFormatError` for an empty file or a row whose
    field count differs from the header's.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise FileFormatError(path, f"not a UTF-8 text file ({exc.reason})") from None
    header: list[str] | None = None
    header_line = 0
    rows: list[tuple[int, list[str]]] = []
    comments: list[str] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s:
            continue
        if s.startswith("#"):
            comments.append(s[1:].strip())
            continue
        fields = [f.strip() for f in next(csv.reader(io.StringIO(line)))]
        if header is None:
            header, header_line = [f.lower() for f in fields], lineno
            dup = [h for h in header if header.count(h) > 1]
            if dup:
                raise FileFormatError(path, f"column {dup[0]!r} appears twice", lineno)
            continue
        if len(fields) != len(header):
            raise FileFormatError(
                path, f"expected {len(header)} fields ({', '.join(header)}), got {len(fields)}",
                lineno)
        rows.append((lineno, fields))
    if header is None:
        raise FileFormatError(path, "no header row (file is empty or only comments)")
    return header, rows, header_line, comments


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
