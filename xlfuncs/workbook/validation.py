"""The input cells' data validation, applied headlessly as Excel applies it at entry.

A template marks what an input may hold with Excel's data validation (``<dataValidation>``
in the sheet XML, or its ``x14`` extension form): a type (``whole``, ``decimal``, ``list``,
``date``, ``time``, ``textLength``, ``custom``), an operator with one or two bounds
(constants, cell references or defined names), whether a blank is allowed, and the book's
own error message. ``xlfuncs recalc --set`` and every batch case meet the same rules: a value
the cell cannot take is refused with one line naming the input
(``cap_steps (Inputs!B14) expects a whole number ≥ 0, got 'two'``).

Where the rule asks for a number, text with an SI prefix is read as the number it spells
(``5k`` → 5000, as the tables read it); other text is refused. A ``custom`` rule (a formula)
cannot be checked outside Excel and is refused as such rather than passed unchecked; rules
whose error style is ``warning`` or ``information`` (Excel lets the user go on) are reported
but do not stop the run.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any
from xml.sax.saxutils import unescape

from ..errors import InputError, WorkbookError
from .cells import parse_range

__all__ = ["InputValueError", "Rule", "coerce", "parse_rules", "rule_for", "violation"]

_ATTR = re.compile(r'([\w:]+)\s*=\s*"([^"]*)"')
_UNESCAPE = {"&quot;": '"', "&apos;": "'"}
_RULE = re.compile(r"<(\w+:|)dataValidation\b([^>]*?)(?:/>|>(.*?)</\1dataValidation>)", re.S)
_OPS = {
    "between": "between {a} and {b}",
    "notBetween": "outside {a} … {b}",
    "equal": "= {a}",
    "notEqual": "≠ {a}",
    "greaterThan": "> {a}",
    "lessThan": "< {a}",
    "greaterThanOrEqual": "≥ {a}",
    "lessThanOrEqual": "≤ {a}",
}
_KIND = {
    "whole": "a whole number",
    "decimal": "a number",
    "date": "a date (a day number)",
    "time": "a time (a fraction of a day)",
    "textLength": "text whose length is",
}
_NUMERIC = ("whole", "decimal", "date", "time")


class InputValueError(WorkbookError):
    """A value an input cell's data validation does not allow."""

    def __init__(self, path: str, where: str, problem: str) -> None:
        super().__init__(path, problem, where)

    def __str__(self) -> str:
        return f"{self.where_} {self.problem}"


@dataclass(frozen=True)
class Rule:
    areas: tuple[tuple[int, int, int, int], ...]  # (row1, col1, row2, col2)
    kind: str  # "", whole, decimal, list, date, time, textLength, custom
    operator: str
    formula1: str | None
    formula2: str | None
    allow_blank: bool
    error_style: str  # stop, warning, information
    message: str

    def covers(self, row: int, col: int) -> bool:
        return any(r1 <= row <= r2 and c1 <= col <= c2 for r1, c1, r2, c2 in self.areas)


def _text(inner: str, tag: str) -> str | None:
    m = re.search(rf"<(\w+:|){tag}\b[^>]*>(.*?)</\1{tag}>", inner, re.S)
    if m is None:
        return None
    body = m.group(2)
    f = re.search(r"<(\w+:|)f\b[^>]*>(.*?)</\1f>", body, re.S)  # x14 form: <xm:f>…</xm:f>
    return unescape((f.group(2) if f else body).strip(), _UNESCAPE)


def _areas(sqref: str) -> tuple[tuple[int, int, int, int], ...]:
    out = []
    for part in sqref.split():
        try:
            out.append(parse_range(part))
        except ValueError:
            continue
    return tuple(out)


def parse_rules(sheet_xml: str) -> list[Rule]:
    """Every data-validation rule of one worksheet's XML (main and ``x14`` forms)."""
    if "dataValidation" not in sheet_xml:
        return []
    rules = []
    for m in _RULE.finditer(sheet_xml):
        a = dict(_ATTR.findall(m.group(2)))
        inner = m.group(3) or ""
        sqref = a.get("sqref") or _text(inner, "sqref") or ""
        message = unescape(a.get("error", ""), _UNESCAPE).strip()
        rules.append(
            Rule(
                areas=_areas(sqref),
                kind=a.get("type", ""),
                operator=a.get("operator", "between"),
                formula1=_text(inner, "formula1"),
                formula2=_text(inner, "formula2"),
                allow_blank=a.get("allowBlank", "0") in ("1", "true"),
                error_style=a.get("errorStyle", "stop"),
                message=" ".join(message.split()),
            )
        )
    return rules


def rule_for(rules: list[Rule], row: int, col: int) -> Rule | None:
    for r in rules:
        if r.covers(row, col) and r.kind not in ("", "none"):
            return r
    return None


def _shown(value: Any) -> str:
    if isinstance(value, float):
        return f"{value:g}"
    return repr(value)


def coerce(rule: Rule | None, value: Any) -> Any:
    """The value to put into the cell: text with an SI prefix becomes a number where the
    rule asks for one (``5k`` → 5000.0); everything else is left as it is."""
    if rule is None or rule.kind not in _NUMERIC or not isinstance(value, str):
        return value
    from ..units import parse_number

    try:
        return parse_number(value, unit=None, table="input", row=None, column="value")
    except InputError:
        return value


def _bound_text(x: float) -> str:
    return f"{x:g}"


def violation(
    rule: Rule,
    value: Any,
    bound: Callable[[str], Any],
    list_items: Callable[[str], list[Any]],
    typed: Any = None,
) -> str | None:
    """None when ``value`` satisfies ``rule``; otherwise what the cell expects, in words
    (``expects a whole number ≥ 0, got 'two'``). ``bound`` turns a bound's formula text into
    a number (or raises :class:`ValueError`); ``list_items`` gives a list source's items;
    ``typed`` is what the user typed when ``value`` was read from it (``'80M'`` → 8e7)."""
    got = f", got {_shown(value)}"
    if typed is not None and typed != value:
        got = f", got {_shown(typed)} (= {_shown(value)})"
    tail = f' (the book says: "{rule.message}")' if rule.message else ""
    blank = value is None or (isinstance(value, str) and value == "")
    if blank:
        return None if rule.allow_blank else f"expects a value (it may not be blank){tail}"
    if rule.kind == "custom":
        return (
            f"has a custom validation formula (={rule.formula1}) that cannot be checked "
            "outside Excel; set this input in Excel"
        )
    if rule.kind == "list":
        items = list_items(rule.formula1 or "")
        shown = ", ".join(_shown(i) for i in items[:12]) + (" …" if len(items) > 12 else "")
        for item in items:
            if isinstance(item, float) and isinstance(value, (int, float)):
                if not isinstance(value, bool) and float(value) == item:
                    return None
            elif str(item) == (str(value) if not isinstance(value, float) else f"{value:g}"):
                return None
        return f"expects one of {shown}{got}{tail}"
    if rule.kind not in (*_NUMERIC, "textLength"):
        return None
    try:
        lo = bound(rule.formula1 or "")
        hi = bound(rule.formula2 or "") if rule.operator in ("between", "notBetween") else None
    except ValueError as exc:
        return f"has a validation bound that cannot be checked outside Excel ({exc}){tail}"
    expected = (
        _KIND[rule.kind]
        + " "
        + _OPS.get(rule.operator, _OPS["between"]).format(
            a=_bound_text(lo), b=_bound_text(hi) if hi is not None else "?"
        )
    )
    if rule.kind == "textLength":
        x = float(len(value if isinstance(value, str) else _shown(value)))
    else:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            return f"expects {expected}{got}{tail}"
        x = float(value)
        if not math.isfinite(x) or (rule.kind == "whole" and not x.is_integer()):
            return f"expects {expected}{got}{tail}"
    ok = {
        "between": lambda: lo <= x <= hi,  # type: ignore[operator]
        "notBetween": lambda: not lo <= x <= hi,  # type: ignore[operator]
        "equal": lambda: x == lo,
        "notEqual": lambda: x != lo,
        "greaterThan": lambda: x > lo,
        "lessThan": lambda: x < lo,
        "greaterThanOrEqual": lambda: x >= lo,
        "lessThanOrEqual": lambda: x <= lo,
    }.get(rule.operator, lambda: lo <= x <= hi)()  # type: ignore[operator]
    return None if ok else f"expects {expected}{got}{tail}"
