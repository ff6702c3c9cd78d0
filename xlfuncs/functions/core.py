"""Core worksheet functions: phasors, RMS, peak, THD, power, reports, waves, scans.

The calculation modules are imported inside the functions, on first use, so that
importing the worksheet functions (Excel's "Import Functions", the function dialog)
stays quick.
"""

from __future__ import annotations

from typing import Any

from ..errors import InputError, XlfuncsError
from .arguments import argument_named, freq_arg, name_arg, points_arg, quantity_arg
from .cache import scan, solution
from .registry import register_args, sheet_function

register_args(
    {
        "parts": (
            "Parts table with its header row: name, kind, from, to, value (+ ctrl_from, ctrl_to, "
            "ctrl_part, coil_a, coil_b, sec_from, sec_to where a kind needs them).",
            {"ndim": 2},
        ),
        "sources": (
            "Sources table with its header row: name, kind (V/I), from, to, then per tone "
            "freq_hz | omega_rad_s | harmonic, peak | rms, phase_deg, shape, or per noise row "
            "density, corner_hz. Give it to scans too: zeroed, V is a short and I an open.",
            {"ndim": 2},
        ),
        "target": ("Name of a part, source or node.", {}),
        "part": ("Name of a part or source.", {}),
        "node": (
            "Name of a node other than the reference: where the impedance is seen, the "
            "voltage is checked or the output noise is taken, against the reference node.",
            {},
        ),
        "quantity": (
            "Optional: V (voltage) or I (current). Default: I for a part or source, V for a node.",
            {},
        ),
        "options": (
            "Two-column range key | value. Network functions (optional): ground, "
            "fundamental_hz, thd_max_order. Equipment studies: fundamental_hz (required), "
            "max_order (default 50).",
            {"ndim": 2, "columns": ("key", "value")},
        ),
        "points": (
            "Optional number of rows to return (frequencies; times in CKT_WAVE), each "
            "function's own range and default. The resonance functions check it (8 to "
            "100000) but their result does not depend on it.",
            {},
        ),
        "freqs": (
            "Frequencies in Hz (a range or a single cell): 0 (DC) or 1e-6 to 1e12.",
            {"ndim": 2, "columns": ()},
        ),
        "f_start": (
            "First frequency of the band, Hz: 1e-6 to 1e12. The noise band integrals "
            "(CKT_NOISE_RMS, CKT_NOISE_PARTS) also take 0.",
            {},
        ),
        "f_stop": (
            "Last frequency of the band, Hz: above f_start, up to 1e12 (at most 12 decades "
            "above it, except in CKT_SCAN and CKT_BUS_SCAN). CKT_NOISE_RMS and "
            "CKT_NOISE_PARTS also take the text inf (all frequencies).",
            {},
        ),
    }
)

# The texts that say a scan needs the sources table (CKT_SCAN, CKT_IMPEDANCE).
_SOURCES_NOTE = (
    "Give `sources`: without it a supply modelled as a source behind its impedance is "
    "missing, its nodes are left open and |Z| is wrong."
)


def signal_of(parts: Any, sources: Any, target: Any, quantity: Any, options: Any) -> Any:
    return solution(parts, sources, options).signal(
        name_arg(target, "target"), quantity_arg(quantity)
    )


def _unit(label: str) -> str:
    return "A" if label.startswith("I(") else "V"


def true_peak_of(sp: Any) -> float:
    """The true peak of a signal as one number: exact, or the exact supremum over all
    time. Where only an upper bound is known, refuse with the bound in the message (a
    bound must never pass for a peak in a cell that other formulas read)."""
    res = sp.true_peak()
    value = float(res.value)
    if res.method in ("exact", "supremum"):
        return value
    if res.method == "bound":
        raise XlfuncsError(
            f"{sp.label}: only an upper bound of the true peak is known for these tones, "
            f"{value:.6g} {_unit(sp.label)} (the peak may be lower); CKT_SOLVE's total row "
            "shows it with its basis"
        )
    raise RuntimeError(f"unknown peak method {res.method!r}")


@sheet_function(
    "Phasors of one voltage or current at every source frequency, plus totals (spills).",
    "Header freq_hz | peak | rms | phase_deg; one row per frequency, ascending (DC first: "
    "magnitude |value|, phase 0 or 180); last row `total` with the true peak in the peak "
    "column and the total RMS in the rms column. Units: V or A; phase in degrees, cosine "
    "reference.",
)
def CKT_SOLVE(parts, sources, target, quantity=None, options=None):
    from ..views import solve_table

    sol = solution(parts, sources, options)
    return solve_table(sol, name_arg(target, "target"), quantity_arg(quantity))


@sheet_function(
    "Total RMS of a voltage or current over all frequencies: sqrt(sum of each tone's RMS²).",
    "One number, V or A (IEEE Std 1459-2010 RMS of a non-sinusoidal quantity).",
)
def CKT_RMS(parts, sources, target, quantity=None, options=None):
    return float(signal_of(parts, sources, target, quantity, options).rms_total)


@sheet_function(
    "True peak max|x(t)| of a voltage or current with all tones combined.",
    "One number, V or A: exact over the common period of the tones, or the exact supremum "
    "over all time for tones without one. Where only an upper bound is known: an ERROR "
    "line giving the bound (CKT_SOLVE's total row shows it with its basis).",
)
def CKT_PEAK(parts, sources, target, quantity=None, options=None):
    return true_peak_of(signal_of(parts, sources, target, quantity, options))


@sheet_function(
    "THD of a voltage or current as a fraction (0.05 = 5 %): harmonics 2..50 over the "
    "fundamental, DC and interharmonics excluded.",
    "One number (fraction). Basis: sqrt(sum of |X_h|² for h = 2..thd_max_order) / |X_1|, "
    "integer harmonics of the fundamental (the IEEE Std 519-2014 basis). The fundamental: "
    "fundamental_hz of the options; without it the lowest AC tone, only where that tone is "
    "the signal's largest (else an ERROR asking for fundamental_hz: a subharmonic, an "
    "interharmonic or a resonant harmonic would be taken for it).",
)
def CKT_THD(parts, sources, target, quantity=None, options=None):
    return float(signal_of(parts, sources, target, quantity, options).thd())


@sheet_function(
    "Signed DC value of a voltage or current (0 when no source has a 0 Hz tone).",
    "One number, V or A.",
)
def CKT_DC(parts, sources, target, quantity=None, options=None):
    return float(signal_of(parts, sources, target, quantity, options).dc)


@sheet_function(
    "Crest factor of a voltage or current: true peak divided by total RMS.",
    "One number (ratio), from the true peak as CKT_PEAK gives it; an ERROR line where only "
    "a bound of the peak is known or the signal is zero.",
)
def CKT_CREST(parts, sources, target, quantity=None, options=None):
    sp = signal_of(parts, sources, target, quantity, options)
    rms = float(sp.rms_total)
    if not rms > 0:
        raise XlfuncsError(f"{sp.label}: the signal is zero; a crest factor needs a non-zero RMS")
    try:
        peak = true_peak_of(sp)
    except XlfuncsError:
        bound = float(sp.true_peak().value)
        raise XlfuncsError(
            f"{sp.label}: only an upper bound of the true peak is known for these tones, so "
            f"the crest factor is at most {bound / rms:.6g} (peak bound {bound:.6g} "
            f"{_unit(sp.label)} / rms {rms:.6g}); CKT_SOLVE's total row shows the bound's basis"
        ) from None
    return peak / rms


@sheet_function(
    "Average power absorbed by a part over all frequencies, W (negative: the part delivers).",
    "One number, W: sum over frequencies of V·I at DC and ½·Re(V·I*) for each AC tone.",
)
def CKT_POWER(parts, sources, part, options=None):
    name = name_arg(part, "part")
    sol = solution(parts, sources, options)
    with argument_named("part", name):
        return sol.power(name)


@sheet_function(
    "One row per part and source: total RMS voltage and current, peak current, power (spills).",
    "Header part | kind | v_rms | i_rms | i_peak | power_w (V, A, A, W absorbed); then a "
    "`balance` row whose power is the sum over every element (≈ 0).",
    call_in_wizard=False,
)
def CKT_REPORT(parts, sources, options=None):
    from ..views import element_table

    return element_table(solution(parts, sources, options))


@sheet_function(
    "Every node's voltage against the reference: DC, total RMS and true peak (spills).",
    "Header node | dc | rms | peak, one row per node, in volts.",
    call_in_wizard=False,
)
def CKT_NODES(parts, sources, options=None):
    from ..views import node_table

    return node_table(solution(parts, sources, options))


@sheet_function(
    "Time waveform of a voltage or current over one common period of the tones (spills).",
    "Header time_s | value; `points` rows (2 to 100 000; default: 20 per period of the "
    "highest tone, 200 to 10 000) over one common period, or over one period of the lowest "
    "tone when the tones have none.",
    call_in_wizard=False,
)
def CKT_WAVE(parts, sources, target, quantity=None, points=None, options=None):
    from ..views import wave_table

    n = points_arg(points, lo=2, hi=100_000)
    sol = solution(parts, sources, options)
    return wave_table(sol, name_arg(target, "target"), quantity_arg(quantity), n)


@sheet_function(
    "Impedance seen at a node against the reference, every source zeroed, log-spaced "
    "(spills). " + _SOURCES_NOTE,
    "Header freq_hz | z_ohm | angle_deg, `points` rows (2 to 100 000, default 200), "
    "f_start..f_stop log-spaced. Voltage sources act as shorts and current sources as "
    "opens; without `sources` they are not in the network at all.",
    call_in_wizard=False,
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
    from ..views import scan_freqs

    f0 = freq_arg(f_start, "f_start")
    f1 = freq_arg(f_stop, "f_stop")
    if not f1 > f0:
        raise InputError("argument", None, "f_stop", f_stop, "expected a frequency > f_start")
    f = scan_freqs(f0, f1, points_arg(points, lo=2, hi=100_000))
    return scan(parts, name_arg(node, "node"), tuple(f.tolist()), options, sources)


@sheet_function(
    "Impedance seen at a node against the reference at given frequencies, sources zeroed "
    "(spills). " + _SOURCES_NOTE,
    "Header freq_hz | z_ohm | angle_deg, one row per given frequency (blank cells skipped), in "
    "the order given. Sources are zeroed as in CKT_SCAN.",
    call_in_wizard=False,
)
def CKT_IMPEDANCE(parts, node, freqs, options=None, sources=None):
    cells = freqs if isinstance(freqs, (list, tuple)) else [[freqs]]
    flat = []
    for row in cells:
        for v in row if isinstance(row, (list, tuple)) else (row,):
            if v is None or v == "":
                continue
            flat.append(freq_arg(v, "freqs", dc=True))
    if not flat:
        raise InputError("argument", None, "freqs", expected="at least one frequency")
    if len(flat) > 100_000:
        raise InputError(
            "argument", None, "freqs", len(flat), "expected at most 100000 frequencies"
        )
    return scan(parts, name_arg(node, "node"), tuple(flat), options, sources)


@sheet_function("Version of the xlfuncs package, for support requests.", "Text.")
def CKT_VERSION():
    from .. import __version__

    return __version__
