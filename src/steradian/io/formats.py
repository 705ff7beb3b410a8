"""The file formats of steradian by name and suffix, and reading or writing by format.

One registry, :data:`WEIGHT_FORMATS`, lists the beam-table (weight-file) formats: each name
with its file suffix and the module holding its reader and writer side by side. Modules are
imported only when a file of that format is read or written, so listing the names stays
light (the command line builds its ``--format`` choices from it).

To add a format: write ``steradian/io/beams_<name>.py`` with ``read_beams_<name>(path)`` and
``write_beams_<name>(path, table, **options)``, then add one line to :data:`WEIGHT_FORMATS`.
"""

from __future__ import annotations

import importlib
import json
from dataclasses import dataclass
from pathlib import Path

from ..errors import FileFormatError, SteradianError, shown
from ..validate import choice
from .text import check_nesting, decode_text, read_bytes

__all__ = ["FileFormat", "WEIGHT_FORMATS", "FORMATS", "format_of", "read_weight_file",
           "write_weight_file", "write_beam_files", "BIN_MAGIC", "not_a", "weight_text",
           "json_value", "check_extras", "CODE_LIMIT"]

CODE_LIMIT = 2**31
"""Hardware codes and I/Q integers read from a weight file must lie in
``-CODE_LIMIT .. CODE_LIMIT - 1`` before they are checked against the channel's states (the
files hold 16-bit values; a larger number is refused in one line instead of overflowing)."""

BIN_MAGIC = b"SRBW\r\n\x1a\n"
"""The first 8 bytes of a binary weight file (:mod:`steradian.io.beams_bin`)."""


def not_a(fmt: str, reason: str) -> str:
    """The one message of a reader refusing a file of the wrong kind."""
    return f"is not a {fmt} weight file: {reason}"


def weight_text(path, fmt: str) -> str:
    """The UTF-8 text of a text weight file, or one :class:`FileFormatError` line saying it
    is not a ``fmt`` weight file (a binary weight file, bytes that are not UTF-8, or a file
    over :data:`~steradian.io.text.MAX_TEXT_BYTES`). A UTF-8 byte-order mark is dropped."""
    path = Path(path)
    data = read_bytes(path, f"{fmt} weight file")
    if data.startswith(BIN_MAGIC):
        raise FileFormatError(path, not_a(fmt, "it is a steradian binary weight file (read "
                                          "it with format bin or name it .bin)"))
    try:
        return decode_text(path, data)
    except FileFormatError as exc:
        raise FileFormatError(path, not_a(fmt, str(exc)[len(str(path)) + 2:])) from None


def json_value(path, text: str, what: str, line: int | None = None):
    """``text`` parsed as JSON, its nesting checked first (:func:`~steradian.io.text.
    check_nesting`); one :class:`FileFormatError` naming ``what`` and ``line`` otherwise."""
    check_nesting(path, text, line_of=line)
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise FileFormatError(path, f"{what}: not valid JSON ({exc.msg})",
                              line if line is not None else exc.lineno) from None
    except ValueError as exc:  # an integer of more than 4,300 digits
        raise FileFormatError(path, f"{what}: {str(exc).split(';')[0]}", line) from None


def check_extras(path, metadata, metrics, n_beams: int, lines=(None, None)) -> None:
    """Refuse ``metadata`` that is not a JSON object, or ``metrics`` that is not a list of
    ``n_beams`` objects (``lines``: the file lines of the two, for the message)."""
    if metadata is not None and not isinstance(metadata, dict):
        raise FileFormatError(path, f"metadata must be a JSON object, got {shown(metadata)}",
                              lines[0])
    if metrics is None:
        return
    if not isinstance(metrics, list) or len(metrics) != n_beams:
        got = (f"{len(metrics)} entries" if isinstance(metrics, list) else shown(metrics))
        raise FileFormatError(path, f"metrics must list one JSON object per beam "
                              f"(n_beams = {n_beams}), got {got}", lines[1])
    for b, m in enumerate(metrics):
        if not isinstance(m, dict):
            raise FileFormatError(path, f"metrics[{b}] must be a JSON object, got {shown(m)}",
                                  lines[1])


@dataclass(frozen=True)
class FileFormat:
    """One file format: its name, file suffix and the module with its reader and writer."""

    name: str
    suffix: str
    module: str
    reader: str
    writer: str

    def read(self, path):
        """Read ``path`` with this format's reader."""
        return getattr(importlib.import_module(self.module), self.reader)(path)

    def write(self, path, value, **options) -> Path:
        """Write ``value`` to ``path`` with this format's writer (atomically)."""
        getattr(importlib.import_module(self.module), self.writer)(path, value, **options)
        return Path(path)


WEIGHT_FORMATS: dict[str, FileFormat] = {
    f.name: f for f in (
        FileFormat("csv", ".csv", "steradian.io.beams_csv", "read_beams_csv", "write_beams_csv"),
        FileFormat("json", ".json", "steradian.io.beams_json", "read_beams_json",
                   "write_beams_json"),
        FileFormat("bin", ".bin", "steradian.io.beams_bin", "read_beams_bin", "write_beams_bin"),
        FileFormat("h", ".h", "steradian.io.beams_cheader", "read_beams_cheader",
                   "write_beams_cheader"),
    )
}
"""Beam-table (weight-file) formats by name, in the order they are written."""

FORMATS = {f.suffix: f.name for f in WEIGHT_FORMATS.values()}
"""File suffix -> weight-file format name."""


def format_of(path, fmt: str | None = None) -> FileFormat:
    """The weight-file format ``fmt`` (by name), or the one ``path``'s suffix names."""
    if fmt is not None:
        return WEIGHT_FORMATS[choice("format", fmt, tuple(WEIGHT_FORMATS))]
    suf = Path(path).suffix.lower()
    if suf not in FORMATS:
        raise SteradianError(f"{path}: cannot tell the weight-file format from the suffix "
                             f"{shown(suf)}; use one of {', '.join(FORMATS)} or give the format")
    return WEIGHT_FORMATS[FORMATS[suf]]


def write_weight_file(path, table, fmt: str | None = None, **options) -> Path:
    """Write ``table`` to ``path`` in ``fmt`` ("csv", "json", "bin", "h"; default from the
    suffix). Options go to the format's writer: ``encoding`` ("codes" or "iq", every
    format), ``prefix`` (h), ``layout_version`` (bin)."""
    return format_of(path, fmt).write(path, table, **options)


def read_weight_file(path, fmt: str | None = None):
    """Read a weight file written by :func:`write_weight_file` (format from the suffix);
    returns a :class:`~steradian.beamtable.BeamTable`."""
    return format_of(path, fmt).read(path)


def write_beam_files(table, prefix, formats=None, *, bin_encoding=None,
                     c_prefix: str = "strd", h_encoding=None) -> dict:
    """Write ``table`` as ``<prefix>.csv``, ``.json``, ``.bin``, ``.h`` (those in ``formats``;
    default all). A prefix ending in a format's suffix (``out/tile.bin``) names that file:
    the suffix is dropped from the prefix and, without ``formats``, only that format is
    written (not ``out/tile.bin.csv`` and three more).

    ``bin_encoding`` and ``h_encoding`` choose codes or Q1.15 I/Q for the binary file and the
    C header (default the table's); ``c_prefix`` names the C header's identifiers. The files
    are written as one group with ``<prefix>.manifest.json`` (sizes and SHA-256 of each; see
    :mod:`steradian.io.fileset`): no target is replaced until all are written. An empty
    prefix, or one naming a folder, is refused. Returns ``{format: path}``.
    """
    from .fileset import write_file_set

    text = str(prefix)
    if text.endswith(("/", "\\")) or Path(text).name in ("", ".", "..") or Path(text).is_dir():
        raise SteradianError(f"output prefix {text!r} names no file (empty, or a folder): "
                             "give a path without suffix, e.g. out/panel-beams")
    by_suffix = {f.suffix: name for name, f in WEIGHT_FORMATS.items()}
    sfx = Path(text).suffix.lower()
    if sfx in by_suffix:
        prefix = text[: -len(sfx)]
        formats = formats or (by_suffix[sfx],)
    formats = formats or tuple(WEIGHT_FORMATS)
    options = {"bin": {"encoding": bin_encoding},
               "h": {"prefix": c_prefix, "encoding": h_encoding}}
    chosen = [WEIGHT_FORMATS[choice("format", name, tuple(WEIGHT_FORMATS))] for name in formats]

    def writer(f):
        return lambda: f.write(Path(f"{prefix}{f.suffix}"), table, **options.get(f.name, {}))

    out = write_file_set(prefix, [(f.name, writer(f)) for f in chosen])
    out.pop("manifest")
    return out
