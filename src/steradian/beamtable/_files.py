"""Part of :mod:`steradian.beamtable` (see the package docstring)."""

from __future__ import annotations

from pathlib import Path

from ..errors import SteradianError
from ..validate import choice
from ._table import FORMATS, BeamTable, Encoding


# ---------------------------------------------------------------------------------------
# File dispatch
# ---------------------------------------------------------------------------------------
def _format_of(path, fmt):
    if fmt is not None:
        return choice("format", fmt, tuple(FORMATS.values()))
    suf = Path(path).suffix.lower()
    if suf not in FORMATS:
        raise SteradianError(f"{path}: cannot tell the weight-file format from the suffix "
                             f"{suf!r}; use one of {', '.join(FORMATS)} or give the format")
    return FORMATS[suf]


def write_weight_file(path, table: BeamTable, fmt: str | None = None, **options) -> Path:
    """Write ``table`` to ``path`` in ``fmt`` ("csv", "json", "bin", "h"; default from the
    suffix). Options go to the format's writer (``encoding`` for bin, ``prefix`` for h)."""
    kind = _format_of(path, fmt)
    if kind == "csv":
        from ..io.beams_csv import write_beams_csv as w
    elif kind == "json":
        from ..io.beams_json import write_beams_json as w
    elif kind == "bin":
        from ..io.beams_bin import write_beams_bin as w
    else:
        from ..io.beams_cheader import write_beams_cheader as w
    w(path, table, **options)
    return Path(path)


def write_beam_files(table: BeamTable, prefix, formats=("csv", "json", "bin", "h"), *,
                     bin_encoding: Encoding | None = None, c_prefix: str = "strd") -> dict:
    """Write ``table`` as ``<prefix>.csv``, ``.json``, ``.bin``, ``.h`` (those in ``formats``).

    ``bin_encoding`` chooses codes or Q1.15 I/Q for the binary file (default the table's);
    ``c_prefix`` names the C header's identifiers. Returns ``{format: path}``.
    """
    ext = {v: k for k, v in FORMATS.items()}
    out = {}
    for f in formats:
        choice("format", f, tuple(ext))
        path = Path(f"{prefix}{ext[f]}")
        opts = {"bin": {"encoding": bin_encoding}, "h": {"prefix": c_prefix}}.get(f, {})
        out[f] = write_weight_file(path, table, f, **opts)
    return out


def read_weight_file(path, fmt: str | None = None) -> BeamTable:
    """Read a weight file written by :func:`write_weight_file` (format from the suffix)."""
    kind = _format_of(path, fmt)
    if kind == "csv":
        from ..io.beams_csv import read_beams_csv as r
    elif kind == "json":
        from ..io.beams_json import read_beams_json as r
    elif kind == "bin":
        from ..io.beams_bin import read_beams_bin as r
    else:
        from ..io.beams_cheader import read_beams_cheader as r
    return r(path)


