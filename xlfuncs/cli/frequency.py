"""``xlfuncs resonances | gain | poles | zeros | port-z | twoport | filter-margin |
damping | noise``: frequency-domain studies from CSV tables."""

from __future__ import annotations

import argparse
import math
from typing import Any

import numpy as np

from .common import (
    band_stop_arg,
    count0_arg,
    count_arg,
    format_table,
    hz_arg,
    number_arg,
    read_csv_table,
    warn_without_sources,
)

# argument help shared by the commands (each with an example)
PARTS = "parts table (CSV, header row first), e.g. parts.csv"
SOURCES = "sources table (CSV, header row first), e.g. sources.csv"
KEPT = "sources table (CSV); zeroed but kept in the network, e.g. --sources sources.csv"
OPTIONS = "options table (CSV of key,value rows), e.g. --options options.csv"
QUANTITY = (
    "V or I of a part or source output (default: I for a part, V for a node), e.g. --quantity V"
)
F_START = "first frequency, Hz, SI prefixes allowed, e.g. --f-start 10"
F_STOP = "last frequency, e.g. --f-stop 100k"
POINTS = "log-spaced rows (default 30), e.g. --points 60"
V_IN = "converter input voltage, V, e.g. --v-in 48"
P_IN = "converter input power, W, e.g. --p-in 200"
MARGIN = "required margin, dB (default 6), e.g. --margin-db 6"

_CONVENTIONS = (
    "gain = output / the named source's own value, every other source zeroed; dB = "
    "20·log10|H|; phase in degrees, cosine reference (positive: output leads); group delay "
    "= −dφ/dω in s."
)


def _parser(sub: Any, name: str, help_: str, example: str) -> argparse.ArgumentParser:
    p: argparse.ArgumentParser = sub.add_parser(
        name,
        help=help_,
        description=help_,
        epilog="example:\n  " + example,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    return p


def _port(text: str) -> Any:
    """``a`` (against the reference) or ``a,b``."""
    cells = [c.strip() for c in text.split(",")]
    return cells[0] if len(cells) == 1 else [cells]


def register(sub: Any) -> None:
    """Add this module's commands to the subparsers ``sub``."""
    r = _parser(
        sub,
        "resonances",
        "parallel and series resonances at a node (complete: from the natural frequencies)",
        "xlfuncs resonances parts.csv --node bus --f-start 50 --f-stop 2500 --sources s.csv",
    )
    r.add_argument("parts", help=PARTS)
    r.add_argument(
        "--node", required=True, help="node at which the impedance is seen, e.g. --node bus"
    )
    r.add_argument("--f-start", type=hz_arg, required=True, help=F_START)
    r.add_argument("--f-stop", type=hz_arg, required=True, help=F_STOP)
    r.add_argument("--sources", help=KEPT)
    r.add_argument("--options", help=OPTIONS)
    r.set_defaults(run=_resonances)

    g = _parser(
        sub,
        "gain",
        "Bode data of output / source: gain, dB, phase (wrapped and unwrapped), group delay",
        "xlfuncs gain parts.csv sources.csv --source Vin --output out --f-start 10 "
        "--f-stop 1e5 --points 30",
    )
    g.add_argument("parts", help=PARTS)
    g.add_argument("sources", help=SOURCES)
    g.add_argument(
        "--source", required=True, help="input: a source of the sources table, e.g. --source Vin"
    )
    g.add_argument("--output", required=True, help="a node, part or source, e.g. --output out")
    g.add_argument("--quantity", choices=["V", "I", "v", "i"], help=QUANTITY)
    g.add_argument("--f-start", type=hz_arg, required=True, help=F_START)
    g.add_argument("--f-stop", type=hz_arg, required=True, help=F_STOP)
    g.add_argument("--points", type=count_arg, default=30, help=POINTS)
    g.add_argument("--options", help=OPTIONS)
    g.set_defaults(run=_gain)

    p = _parser(
        sub,
        "poles",
        "natural frequencies of the network: frequency, damping, Q, time constant",
        "xlfuncs poles parts.csv --sources sources.csv",
    )
    p.add_argument("parts", help=PARTS)
    p.add_argument("--sources", help=KEPT)
    p.add_argument("--options", help=OPTIONS)
    p.set_defaults(run=_poles)

    z = _parser(
        sub,
        "zeros",
        "zeros of the transfer function output / source (modes it does not see removed)",
        "xlfuncs zeros parts.csv sources.csv --source Vin --output out",
    )
    z.add_argument("parts", help=PARTS)
    z.add_argument("sources", help=SOURCES)
    z.add_argument(
        "--source", required=True, help="input: a source of the sources table, e.g. --source Vin"
    )
    z.add_argument("--output", required=True, help="a node, part or source, e.g. --output out")
    z.add_argument("--quantity", choices=["V", "I", "v", "i"], help=QUANTITY)
    z.add_argument("--options", help=OPTIONS)
    z.set_defaults(run=_zeros)

    pz = _parser(
        sub,
        "port-z",
        "impedance between two nodes, every source zeroed",
        "xlfuncs port-z parts.csv --node-a out --node-b GND --f-start 10 --f-stop 1e6",
    )
    pz.add_argument("parts", help=PARTS)
    pz.add_argument(
        "--node-a", required=True, help="the test current enters here, e.g. --node-a out"
    )
    pz.add_argument(
        "--node-b", required=True, help="and leaves here (may be the reference), e.g. --node-b GND"
    )
    pz.add_argument("--f-start", type=hz_arg, required=True, help=F_START)
    pz.add_argument("--f-stop", type=hz_arg, required=True, help=F_STOP)
    pz.add_argument("--points", type=count_arg, default=30, help=POINTS)
    pz.add_argument("--sources", help=KEPT)
    pz.add_argument("--options", help=OPTIONS)
    pz.set_defaults(run=_port_z)

    t = _parser(
        sub,
        "twoport",
        "input impedance (load connected) and output impedance (load taken out)",
        "xlfuncs twoport parts.csv --port-in in --port-out out --load RL --f-start 10 "
        "--f-stop 1e6",
    )
    t.add_argument("parts", help=PARTS)
    t.add_argument("--port-in", required=True, help="node, or from,to, e.g. --port-in in")
    t.add_argument("--port-out", required=True, help="node, or from,to, e.g. --port-out out,GND")
    t.add_argument(
        "--load", required=True, help="the load part across the output port, e.g. --load RL"
    )
    t.add_argument("--f-start", type=hz_arg, required=True, help=F_START)
    t.add_argument("--f-stop", type=hz_arg, required=True, help=F_STOP)
    t.add_argument("--points", type=count_arg, default=30, help=POINTS)
    t.add_argument("--sources", help=KEPT)
    t.add_argument("--options", help=OPTIONS)
    t.set_defaults(run=_twoport)

    m = _parser(
        sub,
        "filter-margin",
        "input-filter check: filter output impedance against the converter's −V²/P",
        "xlfuncs filter-margin parts.csv --port out --v-in 48 --p-in 200 --f-start 10 "
        "--f-stop 1e6 --sources sources.csv",
    )
    m.add_argument("parts", help=PARTS)
    m.add_argument(
        "--port",
        required=True,
        help="node, or from,to, where the converter connects, e.g. --port out",
    )
    m.add_argument("--v-in", type=number_arg("V"), required=True, help=V_IN)
    m.add_argument("--p-in", type=number_arg("W"), required=True, help=P_IN)
    m.add_argument("--f-start", type=hz_arg, required=True, help=F_START)
    m.add_argument("--f-stop", type=hz_arg, required=True, help=F_STOP)
    m.add_argument("--margin-db", type=number_arg(), default=6.0, help=MARGIN)
    m.add_argument(
        "--load", help="a part modelling the converter, taken out first, e.g. --load Rconv"
    )
    m.add_argument(
        "--points",
        type=count_arg,
        default=30,
        help="rows of the impedance table (default 30), e.g. --points 60",
    )
    m.add_argument(
        "--sources",
        help="sources table (CSV): the supply as a voltage source (a short), e.g. --sources s.csv",
    )
    m.add_argument("--options", help=OPTIONS)
    m.set_defaults(run=_filter_margin)

    d = _parser(
        sub,
        "damping",
        "parallel R-C damping of an LC input filter that restores a margin against V²/P",
        "xlfuncs damping --l-h 10e-6 --c-f 100e-6 --v-in 48 --p-in 200 --margin-db 6",
    )
    d.add_argument(
        "--l-h", type=number_arg("H"), required=True, help="filter inductance, H, e.g. --l-h 10u"
    )
    d.add_argument(
        "--c-f", type=number_arg("F"), required=True, help="filter capacitance, F, e.g. --c-f 100u"
    )
    d.add_argument("--v-in", type=number_arg("V"), required=True, help=V_IN)
    d.add_argument("--p-in", type=number_arg("W"), required=True, help=P_IN)
    d.add_argument("--margin-db", type=number_arg(), default=6.0, help=MARGIN)
    d.set_defaults(run=_damping)

    n = _parser(
        sub,
        "noise",
        "output noise at a node: thermal 4kTR of every resistor plus noise rows; RMS over "
        "a band and each source's share",
        "xlfuncs noise parts.csv sources.csv --node out --f-start 0 --f-stop inf "
        "--temperature-c 25",
    )
    n.add_argument("parts", help=PARTS)
    n.add_argument(
        "sources",
        help="sources table (CSV) with noise rows (density, corner_hz), e.g. sources.csv",
    )
    n.add_argument(
        "--node", required=True, help="node whose noise voltage is taken, e.g. --node out"
    )
    n.add_argument(
        "--f-start",
        type=hz_arg,
        required=True,
        help="first frequency, Hz (0 allowed), e.g. --f-start 0 or --f-start 10",
    )
    n.add_argument(
        "--f-stop",
        type=band_stop_arg,
        required=True,
        help="last frequency, Hz, or inf for all frequencies, e.g. --f-stop 100k",
    )
    n.add_argument(
        "--temperature-c",
        type=number_arg(),
        required=True,
        help="resistor temperature, °C, e.g. --temperature-c 25",
    )
    n.add_argument(
        "--points",
        type=count0_arg,
        default=0,
        help="also print the density on N log-spaced rows (default 0: none), e.g. --points 30",
    )
    n.add_argument("--options", help=OPTIONS)
    n.set_defaults(run=_noise)


def _items(rows: list[list[Any]]) -> str:
    """``item | value | unit`` rows as aligned lines."""
    width = max(len(str(r[0])) for r in rows[1:])
    out = []
    for item, value, unit in rows[1:]:
        v = f"{value:.6g}" if isinstance(value, float) else str(value)
        out.append(f"{str(item).ljust(width)}  {v}  {unit}".rstrip())
    return "\n".join(out)


def _opt_table(path: str | None) -> Any:
    return read_csv_table(path) if path else None


def _fmt(v: float | None) -> Any:
    return "none" if v is None else float(v)


def _resonances(args: argparse.Namespace) -> int:
    warn_without_sources(args, "resonances")
    from ..studies.resonance import find_resonances

    res = find_resonances(
        read_csv_table(args.parts),
        args.node,
        args.f_start,
        args.f_stop,
        options=_opt_table(args.options),
        sources=_opt_table(args.sources),
    )
    rows: list[list[Any]] = [["kind", "freq_hz", "order", "z_ohm", "damping", "q"]]
    for r in res:
        rows.append(
            [
                r.kind,
                r.freq_hz,
                "" if r.order is None else r.order,
                r.z_ohm,
                _fmt(r.damping),
                "lossless" if r.damping == 0 else _fmt(r.q),
            ]
        )
    print(f"Resonances at {args.node} (sources zeroed), {args.f_start:g}–{args.f_stop:g} Hz")
    print(format_table(rows) if res else "none found")
    if res.note:
        print(f"note: {res.note}")
    return 0


def _gain(args: argparse.Namespace) -> int:
    from ..studies.transfer import bode

    r = bode(
        read_csv_table(args.parts),
        read_csv_table(args.sources),
        args.source,
        args.output,
        args.f_start,
        args.f_stop,
        args.points,
        args.quantity.upper() if args.quantity else None,
        _opt_table(args.options),
    )
    rows: list[list[Any]] = [
        ["freq_hz", "gain", "gain_db", "phase_deg", "phase_unwrapped_deg", "group_delay_s"]
    ]
    for k in range(r.freqs_hz.size):
        rows.append(
            [
                float(r.freqs_hz[k]),
                float(r.gain[k]),
                float(r.gain_db[k]),
                float(r.phase_deg[k]),
                float(r.phase_unwrapped_deg[k]),
                float(r.group_delay_s[k]),
            ]
        )
    print(f"{r.output} per unit of {r.source} ({r.unit}). {_CONVENTIONS}")
    print(format_table(rows))
    return 0


def _naturals(rows: Any) -> str:
    table: list[list[Any]] = [["freq_hz", "damping", "q", "time_constant_s", "s_rad_s"]]
    for p in rows:
        table.append(
            [p.freq_hz, _fmt(p.damping), _fmt(p.q), _fmt(p.time_constant_s), f"{p.s:.6g}"]
        )
    return format_table(table)


def _poles(args: argparse.Namespace) -> int:
    warn_without_sources(args, "poles")
    from ..studies.poles import network_poles

    rows = network_poles(
        read_csv_table(args.parts), _opt_table(args.sources), _opt_table(args.options)
    )
    print("Natural frequencies (one row per real pole and per conjugate pair)")
    print(_naturals(rows) if rows else "none (no energy storage)")
    return 0


def _zeros(args: argparse.Namespace) -> int:
    from ..studies.poles import transfer_poles_zeros

    poles, zeros = transfer_poles_zeros(
        read_csv_table(args.parts),
        read_csv_table(args.sources),
        args.source,
        args.output,
        args.quantity.upper() if args.quantity else None,
        _opt_table(args.options),
    )
    print(f"Zeros of {args.output} / {args.source}")
    print(_naturals(zeros) if zeros else "no finite zeros")
    print()
    print("Poles of the same transfer function (modes it does not see removed)")
    print(_naturals(poles) if poles else "none")
    return 0


def _z_rows(f: np.ndarray, z: np.ndarray) -> list[list[Any]]:
    rows: list[list[Any]] = [["freq_hz", "z_ohm", "angle_deg", "r_ohm", "x_ohm"]]
    for a, b in zip(f, z, strict=True):
        rows.append(
            [float(a), float(abs(b)), float(np.degrees(np.angle(b))), float(b.real), float(b.imag)]
        )
    return rows


def _port_z(args: argparse.Namespace) -> int:
    warn_without_sources(args, "port-z")
    from ..studies.transfer import log_frequencies, port_impedance

    f = log_frequencies(args.f_start, args.f_stop, args.points)
    _f, z = port_impedance(
        read_csv_table(args.parts),
        args.node_a,
        args.node_b,
        f,
        _opt_table(args.options),
        _opt_table(args.sources),
    )
    print(f"Impedance between {args.node_a} and {args.node_b} (sources zeroed)")
    print(format_table(_z_rows(f, z)))
    return 0


def _twoport(args: argparse.Namespace) -> int:
    warn_without_sources(args, "twoport")
    from ..studies.transfer import log_frequencies, two_port_impedances

    f = log_frequencies(args.f_start, args.f_stop, args.points)
    r = two_port_impedances(
        read_csv_table(args.parts),
        _port(args.port_in),
        _port(args.port_out),
        args.load,
        f,
        _opt_table(args.options),
        _opt_table(args.sources),
    )
    rows: list[list[Any]] = [["freq_hz", "zin_ohm", "zin_deg", "zout_ohm", "zout_deg"]]
    for a, b, c in zip(f, r.z_in, r.z_out, strict=True):
        rows.append(
            [
                float(a),
                float(abs(b)),
                float(np.degrees(np.angle(b))),
                float(abs(c)),
                float(np.degrees(np.angle(c))),
            ]
        )
    print(f"Two-port: Z_in with {r.load} connected, Z_out with {r.load} taken out")
    print(format_table(rows))
    return 0


def _filter_margin(args: argparse.Namespace) -> int:
    warn_without_sources(args, "filter-margin")
    from ..studies.stability import input_filter_margin

    r = input_filter_margin(
        read_csv_table(args.parts),
        _port(args.port),
        args.v_in,
        args.p_in,
        args.f_start,
        args.f_stop,
        args.margin_db,
        points=max(2, args.points),
        options=_opt_table(args.options),
        sources=_opt_table(args.sources),
        load=args.load,
    )
    print(_items(r.table()))
    print()
    print("Filter output impedance against |R_N| = V²/P")
    rows = _z_rows(r.freqs_hz, r.z_out)
    rows[0].append("margin_db")
    for row, m in zip(rows[1:], r.margin_curve_db, strict=True):
        row.append(float(m))
    print(format_table(rows))
    print("Screening check: confirm on the real converter and defer to its maker.")
    return 0


def _damping(args: argparse.Namespace) -> int:
    from ..studies.stability import damping_for_margin

    d = damping_for_margin(args.l_h, args.c_f, args.v_in, args.p_in, args.margin_db)
    print(_items(d.table()))
    return 0


def _noise(args: argparse.Namespace) -> int:
    from ..studies.noise import noise_density, noise_rms

    parts, sources = read_csv_table(args.parts), read_csv_table(args.sources)
    opts = _opt_table(args.options)
    r = noise_rms(parts, sources, args.node, args.f_start, args.f_stop, args.temperature_c, opts)
    rows: list[list[Any]] = [["name", "kind", "rms_v", "share_pct"]]
    rows += [[c.name, c.kind, c.rms_v, 100 * c.share] for c in r.contributions]
    rows.append(["total", "", r.rms_v, 100.0])
    stop = "∞" if math.isinf(args.f_stop) else f"{args.f_stop:g} Hz"
    print(
        f"Output noise at {args.node}, {args.f_start:g} Hz – {stop}, {args.temperature_c:g} °C "
        f"(uncorrelated sources; quadrature error ≈ {r.rel_error:.1e} relative)"
    )
    print(format_table(rows))
    if args.points:
        lo = args.f_start if args.f_start > 0 else 1.0
        hi = args.f_stop if math.isfinite(args.f_stop) else 1e6
        f = np.geomspace(lo, hi, args.points)
        s = noise_density(parts, sources, args.node, f, args.temperature_c, opts)
        print()
        print(
            format_table(
                [["freq_hz", "density_v_rthz"]]
                + [[float(a), float(b)] for a, b in zip(f, s.density, strict=True)]
            )
        )
    return 0
