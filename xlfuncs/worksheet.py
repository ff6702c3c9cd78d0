"""Worksheet functions (the ``CKT_`` family), registered through xlwings.

Point the xlwings add-in's "UDF Modules" setting at ``xlfuncs.worksheet`` and import the
functions. Every function here is a thin adapter: worksheet values in → the core →
a scalar or a rectangular 2-D list out, which Excel 365 spills natively. Errors become
one short line of text in the cell, never a traceback. Identical inputs are solved
once: solutions are cached by the *content* of the ranges, so an edit to any input
can never return a stale result.

This is the only module that knows Excel's shapes; it imports xlwings, the core never
does.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, TypeVar

import numpy as np
import xlwings as xw

from . import __version__
from .api import impedance_scan, solve
from .circuit import Circuit
from .errors import InputError, XlfuncsError
from .solution import Solution
from .views import element_table, node_table, scan_freqs, scan_table, solve_table, wave_table

__all__ = [
    "CKT_CAPDUTY",
    "CKT_CREST",
    "CKT_DC",
    "CKT_DETUNE",
    "CKT_DRIVE",
    "CKT_I519",
    "CKT_I519_LIMIT",
    "CKT_IMPEDANCE",
    "CKT_NODES",
    "CKT_PEAK",
    "CKT_POWER",
    "CKT_REPORT",
    "CKT_RESONANCES",
    "CKT_RMS",
    "CKT_SCAN",
    "CKT_SOLVE",
    "CKT_THD",
    "CKT_TOLERANCE",
    "CKT_V519",
    "CKT_V519_LIMITS",
    "CKT_VERSION",
    "CKT_WAVE",
    "FUNCTIONS",
    "FunctionDoc",
]

CATEGORY = "xlfuncs"
ERROR_PREFIX = "ERROR: "
_CACHE_SIZE = 64

F = TypeVar("F", bound=Callable[..., Any])

# ---------------------------------------------------------------- argument descriptions
# One place for each argument's dialog text (Excel shows at most 255 characters) and its
# xlwings conversion options: ranges are always read as 2-D lists.
_ARGS: dict[str, tuple[str, dict[str, Any]]] = {
    "parts": (
        "Parts table with its header row: name, kind, from, to, value (+ ctrl_from, ctrl_to, "
        "ctrl_part, coil_a, coil_b, sec_from, sec_to where a kind needs them).",
        {"ndim": 2},
    ),
    "sources": (
        "Sources table with its header row, one row per tone: name, kind (V/I), from, to, "
        "freq_hz | omega_rad_s | harmonic, peak | rms, phase_deg, shape.",
        {"ndim": 2},
    ),
    "target": ("Name of a part, source or node.", {}),
    "part": ("Name of a part or source.", {}),
    "node": ("Node at which the impedance is seen (against the reference node).", {}),
    "quantity": (
        "Optional: V (voltage) or I (current). Default: I for a part, V for a node.",
        {},
    ),
    "options": (
        "Optional two-column range key | value: ground, fundamental_hz, thd_max_order.",
        {"ndim": 2},
    ),
    "points": ("Optional number of rows to return.", {}),
    "freqs": ("Frequencies in Hz (a range or a single cell), each ≥ 0.", {"ndim": 2}),
    "f_start": ("First frequency of the scan, Hz (> 0).", {}),
    "f_stop": ("Last frequency of the scan, Hz (> f_start).", {}),
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
    "p_or_order": ("Reactor ratio p below 1 (0.07 = 7 %), or the tuned order above 1 (3.78).", {}),
    "source_name": ("Name for the drive's source rows.", {}),
    "node_from": ("Node the drive current leaves (usually the reference, e.g. GND).", {}),
    "node_to": ("Node the drive injects into (the bus).", {}),
    "i1_rms": ("Drive fundamental current, A rms.", {}),
    "pulses": ("Optional converter pulse number: 6 (default), 12, 18 or 24.", {}),
    "max_order": ("Optional highest harmonic order (default 25).", {}),
    "phase_deg": ("Optional phase of every harmonic tone, degrees (default 0).", {}),
    "spectrum": (
        "Optional two-column range order | percent of I1 (a measured or maker's spectrum); "
        "replaces the ideal I1/h law.",
        {"ndim": 2},
    ),
    "metric": (
        "Optional result: rms (default), peak, peak_sum, thd, dc, power, var_sum or "
        "resonance (order of the parallel resonance at a node).",
        {},
    ),
    "samples": ("Optional Monte Carlo sample count (default 10000).", {}),
}


@dataclass(frozen=True)
class FunctionDoc:
    """What the function reference and Excel's dialog say about one function."""

    name: str
    summary: str
    returns: str
    args: tuple[tuple[str, str, bool], ...]  # (name, description, optional)


FUNCTIONS: dict[str, FunctionDoc] = {}


def _sheet_function(summary: str, returns: str) -> Callable[[F], F]:
    """Register ``f`` with xlwings (name, argument docs, options) and in FUNCTIONS.

    ``summary`` becomes the docstring, which xlwings shows in Excel's function dialog.
    """

    def deco(f: F) -> F:
        import inspect

        sig = inspect.signature(f)
        args = []
        for name, prm in sig.parameters.items():
            doc, opts = _ARGS[name]
            args.append((name, doc, prm.default is not inspect.Parameter.empty))
        f.__doc__ = summary
        wrapped = _guard(f)
        for name, _doc, _opt in args:
            doc, opts = _ARGS[name]
            wrapped = xw.arg(name, doc=doc, **opts)(wrapped)
        wrapped = xw.func(category=CATEGORY)(wrapped)
        FUNCTIONS[f.__name__] = FunctionDoc(f.__name__, summary, returns, tuple(args))
        return wrapped

    return deco


def _guard(f: F) -> F:
    """Turn every failure into one line of text for the cell (never a traceback)."""

    @functools.wraps(f)
    def wrapper(*args: Any) -> Any:
        try:
            return f(*args)
        except XlfuncsError as exc:
            return ERROR_PREFIX + _one_line(str(exc))
        except Exception as exc:  # a bug of ours: still one line, with its type
            return ERROR_PREFIX + _one_line(f"internal error {type(exc).__name__}: {exc}")

    return wrapper  # type: ignore[return-value]


def _one_line(text: str) -> str:
    return " ".join(text.split())[:250]


# ------------------------------------------------------------------------------ caching
def _freeze(value: Any) -> Any:
    """A hashable copy of a worksheet value (2-D lists become tuples of tuples)."""
    if isinstance(value, (list, tuple)):
        return tuple(_freeze(v) for v in value)
    if isinstance(value, np.ndarray):
        return _freeze(value.tolist())
    return value


@functools.lru_cache(maxsize=_CACHE_SIZE)
def _solve_cached(parts: Any, sources: Any, options: Any) -> Solution:
    return solve(parts, sources, options)


def _solution(parts: Any, sources: Any, options: Any) -> Solution:
    try:
        return _solve_cached(_freeze(parts), _freeze(sources), _freeze(options))
    except TypeError:  # something unhashable slipped in: solve without the cache
        return solve(parts, sources, options)


def cache_clear() -> None:
    """Forget every cached solution (never needed for correctness)."""
    _solve_cached.cache_clear()
    _scan_cached.cache_clear()


def _name(value: Any, column: str) -> str:
    if value is None or (isinstance(value, str) and not value.strip()):
        raise InputError("argument", None, column, expected="missing name")
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError("argument", None, column, value, "expected a name")
        return str(int(value)) if value.is_integer() else str(value)
    if isinstance(value, (list, tuple)):
        raise InputError("argument", None, column, expected="expected one cell, not a range")
    return str(value).strip()


def _quantity(value: Any) -> str | None:
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    q = str(value).strip().upper()
    if q not in ("V", "I"):
        raise InputError("argument", None, "quantity", value, "expected V or I")
    return q


def _signal(parts: Any, sources: Any, target: Any, quantity: Any, options: Any) -> Any:
    return _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))


def _points(value: Any) -> int | None:
    if value is None or value == "":
        return None
    if (
        isinstance(value, bool)
        or not isinstance(value, (int, float))
        or not float(value).is_integer()
    ):
        raise InputError("argument", None, "points", value, "expected a whole number")
    return int(value)


# ---------------------------------------------------------------------------- functions
# No type annotations on the worksheet functions: xlwings would read them as converters.


@_sheet_function(
    "Phasors of one voltage or current at every source frequency, plus totals (spills).",
    "Header freq_hz | peak | rms | phase_deg; one row per frequency, ascending (DC first: "
    "magnitude |value|, phase 0 or 180); last row `total` with the true peak in the peak "
    "column and the total RMS in the rms column. Units: V or A; phase in degrees, cosine "
    "reference.",
)
def CKT_SOLVE(parts, sources, target, quantity=None, options=None):
    sol = _solution(parts, sources, options)
    return solve_table(sol, _name(target, "target"), _quantity(quantity))


@_sheet_function(
    "Total RMS of a voltage or current over all frequencies: sqrt(sum of each tone's RMS²).",
    "One number, V or A (IEEE Std 1459-2010 RMS of a non-sinusoidal quantity).",
)
def CKT_RMS(parts, sources, target, quantity=None, options=None):
    return float(_signal(parts, sources, target, quantity, options).rms_total)


@_sheet_function(
    "True peak max|x(t)| of a voltage or current with all tones combined.",
    "One number, V or A: exact over the common period of the tones; for tones without a "
    "common period, the bound |DC| + sum of tone peaks (never exceeded).",
)
def CKT_PEAK(parts, sources, target, quantity=None, options=None):
    return float(_signal(parts, sources, target, quantity, options).true_peak().value)


@_sheet_function(
    "THD of a voltage or current as a fraction (0.05 = 5 %): harmonics 2..50 over the "
    "fundamental, DC and interharmonics excluded.",
    "One number (fraction). Basis: sqrt(sum of |X_h|² for h = 2..thd_max_order) / |X_1|, "
    "integer harmonics of fundamental_hz (else the lowest source frequency); the IEEE Std "
    "519-2014 basis.",
)
def CKT_THD(parts, sources, target, quantity=None, options=None):
    return float(_signal(parts, sources, target, quantity, options).thd())


@_sheet_function(
    "Signed DC value of a voltage or current (0 when no source has a 0 Hz tone).",
    "One number, V or A.",
)
def CKT_DC(parts, sources, target, quantity=None, options=None):
    return float(_signal(parts, sources, target, quantity, options).dc)


@_sheet_function(
    "Crest factor of a voltage or current: true peak divided by total RMS.",
    "One number (ratio).",
)
def CKT_CREST(parts, sources, target, quantity=None, options=None):
    return float(_signal(parts, sources, target, quantity, options).crest_factor)


@_sheet_function(
    "Average power absorbed by a part over all frequencies, W (negative: the part delivers).",
    "One number, W: sum over frequencies of V·I at DC and ½·Re(V·I*) for each AC tone.",
)
def CKT_POWER(parts, sources, part, options=None):
    return _solution(parts, sources, options).power(_name(part, "part"))


@_sheet_function(
    "One row per part and source: total RMS voltage and current, peak current, power (spills).",
    "Header part | kind | v_rms | i_rms | i_peak | power_w (V, A, A, W absorbed); then a "
    "`balance` row whose power is the sum over every element (≈ 0).",
)
def CKT_REPORT(parts, sources, options=None):
    return element_table(_solution(parts, sources, options))


@_sheet_function(
    "Every node's voltage against the reference: DC, total RMS and true peak (spills).",
    "Header node | dc | rms | peak, one row per node, in volts.",
)
def CKT_NODES(parts, sources, options=None):
    return node_table(_solution(parts, sources, options))


@_sheet_function(
    "Time waveform of a voltage or current over one common period of the tones (spills).",
    "Header time_s | value; `points` rows (default: 20 per period of the highest tone, "
    "200 to 10 000) over one common period, or over one period of the lowest tone when the "
    "tones have none.",
)
def CKT_WAVE(parts, sources, target, quantity=None, points=None, options=None):
    sol = _solution(parts, sources, options)
    return wave_table(sol, _name(target, "target"), _quantity(quantity), _points(points))


@functools.lru_cache(maxsize=_CACHE_SIZE)
def _scan_cached(parts: Any, node: str, f: tuple[float, ...], options: Any, sources: Any) -> Any:
    circuit = Circuit.from_tables(parts, sources, options)
    freqs, z = impedance_scan(circuit, node, np.array(f))
    return scan_table(freqs, z)


@_sheet_function(
    "Impedance seen at a node against the reference, every source zeroed, log-spaced (spills).",
    "Header freq_hz | z_ohm | angle_deg, `points` rows (default 200), f_start..f_stop "
    "log-spaced. Voltage sources act as shorts and current sources as opens; pass `sources` "
    "so a supply modelled as a source behind its impedance stays in the network.",
)
def CKT_SCAN(
    parts,
    node,
    f_start,
    f_stop,
    points=None,
    options=None,
    sources=None,
):
    f = scan_freqs(f_start, f_stop, _points(points))
    return _scan_cached(
        _freeze(parts), _name(node, "node"), tuple(f.tolist()), _freeze(options), _freeze(sources)
    )


@_sheet_function(
    "Impedance seen at a node against the reference at given frequencies, sources zeroed (spills).",
    "Header freq_hz | z_ohm | angle_deg, one row per given frequency (blank cells skipped), in "
    "the order given. Sources are zeroed as in CKT_SCAN.",
)
def CKT_IMPEDANCE(parts, node, freqs, options=None, sources=None):
    flat = []
    for row in freqs or []:
        for v in row:
            if v is None or v == "":
                continue
            flat.append(_num(v, "freqs"))
    if not flat:
        raise InputError("argument", None, "freqs", expected="at least one frequency")
    return _scan_cached(
        _freeze(parts), _name(node, "node"), tuple(flat), _freeze(options), _freeze(sources)
    )


@_sheet_function("Version of the xlfuncs package, for support requests.", "Text.")
def CKT_VERSION():
    return __version__


# ------------------------------------------------------------------------------ studies
def _num(value: Any, column: str, default: float | None = None) -> float:
    if value is None or value == "":
        if default is None:
            raise InputError("argument", None, column, expected="missing number")
        return default
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("argument", None, column, value, "expected a number")
    return float(value)


def _blank(value: float) -> Any:
    return "" if not math.isfinite(value) else value


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


@_sheet_function(
    "Parallel (|Z| maximum) and series (|Z| minimum) resonances seen at a node (spills).",
    "Header kind | freq_hz | order | z_ohm; one row per resonance, ascending frequency, "
    "each refined to 1e-7 in frequency. order = f / fundamental_hz (empty without one). "
    "Sources are zeroed as in CKT_SCAN.",
)
def CKT_RESONANCES(parts, node, f_start, f_stop, points=None, options=None, sources=None):
    from .studies.resonance import find_resonances

    n = _points(points) or 400
    res = find_resonances(
        _freeze(parts),
        _name(node, "node"),
        _num(f_start, "f_start"),
        _num(f_stop, "f_stop"),
        points=n,
        options=_freeze(options),
        sources=_freeze(sources),
    )
    out: list[list[Any]] = [["kind", "freq_hz", "order", "z_ohm"]]
    out += [[r.kind, r.freq_hz, _blank(r.order), r.z_ohm] for r in res]
    if not res:
        out.append(["none found", "", "", ""])
    return out


def _check_rows(check: Any) -> list[list[Any]]:
    out: list[list[Any]] = [["item", "percent", "limit_percent", "result"]]
    for label, val, lim, ok in check.rows:
        out.append([label, val, _blank(lim), "PASS" if ok else "FAIL"])
    out.append(["verdict", "", "", "PASS" if check.passed else "FAIL"])
    out.append(["basis", check.basis, "", ""])
    return out


@_sheet_function(
    "Bus voltage harmonics and THD against IEEE 519-2014 Table 1 limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: one row per harmonic 2-50 present (% of "
    "the fundamental), a THD row, a verdict row and the basis. Screening check; the utility "
    "and local rules decide.",
)
def CKT_V519(parts, sources, node, bus_kv, options=None):
    from .studies.limits import check_voltage

    sol = _solution(parts, sources, options)
    sp = sol.voltage(_name(node, "node"))
    return _check_rows(
        check_voltage(sp.freqs_hz, sp.rms, _fundamental(sol), _num(bus_kv, "bus_kv"))
    )


@_sheet_function(
    "A current's harmonics and TDD against IEEE 519 Tables 2-4 current limits (spills pass/fail).",
    "Header item | percent | limit_percent | result: harmonics 2-50 in % of I_L, TDD, a DC row "
    "when present (DC offset not allowed), verdict and basis. Isc/IL = i_sc / i_l.",
)
def CKT_I519(parts, sources, part, i_sc, i_l, bus_kv, edition=None, options=None):
    from .studies.limits import check_current

    sol = _solution(parts, sources, options)
    sp = sol.current(_name(part, "part"))
    il = _num(i_l, "i_l")
    ed = int(_num(edition, "edition", 2014))
    return _check_rows(
        check_current(
            sp.freqs_hz,
            sp.rms,
            _fundamental(sol),
            il,
            _num(i_sc, "i_sc") / il,
            _num(bus_kv, "bus_kv"),
            ed,
        )
    )


@_sheet_function(
    "IEEE 519-2014 Table 1 voltage limits for a bus voltage: individual harmonic % and THD %.",
    "Spills header individual_pct | thd_pct and one row of values.",
)
def CKT_V519_LIMITS(bus_kv):
    from .studies.limits import voltage_limits_pct

    ind, thd = voltage_limits_pct(_num(bus_kv, "bus_kv"))
    return [["individual_pct", "thd_pct"], [ind, thd]]


@_sheet_function(
    "IEEE 519 current limit for one harmonic order, in % of I_L (Tables 2-4).",
    "One number, % of I_L; even orders per the chosen edition; orders above 50 are not "
    "limited (empty).",
)
def CKT_I519_LIMIT(order, isc_il, bus_kv=None, edition=None):
    from .studies.limits import current_limit_pct

    h = _num(order, "order")
    if not h.is_integer():
        raise InputError("argument", None, "order", order, "expected a whole harmonic order")
    lim = current_limit_pct(
        int(h),
        _num(isc_il, "isc_il"),
        _num(bus_kv, "bus_kv", 13.8),
        int(_num(edition, "edition", 2014)),
    )
    return _blank(lim)


@_sheet_function(
    "Capacitor duty under harmonics against IEEE 18 continuous limits (spills pass/fail).",
    "Header quantity | value | rated | ratio | limit | pass for rms voltage (V), peak voltage "
    "(arithmetic sum of tone peaks), rms current (A) and kvar; limits 1.10, 1.20, 1.35, 1.35 "
    "(IEEE Std 18-2002).",
)
def CKT_CAPDUTY(parts, sources, part, rated_kvar, rated_v, options=None):
    from .studies.capacitor import capacitor_duty

    sol = _solution(parts, sources, options)
    name = _name(part, "part")
    v = sol.voltage(name)
    i = sol.current(name)
    duty = capacitor_duty(
        v.freqs_hz, v.rms, i.rms, _num(rated_kvar, "rated_kvar"), _num(rated_v, "rated_v")
    )
    return duty.table()


@_sheet_function(
    "Detuned reactor sizing from a reactor ratio p (or a tuned order) for a capacitor bank (spills).",
    "Header quantity | value | unit: p, tuned order 1/sqrt(p), tuned Hz, capacitor and reactor "
    "reactance (ohm), capacitance (F), reactor inductance (H), capacitor voltage rise 1/(1-p).",
)
def CKT_DETUNE(kvar, volts, fundamental_hz, p_or_order):
    from .studies.detuning import detuning

    x = _num(p_or_order, "p_or_order")
    kw = {"p": x} if x < 1 else {"order": x}
    return detuning(
        _num(kvar, "kvar"), _num(volts, "volts"), _num(fundamental_hz, "fundamental_hz"), **kw
    ).rows()


@_sheet_function(
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
    from .studies.drives import drive_sources

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
        _name(source_name, "source_name"),
        _name(node_from, "node_from"),
        _name(node_to, "node_to"),
        _num(i1_rms, "i1_rms"),
        int(_num(pulses, "pulses", 6)),
        int(_num(max_order, "max_order", 25)),
        _num(phase_deg, "phase_deg", 0.0),
        spec,
    )


@_sheet_function(
    "Monte Carlo and worst-case corners of a result over the parts' tolerance column (spills).",
    "Header statistic | value: nominal, mean, std, min, p1, p5, p50, p95, p99, max, corner "
    "min/max (all 2^k corners for k <= 12 toleranced parts, else linearised) and the sample "
    "count. Reproducible (fixed seed).",
)
def CKT_TOLERANCE(parts, sources, target, metric=None, samples=None, quantity=None, options=None):
    from .studies.tolerance import tolerance_study

    m = "rms" if metric is None or metric == "" else str(metric).strip().lower()
    n = _points(samples) or 10_000
    res = tolerance_study(
        _freeze(parts),
        _freeze(sources),
        _freeze(options),
        target=_name(target, "target"),
        quantity=_quantity(quantity),
        metric=m,
        samples=n,
    )
    return res.table()
