"""``xlfuncs recalc | batch``: workbooks recalculated headlessly."""

from __future__ import annotations

import argparse
from collections.abc import Sequence
from typing import Any

from .common import XlfuncsFileError


def register(sub: Any) -> None:
    """Add this module's commands to the subparsers ``sub``."""
    rc = sub.add_parser(
        "recalc", help="recalculate a workbook headlessly (Excel built-ins + CKT_)"
    )
    rc.add_argument("book", help=".xlsx or .xlsm workbook (never modified)")
    rc.add_argument("-o", "--output", help="output workbook (default BOOK.recalc.xlsx)")
    rc.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="NAME=VALUE",
        help="set an input cell (defined name or Sheet!A1) before recalculating",
    )
    rc.set_defaults(run=_recalc)

    bt = sub.add_parser("batch", help="run the cases of a CSV through a template workbook")
    bt.add_argument("template")
    bt.add_argument(
        "cases", help="CSV: headers are defined names or Sheet!A1; optional 'case' column"
    )
    bt.add_argument("-o", "--output", required=True, help="output directory")
    bt.add_argument("-j", "--jobs", type=int, default=1, help="worker processes")
    bt.add_argument("--collect", nargs="+", default=[], metavar="NAME", help="outputs to collect")
    bt.add_argument(
        "--books", action="store_true", help="also write one recalculated workbook per case"
    )
    bt.add_argument("--force", action="store_true", help="redo cases already finished")
    bt.add_argument(
        "--cluster", metavar="ADDRESS", help="Dask scheduler address (tcp://host:8786)"
    )
    bt.add_argument("--no-progress", action="store_true")
    bt.set_defaults(run=_batch)


def _assignments(items: Sequence[str]) -> dict[str, Any]:
    from ..workbook.recalc import parse_value

    out: dict[str, Any] = {}
    for item in items:
        name, eq, value = item.partition("=")
        if not eq or not name.strip():
            raise XlfuncsFileError(
                f"--set {item!r}: expected NAME=VALUE (a defined name or Sheet!A1)"
            )
        out[name.strip()] = parse_value(value)
    return out


def _recalc(args: argparse.Namespace) -> int:
    from ..workbook.recalc import recalc

    rep = recalc(args.book, args.output, _assignments(args.set))
    print(f"recalculated {rep.formulas} formulas ({rep.spills} spilling) in {rep.seconds:.2f} s")
    print(f"written: {rep.output}")
    if rep.errors:
        shown = ", ".join(rep.errors[:10]) + (" …" if len(rep.errors) > 10 else "")
        print(f"{len(rep.errors)} formula cells hold Excel errors: {shown}")
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
        progress=not args.no_progress,
    )
    print(
        f"{rep.done} cases run ({rep.failed} failed), {rep.skipped} already finished, "
        f"{rep.seconds:.2f} s ({rep.rate:.1f} cases/s)"
    )
    print(f"summary: {rep.summary_csv} and {rep.summary_xlsx}")
    for e in rep.errors[:10]:
        print(f"  failed: {e}")
    return 1 if rep.failed else 0
