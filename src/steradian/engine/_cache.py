"""The engine's one memo: a small least-recently-used table, by identity or by content.

Every cache of the pattern engine (transform plans, chirp-z kernels, layout analyses, split
positions and weights, orientation groups, per-array weights) is an :class:`LRU` with a
fixed number of entries and one eviction rule: the least recently used entry goes first,
while there are more than ``size`` entries or (when entries carry a weight) more than
``budget`` weight in all.

Memos keyed by an array's identity (:meth:`LRU.by_identity`) hold only frozen arrays:
neither the array nor any array it views may be writeable (geometry positions and
orientations, memoised weights), so the identity stands for the content. The entry keeps a
weak reference and is used only while it still refers to the same object, so an id reused
after garbage collection never hits. Anything else is computed afresh on every call.
"""

from __future__ import annotations

import threading
import weakref
from collections import OrderedDict
from collections.abc import Callable, Hashable
from typing import Any

import numpy as np

__all__ = ["LRU", "frozen"]


def frozen(a) -> bool:
    """True when neither ``a`` nor any array it views can be written (safe to memoise)."""
    if type(a) is np.ndarray and a.base is None:  # the common case, one check
        return not a.flags.writeable
    if not isinstance(a, np.ndarray):
        return False
    while isinstance(a, np.ndarray):
        if a.flags.writeable:
            return False
        a = a.base
    return a is None


class LRU:
    """Least-recently-used memo with at most ``size`` entries and ``budget`` total weight.

    Thread-safe: stores and evictions hold a lock, lookups are single dictionary operations
    (atomic in CPython); a value is computed outside the lock.
    """

    def __init__(self, size: int, budget: float = float("inf")):
        self.size = int(size)
        self.budget = float(budget)
        self._d: OrderedDict = OrderedDict()  # key -> (value, weight)
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    def get(self, key: Hashable, default=None, check: Callable[[Any], bool] | None = None):
        """The value stored under ``key`` (marked as recently used), else ``default``.

        ``check(value)`` false (a content key whose full comparison fails) counts as a miss.
        """
        got = self._d.get(key)  # one dict lookup: atomic, no lock needed on the hot path
        if got is None or (check is not None and not check(got[0])):
            self.misses += 1
            return default
        try:
            self._d.move_to_end(key)
        except KeyError:  # evicted by another thread meanwhile: still a valid value
            pass
        self.hits += 1
        return got[0]

    def put(self, key: Hashable, value, weight: float = 0.0) -> None:
        """Store ``value``; an entry heavier than the whole budget is not kept."""
        if weight > self.budget:
            return
        with self._lock:
            self._d[key] = (value, weight)
            self._d.move_to_end(key)
            total = sum(e[1] for e in self._d.values())
            while len(self._d) > self.size or total > self.budget:
                _, (_, w) = self._d.popitem(last=False)
                total -= w

    def clear(self) -> None:
        """Forget every entry and reset the hit and miss counts."""
        with self._lock:
            self._d.clear()
            self.hits = self.misses = 0

    def info(self) -> dict:
        """Entries held and hits/misses since the last clear."""
        return {"entries": len(self._d), "hits": self.hits, "misses": self.misses}

    def by_identity(self, obj, extra: Hashable, fn: Callable[[Any], Any], *,
                    immutable: bool = False):
        """``fn(obj)`` memoised on the identity of ``obj`` (plus ``extra``).

        ``obj`` must be a frozen array (:func:`frozen`) or, with ``immutable=True``, an
        object that never changes after construction (an Array); otherwise ``fn(obj)`` is
        computed afresh.
        """
        if not (immutable or frozen(obj)):
            return fn(obj)
        key = (id(obj), extra)
        got = self._d.get(key)  # inlined get(): this runs on every single-direction call
        if got is not None and got[0][0]() is obj:
            self.hits += 1
            try:
                self._d.move_to_end(key)
            except KeyError:  # pragma: no cover - evicted by another thread meanwhile
                pass
            return got[0][1]
        self.misses += 1
        val = fn(obj)
        try:
            ref = weakref.ref(obj)
        except TypeError:  # pragma: no cover - not weak-referenceable
            return val
        self.put(key, (ref, val))
        return val
