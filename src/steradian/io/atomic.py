"""Atomic file writes: write a temporary file beside the target, then rename.

Every file steradian writes goes through :func:`atomic_open`: the bytes go to a temporary
file ``.<name>.<pid>.<random>.tmp`` in the target's folder, are flushed to disk (``fsync``)
and then renamed over the target (``os.replace``, atomic on POSIX within one file system), so
a reader sees either the old file or the new one, never a half-written file.

- **Errors name the target.** Any ``OSError`` while writing (disk full, read-only file
  system, file-size limit, permission, a parent that is a file) becomes one
  :class:`OutputError` naming the file asked for, never the temporary file; the temporary is
  removed and an existing target is left untouched.
- **Folders.** The target's folder must exist; a missing one is refused with one line naming
  it (common practice for command-line tools: a typo in ``-o`` should not create folders).
  The one exception is :data:`DEFAULT_OUTPUT_DIR` (``out`` in the working directory), the
  folder the commands write to by default, which is created when missing.
- **Stale temporaries.** A process killed mid-write leaves its temporary file behind. Before
  each write, :func:`remove_stale_temporaries` deletes, in that folder only, files of this
  module's own naming whose writer process is gone or that are older than
  :data:`STALE_AFTER_S`; nothing else is touched.
- **Groups.** Inside :func:`staged_writes` the renames are deferred: each file is written and
  flushed as a temporary and renamed only when :meth:`Staging.commit` is called (see
  :mod:`steradian.io.fileset`, which writes the files of one command together with a
  manifest).
"""

from __future__ import annotations

import contextlib
import contextvars
import errno
import os
import re
import tempfile
import time
from pathlib import Path

from ..errors import SteradianError

__all__ = ["atomic_open", "write_text", "write_bytes", "OutputError", "staged_writes",
           "Staging", "remove_stale_temporaries", "temporary_name_pattern", "check_folder",
           "DEFAULT_OUTPUT_DIR", "STALE_AFTER_S"]

DEFAULT_OUTPUT_DIR = Path("out")
"""The commands' default output folder (relative to the working directory); the only folder
created when missing."""

STALE_AFTER_S = 3600.0
"""Age (seconds) after which a temporary file of this module's naming is removed even when a
process with its writer's pid still runs (the pid may have been reused)."""

# mkstemp's random part: 8 characters of [a-z0-9_] (CPython's tempfile._RandomNameSequence).
_TMP = re.compile(r"^\.(?P<name>.+?)(?:\.(?P<pid>\d+))?\.(?P<rand>[a-z0-9_]{8})\.tmp$")

_STAGING: contextvars.ContextVar = contextvars.ContextVar("steradian_staging", default=None)


class OutputError(SteradianError, OSError):
    """A file could not be written (disk full, read-only, no such folder, ...).

    Both a :class:`~steradian.errors.SteradianError` (the command line shows it as one
    ``steradian: error:`` line, exit 2) and an ``OSError`` (library callers catching
    ``OSError`` for disk problems keep working); ``errno`` is the cause's, when there is one.

    Parameters
    ----------
    path : path-like
        The file that was asked for (never a temporary file).
    reason : str
        What went wrong, e.g. ``"No space left on device"``.
    errno : int, optional
        The cause's error number (``errno.ENOSPC``, ...).
    """

    def __init__(self, path, reason: str, errno: int | None = None):
        self.path = str(path)
        super().__init__(f"cannot write {path}: {reason}")
        self.errno = errno


def temporary_name_pattern() -> re.Pattern:
    """The regular expression a temporary file of :func:`atomic_open` matches."""
    return _TMP


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc) or type(exc).__name__


def _output_error(path, exc: OSError, context: str = "") -> OutputError:
    return OutputError(path, context + _reason(exc), exc.errno)


def check_folder(path) -> Path:
    """The folder ``path`` will be written into, after checking it can hold the file.

    Creates :data:`DEFAULT_OUTPUT_DIR` when it is the folder and missing; raises
    :class:`OutputError` naming ``path`` when the folder is missing or is not a folder, or when
    ``path`` itself is a folder.
    """
    path = Path(path)
    parent = path.parent
    if path.name in ("", ".", ".."):
        raise OutputError(path, "no file name given", errno.EINVAL)
    if parent == DEFAULT_OUTPUT_DIR and not parent.exists():
        try:
            parent.mkdir()
        except FileExistsError:
            pass
        except OSError as exc:
            raise _output_error(path, exc, f"cannot create folder {parent}: ") from None
    for p in (parent, *parent.parents):
        if p.exists() and not p.is_dir():
            raise OutputError(path, f"{p} is a file, not a folder", errno.ENOTDIR)
    if not parent.is_dir():
        raise OutputError(path, f"folder {parent} does not exist (create it first)",
                          errno.ENOENT)
    if path.is_dir():
        raise OutputError(path, "it is a folder", errno.EISDIR)
    return parent


def _pid_gone(pid: int) -> bool:
    if pid == os.getpid():
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except OSError:  # exists but not ours (EPERM), or cannot tell: keep it
        return False
    return False


def remove_stale_temporaries(folder, max_age_s: float = STALE_AFTER_S,
                             now: float | None = None) -> list[Path]:
    """Remove this module's own temporary files in ``folder`` left by interrupted writes.

    Only regular files named like :func:`atomic_open`'s temporaries (see
    :func:`temporary_name_pattern`) are considered; one is removed when the process whose pid
    it carries no longer exists, or when it is older than ``max_age_s`` (files of this
    process are never removed). Errors are ignored (another process may remove the same file).
    Returns the removed paths.
    """
    now = time.time() if now is None else now
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        m = _TMP.match(entry.name)
        if m is None:
            continue
        pid = int(m["pid"]) if m["pid"] else None
        if pid == os.getpid():
            continue
        try:
            if not entry.is_file(follow_symlinks=False):
                continue
            old = now - entry.stat(follow_symlinks=False).st_mtime > max_age_s
            if old or (pid is not None and _pid_gone(pid)):
                os.unlink(entry.path)
                removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


class Staging:
    """Files written inside :func:`staged_writes`: temporaries waiting for their rename."""

    def __init__(self):
        self.files: list[tuple[Path, Path]] = []  # (temporary, target), in writing order

    def add(self, tmp: Path, target: Path) -> None:
        """Record a flushed temporary file for ``target``; a second write of the same target
        replaces the first."""
        for i, (old_tmp, old_target) in enumerate(self.files):
            if old_target == target:
                _unlink(old_tmp)
                self.files[i] = (tmp, target)
                return
        self.files.append((tmp, target))

    def commit(self) -> list[Path]:
        """Rename every temporary over its target, in writing order; returns the targets.

        Each rename is atomic; the set of renames is not (POSIX has no multi-file rename). On
        an error the remaining temporaries are removed and :class:`OutputError` names the
        target that failed.
        """
        done = []
        try:
            for tmp, target in self.files:
                try:
                    os.replace(tmp, target)
                except OSError as exc:
                    raise _output_error(target, exc) from None
                done.append(target)
        finally:
            self.discard()
        for folder in {t.parent for t in done}:
            _fsync_dir(folder)
        return done

    def discard(self) -> None:
        """Remove the temporaries not yet renamed."""
        for tmp, _ in self.files:
            _unlink(tmp)
        self.files = []


@contextlib.contextmanager
def staged_writes():
    """Defer the renames of every :func:`atomic_open` inside the block.

    Yields a :class:`Staging`; the caller calls :meth:`Staging.commit` to rename the files.
    Leaving the block (normally or by an exception) without committing removes the
    temporaries, so the old files stay as they were.
    """
    staging = Staging()
    token = _STAGING.set(staging)
    try:
        yield staging
    finally:
        _STAGING.reset(token)
        staging.discard()


def _unlink(path) -> None:
    with contextlib.suppress(OSError):
        os.unlink(path)


def _fsync_dir(folder) -> None:
    """Flush a folder's entries (the renames) to disk; not possible everywhere (ignored)."""
    with contextlib.suppress(OSError, AttributeError):
        fd = os.open(folder, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _make_temporary(path: Path) -> tuple[int, Path]:
    folder = check_folder(path)
    remove_stale_temporaries(folder)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.{os.getpid()}.", suffix=".tmp",
                                   dir=folder)
    except OSError as exc:
        raise _output_error(path, exc) from None
    # mkstemp creates the file 0600; give it the permissions an ordinary open() would.
    umask = os.umask(0)
    os.umask(umask)
    with contextlib.suppress(OSError):
        os.chmod(tmp, 0o666 & ~umask)
    return fd, Path(tmp)


@contextlib.contextmanager
def atomic_open(path, mode: str = "w", **kwargs):
    """Open a temporary file next to ``path``; on success rename it over ``path``.

    An exception inside the ``with`` block removes the temporary file and leaves any existing
    ``path`` untouched, so an interrupted export never leaves a half-written file. An
    ``OSError`` (disk full, file-size limit, read-only file system, ...) is raised as one
    :class:`OutputError` naming ``path``. Inside :func:`staged_writes` the rename waits for
    the group's commit.
    """
    path = Path(path)
    fd, tmp = _make_temporary(path)
    staging = _STAGING.get()
    try:
        try:
            with os.fdopen(fd, mode, **kwargs) as fh:
                yield fh
                fh.flush()
                os.fsync(fh.fileno())
            if staging is not None:
                staging.add(tmp, path)
                return
            os.replace(tmp, path)
        except OSError as exc:
            if isinstance(exc, OutputError):
                raise
            if exc.errno == errno.EISDIR:
                raise OutputError(path, "it is a folder", exc.errno) from None
            raise _output_error(path, exc) from None
    except BaseException:
        if staging is None or (tmp, path) not in staging.files:
            _unlink(tmp)
        raise


def write_text(path, text: str) -> None:
    """Atomically write ``text`` to ``path`` (UTF-8)."""
    with atomic_open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)


def write_bytes(path, data: bytes) -> None:
    """Atomically write ``data`` to ``path``."""
    with atomic_open(path, "wb") as fh:
        fh.write(data)
