"""Calculation templates as data, rendered by one builder.

``python -m xlfuncs.templates workbook_templates`` (``make templates``) writes every
template: :func:`.builder.build` lays the description out with XlsxWriter (formulas as
Excel 365 dynamic arrays), then the headless engine recalculates it so that every formula
carries a cached value. The book does not ask Excel to recalculate on opening, so those
values survive in an Excel without the functions. A test fails when the committed
templates differ from what this produces. Every scenario is invented demo data, marked
as such on every sheet.

The description format (:mod:`.model`)
--------------------------------------
A :class:`~.model.Template` lists, in plain frozen dataclasses:

``inputs``
    :class:`~.model.Section` of :class:`~.model.Input` (defined name, label, default, the
    unit the user types in, a :class:`~.model.Rule` — ``num(lo, hi)``, ``whole(lo, hi)``,
    ``text(n)`` — and a note) and :class:`~.model.Grid` (an editable table whose columns
    become defined names). Each input gets data validation with an input message, and a
    check cell that says what it expects; the verdict counts inputs not accepted.
``network``
    :class:`~.model.Table` of :class:`~.model.Row` whose cells are literals or formulas of
    the inputs; ``Row(when=...)`` leaves a part out (blank row) when its condition fails.
    Each table's name (``parts_tbl``, ``sources_tbl``, ``opts``) is a defined name.
``results``
    in order: :class:`~.model.Section` of :class:`~.model.Result` (named cells),
    :class:`~.model.Block` (a spilled function, its columns formatted and its rows
    reserved) and formula tables (``Table(excel=False)``); ``data`` holds long blocks for
    the Data sheet (hidden, so it does not print).
``checks``
    :class:`~.model.Check`: value, rule, limit, unit, the limit's source and the condition
    under which it applies. The result reads PASS/FAIL from numbers only, ERROR otherwise,
    n/a when it does not apply.
``charts``, ``notes``, ``key_results`` (for the cover) and ``scenarios``
    (:class:`~.model.Sweep` axes; every combination re-evaluates every check on its own
    copy of whatever depends on the swept inputs).

Formulas are Excel text over the template's names plus placeholders: ``{key}`` is block
or table ``key`` as a whole (a spilled block renders as ``ANCHORARRAY``), ``{key:col}``
the data rows of one of its columns, ``{key:@}`` a block's spilling cell alone (its header,
or the one-line message it shows when it did not spill: an ``ANCHORARRAY`` of a cell that
did not spill is ``#REF!``), ``{@col}`` the same row's cell in a formula table;
:func:`.formulas.pick` finds a cell of a spilled table by row label and header. Example::

    Template(
        file="rc.xlsx", title="RC low-pass", subtitle="…", scope=("…",),
        inputs=(Section("Filter", (Input("r_ohm", "Resistance", 1000, "Ω", num(1e-3, 1e9)),
                                   Input("c_uf", "Capacitance", 1, "µF", num(1e-6, 1e6)))),),
        network=(Table("parts_tbl", "Parts", PART_COLS, (
                     Row(("R1", "R", "in", "out", "=r_ohm")),
                     Row(("C1", "C", "out", "GND", "=c_uf*1E-6")))), SOURCES, OPTIONS),
        results=(Section("Key results", (Result("v_out", "Output RMS",
                         '=CKT_RMS(parts_tbl,sources_tbl,"out","V",opts)', "V", "3"),)),),
        checks=(Check("Output RMS", "=v_out", "=1", "V", "design requirement"),),
        charts=(), notes=(("Method", ("…",)),), key_results=("v_out",),
    )
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

from .builder import CAUTION, DEMO, build
from .dclink import TEMPLATE as DCLINK
from .detuned import TEMPLATE as DETUNED
from .filter_design import TEMPLATE as FILTER_DESIGN
from .input_filter import TEMPLATE as INPUT_FILTER
from .model import Template
from .plant import TEMPLATE as PLANT
from .twelve_pulse import TEMPLATE as TWELVE

__all__ = ["CAUTION", "DEMO", "TEMPLATES", "Template", "build", "build_all", "main"]

TEMPLATES: dict[str, Template] = {
    t.file: t for t in (PLANT, DETUNED, DCLINK, INPUT_FILTER, FILTER_DESIGN, TWELVE)
}


def build_all(out_dir: str | Path, names: list[str] | None = None) -> list[Path]:
    """Write the templates (all, or the given file names) into ``out_dir`` with cached
    values from our engine; a formula error in a default book is a bug and raises."""
    from ..workbook.recalc import recalc

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    written = []
    with tempfile.TemporaryDirectory() as tmp:
        for name in names or list(TEMPLATES):
            raw = Path(tmp) / name
            build(TEMPLATES[name], raw)
            rep = recalc(raw, out / name)
            if rep.errors:
                raise RuntimeError(f"{name}: formula errors after recalculation: {rep.errors[:5]}")
            written.append(out / name)
    return written


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    for p in build_all(args[0] if args else "workbook_templates", args[1:] or None):
        print(f"wrote {p}")
    return 0
