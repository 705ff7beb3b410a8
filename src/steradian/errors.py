"""Exception types shared across steradian.

Every error a user can cause by bad input is a :class:`SteradianError` (or subclass) whose
message names the offending key, file line or value. The CLI turns these into one line on
stderr and exit code 2; library callers can catch them as ``ValueError``.
"""

from __future__ import annotations

__all__ = ["SteradianError", "DesignError", "FileFormatError", "suggest", "shown", "SHOWN_CHARS",
           "MAX_MESSAGE_CHARS"]

SHOWN_CHARS = 60
"""Longest value :func:`shown` echoes into a message (longer ones are cut with "...")."""

MAX_MESSAGE_CHARS = 400
"""Longest message a :class:`DesignError` or :class:`FileFormatError` carries after its
file and key: every value is already cut by :func:`shown`; this bounds the rest (an error
of a lower layer quoting a hostile value)."""


class SteradianError(ValueError):
    """Base class for user-facing input errors."""


class DesignError(SteradianError):
    """A design file or design dictionary is malformed.

    Parameters
    ----------
    key : str
        Dotted path of the offending key, e.g. ``"geometry.dx"``.
    message : str
        What is wrong, including the bad value and what is allowed.
    source : str, optional
        File the design came from.
    """

    def __init__(self, key: str, message: str, source: str | None = None):
        self.key = key
        self.source = source
        if len(key) > 2 * SHOWN_CHARS:  # a hostile file's 5,000-character key
            key = key[:2 * SHOWN_CHARS - 3] + "..."
        where = f"{source}: " if source else ""
        message = _clip(message)
        super().__init__(f"{where}{key}: {message}" if key else f"{where}{message}")


class FileFormatError(SteradianError):
    """A data file (CSV, pattern table, weight file) cannot be read.

    Parameters
    ----------
    path : str
        The file.
    message : str
        What is wrong.
    line : int, optional
        1-based line number of the problem.
    """

    def __init__(self, path, message: str, line: int | None = None):
        self.path = str(path)
        self.line = line
        loc = f"{path}:{line}" if line is not None else f"{path}"
        super().__init__(f"{loc}: {_clip(message)}")


def _clip(message: str) -> str:
    """A message cut to :data:`MAX_MESSAGE_CHARS` (a nested error echoing a hostile value)."""
    message = str(message)
    if len(message) > MAX_MESSAGE_CHARS:
        return message[:MAX_MESSAGE_CHARS - 3] + "..."
    return message


def suggest(word, options, cutoff: float = 0.6) -> str:
    """The hint ``" (did you mean 'x'?)"`` for the closest of ``options`` to ``word``, or "".

    The one "did you mean" helper of the package: every unknown key, column, kind or name a
    user can misspell is reported through it, so hints read the same everywhere.
    """
    import difflib

    hint = difflib.get_close_matches(str(word)[:2 * SHOWN_CHARS], [str(o) for o in options],
                                     n=1, cutoff=cutoff)
    return f" (did you mean {hint[0]!r}?)" if hint else ""


def shown(value, limit: int = SHOWN_CHARS) -> str:
    """``value`` as a message shows it: plain Python repr, at most ``limit`` characters.

    The one place values are echoed into error messages, so a 5,000-character string or
    array in a hostile file gives a short line, and numpy scalars read as numbers
    (``0.5``, never ``np.float64(0.5)``). Strings keep their quotes; arrays show as lists.
    """
    if hasattr(value, "tolist") and callable(value.tolist):  # numpy scalar or array
        try:
            if getattr(value, "ndim", 0):
                value = value.ravel()[:limit]
            value = value.tolist()
        except (TypeError, ValueError):  # pragma: no cover - exotic array-likes
            pass
    if isinstance(value, float):
        text = repr(value)
    elif isinstance(value, str):
        text = repr(value if len(value) <= limit else value[:limit])
    else:
        try:
            text = repr(value)
        except RecursionError:  # a structure nested too deep to print
            text = f"<{type(value).__name__} nested too deep to show>"
    if len(text) > limit:
        text = text[:limit - 3] + "..."
    return text
