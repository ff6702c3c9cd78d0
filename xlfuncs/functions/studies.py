"""Study worksheet functions: resonances, IEEE 519, IEEE 18 duty, detuning, drives,
tolerance."""

from __future__ import annotations

from typing import Any

from ..errors import InputError
from ..solution import Solution
from .arguments import blank, freeze, name_arg, num_arg, points_arg, quantity_arg
from .cache import solution
from .registry import register_args, sheet_function

register_args(
    {
        "bus_kv": (
            "Nominal voltage of the bus at the point of common coupling, kV (line-to-line).",
            {},
        ),
        "i_sc": ("Maximum short-circuit current at the point of common coupling, A.", {}),
        "i_l": (
            "Maximum demand load current I_L (fundamental, RMS), A, same basis as the part current.",
            {},
        ),
        "edition": (
            "Optional IEEE 519 edition: 2014 (default) or 2022 (even-harmonic rule of 2022).",
            {},
        ),
        "order": ("Harmonic order h (whole number 2 to 50).", {}),
        "isc_il": (
            "Ratio Isc/IL of short-circuit current to maximum demand load current at the PCC.",
            {},
        ),
        "rated_kvar": (
            "Capacitor rating in kvar, on the same basis as the network (per phase for a per-phase model).",
            {},
        ),
        "rated_v": (
            "Capacitor rated RMS voltage, V, on the same basis (line-to-neutral for a per-phase wye model).",
            {},
        ),
        "kvar": ("Capacitor bank rating, kvar.", {}),
        "volts": ("Capacitor rated voltage, V.", {}),
        "fundamental_hz": ("Fundamental frequency, Hz (50 or 60).", {}),
        "p_or_order": (
            "Reactor ratio p below 1 (0.07 = 7 %), or the tuned order above 1 (3.78).",
            {},
        ),
        "source_name": ("Name for the drive's source rows.", {}),
        "node_from": ("Node the drive current leaves (usually the reference, e.g. GND).", {}),
        "node_to": ("Node the drive injects into (the bus).", {}),
        "i1_rms": ("Drive fundamental current, A rms.", {}),
        "pulses": ("Optional converter pulse number: 6 (default), 12, 18 or 24.", {}),
        "max_order": ("Optional highest harmonic order (default 25).", {}),
        "phase_deg": ("Optional phase of every harmonic tone, degrees (default 0).", {}),
        "spectrum": (
            "Two-column range order | pct (percent of I1, order 1 = 100) with its header row: "
            "a measured or maker's spectrum. Optional in CKT_DRIVE (replaces the ideal I1/h law).",
            {"ndim": 2, "err_to_str": True},
        ),
        "metric": (
            "Optional result: rms (default), peak, peak_sum, thd, dc, power, var_sum or "
            "resonance (order of the parallel resonance at a node).",
            {},
        ),
        "samples": ("Optional Monte Carlo sample count (default 10000).", {}),
    }
)


def _fundamental(sol_or_circuit: Any) -> float:
    c = sol_or_circuit.circuit if isinstance(sol_or_circuit, Solution) else sol_or_circuit
    f1 = c.options.fundamental_hz
    if f1 is None:
        nz = c.freqs_hz[c.freqs_hz > 0]
        if nz.size == 0:
            raise InputError(
                "options", None, "fundamental_hz", expected="give fundamental_hz in the options"
            )
        f1 = float(nz[0])
    return f1


def _check_rows(check: Any) -> list[list[Any]]:
    out: list[list[Any]] = [["item", "percent", "limit_percent", "result"]]
    for label, val, lim, ok in check.rows:
        out.append([label, val, blank(lim), "PASS" if ok else "FAIL"])
    out.append(["verdict", "", "", "PASS" if check.passed else "FAIL"])
    out.append(["basis", check.basis, "", ""])
    return out


@sheet_function(
    "Bus voltage harmonics and THD against IEEE 519-2014 Table 1 limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: one row per harmonic 2-50 present (% of "
    "the fundamental), a THD row, a verdict row and the basis. Screening check; the utility "
    "and local rules decide.",
)
def CKT_V519(parts, sources, node, bus_kv, options=None):
    from ..studies.limits import check_voltage

    sol = solution(parts, sources, options)
    sp = sol.voltage(name_arg(node, "node"))
    return _check_rows(
        check_voltage(sp.freqs_hz, sp.rms, _fundamental(sol), num_arg(bus_kv, "bus_kv"))
    )


@sheet_function(
    "A current's harmonics and TDD against IEEE 519 Tables 2-4 current limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: harmonics 2-50 in % of I_L, TDD, a DC row "
    "when present (DC offset not allowed), verdict and basis. Isc/IL = i_sc / i_l.",
)
def CKT_I519(parts, sources, part, i_sc, i_l, bus_kv, edition=None, options=None):
    from ..studies.limits import check_current

    sol = solution(parts, sources, options)
    sp = sol.current(name_arg(part, "part"))
    il = num_arg(i_l, "i_l")
    ed = int(num_arg(edition, "edition", 2014))
    return _check_rows(
        check_current(
            sp.freqs_hz,
            sp.rms,
            _fundamental(sol),
            il,
            num_arg(i_sc, "i_sc") / il,
            num_arg(bus_kv, "bus_kv"),
            ed,
        )
    )


@sheet_function(
    "IEEE 519-2014 Table 1 voltage limits for a bus voltage: individual harmonic % and THD %.",
    "Spills header individual_pct | thd_pct and one row of values.",
)
def CKT_V519_LIMITS(bus_kv):
    from ..studies.limits import voltage_limits_pct

    ind, thd = voltage_limits_pct(num_arg(bus_kv, "bus_kv"))
    return [["individual_pct", "thd_pct"], [ind, thd]]


@sheet_function(
    "IEEE 519 current limit for one harmonic order, in % of I_L (Tables 2-4).",
    "One number, % of I_L; even orders per the chosen edition; orders above 50 are not "
    "limited (empty).",
)
def CKT_I519_LIMIT(order, isc_il, bus_kv=None, edition=None):
    from ..studies.limits import current_limit_pct

    h = num_arg(order, "order")
    if not h.is_integer():
        raise InputError("argument", None, "order", order, "expected a whole harmonic order")
    lim = current_limit_pct(
        int(h),
        num_arg(isc_il, "isc_il"),
        num_arg(bus_kv, "bus_kv", 13.8),
        int(num_arg(edition, "edition", 2014)),
    )
    return blank(lim)


@sheet_function(
    "Capacitor duty under harmonics against IEEE 18 continuous limits (spills pass/fail).",
    "Header quantity | value | rated | ratio | limit | pass for rms voltage (V), peak voltage "
    "(arithmetic sum of tone peaks), rms current (A) and kvar; limits 1.10, 1.20, 1.35, 1.35 "
    "(IEEE Std 18-2002).",
)
def CKT_CAPDUTY(parts, sources, part, rated_kvar, rated_v, options=None):
    from ..studies.capacitor import capacitor_duty

    sol = solution(parts, sources, options)
    name = name_arg(part, "part")
    v = sol.voltage(name)
    i = sol.current(name)
    duty = capacitor_duty(
        v.freqs_hz, v.rms, i.rms, num_arg(rated_kvar, "rated_kvar"), num_arg(rated_v, "rated_v")
    )
    return duty.table()


@sheet_function(
    "Detuned reactor sizing from a reactor ratio p (or a tuned order) for a capacitor bank (spills).",
    "Header quantity | value | unit: p, tuned order 1/sqrt(p), tuned Hz, capacitor and reactor "
    "reactance (ohm), capacitance (F), reactor inductance (H), capacitor voltage rise 1/(1-p).",
)
def CKT_DETUNE(kvar, volts, fundamental_hz, p_or_order):
    from ..studies.detuning import detuning

    x = num_arg(p_or_order, "p_or_order")
    kw = {"p": x} if x < 1 else {"order": x}
    return detuning(
        num_arg(kvar, "kvar"),
        num_arg(volts, "volts"),
        num_arg(fundamental_hz, "fundamental_hz"),
        **kw,
    ).rows()


@sheet_function(
    "Sources-table rows for a drive's harmonic current injection, orders k*pulses +/- 1 (spills).",
    "A sources table with its header (name | kind | from | to | harmonic | rms | phase_deg): "
    "ideal spectrum I_h = I1/h, or the given spectrum. Needs fundamental_hz in the options of "
    "the functions that use it.",
)
def CKT_DRIVE(
    source_name,
    node_from,
    node_to,
    i1_rms,
    pulses=None,
    max_order=None,
    phase_deg=None,
    spectrum=None,
):
    from ..studies.drives import drive_sources

    spec = None
    if spectrum is not None:
        spec = []
        for k, row in enumerate(spectrum):
            if all(c is None or c == "" for c in row):
                continue
            if len(row) < 2 or not all(isinstance(c, (int, float)) for c in row[:2]):
                if k == 0:
                    continue  # a header row
                raise InputError(
                    "spectrum", k + 1, "percent", row, "expected order | percent numbers"
                )
            spec.append((float(row[0]), float(row[1])))
    return drive_sources(
        name_arg(source_name, "source_name"),
        name_arg(node_from, "node_from"),
        name_arg(node_to, "node_to"),
        num_arg(i1_rms, "i1_rms"),
        int(num_arg(pulses, "pulses", 6)),
        int(num_arg(max_order, "max_order", 25)),
        num_arg(phase_deg, "phase_deg", 0.0),
        spec,
    )


@sheet_function(
    "Monte Carlo and worst-case corners of a result over the parts' tolerance column (spills).",
    "Header statistic | value: nominal, mean, std, min, p1, p5, p50, p95, p99, max, corner "
    "min/max (all 2^k corners for k <= 12 toleranced parts, else linearised) and the sample "
    "count. Reproducible (fixed seed).",
)
def CKT_TOLERANCE(parts, sources, target, metric=None, samples=None, quantity=None, options=None):
    from ..studies.tolerance import tolerance_study

    m = "rms" if metric is None or metric == "" else str(metric).strip().lower()
    n = points_arg(samples) or 10_000
    res = tolerance_study(
        freeze(parts),
        freeze(sources),
        freeze(options),
        target=name_arg(target, "target"),
        quantity=quantity_arg(quantity),
        metric=m,
        samples=n,
    )
    return res.table()
