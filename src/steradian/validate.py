"""Small guard helpers whose messages name the bad value and the allowed set."""

from __future__ import annotations

import warnings
from typing import Any

import numpy as np

from .errors import DesignError, SteradianError, shown, suggest


def positive(name: str, value: Any, unit: str = "") -> float:
    """Return ``value`` as float, raising if it is not a finite positive number."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise SteradianError(f"{name} must be a number, got {shown(value)}") from None
    if not np.isfinite(x) or x <= 0:
        raise SteradianError(f"{name} must be positive, got {name}={shown(value)}{unit}")
    return x


def nonneg(name: str, value: Any, unit: str = "") -> float:
    """Return ``value`` as float, raising if it is negative, NaN or infinite."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise SteradianError(f"{name} must be a number, got {shown(value)}") from None
    if not np.isfinite(x) or x < 0:
        raise SteradianError(f"{name} must be zero or positive, got "
                             f"{name}={shown(value)}{unit}")
    return x


COUNT_LIMIT = 2**53
"""Largest count accepted: every whole number up to it is exact in double precision, and no
array, lattice or table of steradian comes near it (the memory budget refuses far less)."""


def count(name: str, value: Any, minimum: int = 1, maximum: int = COUNT_LIMIT) -> int:
    """Return ``value`` as int, raising unless it is a whole number in ``minimum`` ..
    ``maximum``."""
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        else:
            raise SteradianError(f"{name} must be a whole number, got {shown(value)}")
    if value < minimum:
        raise SteradianError(f"{name} must be at least {minimum}, got {name}={value}")
    if value > maximum:
        raise SteradianError(f"{name} must be at most {maximum:,}, got {shown(value)}")
    return int(value)


def finite_array(name: str, a: Any, shape_tail: tuple[int, ...] | None = None,
                 dtype=float) -> np.ndarray:
    """Return ``a`` as a finite numpy array, optionally checking its trailing shape."""
    arr = np.asarray(a, dtype=dtype)
    if shape_tail is not None and arr.shape[-len(shape_tail):] != shape_tail:
        raise SteradianError(f"{name} must have shape (..., {', '.join(map(str, shape_tail))}),"
                             f" got {arr.shape}")
    bad = ~np.isfinite(arr)
    if bad.any():
        idx = np.argwhere(bad)[0]
        raise SteradianError(f"{name} contains NaN or infinity at index {tuple(idx.tolist())}")
    return arr


def choice(name: str, value: Any, allowed) -> str:
    """Check ``value`` is one of ``allowed`` (e.g. ``typing.get_args`` of a Literal)."""
    if value not in allowed:
        raise SteradianError(f"{name} must be one of {', '.join(map(repr, allowed))}, got "
                             f"{shown(value)}{suggest(value, allowed)}")
    return value


def check_table_keys(section: str, table, allowed, source=None) -> None:
    """Raise DesignError naming ``section.key`` for a non-table or an unknown key.

    The message suggests the closest valid key and lists them all.
    """
    if not isinstance(table, dict):
        raise DesignError(section, f"must be a table, got {type(table).__name__}", source)
    for k in table:
        if k not in allowed:
            raise DesignError(f"{section}.{k}", f"unknown key{suggest(k, allowed)}; valid "
                              f"keys: {', '.join(allowed)}", source)


def doubtful(message: str) -> None:
    """Warn about legal but doubtful input."""
    warnings.warn(message, UserWarning, stacklevel=3)


def restore_frozen(obj, state: dict) -> None:
    """``__setstate__`` of the frozen dataclasses that hold read-only arrays (Geometry,
    Array): unpickled arrays come back writeable, so they are made read-only again. A study
    worker then holds the same kind of object as the process that built it (the engine
    memoises work on read-only arrays only)."""
    for name, value in state.items():
        if isinstance(value, np.ndarray):
            value = np.array(value)  # owns its memory (an unpickled array views the pickle's)
            value.setflags(write=False)
        object.__setattr__(obj, name, value)
