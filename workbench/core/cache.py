"""The package's one cache mechanism: every memoised function is registered here.

Two kinds of cache exist:

- **results** (fuel sheets, flames, thermal NO, real-fluid states, duty physics): pure
  functions of their arguments. Anything that comes from a file is keyed by the file's
  *content* (the objects read from it, or a digest of its bytes), never by its path, so an
  edited file can never be served stale.
- **resources** (Cantera phases, CoolProp states): costly objects built once per process and
  reused; they hold no results, so clearing them only costs the next call its set-up.

``clear_caches()`` empties every result cache (and, on request, the resources);
``cache_info()`` reports hits and sizes, for benchmarks and tests.

Examples
--------
>>> from workbench.core.cache import memoize, clear_caches
>>> @memoize(maxsize=64)
... def square(x: float) -> float:
...     return x * x
>>> square(3.0)
9.0
>>> clear_caches()
"""

from __future__ import annotations

import functools
import hashlib
from collections import OrderedDict
from collections.abc import Callable, Hashable
from dataclasses import dataclass
from typing import Any, Literal, ParamSpec, TypeVar

import numpy as np

P = ParamSpec("P")
R = TypeVar("R")
Kind = Literal["result", "resource"]


@dataclass(frozen=True)
class CacheInfo:
    """Statistics of one registered cache.

    Attributes
    ----------
    name : str
        ``module.function`` of the memoised function.
    kind : str
        ``"result"`` or ``"resource"``.
    hits, misses : int
        Calls served from the cache, and calls computed, since the last clear.
    size : int
        Entries held now.
    maxsize : int or None
        Most entries held (least recently used dropped first); None for no limit.
    """

    name: str
    kind: str
    hits: int
    misses: int
    size: int
    maxsize: int | None


class _Memo:
    """A least-recently-used memo table for one function, optionally with a key function."""

    def __init__(self, fn: Callable[..., Any], kind: Kind, maxsize: int | None,
                 key: Callable[..., Hashable] | None) -> None:
        self.fn = fn
        self.kind = kind
        self.maxsize = maxsize
        self.key = key
        self.table: OrderedDict[Hashable, Any] = OrderedDict()
        self.hits = 0
        self.misses = 0
        self.name = f"{fn.__module__}.{fn.__qualname__}"

    def __call__(self, *args: Any, **kwargs: Any) -> Any:
        k = self.key(*args, **kwargs) if self.key else (args, tuple(sorted(kwargs.items())))
        try:
            value = self.table[k]
        except KeyError:
            self.misses += 1
            value = self.fn(*args, **kwargs)
            self.table[k] = value
            if self.maxsize is not None and len(self.table) > self.maxsize:
                self.table.popitem(last=False)
            return value
        self.hits += 1
        self.table.move_to_end(k)
        return value

    def clear(self) -> None:
        self.table.clear()
        self.hits = self.misses = 0

    def info(self) -> CacheInfo:
        return CacheInfo(self.name, self.kind, self.hits, self.misses, len(self.table),
                         self.maxsize)


_REGISTRY: dict[str, _Memo] = {}


def memoize(*, maxsize: int | None = 256, kind: Kind = "result",
            key: Callable[..., Hashable] | None = None
            ) -> Callable[[Callable[P, R]], Callable[P, R]]:
    """Memoise a pure function in a registered least-recently-used cache.

    Parameters
    ----------
    maxsize : int or None, optional
        Most entries kept; None keeps all (only for small, bounded argument sets).
    kind : {"result", "resource"}, optional
        What the cache holds (see the module notes); resources survive ``clear_caches()``
        unless asked.
    key : callable, optional
        Builds the cache key from the call's arguments (default: the arguments themselves,
        which must then be hashable). Use it to key by content, e.g. by a fuel's chemistry.

    Returns
    -------
    callable
        A decorator.
    """

    def wrap(fn: Callable[P, R]) -> Callable[P, R]:
        memo = _Memo(fn, kind, maxsize, key)
        if memo.name in _REGISTRY:
            raise RuntimeError(f"cache {memo.name} registered twice")
        _REGISTRY[memo.name] = memo

        @functools.wraps(fn)
        def call(*args: P.args, **kwargs: P.kwargs) -> R:
            return memo(*args, **kwargs)

        return call

    return wrap


def clear_caches(*, resources: bool = False) -> None:
    """Empty every registered result cache (the next calls recompute).

    Parameters
    ----------
    resources : bool, optional
        Also drop the cached resources (Cantera phases, CoolProp states).
    """
    for memo in _REGISTRY.values():
        if memo.kind == "result" or resources:
            memo.clear()


def cache_info() -> dict[str, CacheInfo]:
    """Statistics of every registered cache, by ``module.function`` name."""
    return {name: memo.info() for name, memo in _REGISTRY.items()}


def content_digest(*parts: np.ndarray | float | str | None) -> str:
    """SHA-256 of arrays and scalars: the identity of an object that holds arrays.

    Objects read from files (traces, maps) are compared and hashed by this digest, so caches
    key on what they contain, never on where they came from.

    Parameters
    ----------
    *parts : numpy.ndarray, float, str or None
        The content, in a fixed order; arrays by dtype, shape and bytes.

    Returns
    -------
    str
        Hex digest.
    """
    h = hashlib.sha256()
    for part in parts:
        if part is None:
            h.update(b"\x00none")
        elif isinstance(part, np.ndarray):
            a = np.ascontiguousarray(part)
            h.update(f"\x00{a.dtype.str}{a.shape}".encode())
            h.update(memoryview(a).cast("B"))
        else:
            h.update(f"\x00{part!r}".encode())
    return h.hexdigest()
