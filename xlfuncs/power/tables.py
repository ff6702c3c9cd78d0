"""The equipment, spectra and options tables of a three-phase study → validated records.

Tables arrive as the core's tables do (README "The tables"): a 2-D list, header row first,
empty cells ``None``, numbers as floats, text as ``str``; headers are case-insensitive
(spaces become ``_``, a trailing ``(note)`` is ignored), column order is free, blank rows
are skipped, rows are counted as the user sees them (header = row 1).

Differences from the parts table, because one equipment table holds every kind of item:

* a cell filled in a column that the row's kind does not use is refused (a rating typed in
  the wrong column must not silently vanish);
* headers starting with ``note``, ``comment``, ``description`` or ``remark`` are notes and
  ignored; another unknown header that is close to a column name (``steps_in``) is refused
  with the likely intended name, other unknown headers are ignored;
* numbers are in the column's unit (``kv`` in kV, ``kva`` in kVA …); text may carry the
  unit (``480 V``, ``13.8 kV``, ``1.5 MVA``), percentages may carry ``%``; a bare SI prefix
  (``13.8k`` in a kV column) is ambiguous and refused.
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from ..errors import EXCEL_ERRORS, InputError, TableError
from ..units import parse_number
from .vector_group import VectorGroup, parse_vector_group

__all__ = [
    "COLUMNS",
    "KINDS",
    "Equipment",
    "Item",
    "PowerOptions",
    "Spectra",
    "SpectrumLine",
    "read_equipment",
    "read_power_options",
    "read_spectra",
]

Cell = Any


# ------------------------------------------------------------------------------ columns
@dataclass(frozen=True)
class Column:
    """How one equipment column is read.

    ``unit``/``scale``: text with a unit symbol is parsed by :func:`xlfuncs.parse_number`
    and divided by ``scale`` (``kv``: symbol V, scale 1e3). ``low``/``high`` bound the
    value (``low_open``: the bound itself is refused).
    """

    label: str
    kind: str = "number"  # number | integer | text
    unit: str | None = None
    scale: float = 1.0
    percent: bool = False
    low: float | None = None
    low_open: bool = True
    high: float | None = None
    high_open: bool = False


COLUMNS: dict[str, Column] = {
    "name": Column("an item name", "text"),
    "kind": Column("a kind", "text"),
    "bus": Column("a bus name", "text"),
    "bus_to": Column("a bus name", "text"),
    "kv": Column("kV line-to-line", unit="V", scale=1e3, low=0),
    "kv_hv": Column("kV line-to-line of the HV winding", unit="V", scale=1e3, low=0),
    "kv_lv": Column("kV line-to-line of the LV winding", unit="V", scale=1e3, low=0),
    "mva_sc": Column("three-phase short-circuit MVA", unit="VA", scale=1e6, low=0),
    "mva_sc_1ph": Column(
        "single-phase short-circuit MVA (√3·kV·I_k1)", unit="VA", scale=1e6, low=0
    ),
    "x_r": Column("an X/R ratio", low=0),
    "kva": Column("kVA", unit="VA", scale=1e3, low=0),
    "z_pct": Column("percent impedance", percent=True, low=0.5, low_open=False, high=100),
    "z0_pct": Column(
        "percent zero-sequence impedance", percent=True, low=0, high=100, high_open=True
    ),
    "connection": Column("a connection", "text"),
    "length_km": Column("km", low=0),
    "r_ohm_km": Column("Ω/km", low=0, low_open=False),
    "x_ohm_km": Column("Ω/km", low=0, low_open=False),
    "c_uf_km": Column("µF/km", low=0, low_open=False),
    "r0_ohm_km": Column("Ω/km", low=0, low_open=False),
    "x0_ohm_km": Column("Ω/km", low=0, low_open=False),
    "c0_uf_km": Column("µF/km", low=0, low_open=False),
    "kvar": Column("kvar", unit="var", scale=1e3, low=0, low_open=False),
    "steps": Column("a whole number of steps", "integer", low=1, low_open=False),
    "steps_on": Column("a whole number of steps", "integer", low=0, low_open=False),
    "tuned_order": Column("a tuned harmonic order", low=1),
    "p_pct": Column("percent reactor ratio", percent=True, low=0.1, low_open=False, high=100),
    "q_factor": Column("a quality factor", low=0),
    "x_pct": Column("percent reactance", percent=True, low=0.5, low_open=False, high=100),
    "kw": Column("kW", unit="W", scale=1e3, low=0, low_open=False),
    "pf": Column("a power factor", low=0, high=1, high_open=False),
    "model": Column("a load model", "text"),
    "pulses": Column("a pulse number", "integer", low=6, low_open=False, high=48),
    "spectrum": Column("a spectrum name", "text"),
}
_ALIASES = {"type": "kind", "item": "name", "from_bus": "bus", "to_bus": "bus_to"}
_NOTE_PREFIXES = ("note", "comment", "description", "remark")


@dataclass(frozen=True)
class KindSpec:
    required: tuple[str, ...]
    optional: tuple[str, ...]
    branch: bool = False
    help: str = ""


KINDS: dict[str, KindSpec] = {
    "supply": KindSpec(("kv", "mva_sc", "x_r"), ("mva_sc_1ph",), help="utility source"),
    "transformer": KindSpec(
        ("kva", "kv_hv", "kv_lv", "z_pct", "x_r", "connection"),
        ("z0_pct",),
        branch=True,
        help="two-winding transformer, HV at bus, LV at bus_to",
    ),
    "cable": KindSpec(
        ("length_km", "r_ohm_km", "x_ohm_km"),
        ("c_uf_km", "r0_ohm_km", "x0_ohm_km", "c0_uf_km"),
        branch=True,
        help="cable or line",
    ),
    "capacitor": KindSpec(
        ("kvar", "kv", "connection"), ("steps", "steps_on"), help="shunt capacitor bank"
    ),
    "filter": KindSpec(
        ("kvar", "kv", "q_factor", "connection"),
        ("tuned_order", "p_pct"),
        help="single-tuned filter: capacitor with a series reactor",
    ),
    "motor": KindSpec(("kva", "kv", "x_pct", "x_r"), ("kw", "pf"), help="induction motor"),
    "load": KindSpec(("kw", "kv", "model"), ("kvar", "pf", "connection"), help="linear load"),
    "converter": KindSpec(
        ("kw", "kv", "pf"), ("pulses", "spectrum", "connection"), help="converter or drive"
    ),
}
_KIND_HELP = "expected one of " + ", ".join(KINDS)
_SHUNT_CONNECTIONS = ("YN", "Y", "D")


# ------------------------------------------------------------------------------ records
@dataclass(frozen=True)
class Item:
    """One equipment row, parsed. ``values`` maps canonical column → float, int or str
    (``connection`` of a transformer → :class:`VectorGroup`); absent optional columns are
    missing from it."""

    row: int
    name: str
    kind: str
    bus: str
    bus_to: str | None
    values: Mapping[str, Any] = field(compare=False)

    def __getitem__(self, column: str) -> Any:
        return self.values[column]

    def get(self, column: str, default: Any = None) -> Any:
        return self.values.get(column, default)

    @property
    def group(self) -> VectorGroup:
        """The vector group of a transformer."""
        vg = self.values["connection"]
        assert isinstance(vg, VectorGroup)
        return vg

    @property
    def connection(self) -> str:
        """``YN``, ``Y`` or ``D`` for a shunt item (three-wire kinds default to ``Y``:
        no zero-sequence path)."""
        return str(self.values.get("connection", "Y"))

    def where(self, column: str | None = None) -> tuple[str, int, str | None]:
        return ("equipment", self.row, column)


@dataclass(frozen=True)
class Equipment:
    """Every item, and the buses in order of first appearance (spelling of that first
    appearance; bus names match case-insensitively)."""

    items: tuple[Item, ...]
    buses: tuple[str, ...]
    first_use: Mapping[str, tuple[int, str]] = field(compare=False)

    def item(self, name: Any) -> Item:
        key = str(name).strip().lower()
        for it in self.items:
            if it.name.lower() == key:
                return it
        raise InputError(
            "argument",
            None,
            "item",
            name,
            "no item of that name in the equipment table (items: "
            + ", ".join(i.name for i in self.items[:12])
            + (" …" if len(self.items) > 12 else "")
            + ")",
        )

    def bus(self, name: Any) -> str:
        key = str(name).strip().lower()
        for b in self.buses:
            if b.lower() == key:
                return b
        raise InputError(
            "argument",
            None,
            "bus",
            name,
            "no bus of that name in the equipment table (buses: "
            + ", ".join(self.buses[:12])
            + (" …" if len(self.buses) > 12 else "")
            + ")",
        )

    def of_kind(self, kind: str) -> tuple[Item, ...]:
        return tuple(i for i in self.items if i.kind == kind)


@dataclass(frozen=True)
class SpectrumLine:
    row: int
    order: int
    pct: float
    phase_deg: float


@dataclass(frozen=True)
class Spectra:
    """Named spectra: lowercase name → (name as written, lines in table order)."""

    table: Mapping[str, tuple[str, tuple[SpectrumLine, ...]]] = field(
        default_factory=lambda: MappingProxyType({})
    )

    def get(self, name: str) -> tuple[str, tuple[SpectrumLine, ...]] | None:
        return self.table.get(name.strip().lower())


@dataclass(frozen=True)
class PowerOptions:
    """Options of a three-phase study.

    Attributes
    ----------
    fundamental_hz : float
        System frequency (required: 50 or 60 in practice).
    max_order : int
        Highest harmonic order studied and counted in THD (default 50, the IEEE Std
        519-2014 range).
    """

    fundamental_hz: float
    max_order: int = 50


# ------------------------------------------------------------------------ generic reading
_PAREN = re.compile(r"\(.*\)\s*$")


def _norm_header(cell: Cell) -> str:
    text = "" if cell is None else str(cell)
    text = _PAREN.sub("", text).strip().lower()
    return re.sub(r"[\s\-]+", "_", text)


def _blank(cell: Cell) -> bool:
    return cell is None or (isinstance(cell, str) and cell.strip() == "")


def _rows(data: Any, table: str) -> list[list[Cell]]:
    if data is None:
        raise TableError(table, "no range given (expected a header row and at least one row)")
    if not isinstance(data, (list, tuple)):
        raise TableError(table, f"expected a range with a header row, got a single value {data!r}")
    rows: list[list[Cell]] = []
    for r in data:
        if not isinstance(r, (list, tuple)):
            raise TableError(
                table, "expected a 2-D range (header row + rows), got a single row or column"
            )
        rows.append(list(r))
    if not rows:
        raise TableError(table, "empty range (expected a header row and at least one row)")
    width = max(len(r) for r in rows)
    return [r + [None] * (width - len(r)) for r in rows]


def _header(
    rows: list[list[Cell]], table: str, known: Sequence[str], aliases: Mapping[str, str]
) -> dict[str, int]:
    cols: dict[str, int] = {}
    for idx, cell in enumerate(rows[0]):
        if isinstance(cell, str) and cell.strip().upper() in EXCEL_ERRORS:
            raise TableError(table, f"header cell {idx + 1} holds the Excel error {cell.strip()}")
        key = _norm_header(cell)
        if not key or key.startswith(_NOTE_PREFIXES):
            continue
        canon = key if key in known else aliases.get(key)
        if canon is None:
            close = difflib.get_close_matches(key, list(known), n=1, cutoff=0.8)
            if close:
                raise TableError(
                    table,
                    f"column {cell!r} (column {idx + 1}) is not a column of this table — "
                    f"did you mean {close[0]!r}? (headers starting with 'note' are ignored)",
                )
            continue
        if canon in cols:
            raise TableError(
                table,
                f"column {canon!r} appears twice in the header "
                f"(columns {cols[canon] + 1} and {idx + 1})",
            )
        cols[canon] = idx
    return cols


def _is_excel_error(cell: Cell) -> bool:
    return isinstance(cell, str) and cell.strip().upper() in EXCEL_ERRORS


def _text(cell: Cell, table: str, row: int | None, column: str, what: str) -> str:
    if isinstance(cell, bool) or (isinstance(cell, float) and not math.isfinite(cell)):
        raise InputError(table, row, column, cell, f"expected {what}")
    if _is_excel_error(cell):
        raise InputError(
            table, row, column, cell, f"the cell holds an Excel error; expected {what}"
        )
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    if isinstance(cell, (list, tuple, dict)):
        raise InputError(table, row, column, cell, f"expected {what}")
    return str(cell).strip()


def _number(cell: Cell, table: str, row: int | None, column: str, spec: Column) -> float:
    where = (table, row, column)
    if isinstance(cell, bool):
        raise InputError(*where, cell, "expected a number, not TRUE/FALSE")
    if isinstance(cell, (int, float)):
        value = float(cell)
    elif isinstance(cell, str):
        s = cell.strip()
        if _is_excel_error(s):
            raise InputError(*where, cell, f"the cell holds an Excel error; expected {spec.label}")
        if spec.percent and s.endswith("%"):
            s = s[:-1].strip()
        try:
            value = float(s)
        except ValueError:
            if spec.unit is None:
                raise InputError(*where, cell, f"expected a plain number ({spec.label})") from None
            si = parse_number(s, unit=spec.unit, table=table, row=row, column=column)
            try:
                parse_number(s, unit=None, table=table, row=row, column=column)
            except InputError:
                value = si / spec.scale  # the text named its unit: converted
            else:
                raise InputError(
                    *where,
                    cell,
                    f"ambiguous: give a plain number in {spec.label} or the value with its unit "
                    f"(e.g. '13.8 kV')",
                ) from None
    else:
        raise InputError(*where, cell, f"expected a number ({spec.label})")
    if not math.isfinite(value):
        raise InputError(*where, cell, "expected a finite number")
    if spec.low is not None and (value < spec.low or (spec.low_open and value == spec.low)):
        rel = ">" if spec.low_open else "≥"
        hint = ""
        if spec.percent:
            hint = " (in percent: 5.75 for 5.75 %)"
        raise InputError(*where, cell, f"expected {spec.label} {rel} {spec.low:g}{hint}")
    if spec.high is not None and (value > spec.high or (spec.high_open and value == spec.high)):
        rel = "<" if spec.high_open else "≤"
        raise InputError(*where, cell, f"expected {spec.label} {rel} {spec.high:g}")
    if spec.kind == "integer" and not value.is_integer():
        raise InputError(*where, cell, f"expected {spec.label}")
    return int(value) if spec.kind == "integer" else value


# ------------------------------------------------------------------------------ equipment
def read_equipment(data: Any) -> Equipment:
    """Parse the equipment table (see docs/THREE_PHASE.md for every column)."""
    rows = _rows(data, "equipment")
    cols = _header(rows, "equipment", list(COLUMNS), _ALIASES)
    missing = [c for c in ("name", "kind", "bus") if c not in cols]
    if missing:
        raise TableError(
            "equipment", f"missing column{'s' * (len(missing) > 1)} {', '.join(missing)}"
        )
    body = [(i + 2, r) for i, r in enumerate(rows[1:]) if not all(_blank(c) for c in r)]
    if not body:
        raise TableError("equipment", "no rows below the header")
    items: list[Item] = []
    seen: dict[str, int] = {}
    buses: dict[str, str] = {}
    first_use: dict[str, tuple[int, str]] = {}

    def bus_name(cell: Cell, rownum: int, column: str) -> str:
        text = _text(cell, "equipment", rownum, column, "a bus name")
        if text.lower() == "gnd":
            raise InputError(
                "equipment",
                rownum,
                column,
                cell,
                "'GND' is the reference (neutral/earth) of the sequence networks; give the "
                "bus another name",
            )
        canon = buses.setdefault(text.lower(), text)
        first_use.setdefault(canon, (rownum, column))
        return canon

    for rownum, r in body:

        def cell(column: str, r: list[Cell] = r) -> Cell:
            idx = cols.get(column)
            if idx is None:
                return None
            c = r[idx]
            return None if _blank(c) else c

        name_cell = cell("name")
        if name_cell is None:
            raise InputError("equipment", rownum, "name", expected="missing item name")
        name = _text(name_cell, "equipment", rownum, "name", "an item name")
        if name.lower() in seen:
            raise InputError(
                "equipment",
                rownum,
                "name",
                name,
                f"duplicate name (already used in row {seen[name.lower()]})",
            )
        seen[name.lower()] = rownum
        kind_cell = cell("kind")
        if kind_cell is None:
            raise InputError("equipment", rownum, "kind", expected=_KIND_HELP)
        kind = _text(kind_cell, "equipment", rownum, "kind", "a kind").lower()
        if kind not in KINDS:
            raise InputError("equipment", rownum, "kind", kind_cell, _KIND_HELP)
        spec = KINDS[kind]
        bus_cell = cell("bus")
        if bus_cell is None:
            raise InputError(
                "equipment", rownum, "bus", expected=f"missing bus of {kind} {name!r}"
            )
        bus = bus_name(bus_cell, rownum, "bus")
        bus_to: str | None = None
        to_cell = cell("bus_to")
        if spec.branch:
            if "bus_to" not in cols:
                raise TableError("equipment", f"missing column bus_to (the far end of a {kind})")
            if to_cell is None:
                raise InputError(
                    "equipment",
                    rownum,
                    "bus_to",
                    expected=f"missing the far-end bus of {kind} {name!r}",
                )
            bus_to = bus_name(to_cell, rownum, "bus_to")
            if bus_to == bus:
                raise InputError(
                    "equipment",
                    rownum,
                    "bus_to",
                    to_cell,
                    f"both ends on bus {bus!r}; expected two buses",
                )
        elif to_cell is not None:
            raise InputError(
                "equipment",
                rownum,
                "bus_to",
                to_cell,
                f"a {kind} connects to one bus; bus_to is for transformers and cables",
            )
        allowed = set(spec.required) | set(spec.optional)
        values: dict[str, Any] = {}
        for column in COLUMNS:
            if column in ("name", "kind", "bus", "bus_to"):
                continue
            c = cell(column)
            if c is None:
                if column in spec.required:
                    if column not in cols:
                        raise TableError(
                            "equipment", f"missing column {column} (needed by {kind} rows)"
                        )
                    raise InputError(
                        "equipment",
                        rownum,
                        column,
                        expected=f"missing {COLUMNS[column].label} for {kind} {name!r}",
                    )
                continue
            if column not in allowed:
                raise InputError(
                    "equipment",
                    rownum,
                    column,
                    c,
                    f"a {kind} takes no {column} (its columns: {', '.join(spec.required + spec.optional)})",
                )
            values[column] = _read_value(c, rownum, column, kind)
        _check_kind(kind, name, rownum, values)
        items.append(Item(rownum, name, kind, bus, bus_to, MappingProxyType(values)))
    if not any(i.kind == "supply" for i in items):
        raise TableError(
            "equipment", "no supply row: the fundamental solve needs at least one supply"
        )
    return Equipment(tuple(items), tuple(buses.values()), MappingProxyType(first_use))


def _read_value(c: Cell, rownum: int, column: str, kind: str) -> Any:
    spec = COLUMNS[column]
    if spec.kind != "text":
        return _number(c, "equipment", rownum, column, spec)
    text = _text(c, "equipment", rownum, column, spec.label)
    if column == "connection":
        if kind == "transformer":
            return parse_vector_group(text, "equipment", rownum)
        up = text.upper()
        if up not in _SHUNT_CONNECTIONS:
            raise InputError(
                "equipment",
                rownum,
                column,
                c,
                "expected YN (grounded star), Y (star, neutral not grounded) or D (delta)",
            )
        return up
    if column == "model":
        low = text.lower()
        if low not in ("parallel", "series"):
            raise InputError(
                "equipment", rownum, column, c, "expected parallel (R ‖ L) or series (R + L)"
            )
        return low
    return text


def _check_kind(kind: str, name: str, row: int, v: dict[str, Any]) -> None:
    def need(ok: bool, column: str, value: Any, expected: str) -> None:
        if not ok:
            raise InputError("equipment", row, column, value, expected)

    if kind == "supply" and "mva_sc_1ph" in v:
        need(
            v["mva_sc_1ph"] < 1.5 * v["mva_sc"],
            "mva_sc_1ph",
            v["mva_sc_1ph"],
            f"below 1.5 × mva_sc ({1.5 * v['mva_sc']:g}): a larger single-phase level would "
            "need a negative zero-sequence impedance",
        )
    if kind == "cable":
        need(
            v["r_ohm_km"] > 0 or v["x_ohm_km"] > 0,
            "x_ohm_km",
            v["x_ohm_km"],
            "a cable needs r_ohm_km or x_ohm_km above 0",
        )
        if ("r0_ohm_km" in v) != ("x0_ohm_km" in v):
            col = "x0_ohm_km" if "r0_ohm_km" in v else "r0_ohm_km"
            need(False, col, None, "give r0_ohm_km and x0_ohm_km together")
        if "r0_ohm_km" in v:
            need(
                v["r0_ohm_km"] > 0 or v["x0_ohm_km"] > 0,
                "x0_ohm_km",
                v["x0_ohm_km"],
                "r0_ohm_km or x0_ohm_km must be above 0",
            )
        if "c0_uf_km" in v and "c_uf_km" not in v:
            need(False, "c_uf_km", None, "c0_uf_km needs c_uf_km (the positive-sequence value)")
    if kind in ("capacitor", "filter"):
        need(v["kvar"] > 0, "kvar", v["kvar"], "expected the rating in kvar > 0")
    if kind == "capacitor":
        steps = v.get("steps")
        if steps is not None and "steps_on" not in v:
            need(
                False, "steps_on", None, "missing steps_on (how many of the steps are in service)"
            )
        if "steps_on" in v:
            total = steps if steps is not None else 1
            need(
                v["steps_on"] <= total,
                "steps_on",
                v["steps_on"],
                f"at most steps ({total}) can be in service",
            )
    if kind == "filter":
        has_h, has_p = "tuned_order" in v, "p_pct" in v
        need(
            has_h != has_p,
            "p_pct" if has_h else "tuned_order",
            v.get("p_pct"),
            "give either tuned_order or p_pct (one of them)",
        )
    if kind == "load":
        need(
            not ("kvar" in v and "pf" in v),
            "pf",
            v.get("pf"),
            "give either kvar or pf, not both",
        )
        need("kvar" in v or "pf" in v, "kvar", None, "missing kvar (or pf) of the load")
    if kind == "motor":
        need(v.get("kw", 0) > 0 if "kw" in v else True, "kw", v.get("kw"), "expected kW > 0")
        if ("kw" in v) != ("pf" in v):
            col = "pf" if "kw" in v else "kw"
            need(False, col, None, "give kw and pf together (the motor's running load)")
    if kind == "converter":
        need(v["kw"] > 0, "kw", v["kw"], "expected the converter's kW > 0")
        if "spectrum" not in v:
            need("pulses" in v, "pulses", None, "give pulses (6, 12, …) or a spectrum name")
        if "pulses" in v:
            need(
                v["pulses"] % 6 == 0,
                "pulses",
                v["pulses"],
                "expected a pulse number 6, 12, 18, 24, … 48",
            )


# -------------------------------------------------------------------------------- spectra
_SPECTRA_COLUMNS = ("spectrum", "order", "pct", "phase_deg")


def read_spectra(data: Any, max_order: int = 50) -> Spectra:
    """Parse the spectra table ``spectrum | order | pct | phase_deg`` (``pct`` of the
    converter's fundamental current, ``phase_deg`` relative to the fundamental: the h-th
    current's angle is h·θ₁ + phase_deg). ``None`` → no spectra."""
    if data is None:
        return Spectra()
    rows = _rows(data, "spectra")
    cols = _header(rows, "spectra", _SPECTRA_COLUMNS, {"name": "spectrum", "h": "order"})
    missing = [c for c in _SPECTRA_COLUMNS if c not in cols]
    if missing:
        raise TableError(
            "spectra", f"missing column{'s' * (len(missing) > 1)} {', '.join(missing)}"
        )
    body = [(i + 2, r) for i, r in enumerate(rows[1:]) if not all(_blank(c) for c in r)]
    if not body:
        raise TableError("spectra", "no rows below the header")
    out: dict[str, tuple[str, list[SpectrumLine]]] = {}
    where: dict[tuple[str, int], int] = {}
    order_spec = Column("a whole harmonic order", "integer", low=2, low_open=False)
    pct_spec = Column("percent of the fundamental current", percent=True, low=0, low_open=False)
    for rownum, r in body:

        def cell(column: str, r: list[Cell] = r, rownum: int = rownum) -> Cell:
            c = r[cols[column]]
            if _blank(c):
                hint = {
                    "phase_deg": " (relative to the fundamental; 0 if unknown — with several "
                    "converters the phases decide what cancels)",
                }.get(column, "")
                raise InputError("spectra", rownum, column, expected=f"missing {column}{hint}")
            return c

        name = _text(cell("spectrum"), "spectra", rownum, "spectrum", "a spectrum name")
        oc = cell("order")
        if isinstance(oc, (int, float)) and not isinstance(oc, bool) and float(oc) == 1:
            raise InputError(
                "spectra",
                rownum,
                "order",
                oc,
                "the fundamental comes from the converter's kw and pf; list orders 2 and above",
            )
        try:
            order = int(_number(oc, "spectra", rownum, "order", order_spec))
        except InputError as exc:
            if isinstance(oc, (int, float)) and not isinstance(oc, bool) and oc > 1:
                raise InputError(
                    "spectra",
                    rownum,
                    "order",
                    oc,
                    "expected a whole harmonic order (interharmonics are not modelled)",
                ) from None
            raise exc
        if order > max_order:
            raise InputError(
                "spectra",
                rownum,
                "order",
                oc,
                f"above max_order {max_order} (raise max_order in the options to study it)",
            )
        pct = _number(cell("pct"), "spectra", rownum, "pct", pct_spec)
        phase = parse_number(
            cell("phase_deg"), unit="°", table="spectra", row=rownum, column="phase_deg"
        )
        key = name.lower()
        if (key, order) in where:
            raise InputError(
                "spectra",
                rownum,
                "order",
                oc,
                f"order {order} of spectrum {name!r} is already given in row {where[(key, order)]}",
            )
        where[(key, order)] = rownum
        out.setdefault(key, (name, []))[1].append(SpectrumLine(rownum, order, pct, phase))
    return Spectra(MappingProxyType({k: (n, tuple(v)) for k, (n, v) in out.items()}))


# -------------------------------------------------------------------------------- options
def read_power_options(data: Any) -> PowerOptions:
    """Options of a study: a two-column ``key | value`` range (optional header row), a
    mapping, or a :class:`PowerOptions`. Keys: ``fundamental_hz`` (required),
    ``max_order`` (default 50)."""
    if isinstance(data, PowerOptions):
        return data
    pairs: list[tuple[int | None, Any, Any]] = []
    if isinstance(data, Mapping):
        pairs = [(None, k, v) for k, v in data.items()]
    elif data is not None:
        rows = _rows(data, "options")
        for i, r in enumerate(rows):
            if all(_blank(c) for c in r):
                continue
            if len(r) < 2:
                raise TableError("options", "expected two columns: key, value")
            if i == 0 and _norm_header(r[0]) == "key":
                continue
            pairs.append((i + 1, r[0], r[1]))
    values: dict[str, Any] = {}
    for rownum, k, v in pairs:
        key = _norm_header(k)
        if key not in ("fundamental_hz", "max_order"):
            raise InputError("options", rownum, "key", k, "expected fundamental_hz or max_order")
        if key in values:
            raise InputError("options", rownum, "key", k, "this key is given twice")
        if _blank(v):
            raise InputError("options", rownum, "value", expected=f"missing value for {key}")
        if key == "fundamental_hz":
            if _is_excel_error(v):
                raise InputError("options", rownum, "value", v, "the cell holds an Excel error")
            f = parse_number(v, unit="Hz", table="options", row=rownum, column="value")
            if f <= 0:
                raise InputError("options", rownum, "value", v, "fundamental_hz must be > 0")
            values[key] = f
        else:
            spec = Column("a whole number 2 … 200", "integer", low=2, low_open=False, high=200)
            values[key] = int(_number(v, "options", rownum, "value", spec))
    if "fundamental_hz" not in values:
        raise TableError(
            "options", "fundamental_hz is required (the system frequency, 50 or 60 Hz)"
        )
    return PowerOptions(**values)
