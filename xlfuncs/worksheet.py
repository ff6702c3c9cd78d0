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
    "CKT_CREST",
    "CKT_DC",
    "CKT_NODES",
    "CKT_PEAK",
    "CKT_POWER",
    "CKT_REPORT",
    "CKT_RMS",
    "CKT_SCAN",
    "CKT_SOLVE",
    "CKT_THD",
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
    "f_start": ("First frequency of the scan, Hz (> 0).", {}),
    "f_stop": ("Last frequency of the scan, Hz (> f_start).", {}),
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
    sp = _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))
    return float(sp.rms_total)


@_sheet_function(
    "True peak max|x(t)| of a voltage or current with all tones combined.",
    "One number, V or A: exact over the common period of the tones; for tones without a "
    "common period, the bound |DC| + sum of tone peaks (never exceeded).",
)
def CKT_PEAK(parts, sources, target, quantity=None, options=None):
    sp = _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))
    return float(sp.true_peak().value)


@_sheet_function(
    "THD of a voltage or current as a fraction (0.05 = 5 %): harmonics 2..50 over the "
    "fundamental, DC and interharmonics excluded.",
    "One number (fraction). Basis: sqrt(sum of |X_h|² for h = 2..thd_max_order) / |X_1|, "
    "integer harmonics of fundamental_hz (else the lowest source frequency); the IEEE Std "
    "519-2014 basis.",
)
def CKT_THD(parts, sources, target, quantity=None, options=None):
    sp = _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))
    return float(sp.thd())


@_sheet_function(
    "Signed DC value of a voltage or current (0 when no source has a 0 Hz tone).",
    "One number, V or A.",
)
def CKT_DC(parts, sources, target, quantity=None, options=None):
    sp = _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))
    return float(sp.dc)


@_sheet_function(
    "Crest factor of a voltage or current: true peak divided by total RMS.",
    "One number (ratio).",
)
def CKT_CREST(parts, sources, target, quantity=None, options=None):
    sp = _solution(parts, sources, options).signal(_name(target, "target"), _quantity(quantity))
    return float(sp.crest_factor)


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


@_sheet_function("Version of the xlfuncs package, for support requests.", "Text.")
def CKT_VERSION():
    return __version__
