"""Errors raised by xlfuncs.

Every error a user can cause derives from :class:`XlfuncsError` and also from the
matching builtin, so ``except ValueError`` keeps working for callers who do not know
about this package::

    XlfuncsError (Exception)
    ├── InputError (ValueError)        a cell of an input table is wrong
    │   ├── UnitError                  a value's unit or SI prefix is wrong
    │   └── UnknownNameError (KeyError) a name (node, part, source) that nothing has
    ├── TableError (ValueError)        a whole table is wrong (empty, missing column)
    ├── NetworkError (ValueError)      the tables are valid but the network is ill-posed
    │   └── SingularNetworkError       no unique solution at some frequency
    └── WorkbookError (ValueError)     a workbook file is unreadable, hostile or unsupported

Each error keeps structured fields (``table``, ``row``, ``column``, ``value``...) and
builds its one-line message in ``__str__``. Rows are counted as the user counts them
in the table: the header row is row 1, the first data row is row 2.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

__all__ = [
    "EXCEL_ERRORS",
    "InputError",
    "NetworkError",
    "SingularNetworkError",
    "TableError",
    "UnitError",
    "UnknownNameError",
    "WorkbookError",
    "XlfuncsError",
]

# The texts of Excel's error values, as xlwings (err_to_str) and the headless engine
# deliver error cells (Excel's documented error values; #GETTING_DATA and the newer
# dynamic-array and data-type errors included). One list for every reader of cells.
EXCEL_ERRORS = frozenset(
    {
        "#NULL!",
        "#DIV/0!",
        "#VALUE!",
        "#REF!",
        "#NAME?",
        "#NUM!",
        "#N/A",
        "#GETTING_DATA",
        "#SPILL!",
        "#CONNECT!",
        "#BLOCKED!",
        "#UNKNOWN!",
        "#FIELD!",
        "#CALC!",
        "#BUSY!",
        "#PYTHON!",
        "#EXTERNAL!",
    }
)

_MISSING = object()
_MAX_QUOTE = 60  # longest quoted value in a message, in characters


def quote(value: Any) -> str:
    """``repr(value)``, shortened for very long values so a message stays one short line."""
    text = repr(value)
    if len(text) <= _MAX_QUOTE:
        return text
    if isinstance(value, str):
        size = f"{len(value):,} characters"
    elif isinstance(value, (list, tuple)):
        size = f"{len(value):,} items"
    else:
        size = f"{len(text):,} characters as text"
    return f"{text[: _MAX_QUOTE - 10]}…{text[-6:]} ({size})"


class XlfuncsError(Exception):
    """Root of every error this package raises on purpose."""


class InputError(XlfuncsError, ValueError):
    """One cell of an input table holds something we cannot use.

    Parameters
    ----------
    table : str
        ``"parts"``, ``"sources"``, ``"options"`` or ``"argument"``.
    row : int or None
        Row as the user counts it (header row = 1).
    column : str or None
        Column header as we know it (the canonical name).
    value : object
        The offending value, quoted with ``repr`` in the message.
    expected : str
        What was expected, in words a user can act on.
    """

    def __init__(
        self,
        table: str,
        row: int | None,
        column: str | None,
        value: Any = _MISSING,
        expected: str = "",
    ) -> None:
        self.table = table
        self.row = row
        self.column = column
        self.value = None if value is _MISSING else value
        self._has_value = value is not _MISSING
        self.expected = expected
        super().__init__(table, row, column, self.value, expected)

    @property
    def where(self) -> str:
        if self.table == "argument" and self.row is None and self.column is not None:
            return f"argument {self.column}"  # a function's argument: "argument target"
        parts = [self.table]
        if self.row is not None:
            parts.append(f"row {self.row}")
        text = " ".join(parts)
        if self.column is not None:
            text += f", column {self.column}"
        return text

    def __str__(self) -> str:
        text = self.where
        if self._has_value:
            text += f": {quote(self.value)}"
        return f"{text} — {self.expected}" if self.expected else text


class UnitError(InputError):
    """A value's SI prefix or unit symbol is unknown or does not fit the part."""


class UnknownNameError(InputError, KeyError):
    """A target or argument names no node, part or source of the circuit. Also a
    ``KeyError``, so code that looks names up with ``except KeyError`` keeps working."""

    __str__ = InputError.__str__


class TableError(XlfuncsError, ValueError):
    """A whole table is unusable: empty, not 2-D, or missing a required column."""

    def __init__(self, table: str, problem: str) -> None:
        self.table = table
        self.problem = problem
        super().__init__(table, problem)

    def __str__(self) -> str:
        return f"{self.table} table: {self.problem}"


def _fmt_hz(freq_hz: float | None) -> str:
    if freq_hz is None:
        return "every frequency"
    if freq_hz == 0:
        return "0 Hz (DC)"
    return f"{freq_hz:g} Hz"


class NetworkError(XlfuncsError, ValueError):
    """The tables parse, but the network they describe has no unique solution.

    Parameters
    ----------
    problem : str
        What is wrong, in words.
    nodes, parts : sequence of str
        The nodes and parts involved, named in the message.
    freq_hz : float or None
        The frequency at which the problem occurs (``None``: at every frequency).
    hint : str
        How to fix it.
    """

    def __init__(
        self,
        problem: str,
        *,
        nodes: Sequence[str] = (),
        parts: Sequence[str] = (),
        freq_hz: float | None = None,
        hint: str = "",
    ) -> None:
        self.problem = problem
        self.nodes = tuple(nodes)
        self.parts = tuple(parts)
        self.freq_hz = freq_hz
        self.hint = hint
        super().__init__(problem, self.nodes, self.parts, freq_hz, hint)

    def __str__(self) -> str:
        text = f"network at {_fmt_hz(self.freq_hz)}: {self.problem}"
        if self.nodes:
            text += f"; nodes {', '.join(self.nodes)}"
        if self.parts:
            text += f"; parts {', '.join(self.parts)}"
        if self.hint:
            text += f" — {self.hint}"
        return text


class SingularNetworkError(NetworkError):
    """The network equations are singular at some frequency (found numerically)."""


class WorkbookError(XlfuncsError, ValueError):
    """A workbook (or cases file) cannot be used: unreadable, hostile or unsupported.

    Parameters
    ----------
    path : str
        The file concerned.
    problem : str
        What is wrong, in words a user can act on.
    where : str
        Optional place inside the file (a sheet, a part of the archive, a cell).
    """

    def __init__(self, path: str, problem: str, where: str = "") -> None:
        self.path = path
        self.problem = problem
        self.where_ = where
        super().__init__(path, problem, where)

    def __str__(self) -> str:
        loc = f" ({self.where_})" if self.where_ else ""
        return f"{self.path}{loc}: {self.problem}"
