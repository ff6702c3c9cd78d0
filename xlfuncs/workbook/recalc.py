"""Headless recalculation of a workbook: load once, set inputs, evaluate, write back.

:class:`PreparedBook` is the unit both ``xlfuncs recalc`` and ``xlfuncs batch`` use: the
archive is checked and read once, the formula engine loaded once; each evaluation then
sets inputs, recalculates and either reads outputs or writes a complete copy of the book
with fresh cached values.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from openpyxl.utils import get_column_letter
from openpyxl.utils.cell import range_boundaries

from ..errors import WorkbookError
from ..tables import parse_cell
from .engine import CellError, FormulaEngine, load_engine
from .package import Package, cells_of
from .safety import DEFAULT_LIMITS, Limits, check_archive

__all__ = ["PreparedBook", "RecalcReport", "default_output", "parse_value", "recalc"]

_ADDRESS = re.compile(r"^(?:'((?:[^']|'')+)'|([^!']+))!\$?([A-Za-z]{1,3})\$?(\d+)$")


def parse_value(text: str) -> Any:
    """A value typed on the command line or in a cases file (see ``tables.parse_cell``)."""
    return parse_cell(text)


def default_output(path: str | Path) -> Path:
    p = Path(path)
    return p.with_name(f"{p.stem}.recalc{p.suffix}")


@dataclass
class RecalcReport:
    """What a recalculation did."""

    output: str
    formulas: int
    spills: int
    errors: list[str] = field(default_factory=list)  # "Sheet!A1: #DIV/0!"
    seconds: float = 0.0


class PreparedBook:
    """A workbook read and loaded into the formula engine once."""

    def __init__(self, path: str | Path, limits: Limits = DEFAULT_LIMITS) -> None:
        self.path = str(path)
        check_archive(self.path, limits)
        self._template = Package(self.path)
        for_engine = Package(self.path)
        for_engine.drop_cached_spills()
        self.engine: FormulaEngine = load_engine(for_engine.to_bytes(), self.path, limits)
        self._names = self.engine.named_ranges()
        self._sheets = self.engine.sheet_names()

    # ------------------------------------------------------------------ addressing
    def resolve(self, target: str) -> tuple[str, int, int, int, int]:
        """``Sheet!A1`` or a defined name → (sheet, row1, col1, row2, col2)."""
        t = target.strip()
        m = _ADDRESS.match(t)
        if m:
            sheet = (m.group(1) or "").replace("''", "'") or (m.group(2) or "")
            if sheet not in self._sheets:
                raise WorkbookError(self.path, f"no sheet named {sheet!r} (target {target!r})")
            c1, r1, _c2, _r2 = range_boundaries(f"{m.group(3)}{m.group(4)}")
            return sheet, int(r1), int(c1), int(r1), int(c1)
        nr = self._names.get(t.lower())
        if nr is None:
            raise WorkbookError(
                self.path, f"{target!r} is neither a defined name nor a Sheet!A1 address"
            )
        return nr.sheet, nr.first[0], nr.first[1], nr.last[0], nr.last[1]

    def input_cell(self, target: str) -> tuple[str, int, int]:
        sheet, r1, c1, r2, c2 = self.resolve(target)
        if (r1, c1) != (r2, c2):
            raise WorkbookError(self.path, f"{target!r} is a range; an input must be one cell")
        if self._template.sheet(sheet).has_formula(r1, c1):
            raise WorkbookError(
                self.path,
                f"{target!r} ({sheet}!{get_column_letter(c1)}{r1}) holds a formula; "
                "set input cells only",
            )
        return sheet, r1, c1

    # ------------------------------------------------------------------ evaluation
    def evaluate(self, sets: dict[str, Any] | None = None) -> dict[tuple[str, int, int], Any]:
        """Set inputs (target → value) and recalculate. Returns the cells that were set."""
        done: dict[tuple[str, int, int], Any] = {}
        for target, value in (sets or {}).items():
            sheet, r, c = self.input_cell(target)
            self.engine.set_value(sheet, r, c, value)
            done[(sheet, r, c)] = value
        self.engine.evaluate()
        return done

    def read(self, target: str) -> Any:
        """The value at a target: a scalar, or a 2-D list for a spilling anchor or a
        multi-cell name."""
        sheet, r1, c1, r2, c2 = self.resolve(target)
        if (r1, c1) == (r2, c2):
            ext = self.engine.spill_extent(sheet, r1, c1)
            if ext is None:
                return self.engine.value(sheet, r1, c1)
            r1, c1, r2, c2 = ext
        return [
            [self.engine.value(sheet, r, c) for c in range(c1, c2 + 1)] for r in range(r1, r2 + 1)
        ]

    # --------------------------------------------------------------------- writing
    def write(
        self, out_path: str | Path, set_cells: dict[tuple[str, int, int], Any] | None = None
    ) -> RecalcReport:
        """Write a copy of the book with fresh cached values for every formula cell and
        every spilled cell (the input file is never touched)."""
        out = Path(out_path)
        if out.resolve() == Path(self.path).resolve():
            raise WorkbookError(self.path, "refusing to overwrite the input; choose another -o")
        pkg = Package(self.path)
        n_f = n_s = 0
        errors: list[str] = []
        for (sheet, r, c), value in (set_cells or {}).items():
            pkg.sheet(sheet).set_value(r, c, value)
        for sheet in pkg.sheet_paths:
            sx = pkg.sheet(sheet)
            for fc in sx.formula_cells():
                n_f += 1
                val = self.engine.value(sheet, fc.row, fc.col)
                if isinstance(val, CellError):
                    errors.append(f"{sheet}!{get_column_letter(fc.col)}{fc.row}: {val.code}")
                legacy_array = fc.f_type == "array" and not fc.cm and ":" in fc.f_ref
                ext = (
                    None
                    if fc.f_type in ("shared", "dataTable")
                    else self.engine.spill_extent(sheet, fc.row, fc.col)
                )
                old = cells_of(fc.f_ref) if fc.f_type == "array" else set()
                if ext is not None:
                    r1, c1, r2, c2 = ext
                    ref = f"{get_column_letter(c1)}{r1}" + (
                        f":{get_column_letter(c2)}{r2}" if (r1, c1) != (r2, c2) else ""
                    )
                    if legacy_array:
                        sx.set_formula_value(fc.row, fc.col, val)
                    else:
                        cm = fc.cm or pkg.dynamic_array_cm(create=True)
                        sx.set_formula_value(fc.row, fc.col, val, spill_ref=ref, cm=cm)
                    new = {(r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1)}
                    for r, c in sorted(new - {(fc.row, fc.col)}):
                        if not sx.has_formula(r, c):
                            sx.set_value(r, c, self.engine.value(sheet, r, c))
                    n_s += 1
                    stale = old - new
                else:
                    if fc.f_type == "array" and fc.cm:
                        ref = f"{get_column_letter(fc.col)}{fc.row}"
                        sx.set_formula_value(fc.row, fc.col, val, spill_ref=ref, cm=fc.cm)
                    else:
                        sx.set_formula_value(fc.row, fc.col, val)
                    stale = old - {(fc.row, fc.col)} if not legacy_array else set()
                for r, c in stale:
                    if not sx.has_formula(r, c):
                        sx.set_value(r, c, None)
        pkg.write(out)
        return RecalcReport(str(out), n_f, n_s, errors)


def recalc(
    book: str | Path,
    out: str | Path | None = None,
    sets: dict[str, Any] | None = None,
    limits: Limits = DEFAULT_LIMITS,
) -> RecalcReport:
    """Recalculate ``book`` (with ``sets`` applied) into ``out`` (default: BOOK.recalc.xlsx)."""
    t0 = time.perf_counter()
    pb = PreparedBook(book, limits)
    done = pb.evaluate(sets)
    report = pb.write(out or default_output(book), done)
    report.seconds = time.perf_counter() - t0
    return report
