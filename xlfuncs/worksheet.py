"""Worksheet functions (the ``CKT_`` family), registered through xlwings.

Point the xlwings add-in's "UDF Modules" setting at ``xlfuncs.worksheet`` and import the
functions. Each function is defined once in :mod:`xlfuncs.functions` (thin adapters:
worksheet values in → the core → a scalar or a rectangular 2-D list out, which Excel 365
spills natively; errors become one short line of text in the cell, never a traceback);
this module only decorates them for xlwings, with each argument's dialog text and
conversion options. It is the only module that imports xlwings.

Every argument is read with ``err_to_str=True``: an error cell (``#N/A``, ``#VALUE!``…)
then reaches the function as its text and is refused naming table, row and column,
instead of arriving as an empty cell (xlwings' default) that would silently drop a row.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any

import xlwings as xw

from .functions import ARGS, CATEGORY, FUNCTIONS, FunctionDoc, cache_clear, cache_info  # noqa: F401
from .functions.registry import OWN_OPTIONS


def _xlwings_options(opts: dict[str, Any]) -> dict[str, Any]:
    """xlwings' conversion options of one argument: ours removed, errors read as text."""
    out = {k: v for k, v in opts.items() if k not in OWN_OPTIONS}
    out["err_to_str"] = True
    return out


def _for_xlwings(fd: FunctionDoc) -> Callable[..., Any]:
    """A fresh wrapper of ``fd.call`` carrying xlwings' decorations (a new object each
    time, so reloading this module never decorates one function twice)."""

    @functools.wraps(fd.call)
    def udf(*args: Any) -> Any:
        return fd.call(*args)

    wrapped: Callable[..., Any] = udf
    for name, _doc, _opt in fd.args:
        doc, opts = ARGS[name]
        wrapped = xw.arg(name, doc=doc, **_xlwings_options(opts))(wrapped)
    return xw.func(category=CATEGORY, call_in_wizard=fd.call_in_wizard)(wrapped)


for _name, _fd in FUNCTIONS.items():
    globals()[_name] = _for_xlwings(_fd)

__all__ = sorted([*FUNCTIONS, "FUNCTIONS", "FunctionDoc", "cache_clear", "cache_info"])
