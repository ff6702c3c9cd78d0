"""Parts, sources and options tables → typed, validated records.

A table is what a worksheet range delivers: a 2-D list, header row first; empty cells
are ``None``, numbers are floats, text is ``str``. Headers are case-insensitive (spaces
become ``_``, a trailing ``(unit note)`` is ignored), column order is free, unknown
columns are ignored, blank rows are skipped. Rows are numbered as the user counts them
inside the table: header = row 1.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from .errors import InputError, TableError
from .units import parse_number

__all__ = [
    "PART_KINDS",
    "NoiseRow",
    "Options",
    "PartRow",
    "SourceRow",
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
        Fundamental for ``harmonic`` source rows and for THD; when None, THD uses the
        lowest non-zero source frequency.
    thd_max_order : int
        Highest harmonic order counted in THD (IEEE 519-2014 counts up to 50).
    """

    ground: str = "GND"
    fundamental_hz: float | None = None
    thd_max_order: int = 50


# ---------------------------------------------------------------------------------------
# generic table reading
_PAREN = re.compile(r"\(.*\)\s*$")


def _norm_header(cell: Cell) -> str:
    text = "" if cell is None else str(cell)
    text = _PAREN.sub("", text).strip().lower()
    return re.sub(r"[\s\-]+", "_", text)


def _is_blank(cell: Cell) -> bool:
    return cell is None or (isinstance(cell, str) and cell.strip() == "")


def _as_rows(data: Any, table: str) -> list[list[Cell]]:
    if data is None:
        raise TableError(table, "no range given (expected a header row and at least one row)")
    if not isinstance(data, (list, tuple)):
        raise TableError(table, f"expected a range with a header row, got a single value {data!r}")
    rows: list[list[Cell]] = []
    for r in data:
        if isinstance(r, (list, tuple)):
            rows.append(list(r))
        else:  # a single row or column delivered as a flat list
            raise TableError(
                table, "expected a 2-D range (header row + rows), got a single row or column"
            )
    width = max((len(r) for r in rows), default=0)
    return [r + [None] * (width - len(r)) for r in rows]


class _Table:
    """Header map + row access with user-visible row numbers."""

    def __init__(self, data: Any, table: str, columns: dict[str, tuple[str, ...]]) -> None:
        self.table = table
        rows = _as_rows(data, table)
        if not rows:
            raise TableError(table, "empty range (expected a header row and at least one row)")
        lookup = {alias: canon for canon, aliases in columns.items() for alias in aliases}
        self.col: dict[str, int] = {}
        for idx, cell in enumerate(rows[0]):
            key = _norm_header(cell)
            canon = lookup.get(key)
            if canon is None:
                continue  # notes, ratings... are ignored
            if canon in self.col:
                raise TableError(
                    table,
                    f"column {canon!r} appears twice in the header "
                    f"(columns {self.col[canon] + 1} and {idx + 1})",
                )
            self.col[canon] = idx
        self.rows: list[tuple[int, list[Cell]]] = [
            (i + 2, r) for i, r in enumerate(rows[1:]) if not all(_is_blank(c) for c in r)
        ]
        if not self.rows:
            raise TableError(table, "no rows below the header")

    def require(self, *names: str) -> None:
        missing = [n for n in names if n not in self.col]
        if missing:
            raise TableError(
                self.table, f"missing column{'s' if len(missing) > 1 else ''} {', '.join(missing)}"
            )

    def get(self, r: list[Cell], name: str) -> Cell:
        idx = self.col.get(name)
        if idx is None:
            return None
        cell = r[idx]
        return None if _is_blank(cell) else cell


def _text(cell: Cell) -> str:
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    return str(cell).strip()


def _name(t: _Table, rownum: int, r: list[Cell], column: str, what: str) -> str:
    cell = t.get(r, column)
    if cell is None:
        raise InputError(t.table, rownum, column, expected=f"missing {what}")
    if isinstance(cell, float) and not math.isfinite(cell):
        raise InputError(t.table, rownum, column, cell, f"expected {what}")
    if isinstance(cell, bool):
        raise InputError(t.table, rownum, column, cell, f"expected {what}")
    return _text(cell)


def _opt_name(t: _Table, rownum: int, r: list[Cell], column: str) -> str | None:
    cell = t.get(r, column)
    return None if cell is None else _text(cell)


# ---------------------------------------------------------------------------------------
# parts
def read_parts(data: Any) -> tuple[PartRow, ...]:
    """Parse the parts table. See README "Parts table" for the columns."""
    t = _Table(data, "parts", _PART_COLUMNS)
    t.require("name", "kind", "value")
    seen: dict[str, int] = {}
    out: list[PartRow] = []
    for rownum, r in t.rows:
        name = _name(t, rownum, r, "name", "a part name")
        key = name.lower()
        if key in seen:
            raise InputError(
                "parts", rownum, "name", name, f"duplicate name (already used in row {seen[key]})"
            )
        seen[key] = rownum
        kind_cell = t.get(r, "kind")
        if kind_cell is None:
            raise InputError("parts", rownum, "kind", expected=_kind_help())
        kind = _KIND_LOOKUP.get(_text(kind_cell).lower())
        if kind is None:
            raise InputError("parts", rownum, "kind", kind_cell, _kind_help())
        unit = PART_KINDS[kind][0]
        value_cell = t.get(r, "value")
        if value_cell is None:
            raise InputError("parts", rownum, "value", expected=f"missing value for a {kind} part")
        value = parse_number(value_cell, unit=unit, table="parts", row=rownum, column="value")
        fields: dict[str, Any] = {}
        if kind in TWO_TERMINAL:
            t.require("from", "to")
            a = _name(t, rownum, r, "from", "a node name")
            b = _name(t, rownum, r, "to", "a node name")
            if a == b:
                raise InputError(
                    "parts",
                    rownum,
                    "to",
                    b,
                    f"both ends on node {a!r}; expected two different nodes",
                )
            fields["from_node"], fields["to_node"] = a, b
        else:
            fields["from_node"] = fields["to_node"] = None
        if kind in ("R", "L", "C") and value <= 0:
            raise InputError(
                "parts",
                rownum,
                "value",
                value_cell,
                f"a {kind} value must be > 0"
                + (" (for a short, join the nodes; for an open, leave the part out)"),
            )
        if kind == "XFMR":
            if value <= 0:
                raise InputError(
                    "parts",
                    rownum,
                    "value",
                    value_cell,
                    "turns ratio must be > 0 (swap sec_from/sec_to to reverse a winding)",
                )
            t.require("sec_from", "sec_to")
            c = _name(t, rownum, r, "sec_from", "a node name")
            d = _name(t, rownum, r, "sec_to", "a node name")
            if c == d:
                raise InputError(
                    "parts",
                    rownum,
                    "sec_to",
                    d,
                    f"both ends on node {c!r}; expected two different nodes",
                )
            fields["sec_from"], fields["sec_to"] = c, d
        if kind == "COUPLING":
            if not 0 < value <= 1:
                raise InputError(
                    "parts", rownum, "value", value_cell, "coupling k must satisfy 0 < k ≤ 1"
                )
            t.require("coil_a", "coil_b")
            fields["coil_a"] = _name(t, rownum, r, "coil_a", "the name of an inductor")
            fields["coil_b"] = _name(t, rownum, r, "coil_b", "the name of an inductor")
            if fields["coil_a"].lower() == fields["coil_b"].lower():
                raise InputError(
                    "parts",
                    rownum,
                    "coil_b",
                    fields["coil_b"],
                    "expected a different inductor than coil_a",
                )
        if kind in ("VCVS", "VCCS"):
            t.require("ctrl_from", "ctrl_to")
            fields["ctrl_from"] = _name(t, rownum, r, "ctrl_from", "the controlling node (+)")
            fields["ctrl_to"] = _name(t, rownum, r, "ctrl_to", "the controlling node (−)")
            if fields["ctrl_from"] == fields["ctrl_to"]:
                raise InputError(
                    "parts",
                    rownum,
                    "ctrl_to",
                    fields["ctrl_to"],
                    "expected a node different from ctrl_from",
                )
        if kind in ("CCVS", "CCCS"):
            t.require("ctrl_part")
            fields["ctrl_part"] = _name(
                t, rownum, r, "ctrl_part", "the name of the controlling part"
            )
        r_exp = t.get(r, "r_exponent")
        if r_exp is not None:
            if kind != "R":
                raise InputError(
                    "parts", rownum, "r_exponent", r_exp, "only resistors (kind R) take r_exponent"
                )
            fields["r_exponent"] = parse_number(
                r_exp, unit=None, table="parts", row=rownum, column="r_exponent"
            )
        tol = t.get(r, "tolerance")
        if tol is not None:
            fields["tolerance"] = _parse_tolerance(tol, rownum)
            dist = t.get(r, "tol_dist")
            if dist is not None:
                d_txt = _text(dist).lower()
                if d_txt not in ("uniform", "normal"):
                    raise InputError(
                        "parts", rownum, "tol_dist", dist, "expected 'uniform' or 'normal'"
                    )
                fields["tol_dist"] = d_txt
        out.append(PartRow(row=rownum, name=name, kind=kind, value=value, **fields))
    return tuple(out)


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
    t = _Table(data, "sources", _SOURCE_COLUMNS)
    t.require("name", "kind", "from", "to")
    freq_cols = [c for c in ("freq_hz", "omega_rad_s", "harmonic") if c in t.col]
    amp_cols = [c for c in ("peak", "rms") if c in t.col]
    has_tones = any(t.get(r, "density") is None for _n, r in t.rows)
    if has_tones and not freq_cols:
        raise TableError(
            "sources", "missing a frequency column (freq_hz, omega_rad_s or harmonic)"
        )
    if has_tones and not amp_cols:
        raise TableError("sources", "missing an amplitude column (peak or rms)")
    first: dict[str, SourceRow] = {}
    out: list[SourceRow] = []
    noise: list[NoiseRow] = []
    noise_names: dict[str, int] = {}
    for rownum, r in t.rows:
        name = _name(t, rownum, r, "name", "a source name")
        kind_cell = t.get(r, "kind")
        kind = None if kind_cell is None else _text(kind_cell).upper()
        if kind not in ("V", "I"):
            raise InputError(
                "sources",
                rownum,
                "kind",
                kind_cell,
                "expected V (voltage source) or I (current source)",
            )
        a = _name(t, rownum, r, "from", "a node name")
        b = _name(t, rownum, r, "to", "a node name")
        if a == b:
            raise InputError(
                "sources",
                rownum,
                "to",
                b,
                f"both ends on node {a!r}; expected two different nodes",
            )
        density_cell = t.get(r, "density")
        if density_cell is not None:
            key = name.lower()
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
            noise.append(_noise_row(t, rownum, r, name, str(kind), a, b, density_cell))
            continue
        if t.get(r, "corner_hz") is not None:
            raise InputError(
                "sources",
                rownum,
                "corner_hz",
                t.get(r, "corner_hz"),
                "corner_hz belongs to a noise row; fill density too, or leave it empty",
            )
        # frequency: exactly one column filled
        filled = [c for c in freq_cols if t.get(r, c) is not None]
        if len(filled) != 1:
            where = filled[1] if len(filled) > 1 else freq_cols[0]
            raise InputError(
                "sources",
                rownum,
                where,
                expected="fill exactly one of "
                + ", ".join(freq_cols)
                + (f" (found {', '.join(filled)})" if filled else ""),
            )
        fcol = filled[0]
        fval = parse_number(
            t.get(r, fcol),
            unit={"freq_hz": "Hz", "omega_rad_s": "rad/s", "harmonic": None}[fcol],
            table="sources",
            row=rownum,
            column=fcol,
        )
        if fval < 0:
            raise InputError("sources", rownum, fcol, t.get(r, fcol), "expected a frequency ≥ 0")
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
                    t.get(r, "harmonic"),
                    "a harmonic order needs fundamental_hz in the options table",
                )
            freq = fval * opts.fundamental_hz
        # amplitude: exactly one column filled
        afilled = [c for c in amp_cols if t.get(r, c) is not None]
        if len(afilled) != 1:
            amp_where = afilled[1] if len(afilled) > 1 else amp_cols[0]
            raise InputError(
                "sources",
                rownum,
                amp_where,
                expected="fill exactly one of "
                + ", ".join(amp_cols)
                + (f" (found {', '.join(afilled)})" if afilled else ""),
            )
        acol = afilled[0]
        amp = parse_number(t.get(r, acol), unit=kind, table="sources", row=rownum, column=acol)
        phase_cell = t.get(r, "phase_deg")
        phase = (
            0.0
            if phase_cell is None
            else parse_number(
                phase_cell, unit="°", table="sources", row=rownum, column="phase_deg"
            )
        )
        shape_cell = t.get(r, "shape")
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
            phasor = complex(amp)  # signed DC value; rms of DC equals its value
        else:
            if amp < 0:
                raise InputError(
                    "sources",
                    rownum,
                    acol,
                    t.get(r, acol),
                    "an AC amplitude must be ≥ 0 (use phase_deg = 180 to invert)",
                )
            peak = amp * math.sqrt(2) if acol == "rms" else amp
            ang = math.radians(phase - (90.0 if shape == "sin" else 0.0))
            phasor = complex(peak * math.cos(ang), peak * math.sin(ang))
        rec = SourceRow(rownum, name, kind, a, b, freq, phasor)
        prev = first.get(name.lower())
        if name.lower() in noise_names:
            raise InputError(
                "sources",
                rownum,
                "name",
                name,
                f"name already used by a noise source (sources row {noise_names[name.lower()]})",
            )
        if prev is None:
            first[name.lower()] = rec
        else:
            if prev.kind != kind:
                raise InputError(
                    "sources",
                    rownum,
                    "kind",
                    kind_cell,
                    f"tones of source {name!r} must share one kind ({prev.kind} in row {prev.row})",
                )
            if (prev.from_node, prev.to_node) != (a, b):
                col = "from" if prev.from_node != a else "to"
                raise InputError(
                    "sources",
                    rownum,
                    col,
                    a if col == "from" else b,
                    f"tones of source {name!r} must share nodes "
                    f"({prev.from_node}→{prev.to_node} in row {prev.row})",
                )
        out.append(rec)
    return tuple(out), tuple(noise)


def _noise_row(
    t: _Table, rownum: int, r: list[Cell], name: str, kind: str, a: str, b: str, cell: Cell
) -> NoiseRow:
    for col in _TONE_ONLY:
        if t.get(r, col) is not None:
            raise InputError(
                "sources",
                rownum,
                col,
                t.get(r, col),
                "a noise row (density filled) is not a tone: leave " + col + " empty",
            )
    unit = _DENSITY_UNIT[kind]
    density = parse_number(cell, unit=unit, table="sources", row=rownum, column="density")
    if not density > 0:
        raise InputError(
            "sources", rownum, "density", cell, f"expected a noise density > 0 ({unit})"
        )
    corner_cell = t.get(r, "corner_hz")
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
        if key == "ground":
            values[key] = _text(cell)
        elif key == "fundamental_hz":
            f = parse_number(cell, unit="Hz", table="options", row=rownum, column="value")
            if f <= 0:
                raise InputError("options", rownum, "value", cell, "fundamental_hz must be > 0")
            values[key] = f
        elif key == "thd_max_order":
            n = parse_number(cell, unit=None, table="options", row=rownum, column="value")
            if n < 2 or not float(n).is_integer():
                raise InputError("options", rownum, "value", cell, "expected a whole number ≥ 2")
            values[key] = int(n)
    return Options(**values)


def parse_cell(text: str) -> Any:
    """Text from a CSV file or a command line, as a worksheet cell would hold it: empty →
    None, a number → float, TRUE/FALSE → bool, ``"quoted"`` → the text inside, else text."""
    s = text.strip()
    if s == "":
        return None
    try:
        return float(s)
    except ValueError:
        pass
    if s.upper() in ("TRUE", "FALSE"):
        return s.upper() == "TRUE"
    if len(s) >= 2 and s[0] == s[-1] == '"':
        return s[1:-1]
    return s
