"""``xlfuncs study``: a three-phase harmonic study from an equipment table (CSV)."""

from __future__ import annotations

import argparse
from typing import Any

from ..errors import InputError
from ..power import CAUTION, NOT_MODELLED, harmonic_study
from ..power.views import branch_table, bus_table, fundamental_table, neutral_table, thd_basis
from .common import format_table, read_csv_table

# argument help of the equipment-table commands (study, duty item)
EQUIPMENT_HELP = "equipment table (CSV, header row first), e.g. equipment.csv"
SPECTRA_HELP = "spectra table (CSV: spectrum,order,pct,phase_deg), e.g. --spectra spectra.csv"
STUDY_OPTIONS_HELP = "options table (CSV: key,value; fundamental_hz required, max_order), e.g. --options options.csv"


def register(sub: Any) -> None:
    """Add this module's command to the subparsers ``sub``."""
    s = sub.add_parser(
        "study",
        help="three-phase harmonic study from equipment ratings (sequence networks)",
        description="Balanced three-phase harmonic study: fundamental solve with the "
        "converters as constant power, then every harmonic order in its sequence network. "
        + CAUTION,
    )
    s.add_argument("equipment", help=EQUIPMENT_HELP)
    s.add_argument(
        "--spectra",
        help=SPECTRA_HELP,
    )
    s.add_argument(
        "--options",
        help=STUDY_OPTIONS_HELP,
    )
    s.add_argument(
        "--bus", required=True, help="bus whose harmonic voltages are printed, e.g. --bus PCC"
    )
    s.add_argument(
        "--item",
        action="append",
        default=[],
        metavar="NAME",
        help="also print the line currents of this item (repeatable), e.g. --item T1",
    )
    s.add_argument(
        "--neutral",
        action="append",
        default=[],
        metavar="NAME",
        help="also print the neutral current of this grounded star (repeatable), e.g. --neutral T1",
    )
    s.set_defaults(run=_study)


def _study(args: argparse.Namespace) -> int:
    eq = read_csv_table(args.equipment)
    spectra = read_csv_table(args.spectra) if args.spectra else None
    options = read_csv_table(args.options) if args.options else None
    st = harmonic_study(eq, spectra, options)
    # every name the user gave is resolved, and every table built, before anything prints:
    # a typo is one line, not a line after half the results
    bus = st.equipment.bus(args.bus)
    for option, names in (("--item", args.item), ("--neutral", args.neutral)):
        for name in names:
            try:
                st.equipment.item(name)
            except InputError as exc:
                raise InputError("argument", None, option, name, exc.expected) from None
    out: list[str] = []
    fr = st.fundamental
    out.append("Three-phase harmonic study (balanced; per phase, line-to-neutral)")
    out.append(
        f"fundamental {st.f1:g} Hz: constant-power devices converged in {fr.iterations} "
        f"iterations, power mismatch {fr.mismatch:.1e}"
    )
    out.append(format_table(fundamental_table(st)))
    if fr.theta1_deg:
        out.append("")
        out.append(
            format_table(
                [["device", "bus", "i1_rms", "theta1_deg"]]
                + [
                    [n, st.equipment.item(n).bus, abs(i) / 2**0.5, fr.theta1_deg[n]]
                    for n, i in fr.device_current.items()
                ]
            )
        )
    out.append("")
    out.append(
        f"Bus {bus} ({st.bus_kv(bus):g} kV nominal): voltage per order (V rms, line-to-neutral)"
    )
    out.append(format_table(bus_table(st, bus)))
    for name in args.item:
        out.append("")
        out.append(f"Item {name}: line current from its bus (A rms)")
        out.append(format_table(branch_table(st, name)))
    for name in args.neutral:
        out.append("")
        out.append(f"Item {name}: neutral current (A rms)")
        out.append(format_table(neutral_table(st, name)))
    out.append("")
    out.append(thd_basis(st))
    out.extend(f"assumed: {note}" for note in st.assumptions)
    out.append(NOT_MODELLED)
    out.append(CAUTION)
    print("\n".join(out))
    return 0
