"""The description format of a calculation template (plain frozen data, no layout).

A :class:`Template` lists what the book holds; :mod:`.builder` decides where it goes.
Formulas are Excel formula text over the template's own names (inputs, results, table
names) plus placeholders the builder resolves: ``{key}`` is the spilled block or table
``key`` as a whole, ``{key:col}`` one column of its data rows, ``{key:@}`` a block's
spilling cell alone (its header, or the one-line message it shows when it did not
spill), ``{@col}`` the same row's cell of column ``col`` inside a formula table.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

__all__ = [
    "Axis",
    "Block",
    "Chart",
    "Check",
    "Col",
    "Grid",
    "Input",
    "Result",
    "Row",
    "Rule",
    "Scenarios",
    "Section",
    "Series",
    "Sweep",
    "Table",
    "Template",
    "num",
    "text",
    "whole",
]


@dataclass(frozen=True)
class Rule:
    """What an input accepts: ``kind`` decimal, whole or text; bounds inclusive."""

    kind: str = "decimal"
    lo: float | None = None
    hi: float | None = None

    def describe(self) -> str:
        if self.kind == "text":
            return f"text of at most {self.hi:g} characters"
        what = "a whole number" if self.kind == "whole" else "a number"
        if self.lo is not None and self.hi is not None:
            return f"{what} from {self.lo:g} to {self.hi:g}"
        if self.lo is not None:
            return f"{what} ≥ {self.lo:g}"
        return what

    def ok_formula(self, ref: str) -> str:
        """Excel formula text that is TRUE when ``ref`` satisfies the rule."""
        if self.kind == "text":
            return f"IFERROR(LEN({ref})<={self.hi:g},FALSE)"
        terms = [f"ISNUMBER({ref})"]
        if self.lo is not None:
            terms.append(f"{ref}>={self.lo:g}")
        if self.hi is not None:
            terms.append(f"{ref}<={self.hi:g}")
        if self.kind == "whole":
            terms.append(f"{ref}=INT({ref})")
        return f"IFERROR(AND({','.join(terms)}),FALSE)"


def num(lo: float | None = None, hi: float | None = None) -> Rule:
    return Rule("decimal", lo, hi)


def whole(lo: float | None = None, hi: float | None = None) -> Rule:
    return Rule("whole", lo, hi)


def text(max_len: int = 80) -> Rule:
    return Rule("text", None, max_len)


@dataclass(frozen=True)
class Input:
    """One input cell with a defined name; ``unit`` is the unit the user types in."""

    name: str
    label: str
    default: Any
    unit: str = ""
    rule: Rule = field(default_factory=num)
    note: str = ""
    fmt: str = "general"


@dataclass(frozen=True)
class Result:
    """One named result cell."""

    name: str
    label: str
    formula: str
    unit: str = ""
    fmt: str = "0.000"
    note: str = ""


@dataclass(frozen=True)
class Section:
    """A titled group of inputs (on Inputs) or results (on Results)."""

    title: str
    items: tuple[Any, ...]


@dataclass(frozen=True)
class Col:
    """A column: header text, number format (a key of builder.FORMATS or an Excel
    format), optional width in characters, optional short key for ``{table:key}``."""

    header: str
    fmt: str = "general"
    width: float | None = None
    key: str | None = None

    @property
    def id(self) -> str:
        return self.key or self.header


@dataclass(frozen=True)
class Grid:
    """An editable input table; each column becomes a defined name over its rows."""

    title: str
    cols: tuple[Col, ...]
    names: tuple[str, ...]
    rules: tuple[Rule, ...]
    rows: tuple[tuple[Any, ...], ...]
    note: str = ""


@dataclass(frozen=True)
class Row:
    """One table row; with ``when``, every cell is blank unless the condition holds
    (our table readers skip blank rows: a part that is not in service)."""

    cells: tuple[Any, ...]
    note: str = ""
    when: str | None = None


@dataclass(frozen=True)
class Table:
    """A table of literals and formulas. ``excel=True`` makes it an Excel Table on the
    Network sheet; ``si_col`` ("value", or "freq_hz:Hz" with its unit) adds a column
    showing that column with an SI prefix (unit from the row's kind: R Ω, L H, C F, V V,
    I A)."""

    name: str
    title: str
    cols: tuple[Col, ...]
    rows: tuple[Row, ...]
    excel: bool = True
    si_col: str | None = None


@dataclass(frozen=True)
class Block:
    """A spilled formula (usually one worksheet function): ``rows`` the most rows it
    returns, header included, formatted and reserved; ``when`` shows "n/a" instead.
    ``notes`` > 0 on the Results sheet: the function's trailing "basis"/"note" rows (long
    text) are shown below the table as one line wrapped across its columns, with room for
    about that many characters; the full result is on the Data sheet, and references to
    the block (``{key}``, ``{key:col}``, ``{key:@}``) mean the full result. ``units`` adds,
    on a printed sheet, a "unit" column beside the spill: each row's unit by its label."""

    key: str
    title: str
    formula: str
    cols: tuple[Col, ...]
    rows: int
    when: str | None = None
    headed: bool = True  # False: the formula returns data rows only (a header is written)
    notes: int = 0
    units: tuple[tuple[str, str], ...] = ()  # (row label, unit): a unit column on the page


@dataclass(frozen=True)
class Check:
    """A pass/fail row: ``value`` ``rule`` ``limit`` (rule one of <=, <, >=, >);
    ``applies`` a condition that marks the row "n/a" when false."""

    label: str
    value: str
    limit: str
    unit: str
    source: str
    rule: str = "<="
    applies: str | None = None
    fmt: str = "0.00"


@dataclass(frozen=True)
class Axis:
    title: str
    log: bool = False
    lo: float | None = None
    hi: float | None = None
    fmt: str | None = None


@dataclass(frozen=True)
class Series:
    """``x``/``y`` are ``{key:col}`` references; ``style`` line, markers or column."""

    name: str
    x: str
    y: str
    style: str = "line"
    color: str = "#23395B"


@dataclass(frozen=True)
class Chart:
    title: str
    x: Axis
    y: Axis
    series: tuple[Series, ...]
    kind: str = "xy"  # or "column"


@dataclass(frozen=True)
class Sweep:
    """One scenario axis: an input and the values it takes (numbers become input cells
    on the Scenarios sheet, ``=formulas`` follow other inputs); ``tags`` label them."""

    input: str
    label: str
    values: tuple[Any, ...]
    tags: tuple[str, ...] = ()
    fmt: str = "general"  # the number format of the swept values (as the inputs show them)


@dataclass(frozen=True)
class Scenarios:
    """Every combination of the sweeps, each a full re-evaluation of the checks."""

    sweeps: tuple[Sweep, ...]
    note: str = ""


@dataclass(frozen=True)
class Template:
    file: str
    title: str
    subtitle: str
    scope: tuple[str, ...]
    inputs: tuple[Section | Grid, ...]
    network: tuple[Table, ...]
    results: tuple[Section | Table | Block, ...]
    checks: tuple[Check, ...]
    charts: tuple[Chart, ...]
    notes: tuple[tuple[str, tuple[str, ...]], ...]
    key_results: tuple[str, ...]
    data: tuple[Block, ...] = ()
    scenarios: Scenarios | None = None
    na_example: str = ""  # when this book's checks read n/a, for the notes on verdicts
