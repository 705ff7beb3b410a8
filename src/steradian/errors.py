"""Exception types shared across steradian.

Every error a user can cause by bad input is a :class:`SteradianError` (or subclass) whose
message names the offending key, file line or value. The CLI turns these into one line on
stderr and exit code 2; library callers can catch them as ``ValueError``.
"""

from __future__ import annotations

__all__ = ["SteradianError", "DesignError", "FileFormatError", "suggest"]


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
        where = f"{source}: " if source else ""
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
        super().__init__(f"{loc}: {message}")


def suggest(word, options, cutoff: float = 0.6) -> str:
    """The hint ``" (did you mean 'x'?)"`` for the closest of ``options`` to ``word``, or "".

    The one "did you mean" helper of the package: every unknown key, column, kind or name a
    user can misspell is reported through it, so hints read the same everywhere.
    """
    import difflib

    hint = difflib.get_close_matches(str(word), [str(o) for o in options], n=1, cutoff=cutoff)
    return f" (did you mean {hint[0]!r}?)" if hint else ""
