"""Parts, sources and options tables → typed, validated records.

A table is what a worksheet range delivers: a 2-D list, header row first; empty cells
are ``None``, numbers are floats, text is ``str``. Headers are case-insensitive (spaces
become ``_``, a trailing ``(unit note)`` is ignored), column order is free, unknown
columns are ignored, blank rows are skipped. Rows are numbered as the user counts them
inside the table: header = row 1.

Names of nodes, parts and sources are case-insensitive everywhere (``Bus`` and ``bus``
are one node); the spelling met first is kept for display. A cell of a used column that
holds a spreadsheet error (``#N/A``, ``#VALUE!``…) is refused, naming row and column.

Ranges (base units): part values and amplitudes up to 1e24 in magnitude; resistances,
inductances, capacitances and turns ratios at least 1e-24; source frequencies 0 (DC) or
1 µHz … 1 THz (``FREQ_RANGE_HZ``).
"""

from __future__ import annotations

import dataclasses
import functools
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .errors import InputError, TableError, quote
from .units import parse_number

__all__ = [
    "FREQ_RANGE_HZ",
    "PART_KINDS",
    "NoiseRow",
    "Options",
    "PartRow",
    "SourceRow",
    "check_frequency",
    "frequencies_arg",
    "name_key",
    "parse_cell",
    "read_options",
    "read_parts",
    "read_source_table",
    "read_sources",
]

Cell = Any
Rows = Sequence[Sequence[Cell]]

# ---------------------------------------------------------------------------------------
# kinds
# canonical kind -> (unit of `value`, description, aliases)
PART_KINDS: dict[str, tuple[str | None, str, tuple[str, ...]]] = {
    "R": ("Ω", "resistor, value in ohms", ("resistor", "res")),
    "L": ("H", "inductor, value in henries", ("inductor", "ind")),
    "C": ("F", "capacitor, value in farads", ("capacitor", "cap")),
    "COUPLING": (
        None,
        "magnetic coupling k (0 < k ≤ 1) between inductors named in coil_a, coil_b",
        ("coupling", "mutual"),
    ),
    "XFMR": (
        None,
        "ideal transformer, turns ratio n = N1/N2 in value; winding 1 from→to, "
        "winding 2 sec_from→sec_to",
        ("transformer", "ideal_transformer"),
    ),
    "VCVS": (None, "voltage-controlled voltage source, gain V/V", ()),
    "VCCS": ("S", "voltage-controlled current source, gain A/V (S)", ()),
    "CCVS": ("Ω", "current-controlled voltage source, gain V/A (Ω)", ()),
    "CCCS": (None, "current-controlled current source, gain A/A", ()),
}
_KIND_LOOKUP = {k.lower(): k for k in PART_KINDS}
for _k, (_u, _d, _aliases) in PART_KINDS.items():
    for _a in _aliases:
        _KIND_LOOKUP[_a] = _k

TWO_TERMINAL = frozenset({"R", "L", "C", "XFMR", "VCVS", "VCCS", "CCVS", "CCCS"})

# canonical column -> accepted header spellings (after normalisation)
_PART_COLUMNS: dict[str, tuple[str, ...]] = {
    "name": ("name", "part", "part_name"),
    "kind": ("kind", "type"),
    "from": ("from", "from_node", "node_from"),
    "to": ("to", "to_node", "node_to"),
    "value": ("value",),
    "ctrl_from": ("ctrl_from", "control_from"),
    "ctrl_to": ("ctrl_to", "control_to"),
    "ctrl_part": ("ctrl_part", "control_part"),
    "coil_a": ("coil_a",),
    "coil_b": ("coil_b",),
    "sec_from": ("sec_from", "secondary_from"),
    "sec_to": ("sec_to", "secondary_to"),
    "r_exponent": ("r_exponent",),
    "tolerance": ("tolerance", "tol"),
    "tol_dist": ("tol_dist", "tolerance_dist"),
}
_SOURCE_COLUMNS: dict[str, tuple[str, ...]] = {
    "name": ("name", "source", "source_name"),
    "kind": ("kind", "type"),
    "from": ("from", "from_node", "node_from"),
    "to": ("to", "to_node", "node_to"),
    "freq_hz": ("freq_hz", "frequency_hz", "f_hz"),
    "omega_rad_s": ("omega_rad_s", "omega"),
    "harmonic": ("harmonic", "order", "h"),
    "peak": ("peak",),
    "rms": ("rms",),
    "phase_deg": ("phase_deg", "phase"),
    "shape": ("shape",),
    "density": ("density", "noise_density"),
    "corner_hz": ("corner_hz", "corner_frequency_hz"),
}
# columns of a tone that a noise row (density filled) leaves empty
_TONE_ONLY = ("freq_hz", "omega_rad_s", "harmonic", "peak", "rms", "phase_deg", "shape")
_DENSITY_UNIT = {"V": "V/√Hz", "I": "A/√Hz"}


# ---------------------------------------------------------------------------------------
# records
@dataclass(frozen=True)
class PartRow:
    """One row of the parts table, parsed. ``row`` counts the header as row 1."""

    row: int
    name: str
    kind: str
    from_node: str | None
    to_node: str | None
    value: float
    ctrl_from: str | None = None
    ctrl_to: str | None = None
    ctrl_part: str | None = None
    coil_a: str | None = None
    coil_b: str | None = None
    sec_from: str | None = None
    sec_to: str | None = None
    r_exponent: float = 0.0
    tolerance: float = 0.0
    tol_dist: str = "uniform"


def _record_maker(cls: type) -> Any:
    """A fast constructor for the frozen dataclass ``cls`` (which has no
    ``__post_init__``), taking every field without a default by keyword: it fills the
    instance's ``__dict__`` directly, where the generated ``__init__`` makes one
    ``object.__setattr__`` call per field (3× slower on the parse hot path). The result
    is an ordinary instance: equal, hashed and frozen like one made by ``cls(...)``."""
    if hasattr(cls, "__post_init__") or hasattr(cls, "__slots__"):
        raise TypeError(f"{cls.__name__}: needs its own __init__")
    every = dataclasses.fields(cls)
    defaults = {f.name: f.default for f in every if f.default is not dataclasses.MISSING}
    required = frozenset(f.name for f in every if f.default is dataclasses.MISSING)
    names = frozenset(f.name for f in every)
    new = object.__new__

    def make(**values: Any) -> Any:
        keys = values.keys()
        if not (required <= keys and keys <= names):
            raise TypeError(f"{cls.__name__}: fields {sorted(keys)} do not match")
        obj: Any = new(cls)
        d = obj.__dict__
        d.update(defaults)
        d.update(values)
        return obj

    return make


_new_part_row = _record_maker(PartRow)


@dataclass(frozen=True)
class SourceRow:
    """One tone of an independent source. ``phasor`` is the complex peak phasor
    (cosine reference); for DC (``freq_hz == 0``) it is the signed real DC value."""

    row: int
    name: str
    kind: str  # "V" or "I"
    from_node: str
    to_node: str
    freq_hz: float
    phasor: complex


@dataclass(frozen=True)
class NoiseRow:
    """One noise source of the sources table (a row with ``density`` filled).

    ``density`` is the amplitude spectral density at high frequency (V/√Hz for kind V,
    A/√Hz for kind I); with a 1/f corner the density at f is
    ``density·√(1 + corner_hz/f)`` (``corner_hz == 0``: white noise). A voltage noise
    source's value is its own V(from) − V(to); a current noise source's current flows from
    ``from`` to ``to`` through it. Noise rows are not tones: the phasor solve ignores them.
    """

    row: int
    name: str
    kind: str  # "V" or "I"
    from_node: str
    to_node: str
    density: float
    corner_hz: float = 0.0


@dataclass(frozen=True)
class Options:
    """Run options (frozen; passed explicitly, never global).

    Attributes
    ----------
    ground : str
        Name of the reference node (matched case-insensitively).
    fundamental_hz : float or None
        Fundamental for ``harmonic`` source rows, resistance laws (``r_exponent``) and
        THD. When None, ``harmonic`` rows and ``r_exponent`` are refused, and THD assumes
        the lowest source frequency only where that tone is the signal's largest (see
        :meth:`xlfuncs.Spectrum.thd_result`).
    thd_max_order : int
        Highest harmonic order counted in THD (IEEE 519-2014 counts up to 50).
    """

    ground: str = "GND"
    fundamental_hz: float | None = None
    thd_max_order: int = 50


# ---------------------------------------------------------------------------------------
# shared rules
FREQ_RANGE_HZ = (1e-6, 1e12)
_MIN_VALUE = 1e-24  # smallest R, L, C or turns ratio (1/R must stay finite in a solve)
_MAX_PHASE_DEG = 1e9
_MAX_THD_ORDER = 100_000
_R_EXPONENT_RANGE = (0.0, 2.0)


def name_key(name: str) -> str:
    """The form in which names of nodes, parts and sources are compared (case folded)."""
    return name.casefold()


def check_frequency(freq_hz: float, value: Any, table: str, row: int | None, column: str) -> float:
    """``freq_hz`` if it is 0 (DC) or inside ``FREQ_RANGE_HZ``, else a one-line error."""
    lo, hi = FREQ_RANGE_HZ
    if freq_hz == 0 or lo <= freq_hz <= hi:
        return freq_hz
    if freq_hz < 0:
        raise InputError(table, row, column, value, "expected a frequency ≥ 0")
    raise InputError(
        table,
        row,
        column,
        value,
        f"frequency {freq_hz:.3g} Hz is outside 1 µHz … 1 THz (0 for DC): one period "
        "below 1 µHz lasts over 11 days, and above 1 THz lumped parts do not apply",
    )


# ---------------------------------------------------------------------------------------
# generic table reading
_PAREN = re.compile(r"\(.*\)\s*$")
_HEADER_GAPS = re.compile(r"[\s\-]+")
_SHEET_ERROR = re.compile(r"#(?:[A-Z0-9/_]+[!?]|N/A)")


def frequencies_arg(freqs_hz: Any, column: str = "freqs_hz") -> np.ndarray:
    """A 1-D array of frequencies for the API's scans: each 0 (DC) or inside
    ``FREQ_RANGE_HZ``, else one line naming the first bad value and its position (from 1)."""
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    if f.size == 0:
        raise InputError("argument", None, column, [], "expected at least one frequency")
    lo, hi = FREQ_RANGE_HZ
    bad = ~np.isfinite(f) | ((f != 0) & ((f < lo) | (f > hi)))
    if bad.any():
        k = int(np.argmax(bad))
        raise InputError(
            "argument", None, column, float(f[k]),
            f"frequency {k + 1} of {f.size}: expected 0 (DC) or {lo:g} … {hi:g} Hz",
        )  # fmt: skip
    return f


def _norm_header(cell: Cell) -> str:
    return _norm_header_text("" if cell is None else str(cell))


@functools.lru_cache(maxsize=4096)
def _norm_header_text(text: str) -> str:
    """The canonical spelling of a header text (a workbook repeats the same few headers
    in every call, so the two substitutions are remembered)."""
    text = _PAREN.sub("", text).strip().lower()
    return _HEADER_GAPS.sub("_", text)


def _is_blank(cell: Cell) -> bool:
    return cell is None or (isinstance(cell, str) and cell.strip() == "")


def _as_rows(data: Any, table: str) -> list[Sequence[Cell]]:
    if data is None:
        raise TableError(table, "no range given (expected a header row and at least one row)")
    if getattr(data, "ndim", None) == 2 and hasattr(data, "tolist"):  # a 2-D numpy array
        data = data.tolist()
    if not isinstance(data, (list, tuple)):
        what = (
            f"a {type(data).__name__}"
            if isinstance(data, (dict, set)) or hasattr(data, "ndim")
            else f"a single value {quote(data)}"
        )
        raise TableError(table, f"expected a range with a header row (a list of rows), got {what}")
    rows: list[Sequence[Cell]] = []
    for r in data:
        if isinstance(r, (list, tuple)):
            rows.append(r)  # read only: no copy
        else:  # a single row or column delivered as a flat list
            raise TableError(
                table, "expected a 2-D range (header row + rows), got a single row or column"
            )
    return rows


def _alias_map(columns: dict[str, tuple[str, ...]]) -> dict[str, str]:
    """alias → canonical column name."""
    return {alias: canon for canon, aliases in columns.items() for alias in aliases}


# built once: every call reads its header through these
_PART_ALIASES = _alias_map(_PART_COLUMNS)
_SOURCE_ALIASES = _alias_map(_SOURCE_COLUMNS)


class _Table:
    """Header map and, per non-blank row, the filled cells of the known columns."""

    def __init__(self, data: Any, table: str, lookup: dict[str, str]) -> None:
        self.table = table
        rows = _as_rows(data, table)
        if not rows:
            raise TableError(table, "empty range (expected a header row and at least one row)")
        self.col: dict[str, int] = {}
        self._header = rows[0]
        for idx, cell in enumerate(rows[0]):
            canon = lookup.get(_norm_header(cell))
            if canon is None:
                continue  # notes, ratings... are ignored
            if canon in self.col:
                raise TableError(
                    table,
                    f"column {canon!r} appears twice in the header "
                    f"(columns {self.col[canon] + 1} and {idx + 1})",
                )
            self.col[canon] = idx
        items = list(self.col.items())
        self.rows: list[tuple[int, dict[str, Cell]]] = []
        for i, r in enumerate(rows[1:]):
            cells: dict[str, Cell] = {}
            width = len(r)
            for canon, idx in items:
                c = r[idx] if idx < width else None
                if c is None:
                    continue
                if type(c) is str:
                    if not c or c[0].isspace() or c[-1].isspace():
                        c = c.strip()
                        if not c:
                            continue
                    if c[0] == "#" and _SHEET_ERROR.fullmatch(c.upper()):
                        raise InputError(
                            table,
                            i + 2,
                            canon,
                            c,
                            "the cell holds a spreadsheet error; fix the formula or "
                            "value that feeds it",
                        )
                cells[canon] = c
            if cells or not _row_blank(r):
                self.rows.append((i + 2, cells))
        if not self.rows:
            raise TableError(table, "no rows below the header")

    @property
    def found(self) -> list[str]:
        """The header texts, as written (for messages)."""
        return [str(c).strip() for c in self._header if not _is_blank(c)]

    def missing(self, what: str) -> TableError:
        found = ", ".join(self.found) if self.found else "none"
        return TableError(self.table, f"missing {what} (columns found: {found})")

    def require(self, *names: str) -> None:
        col = self.col
        if all(n in col for n in names):
            return
        missing = [n for n in names if n not in col]
        if missing:
            plural = "s" if len(missing) > 1 else ""
            raise self.missing(f"column{plural} {', '.join(missing)}")


def _row_blank(r: Sequence[Cell]) -> bool:
    return all(_is_blank(c) for c in r)


def _text(cell: Cell) -> str:
    if type(cell) is str:
        return cell.strip()
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    return str(cell).strip()


def _name(table: str, rownum: int, cells: dict[str, Cell], column: str, what: str) -> str:
    cell = cells.get(column)
    if type(cell) is str:  # the common case: cells are stripped already
        return cell
    if cell is None:
        raise InputError(table, rownum, column, expected=f"missing {what}")
    if isinstance(cell, bool) or (isinstance(cell, float) and not math.isfinite(cell)):
        raise InputError(table, rownum, column, cell, f"expected {what}")
    return _text(cell)


def _two_ends(
    table: str, rownum: int, cells: dict[str, Cell], a_col: str, b_col: str, what: str
) -> tuple[str, str]:
    a = _name(table, rownum, cells, a_col, what)
    b = _name(table, rownum, cells, b_col, what)
    if a == b or a.casefold() == b.casefold():
        same = f"{a!r}" if a == b else f"{a!r} (names ignore letter case)"
        raise InputError(
            table, rownum, b_col, b, f"both ends on node {same}; expected two different nodes"
        )
    return a, b


# ---------------------------------------------------------------------------------------
# parts
def _positive_value(rownum: int, cells: dict[str, Cell], value: float, what: str) -> None:
    if value <= 0:
        raise InputError("parts", rownum, "value", cells.get("value"), what)
    if value < _MIN_VALUE:
        raise InputError(
            "parts",
            rownum,
            "value",
            cells.get("value"),
            f"{value:.3g} is below {_MIN_VALUE:g} (base units); check the exponent and prefix",
        )


def _read_rlc(
    t: _Table, rownum: int, cells: dict[str, Cell], kind: str, value: float
) -> dict[str, Any]:
    t.require("from", "to")
    a, b = _two_ends("parts", rownum, cells, "from", "to", "a node name")
    _positive_value(
        rownum,
        cells,
        value,
        f"a {kind} value must be > 0 (for a short, join the nodes; for an open, leave the "
        "part out)",
    )
    return {"from_node": a, "to_node": b}


def _read_xfmr(
    t: _Table, rownum: int, cells: dict[str, Cell], kind: str, value: float
) -> dict[str, Any]:
    t.require("from", "to", "sec_from", "sec_to")
    a, b = _two_ends("parts", rownum, cells, "from", "to", "a node name")
    _positive_value(
        rownum,
        cells,
        value,
        "turns ratio must be > 0 (swap sec_from/sec_to to reverse a winding)",
    )
    c, d = _two_ends("parts", rownum, cells, "sec_from", "sec_to", "a node name")
    return {"from_node": a, "to_node": b, "sec_from": c, "sec_to": d}


def _read_coupling(
    t: _Table, rownum: int, cells: dict[str, Cell], kind: str, value: float
) -> dict[str, Any]:
    if not 0 < value <= 1:
        raise InputError(
            "parts", rownum, "value", cells.get("value"), "coupling k must satisfy 0 < k ≤ 1"
        )
    t.require("coil_a", "coil_b")
    coil_a = _name("parts", rownum, cells, "coil_a", "the name of an inductor")
    coil_b = _name("parts", rownum, cells, "coil_b", "the name of an inductor")
    if name_key(coil_a) == name_key(coil_b):
        raise InputError(
            "parts", rownum, "coil_b", coil_b, "expected a different inductor than coil_a"
        )
    return {"from_node": None, "to_node": None, "coil_a": coil_a, "coil_b": coil_b}


def _read_voltage_controlled(
    t: _Table, rownum: int, cells: dict[str, Cell], kind: str, value: float
) -> dict[str, Any]:
    t.require("from", "to", "ctrl_from", "ctrl_to")
    a, b = _two_ends("parts", rownum, cells, "from", "to", "a node name")
    cf = _name("parts", rownum, cells, "ctrl_from", "the controlling node (+)")
    ct = _name("parts", rownum, cells, "ctrl_to", "the controlling node (−)")
    if name_key(cf) == name_key(ct):
        raise InputError(
            "parts", rownum, "ctrl_to", ct, "expected a node different from ctrl_from"
        )
    return {"from_node": a, "to_node": b, "ctrl_from": cf, "ctrl_to": ct}


def _read_current_controlled(
    t: _Table, rownum: int, cells: dict[str, Cell], kind: str, value: float
) -> dict[str, Any]:
    t.require("from", "to", "ctrl_part")
    a, b = _two_ends("parts", rownum, cells, "from", "to", "a node name")
    ctrl = _name("parts", rownum, cells, "ctrl_part", "the name of the controlling part")
    return {"from_node": a, "to_node": b, "ctrl_part": ctrl}


# kind -> reader of its own columns (terminals, controls, value rules)
_KIND_READERS = {
    "R": _read_rlc,
    "L": _read_rlc,
    "C": _read_rlc,
    "XFMR": _read_xfmr,
    "COUPLING": _read_coupling,
    "VCVS": _read_voltage_controlled,
    "VCCS": _read_voltage_controlled,
    "CCVS": _read_current_controlled,
    "CCCS": _read_current_controlled,
}


def read_parts(data: Any) -> tuple[PartRow, ...]:
    """Parse the parts table. See README "Parts table" for the columns."""
    t = _Table(data, "parts", _PART_ALIASES)
    t.require("name", "kind", "value")
    seen: dict[str, int] = {}
    out: list[PartRow] = []
    for rownum, cells in t.rows:
        name = _name("parts", rownum, cells, "name", "a part name")
        key = name_key(name)
        if key in seen:
            raise InputError(
                "parts", rownum, "name", name, f"duplicate name (already used in row {seen[key]})"
            )
        seen[key] = rownum
        kind_cell = cells.get("kind")
        if kind_cell is None:
            raise InputError("parts", rownum, "kind", expected=_kind_help())
        kind = _KIND_LOOKUP.get(_text(kind_cell).lower())
        if kind is None:
            raise InputError("parts", rownum, "kind", kind_cell, _kind_help())
        value_cell = cells.get("value")
        if value_cell is None:
            raise InputError("parts", rownum, "value", expected=f"missing value for a {kind} part")
        value = parse_number(
            value_cell, unit=PART_KINDS[kind][0], table="parts", row=rownum, column="value"
        )
        fields = _KIND_READERS[kind](t, rownum, cells, kind, value)
        r_exp = cells.get("r_exponent")
        if r_exp is not None:
            fields["r_exponent"] = _r_exponent(r_exp, kind, rownum)
        tol = cells.get("tolerance")
        if tol is not None:
            fields["tolerance"] = _parse_tolerance(tol, rownum)
            dist = cells.get("tol_dist")
            if dist is not None:
                d_txt = _text(dist).lower()
                if d_txt not in ("uniform", "normal"):
                    raise InputError(
                        "parts", rownum, "tol_dist", dist, "expected 'uniform' or 'normal'"
                    )
                fields["tol_dist"] = d_txt
        out.append(_new_part_row(row=rownum, name=name, kind=kind, value=value, **fields))
    return tuple(out)


def _r_exponent(cell: Cell, kind: str, rownum: int) -> float:
    if kind != "R":
        raise InputError(
            "parts", rownum, "r_exponent", cell, "only resistors (kind R) take r_exponent"
        )
    x = parse_number(cell, unit=None, table="parts", row=rownum, column="r_exponent")
    lo, hi = _R_EXPONENT_RANGE
    if not lo <= x <= hi:
        raise InputError(
            "parts",
            rownum,
            "r_exponent",
            cell,
            f"expected an exponent {lo:g} … {hi:g} of R(f) = R·(f/f₁)^x (0.5 for skin effect)",
        )
    return x


def _parse_tolerance(cell: Cell, rownum: int) -> float:
    text = cell
    scale = 1.0
    if isinstance(cell, str) and cell.strip().endswith("%"):
        text, scale = cell.strip()[:-1], 0.01
    tol = parse_number(text, unit=None, table="parts", row=rownum, column="tolerance") * scale
    if not 0 <= tol < 1:
        raise InputError(
            "parts",
            rownum,
            "tolerance",
            cell,
            "expected a fraction 0 ≤ tol < 1 (e.g. 0.05 or '5%')",
        )
    return tol


def _kind_help() -> str:
    return "expected one of " + ", ".join(PART_KINDS)


# ---------------------------------------------------------------------------------------
# sources
_FREQ_COLUMNS = ("freq_hz", "omega_rad_s", "harmonic")
_AMP_COLUMNS = ("peak", "rms")
_AMP_UNIT = {"V": "V", "I": "A"}


def read_sources(data: Any, options: Options | None = None) -> tuple[SourceRow, ...]:
    """Parse the sources table: one row per tone (see README "Sources table"). Noise rows
    are checked and left out; :func:`read_source_table` returns them too."""
    return read_source_table(data, options)[0]


def read_source_table(
    data: Any, options: Options | None = None
) -> tuple[tuple[SourceRow, ...], tuple[NoiseRow, ...]]:
    """Parse the sources table into its tones and its noise rows.

    A row with ``density`` filled is a noise source (:class:`NoiseRow`): its frequency,
    amplitude, phase and shape cells stay empty. Every other row is one tone.
    """
    opts = options or Options()
    t = _Table(data, "sources", _SOURCE_ALIASES)
    t.require("name", "kind", "from", "to")
    freq_cols = [c for c in _FREQ_COLUMNS if c in t.col]
    amp_cols = [c for c in _AMP_COLUMNS if c in t.col]
    if any("density" not in cells for _n, cells in t.rows):  # some row is a tone
        if not freq_cols:
            raise t.missing("a frequency column (freq_hz, omega_rad_s or harmonic)")
        if not amp_cols:
            raise t.missing("an amplitude column (peak or rms)")
    first: dict[str, SourceRow] = {}
    tones: list[SourceRow] = []
    noise: list[NoiseRow] = []
    noise_names: dict[str, int] = {}
    for rownum, cells in t.rows:
        name = _name("sources", rownum, cells, "name", "a source name")
        key = name_key(name)
        kind_cell = cells.get("kind")
        if kind_cell is None:
            raise InputError("sources", rownum, "kind", expected="missing kind: V or I")
        kind = _text(kind_cell).upper()
        if kind not in ("V", "I"):
            raise InputError(
                "sources",
                rownum,
                "kind",
                kind_cell,
                "expected V (voltage source) or I (current source)",
            )
        a, b = _two_ends("sources", rownum, cells, "from", "to", "a node name")
        if "density" in cells:
            if key in noise_names:
                raise InputError(
                    "sources",
                    rownum,
                    "name",
                    name,
                    f"noise source {name!r} already has a row ({noise_names[key]}); "
                    "give one row per noise source",
                )
            if key in first:
                raise InputError(
                    "sources",
                    rownum,
                    "name",
                    name,
                    f"name already used by a tone (sources row {first[key].row})",
                )
            noise_names[key] = rownum
            noise.append(_noise_row(rownum, cells, name, kind, a, b))
            continue
        if key in noise_names:
            raise InputError(
                "sources",
                rownum,
                "name",
                name,
                f"name already used by a noise source (sources row {noise_names[key]})",
            )
        if "corner_hz" in cells:
            raise InputError(
                "sources",
                rownum,
                "corner_hz",
                cells["corner_hz"],
                "corner_hz belongs to a noise row; fill density too, or leave it empty",
            )
        freq = _tone_frequency(rownum, cells, freq_cols, opts)
        rec = SourceRow(
            rownum, name, kind, a, b, freq, _tone_phasor(rownum, cells, amp_cols, kind, freq)
        )
        prev = first.get(key)
        if prev is None:
            first[key] = rec
        else:
            if prev.kind != kind:
                raise InputError(
                    "sources",
                    rownum,
                    "kind",
                    kind_cell,
                    f"tones of source {name!r} must share one kind ({prev.kind} in row {prev.row})",
                )
            if (name_key(prev.from_node), name_key(prev.to_node)) != (name_key(a), name_key(b)):
                col = "from" if name_key(prev.from_node) != name_key(a) else "to"
                raise InputError(
                    "sources",
                    rownum,
                    col,
                    a if col == "from" else b,
                    f"tones of source {name!r} must share nodes "
                    f"({prev.from_node}→{prev.to_node} in row {prev.row})",
                )
        tones.append(rec)
    return tuple(tones), tuple(noise)


def _exactly_one(rownum: int, cells: dict[str, Cell], cols: Sequence[str], what: str) -> str:
    filled = [c for c in cols if c in cells]
    if len(filled) == 1:
        return filled[0]
    if not filled:
        raise InputError(
            "sources",
            rownum,
            cols[0],
            expected=f"empty {what}: fill one of " + ", ".join(cols),
        )
    raise InputError(
        "sources",
        rownum,
        filled[1],
        expected=f"fill exactly one of {', '.join(cols)} (found {', '.join(filled)})",
    )


def _tone_frequency(
    rownum: int, cells: dict[str, Cell], freq_cols: Sequence[str], opts: Options
) -> float:
    fcol = _exactly_one(rownum, cells, freq_cols, "frequency")
    cell = cells[fcol]
    unit = {"freq_hz": "Hz", "omega_rad_s": "rad/s", "harmonic": None}[fcol]
    fval = parse_number(cell, unit=unit, table="sources", row=rownum, column=fcol)
    if fval < 0:
        raise InputError("sources", rownum, fcol, cell, "expected a frequency ≥ 0")
    if fcol == "freq_hz":
        freq = fval
    elif fcol == "omega_rad_s":
        freq = fval / (2 * math.pi)
    else:
        if opts.fundamental_hz is None:
            raise InputError(
                "sources",
                rownum,
                "harmonic",
                cell,
                "a harmonic order needs fundamental_hz in the options table",
            )
        freq = fval * opts.fundamental_hz
    return check_frequency(freq, cell, "sources", rownum, fcol)


def _tone_phasor(
    rownum: int, cells: dict[str, Cell], amp_cols: Sequence[str], kind: str, freq: float
) -> complex:
    acol = _exactly_one(rownum, cells, amp_cols, "amplitude")
    amp_cell = cells[acol]
    amp = parse_number(amp_cell, unit=_AMP_UNIT[kind], table="sources", row=rownum, column=acol)
    phase_cell = cells.get("phase_deg")
    phase = (
        0.0
        if phase_cell is None
        else parse_number(phase_cell, unit="°", table="sources", row=rownum, column="phase_deg")
    )
    if abs(phase) > _MAX_PHASE_DEG:
        raise InputError(
            "sources", rownum, "phase_deg", phase_cell, "expected a phase within ±1e9 degrees"
        )
    shape_cell = cells.get("shape")
    shape = "cos" if shape_cell is None else _text(shape_cell).lower()
    if shape not in ("cos", "sin"):
        raise InputError("sources", rownum, "shape", shape_cell, "expected 'cos' or 'sin'")
    if freq == 0:
        if phase != 0 or shape != "cos":
            raise InputError(
                "sources",
                rownum,
                "phase_deg" if phase != 0 else "shape",
                phase_cell if phase != 0 else shape_cell,
                "a DC tone (0 Hz) takes no phase or shape; give a negative value for a "
                "negative DC level",
            )
        return complex(amp)  # signed DC value; rms of DC equals its value
    if amp < 0:
        raise InputError(
            "sources",
            rownum,
            acol,
            amp_cell,
            "an AC amplitude must be ≥ 0 (use phase_deg = 180 to invert)",
        )
    peak = amp * math.sqrt(2) if acol == "rms" else amp
    ang = math.radians(phase - (90.0 if shape == "sin" else 0.0))
    return complex(peak * math.cos(ang), peak * math.sin(ang))


def _noise_row(
    rownum: int, cells: dict[str, Cell], name: str, kind: str, a: str, b: str
) -> NoiseRow:
    for col in _TONE_ONLY:
        if col in cells:
            raise InputError(
                "sources",
                rownum,
                col,
                cells[col],
                "a noise row (density filled) is not a tone: leave " + col + " empty",
            )
    cell = cells["density"]
    unit = _DENSITY_UNIT[kind]
    density = parse_number(cell, unit=unit, table="sources", row=rownum, column="density")
    if not density > 0:
        raise InputError(
            "sources", rownum, "density", cell, f"expected a noise density > 0 ({unit})"
        )
    corner_cell = cells.get("corner_hz")
    corner = 0.0
    if corner_cell is not None:
        corner = parse_number(
            corner_cell, unit="Hz", table="sources", row=rownum, column="corner_hz"
        )
        if corner < 0:
            raise InputError(
                "sources",
                rownum,
                "corner_hz",
                corner_cell,
                "expected a 1/f corner frequency ≥ 0 Hz (0 or empty: white noise)",
            )
        check_frequency(corner, corner_cell, "sources", rownum, "corner_hz")
    return NoiseRow(rownum, name, kind, a, b, density, corner)


# ---------------------------------------------------------------------------------------
# options
_OPTION_KEYS = {"ground", "fundamental_hz", "thd_max_order"}


def read_options(data: Any) -> Options:
    """Parse a two-column key/value range (an optional ``key | value`` header row)."""
    if data is None:
        return Options()
    rows = _as_rows(data, "options")
    values: dict[str, Any] = {}
    for i, r in enumerate(rows):
        rownum = i + 1
        if all(_is_blank(c) for c in r):
            continue
        if len(r) < 2:
            raise TableError("options", "expected two columns: key, value")
        key = _norm_header(r[0])
        if i == 0 and key == "key":
            continue
        if key not in _OPTION_KEYS:
            raise InputError(
                "options",
                rownum,
                "key",
                r[0],
                "expected one of " + ", ".join(sorted(_OPTION_KEYS)),
            )
        if key in values:
            raise InputError("options", rownum, "key", r[0], "this key is given twice")
        cell = r[1]
        if _is_blank(cell):
            raise InputError("options", rownum, "value", expected=f"missing value for {key}")
        if isinstance(cell, str) and _SHEET_ERROR.fullmatch(cell.strip().upper()):
            raise InputError(
                "options",
                rownum,
                "value",
                cell,
                "the cell holds a spreadsheet error; fix the formula or value that feeds it",
            )
        if key == "ground":
            if isinstance(cell, bool):
                raise InputError("options", rownum, "value", cell, "expected a node name")
            values[key] = _text(cell)
        elif key == "fundamental_hz":
            f = parse_number(cell, unit="Hz", table="options", row=rownum, column="value")
            if f <= 0:
                raise InputError("options", rownum, "value", cell, "fundamental_hz must be > 0")
            values[key] = check_frequency(f, cell, "options", rownum, "value")
        elif key == "thd_max_order":
            n = parse_number(cell, unit=None, table="options", row=rownum, column="value")
            if not (2 <= n <= _MAX_THD_ORDER and float(n).is_integer()):
                raise InputError(
                    "options",
                    rownum,
                    "value",
                    cell,
                    f"expected a whole number 2 … {_MAX_THD_ORDER:,}",
                )
            values[key] = int(n)
    return Options(**values)


def parse_cell(text: str) -> Any:
    """Text from a CSV file or a command line, as a worksheet cell would hold it: empty →
    None, a number → float, TRUE/FALSE → bool, ``"quoted"`` → the text inside, else text."""
    s = text.strip()
    if s == "":
        return None
    try:
        number = float(s)
    except ValueError:
        pass
    else:  # keep what was typed when it overflows ('1e400'), so errors quote it
        return number if math.isfinite(number) else s
    if s.upper() in ("TRUE", "FALSE"):
        return s.upper() == "TRUE"
    if len(s) >= 2 and s[0] == s[-1] == '"':
        return s[1:-1]
    return s
