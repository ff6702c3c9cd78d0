"""``xlfuncs recalc | batch``: workbooks recalculated headlessly.

Exit statuses (docs/ENGINE.md): 0 everything computed; 1 written, but formula cells hold
errors (``recalc``) or cases failed (``batch``), each listed; 2 refused with one line on
stderr (a file, an argument or an input value that cannot be used; nothing written, and for
a batch nothing already recorded lost); 130 interrupted (Ctrl-C).
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from typing import Any

from .common import XlfuncsFileError, count_arg


def register(sub: Any) -> None:
    """Add this module's commands to the subparsers ``sub``."""
    rc = sub.add_parser(
        "recalc", help="recalculate a workbook headlessly (Excel built-ins + CKT_)"
    )
    rc.add_argument(
        "book", help=".xlsx or .xlsm workbook, never modified, e.g. plant_harmonics.xlsx"
    )
    rc.add_argument(
        "-o",
        "--output",
        help="output workbook (default BOOK.recalc.xlsx), e.g. -o mine.xlsx",
    )
    rc.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="NAME=VALUE",
        help="set an input cell (defined name or Sheet!A1) before recalculating; repeat for "
        "more, e.g. --set cap_steps=2 --set Inputs!B8=80 (values are checked against the "
        "cell's data validation)",
    )
    rc.set_defaults(run=_recalc)

    bt = sub.add_parser("batch", help="run the cases of a CSV through a template workbook")
    bt.add_argument("template", help="template workbook, e.g. plant_harmonics.xlsx")
    bt.add_argument(
        "cases",
        help="cases CSV: headers are defined names or Sheet!A1, optional 'case' column for "
        "the label, one row per case (a blank cell keeps the template's value), e.g. cases.csv",
    )
    bt.add_argument("-o", "--output", required=True, help="output directory, e.g. -o out/sweep")
    bt.add_argument(
        "-j", "--jobs", type=count_arg, default=1, help="worker processes (default 1), e.g. -j 2"
    )
    bt.add_argument(
        "--collect",
        nargs="+",
        default=[],
        metavar="NAME",
        help="outputs to record per case (defined names or Sheet!A1), e.g. --collect "
        "bus_thd_pct verdict",
    )
    bt.add_argument(
        "--books",
        action="store_true",
        help="also write one recalculated workbook per case into DIR/books/",
    )
    bt.add_argument(
        "--force", action="store_true", help="start over: forget the cases already finished"
    )
    bt.add_argument(
        "--cluster",
        metavar="ADDRESS",
        help="run on a Dask scheduler instead of local processes, e.g. --cluster "
        "tcp://10.0.0.5:8786",
    )
    bt.add_argument(
        "--no-progress",
        action="store_true",
        help="no progress bar (it shows only when stderr is a terminal)",
    )
    bt.set_defaults(run=_batch)


def _assignments(items: Sequence[str]) -> dict[str, Any]:
    from ..workbook.recalc import parse_value

    out: dict[str, Any] = {}
    for item in items:
        name, eq, value = item.partition("=")
        if not eq or not name.strip():
            raise XlfuncsFileError(
                f"--set {item!r}: expected NAME=VALUE (a defined name or Sheet!A1), "
                "e.g. --set cap_steps=2"
            )
        out[name.strip()] = parse_value(value)
    return out


def _listed(errors: list[str], n: int = 10) -> str:
    return ", ".join(errors[:n]) + (" …" if len(errors) > n else "")


def _recalc(args: argparse.Namespace) -> int:
    from ..workbook.recalc import recalc

    rep = recalc(args.book, args.output, _assignments(args.set))
    print(f"recalculated {rep.formulas} formulas ({rep.spills} spilling) in {rep.seconds:.2f} s")
    print(f"written: {rep.output}")
    for note in rep.notes:
        print(f"note: {note}")
    if rep.errors:
        print(f"{len(rep.errors)} formula cells hold errors: {_listed(rep.errors)}")
        return 1
    return 0


def _batch(args: argparse.Namespace) -> int:
    from ..workbook.batch import run_batch

    rep = run_batch(
        args.template,
        args.cases,
        args.output,
        jobs=args.jobs,
        collect=args.collect,
        books=args.books,
        force=args.force,
        cluster=args.cluster,
        progress=not args.no_progress and sys.stderr.isatty(),
    )
    print(
        f"{rep.done} cases run ({rep.failed} failed), {rep.skipped} already finished, "
        f"{rep.seconds:.2f} s ({rep.rate:.1f} cases/s)"
    )
    if rep.dropped:
        print(f"{rep.dropped} damaged record line(s) found and dropped; those cases ran again")
    print(f"summary: {rep.summary_csv} and {rep.summary_xlsx}")
    for e in rep.errors[:10]:
        print(f"  failed: {e}")
    return 1 if rep.failed else 0
