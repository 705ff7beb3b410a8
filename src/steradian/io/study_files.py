"""Study result files: one row per sweep point or tolerance trial, appended as they finish.

Two layouts, chosen by suffix:

- ``.csv``: ``#`` comment lines first (``# steradian study results``, ``# study: <JSON>``
  describing the study), then the header row and one row per point; numbers are written
  with Python's shortest round-trip repr (so they read back bit for bit), a missing value
  as an empty field;
- ``.jsonl`` (JSON lines): a first line ``{"study": ..., "columns": [...]}``, then one JSON
  object per row.

Rows are appended in index order, flushed and synced after each batch, so a file is always
a prefix of the finished one, plus at most one torn line when the run was killed while
writing. :func:`open_results` with ``resume=True`` reads such a file back, checks that it
belongs to the same study (the ``study`` description must be equal), cuts a torn last line
and continues appending; a finished run resumed again adds nothing. A new file is created
with its header atomically (:mod:`steradian.io.atomic`).
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

from ..errors import FileFormatError, SteradianError
from .atomic import OutputError, atomic_open
from .csv_table import parse_float, split_fields
from .text import read_text

__all__ = ["ResultFile", "open_results", "read_results", "RESULT_SUFFIXES", "MAGIC"]

MAGIC = "steradian study results"
RESULT_SUFFIXES = (".csv", ".jsonl")
INT_COLUMNS = ("trial", "point", "n_failed", "grating_lobe_found", "grating_lobes_predicted")


def _write_error(path, exc: OSError) -> OutputError:
    return OutputError(path, exc.strerror or str(exc) or type(exc).__name__, exc.errno)


def _kind(path: Path) -> str:
    s = path.suffix.lower()
    if s not in RESULT_SUFFIXES:
        raise SteradianError(f"{path}: result files end in {' or '.join(RESULT_SUFFIXES)} "
                             f"(CSV or JSON lines), got {s or 'no suffix'!r}")
    return s[1:]


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return str(int(v))
    if isinstance(v, int):
        return str(v)
    if isinstance(v, str):
        if any(ch in v for ch in ',"\r\n') or not v.strip():
            raise SteradianError(f"a text cell must be one word without commas or quotes, "
                                 f"got {v!r}")
        return v
    v = float(v)
    return repr(v) if math.isfinite(v) else ""


def _line(kind: str, columns, row: dict) -> str:
    if kind == "csv":
        return ",".join(_cell(row.get(c)) for c in columns) + "\n"
    return json.dumps({c: row.get(c) for c in columns}, allow_nan=False) + "\n"


def _header(kind: str, study: dict, columns, text=()) -> str:
    info = json.dumps(study, sort_keys=True, allow_nan=False)
    if kind == "csv":
        words = f"# text: {','.join(text)}\n" if text else ""
        return f"# {MAGIC}\n# study: {info}\n{words}" + ",".join(columns) + "\n"
    head = {"magic": MAGIC, "study": study, "columns": list(columns)}
    if text:
        head["text"] = list(text)
    return json.dumps(head, sort_keys=True, allow_nan=False) + "\n"


def _parse_csv(path, lines) -> tuple[dict, list, list, int]:
    """(study, columns, rows, byte length of the complete part) of a CSV result file."""
    if len(lines) < 3 or lines[0].rstrip("\n") != f"# {MAGIC}" or not lines[1].startswith(
            "# study: "):
        raise FileFormatError(path, f"not a study result file (no '# {MAGIC}' header)", 1)
    try:
        study = json.loads(lines[1][len("# study: "):])
    except ValueError:
        raise FileFormatError(path, "the study description is not JSON", 2) from None
    top, text_cols = 2, []
    if lines[2].startswith("# text: "):
        top = 3
    if len(lines) <= top or not all(x.endswith("\n") for x in lines[:top + 1]):
        raise FileFormatError(path, "the header is incomplete (cut while being written)",
                              top + 1)
    if top == 3:
        text_cols = split_fields(lines[2][len("# text: "):])
    columns = split_fields(lines[top])
    rows, size = [], sum(len(x.encode()) for x in lines[:top + 1])
    for i, text in enumerate(lines[top + 1:], start=top + 2):
        if not text.endswith("\n"):
            break  # torn last line of an interrupted run
        f = split_fields(text)
        if len(f) != len(columns):
            raise FileFormatError(path, f"expected {len(columns)} fields, got {len(f)}", i)
        row = {}
        for c, x in zip(columns, f, strict=True):
            if x == "":
                row[c] = None
            elif c in text_cols:
                row[c] = x
            elif c in INT_COLUMNS:
                row[c] = int(parse_float(path, i, c, x))
            else:
                row[c] = parse_float(path, i, c, x)
        rows.append(row)
        size += len(text.encode())
    return study, columns, rows, size, text_cols


def _parse_jsonl(path, lines) -> tuple[dict, list, list, int]:
    try:
        head = json.loads(lines[0]) if lines else None
    except ValueError:
        head = None
    if not isinstance(head, dict) or head.get("magic") != MAGIC or not lines[0].endswith("\n"):
        raise FileFormatError(path, "not a study result file (no study header line)", 1)
    columns, text = head.get("columns"), head.get("text", [])
    if not all(isinstance(x, list) and all(isinstance(c, str) for c in x)
               for x in (columns, text)) or "study" not in head:
        raise FileFormatError(path, "the header line has no study and columns", 1)
    rows, size = [], len(lines[0].encode())
    for i, line in enumerate(lines[1:], start=2):
        if not line.endswith("\n"):
            break  # torn last line of an interrupted run
        try:
            row = json.loads(line)
        except ValueError:
            raise FileFormatError(path, "not a JSON object", i) from None
        if not isinstance(row, dict) or list(row) != columns:
            raise FileFormatError(path, f"expected the columns {', '.join(columns)}", i)
        for c, v in row.items():
            word = c in text and isinstance(v, str)
            num = isinstance(v, (int, float)) and not isinstance(v, bool)
            if not (word or num or v is None) or (c in INT_COLUMNS and isinstance(v, float)):
                what = "whole number" if c in INT_COLUMNS else "number"
                raise FileFormatError(path, f"column {c}: not a {what}: {str(v)[:40]!r}", i)
        rows.append(row)
        size += len(line.encode())
    return head["study"], columns, rows, size, text


def _read(path: Path):
    text = read_text(path)
    lines = text.splitlines(keepends=True)
    parse = _parse_csv if _kind(path) == "csv" else _parse_jsonl
    return parse(path, lines)


def read_results(path) -> tuple[dict, list[str], list[dict]]:
    """``(study, columns, rows)`` of a result file (a torn last line is left out)."""
    study, columns, rows, _, _ = _read(Path(path))
    return study, columns, rows


class ResultFile:
    """An open result file: :attr:`rows` already in it, :meth:`append` for more."""

    def __init__(self, path: Path, kind: str, columns, rows):
        self.path, self.kind, self.columns, self.rows = path, kind, list(columns), list(rows)

    def append(self, rows) -> None:
        """Append ``rows`` (dicts with every column), then flush and sync."""
        rows = list(rows)
        if not rows:
            return
        text = "".join(_line(self.kind, self.columns, r) for r in rows)
        try:
            with open(self.path, "a", encoding="utf-8", newline="") as fh:
                fh.write(text)
                fh.flush()
                os.fsync(fh.fileno())
        except OSError as exc:
            raise _write_error(self.path, exc) from None
        self.rows += rows


def open_results(path, study: dict, columns, *, resume: bool = True,
                 text=()) -> ResultFile:
    """Open ``path`` for the rows of ``study`` (a JSON-able description).

    With ``resume`` and an existing file, its rows are kept when its study description and
    columns equal these (a torn last line is cut off); otherwise, or without ``resume``, a
    new file with only the header replaces it. ``text`` names the columns that hold words
    (read back as strings); every other column holds numbers.

    Raises
    ------
    FileFormatError
        When resuming a file that is not a result file or belongs to another study.
    """
    path = Path(path)
    kind = _kind(path)
    study = json.loads(json.dumps(study, sort_keys=True, allow_nan=False))
    if resume and path.exists():
        old, cols, rows, size, words = _read(path)
        if old != study or cols != list(columns) or words != list(text):
            raise FileFormatError(path, "holds the results of another study (its study "
                                  "description differs); write elsewhere or start afresh "
                                  "(--fresh)")
        if size != path.stat().st_size:
            try:
                os.truncate(path, size)
            except OSError as exc:
                raise _write_error(path, exc) from None
        return ResultFile(path, kind, columns, rows)
    with atomic_open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(_header(kind, study, columns, tuple(text)))
    return ResultFile(path, kind, columns, [])
