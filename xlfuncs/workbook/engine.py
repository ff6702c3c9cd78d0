"""The one adapter around the formula engine.

Everything headless talks to :class:`FormulaEngine`; only this module imports the engine
package (formualizer, MIT/Apache-2.0, pinned ``>=0.13,<0.14``; see docs/ENGINE.md for why
it was chosen). The ``CKT_`` worksheet functions are registered as engine functions, so a
workbook evaluates exactly as it would in Excel with the add-in: Excel's built-ins by the
engine, ours by our Python code, dynamic arrays spilling natively (``A1#`` included).

What our functions receive is what they receive from Excel (CONTRACTS §4):

* ranges always as 2-D lists; a cell holding an Excel error arrives as its text (``"#N/A"``)
  so the table readers refuse it naming table, row and column; a scalar argument holding an
  error propagates, as in Excel's own functions;
* a skipped optional argument (``CKT_SCAN(A1:E9,"out",10,1000,,opts)``) as ``None``. The
  engine evaluates a skipped argument to 0 before a custom function sees it, which cannot be
  told from a real 0, so :func:`engine_formula` rewrites the formula text the engine gets:
  each skipped argument of a ``CKT_`` call becomes a call of a marker function whose value
  the callback turns into ``None`` (the workbook written back keeps the user's formula);
* an argument whose reference covers more cells than ``Limits.max_range_cells`` is refused
  from the reference's size, before the engine materialises it (the same rewrite puts a
  refusal marker in its place); ranges known only when evaluated (``A1#``, ``OFFSET``) are
  checked when they arrive.

The engine's own failures — a Rust panic included, which Python sees as a
``BaseException`` — become one-line :class:`WorkbookError` at this boundary.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Protocol

from ..errors import WorkbookError
from .cells import cell_ref, parse_range
from .safety import DEFAULT_LIMITS, Limits

__all__ = [
    "MAX_COLS",
    "MAX_ROWS",
    "CellError",
    "FormualizerEngine",
    "FormulaEngine",
    "NamedRange",
    "engine_formula",
    "load_engine",
    "worksheet_functions",
]

MAX_ROWS = 1_048_576  # Excel's grid (the engine's coordinates panic beyond it)
MAX_COLS = 16_384

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

# marker functions of the rewritten formulas (private-use characters: no cell holds them)
_OMITTED_FN = "_XLFUNCS_OMITTED"
_REFUSED_FN = "_XLFUNCS_REFUSED"
_OMITTED = "\ue000xlfuncs:omitted"
_REFUSED = "\ue000xlfuncs:refused:"


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

    def snapshot(self, sheet: str, row: int, col: int) -> Any: ...

    def restore(self, sheet: str, row: int, col: int, saved: Any) -> None: ...

    def evaluate(self) -> None: ...

    def value(self, sheet: str, row: int, col: int) -> Any: ...

    def spill_extent(self, sheet: str, row: int, col: int) -> tuple[int, int, int, int] | None: ...

    def named_ranges(self) -> dict[str, NamedRange]: ...


def _is_error(v: Any) -> bool:
    return isinstance(v, dict) and v.get("type") == "Error"


def _error_code(v: dict[str, Any]) -> str:
    return _ERROR_TEXT.get(str(v.get("kind", "Value")).lower(), "#VALUE!")


def _to_python(v: Any) -> Any:
    """Engine value → plain Python value (errors as CellError, dates as Excel serials)."""
    if _is_error(v):
        return CellError(_error_code(v), str(v.get("kind", "Value")))
    if isinstance(v, dt.datetime):
        return (v - _EXCEL_EPOCH).total_seconds() / 86400.0
    if isinstance(v, dt.date):
        return float((v - _EXCEL_EPOCH.date()).days)
    if isinstance(v, dt.time):
        return (v.hour * 3600 + v.minute * 60 + v.second + v.microsecond / 1e6) / 86400.0
    if isinstance(v, dt.timedelta):
        return v.total_seconds() / 86400.0
    return v


def _range_cell(v: Any) -> Any:
    """A cell of a range argument: Excel errors as their text, the rest as plain values."""
    if _is_error(v):
        return _error_code(v)
    return _to_python(v)


_PLAIN = frozenset({float, int, str, bool, type(None)})


def _range_rows(a: list[Any]) -> list[list[Any]]:
    """A range argument as 2-D rows of plain values (rows without errors or dates pass
    as they are: the type check runs in C, not per cell in Python)."""
    out = []
    for row in a:
        if not isinstance(row, list):
            out.append([_range_cell(row)])
        elif set(map(type, row)) <= _PLAIN:
            out.append(row)
        else:
            out.append([_range_cell(c) for c in row])
    return out


def _cells(value: Any) -> int:
    if isinstance(value, list):
        return sum(len(r) if isinstance(r, list) else 1 for r in value)
    return 1


def worksheet_functions() -> dict[
    str, tuple[Callable[..., Any], int, int, tuple[bool, ...], tuple[str, ...]]
]:
    """Our ``CKT_`` functions: name → (callable, min args, max args, which args are ranges,
    argument names)."""
    from ..functions import FUNCTIONS

    return {
        name: (fd.call, fd.required, len(fd.args), fd.ranges, tuple(a[0] for a in fd.args))
        for name, fd in FUNCTIONS.items()
    }


def _adapt(
    fn: Callable[..., Any],
    ranges: tuple[bool, ...],
    names: tuple[str, ...],
    limits: Limits,
    error_factory: Callable[[str], Any],
    interrupted: list[bool],
) -> Callable[..., Any]:
    """Engine callback around a worksheet function (see the module docstring). A Ctrl-C
    that lands inside the callback would be swallowed by the engine (it turns exceptions
    into ``#VALUE!``): it is noted in ``interrupted`` and raised again after evaluation."""

    def callback(*args: Any) -> Any:
        fixed: list[Any] = []
        for i, a in enumerate(args):
            label = f"argument {i + 1}" + (f" ({names[i]})" if i < len(names) else "")
            if isinstance(a, str) and a.startswith(_REFUSED):
                return f"ERROR: {label} {a[len(_REFUSED) :]}"
            if isinstance(a, str) and a == _OMITTED:
                fixed.append(None)
                continue
            if _cells(a) > limits.max_range_cells:
                return (
                    f"ERROR: {label} pulls in {_cells(a)} cells (limit {limits.max_range_cells})"
                )
            is_range = ranges[i] if i < len(ranges) else False
            if is_range and a is not None and not isinstance(a, list):
                a = [[a]]
            if isinstance(a, list):
                a = _range_rows(a)
            elif _is_error(a):  # a scalar error propagates, as in Excel's own functions
                return error_factory(str(a.get("kind", "Value")))
            else:
                a = _to_python(a)
            fixed.append(a)
        try:
            result = fn(*fixed)
        except KeyboardInterrupt:
            interrupted[0] = True
            return error_factory("Value")
        if isinstance(result, float) and not math.isfinite(result):
            return error_factory("Num")
        return result

    return callback


# ------------------------------------------------------------ formula rewriting
_PREFIXES = ("_xlfn.", "_xludf.", "_xlws.")


def _function_name(token_value: str) -> str:
    name = token_value[:-1].strip()
    for p in _PREFIXES:
        if name.lower().startswith(p):
            name = name[len(p) :]
    return name.upper()


class _Call:
    """A function call (or parenthesis, or array constant) met while scanning tokens."""

    def __init__(self, is_ckt: bool, start: int) -> None:
        self.is_ckt = is_ckt
        self.start = start  # where the current argument's text begins
        self.current: list[Any] = []
        self.args: list[tuple[int, int, list[Any]]] = []

    def next_arg(self, sep_start: int, sep_end: int) -> None:
        self.args.append((self.start, sep_start, self.current))
        self.start, self.current = sep_end, []

    def edits(
        self, close_start: int, cells_of_ref: Callable[[str], int | None], limits: Limits
    ) -> list[tuple[int, int, str]]:
        args = [*self.args, (self.start, close_start, self.current[:-1])]
        if len(args) == 1 and not args[0][2]:
            return []  # CKT_X(): no arguments at all
        out = []
        for a0, a1, toks in args:
            body = [t for t in toks if str(t.token_type) != "Whitespace"]
            if not body:
                out.append((a0, a1, f"{_OMITTED_FN}()"))
            elif len(body) == 1 and str(body[0].subtype) == "Range":
                n = cells_of_ref(body[0].value)
                if n is not None and n > limits.max_range_cells:
                    why = f"covers {n} cells (limit {limits.max_range_cells})"
                    out.append((a0, a1, f'{_REFUSED_FN}("{why}")'))
        return out


def engine_formula(
    text: str, cells_of_ref: Callable[[str], int | None], limits: Limits = DEFAULT_LIMITS
) -> str | None:
    """The formula text the engine should evaluate for a formula cell's ``text`` (no
    leading ``=``), or None when it is to be used as it is: skipped arguments of ``CKT_``
    calls become ``_XLFUNCS_OMITTED()``, and a reference argument covering more than
    ``limits.max_range_cells`` cells (``cells_of_ref`` gives a reference's size, or None
    when it cannot be known before evaluation) becomes ``_XLFUNCS_REFUSED("…")``."""
    if "CKT_" not in text.upper():
        return None
    import formualizer as fz

    try:
        tokens = [t for t in fz.tokenize("=" + text) if t is not None]
    except Exception:  # the engine will report the formula itself
        return None
    edits: list[tuple[int, int, str]] = []
    stack: list[_Call] = []
    for tok in tokens:
        ttype, sub = str(tok.token_type), str(tok.subtype)
        start, end = tok.start - 1, tok.end - 1
        if stack and not (ttype == "Sep" and sub == "Arg" and stack[-1].is_ckt):
            stack[-1].current.append(tok)  # part of the enclosing call's current argument
        if ttype in ("Func", "Paren", "Array") and sub == "Open":
            is_ckt = ttype == "Func" and _function_name(tok.value).startswith("CKT_")
            stack.append(_Call(is_ckt, end))
        elif ttype == "Sep" and sub == "Arg" and stack and stack[-1].is_ckt:
            stack[-1].next_arg(start, end)
        elif ttype in ("Func", "Paren", "Array") and sub == "Close" and stack:
            call = stack.pop()
            if stack:
                stack[-1].current.append(tok)
            if call.is_ckt:
                edits.extend(call.edits(start, cells_of_ref, limits))
    if not edits:
        return None
    out = text
    for a0, a1, new in sorted(edits, reverse=True):
        out = out[:a0] + new + out[a1:]
    return out


class FormualizerEngine:
    """:class:`FormulaEngine` backed by formualizer."""

    def __init__(self, book: Any, name: str = "", limits: Limits = DEFAULT_LIMITS) -> None:
        import formualizer as fz

        self._fz = fz
        self._book = book
        self.name = name
        self.limits = limits
        self._interrupted = [False]

        def error_factory(kind: str) -> Any:
            try:
                return fz.LiteralValue.error(kind, None)
            except Exception:
                return fz.LiteralValue.error("Value", None)

        for fname, (fn, lo, hi, ranges, names) in worksheet_functions().items():
            book.register_function(
                fname,
                _adapt(fn, ranges, names, limits, error_factory, self._interrupted),
                min_args=lo,
                max_args=hi,
                deterministic=fname != "CKT_VERSION",
            )
        book.register_function(_OMITTED_FN, lambda: _OMITTED, min_args=0, max_args=0)
        book.register_function(
            _REFUSED_FN, lambda why: _REFUSED + str(why), min_args=1, max_args=1
        )

    def _call(self, what: str, fn: Callable[..., Any], *args: Any) -> Any:
        """Run an engine call; its failures (a Rust panic included) become one line."""
        try:
            return fn(*args)
        except (KeyboardInterrupt, SystemExit, GeneratorExit):
            raise
        except BaseException as exc:  # PanicException derives from BaseException
            text = " ".join(str(exc).split())[:200]
            raise WorkbookError(
                self.name, f"the formula engine failed {what}: {type(exc).__name__}: {text}"
            ) from None

    @classmethod
    def load(cls, data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> FormualizerEngine:
        """Load a workbook from its bytes (``name`` is only used in messages)."""
        import formualizer as fz

        try:
            book = fz.load_workbook_bytes(data)
        except (KeyboardInterrupt, SystemExit):
            raise
        except BaseException as exc:  # the engine's own parse errors (or a panic)
            text = " ".join(str(exc).split())[:200]
            raise WorkbookError(name, f"the formula engine cannot read it: {text}") from None
        return cls(book, name, limits)

    def sheet_names(self) -> list[str]:
        names = self._book.sheet_names
        return list(names() if callable(names) else names)

    def _check_cell(self, row: int, col: int) -> None:
        if not (1 <= row <= MAX_ROWS and 1 <= col <= MAX_COLS):
            raise WorkbookError(
                self.name,
                f"cell R{row}C{col} is outside the grid (rows 1…{MAX_ROWS}, columns 1…{MAX_COLS})",
            )

    def set_value(self, sheet: str, row: int, col: int, value: Any) -> None:
        self._check_cell(row, col)
        self._call(f"setting {sheet}!R{row}C{col}", self._book.set_value, sheet, row, col, value)

    def snapshot(self, sheet: str, row: int, col: int) -> Any:
        """The cell's value as the engine holds it, to be put back by :meth:`restore`."""
        self._check_cell(row, col)
        return self._call("reading a cell", self._book.get_value, sheet, row, col)

    def restore(self, sheet: str, row: int, col: int, saved: Any) -> None:
        if _is_error(saved):
            saved = self._fz.LiteralValue.error(str(saved.get("kind", "Value")), None)
        self.set_value(sheet, row, col, saved)

    def evaluate(self) -> None:
        self._interrupted[0] = False
        self._call("evaluating the workbook", self._book.evaluate_all)
        if self._interrupted[0]:
            raise KeyboardInterrupt

    def value(self, sheet: str, row: int, col: int) -> Any:
        return _to_python(self._call("reading a cell", self._book.get_value, sheet, row, col))

    def spill_extent(self, sheet: str, row: int, col: int) -> tuple[int, int, int, int] | None:
        addr = f"{_quote(sheet)}!{_a1(row, col)}"
        info = self._call("inspecting a cell", self._book.inspect_cell, addr)
        spill = info.to_dict()["cell"].get("spill")
        if not spill or spill.get("kind") != "Anchor" or not spill.get("extent"):
            return None
        ref = spill["extent"].rsplit("!", 1)[-1]
        return parse_range(ref)

    def named_ranges(self) -> dict[str, NamedRange]:
        out: dict[str, NamedRange] = {}
        for n in self._call("reading defined names", self._book.get_named_ranges):
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
    return cell_ref(row, col)


_PLAIN_SHEET = re.compile(r"^[A-Za-z_][A-Za-z0-9_.]*$")


def _quote(sheet: str) -> str:
    return sheet if _PLAIN_SHEET.match(sheet) else "'" + sheet.replace("'", "''") + "'"


def load_engine(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> FormulaEngine:
    """Load a workbook (its bytes) into the formula engine with our functions registered."""
    return FormualizerEngine.load(data, name, limits)
