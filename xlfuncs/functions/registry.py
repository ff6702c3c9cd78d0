"""The registry behind every ``CKT_`` worksheet function.

A domain module (``core``, ``studies``, …) declares each function once with
:func:`sheet_function`: its dialog texts, its arguments' descriptions (from :data:`ARGS`)
and whether Excel may run it while the user types in the function dialog. The registry
keeps the guarded callable and its documentation; nothing here imports Excel or xlwings.
The guarded callable is the same for every front end: it completes left-out arguments
with None, answers a repeated call from the content-keyed cache, refuses error cells
(naming table, row, column and error) before anything is parsed, refuses a non-finite
result, and turns every failure into one line of text for the cell. ``xlfuncs.worksheet`` decorates the
registered callables for xlwings, the headless engine registers them with the formula
engine, and ``xlfuncs.docgen`` writes the function reference from the same records.
"""

from __future__ import annotations

import functools
import inspect
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, TypeVar

from ..errors import EXCEL_ERRORS, InputError, XlfuncsError
from .cache import RESULTS, content_key, frozen_result

__all__ = [
    "ARGS",
    "CATEGORY",
    "ERROR_PREFIX",
    "EXCEL_ERRORS",
    "FUNCTIONS",
    "OWN_OPTIONS",
    "FunctionDoc",
    "excel_error",
    "one_line",
    "refuse_error_cells",
    "refuse_non_finite",
    "register_args",
    "sheet_function",
]

CATEGORY = "xlfuncs"
ERROR_PREFIX = "ERROR: "

F = TypeVar("F", bound=Callable[..., Any])

# argument name -> (dialog text, ≤ 255 characters; options). The options are xlwings'
# conversion options ({"ndim": 2} reads a range as a 2-D list) plus one of ours,
# "columns": the names of the columns of a range that has no header row (an empty
# tuple: number them). A range without "columns" has its header in its first row.
ARGS: dict[str, tuple[str, dict[str, Any]]] = {}

# options in ARGS entries that are ours, not xlwings'
OWN_OPTIONS = frozenset({"columns"})

# Through COM an error cell is a VT_ERROR value 0x800A0000 + its CVErr number, and
# xlwings translates only the first seven (its ``cell_errors`` table in _xlwindows.py);
# the others reach us as that bare integer. CVErr numbers of the newer errors: from
# memory of the xlCVError enumeration.
_COM_ERROR_BASE = -2146828288  # 0x800A0000 as a signed 32-bit integer
_CVERR = {
    2000: "#NULL!",
    2007: "#DIV/0!",
    2015: "#VALUE!",
    2023: "#REF!",
    2029: "#NAME?",
    2036: "#NUM!",
    2042: "#N/A",
    2043: "#GETTING_DATA",
    2045: "#SPILL!",
    2046: "#CONNECT!",
    2047: "#BLOCKED!",
    2048: "#UNKNOWN!",
    2049: "#FIELD!",
    2050: "#CALC!",
}
_ERROR_CELL = "the cell holds an Excel error"


def register_args(entries: dict[str, tuple[str, dict[str, Any]]]) -> None:
    """Add argument descriptions; a name already described must keep its description
    (one argument name means one thing across every function)."""
    for name, entry in entries.items():
        old = ARGS.get(name)
        if old is not None and old != entry:
            raise ValueError(f"argument {name!r} is already described differently")
        ARGS[name] = entry


@dataclass(frozen=True)
class FunctionDoc:
    """One worksheet function: what the reference and Excel's dialog say, and the
    guarded callable that every front end (xlwings, headless engine) calls.

    Attributes
    ----------
    args : tuple of (name, description, optional)
    ranges : tuple of bool
        Which arguments are read as 2-D ranges.
    call_in_wizard : bool
        False for expensive functions: Excel's function dialog then does not run them
        on every keystroke.
    columns : tuple of (tuple of str or None)
        Per argument: for a range without a header row, the names of its columns.
    """

    name: str
    summary: str
    returns: str
    args: tuple[tuple[str, str, bool], ...]
    call: Callable[..., Any] = field(repr=False, compare=False)
    ranges: tuple[bool, ...] = ()
    call_in_wizard: bool = True
    columns: tuple[tuple[str, ...] | None, ...] = ()

    @property
    def required(self) -> int:
        return sum(not opt for _n, _d, opt in self.args)


FUNCTIONS: dict[str, FunctionDoc] = {}


# Longest text a cell message may have: what Excel's dialogs show in one piece.
MESSAGE_MAX = 255


def one_line(text: str, limit: int = MESSAGE_MAX - len(ERROR_PREFIX)) -> str:
    """``text`` on one line, cut to ``limit`` characters (the cut marked with …)."""
    line = " ".join(text.split())
    return line if len(line) <= limit else line[: limit - 1] + "…"


def excel_error(value: Any) -> str | None:
    """The text of the Excel error ``value`` stands for, or None when it is a value."""
    t = type(value)
    if t is float or value is None or t is bool:
        return None
    if t is str:
        s = value.strip().upper()
        return s if s in EXCEL_ERRORS else None
    if t is int:
        n = value - _COM_ERROR_BASE
        if 2000 <= n <= 2100:
            return _CVERR.get(n, f"#ERROR{n}")
        return None
    code = getattr(value, "code", None)  # an error object of a formula engine
    return code if isinstance(code, str) and code in EXCEL_ERRORS else None


def _column(columns: tuple[str, ...] | None, rows: Any, r: int, c: int) -> str:
    if columns is not None:
        return columns[c] if c < len(columns) else str(c + 1)
    if r > 0 and isinstance(rows[0], (list, tuple)) and c < len(rows[0]):
        head = rows[0][c]
        if isinstance(head, str) and head.strip() and excel_error(head) is None:
            return head.strip()
    return str(c + 1)


def _first_error(rows: Any) -> tuple[int, int, str] | None:
    """(row, column, error) of the first error cell of a range, 0-based, or None."""
    for r, row in enumerate(rows):
        cells = row if isinstance(row, (list, tuple)) else (row,)
        for c, cell in enumerate(cells):
            err = excel_error(cell)
            if err is not None:
                return r, c, err
    return None


def _has_error(rows: Any) -> bool:
    for row in rows:
        for cell in row if isinstance(row, (list, tuple)) else (row,):
            t = type(cell)
            if t is float or cell is None or (t is str and "#" not in cell):
                continue  # the common cells, decided without a call
            if excel_error(cell) is not None:
                return True
    return False


def refuse_error_cells(fd: FunctionDoc, args: tuple[Any, ...]) -> None:
    """Raise :class:`InputError` for the first argument cell that holds an Excel error,
    naming the table (the argument), the row as the user counts it (the range's first
    row is row 1: the header, where there is one), the column (its header text) and the
    error. Error cells must never pass for blanks or values."""
    for i, a in enumerate(args):
        name = fd.args[i][0] if i < len(fd.args) else f"argument {i + 1}"
        cols = fd.columns[i] if i < len(fd.columns) else None
        if isinstance(a, (list, tuple)):
            if _has_error(a):
                r, c, err = _first_error(a)  # type: ignore[misc]
                raise InputError(name, r + 1, _column(cols, a, r, c), err, _ERROR_CELL)
            continue
        err = excel_error(a)
        if err is None:
            continue
        if i < len(fd.ranges) and fd.ranges[i]:  # a single cell given for a range
            raise InputError(name, 1, _column(cols, [[a]], 0, 0), err, _ERROR_CELL)
        raise InputError("argument", None, name, err, _ERROR_CELL)


def refuse_non_finite(result: Any) -> None:
    """No non-finite number leaves the package: name the result cell that holds one."""
    if isinstance(result, float):
        if not math.isfinite(result):
            raise InputError(
                "result", None, None, result, "not a finite number: check the inputs' magnitudes"
            )
        return
    if not isinstance(result, list):
        return
    for r, row in enumerate(result):
        for c, cell in enumerate(row if isinstance(row, list) else (row,)):
            if isinstance(cell, float) and not math.isfinite(cell):
                head = result[0][c] if r > 0 and isinstance(result[0], list) else c + 1
                raise InputError(
                    "result",
                    r + 1,
                    str(head),
                    cell,
                    "not a finite number: check the inputs' magnitudes",
                )


def _guard(fd_ref: list[FunctionDoc], f: F, n_args: int, cached: bool) -> F:
    """The callable every front end calls: the arguments completed with their defaults
    (a trailing argument left out is its default), a cache hit returned at once, else
    error cells refused, the function run, and every failure turned into one line of
    text for the cell (never a traceback). Results and refusals of the input are cached
    by content."""

    @functools.wraps(f)
    def wrapper(*args: Any) -> Any:
        if len(args) < n_args:
            args = args + (None,) * (n_args - len(args))
        key = content_key((f.__name__, *args)) if cached else None
        if key is not None:
            try:
                found, value = RESULTS.get(key)
            except TypeError:  # a cell that cannot be hashed: no caching
                key = None
            else:
                if found:
                    return value
        keep = True
        try:
            refuse_error_cells(fd_ref[0], args)
            result = f(*args)
            refuse_non_finite(result)
        except XlfuncsError as exc:
            result = ERROR_PREFIX + one_line(str(exc))
        except Exception as exc:  # a bug of ours: still one line, with its type
            result = ERROR_PREFIX + one_line(f"internal error {type(exc).__name__}: {exc}")
            keep = False  # not a property of the input: try again next time
        frozen = frozen_result(result)
        if frozen is None:
            return result
        if key is not None and keep:
            RESULTS.put(key, frozen, sum(map(_size, args)) + _size(result))
        return frozen

    return wrapper  # type: ignore[return-value]


def _size(value: Any) -> int:
    """Cells held by an argument or result (what a cache entry costs)."""
    if isinstance(value, (list, tuple)):
        return sum(len(r) if isinstance(r, (list, tuple)) else 1 for r in value) + 1
    return 1


def sheet_function(
    summary: str, returns: str, *, call_in_wizard: bool = True, cached: bool = True
) -> Callable[[F], F]:
    """Register ``f`` as the worksheet function of its own name.

    No type annotations on worksheet functions: xlwings would read them as converters.
    Every argument name must be described in :data:`ARGS` (see :func:`register_args`);
    every optional argument defaults to None (an argument left out, or skipped in the
    middle of a formula, arrives as None). ``call_in_wizard=False`` for functions with
    costly work; ``cached=False`` only for a function whose result is not fixed by its
    arguments.
    """

    def deco(f: F) -> F:
        sig = inspect.signature(f)
        args = []
        ranges = []
        columns: list[tuple[str, ...] | None] = []
        seen_optional = False
        for name, prm in sig.parameters.items():
            if name not in ARGS:
                raise ValueError(f"{f.__name__}: argument {name!r} has no description")
            doc, opts = ARGS[name]
            optional = prm.default is not inspect.Parameter.empty
            if optional and prm.default is not None:
                raise ValueError(f"{f.__name__}: optional argument {name!r} must default to None")
            if optional:
                seen_optional = True
            elif seen_optional:
                raise ValueError(f"{f.__name__}: required argument {name!r} after optional ones")
            args.append((name, doc, optional))
            ranges.append(opts.get("ndim") == 2)
            cols = opts.get("columns")
            columns.append(None if cols is None else tuple(cols))
        if f.__name__ in FUNCTIONS:
            raise ValueError(f"{f.__name__} is registered twice")
        f.__doc__ = summary
        fd_ref: list[FunctionDoc] = []
        guarded = _guard(fd_ref, f, len(args), cached)
        fd = FunctionDoc(
            f.__name__,
            summary,
            returns,
            tuple(args),
            guarded,
            tuple(ranges),
            call_in_wizard,
            tuple(columns),
        )
        fd_ref.append(fd)
        FUNCTIONS[f.__name__] = fd
        return guarded

    return deco
