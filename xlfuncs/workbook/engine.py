"""The one adapter around the formula engine.

Everything headless talks to :class:`FormulaEngine`; only this module imports the engine
package (formualizer, MIT/Apache-2.0, pinned ``>=0.13,<0.14``; see docs/ENGINE.md for why
it was chosen). The ``CKT_`` worksheet functions are registered as engine functions, so a
workbook evaluates exactly as it would in Excel with the add-in: Excel's built-ins by the
engine, ours by our Python code, dynamic arrays spilling natively (``A1#`` included).
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Protocol

from ..errors import WorkbookError
from .safety import DEFAULT_LIMITS, Limits

__all__ = [
    "CellError",
    "FormualizerEngine",
    "FormulaEngine",
    "NamedRange",
    "load_engine",
    "worksheet_functions",
]

# engine error kinds → the text Excel shows
_ERROR_TEXT = {
    "div": "#DIV/0!",
    "na": "#N/A",
    "value": "#VALUE!",
    "ref": "#REF!",
    "name": "#NAME?",
    "num": "#NUM!",
    "null": "#NULL!",
    "spill": "#SPILL!",
    "calc": "#CALC!",
    "circ": "#VALUE!",
    "nimpl": "#NAME?",
    "gettingdata": "#GETTING_DATA",
}
_EXCEL_EPOCH = dt.datetime(1899, 12, 30)


@dataclass(frozen=True)
class CellError:
    """An Excel error value (``code`` as Excel shows it, e.g. ``#DIV/0!``)."""

    code: str
    kind: str = ""

    def __str__(self) -> str:
        return self.code


@dataclass(frozen=True)
class NamedRange:
    name: str
    sheet: str
    first: tuple[int, int]  # (row, col), 1-based
    last: tuple[int, int]

    @property
    def is_cell(self) -> bool:
        return self.first == self.last


class FormulaEngine(Protocol):
    """What the headless tools need from a formula engine."""

    def sheet_names(self) -> list[str]: ...

    def set_value(self, sheet: str, row: int, col: int, value: Any) -> None: ...

    def evaluate(self) -> None: ...

    def value(self, sheet: str, row: int, col: int) -> Any: ...

    def spill_extent(self, sheet: str, row: int, col: int) -> tuple[int, int, int, int] | None: ...

    def named_ranges(self) -> dict[str, NamedRange]: ...


def _to_python(v: Any) -> Any:
    """Engine value → plain Python value (errors as CellError, dates as Excel serials)."""
    if isinstance(v, dict) and v.get("type") == "Error":
        kind = str(v.get("kind", "Value"))
        return CellError(_ERROR_TEXT.get(kind.lower(), "#VALUE!"), kind)
    if isinstance(v, dt.datetime):
        return (v - _EXCEL_EPOCH).total_seconds() / 86400.0
    if isinstance(v, dt.date):
        return float((v - _EXCEL_EPOCH.date()).days)
    if isinstance(v, dt.time):
        return (v.hour * 3600 + v.minute * 60 + v.second + v.microsecond / 1e6) / 86400.0
    if isinstance(v, dt.timedelta):
        return v.total_seconds() / 86400.0
    return v


def _cells(value: Any) -> int:
    if isinstance(value, list):
        return sum(len(r) if isinstance(r, list) else 1 for r in value)
    return 1


def worksheet_functions() -> dict[str, tuple[Callable[..., Any], int, int, tuple[bool, ...]]]:
    """Our ``CKT_`` functions: name → (callable, min args, max args, which args are ranges)."""
    from ..functions import FUNCTIONS

    return {
        name: (fd.call, fd.required, len(fd.args), fd.ranges) for name, fd in FUNCTIONS.items()
    }


def _adapt(
    fn: Callable[..., Any],
    ranges: tuple[bool, ...],
    limits: Limits,
    error_factory: Callable[[str], Any],
) -> Callable[..., Any]:
    """Engine callback around a worksheet function: ranges always 2-D, Excel errors in
    the arguments propagate (as Excel's own functions do), oversized ranges refused."""

    def callback(*args: Any) -> Any:
        fixed = []
        for i, a in enumerate(args):
            if _cells(a) > limits.max_range_cells:
                return f"ERROR: argument {i + 1} pulls in {_cells(a)} cells (limit {limits.max_range_cells})"
            is_range = ranges[i] if i < len(ranges) else False
            if is_range and a is not None and not isinstance(a, list):
                a = [[a]]
            if isinstance(a, list):
                for row in a:
                    for c in row if isinstance(row, list) else [row]:
                        if isinstance(c, dict) and c.get("type") == "Error":
                            return error_factory(str(c.get("kind", "Value")))
                a = [
                    [_to_python(c) for c in row] if isinstance(row, list) else [_to_python(row)]
                    for row in a
                ]
            elif isinstance(a, dict) and a.get("type") == "Error":
                return error_factory(str(a.get("kind", "Value")))
            else:
                a = _to_python(a)
            fixed.append(a)
        result = fn(*fixed)
        if isinstance(result, float) and not math.isfinite(result):
            return error_factory("Num")
        return result

    return callback


class FormualizerEngine:
    """:class:`FormulaEngine` backed by formualizer."""

    def __init__(self, book: Any, limits: Limits = DEFAULT_LIMITS) -> None:
        import formualizer as fz

        self._fz = fz
        self._book = book
        self.limits = limits

        def error_factory(kind: str) -> Any:
            try:
                return fz.LiteralValue.error(kind, None)
            except Exception:
                return fz.LiteralValue.error("Value", None)

        for name, (fn, lo, hi, ranges) in worksheet_functions().items():
            book.register_function(
                name,
                _adapt(fn, ranges, limits, error_factory),
                min_args=lo,
                max_args=hi,
                deterministic=name != "CKT_VERSION",
            )

    @classmethod
    def load(cls, data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> FormualizerEngine:
        """Load a workbook from its bytes (``name`` is only used in messages)."""
        import formualizer as fz

        try:
            book = fz.load_workbook_bytes(data)
        except Exception as exc:  # the engine's own parse errors
            raise WorkbookError(name, f"the formula engine cannot read it: {exc}") from None
        return cls(book, limits)

    def sheet_names(self) -> list[str]:
        names = self._book.sheet_names
        return list(names() if callable(names) else names)

    def set_value(self, sheet: str, row: int, col: int, value: Any) -> None:
        self._book.set_value(sheet, row, col, value)

    def evaluate(self) -> None:
        self._book.evaluate_all()

    def value(self, sheet: str, row: int, col: int) -> Any:
        return _to_python(self._book.get_value(sheet, row, col))

    def spill_extent(self, sheet: str, row: int, col: int) -> tuple[int, int, int, int] | None:
        from openpyxl.utils.cell import range_boundaries

        addr = f"{_quote(sheet)}!{_a1(row, col)}"
        info = self._book.inspect_cell(addr).to_dict()["cell"].get("spill")
        if not info or info.get("kind") != "Anchor" or not info.get("extent"):
            return None
        ref = info["extent"].rsplit("!", 1)[-1]
        c1, r1, c2, r2 = range_boundaries(ref)
        return int(r1), int(c1), int(r2), int(c2)

    def named_ranges(self) -> dict[str, NamedRange]:
        out: dict[str, NamedRange] = {}
        for n in self._book.get_named_ranges():
            if n.get("sheet") is None or n.get("start_row") is None:
                continue
            out[n["name"].lower()] = NamedRange(
                n["name"],
                n["sheet"],
                (n["start_row"], n["start_col"]),
                (n["end_row"], n["end_col"]),
            )
        return out


def _a1(row: int, col: int) -> str:
    from openpyxl.utils import get_column_letter

    return f"{get_column_letter(col)}{row}"


def _quote(sheet: str) -> str:
    return f"'{sheet}'" if not sheet.replace("_", "").isalnum() else sheet


def load_engine(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> FormulaEngine:
    """Load a workbook (its bytes) into the formula engine with our functions registered."""
    return FormualizerEngine.load(data, name, limits)
