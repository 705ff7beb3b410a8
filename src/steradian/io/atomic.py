"""Atomic file writes: write a temporary file beside the target, then rename."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


@contextlib.contextmanager
def atomic_open(path, mode: str = "w", **kwargs):
    """Open a temporary file next to ``path``; on success rename it over ``path``.

    An exception inside the ``with`` block removes the temporary file and leaves any existing
    ``path`` untouched, so an interrupted export never leaves a half-written file.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    # mkstemp creates the file 0600; give it the permissions an ordinary open() would.
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)
    try:
        with os.fdopen(fd, mode, **kwargs) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def write_text(path, text: str) -> None:
    """Atomically write ``text`` to ``path``."""
    with atomic_open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)


def write_bytes(path, data: bytes) -> None:
    """Atomically write ``data`` to ``path``."""
    with atomic_open(path, "wb") as fh:
        fh.write(data)
