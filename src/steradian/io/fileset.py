"""The files of one command written as a group, with a manifest.

``steradian beams`` writes up to four files of one beam table (``.csv``, ``.json``, ``.bin``,
``.h``); firmware must never load a new ``.bin`` beside an old ``.h``. :func:`write_file_set`
writes them as temporaries (each flushed to disk), then a manifest ``<prefix>.manifest.json``
listing every file with its size and SHA-256, then renames the files over their targets and
the manifest last.

What this guarantees, honestly: each rename is atomic, but POSIX has no rename of several
files at once. A crash before the renames leaves the old set untouched (and the temporaries,
removed by the next write to that folder); a crash during the renames (a few system calls)
can leave some new and some old files. The manifest, renamed last, tells the two apart:
:func:`check_manifest` recomputes the sizes and hashes and reports every file that is not
the one the manifest lists, so a set that passes is one command's complete output.

Manifest (JSON, UTF-8)::

    {"steradian_manifest": 1, "steradian_version": "...",
     "files": [{"name": "t.csv", "bytes": 1234, "sha256": "..."}, ...]}

Names are relative to the manifest's folder.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from ..errors import FileFormatError
from ..version import VERSION
from .atomic import OutputError, staged_writes, write_text

__all__ = ["write_file_set", "check_manifest", "manifest_path", "MANIFEST_SUFFIX"]

MANIFEST_SUFFIX = ".manifest.json"
"""Suffix of the manifest written beside a file set: ``<prefix>.manifest.json``."""

_MAX_MANIFEST_BYTES = 1 << 20


def manifest_path(prefix) -> Path:
    """The manifest of the file set written with ``prefix``."""
    return Path(f"{prefix}{MANIFEST_SUFFIX}")


def _digest(path) -> tuple[int, str]:
    h = hashlib.sha256()
    size = 0
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
            size += len(block)
    return size, h.hexdigest()


def write_file_set(prefix, writers) -> dict:
    """Write several files as one group with a manifest ``<prefix>.manifest.json``.

    Parameters
    ----------
    prefix : path-like
        Output path without suffix; the manifest is ``<prefix>.manifest.json``.
    writers : iterable of (key, callable)
        Each callable writes one file (through :mod:`steradian.io.atomic`) and returns its
        path; the files are renamed over their targets only after all were written.

    Returns
    -------
    dict
        ``{key: path}`` of the files written, plus ``"manifest"``.

    Raises
    ------
    OutputError
        A file could not be written (named); no target was replaced when the error came
        before the renames.
    """
    out = {}
    mpath = manifest_path(prefix)
    with staged_writes() as staging:
        for key, write in writers:
            out[key] = Path(write())
        entries = []
        for tmp, target in staging.files:
            try:
                size, sha = _digest(tmp)
            except OSError as exc:
                raise OutputError(target, exc.strerror or str(exc)) from None
            entries.append({"name": target.name, "bytes": size, "sha256": sha})
        doc = {"steradian_manifest": 1, "steradian_version": VERSION, "files": entries}
        write_text(mpath, json.dumps(doc, indent=2) + "\n")
        staging.commit()  # the manifest was staged last, so it is renamed last
    out["manifest"] = mpath
    return out


def check_manifest(path) -> list[str]:
    """Problems of the file set a manifest describes; an empty list when all files match.

    Each problem is one line naming a file: missing, or a different size or SHA-256 from the
    manifest's (a file replaced by another run, or a set left mixed by a crash during the
    renames). A manifest that cannot be read raises :class:`FileFormatError`.
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise FileFormatError(path, f"cannot read: {exc.strerror or exc}") from None
    if len(data) > _MAX_MANIFEST_BYTES:
        raise FileFormatError(path, f"is not a manifest ({len(data)} bytes)")
    try:
        doc = json.loads(data.decode("utf-8"))
        files = doc["files"] if doc.get("steradian_manifest") == 1 else None
        entries = [(str(e["name"]), int(e["bytes"]), str(e["sha256"])) for e in files]
    except (ValueError, TypeError, KeyError, AttributeError, RecursionError):
        raise FileFormatError(path, "is not a steradian manifest") from None
    problems = []
    for name, size, sha in entries:
        f = path.parent / name
        if Path(name).name != name:
            problems.append(f"{f}: name is not a plain file name")
            continue
        try:
            got = _digest(f)
        except OSError as exc:
            problems.append(f"{f}: {exc.strerror or exc}")
            continue
        if got != (size, sha):
            problems.append(f"{f}: not the file of this set ({got[0]} bytes, manifest lists "
                            f"{size}; SHA-256 differs)" if got[0] != size else
                            f"{f}: not the file of this set (SHA-256 differs)")
    return problems
