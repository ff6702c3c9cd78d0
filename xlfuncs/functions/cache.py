"""Content-keyed caches shared by the worksheet functions.

Identical inputs used by many cells are solved once: the key is the *content* of the
ranges (frozen to tuples), so an edit to any input can never return a stale result.
"""

from __future__ import annotations

import functools
from typing import Any

import numpy as np

from ..api import impedance_scan, solve
from ..circuit import Circuit
from ..solution import Solution
from ..views import scan_table
from .arguments import freeze

__all__ = ["cache_clear", "cache_info", "scan", "solution"]

CACHE_SIZE = 64


@functools.lru_cache(maxsize=CACHE_SIZE)
def _solve_cached(parts: Any, sources: Any, options: Any) -> Solution:
    return solve(parts, sources, options)


def solution(parts: Any, sources: Any, options: Any) -> Solution:
    try:
        return _solve_cached(freeze(parts), freeze(sources), freeze(options))
    except TypeError:  # something unhashable slipped in: solve without the cache
        return solve(parts, sources, options)


@functools.lru_cache(maxsize=CACHE_SIZE)
def _scan_cached(parts: Any, node: str, f: tuple[float, ...], options: Any, sources: Any) -> Any:
    circuit = Circuit.from_tables(parts, sources, options)
    freqs, z = impedance_scan(circuit, node, np.array(f))
    return scan_table(freqs, z)


def scan(parts: Any, node: str, f: tuple[float, ...], options: Any, sources: Any) -> Any:
    return _scan_cached(freeze(parts), node, f, freeze(options), freeze(sources))


def cache_clear() -> None:
    """Forget every cached result (never needed for correctness)."""
    _solve_cached.cache_clear()
    _scan_cached.cache_clear()


def cache_info() -> dict[str, Any]:
    """Hits and misses of each cache (``functools`` cache statistics)."""
    return {"solve": _solve_cached.cache_info(), "scan": _scan_cached.cache_info()}
