"""Study worksheet functions: resonances, IEEE 519, IEEE 18 duty, detuning, drives,
tolerance."""

from __future__ import annotations

from typing import Any

from ..errors import InputError
from .arguments import (
    argument_named,
    blank,
    choice_arg,
    name_arg,
    num_arg,
    points_arg,
    quantity_arg,
    whole_arg,
)
from .cache import circuit, solution
from .registry import register_args, sheet_function

# Sane ranges of the scalar arguments (outside them a value is a unit slip, and ratios
# of them would overflow): the highest AC transmission voltages in service are near
# 1100 kV; fault currents of the largest systems are a few hundred kA; the largest
# capacitor banks a few hundred Mvar (common practice). Floors: 1 V, 1 mA, 1 var.
# Fundamentals: 16.7, 25, 50, 60 and 400 Hz are in use.
_KV_MAX = 1200.0
_V_MIN, _V_MAX = 1.0, 1.2e6
_A_MIN, _A_MAX = 1e-3, 1e7
_KVAR_MIN, _KVAR_MAX = 1e-3, 1e6
_F1_MIN, _F1_MAX = 1.0, 1000.0

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
        "order": ("Harmonic order h (whole number 2 to 1000; above 50 not limited).", {}),
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


def _fundamental(sol: Any) -> float:
    c = sol.circuit
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


def _bus_kv(value: Any, default: float | None = None) -> float:
    return num_arg(value, "bus_kv", default, above=0.0, hi=_KV_MAX, unit="kV")


def _edition(value: Any) -> int:
    return choice_arg(value, "edition", (2014, 2022), 2014)


@sheet_function(
    "Bus voltage harmonics and THD against IEEE 519-2014 Table 1 limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: one row per harmonic 2-50 present (% of "
    "the fundamental), a THD row, a verdict row and the basis. Screening check; the utility "
    "and local rules decide.",
)
def CKT_V519(parts, sources, node, bus_kv, options=None):
    from ..studies.limits import check_voltage

    kv = _bus_kv(bus_kv)
    sol = solution(parts, sources, options)
    name = name_arg(node, "node")
    with argument_named("node", name):
        sp = sol.voltage(name)
    return _check_rows(check_voltage(sp.freqs_hz, sp.rms, _fundamental(sol), kv))


@sheet_function(
    "A current's harmonics and TDD against IEEE 519 Tables 2-4 current limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: harmonics 2-50 in % of I_L, TDD, a DC row "
    "when present (DC offset not allowed), verdict and basis. Isc/IL = i_sc / i_l.",
)
def CKT_I519(parts, sources, part, i_sc, i_l, bus_kv, edition=None, options=None):
    from ..studies.limits import check_current

    il = num_arg(i_l, "i_l", lo=_A_MIN, hi=_A_MAX, unit="A")
    isc = num_arg(i_sc, "i_sc", lo=_A_MIN, hi=_A_MAX, unit="A")
    if isc < il:
        raise InputError(
            "argument", None, "i_sc", i_sc, f"expected a short-circuit current ≥ i_l ({il:g} A)"
        )
    kv = _bus_kv(bus_kv)
    ed = _edition(edition)
    sol = solution(parts, sources, options)
    name = name_arg(part, "part")
    with argument_named("part", name):
        sp = sol.current(name)
    return _check_rows(check_current(sp.freqs_hz, sp.rms, _fundamental(sol), il, isc / il, kv, ed))


@sheet_function(
    "IEEE 519-2014 Table 1 voltage limits for a bus voltage: individual harmonic % and THD %.",
    "Spills header individual_pct | thd_pct and one row of values.",
)
def CKT_V519_LIMITS(bus_kv):
    from ..studies.limits import voltage_limits_pct

    ind, thd = voltage_limits_pct(_bus_kv(bus_kv))
    return [["individual_pct", "thd_pct"], [ind, thd]]


@sheet_function(
    "IEEE 519 current limit for one harmonic order, in % of I_L (Tables 2-4). Without "
    "bus_kv: Table 2 (buses from 120 V to 69 kV).",
    "One number, % of I_L; even orders per the chosen edition; orders above 50 are not "
    "limited (empty).",
)
def CKT_I519_LIMIT(order, isc_il, bus_kv=None, edition=None):
    from ..studies.limits import current_limit_pct

    h = whole_arg(order, "order", lo=2, hi=1000)
    ratio = num_arg(isc_il, "isc_il", lo=1.0, hi=1e9)
    lim = current_limit_pct(h, ratio, _bus_kv(bus_kv, 13.8), _edition(edition))
    return blank(lim)


@sheet_function(
    "Capacitor duty under harmonics against IEEE 18 continuous limits (spills pass/fail).",
    "Header quantity | value | rated | ratio | limit | pass for rms voltage (V), peak voltage "
    "(arithmetic sum of tone peaks), rms current (A) and kvar; limits 1.10, 1.20, 1.35, 1.35 "
    "(IEEE Std 18-2002).",
)
def CKT_CAPDUTY(parts, sources, part, rated_kvar, rated_v, options=None):
    from ..studies.capacitor import capacitor_duty

    q = num_arg(rated_kvar, "rated_kvar", lo=_KVAR_MIN, hi=_KVAR_MAX, unit="kvar")
    u = num_arg(rated_v, "rated_v", lo=_V_MIN, hi=_V_MAX, unit="V")
    sol = solution(parts, sources, options)
    name = name_arg(part, "part")
    with argument_named("part", name):
        v = sol.voltage(name)
        i = sol.current(name)
    return capacitor_duty(v.freqs_hz, v.rms, i.rms, q, u).table()


@sheet_function(
    "Detuned reactor sizing from a reactor ratio p (or a tuned order) for a capacitor bank (spills).",
    "Header quantity | value | unit: p, tuned order 1/sqrt(p), tuned Hz, capacitor and reactor "
    "reactance (ohm), capacitance (F), reactor inductance (H), capacitor voltage rise 1/(1-p).",
)
def CKT_DETUNE(kvar, volts, fundamental_hz, p_or_order):
    from ..studies.detuning import detuning

    q = num_arg(kvar, "kvar", lo=_KVAR_MIN, hi=_KVAR_MAX, unit="kvar")
    u = num_arg(volts, "volts", lo=_V_MIN, hi=_V_MAX, unit="V")
    f1 = num_arg(fundamental_hz, "fundamental_hz", lo=_F1_MIN, hi=_F1_MAX, unit="Hz")
    x = num_arg(p_or_order, "p_or_order", above=0.0)
    if x < 1:
        if x < 1e-4:
            raise InputError(
                "argument", None, "p_or_order", p_or_order, "expected p from 0.0001 (order 100)"
            )
        kw = {"p": x}
    else:
        if not 1 < x <= 100:
            raise InputError(
                "argument", None, "p_or_order", p_or_order, "expected a tuned order > 1 and ≤ 100"
            )
        kw = {"order": x}
    return detuning(q, u, f1, **kw).rows()


def _spectrum(spectrum: Any) -> list[tuple[float, float]] | None:
    """The harmonics of a measured spectrum (order | pct with its header row, order 1 =
    100, read as every function reads a ``spectrum``), above the fundamental."""
    if spectrum is None:
        return None
    from ..studies.transformer import read_harmonic_spectrum

    orders, pct = read_harmonic_spectrum(spectrum, "spectrum", 1.0)
    out = []
    for h, p in zip(orders.tolist(), pct.tolist(), strict=True):
        if h <= 1.0 + 1e-9:
            continue  # the fundamental is i1_rms itself
        if h > 200:
            raise InputError("spectrum", None, "order", h, "expected orders up to 200")
        if p > 1000:
            raise InputError("spectrum", None, "pct", p, "expected at most 1000 % of I1")
        out.append((h, p))
    if not out:
        raise InputError("spectrum", None, "order", expected="no harmonic above order 1")
    return out


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

    return drive_sources(
        name_arg(source_name, "source_name"),
        name_arg(node_from, "node_from"),
        name_arg(node_to, "node_to"),
        num_arg(i1_rms, "i1_rms", above=0.0, hi=_A_MAX, unit="A"),
        choice_arg(pulses, "pulses", (6, 12, 18, 24), 6),
        whole_arg(max_order, "max_order", 25, lo=2, hi=200),
        num_arg(phase_deg, "phase_deg", 0.0, lo=-360.0, hi=360.0, unit="degrees"),
        _spectrum(spectrum),
    )


@sheet_function(
    "Monte Carlo and worst-case corners of a result over the parts' tolerance column (spills).",
    "Header statistic | value: nominal, mean, std, min, p1, p5, p50, p95, p99, max, corner "
    "min/max (all 2^k corners for k <= 12 toleranced parts, else linearised) and the sample "
    "count. Reproducible (fixed seed).",
    call_in_wizard=False,
)
def CKT_TOLERANCE(parts, sources, target, metric=None, samples=None, quantity=None, options=None):
    from ..studies.tolerance import tolerance_study

    if metric is None or (isinstance(metric, str) and not metric.strip()):
        m = "rms"
    elif isinstance(metric, str):
        m = metric.strip().lower()
    else:
        raise InputError("argument", None, "metric", metric, "expected a metric name")
    n = points_arg(samples, "samples", lo=2, hi=1_000_000) or 10_000
    res = tolerance_study(
        circuit(parts, sources, options),
        target=name_arg(target, "target"),
        quantity=quantity_arg(quantity),
        metric=m,
        samples=n,
    )
    table = res.table()
    if res.corner_method == "none":  # no toleranced part: there are no corners
        table = [[k, "" if str(k).startswith("corner") else v] for k, v in table]
    return table
