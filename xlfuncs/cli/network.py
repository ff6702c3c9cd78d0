"""``xlfuncs solve | report | scan``: networks from CSV tables."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from typing import Any

from ..api import impedance_scan, solve
from ..errors import InputError, TableError, XlfuncsError
from ..views import element_table, node_table, scan_freqs, scan_table, solve_table
from .common import (
    XlfuncsFileError,
    count_arg,
    eng,
    format_table,
    hz_arg,
    read_csv_table,
    warn_without_sources,
)

_PARTS_HELP = "parts table, CSV with a header row (name,kind,from,to,value), e.g. parts.csv"
_SOURCES_HELP = (
    "sources table, CSV with a header row (name,kind,from,to,freq_hz,peak|rms,phase_deg), "
    "e.g. sources.csv"
)
_OPTIONS_HELP = "options table, CSV of key,value rows, e.g. --options options.csv"


def register(sub: Any) -> None:
    """Add this module's commands to the subparsers ``sub``."""
    s = sub.add_parser("solve", help="per-frequency phasors and totals of one voltage or current")
    s.add_argument("parts", help=_PARTS_HELP)
    s.add_argument("sources", help=_SOURCES_HELP)
    s.add_argument(
        "--target", required=True, help="part, source or node name, e.g. --target C_bank"
    )
    s.add_argument(
        "--quantity",
        choices=["V", "I", "v", "i"],
        help="V or I (default: I for a part, V for a node), e.g. --quantity V",
    )
    s.add_argument("--options", help=_OPTIONS_HELP)
    s.set_defaults(run=_solve)

    r = sub.add_parser("report", help="RMS, peak and power of every part, node voltages, balance")
    r.add_argument("parts", help=_PARTS_HELP)
    r.add_argument("sources", help=_SOURCES_HELP)
    r.add_argument("--options", help=_OPTIONS_HELP)
    r.set_defaults(run=_report)

    z = sub.add_parser("scan", help="driving-point impedance of a node, sources zeroed")
    z.add_argument("parts", help=_PARTS_HELP)
    z.add_argument("--node", required=True, help="node to look into, e.g. --node bus")
    z.add_argument(
        "--sources",
        help="sources table (CSV), e.g. --sources sources.csv; the sources are zeroed but "
        "stay in the network (a supply's impedance and its nodes belong to |Z|) — give it",
    )
    z.add_argument(
        "--f-start",
        type=hz_arg,
        required=True,
        help="first frequency, Hz, SI prefixes allowed, e.g. --f-start 10 or --f-start 1k",
    )
    z.add_argument("--f-stop", type=hz_arg, required=True, help="last frequency, e.g. --f-stop 5k")
    z.add_argument(
        "--points",
        type=count_arg,
        default=None,
        help="log-spaced frequencies (default 200, as CKT_SCAN), e.g. --points 400",
    )
    z.add_argument("--options", help=_OPTIONS_HELP)
    z.set_defaults(run=_scan)


def _options(args: argparse.Namespace) -> Any:
    return read_csv_table(args.options) if args.options else None


def _guarded(args: argparse.Namespace, work: Callable[[], int]) -> int:
    """A numerical failure the core did not turn into a one-line error becomes one,
    naming the tables."""
    import warnings

    import numpy as np

    failure: BaseException | None = None
    status = 2
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            status = work()
        except (InputError, TableError) as exc:  # name the file that holds the table
            path = {
                "parts": getattr(args, "parts", None),
                "sources": getattr(args, "sources", None),
                "options": getattr(args, "options", None),
            }.get(exc.table)
            if path is None:
                raise
            raise XlfuncsFileError(f"{path}: {exc}") from None
        except XlfuncsError:
            raise
        except (np.linalg.LinAlgError, ArithmeticError, ValueError) as exc:
            failure = exc
    if failure is None:  # warnings of a run that succeeded: one line each
        for text in dict.fromkeys(" ".join(str(w.message).split()) for w in caught):
            print(f"xlfuncs: warning: {text}", file=sys.stderr)
        return status
    files = " and ".join(
        repr(f) for f in (args.parts, getattr(args, "sources", None)) if f is not None
    )
    raise XlfuncsFileError(
        f"cannot solve the network of {files} ({type(failure).__name__}: {failure}); check "
        "the frequencies and values for extreme magnitudes (e.g. a tone far above any "
        "physical frequency)"
    ) from None


def _unit(label: str) -> str:
    return "V" if label.startswith("V") else "A"


def _solve(args: argparse.Namespace) -> int:
    def work() -> int:
        sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), _options(args))
        sp = sol.signal(args.target, args.quantity)
        pk = sp.true_peak()
        u = _unit(sp.label)
        print(f"{sp.label} — peak phasors, cosine reference (DC: signed value in row 0 Hz)")
        print(format_table(solve_table(sol, args.target, args.quantity), units=["Hz", u, u, "°"]))
        print()
        print(f"DC value      {eng(float(sp.dc), u)}")
        print(f"total RMS     {eng(float(sp.rms_total), u)}")
        print(f"true peak     {eng(float(pk.value), u)}  ({pk.method})")
        try:
            print(f"crest factor  {eng(float(sp.crest_factor), prefix=False)}")
        except XlfuncsError as exc:  # a zero signal has none; the rest above stands
            print(f"crest factor  n/a ({exc.expected if isinstance(exc, InputError) else exc})")
        try:
            thd = sp.thd_result()
            basis = "the lowest tone, taken as the fundamental" if thd.assumed else "given"
            print(
                f"THD           {100 * float(thd.value):.4g} %  (harmonics 2…{thd.max_order} "
                f"of the fundamental {eng(float(thd.fundamental_hz), 'Hz')} ({basis}), "
                "DC excluded)"
            )
        except XlfuncsError as exc:
            print(f"THD           n/a ({exc.expected if isinstance(exc, InputError) else exc})")
        return 0

    return _guarded(args, work)


def _report(args: argparse.Namespace) -> int:
    def work() -> int:
        sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), _options(args))
        print("Parts and sources (RMS and peak over all frequencies; power absorbed)")
        print(format_table(element_table(sol), units=["", "", "V", "A", "A", "W", ""]))
        print()
        print("Node voltages (against the reference)")
        print(format_table(node_table(sol), units=["", "V", "V", "V", ""]))
        return 0

    return _guarded(args, work)


def _scan(args: argparse.Namespace) -> int:
    def work() -> int:
        f = scan_freqs(args.f_start, args.f_stop, args.points)
        warn_without_sources(args, "scan", "|Z|")
        srcs = read_csv_table(args.sources) if args.sources else None
        freqs, zz = impedance_scan(read_csv_table(args.parts), args.node, f, _options(args), srcs)
        print(format_table(scan_table(freqs, zz), units=["Hz", "Ω", "°"]))
        return 0

    return _guarded(args, work)
