"""Reading text files defensively: size and nesting limits checked before parsing.

Every text file steradian reads (design TOML, CSV tables, JSON and C-header weight files)
goes through :func:`read_text`: it is read as bytes first, refused in one
:class:`~steradian.errors.FileFormatError` line naming the file when it is larger than the
limit or not UTF-8 (naming the first bad byte), and a UTF-8 byte-order mark is accepted and
dropped everywhere. :func:`check_nesting` measures the bracket and brace depth of a TOML or
JSON text with one vectorised pass (strings and comments skipped) before the parser, whose
recursion a value nested ~1,000 deep would otherwise exhaust.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

from ..errors import FileFormatError

__all__ = ["read_text", "read_bytes", "decode_text", "check_nesting", "MAX_TEXT_BYTES",
           "MAX_NESTING"]

MAX_TEXT_BYTES = 256 * 2**20
"""Largest text file read: 256 MiB, several times the largest table a design uses (a weight
file of 1,000 beams x 4,096 elements is about 60 MB in JSON); larger files are refused before
they are read."""

MAX_NESTING = 64
"""Deepest bracket/brace nesting accepted in TOML and JSON: a design file nests three levels,
a weight file four; 64 is far above any real file and far below the ~1,000 levels at which
Python's recursive parsers fail (common practice: parsers of untrusted JSON cap depth in the
same range, e.g. 128)."""

_SKIP = re.compile(rb'"""(?:[^\\]|\\.)*?(?:"""|\Z)|\'\'\'.*?(?:\'\'\'|\Z)'
                   rb'|"(?:[^"\\\n]|\\[^\n])*(?:"|$)|\'[^\'\n]*(?:\'|$)|#[^\n]*',
                   re.DOTALL | re.MULTILINE)
"""Strings and comments, skipped by the depth scan. An unterminated string runs to the end
of its line (or of the text, for a multi-line one), so every opening quote matches at once
and the scan stays linear in the size of the text (the parser refuses such a string)."""


def decode_text(path, data: bytes) -> str:
    """``data`` decoded as UTF-8 (a byte-order mark dropped), or one
    :class:`FileFormatError` naming ``path`` and the first byte that is not UTF-8."""
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise FileFormatError(path, f"not UTF-8 text (byte 0x{data[exc.start]:02x} at offset "
                              f"{exc.start})") from None


def read_bytes(path, what: str = "text file", limit: int = MAX_TEXT_BYTES) -> bytes:
    """The bytes of ``path``; :class:`FileFormatError` when there are more than ``limit``
    (at most ``limit + 1`` bytes are read)."""
    with open(path, "rb") as fh:
        data = fh.read(limit + 1)
    if len(data) > limit:
        raise FileFormatError(path, f"{what} is larger than {limit / 2**20:g} MiB; refused "
                              "before reading")
    return data


def read_text(path, what: str = "text file", limit: int = MAX_TEXT_BYTES) -> str:
    """The text of ``path``, read as bytes first (:func:`read_bytes`, :func:`decode_text`)."""
    path = Path(path)
    return decode_text(path, read_bytes(path, what, limit))


def check_nesting(path, text: str, limit: int = MAX_NESTING, line_of=None) -> None:
    """Raise :class:`FileFormatError` naming ``path`` and the line when brackets ``[ ]`` and
    braces ``{ }`` of a TOML or JSON ``text`` nest deeper than ``limit``.

    Quoted strings (TOML's four kinds, JSON's one) and ``#`` comments are skipped, so
    brackets inside them do not count. ``line_of`` (optional) is the file line of the
    text's first line (for one JSON line of a CSV header).
    """
    data = text.encode("utf-8")
    if data.count(b"[") + data.count(b"{") <= limit:
        return
    code = np.frombuffer(_SKIP.sub(lambda m: b" " * len(m.group()), data), np.uint8)
    step = ((code == ord("[")) | (code == ord("{"))).astype(np.int32)
    step -= ((code == ord("]")) | (code == ord("}"))).astype(np.int32)
    depth = np.cumsum(step)
    if depth.size and depth.max() > limit:
        at = int(np.argmax(depth > limit))
        line = data.count(b"\n", 0, at) + (1 if line_of is None else line_of)
        raise FileFormatError(path, f"values nested more than {limit} levels deep (brackets "
                              "or braces); refused before parsing", line)
