"""Render a :class:`~.model.Template` into a workbook (XlsxWriter).

Sheets: Cover, Inputs, Network, Results, Charts, Checks, Scenarios (when described),
Notes, then Data and Cases (long spilled tables; hidden, so they do not print). Every sheet
carries the title, the demo marking and the document line (project, document, revision,
date) in rows 1–3, repeated on every printed page. Every cell is planned first and its
formula rendered last, once every position is known; a scenario re-renders the formulas
that depend on its swept inputs with other references (the Cases sheet holds one copy
of the dependent network, results and spilled blocks per scenario).
"""

from __future__ import annotations

import datetime as dt
import itertools
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from openpyxl.utils import get_column_letter

from .formulas import eng_text, names_in, substitute
from .model import Block, Chart, Col, Grid, Input, Result, Rule, Section, Table, Template, text

__all__ = ["CAUTION", "DEMO", "FORMATS", "build"]

CAUTION = (
    "Screening calculation only. Results that feed equipment ratings must be confirmed; local "
    "codes, the utility, the equipment makers and a licensed engineer have the last word."
)
DEMO = "DEMO DATA — an invented scenario for illustration; replace every input with your own."
FIXED_TIME = dt.datetime(2026, 1, 1, 0, 0, 0)
NAVY, TEAL, PALE, SAND = "#23395B", "#2E8B8B", "#EAF4F4", "#F4F1EA"
VERDICT_FILL = {"PASS": "#D8F3DC", "FAIL": "#FADBD8", "ERROR": "#FCE8B2", "n/a": "#EEEEEE"}
FORMATS = {
    "general": "General",
    "int": "0",
    "1": "0.0",
    "2": "0.00",
    "3": "0.000",
    "4": "0.0000",
    "sig": "0.000E+00",
    "hz": "#,##0.0",
    "deg": "0.0",
    "pct": "0.00",
    "thou": "#,##0",
    # a positive quantity of any size: 1,439.8 · 189.0 · 3.780 · 0.070 · 8.221E-04
    "qty": "[>=100]#,##0.0;[>=0.01]0.000;0.000E+00",
}
# cell styles (our own palette); every style is a plain XlsxWriter format description
GREY = {"border": 1, "border_color": "#BBBBBB", "valign": "top"}
# fmt: off
STYLES: dict[str, dict[str, Any]] = {
    "title": {"bold": True, "font_size": 14, "font_color": NAVY},
    "demo": {"italic": True, "font_color": "#9C2F2F"},
    "docline": {"italic": True, "font_size": 9, "font_color": "#555555"},
    "caution": {"italic": True, "font_color": "#6B4E16", "text_wrap": True, "valign": "top",
                "border": 1, "border_color": "#C9B37E"},
    "section": {"bold": True, "font_color": NAVY, "bottom": 1},
    "head": {"bold": True, "font_color": "white", "bg_color": NAVY, "border": 1,
             "text_wrap": True, "valign": "top"},
    "input": {"bg_color": PALE, "font_color": "#0B3D91", "border": 1, "valign": "top"},
    "calc": {"bg_color": SAND, "border": 1, "valign": "top"},
    "cell": GREY,
    "wrapcell": {**GREY, "text_wrap": True},
    "link": {**GREY, "font_color": "#0B3D91", "underline": 1, "text_wrap": True},
    "text": {"text_wrap": True, "valign": "top"},
    "plain": {},
    "num": {"valign": "top"},
    "worst": {"bold": True, "border": 2, "border_color": "#C0392B"},
    "verdict": {"bold": True, "font_size": 16, "border": 2, "align": "center",
                "valign": "vcenter"},
}
INPUT_COLS = (Col("input", width=40), Col("value", width=12), Col("unit", width=7),
              Col("defined name", width=15), Col("check", width=22), Col("note", width=48))
RESULT_COLS = (Col("result", width=40), Col("value", width=13), Col("unit", width=7),
               Col("defined name", width=15), Col("note", width=40))
CHECK_COLS = (Col("check", width=38), Col("value", width=12), Col("", width=4),
              Col("limit", width=11), Col("unit", width=7), Col("result", width=12),
              Col("source of the limit", width=54))
VERDICT_NOTE = (
    "PASS only when every check that applies is a number within its limit and every input is "
    "accepted; a check whose value is not a number reads ERROR and makes the verdict "
    "INCOMPLETE; "
)
AXIS = {"major_gridlines": {"visible": True, "line": {"color": "#DDDDDD", "width": 0.5}},
        "label_position": "low", "name_font": {"size": 9, "bold": False}, "num_font": {"size": 8}}
# fmt: on
_RULE_TEXT = {"<=": "≤", "<": "<", ">=": "≥", ">": ">"}
# A4 with 0.5" side and 0.75" top/bottom margins, in points: (width, height)
PAGE = {True: (842 - 72, 595 - 108), False: (595 - 72, 842 - 108)}
ROW_PT, HEAD_ROWS = 15.0, 3


def _a1(row: int, col: int, absolute: bool = True) -> str:
    d = "$" if absolute else ""
    return f"{d}{get_column_letter(col + 1)}{d}{row + 1}"


def _px(width_chars: float) -> int:
    return int(width_chars * 7 + 5)


@dataclass
class Pos:
    """Where a table or block landed: header row ``row``, data rows below it."""

    sheet: str
    row: int
    col: int
    ids: tuple[str, ...]
    rows: int  # data rows (header excluded)
    first: int | None = None  # the spilling cell, when it is not the header cell

    def anchor(self) -> str:
        return f"{self.sheet}!{_a1(self.row if self.first is None else self.first, self.col)}"

    def column(self, cid: str) -> str:
        c = self.col + self.ids.index(cid)
        return f"{self.sheet}!{_a1(self.row + 1, c)}:{_a1(self.row + self.rows, c)}"

    def area(self, n_cols: int | None = None) -> str:
        last = self.col + (n_cols or len(self.ids)) - 1
        return f"{self.sheet}!{_a1(self.row, self.col)}:{_a1(self.row + self.rows, last)}"


@dataclass
class Binding:
    """How names and placeholders render: ``names`` rewrites bare names (identity when
    absent), ``blocks``/``tables`` give positions, ``row`` is the current table row."""

    names: dict[str, str] = field(default_factory=dict)
    blocks: dict[str, Pos] = field(default_factory=dict)
    tables: dict[str, Pos] = field(default_factory=dict)
    row: tuple[Pos, int] | None = None

    def with_row(self, pos: Pos, r: int) -> Binding:
        return Binding(self.names, self.blocks, self.tables, (pos, r))

    def place(self, key: str, col: str | None) -> str:
        if key.startswith("@"):
            assert self.row is not None, "{@col} outside a table row"
            pos, r = self.row
            return _a1(r, pos.col + pos.ids.index(key[1:]), absolute=False)
        if key in self.blocks:
            pos = self.blocks[key]
            if col == "@":  # the spilling cell itself: a header, or a one-line message
                return pos.anchor()
            return f"_xlfn.ANCHORARRAY({pos.anchor()})" if col is None else pos.column(col)
        pos = self.tables[key]
        return pos.area() if col is None else pos.column(col)

    def render(self, formula: str) -> str:
        return substitute(formula, self.names, self.place)


class Page:
    """One worksheet: a cursor over rows, column widths and row heights from content
    (wrapped text sets its row's height once the widths are final), deferred formulas,
    and the row ranges that must not be split across printed pages."""

    WRAPPED = ("wrapcell", "text", "caution", "link")

    def __init__(self, book: Book, name: str, landscape: bool, printed: bool = True) -> None:
        self.book, self.name, self.landscape, self.printed = book, name, landscape, printed
        self.ws = book.wb.add_worksheet(name)
        self.row = 0
        self.widths: dict[int, float] = {}
        self.heights: dict[int, float] = {}
        self.wrapped: list[tuple[int, int, int, str]] = []
        self.keep: list[tuple[int, int]] = []  # (first row, last row) kept on one page
        self.last_col = 0
        self.chart_px = 0
        self.caution_row: int | None = None
        self.glue: set[int] = set()

    def need(self, col: int, width: float) -> None:
        self.widths[col] = max(self.widths.get(col, 6.0), width)
        self.last_col = max(self.last_col, col)

    def put(
        self,
        r: int,
        c: int,
        value: Any,
        style: str = "cell",
        fmt: str = "general",
        binding: Binding | None = None,
        array: bool = False,
    ) -> None:
        """A literal, or a formula (text starting with '=') rendered at the end. Short
        literal texts widen their column; wrapped styles get their row height."""
        f = self.book.fmt(style, fmt)
        self.last_col = max(self.last_col, c)
        if isinstance(value, str) and value.startswith("="):
            b = binding or self.book.main
            self.book.later.append(lambda: self._formula(r, c, b.render(value), f, array))
        elif value is None:
            self.ws.write_blank(r, c, None, f)
        else:
            self.ws.write(r, c, value, f)
            if style in self.WRAPPED:
                self.wrapped.append((r, c, c, str(value)))
            elif style == "cell" and isinstance(value, str) and len(value) <= 20:
                self.need(c, len(value) + 2)

    def _formula(self, r: int, c: int, text: str, f: Any, array: bool) -> None:
        if array:
            self.ws.write_dynamic_array_formula(r, c, r, c, text, f)
        else:
            self.ws.write_formula(r, c, text, f)

    def wrap(self, r: int, c1: int, c2: int, text: str, style: str = "text") -> None:
        """Wrapped text over columns c1..c2."""
        if c2 > c1:
            self.ws.merge_range(r, c1, r, c2, text, self.book.fmt(style))
        else:
            self.ws.write(r, c1, text, self.book.fmt(style))
        self.wrapped.append((r, c1, c2, text))

    def height(self, r: int, pt: float) -> None:
        self.heights[r] = max(self.heights.get(r, ROW_PT), pt)

    def head(self, heading: str, caution: bool = False) -> None:
        self.put(0, 0, heading, "title")
        self.put(1, 0, DEMO, "demo")
        self.put(2, 0, "=" + self.book.docline, "docline")
        self.height(0, 21)
        self.caution_row = 3 if caution else None
        self.row = 5 if caution else 4

    def title(self, text: str) -> None:
        """A section title, kept on the page of whatever follows it."""
        self.put(self.row, 0, text, "section")
        self.glue.add(self.row)
        self.row += 1

    def header(self, r: int, c: int, cols: tuple[Col, ...]) -> None:
        for k, col in enumerate(cols):
            self.put(r, c + k, col.header, "head")
            self.need(c + k, col.width or max(len(col.header) + 2, 9))
            self.wrapped.append((r, c + k, c + k, col.header))

    # ---------------------------------------------------------------- print setup
    def finish(self) -> None:
        ws, book = self.ws, self.book
        for c, w in self.widths.items():
            ws.set_column(c, c, w)
        if self.caution_row is not None:
            self.wrap(self.caution_row, 0, self.last_col, CAUTION, "caution")
        for r, c1, c2, words in self.wrapped:
            # proportional text: about 1.15 characters per unit of column width
            per_line = sum(self.widths.get(c, 8.43) for c in range(c1, c2 + 1)) * 1.15 - 2
            lines = sum(math.ceil(max(len(p), 1) / per_line) for p in words.split("\n"))
            self.height(r, lines * ROW_PT + 1)
        for r, h in self.heights.items():
            ws.set_row(r, h)
        ws.set_paper(9)
        ws.set_landscape() if self.landscape else ws.set_portrait()
        ws.set_margins(left=0.5, right=0.5, top=0.75, bottom=0.75)
        ws.hide_gridlines(1)
        ws.repeat_rows(0, HEAD_ROWS - 1)
        title = book.t.title.replace("&", "&&")
        ws.set_header(f"&L&8{title}&R&8DEMO DATA — invented scenario", {"margin": 0.3})
        ws.set_footer("&L&8&F · &A&R&8Page &P of &N", {"margin": 0.3})
        if self.printed:
            ws.print_area(0, 0, max(self.row - 1, HEAD_ROWS), self.last_col)
        width_px = sum(_px(self.widths.get(c, 8.43)) for c in range(self.last_col + 1))
        page_w, page_h = PAGE[self.landscape]
        width_pt = max(width_px, self.chart_px) * 0.75
        scale = min(100, int(100 * page_w / width_pt * 0.92))  # margin for font metrics
        ws.set_print_scale(scale)
        if self.printed:
            ws.set_h_pagebreaks(self._breaks(page_h * 100 / scale * 0.985))
        else:  # hidden without a print area: neither Excel nor LibreOffice prints it or
            ws.hide()  # counts it in a page total (a print area makes LibreOffice print it)

    def _breaks(self, cap: float) -> list[int]:
        """Manual page breaks so that no kept item straddles two pages."""
        breaks, used, r = [], 0.0, 0
        starts = {a: b for a, b in self.keep}
        titles = sum(self.heights.get(k, ROW_PT) for k in range(HEAD_ROWS))

        def unit_end(k: int) -> int:  # a kept range, or one row; a title joins the next unit
            end = starts.get(k, k)
            return unit_end(end + 1) if end in self.glue and end + 1 < self.row else end

        while r < self.row:
            end = unit_end(r)
            h = sum(self.heights.get(k, ROW_PT) for k in range(r, end + 1))
            if used + h > cap and r > HEAD_ROWS and used > titles:
                breaks.append(r)
                used = titles
            used += h
            r = end + 1
        return breaks


class Book:
    """One workbook being built from one description."""

    def __init__(self, t: Template, path: Path) -> None:
        import xlsxwriter

        self.t = t
        self.wb = xlsxwriter.Workbook(str(path))
        self.wb.calc_on_load = False  # keep the cached values when Excel opens the book
        self.wb.calc_id = 191029
        self.wb.set_properties(
            {
                "title": t.title,
                "author": "xlfuncs templates",
                "created": FIXED_TIME,
                "comments": DEMO,
            }
        )
        self._formats: dict[tuple[str, str], Any] = {}
        self._formats_cf: dict[str, Any] = {}
        self.later: list[Callable[[], None]] = []
        self.main = Binding()
        self.check_rows: list[int] = []
        self.data: Page
        self.data_col = 0
        self.docline = 'project&"  ·  document "&doc_no&"  ·  revision "&revision&"  ·  "&doc_date'

    def fmt(self, style: str, numfmt: str = "general") -> Any:
        key = (style, numfmt)
        if key not in self._formats:
            base = STYLES[style]
            if numfmt != "general":
                base = {**base, "num_format": FORMATS.get(numfmt, numfmt)}
            self._formats[key] = self.wb.add_format(base)
        return self._formats[key]

    def verdict_colours(self, ws: Any, area: str) -> None:
        for word, colour in (
            *VERDICT_FILL.items(),
            ("INCOMPLETE", VERDICT_FILL["ERROR"]),
            ("INVALID", VERDICT_FILL["ERROR"]),
        ):
            if word not in self._formats_cf:
                self._formats_cf[word] = self.wb.add_format({"bg_color": colour})
            ws.conditional_format(
                area,
                {
                    "type": "text",
                    "criteria": "begins with",
                    "value": word,
                    "format": self._formats_cf[word],
                },
            )

    def name(
        self, name: str, page: Page, r: int, c: int, r2: int | None = None, c2: int | None = None
    ) -> None:
        ref = f"={page.name}!{_a1(r, c)}"
        if r2 is not None:
            ref += f":{_a1(r2, c if c2 is None else c2)}"
        self.wb.define_name(name, ref)


# ======================================================================== rendering
def _check_result(v: str, lim: str, rule: str, applies: str | None) -> str:
    test = f'IF(AND(ISNUMBER({v}),ISNUMBER({lim})),IF({v}{rule}{lim},"PASS","FAIL"),"ERROR")'
    if applies:
        test = f'IF(NOT({applies}),"n/a",{test})'
    return f'=IFERROR({test},"ERROR")'


def _overall(area: str, invalid: str) -> str:
    p, n = f'COUNTIF({area},"PASS")', f'COUNTIF({area},"n/a")'
    return (
        f'=IF({invalid}>0,"INVALID INPUT",IF(COUNTIF({area},"FAIL")>0,"FAIL",'
        f'IF(AND({p}>0,{p}+{n}=ROWS({area})),"PASS","INCOMPLETE")))'
    )


def _guard(formula: str, when: str | None) -> str:
    body = formula[1:] if formula.startswith("=") else formula
    return f'=IF({when},{body},"n/a")' if when else f"={body}"


def _input_row(book: Book, page: Page, r: int, inp: Input) -> None:
    page.put(r, 0, inp.label, "wrapcell")
    page.put(r, 1, inp.default, "input", inp.fmt)
    page.put(r, 2, inp.unit)
    page.put(r, 3, inp.name)
    _validate(book, page, r, 1, inp.rule, inp.label, inp.name, inp.note)
    page.put(r, 4, _status(inp.rule, _a1(r, 1, False)), "cell")
    page.put(r, 5, inp.note or None, "wrapcell")
    book.name(inp.name, page, r, 1)


def _status(rule: Rule, ref: str) -> str:
    return f'=IF({rule.ok_formula(ref)},"ok","expects {rule.describe()}")'


def _validate(
    book: Book, page: Page, r: int, c: int, rule: Rule, label: str, name: str, note: str
) -> None:
    if rule.kind == "text":
        v: dict[str, Any] = {"validate": "length", "criteria": "<=", "value": int(rule.hi or 80)}
    else:
        v = {"validate": "integer" if rule.kind == "whole" else "decimal", "ignore_blank": False}
        if rule.lo is not None and rule.hi is not None:
            v |= {"criteria": "between", "minimum": rule.lo, "maximum": rule.hi}
        else:
            v |= {"criteria": ">=", "value": rule.lo if rule.lo is not None else -1e300}
    msg = f"{label} ({name}) expects {rule.describe()}."
    v |= {
        "input_title": name[:32],
        "input_message": (f"{note} " if note else "") + f"Expects {rule.describe()}."[:250],
        "error_title": f"{name}: not accepted"[:32],
        "error_message": msg[:250],
    }
    v["input_message"] = v["input_message"][:255]
    page.ws.data_validation(r, c, r, c, v)


def _inputs(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — inputs")
    page.header(page.row, 0, INPUT_COLS)
    page.row += 1
    for group in book.t.inputs:
        if isinstance(group, Section):
            page.title(group.title)
            for inp in group.items:
                _input_row(book, page, page.row, inp)
                page.row += 1
            page.keep.append((page.row - len(group.items) - 1, page.row - 1))
        else:
            _grid(book, page, group)
        page.row += 1
    page.put(page.row, 0, "inputs that are not accepted", "plain")
    page.put(
        page.row,
        1,
        '=COUNTIF(Inputs!$E$1:$E$300,"expects*")+COUNTIF(Cover!$D$1:$D$60,"expects*")',
        "calc",
        "int",
    )
    book.name("inputs_invalid", page, page.row, 1)
    page.ws.conditional_format(
        f"E1:E{page.row}",
        {
            "type": "text",
            "criteria": "begins with",
            "value": "expects",
            "format": book.wb.add_format({"bg_color": VERDICT_FILL["FAIL"]}),
        },
    )
    page.row += 2


def _grid(book: Book, page: Page, g: Grid) -> None:
    page.title(g.title)
    page.header(page.row, 0, g.cols)
    top = page.row + 1
    for k, row in enumerate(g.rows):
        r = top + k
        for c, (v, rule, col) in enumerate(zip(row, g.rules, g.cols, strict=True)):
            page.put(r, c, v, "input", col.fmt)
            _validate(book, page, r, c, rule, f"{g.title}, row {k + 2}", g.names[c], g.note)
        oks = ",".join(rule.ok_formula(_a1(r, c, False)) for c, rule in enumerate(g.rules))
        page.put(
            r, 4, f'=IF(AND({oks}),"ok","expects {" and ".join(x.describe() for x in g.rules)}")'
        )
    for c, nm in enumerate(g.names):
        book.name(nm, page, top, c, top + len(g.rows) - 1)
    page.keep.append((top - 2, top + len(g.rows) - 1))
    page.row = top + len(g.rows)


UNITS = {"R": "Ω", "L": "H", "C": "F", "V": "V", "I": "A"}


def _cell(v: Any, when: str | None) -> Any:
    """A table cell, blank unless ``when`` holds (a part left out of service)."""
    if when is None or v is None:
        return v
    lit = (
        v[1:]
        if isinstance(v, str) and v.startswith("=")
        else (f'"{v}"' if isinstance(v, str) else repr(v))
    )
    return f'=IF({when},{lit},"")'


def _table(
    book: Book, page: Page, t: Table, b: Binding, r0: int, note_to: int | None = None
) -> Pos:
    """Header + rows at row ``r0``: the function columns, an optional "shown as" column
    (an Excel Table on the Network sheet), then the notes right after them, merged up to
    column ``note_to`` (the sheet's note column: other tables' columns keep their widths)."""
    si, _, si_unit = (t.si_col or "").partition(":")
    cols = (*t.cols, *((Col("shown as", width=11),) if si else ()))
    pos = Pos(page.name, r0, 0, tuple(c.id for c in t.cols), len(t.rows))
    page.header(r0, 0, cols)
    note = len(cols)
    last = max(note, note_to or 0)
    if any(x.note for x in t.rows):
        page.header(r0, last, (Col("note", width=50),))
        if last > note:
            page.ws.merge_range(r0, note, r0, last, "note", book.fmt("head"))
    if t.excel and b is book.main:
        head = book.fmt("head")
        page.ws.add_table(
            r0,
            0,
            r0 + len(t.rows),
            len(cols) - 1,
            {
                "name": t.name.replace("_tbl", "").capitalize(),
                "style": "Table Style Light 9",
                "columns": [{"header": c.header, "header_format": head} for c in cols],
                "data": [[None] * len(cols) for _ in t.rows],
            },
        )
    for r, row in enumerate(t.rows, r0 + 1):
        for c, (v, col) in enumerate(zip(row.cells, t.cols, strict=True)):
            page.put(r, c, _cell(v, row.when), "cell", col.fmt, binding=b.with_row(pos, r))
        if si:
            ref = _a1(r, pos.ids.index(si), absolute=False)
            unit = si_unit or UNITS.get(str(row.cells[1]).upper(), "")
            page.put(r, len(t.cols), f'=IF({ref}="","",{eng_text(ref, unit)})')
        if row.note and last > note:
            page.wrap(r, note, last, row.note, "wrapcell")
        elif row.note:
            page.put(r, note, row.note, "wrapcell")
    return pos


def _block(book: Book, page: Page, blk: Block, b: Binding, r0: int, c0: int = 0) -> Pos:
    """A spilled formula over formatted blank cells (formats survive recalculation; a
    literal inside the spill area would block it). Data rows carry no borders, so rows
    it does not fill stay invisible."""
    for c, col in enumerate(blk.cols, c0):
        page.need(c, col.width or max(len(col.header) + 2, 9))
        page.put(r0, c, None if blk.headed else col.header, "head")
        for r in range(r0 + 1, r0 + blk.rows):
            page.put(r, c, None, "num", col.fmt)
    if blk.units and page.printed:  # beside the spill: each row's unit from its label
        u = c0 + len(blk.cols)
        page.put(r0, u, "unit", "head")
        page.need(u, max(len(x) for _, x in blk.units) + 2)
        for r in range(r0 + 1, r0 + blk.rows):
            label = _a1(r, c0, False)
            pick = '""'
            for name, unit in reversed(blk.units):
                pick = f'IF({label}="{name}","{unit}",{pick})'
            page.put(r, u, f'=IFERROR({pick},"")', "num")
    first = r0 if blk.headed else r0 + 1
    fmt = "general" if blk.headed else blk.cols[0].fmt
    page.put(
        first,
        c0,
        _guard(blk.formula, blk.when),
        "head" if blk.headed else "num",
        fmt,
        binding=b,
        array=True,
    )
    return Pos(page.name, r0, c0, tuple(c.id for c in blk.cols), blk.rows - 1, first)


def _network(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — network (values in SI units)")
    wide = max(len(t.cols) + bool(t.si_col) for t in book.t.network)
    for t in book.t.network:
        page.title(t.title)
        pos = _table(book, page, t, book.main, page.row, note_to=wide)
        book.main.tables[t.name] = pos
        book.name(t.name, page, pos.row, 0, pos.row + pos.rows, len(t.cols) - 1)
        page.keep.append((pos.row - 1, pos.row + pos.rows))
        page.row = pos.row + pos.rows + 2


def _results(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — results", caution=True)
    for item in book.t.results:
        if isinstance(item, Section):
            page.title(item.title)
            page.header(page.row, 0, RESULT_COLS)
            for k, res in enumerate(item.items):
                r = page.row + 1 + k
                page.put(r, 0, res.label, "wrapcell")
                page.put(r, 1, res.formula, "calc", res.fmt, array=True)
                page.put(r, 2, res.unit)
                page.put(r, 3, res.name)
                page.put(r, 4, res.note, "wrapcell")
                book.name(res.name, page, r, 1)
            page.keep.append((page.row - 1, page.row + len(item.items)))
            page.row += len(item.items) + 2
        elif isinstance(item, Table):
            page.title(item.title)
            book.main.tables[item.name] = _table(book, page, item, book.main, page.row)
            page.keep.append((page.row - 1, page.row + len(item.rows)))
            page.row += len(item.rows) + 2
        elif item.notes:
            page.title(item.title)
            _noted_block(book, page, item)
        else:
            page.title(item.title)
            book.main.blocks[item.key] = _block(book, page, item, book.main, page.row)
            page.keep.append((page.row - 1, page.row + item.rows - 1))
            page.row += item.rows + 1


NOTE_ROWS = ("basis", "note")  # labels of the long text rows worksheet functions append


def _noted_block(book: Book, page: Page, blk: Block) -> None:
    """The full result on the Data sheet (every reference to the block means it); on the
    page, its table rows without the text rows, then those as one line wrapped across the
    block's columns."""
    data, c = book.data, book.data_col
    data.put(4, c, blk.title + " (in full)", "section")
    full = book.main.blocks[blk.key] = _block(book, data, blk, book.main, 5, c)
    book.data_col += len(blk.cols) + 1
    data.row = max(data.row, 5 + blk.rows)
    cell = full.anchor()
    arr = f"_xlfn.ANCHORARRAY({cell})"
    first = f"INDEX({arr},0,1)"
    keep = "*".join(f'({first}<>"{w}")' for w in NOTE_ROWS)
    told = "+".join(f'({first}="{w}")' for w in NOTE_ROWS)
    # a result that did not spill (its one-line message, "n/a") is shown as it is
    table = f"IF(ISERROR(ROWS({arr})),{cell},_xlfn._xlws.FILTER({arr},{keep}))"
    view = Block(blk.key, blk.title, table, blk.cols, blk.rows, headed=blk.headed)
    r0 = page.row
    _block(book, page, view, book.main, r0)
    r, c2 = r0 + blk.rows, len(blk.cols) - 1
    lines = f'_xlfn._xlws.FILTER({first}&": "&INDEX({arr},0,2),{told})'
    page.ws.merge_range(r, 0, r, c2, "", book.fmt("text"))
    page.put(r, 0, f'=IFERROR(_xlfn.TEXTJOIN(CHAR(10),TRUE,{lines}),"")', "text", array=True)
    page.wrapped.append((r, 0, c2, "x" * blk.notes))
    page.keep.append((r0 - 1, r))
    page.row = r + 2


def _data(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — long tables behind the charts (hidden: not printed)")
    c, page.row = 0, 6
    for blk in book.t.data:
        page.put(4, c, blk.title, "section")
        book.main.blocks[blk.key] = _block(book, page, blk, book.main, 5, c)
        c += len(blk.cols) + 1
        page.row = max(page.row, 5 + blk.rows)
    book.data, book.data_col = page, c  # the full results of noted blocks go on from here


def _charts(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — charts")
    page.need(0, 94)  # the charts sit in column A: the print area covers them
    for ch in book.t.charts:
        _chart(book, page, ch)


def _chart(book: Book, page: Page, ch: Chart) -> None:
    rows = 19
    spec = (
        {"type": "column"} if ch.kind == "column" else {"type": "scatter", "subtype": "straight"}
    )
    chart = book.wb.add_chart(spec)

    def rng(ref: str) -> str:
        return "=" + book.main.render(ref)

    for ser in ch.series:
        look = {
            "markers": {"marker": {"type": "diamond", "size": 8, "fill": {"color": ser.color},
                                   "border": {"color": ser.color}}, "line": {"none": True}},
            "column": {"fill": {"color": ser.color}, "gap": 80},
            "line": {"line": {"color": ser.color, "width": 1.75}, "marker": {"type": "none"}},
        }[ser.style]  # fmt: skip
        chart.add_series(
            {"name": ser.name, "categories": rng(ser.x), "values": rng(ser.y), **look}
        )
    for axis, setter in ((ch.x, chart.set_x_axis), (ch.y, chart.set_y_axis)):
        opts: dict[str, Any] = {"name": axis.title, **AXIS}
        opts |= {"log_base": 10} if axis.log else {}
        opts |= {k: v for k, v in (("min", axis.lo), ("max", axis.hi), ("num_format", axis.fmt))
                 if v is not None}  # fmt: skip
        setter(opts)
    chart.set_title({"name": ch.title, "name_font": {"size": 11}})
    chart.set_legend({"position": "bottom", "font": {"size": 8}})
    chart.set_size({"width": 640, "height": 360})
    page.ws.insert_chart(page.row, 0, chart, {"x_offset": 4, "y_offset": 4})
    page.keep.append((page.row, page.row + rows))
    page.row += rows + 1


def _checks(book: Book, page: Page) -> None:
    page.head(
        f"{book.t.title} — checks against limits, with the source of each limit", caution=True
    )
    page.header(page.row, 0, CHECK_COLS)
    top = page.row + 1
    for k, chk in enumerate(book.t.checks):
        r = top + k
        page.put(r, 0, chk.label, "wrapcell")
        page.put(r, 1, _guard(chk.value, chk.applies), "calc", chk.fmt, array=True)
        page.put(r, 2, _RULE_TEXT[chk.rule], "cell")
        page.put(r, 3, _guard(chk.limit, chk.applies), "calc", chk.fmt, array=True)
        page.put(r, 4, chk.unit)
        v, lim = _a1(r, 1, False), _a1(r, 3, False)
        page.put(r, 5, _check_result(v, lim, chk.rule, chk.applies), "cell", array=True)
        page.put(r, 6, chk.source, "wrapcell")
        book.check_rows.append(r)
    last = top + len(book.t.checks) - 1
    area = f"{_a1(top, 5)}:{_a1(last, 5)}"
    book.verdict_colours(page.ws, area.replace("$", ""))
    r = last + 2
    page.put(r, 0, "overall verdict", "section")
    page.put(r, 5, _overall(area, "inputs_invalid"), "verdict", array=True)
    page.put(
        r,
        6,
        f'=COUNTIF({area},"PASS")&" pass, "&COUNTIF({area},"FAIL")&" fail, "'
        f'&COUNTIF({area},"ERROR")&" error, "&COUNTIF({area},"n/a")&" n/a; "'
        f'&inputs_invalid&" input(s) not accepted"',
        "plain",
    )
    book.verdict_colours(page.ws, _a1(r, 5, False))
    page.height(r, 24)
    book.name("verdict", page, r, 5)
    r += 2
    page.wrap(r, 0, 6, VERDICT_NOTE + _na_note(book.t))
    page.keep.append((top - 1, r))
    page.row = r + 1


def _na_note(t: Template) -> str:
    """What n/a means in this book: its own example, or that no check can read it."""
    if not any(c.applies for c in t.checks):
        return "every check of this book applies in every case, so none reads n/a."
    example = f" (here: {t.na_example})" if t.na_example else ""
    return f"n/a marks a check that does not apply{example}."


def _needed(t: Template, swept: set[str]) -> set[str]:
    """Names and blocks the checks use that depend, directly or not, on a swept input."""
    defs = _definitions(t)
    known = set(defs) | swept
    dep: dict[str, bool] = {}

    def depends(x: str, seen: frozenset[str]) -> bool:
        if x in swept:
            return True
        if x not in dep:
            uses = _uses(defs.get(x, ()), known) - seen
            dep[x] = any(depends(y, seen | {x}) for y in uses)
        return dep[x]

    need: set[str] = set()
    stack = [y for c in t.checks for y in _uses((c.value, c.limit, c.applies or ""), known)]
    while stack:
        x = stack.pop()
        if x not in need and depends(x, frozenset()):
            need.add(x)
            stack += list(_uses(defs.get(x, ()), known))
    return need


def _bands(
    book: Book, cases: Page, combos: list[tuple[int, ...]], sweep_cells: list[list[str]]
) -> list[Binding]:
    """One copy per scenario, on the Cases sheet, of every result, table and block the
    checks need that depends on a swept input; returns each scenario's binding."""
    t, sc = book.t, book.t.scenarios
    assert sc is not None
    need = _needed(t, {s.input for s in sc.sweeps})
    items: dict[str, Any] = {x.name: x for x in (*t.network, *t.results) if isinstance(x, Table)}
    items |= {x.key: x for x in (*t.data, *t.results) if isinstance(x, Block)}
    items |= {r.name: r for s in t.results if isinstance(s, Section) for r in s.items}
    bindings = []
    for j, combo in enumerate(combos):
        b = Binding({}, dict(book.main.blocks), dict(book.main.tables))
        for k, s in enumerate(sc.sweeps):
            b.names[s.input] = sweep_cells[k][j]
        label = ", ".join(
            f"{s.input} = {s.tags[i] if s.tags else s.values[i]}"
            for s, i in zip(sc.sweeps, combo, strict=True)
        )
        cases.title(f"Scenario S{j + 1}: {label}")
        for key in sorted(need & items.keys(), key=lambda k: (type(items[k]).__name__, k)):
            item = items[key]
            if isinstance(item, Result):
                cases.put(cases.row, 0, item.label, "plain")
                cases.put(cases.row, 1, item.formula, "calc", binding=b, array=True)
                b.names[key] = f"{cases.name}!{_a1(cases.row, 1)}"
                cases.row += 1
            elif isinstance(item, Table):
                b.tables[key] = pos = _table(book, cases, item, b, cases.row)
                b.names[key] = pos.area()
                cases.row += pos.rows + 2
            else:
                b.blocks[key] = _block(book, cases, item, b, cases.row)
                cases.row += item.rows + 1
        cases.row += 1
        bindings.append(b)
    return bindings


def _scenarios(book: Book, page: Page, cases: Page) -> None:
    """Swept values, then three matrices (check values, limits, results) with one
    column per combination of the sweeps; the worst value of each check outlined."""
    sc, checks = book.t.scenarios, book.t.checks
    assert sc is not None
    page.head(f"{book.t.title} — scenarios: every combination below, all checks", caution=True)
    page.title("Values swept (edit the blue cells; the others follow the inputs)")
    inputs = {i.name: i for g in book.t.inputs if isinstance(g, Section) for i in g.items}
    label = [s.label + (f" ({', '.join(s.tags)})" if s.tags else "") for s in sc.sweeps]
    axis: list[list[str]] = []
    for s, text_ in zip(sc.sweeps, label, strict=True):
        page.put(page.row, 0, text_, "wrapcell")
        page.put(page.row, 1, inputs[s.input].unit)
        axis.append([])
        for c, v in enumerate(s.values, 2):
            literal = not str(v).startswith("=")
            page.put(page.row, c, v, "input" if literal else "calc", s.fmt)
            if literal:
                _validate(book, page, page.row, c, inputs[s.input].rule, s.label, s.input, "")
            axis[-1].append(_a1(page.row, c))
        page.row += 1
    combos = list(itertools.product(*[range(len(s.values)) for s in sc.sweeps]))
    n, last = len(combos), 1 + len(combos)
    rows: dict[str, int] = {}
    for part, title in (
        ("value", "Check values (the worst of each row outlined)"),
        ("limit", "Limits"),
        ("result", "Results"),
    ):
        page.row += 1
        top = page.row
        page.title(title)
        extra = (Col("worst", width=10), Col("worst in", width=9)) if part == "value" else ()
        page.header(
            page.row,
            0,
            (
                Col("check", width=40),
                Col("unit", width=7),
                *(Col(f"S{j + 1}", width=10) for j in range(n)),
                *extra,
            ),
        )
        for k, s in enumerate(sc.sweeps, page.row + 1):
            page.put(k, 0, label[k - page.row - 1], "wrapcell")
            page.put(k, 1, inputs[s.input].unit)
            for j, combo in enumerate(combos):
                s_ = sc.sweeps[k - page.row - 1]
                page.put(
                    k, 2 + j, "=" + axis[k - page.row - 1][combo[k - page.row - 1]], "calc", s_.fmt
                )
        rows[part] = page.row + 1 + len(sc.sweeps)
        if part == "value":
            sweep_cells = [
                [f"{page.name}!{_a1(page.row + 1 + k, 2 + j)}" for j in range(n)]
                for k in range(len(sc.sweeps))
            ]
        page.row = rows[part] + len(checks) + (part == "result")
        page.keep.append((top, page.row - 1))
    bindings = _bands(book, cases, combos, sweep_cells)
    fills = {w: book.wb.add_format({"bg_color": VERDICT_FILL[w]}) for w in ("PASS", "FAIL")}
    for i, chk in enumerate(checks):
        v_row, l_row, r_row = rows["value"] + i, rows["limit"] + i, rows["result"] + i
        for r in (v_row, l_row, r_row):
            page.put(r, 0, chk.label, "wrapcell")
            page.put(r, 1, chk.unit if r != r_row else None)
        for j, b in enumerate(bindings):
            v, lim = _a1(v_row, 2 + j, False), _a1(l_row, 2 + j, False)
            page.put(v_row, 2 + j, _guard(chk.value, chk.applies), "cell", chk.fmt, b, True)
            page.put(l_row, 2 + j, _guard(chk.limit, chk.applies), "cell", chk.fmt, b, True)
            page.put(
                r_row,
                2 + j,
                _check_result(v, lim, chk.rule, chk.applies),
                "cell",
                binding=b,
                array=True,
            )
        span = f"{_a1(v_row, 2)}:{_a1(v_row, last)}"
        worst = "MIN" if chk.rule.startswith(">") else "MAX"
        page.put(v_row, 2 + n, f'=IF(COUNT({span})=0,"—",{worst}({span}))', "calc", chk.fmt)
        head_row = rows["value"] - len(sc.sweeps) - 1
        heads = f"{_a1(head_row, 2)}:{_a1(head_row, last)}"
        # the first scenario whose value equals the worst by the = operator (exact for
        # numbers, FALSE for text): MATCH(…,0) compares numbers within a tolerance in some
        # engines, and tiny differences between two methods would all name the first
        is_worst = f"{span}={_a1(v_row, 2 + n)}"
        page.put(
            v_row, 3 + n, f'=IFERROR(INDEX({heads},MATCH(TRUE,{is_worst},0)),"—")', array=True
        )
        res = _a1(r_row, 2, False).replace("$", "")
        head = f"{get_column_letter(3)}${head_row + 1}"  # the scenario's name, row fixed
        page.ws.conditional_format(  # outline the scenario named in "worst in", only it
            v_row,
            2,
            v_row,
            last,
            {
                "type": "formula",
                "criteria": f"={head}={_a1(v_row, 3 + n)}",
                "format": book.fmt("worst"),
            },
        )
        for word, f in fills.items():
            page.ws.conditional_format(
                v_row,
                2,
                v_row,
                last,
                {"type": "formula", "criteria": f'={res}="{word}"', "format": f},
            )
    r = rows["result"] + len(checks)
    page.put(r, 0, "verdict per scenario", "section")
    for c in range(2, 2 + n):
        area = f"{_a1(rows['result'], c)}:{_a1(r - 1, c)}"
        oks = "+".join(
            f"IF({inputs[s.input].rule.ok_formula(_a1(rows['result'] - len(sc.sweeps) + k, c))},0,1)"
            for k, s in enumerate(sc.sweeps)
        )
        page.put(r, c, _overall(area, f"(inputs_invalid+{oks})"), "cell", array=True)
    book.verdict_colours(page.ws, f"{_a1(rows['result'], 2, False)}:{_a1(r, last, False)}")
    page.row = r + 2
    page.wrap(page.row, 0, 3 + n, sc.note)
    page.keep.append((top, page.row))  # the results matrix, its verdicts and the note together
    page.row += 2


def _uses(formulas: tuple[str, ...] | list[str], known: set[str]) -> set[str]:
    return set().union(*(names_in(f, known) for f in formulas if isinstance(f, str)))


def _definitions(t: Template) -> dict[str, tuple[str, ...]]:
    """Every name and placeholder key → the formula texts that define it."""
    out: dict[str, tuple[str, ...]] = {}
    for item in (*t.network, *t.results, *t.data):
        if isinstance(item, Section):
            for res in item.items:
                out[res.name] = (res.formula,)
        elif isinstance(item, Table):
            out[item.name] = tuple(
                str(v) for row in item.rows for v in (*row.cells, row.when or "") if v is not None
            )
        elif isinstance(item, Block):
            out[item.key] = (item.formula, item.when or "")
    return out


def _notes(book: Book, page: Page) -> None:
    page.head(f"{book.t.title} — method, assumptions, conventions", caution=True)
    page.need(0, 100)
    _paragraphs(page, book.t.notes, 0)


TITLE_BLOCK = (
    ("project", "Project", "DEMO — invented example"),
    ("doc_no", "Document number", "XLF-DEMO-001"),
    ("revision", "Revision", "A"),
    ("doc_date", "Date", "2026-01-01"),
    ("prepared_by", "Prepared", "(name)"),
    ("checked_by", "Checked", "(name)"),
    ("checked_date", "Date checked", "(date)"),
    ("approved_by", "Approved", "(name)"),
    ("approved_date", "Date approved", "(date)"),
)
SIGN_OFF = "not signed"  # a sign-off field still blank or holding its placeholder


def _sign_status(rule: Rule, ref: str, placeholder: str) -> str:
    """An accepted sign-off field reads "signed" only once a name or date replaces the
    placeholder; the placeholder or a blank reads "not signed" (not an input error)."""
    empty = f'OR(TRIM({ref})="",{ref}="{placeholder}")'
    return f'=IF({rule.ok_formula(ref)},IF({empty},"{SIGN_OFF}","signed"),"expects {rule.describe()}")'


def _cover(book: Book, page: Page) -> None:
    """Title block (inputs), overall verdict, key results, checks with links, scope,
    cautions — columns label | value | unit | check."""
    t = book.t
    page.head(t.title, caution=True)
    for c, w in enumerate((46, 14, 8, 22)):
        page.need(c, w)
    page.wrap(page.row, 0, 3, t.subtitle)
    page.row += 2
    page.title("Title block (inputs, shown on every printed page)")
    rule = text(80)
    for name, label, default in TITLE_BLOCK:
        r = page.row
        page.put(r, 0, label)
        page.ws.merge_range(r, 1, r, 2, default, book.fmt("input"))
        _validate(book, page, r, 1, rule, label, name, "")
        signs = name.startswith(("prepared", "checked", "approved"))
        ref = _a1(r, 1, False)
        page.put(r, 3, _sign_status(rule, ref, default) if signs else _status(rule, ref))
        book.name(name, page, r, 1)
        page.row += 1
    page.keep.append((page.row - len(TITLE_BLOCK) - 1, page.row - 1))
    page.ws.conditional_format(
        f"{_a1(page.row - len(TITLE_BLOCK), 3, False)}:{_a1(page.row - 1, 3, False)}",
        {
            "type": "text",
            "criteria": "begins with",
            "value": SIGN_OFF,
            "format": book.wb.add_format({"bg_color": VERDICT_FILL["ERROR"]}),
        },
    )
    page.row += 1
    page.title("Overall verdict")
    page.put(page.row, 0, "all checks (details on the Checks sheet)")
    page.ws.merge_range(page.row, 1, page.row, 3, "", book.fmt("verdict"))
    page.put(page.row, 1, "=verdict", "verdict")
    book.verdict_colours(page.ws, _a1(page.row, 1, False))
    page.height(page.row, 24)
    page.row += 2
    page.title("Key results")
    results = {r.name: r for s in t.results if isinstance(s, Section) for r in s.items}
    for nm in t.key_results:
        page.put(page.row, 0, results[nm].label, "wrapcell")
        page.put(page.row, 1, "=" + nm, "calc", results[nm].fmt)
        page.put(page.row, 2, results[nm].unit)
        page.row += 1
    page.keep.append((page.row - len(t.key_results) - 1, page.row - 1))
    page.row += 1
    page.title("Checks (each name links to its row)")
    first = page.row
    for chk, r in zip(t.checks, book.check_rows, strict=True):
        page.ws.write_url(page.row, 0, f"internal:Checks!A{r + 1}", book.fmt("link"), chk.label)
        page.put(page.row, 1, f"=Checks!{_a1(r, 5)}")
        page.row += 1
    book.verdict_colours(page.ws, f"{_a1(first, 1, False)}:{_a1(page.row - 1, 1, False)}")
    page.keep.append((first - 1, page.row - 1))
    page.row += 1
    _paragraphs(page, (("Scope", t.scope), ("Cautions", (CAUTION, DEMO))), 3)


def _paragraphs(page: Page, sections: Any, last_col: int) -> None:
    """Titled groups of wrapped paragraphs, each group kept on one page."""
    for title, paras in sections:
        top = page.row
        page.title(title)
        for para in paras:
            page.wrap(page.row, 0, last_col, para)
            page.row += 1
        page.keep.append((top, page.row - 1))
        page.row += 1


def build(t: Template, path: Path) -> None:
    """Write the workbook of ``t`` to ``path`` (formulas without cached values)."""
    book = Book(t, path)
    pages = {
        "Cover": Page(book, "Cover", landscape=False),
        "Inputs": Page(book, "Inputs", landscape=True),
        "Network": Page(book, "Network", landscape=True),
        "Results": Page(book, "Results", landscape=True),
        "Charts": Page(book, "Charts", landscape=False),
        "Checks": Page(book, "Checks", landscape=True),
    }
    if t.scenarios:
        pages["Scenarios"] = Page(book, "Scenarios", landscape=True)
    pages["Notes"] = Page(book, "Notes", landscape=False)
    pages["Data"] = Page(book, "Data", landscape=True, printed=False)
    if t.scenarios:
        pages["Cases"] = Page(book, "Cases", landscape=True, printed=False)
    _inputs(book, pages["Inputs"])
    _network(book, pages["Network"])
    _data(book, pages["Data"])
    _results(book, pages["Results"])
    _checks(book, pages["Checks"])
    if t.scenarios:
        pages["Cases"].head(
            f"{t.title} — one copy of the dependent calculation per scenario (hidden: not printed)"
        )
        _scenarios(book, pages["Scenarios"], pages["Cases"])
    _charts(book, pages["Charts"])
    _notes(book, pages["Notes"])
    _cover(book, pages["Cover"])
    for job in book.later:
        job()
    for p in pages.values():
        p.finish()
    book.wb.close()
