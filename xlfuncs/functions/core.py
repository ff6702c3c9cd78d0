"""Core worksheet functions: phasors, RMS, peak, THD, power, reports, waves, scans."""

from __future__ import annotations

from typing import Any

from .. import __version__
from ..errors import InputError
from ..views import element_table, node_table, scan_freqs, solve_table, wave_table
from .arguments import name_arg, num_arg, points_arg, quantity_arg
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
    }
)


def signal_of(parts: Any, sources: Any, target: Any, quantity: Any, options: Any) -> Any:
    return solution(parts, sources, options).signal(
        name_arg(target, "target"), quantity_arg(quantity)
    )


@sheet_function(
    "Phasors of one voltage or current at every source frequency, plus totals (spills).",
    "Header freq_hz | peak | rms | phase_deg; one row per frequency, ascending (DC first: "
    "magnitude |value|, phase 0 or 180); last row `total` with the true peak in the peak "
    "column and the total RMS in the rms column. Units: V or A; phase in degrees, cosine "
    "reference.",
)
def CKT_SOLVE(parts, sources, target, quantity=None, options=None):
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
    "One number, V or A: exact over the common period of the tones; for tones without a "
    "common period, the bound |DC| + sum of tone peaks (never exceeded).",
)
def CKT_PEAK(parts, sources, target, quantity=None, options=None):
    return float(signal_of(parts, sources, target, quantity, options).true_peak().value)


@sheet_function(
    "THD of a voltage or current as a fraction (0.05 = 5 %): harmonics 2..50 over the "
    "fundamental, DC and interharmonics excluded.",
    "One number (fraction). Basis: sqrt(sum of |X_h|² for h = 2..thd_max_order) / |X_1|, "
    "integer harmonics of fundamental_hz (else the lowest source frequency); the IEEE Std "
    "519-2014 basis.",
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
    "One number (ratio).",
)
def CKT_CREST(parts, sources, target, quantity=None, options=None):
    return float(signal_of(parts, sources, target, quantity, options).crest_factor)


@sheet_function(
    "Average power absorbed by a part over all frequencies, W (negative: the part delivers).",
    "One number, W: sum over frequencies of V·I at DC and ½·Re(V·I*) for each AC tone.",
)
def CKT_POWER(parts, sources, part, options=None):
    return solution(parts, sources, options).power(name_arg(part, "part"))


@sheet_function(
    "One row per part and source: total RMS voltage and current, peak current, power (spills).",
    "Header part | kind | v_rms | i_rms | i_peak | power_w (V, A, A, W absorbed); then a "
    "`balance` row whose power is the sum over every element (≈ 0).",
)
def CKT_REPORT(parts, sources, options=None):
    return element_table(solution(parts, sources, options))


@sheet_function(
    "Every node's voltage against the reference: DC, total RMS and true peak (spills).",
    "Header node | dc | rms | peak, one row per node, in volts.",
)
def CKT_NODES(parts, sources, options=None):
    return node_table(solution(parts, sources, options))


@sheet_function(
    "Time waveform of a voltage or current over one common period of the tones (spills).",
    "Header time_s | value; `points` rows (default: 20 per period of the highest tone, "
    "200 to 10 000) over one common period, or over one period of the lowest tone when the "
    "tones have none.",
)
def CKT_WAVE(parts, sources, target, quantity=None, points=None, options=None):
    sol = solution(parts, sources, options)
    return wave_table(sol, name_arg(target, "target"), quantity_arg(quantity), points_arg(points))


@sheet_function(
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
    f = scan_freqs(f_start, f_stop, points_arg(points))
    return scan(parts, name_arg(node, "node"), tuple(f.tolist()), options, sources)


@sheet_function(
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
            flat.append(num_arg(v, "freqs"))
    if not flat:
        raise InputError("argument", None, "freqs", expected="at least one frequency")
    return scan(parts, name_arg(node, "node"), tuple(flat), options, sources)


@sheet_function("Version of the xlfuncs package, for support requests.", "Text.")
def CKT_VERSION():
    return __version__
