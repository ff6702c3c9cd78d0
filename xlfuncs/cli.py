"""Command line: ``xlfuncs solve | report | scan``. Uses only the public API.

Errors print one line on stderr and exit with status 2; no traceback reaches a user.
"""

from __future__ import annotations

import argparse
import csv
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from . import __version__
from .api import impedance_scan, solve
from .errors import XlfuncsError
from .tables import parse_cell
from .views import element_table, node_table, scan_freqs, scan_table, solve_table

__all__ = ["main", "read_csv_table"]


def read_csv_table(path: str | Path) -> list[list[Any]]:
    """A CSV file as a worksheet would deliver it: empty → None, numbers → float."""
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            rows = list(csv.reader(fh))
    except OSError as exc:
        raise XlfuncsFileError(f"cannot read {str(p)!r}: {exc.strerror or exc}") from None
    except UnicodeDecodeError:
        raise XlfuncsFileError(f"{str(p)!r} is not UTF-8 text (save the CSV as UTF-8)") from None
    return [[parse_cell(c) for c in r] for r in rows]


class XlfuncsFileError(XlfuncsError, OSError):
    """A file named on the command line cannot be read."""


def format_table(rows: Sequence[Sequence[Any]]) -> str:
    """Aligned plain-text table; numbers with 6 significant digits."""

    def fmt(v: Any) -> str:
        if isinstance(v, float):
            return f"{v:.6g}"
        return str(v)

    cells = [[fmt(v) for v in r] for r in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(cells[0]))]
    lines = []
    for k, r in enumerate(cells):
        lines.append(
            "  ".join(c.rjust(w) if k else c.ljust(w) for c, w in zip(r, widths, strict=True))
        )
        if k == 0:
            lines.append("  ".join("-" * w for w in widths))
    return "\n".join(lines)


def _parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(
        prog="xlfuncs", description="Multi-frequency circuit analysis by phasor superposition."
    )
    ap.add_argument("--version", action="version", version=f"xlfuncs {__version__}")
    sub = ap.add_subparsers(dest="command", required=True)

    s = sub.add_parser("solve", help="per-frequency phasors and totals of one voltage or current")
    s.add_argument("parts", help="parts table (CSV, header row first)")
    s.add_argument("sources", help="sources table (CSV)")
    s.add_argument("--target", required=True, help="part, source or node name")
    s.add_argument(
        "--quantity",
        choices=["V", "I", "v", "i"],
        help="V or I (default: I for a part, V for a node)",
    )
    s.add_argument("--options", help="options table (CSV: key,value)")

    r = sub.add_parser("report", help="RMS, peak and power of every part, node voltages, balance")
    r.add_argument("parts")
    r.add_argument("sources")
    r.add_argument("--options")

    z = sub.add_parser("scan", help="driving-point impedance of a node, sources zeroed")
    z.add_argument("parts")
    z.add_argument("--node", required=True)
    z.add_argument(
        "--sources", help="sources table (CSV); sources are zeroed but stay in the network"
    )
    z.add_argument("--f-start", type=float, required=True, help="Hz")
    z.add_argument("--f-stop", type=float, required=True, help="Hz")
    z.add_argument("--points", type=int, default=50)
    z.add_argument("--options")

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
    return ap


def main(argv: Sequence[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        opts = read_csv_table(args.options) if getattr(args, "options", None) else None
        if args.command == "solve":
            sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), opts)
            sp = sol.signal(args.target, args.quantity)
            pk = sp.true_peak()
            print(f"{sp.label} — peak phasors, cosine reference (DC: signed value in row 0 Hz)")
            print(format_table(solve_table(sol, args.target, args.quantity)))
            print()
            print(f"DC value      {float(sp.dc):.6g}")
            print(f"total RMS     {float(sp.rms_total):.6g}")
            print(f"true peak     {float(pk.value):.6g}  ({pk.method})")
            print(f"crest factor  {float(sp.crest_factor):.6g}")
            try:
                print(
                    f"THD           {100 * float(sp.thd()):.4g} %  (harmonics 2…"
                    f"{sol.circuit.options.thd_max_order} of the fundamental, DC excluded)"
                )
            except XlfuncsError as exc:
                print(f"THD           n/a ({exc})")
        elif args.command == "report":
            sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), opts)
            print("Parts and sources (RMS and peak over all frequencies; power absorbed, W)")
            print(format_table(element_table(sol)))
            print()
            print("Node voltages (against the reference)")
            print(format_table(node_table(sol)))
        elif args.command == "scan":
            f = scan_freqs(args.f_start, args.f_stop, args.points)
            srcs = read_csv_table(args.sources) if args.sources else None
            freqs, zz = impedance_scan(read_csv_table(args.parts), args.node, f, opts, srcs)
            print(format_table(scan_table(freqs, zz)))
        elif args.command == "recalc":
            return _recalc(args)
        elif args.command == "batch":
            return _batch(args)
    except XlfuncsError as exc:
        print(f"xlfuncs: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("xlfuncs: interrupted; everything already written is kept", file=sys.stderr)
        return 130
    return 0


def _assignments(items: Sequence[str]) -> dict[str, Any]:
    from .workbook.recalc import parse_value

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
    from .workbook.recalc import recalc

    rep = recalc(args.book, args.output, _assignments(args.set))
    print(f"recalculated {rep.formulas} formulas ({rep.spills} spilling) in {rep.seconds:.2f} s")
    print(f"written: {rep.output}")
    if rep.errors:
        shown = ", ".join(rep.errors[:10]) + (" …" if len(rep.errors) > 10 else "")
        print(f"{len(rep.errors)} formula cells hold Excel errors: {shown}")
    return 0


def _batch(args: argparse.Namespace) -> int:
    from .workbook.batch import run_batch

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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
