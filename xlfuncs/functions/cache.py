"""Content-keyed caches shared by the worksheet functions.

Identical inputs used by many cells are worked out once. Every key is the *content* of
the arguments, cell by cell with each cell's type (so ``TRUE`` and ``1`` never share an
entry), so an edit to any input can never return a stale result. The layers:

* results: each function's final value (the rendered table or number, or its one-line
  refusal) per argument list — a repeated call costs one key and one lookup;
* circuits: the parsed :class:`~xlfuncs.circuit.Circuit` per (parts, sources, options);
* solutions: the solved :class:`~xlfuncs.solution.Solution` per (parts, sources,
  options), shared by every function and target on the same tables;
* scans: impedance tables per (parts, node, frequencies, options, sources).

Refusals are cached as well as successes: a table that fails to parse is parsed once,
however many formulas use it. Only refusals of the input (:class:`XlfuncsError`) are
kept; anything else (a bug, an exhausted memory) is tried again next time. Entries are
bounded in number and in cells held. Nothing heavy is imported until it is needed.
"""

from __future__ import annotations

import itertools
import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable
from typing import TYPE_CHECKING, Any, NamedTuple

from ..errors import XlfuncsError

if TYPE_CHECKING:
    from ..circuit import Circuit
    from ..solution import Solution

__all__ = [
    "CacheInfo",
    "ReadOnlyTable",
    "cache_clear",
    "cache_info",
    "circuit",
    "content_key",
    "scan",
    "solution",
]


class CacheInfo(NamedTuple):
    hits: int
    misses: int
    maxsize: int
    currsize: int


_chain = itertools.chain.from_iterable


def content_key(values: Any) -> Any:
    """A key equal for equal content: each argument with its type, each range with the
    type of every row and every cell. Hashing it raises TypeError when a cell cannot be
    hashed (the caller then computes without the cache)."""
    out: list[Any] = []
    for a in values:
        if isinstance(a, (list, tuple)):
            try:
                rows = tuple(map(tuple, a))
            except TypeError:  # cells given as a flat list
                rows = tuple(a)
                out.append((type(a), rows, tuple(map(type, rows))))
                continue
            out.append((type(a), tuple(map(type, a)), rows, tuple(map(type, _chain(rows)))))
        elif hasattr(a, "tolist") and not isinstance(a, (str, float, int)):
            out.append(content_key((a.tolist(),)))  # a numpy array or scalar
        else:
            out.append((a, type(a)))
    return tuple(out)


def _cell_count(value: Any) -> int:
    if isinstance(value, (list, tuple)):
        return sum(len(r) if isinstance(r, (list, tuple)) else 1 for r in value) + 1
    return 1


class _Store:
    """A bounded, thread-safe LRU map from content keys to values or refusals."""

    def __init__(self, max_entries: int, max_cells: int) -> None:
        self.max_entries = max_entries
        self.max_cells = max_cells
        self._data: OrderedDict[Hashable, tuple[Any, int]] = OrderedDict()
        self._cells = 0
        self._lock = threading.Lock()
        self.hits = 0
        self.misses = 0

    def get(self, key: Hashable) -> tuple[bool, Any]:
        """``(found, value)``; TypeError when the key cannot be hashed."""
        with self._lock:
            entry = self._data.get(key)
            if entry is None:
                self.misses += 1
                return False, None
            self._data.move_to_end(key)
            self.hits += 1
            return True, entry[0]

    def put(self, key: Hashable, value: Any, cells: int) -> None:
        if cells > self.max_cells // 4:
            return  # one huge result would push out everything else
        with self._lock:
            old = self._data.pop(key, None)
            if old is not None:
                self._cells -= old[1]
            self._data[key] = (value, cells)
            self._cells += cells
            while len(self._data) > self.max_entries or self._cells > self.max_cells:
                _k, (_v, n) = self._data.popitem(last=False)
                self._cells -= n

    def clear(self) -> None:
        with self._lock:
            self._data.clear()
            self._cells = 0
            self.hits = self.misses = 0

    def info(self) -> CacheInfo:
        return CacheInfo(self.hits, self.misses, self.max_entries, len(self._data))


class _Refusal:
    """A cached refusal: the error raised again for every later identical request."""

    __slots__ = ("error",)

    def __init__(self, error: XlfuncsError) -> None:
        self.error = error


def _memo(store: _Store, key: Hashable, cells: int, compute: Callable[[], Any]) -> Any:
    try:
        found, value = store.get(key)
    except TypeError:  # a cell that cannot be hashed: no caching
        return compute()
    if not found:
        try:
            value = compute()
        except XlfuncsError as exc:
            value = _Refusal(exc)
        store.put(key, value, cells)
    if isinstance(value, _Refusal):
        raise value.error.with_traceback(None)
    return value


# ------------------------------------------------------------------ function results
RESULTS = _Store(max_entries=512, max_cells=2_000_000)


class ReadOnlyTable(list):
    """A result table shared through the cache: a list (rows are ReadOnlyTables too)
    that refuses to be changed, so that no caller can alter what the next caller gets.
    ``list(map(list, table))`` is a mutable copy; it pickles as a plain list."""

    __slots__ = ()

    def _refuse(self, *args: Any, **kwargs: Any) -> Any:
        raise TypeError(
            "a worksheet function's result is shared by the cache and read-only; "
            "copy it first: list(map(list, table))"
        )

    __setitem__ = __delitem__ = __iadd__ = __imul__ = _refuse
    append = extend = insert = pop = remove = clear = sort = reverse = _refuse

    def __reduce__(self) -> Any:
        return (list, ([list(r) if isinstance(r, list) else r for r in self],))


def frozen_result(value: Any) -> Any:
    """The read-only form of a function's result (a table as a :class:`ReadOnlyTable`),
    or None for a shape the cache does not hold."""
    if isinstance(value, ReadOnlyTable):
        return value
    if isinstance(value, list):
        if all(isinstance(r, list) for r in value):
            return ReadOnlyTable(map(ReadOnlyTable, value))
        return None
    return value


# ---------------------------------------------------------------- circuits, solutions
_CIRCUITS = _Store(max_entries=64, max_cells=1_000_000)
_SOLUTIONS = _Store(max_entries=64, max_cells=1_000_000)
_SCANS = _Store(max_entries=64, max_cells=1_000_000)


def _circuit(key: Hashable, parts: Any, sources: Any, options: Any) -> Circuit:
    from ..circuit import Circuit

    return _memo(
        _CIRCUITS,
        key,
        _cell_count(parts) + _cell_count(sources) + _cell_count(options),
        lambda: Circuit.from_tables(parts, sources, options),
    )


def circuit(parts: Any, sources: Any = None, options: Any = None) -> Circuit:
    """The parsed circuit of these tables (cached by content, refusals too)."""
    return _circuit(content_key((parts, sources, options)), parts, sources, options)


def solution(parts: Any, sources: Any, options: Any) -> Solution:
    """The solution of these tables at every source frequency (cached by content)."""
    from ..api import solve

    key = content_key((parts, sources, options))  # the same key names the circuit
    return _memo(
        _SOLUTIONS,
        key,
        _cell_count(parts) + _cell_count(sources) + _cell_count(options),
        lambda: solve(_circuit(key, parts, sources, options)),
    )


def scan(parts: Any, node: str, f: tuple[float, ...], options: Any, sources: Any) -> Any:
    """``freq_hz | z_ohm | angle_deg`` at ``node`` (sources zeroed), cached by content."""

    def compute() -> Any:
        import numpy as np

        from ..api import impedance_scan
        from ..views import scan_table

        freqs, z = impedance_scan(circuit(parts, sources, options), node, np.array(f))
        return scan_table(freqs, z)

    return _memo(
        _SCANS,
        content_key((parts, node, f, options, sources)),
        _cell_count(parts) + 3 * len(f),
        compute,
    )


def cache_clear() -> None:
    """Forget every cached result (never needed for correctness)."""
    for store in (RESULTS, _CIRCUITS, _SOLUTIONS, _SCANS):
        store.clear()


def cache_info() -> dict[str, CacheInfo]:
    """Hits, misses and sizes of each cache: ``results`` (whole function calls),
    ``circuit`` (parsed tables), ``solve`` (solutions), ``scan`` (impedance scans)."""
    return {
        "results": RESULTS.info(),
        "circuit": _CIRCUITS.info(),
        "solve": _SOLUTIONS.info(),
        "scan": _SCANS.info(),
    }
