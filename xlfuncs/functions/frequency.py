"""Frequency-domain worksheet functions: resonances, transfer functions (Bode data),
port impedances, natural frequencies and zeros, input-filter stability and noise.

Conventions (also in the README): gain = output / the named source's own value, every
other source zeroed; dB = 20·log10 of that ratio (a voltage or current ratio); phase in
degrees, cosine reference, positive = the output leads; group delay −dφ/dω in seconds
(positive for a lagging response), from the exact derivative, not by differencing.
"""

from __future__ import annotations

import math
from typing import Any

from ..errors import InputError
from .arguments import blank, freeze, name_arg, num_arg, points_arg, quantity_arg
from .registry import register_args, sheet_function

register_args(
    {
        "source": (
            "Name of the input: a source of the sources table. Gain = output / its own value; "
            "every other source is zeroed (V as a short, I as an open).",
            {},
        ),
        "output": (
            "What responds: a node (its voltage), or a part or source (its current from → to, "
            "or its voltage with quantity V).",
            {},
        ),
        "freq_hz": ("Frequency, Hz (0 for DC, or 1e-6 to 1e12).", {}),
        "measure": (
            "Optional: gain (default), gain_db, phase_deg, group_delay_s, real or imag.",
            {},
        ),
        "node_a": ("Port node where the 1 A test current enters.", {}),
        "node_b": (
            "Port node where the test current leaves (the reference node's name for a "
            "node-to-reference port).",
            {},
        ),
        "port": (
            "Where the converter connects: a node (against the reference), or two cells "
            "holding the from and to nodes.",
            {"ndim": 2},
        ),
        "port_in": (
            "Input port: a node (against the reference), or two cells holding the from and "
            "to nodes.",
            {"ndim": 2},
        ),
        "port_out": (
            "Output port: a node (against the reference), or two cells holding the from and "
            "to nodes.",
            {"ndim": 2},
        ),
        "load": (
            "Name of the load part across the output port: kept for the input impedance, "
            "taken out for the output impedance.",
            {},
        ),
        "v_in": ("Converter input voltage, V (DC).", {}),
        "p_in": ("Converter input power, W (output power / efficiency).", {}),
        "margin_db": (
            "Optional required margin, dB (default 6: |Z_out| at most half of V²/P, common "
            "practice).",
            {},
        ),
        "l_h": ("Filter inductance, H.", {}),
        "c_f": ("Filter capacitance, F.", {}),
        "temperature_c": ("Temperature of every resistor, °C (thermal noise 4kTR).", {}),
    }
)

_NONE = "none"


def _opt(value: float | None) -> Any:
    return _NONE if value is None else value


def _freq(value: Any, column: str) -> float:
    f = num_arg(value, column)
    if not (f == 0 or 1e-6 <= f <= 1e12):
        raise InputError("argument", None, column, value, "expected 0 Hz or 1e-6 to 1e12 Hz")
    return f


def _stop(value: Any) -> float:
    """f_stop: a number, or the text inf / ∞ (all frequencies)."""
    if isinstance(value, str) and value.strip().lower() in ("inf", "infinity", "∞"):
        return math.inf
    return num_arg(value, "f_stop")


def _points(value: Any, default: int) -> int:
    n = points_arg(value)
    return default if n is None else n


def _margin(value: Any) -> float:
    return num_arg(value, "margin_db", 6.0)


# ---------------------------------------------------------------------------- resonances
@sheet_function(
    "Parallel (|Z| maximum) and series (|Z| minimum) resonances seen at a node (spills).",
    "Header kind | freq_hz | order | z_ohm | damping | q; one row per resonance, ascending "
    "frequency. Complete by construction: from the network's natural frequencies (poles and "
    "zeros of Z), each confirmed by the solver; `points` no longer changes the result. order "
    "= f / fundamental_hz (empty without one). damping ζ and q = 1/(2ζ) of the pole "
    "(parallel) or zero (series) behind the resonance (empty when none lies near). With a "
    "resistance law (r_exponent) a scan is used and a last `note` row says so. Sources are "
    "zeroed as in CKT_SCAN.",
    call_in_wizard=False,
)
def CKT_RESONANCES(parts, node, f_start, f_stop, points=None, options=None, sources=None):
    from ..studies.resonance import find_resonances

    res = find_resonances(
        freeze(parts),
        name_arg(node, "node"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        points=_points(points, 400),
        options=freeze(options),
        sources=freeze(sources),
    )
    return resonance_table(res)


def resonance_table(res: Any) -> list[list[Any]]:
    """The spilled table of :class:`xlfuncs.studies.Resonances` (CKT_RESONANCES and the
    three-phase CKT_BUS_RESONANCES): header kind | freq_hz | order | z_ohm | damping | q,
    a `none found` row when empty and a last `note` row where the method needs saying."""
    out: list[list[Any]] = [["kind", "freq_hz", "order", "z_ohm", "damping", "q"]]
    for r in res:
        q: Any = "" if r.damping is None else ("lossless" if r.q is None else r.q)
        out.append(
            [
                r.kind,
                r.freq_hz,
                "" if r.order is None else blank(r.order),
                r.z_ohm,
                "" if r.damping is None else r.damping,
                q,
            ]
        )
    if not res:
        out.append(["none found", "", "", "", "", ""])
    if getattr(res, "note", ""):
        out.append(["note", res.note, "", "", "", ""])
    return out


# --------------------------------------------------------------------- transfer functions
@sheet_function(
    "Bode data of a transfer function: output / the named source's own value, log-spaced "
    "(spills).",
    "Header freq_hz | gain | gain_db | phase_deg | group_delay_s, `points` rows (default 200) "
    "from f_start to f_stop. gain = |H|; gain_db = 20·log10|H|; phase_deg continuous over the "
    "band (unwrapped; the value at f_start lies in (−180, 180]), cosine reference, positive = "
    "output leads; group_delay_s = −dφ/dω from the exact derivative. Every other source is "
    "zeroed.",
    call_in_wizard=False,
)
def CKT_GAIN(
    parts, sources, source, output, f_start, f_stop, points=None, quantity=None, options=None
):
    from ..studies.transfer import bode

    r = bode(
        freeze(parts),
        freeze(sources),
        name_arg(source, "source"),
        name_arg(output, "output"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        _points(points, 200),
        quantity_arg(quantity),
        freeze(options),
    )
    out: list[list[Any]] = [["freq_hz", "gain", "gain_db", "phase_deg", "group_delay_s"]]
    out += [
        [float(f), float(g), float(d), float(p), float(t)]
        for f, g, d, p, t in zip(
            r.freqs_hz, r.gain, r.gain_db, r.phase_unwrapped_deg, r.group_delay_s, strict=True
        )
    ]
    return out


_MEASURES = ("gain", "gain_db", "phase_deg", "group_delay_s", "real", "imag")


@sheet_function(
    "One number of a transfer function at one frequency: output / the named source's own value.",
    "One number: gain |H| (default), gain_db 20·log10|H|, phase_deg in (−180, 180] (cosine "
    "reference), group_delay_s −dφ/dω, or the real or imag part of H; every other source "
    "zeroed.",
)
def CKT_GAIN_AT(
    parts, sources, source, output, freq_hz, measure=None, quantity=None, options=None
):
    from ..studies.transfer import frequency_response

    m = "gain" if measure is None or measure == "" else str(measure).strip().lower()
    if m not in _MEASURES:
        raise InputError("argument", None, "measure", measure, "expected " + ", ".join(_MEASURES))
    r = frequency_response(
        freeze(parts),
        freeze(sources),
        name_arg(source, "source"),
        name_arg(output, "output"),
        [_freq(freq_hz, "freq_hz")],
        quantity_arg(quantity),
        freeze(options),
        unwrap=False,
    )
    values = {
        "gain": r.gain,
        "gain_db": r.gain_db,
        "phase_deg": r.phase_deg,
        "group_delay_s": r.group_delay_s,
        "real": r.h.real,
        "imag": r.h.imag,
    }
    return float(values[m][0])


@sheet_function(
    "Impedance between two nodes (a port), every source zeroed, log-spaced (spills).",
    "Header freq_hz | z_ohm | angle_deg | r_ohm | x_ohm, `points` rows (default 200): Z = "
    "(V(node_a) − V(node_b)) per ampere entering node_a and leaving node_b. Give `sources` "
    "so that a supply modelled as a source stays in the network (V short, I open).",
    call_in_wizard=False,
)
def CKT_PORT_Z(parts, node_a, node_b, f_start, f_stop, points=None, options=None, sources=None):
    import numpy as np

    from ..studies.transfer import log_frequencies, port_impedance

    f = log_frequencies(
        num_arg(f_start, "f_start"), num_arg(f_stop, "f_stop"), _points(points, 200)
    )
    _f, z = port_impedance(
        freeze(parts),
        name_arg(node_a, "node_a"),
        name_arg(node_b, "node_b"),
        f,
        freeze(options),
        freeze(sources),
    )
    out: list[list[Any]] = [["freq_hz", "z_ohm", "angle_deg", "r_ohm", "x_ohm"]]
    ang = np.degrees(np.angle(z))
    out += [
        [float(a), float(abs(b)), float(c), float(b.real), float(b.imag)]
        for a, b, c in zip(f, z, ang, strict=True)
    ]
    return out


@sheet_function(
    "Input impedance (load connected) and output impedance (load taken out) of a two-port, "
    "log-spaced (spills).",
    "Header freq_hz | zin_ohm | zin_deg | zout_ohm | zout_deg, `points` rows (default 200). "
    "Every source zeroed; the load must join the output port's two nodes.",
    call_in_wizard=False,
)
def CKT_TWOPORT_Z(
    parts, port_in, port_out, load, f_start, f_stop, points=None, options=None, sources=None
):
    import numpy as np

    from ..studies.transfer import log_frequencies, two_port_impedances

    f = log_frequencies(
        num_arg(f_start, "f_start"), num_arg(f_stop, "f_stop"), _points(points, 200)
    )
    r = two_port_impedances(
        freeze(parts),
        freeze(port_in),
        freeze(port_out),
        name_arg(load, "load"),
        f,
        freeze(options),
        freeze(sources),
    )
    out: list[list[Any]] = [["freq_hz", "zin_ohm", "zin_deg", "zout_ohm", "zout_deg"]]
    out += [
        [
            float(a),
            float(abs(b)),
            float(np.degrees(np.angle(b))),
            float(abs(c)),
            float(np.degrees(np.angle(c))),
        ]
        for a, b, c in zip(f, r.z_in, r.z_out, strict=True)
    ]
    return out


# ------------------------------------------------------------------ poles and zeros
def _naturals_table(rows: Any, empty: str) -> list[list[Any]]:
    out: list[list[Any]] = [["freq_hz", "damping", "q", "time_constant_s"]]
    for r in rows:
        out.append([r.freq_hz, _opt(r.damping), _opt(r.q), _opt(r.time_constant_s)])
    if not rows:
        out.append([empty, "", "", ""])
    return out


@sheet_function(
    "Natural frequencies (poles) of the network, every source zeroed (spills).",
    "Header freq_hz | damping | q | time_constant_s; one row per real pole and per conjugate "
    "pair, ascending. freq_hz = |s|/2π; damping ζ = −Re(s)/|s| (1 for a decaying real pole, "
    "negative when growing); q = 1/(2ζ); time_constant_s = −1/Re(s). `none` where undefined "
    "(lossless pair: ζ shown 0; pole at s = 0). Exact generalised eigenvalues of the network's "
    "matrices; eigenvalues beyond 1e10 × the network's mid frequency are infinite (algebraic "
    "constraints) and left out, those below 1e-8 × it are s = 0 (a node floating at DC).",
    call_in_wizard=False,
)
def CKT_POLES(parts, sources=None, options=None):
    from ..studies.poles import network_poles

    rows = network_poles(freeze(parts), freeze(sources), freeze(options))
    return _naturals_table(rows, "no natural frequencies (no energy storage)")


@sheet_function(
    "Zeros of a transfer function output / the named source's own value (spills).",
    "Header freq_hz | damping | q | time_constant_s as in CKT_POLES, one row per real zero and "
    "per conjugate pair (negative damping: a right-half-plane zero). Zeros that cancel a pole "
    "(within 1e-8 relative) are modes the output does not see and are left out.",
    call_in_wizard=False,
)
def CKT_ZEROS(parts, sources, source, output, quantity=None, options=None):
    from ..studies.poles import transfer_zeros

    rows = transfer_zeros(
        freeze(parts),
        freeze(sources),
        name_arg(source, "source"),
        name_arg(output, "output"),
        quantity_arg(quantity),
        freeze(options),
    )
    return _naturals_table(rows, "no finite zeros")


# ---------------------------------------------------------------- input-filter stability
@sheet_function(
    "Input-filter check of a switching converter: the filter's output impedance against the "
    "converter's negative input resistance −V²/P (spills).",
    "Rows item | value | unit: rn_ohm (V²/P), zout_peak_ohm and f_worst_hz (the largest "
    "|Z_out| over the band, found exactly), margin_db = 20·log10(V²/P / |Z_out|) there, "
    "required_db, verdict PASS/FAIL (R. D. Middlebrook, IEEE IAS Annual Meeting, 1976). "
    "Sources zeroed: give the supply as a voltage source (a short). A screening check.",
    call_in_wizard=False,
)
def CKT_FILTER_MARGIN(
    parts, port, v_in, p_in, f_start, f_stop, margin_db=None, options=None, sources=None
):
    from ..studies.stability import input_filter_margin

    r = input_filter_margin(
        freeze(parts),
        freeze(port),
        num_arg(v_in, "v_in"),
        num_arg(p_in, "p_in"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        _margin(margin_db),
        points=2,
        options=freeze(options),
        sources=freeze(sources),
    )
    return r.table()


@sheet_function(
    "The filter's output impedance and the margin against V²/P over frequency, log-spaced "
    "(spills).",
    "Header freq_hz | zout_ohm | zout_deg | rn_ohm | margin_db, `points` rows (default 200); "
    "margin_db = 20·log10(V²/P / |Z_out|). The smallest margin between the rows is given "
    "exactly by CKT_FILTER_MARGIN.",
    call_in_wizard=False,
)
def CKT_MARGIN_SCAN(
    parts, port, v_in, p_in, f_start, f_stop, points=None, options=None, sources=None
):
    import numpy as np

    from ..studies.stability import input_filter_margin

    r = input_filter_margin(
        freeze(parts),
        freeze(port),
        num_arg(v_in, "v_in"),
        num_arg(p_in, "p_in"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        0.0,
        points=_points(points, 200),
        options=freeze(options),
        sources=freeze(sources),
    )
    out: list[list[Any]] = [["freq_hz", "zout_ohm", "zout_deg", "rn_ohm", "margin_db"]]
    ang = np.degrees(np.angle(r.z_out))
    out += [
        [float(f), float(abs(z)), float(a), r.rn_ohm, float(m)]
        for f, z, a, m in zip(r.freqs_hz, r.z_out, ang, r.margin_curve_db, strict=True)
    ]
    return out


@sheet_function(
    "Parallel R–C damping of an LC input filter that restores a margin against V²/P (spills).",
    "Rows item | value | unit: r0_ohm = √(L/C), target peak, n = Cb/C, cb_f, rf_ohm, the "
    "peak from the formula and the peak of the damped filter solved by xlfuncs, f_peak_hz, "
    "margin_db from the solved peak, verdict, source (Erickson & Maksimović, 2nd ed., "
    "§10.4.1, from memory; verified by the solve).",
    call_in_wizard=False,
)
def CKT_DAMPING(l_h, c_f, v_in, p_in, margin_db=None):
    from ..studies.stability import damping_for_margin

    d = damping_for_margin(
        num_arg(l_h, "l_h"),
        num_arg(c_f, "c_f"),
        num_arg(v_in, "v_in"),
        num_arg(p_in, "p_in"),
        _margin(margin_db),
    )
    return d.table()


# ------------------------------------------------------------------------------- noise
@sheet_function(
    "Output noise density at a node: thermal noise of every resistor plus the noise rows of "
    "the sources table, log-spaced (spills).",
    "Header freq_hz | density_v_rthz, `points` rows (default 200): √(Σ |H_i|²·S_i), V/√Hz, "
    "uncorrelated contributions (4kTR per resistor at temperature_c; density²·(1 + "
    "corner_hz/f) per noise row). Tone sources are zeroed.",
    call_in_wizard=False,
)
def CKT_NOISE(parts, sources, node, f_start, f_stop, temperature_c, points=None, options=None):
    from ..studies.noise import noise_density
    from ..studies.transfer import log_frequencies

    f = log_frequencies(
        num_arg(f_start, "f_start"), num_arg(f_stop, "f_stop"), _points(points, 200)
    )
    s = noise_density(
        freeze(parts),
        freeze(sources),
        name_arg(node, "node"),
        f,
        num_arg(temperature_c, "temperature_c"),
        freeze(options),
    )
    out: list[list[Any]] = [["freq_hz", "density_v_rthz"]]
    out += [[float(a), float(b)] for a, b in zip(s.freqs_hz, s.density, strict=True)]
    return out


def _noise(parts: Any, sources: Any, node: Any, f_start: Any, f_stop: Any, t: Any, o: Any) -> Any:
    from ..studies.noise import noise_rms

    return noise_rms(
        freeze(parts),
        freeze(sources),
        name_arg(node, "node"),
        num_arg(f_start, "f_start"),
        _stop(f_stop),
        num_arg(t, "temperature_c"),
        freeze(o),
    )


@sheet_function(
    "RMS output noise at a node over a band, V rms: thermal noise of every resistor plus the "
    "sources table's noise rows.",
    "One number, V rms: √∫Σ|H_i|²·S_i df from f_start (0 allowed) to f_stop (`inf` for all "
    "frequencies, integrated exactly to infinity), relative accuracy 1e-9 (adaptive "
    "quadrature, estimated). k = 1.380649e-23 J/K; T = temperature_c + 273.15 K.",
    call_in_wizard=False,
)
def CKT_NOISE_RMS(parts, sources, node, f_start, f_stop, temperature_c, options=None):
    return _noise(parts, sources, node, f_start, f_stop, temperature_c, options).rms_v


@sheet_function(
    "Each noise source's contribution to the RMS output noise over a band, ranked (spills).",
    "Header name | kind | rms_v | share_pct: per resistor (kind R, thermal) and noise row "
    "(kind V or I) its RMS alone over the band and its share of the total noise power, "
    "largest first; last row `total` with the RMS of all (uncorrelated: powers add).",
    call_in_wizard=False,
)
def CKT_NOISE_PARTS(parts, sources, node, f_start, f_stop, temperature_c, options=None):
    r = _noise(parts, sources, node, f_start, f_stop, temperature_c, options)
    out: list[list[Any]] = [["name", "kind", "rms_v", "share_pct"]]
    out += [[c.name, c.kind, c.rms_v, 100.0 * c.share] for c in r.contributions]
    out.append(["total", "", r.rms_v, 100.0])
    return out
