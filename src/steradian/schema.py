"""The design-file schema helper: typed, range-checked access to one table.

Every section of a design file (``[geometry]``, ``[taper]``, ``[channel]``, ``[beams]``,
``[synthesis]``...) is read through :class:`Section`, so a misspelled key, a wrong type or
an out-of-range value is reported the same way everywhere: one
:class:`~steradian.errors.DesignError` naming the file and the dotted key, with the closest
valid key suggested.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .errors import DesignError, shown, suggest

__all__ = ["Section", "MISSING", "type_name"]

MISSING = object()
"""Default meaning "this key is required"."""


def type_name(v) -> str:
    return {bool: "boolean", int: "integer", float: "number", str: "string", list: "array",
            dict: "table"}.get(type(v), type(v).__name__)


class Section:
    """One design-file table with typed getters whose errors name ``section.key`` and the file.

    Every design-file section is read through this class (one schema style for the whole
    package): ``only`` rejects unknown keys with the closest valid one, the getters check
    type and range and return plain Python values.

    Parameters
    ----------
    name : str
        Dotted name of the table (``"geometry"``, ``"synthesis.mask"``).
    data : dict
        The table as parsed.
    source : str, optional
        The design file, for messages.
    """

    def __init__(self, name: str, data, source: str | None):
        if not isinstance(data, dict):
            raise DesignError(name, f"must be a table [{name}], got {type_name(data)}", source)
        self.name = name
        self.data = data
        self.source = source

    def child(self, key: str, default=MISSING) -> Section | None:
        """The sub-table ``key`` as a Section (``default`` when absent and not required)."""
        v, given = self._get(key, default)
        if not given:
            return v
        return Section(f"{self.name}.{key}", v, self.source)

    def error(self, key: str | None, message: str) -> DesignError:
        return DesignError(f"{self.name}.{key}" if key else self.name, message, self.source)

    def __contains__(self, key):
        return key in self.data

    def _get(self, key, default):
        if key not in self.data:
            if default is MISSING:
                raise self.error(key, "required key is missing")
            return default, False
        return self.data[key], True

    def number(self, key, default=MISSING, *, minimum=None, above=None, maximum=None):
        v, given = self._get(key, default)
        if not given:
            return v
        return self._check_number(key, v, minimum=minimum, above=above, maximum=maximum)

    def _check_number(self, key, v, *, minimum=None, above=None, maximum=None):
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise self.error(key, f"must be a number, got {type_name(v)} {shown(v)}")
        x = float(v)
        if not math.isfinite(x):
            raise self.error(key, f"must be a finite number, got {shown(v)}")
        if above is not None and not x > above:
            word = "positive" if above == 0 else f"greater than {above:g}"
            raise self.error(key, f"must be {word}, got {shown(v)}")
        if minimum is not None and x < minimum:
            word = "zero or positive" if minimum == 0 else f"at least {minimum:g}"
            raise self.error(key, f"must be {word}, got {shown(v)}")
        if maximum is not None and x > maximum:
            raise self.error(key, f"must be at most {maximum:g}, got {shown(v)}")
        return x

    def integer(self, key, default=MISSING, *, minimum=None):
        v, given = self._get(key, default)
        if not given:
            return v
        return self._check_int(key, v, minimum=minimum)

    def _check_int(self, key, v, *, minimum=None):
        if isinstance(v, bool) or not isinstance(v, int):
            raise self.error(key, f"must be a whole number, got {type_name(v)} {shown(v)}")
        if minimum is not None and v < minimum:
            raise self.error(key, f"must be at least {minimum}, got {v}")
        return v

    def string(self, key, default=MISSING, *, choices=None):
        v, given = self._get(key, default)
        if not given:
            return v
        if not isinstance(v, str):
            raise self.error(key, f"must be a string, got {type_name(v)} {shown(v)}")
        if choices is not None and v not in choices:
            raise self.error(key, f"must be one of {', '.join(map(repr, choices))}, got "
                             f"{shown(v)}{suggest(v, choices)}")
        return v

    def boolean(self, key, default=MISSING):
        v, given = self._get(key, default)
        if given and not isinstance(v, bool):
            raise self.error(key, f"must be true or false, got {type_name(v)} {shown(v)}")
        return v

    def numbers(self, key, default=MISSING, *, above=None, nonempty=True):
        v, given = self._get(key, default)
        if not given:
            return v
        if not isinstance(v, list):
            raise self.error(key, f"must be an array of numbers, got {type_name(v)} "
                             f"{shown(v)}")
        if nonempty and not v:
            raise self.error(key, "must not be empty")
        return [self._check_number(f"{key}[{i}]", x, above=above) for i, x in enumerate(v)]

    def integers(self, key, default=MISSING, *, minimum=None, nonempty=True):
        v, given = self._get(key, default)
        if not given:
            return v
        if not isinstance(v, list):
            raise self.error(key, f"must be an array of whole numbers, got {type_name(v)} "
                             f"{shown(v)}")
        if nonempty and not v:
            raise self.error(key, "must not be empty")
        return [self._check_int(f"{key}[{i}]", x, minimum=minimum) for i, x in enumerate(v)]

    def vector3(self, key, default=MISSING):
        v, given = self._get(key, default)
        if not given:
            return v
        if not isinstance(v, list) or len(v) != 3:
            raise self.error(key, f"must be an array of 3 numbers, got {shown(v)}")
        x = np.array([self._check_number(f"{key}[{i}]", c) for i, c in enumerate(v)])
        if not np.linalg.norm(x) > 0:
            raise self.error(key, "must be a non-zero vector")
        return x

    def path(self, key, base_dir: Path) -> Path:
        p = self.string(key)
        if not p.strip():
            raise self.error(key, "must be a file name, got an empty string")
        try:
            full = Path(p).expanduser()
            full = full if full.is_absolute() else base_dir / full
            found = full.is_file()
        except (OSError, RuntimeError) as exc:  # a name too long, "~nobody"
            raise self.error(key, f"cannot use {shown(p)} as a file name "
                             f"({getattr(exc, 'strerror', None) or exc})") from None
        if not found:
            raise self.error(key, f"file not found: {full}")
        return full

    def only(self, allowed, context: str = "") -> None:
        """Raise for the first key not in ``allowed``, suggesting the closest one."""
        allowed = list(allowed)
        for k in self.data:
            if k not in allowed:
                where = f" {context}" if context else ""
                raise self.error(k, f"unknown key{where}{suggest(k, allowed)}; allowed: "
                                 f"{', '.join(allowed)}")
