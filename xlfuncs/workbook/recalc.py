"""Headless recalculation of a workbook: load once, set inputs, evaluate, write back.

:class:`PreparedBook` is the unit both ``xlfuncs recalc`` and ``xlfuncs batch`` use: the
archive is checked and read once, the formula engine loaded once; each evaluation then
starts from the book as it was loaded (every input set by an earlier evaluation is put
back first), sets inputs — checked against the cells' data validation —, recalculates and
either reads outputs or writes a complete copy of the book with fresh cached values.

Exit statuses of ``xlfuncs recalc`` (see docs/ENGINE.md): 0 written and no formula cell
holds an error; 1 written, but formula cells hold errors (their count and the first cells
are listed); 2 refused, nothing written; 130 interrupted.
"""

from __future__ import annotations

import difflib
import re
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..errors import WorkbookError
from ..tables import parse_cell
from .cells import col_index, col_letter
from .engine import MAX_COLS, MAX_ROWS, CellError, FormulaEngine, engine_formula, load_engine
from .package import Package, cells_of, check_output_file
from .safety import DEFAULT_LIMITS, Limits, read_archive
from .validation import InputValueError, Rule, coerce, parse_rules, rule_for, violation

__all__ = [
    "PreparedBook",
    "RecalcReport",
    "cell_error",
    "default_output",
    "parse_value",
    "recalc",
]

_ADDRESS = re.compile(r"^(?:'((?:[^']|'')+)'|([^!']+))!\$?([A-Za-z]{1,4})\$?(\d+)$")
_REF = re.compile(
    r"^(?:(?:'((?:[^']|'')+)'|([^!':]+))!)?"
    r"(?:\$?([A-Za-z]{1,3})\$?(\d+)(?::\$?([A-Za-z]{1,3})\$?(\d+))?"
    r"|\$?([A-Za-z]{1,3}):\$?([A-Za-z]{1,3})|\$?(\d+):\$?(\d+))$"
)


def parse_value(text: str) -> Any:
    """A value typed on the command line or in a cases file (see ``tables.parse_cell``)."""
    return parse_cell(text)


def default_output(path: str | Path) -> Path:
    p = Path(path)
    return p.with_name(f"{p.stem}.recalc{p.suffix}")


def cell_error(value: Any) -> str | None:
    """The error a cell value shows — an Excel error code or one of our ``ERROR:`` lines —
    or None for a value."""
    if isinstance(value, CellError):
        return value.code
    if isinstance(value, str) and value.startswith("ERROR: "):
        return value
    return None


@dataclass
class RecalcReport:
    """What a recalculation did."""

    output: str
    formulas: int
    spills: int
    errors: list[str] = field(default_factory=list)  # "Sheet!A1: #DIV/0!"
    seconds: float = 0.0
    notes: list[str] = field(default_factory=list)  # e.g. validation warnings


def _close(word: str, choices: list[str]) -> str:
    near = difflib.get_close_matches(word, choices, n=1, cutoff=0.6)
    if not near:
        lower = {c.lower(): c for c in choices}
        near = [lower[m] for m in difflib.get_close_matches(word.lower(), list(lower), n=1)]
    return f"did you mean {near[0]!r}? " if near else ""


class PreparedBook:
    """A workbook read and loaded into the formula engine once."""

    def __init__(self, path: str | Path, limits: Limits = DEFAULT_LIMITS) -> None:
        self.path = str(path)
        self.limits = limits
        archive = read_archive(self.path, limits)
        self._archive = archive
        self._template = Package(archive).parse_all()  # never edited: copies are
        for_engine = self._template.copy()
        for_engine.drop_cached_spills()
        self._rewrite_for_engine(for_engine)
        self.engine: FormulaEngine = load_engine(for_engine.to_bytes(), self.path, limits)
        self._names = self.engine.named_ranges()
        self._sheets = self.engine.sheet_names()
        self._formula_cells = [
            (sheet, fc.row, fc.col)
            for sheet in self._template.sheet_paths
            for fc in self._template.sheet(sheet).formula_cells()
        ]
        self._rules: dict[str, list[Rule]] = {}
        self._pristine: dict[tuple[str, int, int], Any] = {}
        self.notes: list[str] = []

    # ----------------------------------------------------------- the engine's copy
    def _rewrite_for_engine(self, pkg: Package) -> None:
        """Skipped arguments and oversized reference arguments of ``CKT_`` calls, marked
        for the adapter (see ``engine.engine_formula``); the written book keeps its text."""
        names = pkg.defined_names()
        extents: dict[str, tuple[int, int]] = {}

        def extent(sheet: str) -> tuple[int, int]:
            if sheet not in extents:
                extents[sheet] = (
                    pkg.sheet(sheet).used_extent() if sheet in pkg.sheet_paths else (0, 0)
                )
            return extents[sheet]

        for sheet in pkg.sheet_paths:
            sx = pkg.sheet(sheet)

            def size(ref: str, sheet: str = sheet, depth: int = 0) -> int | None:
                m = _REF.match(ref.strip())
                if m is None:
                    if depth == 0 and ref.strip().lower() in names:
                        text, _scope = names[ref.strip().lower()]
                        return size(text, sheet, 1)
                    return None
                sh = (m.group(1) or "").replace("''", "'") or m.group(2) or sheet
                last_row, last_col = extent(sh)
                if m.group(3):
                    c1, r1 = col_index(m.group(3).upper()), int(m.group(4))
                    c2 = col_index((m.group(5) or m.group(3)).upper())
                    r2 = int(m.group(6) or m.group(4))
                    return (abs(r2 - r1) + 1) * (abs(c2 - c1) + 1)
                if m.group(7):  # whole columns: the engine reads the used rows only
                    c1 = col_index(m.group(7).upper())
                    c2 = col_index(m.group(8).upper())
                    return last_row * (abs(c2 - c1) + 1)
                r1, r2 = int(m.group(9)), int(m.group(10))  # whole rows
                return last_col * (abs(r2 - r1) + 1)

            for r, c, text in sx.formula_texts():
                new = engine_formula(text, size, self.limits)
                if new is not None:
                    sx.replace_formula_text(r, c, new)

    # ------------------------------------------------------------------ addressing
    def input_names(self) -> list[str]:
        """Defined names of single cells that hold no formula: the book's inputs."""
        out = []
        for nr in self._names.values():
            sheets = self._template.sheet_paths
            if nr.is_cell and nr.sheet in sheets:
                if self._template.sheet(nr.sheet).has_formula(*nr.first):
                    continue
                out.append(nr.name)
        return sorted(out, key=str.lower)

    def _unknown(self, target: str, inputs_only: bool) -> WorkbookError:
        names = (
            self.input_names()
            if inputs_only
            else sorted((n.name for n in self._names.values()), key=str.lower)
        )
        what = "inputs" if inputs_only else "names"
        listed = ", ".join(names) if names else "(none defined)"
        return WorkbookError(
            self.path,
            f"{target!r} is neither a defined name nor a Sheet!A1 address; "
            f"{_close(target, names)}{what}: {listed}",
        )

    def resolve(self, target: str, inputs_only: bool = False) -> tuple[str, int, int, int, int]:
        """``Sheet!A1`` or a defined name → (sheet, row1, col1, row2, col2)."""
        t = target.strip()
        m = _ADDRESS.match(t)
        if m:
            sheet = (m.group(1) or "").replace("''", "'") or (m.group(2) or "")
            if sheet not in self._sheets:
                raise WorkbookError(
                    self.path,
                    f"no sheet named {sheet!r} (in {target!r}); {_close(sheet, self._sheets)}"
                    f"sheets: {', '.join(self._sheets)}",
                )
            letters, row = m.group(3).upper(), int(m.group(4))
            col = col_index(letters) if len(letters) <= 3 else MAX_COLS + 1
            if not (1 <= row <= MAX_ROWS and 1 <= col <= MAX_COLS):
                raise WorkbookError(
                    self.path,
                    f"{target!r} is outside the sheet (rows 1…{MAX_ROWS}, columns A…XFD)",
                )
            return sheet, row, col, row, col
        nr = self._names.get(t.lower())
        if nr is None:
            raise self._unknown(target, inputs_only)
        return nr.sheet, nr.first[0], nr.first[1], nr.last[0], nr.last[1]

    def _label(self, target: str, sheet: str, r: int, c: int) -> str:
        addr = f"{sheet}!{col_letter(c)}{r}"
        if _ADDRESS.match(target.strip()):
            for nr in self._names.values():
                if nr.is_cell and nr.sheet == sheet and nr.first == (r, c):
                    return f"{nr.name} ({addr})"
            return addr
        return f"{target.strip()} ({addr})"

    def input_cell(self, target: str) -> tuple[str, int, int]:
        sheet, r1, c1, r2, c2 = self.resolve(target, inputs_only=True)
        if (r1, c1) != (r2, c2):
            raise WorkbookError(self.path, f"{target!r} is a range; an input must be one cell")
        if self._template.sheet(sheet).has_formula(r1, c1):
            raise WorkbookError(
                self.path,
                f"{target!r} ({sheet}!{col_letter(c1)}{r1}) holds a formula; set input cells only",
            )
        return sheet, r1, c1

    # ------------------------------------------------------------ data validation
    def rule(self, sheet: str, row: int, col: int) -> Rule | None:
        if sheet not in self._rules:
            part = self._template.sheet_paths.get(sheet)
            raw = self._template.data.get(part, b"") if part else b""
            self._rules[sheet] = parse_rules(raw.decode("utf-8", "replace"))
        return rule_for(self._rules[sheet], row, col)

    def _bound(self, sheet: str) -> Any:
        def bound(text: str) -> float:
            t = text.strip().lstrip("=")
            try:
                return float(t)
            except ValueError:
                pass
            key = t if "!" in t or t.lower() in self._names else f"{_q(sheet)}!{t}"
            try:
                sh, r1, c1, r2, c2 = self.resolve(key)
            except WorkbookError:
                raise ValueError(f"bound {text!r}") from None
            v = self.engine.value(sh, r1, c1)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or (r1, c1) != (r2, c2):
                raise ValueError(f"bound {text!r} = {v!r}")
            return float(v)

        return bound

    def _list_items(self, sheet: str) -> Any:
        def items(text: str) -> list[Any]:
            t = text.strip()
            if t.startswith('"') and t.endswith('"'):
                out: list[Any] = []
                for s in t[1:-1].replace('""', '"').split(","):
                    s = s.strip()
                    try:
                        out.append(float(s))
                    except ValueError:
                        out.append(s)
                return out
            t = t.lstrip("=")
            ref = t if "!" in t or t.lower() in self._names else f"{_q(sheet)}!{t}"
            try:
                sh, r1, c1, r2, c2 = self._resolve_range(ref)
            except WorkbookError:
                return []
            return [
                v
                for r in range(r1, r2 + 1)
                for c in range(c1, c2 + 1)
                if (v := self.engine.value(sh, r, c)) not in (None, "")
            ]

        return items

    def _resolve_range(self, ref: str) -> tuple[str, int, int, int, int]:
        m = _REF.match(ref)
        if m and m.group(3):
            sheet = (m.group(1) or "").replace("''", "'") or m.group(2) or ""
            c1, r1 = col_index(m.group(3).upper()), int(m.group(4))
            c2 = col_index((m.group(5) or m.group(3)).upper())
            r2 = int(m.group(6) or m.group(4))
            return sheet, r1, c1, r2, c2
        return self.resolve(ref)

    # ------------------------------------------------------------------ evaluation
    def evaluate(self, sets: dict[str, Any] | None = None) -> dict[tuple[str, int, int], Any]:
        """Start from the book as loaded, set inputs (target → value) checked against their
        data validation, and recalculate. Returns the cells that were set."""
        planned: dict[tuple[str, int, int], tuple[str, Any, Rule | None, Any]] = {}
        for target, value in (sets or {}).items():
            sheet, r, c = self.input_cell(target)
            rule = self.rule(sheet, r, c)
            planned[(sheet, r, c)] = (target, coerce(rule, value), rule, value)
        for key in list(self._pristine):  # cells an earlier case set go back first
            if key not in planned:
                self.engine.restore(*key, self._pristine.pop(key))
        done: dict[tuple[str, int, int], Any] = {}
        for (sheet, r, c), (_target, value, _rule, _typed) in planned.items():
            if (sheet, r, c) not in self._pristine:
                self._pristine[(sheet, r, c)] = self.engine.snapshot(sheet, r, c)
            self.engine.set_value(sheet, r, c, value)
            done[(sheet, r, c)] = value
        self.engine.evaluate()
        self.notes = []
        for (sheet, r, c), (target, value, rule, typed) in planned.items():
            if rule is None:
                continue
            problem = violation(rule, value, self._bound(sheet), self._list_items(sheet), typed)
            if problem is None:
                continue
            where = self._label(target, sheet, r, c)
            if rule.error_style in ("warning", "information"):
                self.notes.append(f"{where} {problem} (the book only warns)")
                continue
            raise InputValueError(self.path, where, problem)
        return done

    def formula_errors(self) -> list[str]:
        """``Sheet!A1: code`` for every formula cell whose value is an error."""
        out = []
        for sheet, r, c in self._formula_cells:
            bad = cell_error(self.engine.value(sheet, r, c))
            if bad is not None:
                out.append(f"{sheet}!{col_letter(c)}{r}: {bad}")
        return out

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
        pkg = self._template.copy()
        n_f = n_s = 0
        errors: list[str] = []
        for (sheet, r, c), value in (set_cells or {}).items():
            pkg.sheet(sheet).set_value(r, c, value)
        for sheet in pkg.sheet_paths:
            sx = pkg.sheet(sheet)
            for fc in sx.formula_cells():
                n_f += 1
                val = self.engine.value(sheet, fc.row, fc.col)
                bad = cell_error(val)
                if bad is not None:
                    errors.append(f"{sheet}!{col_letter(fc.col)}{fc.row}: {bad}")
                legacy_array = fc.f_type == "array" and not fc.cm and ":" in fc.f_ref
                ext = (
                    None
                    if fc.f_type in ("shared", "dataTable")
                    else self.engine.spill_extent(sheet, fc.row, fc.col)
                )
                old = cells_of(fc.f_ref) if fc.f_type == "array" else set()
                if ext is not None:
                    r1, c1, r2, c2 = ext
                    ref = f"{col_letter(c1)}{r1}" + (
                        f":{col_letter(c2)}{r2}" if (r1, c1) != (r2, c2) else ""
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
                        ref = f"{col_letter(fc.col)}{fc.row}"
                        sx.set_formula_value(fc.row, fc.col, val, spill_ref=ref, cm=fc.cm)
                    else:
                        sx.set_formula_value(fc.row, fc.col, val)
                    stale = old - {(fc.row, fc.col)} if not legacy_array else set()
                for r, c in stale:
                    if not sx.has_formula(r, c):
                        sx.set_value(r, c, None)
        pkg.write(out)
        return RecalcReport(str(out), n_f, n_s, errors, notes=list(self.notes))


def _q(sheet: str) -> str:
    return (
        sheet
        if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_.]*", sheet)
        else ("'" + sheet.replace("'", "''") + "'")
    )


def recalc(
    book: str | Path,
    out: str | Path | None = None,
    sets: dict[str, Any] | None = None,
    limits: Limits = DEFAULT_LIMITS,
) -> RecalcReport:
    """Recalculate ``book`` (with ``sets`` applied) into ``out`` (default: BOOK.recalc.xlsx).

    Raises :class:`WorkbookError` (nothing written) for a file, a target or a value that
    cannot be used; formula cells that end in errors are listed in the report."""
    t0 = time.perf_counter()
    target = Path(out) if out is not None else default_output(book)
    check_output_file(target)
    pb = PreparedBook(book, limits)  # the input is checked first
    want = Path(book).suffix.lower()
    if target.suffix.lower() != want:  # a workbook named .csv (or .xlsm without its macros)
        raise WorkbookError(
            str(target), f"the output is a workbook like the input: give it the ending {want}"
        )
    done = pb.evaluate(sets)
    report = pb.write(target, done)
    report.seconds = time.perf_counter() - t0
    return report
