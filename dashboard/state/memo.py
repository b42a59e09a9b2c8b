"""A small least-recently-used memo bounded by entries and by bytes (per dashboard session).

Callback results (figures, matrix HTML, statistics) are kept by their inputs so that going back to
a view costs nothing. Bounding by entries alone is not enough: one chart of a long series holds
far more than one overview, so the memo also adds up an estimate of what each value holds and
drops the least recently used values until the total fits.
"""

from __future__ import annotations

import sys
import threading
from collections import OrderedDict
from typing import Any, Callable

import numpy as np
import pandas as pd

#: entries kept per name (each kind of view) by default
DEFAULT_ENTRIES = 64
#: bytes kept by one memo (all names together) by default
DEFAULT_BYTES = 64 * 2**20


def approx_nbytes(value: Any, _depth: int = 0) -> int:
    """Rough size of a value in bytes: arrays and frames by their buffers, containers summed.

    A categorical counts its codes only (see :func:`_column_nbytes`). Strings count their length;
    Dash components count their properties; anything else its
    ``sys.getsizeof``. Nesting deeper than 12 levels counts as 64 bytes (figures and layouts are
    shallow).
    """
    if _depth > 12:
        return 64
    if isinstance(value, np.ndarray):
        if value.dtype == object:
            return value.nbytes + sum(approx_nbytes(v, _depth + 1) for v in value.ravel())
        return value.nbytes
    if isinstance(value, pd.DataFrame):
        return sum(_column_nbytes(value[c]) for c in value.columns) + value.index.memory_usage()
    if isinstance(value, (pd.Series, pd.Index)):
        return _column_nbytes(value)
    if isinstance(value, (str, bytes)):
        return len(value) + 49
    if isinstance(value, dict):
        return 64 + sum(approx_nbytes(k, _depth + 1) + approx_nbytes(v, _depth + 1) for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return 56 + 8 * len(value) + sum(approx_nbytes(v, _depth + 1) for v in value)
    to_json = getattr(value, "to_plotly_json", None)
    if callable(to_json):  # a Dash component
        return approx_nbytes(to_json().get("props", {}), _depth + 1)
    return sys.getsizeof(value)


def _column_nbytes(values) -> int:
    """Bytes of one column; a categorical counts its codes only (its categories are shared with the
    session's whole frame, and counting them per cached slice would overstate it many times)."""
    if isinstance(values.dtype, pd.CategoricalDtype):
        return int(values.array.codes.nbytes) if hasattr(values, "array") else int(values.codes.nbytes)
    return int(values.memory_usage(deep=False)) if hasattr(values, "memory_usage") else 0


class Memo:
    """Least-recently-used values by ``(name, args)``, at most ``entries`` per name and ``max_bytes``
    in all. A value larger than ``max_bytes`` is computed and returned but not kept.

    Thread-safe: two requests computing the same value at once both compute it (no lock is held
    while computing), and the later one is kept.
    """

    def __init__(self, entries: int = DEFAULT_ENTRIES, max_bytes: int = DEFAULT_BYTES):
        self.entries = int(entries)
        self.max_bytes = int(max_bytes)
        self._items: OrderedDict[tuple, tuple[Any, int]] = OrderedDict()
        self._per_name: dict[str, int] = {}
        self._bytes = 0
        self._lock = threading.Lock()

    @property
    def nbytes(self) -> int:
        """Estimated bytes held now."""
        return self._bytes

    def __len__(self) -> int:
        return len(self._items)

    def keys(self) -> list[tuple]:
        """The kept ``(name, args)`` keys, least recently used first."""
        with self._lock:
            return list(self._items)

    def get(self, name: str, args: tuple, compute: Callable[[], Any], entries: int | None = None) -> Any:
        """The value for ``(name, args)``, computed by ``compute()`` when it is not kept."""
        key = (name, args)
        with self._lock:
            hit = self._items.get(key)
            if hit is not None:
                self._items.move_to_end(key)
                return hit[0]
        value = compute()
        size = approx_nbytes(value)
        if size > self.max_bytes:
            return value
        limit = self.entries if entries is None else int(entries)
        with self._lock:
            old = self._items.pop(key, None)
            if old is not None:
                self._bytes -= old[1]
                self._per_name[name] -= 1
            self._items[key] = (value, size)
            self._bytes += size
            self._per_name[name] = self._per_name.get(name, 0) + 1
            if self._per_name[name] > limit:
                self._evict(lambda k: k[0] == name, self._per_name[name] - limit)
            if self._bytes > self.max_bytes:
                self._evict(lambda k: k != key, None)
        return value

    def _evict(self, which: Callable[[tuple], bool], count: int | None) -> None:
        """Drop least recently used entries matching ``which``: ``count`` of them, or (``None``)
        until the bytes fit."""
        for k in [k for k in self._items if which(k)]:
            if (count is not None and count <= 0) or (count is None and self._bytes <= self.max_bytes):
                break
            _, size = self._items.pop(k)
            self._bytes -= size
            self._per_name[k[0]] -= 1
            if count is not None:
                count -= 1

    def clear(self) -> None:
        """Forget every memoised view."""
        with self._lock:
            self._items.clear()
            self._per_name.clear()
            self._bytes = 0
