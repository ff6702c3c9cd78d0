"""``xlfuncs duty powers | xfmr | filter | cap-step | cable | item``: equipment-duty figures,
from the core tables, from plain spectra and ratings, or for an item of the equipment-table
study."""

from __future__ import annotations

import argparse
from typing import Any

from ..errors import InputError
from .common import count_arg, format_table, hz_arg, number_arg, read_csv_table
from .power import EQUIPMENT_HELP, SPECTRA_HELP, STUDY_OPTIONS_HELP

CAUTION = (
    "Screening calculation: check against measurements; the equipment makers, the utility "
    "and a licensed engineer decide."
)


def register(sub: Any) -> None:
    """Add ``duty`` and its subcommands to the subparsers ``sub``."""
    d = sub.add_parser(
        "duty",
        help="equipment duty: IEEE 1459 powers, transformer derating, filters, cable losses",
        description="Equipment-duty figures (screening calculations).",
    )
    dsub = d.add_subparsers(dest="duty_command", required=True)

    p = dsub.add_parser(
        "powers",
        help="IEEE 1459-2010 powers of a part (P, Q1, S, S_N, distortion powers, PF, THD)",
    )
    p.add_argument("parts", help="parts table, CSV with its header row (e.g. parts.csv)")
    p.add_argument("sources", help="sources table, CSV (e.g. sources.csv)")
    p.add_argument("--part", required=True, help="part or source name (e.g. --part M1)")
    p.add_argument("--options", help="options table, CSV key,value (e.g. --options opts.csv)")
    p.add_argument(
        "--wiring",
        default="1ph",
        help="1ph (a one-phase port, default), 3ph4w or 3ph3w: the part of a per-phase model "
        "of a balanced three-phase item (e.g. --wiring 3ph4w)",
    )
    p.set_defaults(run=_powers)

    x = dsub.add_parser(
        "xfmr", help="transformer derating for harmonic current (IEEE C57.110, K-factor)"
    )
    _spectrum_arg(x)
    x.add_argument(
        "--p-ec",
        type=number_arg(),
        required=True,
        help="rated winding eddy loss, pu of rated I²R (e.g. --p-ec 0.08)",
    )
    x.add_argument(
        "--p-osl",
        type=number_arg(),
        help="rated other stray loss, pu of rated I²R (e.g. --p-osl 0.2)",
    )
    x.set_defaults(run=_xfmr)

    f = dsub.add_parser(
        "filter",
        help="size a tuned or high-pass filter; optionally its supply resonance, rating, drift",
    )
    f.add_argument("type", choices=["tuned", "highpass"], help="filter type (e.g. tuned)")
    f.add_argument(
        "--kvar",
        type=number_arg(),
        required=True,
        help="kvar delivered at the fundamental (e.g. --kvar 300)",
    )
    f.add_argument(
        "--bus-v",
        type=number_arg(),
        required=True,
        help="bus voltage, V rms (line-to-line for --phases 3) (e.g. --bus-v 480)",
    )
    f.add_argument(
        "--f1", type=hz_arg, required=True, help="fundamental frequency, Hz (e.g. --f1 60)"
    )
    f.add_argument(
        "--phases",
        type=int,
        required=True,
        choices=[1, 3],
        help="1: single-phase values; 3: three-phase kvar and line-to-line volts (e.g. 3)",
    )
    f.add_argument(
        "--order",
        type=number_arg(),
        required=True,
        help="tuned (or corner) order h > 1 (e.g. --order 4.7)",
    )
    f.add_argument(
        "--q",
        type=number_arg(),
        required=True,
        help="quality factor: tuned X_n/R, high-pass R/X_n (e.g. --q 50)",
    )
    f.add_argument(
        "--ssc-mva", type=number_arg(), help="bus short-circuit MVA (e.g. --ssc-mva 30)"
    )
    f.add_argument(
        "--xr",
        type=number_arg(),
        help="supply X/R at the fundamental (with --ssc-mva; e.g. --xr 10)",
    )
    f.add_argument(
        "--harmonics",
        help="CSV with header order,amps: currents the filter absorbs (e.g. filter_i.csv)",
    )
    f.add_argument(
        "--cap-kvar", type=number_arg(), help="capacitor nameplate kvar (e.g. --cap-kvar 400)"
    )
    f.add_argument("--cap-v", type=number_arg(), help="capacitor rated volts (e.g. --cap-v 600)")
    f.add_argument(
        "--c-tol-minus", type=number_arg(), help="capacitance tolerance below nominal (e.g. 0)"
    )
    f.add_argument(
        "--c-tol-plus", type=number_arg(), help="capacitance tolerance above nominal (e.g. 0.10)"
    )
    f.add_argument("--l-tol", type=number_arg(), help="reactor tolerance, ± fraction (e.g. 0.03)")
    f.add_argument(
        "--c-tempco-ppm", type=number_arg(), default=0.0, help="capacitance ppm/K (e.g. -300)"
    )
    f.add_argument(
        "--dt-k", type=number_arg(), default=0.0, help="± temperature excursion, K (e.g. 30)"
    )
    f.set_defaults(run=_filter)

    c = dsub.add_parser(
        "cap-step",
        help="smallest capacitor step whose parallel resonance avoids the injected orders",
    )
    c.add_argument("--step-kvar", type=number_arg(), required=True, help="kvar per step (e.g. 50)")
    c.add_argument("--max-steps", type=count_arg, required=True, help="steps to try (e.g. 8)")
    c.add_argument("--bus-v", type=number_arg(), required=True, help="bus volts (e.g. 480)")
    c.add_argument("--f1", type=hz_arg, required=True, help="fundamental, Hz (e.g. 60)")
    c.add_argument("--phases", type=int, required=True, choices=[1, 3], help="1 or 3 (e.g. 3)")
    c.add_argument(
        "--ssc-mva", type=number_arg(), required=True, help="short-circuit MVA (e.g. 30)"
    )
    c.add_argument("--xr", type=number_arg(), required=True, help="supply X/R (e.g. 10)")
    c.add_argument(
        "--injected", required=True, help="injected orders, comma-separated (e.g. 5,7,11,13)"
    )
    c.add_argument(
        "--margin",
        required=True,
        help="least distance: orders (e.g. 0.3) or relative with %% (e.g. 10%%)",
    )
    c.add_argument("--order", type=number_arg(), help="tuned order of a detuned bank (e.g. 4.7)")
    c.add_argument("--q", type=number_arg(), help="quality factor of a detuned bank (e.g. 50)")
    c.set_defaults(run=_cap_step)

    k = dsub.add_parser(
        "cable", help="cable AC resistance at harmonics (IEC 60287-1-1) and harmonic loss ratio"
    )
    _spectrum_arg(k)
    k.add_argument("--f1", type=hz_arg, required=True, help="fundamental, Hz (e.g. 50)")
    _conductor_args(k, required=True)
    k.set_defaults(run=_cable)

    i = dsub.add_parser(
        "item",
        help="duty of an item of the three-phase equipment study: IEEE 1459 powers, and by "
        "kind transformer derating, capacitor or filter rating, cable loss",
    )
    i.add_argument("equipment", help=EQUIPMENT_HELP)
    i.add_argument(
        "--spectra",
        help=SPECTRA_HELP,
    )
    i.add_argument(
        "--options",
        help=STUDY_OPTIONS_HELP,
    )
    i.add_argument("--item", required=True, help="item name (e.g. --item T1)")
    i.add_argument(
        "--end",
        help="bus (default) or bus_to: the end of a transformer or cable for the powers, e.g. --end bus_to",
    )
    i.add_argument(
        "--wiring",
        help="3ph4w or 3ph3w for the powers (default from the item's connection), e.g. --wiring 3ph3w",
    )
    i.add_argument(
        "--p-ec",
        type=number_arg(),
        help="transformer: rated winding eddy loss, pu of rated I²R (e.g. --p-ec 0.08)",
    )
    i.add_argument(
        "--p-osl",
        type=number_arg(),
        help="transformer: rated other stray loss, pu (e.g. --p-osl 0.2)",
    )
    i.add_argument(
        "--winding-end",
        help="transformer: bus or bus_to, the end whose line current is the winding current "
        "(default the star winding's), e.g. --winding-end bus_to",
    )
    _conductor_args(i, required=False)
    i.set_defaults(run=_item)


def _spectrum_arg(parser: Any) -> None:
    parser.add_argument(
        "spectrum", help="CSV with header order,pct (%% of I1; order 1 = 100), e.g. load.csv"
    )


def _conductor_args(parser: Any, required: bool) -> None:
    """The conductor of the IEC 60287-1-1 AC resistance (``duty cable``, ``duty item``)."""
    parser.add_argument(
        "--r-dc",
        type=number_arg(),
        required=required,
        help="DC resistance at operating temperature, ohm/km (e.g. --r-dc 0.0967)",
    )
    parser.add_argument(
        "--k-s", type=number_arg(), required=required, help="skin coefficient (e.g. 1)"
    )
    parser.add_argument(
        "--k-p", type=number_arg(), required=required, help="proximity coefficient (e.g. 1)"
    )
    parser.add_argument(
        "--arrangement",
        required=required,
        choices=["none", "2core", "3core", "3sector"],
        help="proximity arrangement (e.g. 3core)",
    )
    parser.add_argument("--d-c", type=number_arg(), help="conductor diameter, mm (e.g. 18)")
    parser.add_argument(
        "--s", type=number_arg(), help="distance between conductor axes, mm (e.g. 24)"
    )
    parser.add_argument(
        "--extrapolate",
        action="store_true",
        help="continue the proximity factor beyond x_p = 2.8 (an approximation, stated)",
    )


def _conductor(args: argparse.Namespace) -> Any:
    from ..studies.cables import Conductor

    return Conductor(
        args.r_dc, args.k_s, args.k_p, args.arrangement, args.d_c, args.s, args.extrapolate
    )


def _print_blocks(blocks: list[tuple[str, list[list[Any]], bool]], caution: bool = True) -> None:
    """Titled tables, a blank line between them; a table whose last row is its basis
    prints that row as a ``basis:`` line."""
    for k, (title, rows, has_basis) in enumerate(blocks):
        if k:
            print()
        print(title)
        print(format_table(rows[:-1] if has_basis else rows))
        if has_basis:
            print(f"basis: {rows[-1][1]}")
    if caution:
        print(CAUTION)


def _powers(args: argparse.Namespace) -> int:
    from ..api import solve
    from ..studies.powers import port_powers

    opts = read_csv_table(args.options) if args.options else None
    sol = solve(read_csv_table(args.parts), read_csv_table(args.sources), opts)
    q = port_powers(sol, part=args.part, wiring=args.wiring)
    title = f"Power quantities of {args.part!r} (IEEE Std 1459-2010)"
    _print_blocks([(title, q.rows(), True)], caution=False)
    return 0


def _xfmr(args: argparse.Namespace) -> int:
    from ..studies.transformer import read_harmonic_spectrum, transformer_derating

    orders, pct = read_harmonic_spectrum(read_csv_table(args.spectrum), "spectrum", 1.0)
    rows = transformer_derating(orders, pct, args.p_ec, args.p_osl).rows()
    _print_blocks([("Transformer derating for harmonic load current", rows, True)])
    return 0


def _pair(args: argparse.Namespace, names: tuple[str, ...], what: str) -> bool:
    given = [getattr(args, n) is not None for n in names]
    if any(given) and not all(given):
        missing = [n for n, g in zip(names, given, strict=True) if not g]
        opt = "--" + missing[0].replace("_", "-")
        raise InputError("argument", None, opt, expected=f"missing: {what} needs it")
    return all(given)


def _filter(args: argparse.Namespace) -> int:
    from ..studies.filters import (
        filter_rating,
        filter_resonance,
        highpass_filter,
        read_order_amps,
        tuned_filter,
        tuning_drift,
    )

    # compute everything asked for before printing anything
    want_res = _pair(args, ("ssc_mva", "xr"), "the supply resonance")
    want_rating = _pair(args, ("harmonics", "cap_kvar", "cap_v"), "the rating")
    want_drift = _pair(args, ("c_tol_minus", "c_tol_plus", "l_tol"), "the tuning drift")
    sizer = tuned_filter if args.type == "tuned" else highpass_filter
    d = sizer(args.kvar, args.bus_v, args.f1, args.order, args.q, args.phases)
    blocks: list[tuple[str, list[list[Any]], bool]] = [
        (f"{args.type} filter sizing", d.rows(), True)
    ]
    if want_res:
        res = filter_resonance(d, args.ssc_mva, args.xr).rows()
        blocks.append(("Parallel resonance with the supply (core solver)", res, False))
    if want_rating:
        orders, amps = read_order_amps(read_csv_table(args.harmonics))
        rt = filter_rating(d, orders, amps, args.cap_kvar, args.cap_v).rows()
        blocks.append(("Rating: capacitor against IEEE Std 18, reactor and losses", rt, True))
    if want_drift:
        dr = tuning_drift(
            args.order,
            args.f1,
            args.c_tol_minus,
            args.c_tol_plus,
            args.l_tol,
            args.c_tempco_ppm,
            args.dt_k,
        )
        blocks.append(("Tuning drift", dr.rows(), False))
    _print_blocks(blocks)
    return 0


def _cap_step(args: argparse.Namespace) -> int:
    from ..studies.filters import capacitor_steps

    try:
        injected = [float(v) for v in args.injected.split(",") if v.strip()]
    except ValueError:
        raise InputError(
            "argument", None, "--injected", args.injected, "expected orders like 5,7,11,13"
        ) from None
    text = args.margin.strip()
    relative = text.endswith("%")
    try:
        margin = float(text[:-1]) / 100 if relative else float(text)
    except ValueError:
        raise InputError(
            "argument", None, "--margin", args.margin, "expected 0.3 or 10%"
        ) from None
    res = capacitor_steps(
        args.step_kvar,
        args.max_steps,
        args.bus_v,
        args.f1,
        args.phases,
        args.ssc_mva,
        args.xr,
        injected,
        margin,
        args.order,
        args.q,
        relative=relative,
    )
    title = "Capacitor sizes and their parallel resonance with the supply"
    _print_blocks([(title, res.rows(), True)])
    return 0


def _cable(args: argparse.Namespace) -> int:
    from ..studies.cables import cable_harmonic_loss
    from ..studies.transformer import read_harmonic_spectrum

    orders, pct = read_harmonic_spectrum(read_csv_table(args.spectrum), "spectrum", 0.0)
    loss = cable_harmonic_loss(_conductor(args), orders, pct, args.f1)
    r = loss.resistance
    table: list[list[Any]] = [["order", "freq_hz", "y_s", "y_p", "rac_ohm_km", "rac_over_rdc"]]
    for k in range(1, r.freqs_hz.size):
        table.append(
            [
                float(orders[k - 1]),
                float(r.freqs_hz[k]),
                float(r.y_s[k]),
                float(r.y_p[k]),
                float(r.r_ac_ohm_km[k]),
                float(r.ratio[k]),
            ]
        )
    title = "Conductor AC resistance per order (IEC 60287-1-1)"
    _print_blocks([(title, table, False), ("Harmonic loss of the conductor", loss.rows(), True)])
    return 0


def _item(args: argparse.Namespace) -> int:
    from ..power import CAUTION as STUDY_CAUTION
    from ..power import harmonic_study
    from ..studies.cables import item_cable_loss
    from ..studies.filters import item_filter_rating
    from ..studies.powers import item_powers
    from ..studies.transformer import item_derating

    st = harmonic_study(
        read_csv_table(args.equipment),
        read_csv_table(args.spectra) if args.spectra else None,
        read_csv_table(args.options) if args.options else None,
    )
    it = st.equipment.item(args.item)
    cable = _pair(args, ("r_dc", "k_s", "k_p", "arrangement"), "the cable loss")
    if cable and it.kind != "cable":
        raise InputError("argument", None, "--r-dc", args.r_dc, f"{it.name!r} is not a cable")
    if args.p_ec is None and (args.p_osl is not None or args.winding_end is not None):
        raise InputError("argument", None, "--p-ec", expected="missing: the derating needs it")
    if args.p_ec is not None and it.kind != "transformer":
        raise InputError(
            "argument", None, "--p-ec", args.p_ec, f"{it.name!r} is not a transformer"
        )
    q = item_powers(st, it.name, args.end, args.wiring)
    blocks: list[tuple[str, list[list[Any]], bool]] = [
        (f"Power quantities of {it.kind} {it.name!r} (IEEE Std 1459-2010)", q.rows(), True)
    ]
    note = ""
    if it.kind == "transformer":
        if args.p_ec is None:
            note = "give --p-ec (and --p-osl) for the transformer derating"
        else:
            d = item_derating(st, it.name, args.p_ec, args.p_osl, args.winding_end)
            blocks.append(("Transformer derating for its harmonic current", d.rows(), True))
    elif it.kind == "capacitor":
        blocks.append(
            (
                "Capacitor duty of one phase unit (IEEE Std 18)",
                st.capacitor_duty(it.name).table(),
                False,
            )
        )
    elif it.kind == "filter":
        rt = item_filter_rating(st, it.name).rows()
        blocks.append(
            ("Filter rating: capacitor against IEEE Std 18, reactor and losses", rt, True)
        )
    elif it.kind == "cable":
        if cable:
            loss = item_cable_loss(st, it.name, _conductor(args))
            blocks.append(("Conductor loss at harmonics (IEC 60287-1-1)", loss.rows(), True))
        else:
            note = "give --r-dc, --k-s, --k-p and --arrangement for the cable loss"
    _print_blocks(blocks, caution=False)
    if note:
        print(note)
    print(STUDY_CAUTION)
    return 0
