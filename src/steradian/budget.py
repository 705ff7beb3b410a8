"""The resource guard: one memory budget, and the check made before anything large is built.

Every allocation or loop that grows with the problem (quadrature rules, lobe search sets,
response and power matrices, beam grids, element positions) first estimates the bytes it
would need from the sizes alone and calls :func:`require`; above the budget it is refused
with one line naming the cause and the size, before any of it is allocated.

The budget is, in order of precedence: the value given to :func:`set_budget` (the command
line's option sets it), the environment variable ``STERADIAN_MEMORY_BUDGET`` (``"2GiB"``,
``"500MB"``, ``"1.5e9"``: binary prefixes KiB..TiB, decimal kB..TB, plain bytes), and one
quarter of the machine's physical memory (common practice for a tool sharing its machine;
4 GiB where the physical memory cannot be read).
"""

from __future__ import annotations

import math
import os
import re
from contextlib import contextmanager

from .errors import SteradianError

__all__ = ["ENV_VAR", "DEFAULT_FRACTION", "budget", "set_budget", "limited", "require",
           "parse_size", "format_size", "physical_memory"]

ENV_VAR = "STERADIAN_MEMORY_BUDGET"
DEFAULT_FRACTION = 0.25
"""Share of the physical memory the default budget allows."""
_FALLBACK = 4 * 2**30

_UNITS = {"": 1, "b": 1, "k": 10**3, "kb": 10**3, "m": 10**6, "mb": 10**6, "g": 10**9,
          "gb": 10**9, "t": 10**12, "tb": 10**12, "kib": 2**10, "mib": 2**20, "gib": 2**30,
          "tib": 2**40}
_SIZE = re.compile(r"\s*([0-9]+(?:\.[0-9]*)?(?:[eE][+-]?[0-9]+)?)\s*([A-Za-z]*)\s*")

_set: int | None = None


def parse_size(text, what: str = ENV_VAR) -> int:
    """Bytes of a size such as ``"2GiB"``, ``"500MB"``, ``"1e9"`` or ``4096`` (ASCII only).

    Raises :class:`SteradianError` naming ``what`` for anything else, zero or negative.
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value, unit = float(text), ""
    else:
        m = _SIZE.fullmatch(str(text)) if str(text).isascii() else None
        if m is None or m.group(2).lower() not in _UNITS:
            shown = str(text)[:40]
            raise SteradianError(f"{what}: expected a size such as '2GiB' or '500MB', "
                                 f"got {shown!r}")
        value, unit = float(m.group(1)), m.group(2).lower()
    n = value * _UNITS[unit]
    if not (math.isfinite(n) and n >= 1):
        raise SteradianError(f"{what}: the memory budget must be at least 1 byte, got {text!r}")
    return int(n)


def format_size(nbytes: float) -> str:
    """``"9.4 GiB"``, ``"512 MiB"``, ``"3 KiB"``, ``"12 B"`` (binary prefixes)."""
    n = float(nbytes)
    if not math.isfinite(n):
        return "an unbounded amount"
    for unit, scale in (("EiB", 2**60), ("PiB", 2**50), ("TiB", 2**40), ("GiB", 2**30),
                        ("MiB", 2**20), ("KiB", 2**10)):
        if n >= scale:
            v = n / scale
            if unit == "EiB" and v >= 1e4:
                return f"{v:.1e} EiB"
            return f"{v:.1f} {unit}" if v < 100 else f"{v:.0f} {unit}"
    return f"{n:.0f} B"


def physical_memory() -> int | None:
    """Bytes of physical memory (``sysconf``), or None where it cannot be read."""
    try:
        n = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    except (AttributeError, ValueError, OSError):
        return None
    return int(n) if n > 0 else None


def budget() -> int:
    """The memory budget in bytes now in force (see the module notes for its sources)."""
    if _set is not None:
        return _set
    env = os.environ.get(ENV_VAR, "").strip()
    if env:
        return parse_size(env)
    phys = physical_memory()
    return int(phys * DEFAULT_FRACTION) if phys else _FALLBACK


def set_budget(nbytes) -> int | None:
    """Set the budget (bytes or a size string; ``None`` returns to the environment/default).

    Returns the previous explicit setting (``None`` if there was none), so a caller can
    restore it.
    """
    global _set
    old = _set
    _set = None if nbytes is None else parse_size(nbytes, "memory budget")
    return old


@contextmanager
def limited(nbytes):
    """``with limited("10MB"): ...`` runs with that budget and restores the previous one."""
    old = set_budget(nbytes)
    try:
        yield budget()
    finally:
        global _set
        _set = old


def require(nbytes: float, what: str, hint: str = "") -> None:
    """Refuse (one-line :class:`SteradianError`) when ``nbytes`` exceeds the budget.

    The message reads ``"<what> would need 9.4 GiB (budget 6.0 GiB): <hint>"``. ``nbytes`` may
    be a Python int of any size or ``inf`` (estimates are made before anything is built, so
    they may be astronomically large).
    """
    b = budget()
    try:
        over = not (nbytes <= b)  # NaN counts as over
    except TypeError:
        over = True
    if over:
        tail = f": {hint}" if hint else ""
        raise SteradianError(f"{what} would need {format_size(_as_float(nbytes))} "
                             f"(budget {format_size(b)}){tail}")


def _as_float(n) -> float:
    try:
        return float(n)
    except (OverflowError, TypeError, ValueError):
        return math.inf
