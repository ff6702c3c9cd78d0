"""``xlfuncs solve | report | scan``: networks from CSV tables."""

from __future__ import annotations

import argparse
from typing import Any

from ..api import impedance_scan, solve
from ..errors import XlfuncsError
from ..views import element_table, node_table, scan_freqs, scan_table, solve_table
from .common import format_table, read_csv_table


def register(sub: Any) -> None:
    """Add this module's commands to the subparsers ``sub``."""
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
    s.set_defaults(run=_solve)

    r = sub.add_parser("report", help="RMS, peak and power of every part, node voltages, balance")
    r.add_argument("parts")
    r.add_argument("sources")
    r.add_argument("--options")
    r.set_defaults(run=_report)

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
    z.set_defaults(run=_scan)


def _options(args: argparse.Namespace) -> Any:
    return read_csv_table(args.options) if args.options else None


def _solve(args: argparse.Namespace) -> int:
    sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), _options(args))
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
    return 0


def _report(args: argparse.Namespace) -> int:
    sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), _options(args))
    print("Parts and sources (RMS and peak over all frequencies; power absorbed, W)")
    print(format_table(element_table(sol)))
    print()
    print("Node voltages (against the reference)")
    print(format_table(node_table(sol)))
    return 0


def _scan(args: argparse.Namespace) -> int:
    f = scan_freqs(args.f_start, args.f_stop, args.points)
    srcs = read_csv_table(args.sources) if args.sources else None
    freqs, zz = impedance_scan(read_csv_table(args.parts), args.node, f, _options(args), srcs)
    print(format_table(scan_table(freqs, zz)))
    return 0
