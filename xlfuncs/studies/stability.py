"""Input-filter stability of a regulated switching converter, and damping sizing.

Criterion (R. D. Middlebrook, "Input filter considerations in design and application of
switching regulators", IEEE Industry Applications Society Annual Meeting, 1976): a
converter that regulates its output draws constant power, so its incremental input
resistance is negative, R_N = −V²/P (V its input voltage, P its input power). The input
filter does not disturb the converter's loop when the filter's output impedance (seen by
the converter, supply shorted) stays well below |R_N| at every frequency. The margin is
20·log10(|R_N| / |Z_out(f)|) dB; its smallest value over the band is reached where
|Z_out| peaks, found exactly (see :func:`xlfuncs.studies.resonance.port_extrema`), not
read from a grid. |R_N| is the converter's low-frequency input impedance; above its
control bandwidth the converter's input impedance differs, so a pass here is the usual
first check, not a proof of stability.

Parallel R–C damping (a resistor R_f in series with a blocking capacitor C_b, across the
filter capacitor C): with R0 = √(L/C) and n = C_b/C, the resistance that minimises the
peak output impedance is R_f = R0·√((2 + n)(4 + 3n) / (2n²(4 + n))), and the peak is then
‖Z_out‖ = R0·√(2(2 + n))/n (R. W. Erickson, D. Maksimović, *Fundamentals of Power
Electronics*, 2nd ed., Kluwer 2001, §10.4.1 — formulas from memory of that section; every
design returned here is verified by solving the damped filter with this package's own
solver, and the verified peak is what the margin uses).

> Screening calculation: confirm stability on the real converter (measured input
> impedance, loop gain) and defer to the converter maker.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..solver import build_system, diagnose
from ._network import as_circuit, check_band, rebuild, resolve_port
from .resonance import port_extrema
from .transfer import port_impedance

__all__ = [
    "DampingDesign",
    "FilterMargin",
    "damping_for_margin",
    "input_filter_margin",
    "negative_input_resistance",
    "size_parallel_damping",
]

SOURCE = (
    'R. D. Middlebrook, "Input filter considerations in design and application of '
    'switching regulators", IEEE IAS Annual Meeting, 1976'
)
DAMPING_SOURCE = (
    "R. W. Erickson, D. Maksimović, Fundamentals of Power Electronics, 2nd ed., 2001, "
    "§10.4.1 (from memory; verified by solving the damped filter)"
)
# a computed margin within this of the required one counts as meeting it (rounding)
MARGIN_TOL_DB = 1e-6


def _positive(value: Any, column: str, unit: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError("argument", None, column, value, f"expected a number in {unit}")
    v = float(value)
    if not (math.isfinite(v) and 1e-30 < v < 1e30):
        raise InputError("argument", None, column, value, f"expected a value > 0 {unit}")
    return v


def _margin_arg(margin_db: Any) -> float:
    if isinstance(margin_db, bool) or not isinstance(margin_db, (int, float)):
        raise InputError("argument", None, "margin_db", margin_db, "expected a number of dB")
    m = float(margin_db)
    if not (math.isfinite(m) and 0 <= m <= 60):
        raise InputError("argument", None, "margin_db", margin_db, "expected 0 … 60 dB")
    return m


def negative_input_resistance(v_in: float, p_in: float) -> float:
    """R_N = −V²/P (Ω) of a converter regulating its output (constant input power).

    Examples
    --------
    >>> negative_input_resistance(48.0, 200.0)
    -11.52
    """
    v = _positive(v_in, "v_in", "V")
    p = _positive(p_in, "p_in", "W")
    return -(v * v) / p


@dataclass(frozen=True)
class FilterMargin:
    """Result of the input-filter check.

    Attributes
    ----------
    rn_ohm : float
        |R_N| = V²/P (the converter's input resistance is −rn_ohm).
    zout_peak_ohm, f_worst_hz : float
        The largest |Z_out| over the band and where it occurs (smallest margin).
    margin_db : float
        20·log10(rn_ohm / zout_peak_ohm).
    required_db : float
    passed : bool
        margin_db ≥ required_db (to within 1e-6 dB).
    complete : bool
        False for a network with a resistance law (peak from a refined scan; see note).
    freqs_hz, z_out : numpy.ndarray
        |Z_out| on a log grid (complex), for charts.
    """

    rn_ohm: float
    zout_peak_ohm: float
    f_worst_hz: float
    margin_db: float
    required_db: float
    passed: bool
    complete: bool
    note: str
    freqs_hz: np.ndarray
    z_out: np.ndarray

    @property
    def margin_curve_db(self) -> np.ndarray:
        """20·log10(|R_N| / |Z_out(f)|) on the grid."""
        return 20 * np.log10(self.rn_ohm / np.abs(self.z_out))

    def table(self) -> list[list[Any]]:
        """``item | value | unit`` rows, as the worksheet function spills them."""
        return [
            ["item", "value", "unit"],
            ["rn_ohm", self.rn_ohm, "Ω (converter input resistance −V²/P, magnitude)"],
            ["zout_peak_ohm", self.zout_peak_ohm, "Ω (largest filter output impedance)"],
            ["f_worst_hz", self.f_worst_hz, "Hz (smallest margin)"],
            ["margin_db", self.margin_db, "dB = 20·log10(|R_N| / |Z_out|) at f_worst"],
            ["required_db", self.required_db, "dB"],
            ["verdict", "PASS" if self.passed else "FAIL", "criterion of " + SOURCE],
            *([["note", self.note, ""]] if self.note else []),
        ]


def _peak(
    system: Any, plus: int, minus: int, label: str, lo: float, hi: float
) -> tuple[float, float, bool, str]:
    """Largest |Z| at a port over [lo, hi] Hz and where: ``(|Z|, f, complete, note)``."""
    rows, complete, note = port_extrema(system, plus, minus, label, lo, hi)
    f_ends = np.array([lo, hi])
    from .resonance import _z_and_slope

    z_ends = np.abs(_z_and_slope(system, plus, minus, f_ends)[0])
    cands = [(float(z_ends[0]), lo), (float(z_ends[1]), hi)]
    cands += [(zmag, f) for kind, f, zmag, _nat in rows if kind == "parallel"]
    zmax, f_at = max(cands)
    return zmax, f_at, complete, note


def input_filter_margin(
    parts: Any,
    port: Any,
    v_in: float,
    p_in: float,
    f_start: float,
    f_stop: float,
    margin_db: float = 6.0,
    points: int = 200,
    options: Any = None,
    sources: Any = None,
    load: str | None = None,
) -> FilterMargin:
    """Middlebrook's input-filter criterion at the converter's port.

    Parameters
    ----------
    parts, options, sources :
        The input filter (and supply impedance) as tables, or a :class:`Circuit`. Every
        independent source is zeroed (a supply given as a voltage source shorts).
    port :
        Where the converter connects: a node (against the reference) or ``(from, to)``.
    v_in, p_in :
        The converter's input voltage (V) and input power (W).
    margin_db :
        Required margin, dB (6 dB = |Z_out| at most half of |R_N|: common practice).
    load :
        A part across the port that models the converter, taken out before the check.

    Examples
    --------
    An undamped-but-lossy LC filter (10 µH with 20 mΩ, 100 µF) feeding a 48 V, 200 W
    converter: |R_N| = 11.52 Ω, the filter's peak ≈ R0²/R_series = 0.1/0.02 = 5 Ω near
    f0 = 1/(2π√(LC)) ≈ 5.03 kHz, a margin of ≈ 7.2 dB.

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["Rs", "R", "in", "a", 0.02], ["L", "L", "a", "out", 10e-6],
    ...          ["C", "C", "out", "GND", 100e-6]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["Vbus", "V", "in", "GND", 0, 48.0]]
    >>> m = input_filter_margin(parts, "out", 48, 200, 10, 1e6, sources=sources)
    >>> round(m.rn_ohm, 6), round(m.f_worst_hz), round(m.margin_db, 2), m.passed
    (11.52, 5033, 7.23, True)
    """
    circuit = as_circuit(parts, sources, options)
    lo, hi = check_band(f_start, f_stop)
    rn = abs(negative_input_resistance(v_in, p_in))
    req = _margin_arg(margin_db)
    if load is not None:
        circuit = rebuild(circuit, [str(load)])
    plus, minus, label = resolve_port(circuit, port, "port")
    diagnose(circuit, dc=False)
    system = build_system(circuit)
    zmax, f_at, complete, note = _peak(system, plus, minus, f"port {label}", lo, hi)
    grid = np.geomspace(lo, hi, int(points))
    _f, z = port_impedance(circuit, *_port_nodes(circuit, plus, minus), grid)
    margin = 20 * math.log10(rn / zmax)
    if f_at in (lo, hi):
        edge = (
            f"the largest |Z_out| lies at the band edge ({f_at:g} Hz): widen the band to see "
            "whether it rises beyond"
        )
        note = f"{note}; {edge}" if note else edge
    return FilterMargin(
        rn, zmax, f_at, margin, req, margin >= req - MARGIN_TOL_DB, complete, note, grid, z
    )


def _port_nodes(circuit: Any, plus: int, minus: int) -> tuple[str, str]:
    def name(i: int) -> str:
        return str(circuit.nodes[i]) if i >= 0 else str(circuit.ground)

    return name(plus), name(minus)


@dataclass(frozen=True)
class DampingDesign:
    """A parallel R_f–C_b damping leg across the filter capacitor.

    Attributes
    ----------
    r0_ohm : float
        √(L/C).
    target_peak_ohm : float
        The peak |Z_out| the design aims at.
    n, cb_f, rf_ohm : float
        C_b/C, C_b and the optimum R_f (formulas of the module text).
    peak_formula_ohm : float
        R0·√(2(2 + n))/n.
    peak_solved_ohm, f_peak_hz : float
        The peak of the damped ideal filter (L series, C shunt, supply shorted) solved by
        this package, and its frequency.
    margin_db, required_db, passed :
        Filled by :func:`damping_for_margin` (margin from the solved peak).
    """

    l_h: float
    c_f: float
    r0_ohm: float
    target_peak_ohm: float
    n: float
    cb_f: float
    rf_ohm: float
    peak_formula_ohm: float
    peak_solved_ohm: float
    f_peak_hz: float
    margin_db: float | None = None
    required_db: float | None = None
    passed: bool | None = None

    def table(self) -> list[list[Any]]:
        """``item | value | unit`` rows, as the worksheet function spills them."""
        rows: list[list[Any]] = [
            ["item", "value", "unit"],
            ["r0_ohm", self.r0_ohm, "Ω = √(L/C)"],
            ["target_peak_ohm", self.target_peak_ohm, "Ω (peak |Z_out| aimed at)"],
            ["n", self.n, "C_b / C"],
            ["cb_f", self.cb_f, "F (blocking capacitor)"],
            ["rf_ohm", self.rf_ohm, "Ω (damping resistor, optimum for n)"],
            ["peak_formula_ohm", self.peak_formula_ohm, "Ω = R0·√(2(2+n))/n"],
            ["peak_solved_ohm", self.peak_solved_ohm, "Ω (damped filter solved by xlfuncs)"],
            ["f_peak_hz", self.f_peak_hz, "Hz"],
        ]
        if self.margin_db is not None:
            rows += [
                ["margin_db", self.margin_db, "dB (from the solved peak)"],
                ["required_db", self.required_db, "dB"],
                ["verdict", "PASS" if self.passed else "FAIL", "criterion of " + SOURCE],
            ]
        rows.append(["source", DAMPING_SOURCE, ""])
        return rows


def _damped_filter(l_h: float, c_f: float, cb: float, rf: float) -> list[list[Any]]:
    return [
        ["name", "kind", "from", "to", "value"],
        ["L", "L", "out", "GND", l_h],  # the supply side of L is shorted
        ["C", "C", "out", "GND", c_f],
        ["Rf", "R", "out", "x", rf],
        ["Cb", "C", "x", "GND", cb],
    ]


def size_parallel_damping(l_h: float, c_f: float, target_peak_ohm: float) -> DampingDesign:
    """R_f–C_b damping so that the ideal LC filter's peak output impedance equals
    ``target_peak_ohm`` (solving R0·√(2(2 + n))/n = target for n; see the module text),
    verified by solving the damped filter.

    Examples
    --------
    L = 10 µH, C = 100 µF (R0 = 0.316 Ω), aiming at a 1 Ω peak: n = (1 + √41)/10,
    and the solved peak meets the target:

    >>> d = size_parallel_damping(10e-6, 100e-6, 1.0)
    >>> round(d.n, 6), round(d.rf_ohm, 6), round(d.peak_solved_ohm, 9)
    (0.740312, 0.572789, 1.0)
    """
    lh = _positive(l_h, "l_h", "H")
    cf = _positive(c_f, "c_f", "F")
    target = _positive(target_peak_ohm, "target_peak_ohm", "Ω")
    r0 = math.sqrt(lh / cf)
    r = target / r0
    n = (1 + math.sqrt(1 + 4 * r * r)) / (r * r)
    rf = r0 * math.sqrt((2 + n) * (4 + 3 * n) / (2 * n * n * (4 + n)))
    peak_formula = r0 * math.sqrt(2 * (2 + n)) / n
    f0 = 1 / (2 * math.pi * math.sqrt(lh * cf))
    circuit = as_circuit(_damped_filter(lh, cf, n * cf, rf))
    system = build_system(circuit)
    out = circuit.nodes.index("out")
    zpk, fpk, _c, _n = _peak(system, out, -1, "the damped filter", f0 / 1e3, f0 * 1e3)
    return DampingDesign(lh, cf, r0, target, n, n * cf, rf, peak_formula, zpk, fpk)


def damping_for_margin(
    l_h: float, c_f: float, v_in: float, p_in: float, margin_db: float = 6.0
) -> DampingDesign:
    """Size R_f–C_b damping that restores ``margin_db`` against |R_N| = V²/P for an ideal
    LC input filter (target peak = |R_N|·10^(−margin/20)); the margin reported is the one
    of the solved peak.

    Examples
    --------
    >>> d = damping_for_margin(10e-6, 100e-6, 12.0, 100.0, 6.0)
    >>> round(d.margin_db, 6), d.passed
    (6.0, True)
    """
    rn = abs(negative_input_resistance(v_in, p_in))
    req = _margin_arg(margin_db)
    d = size_parallel_damping(l_h, c_f, rn * 10 ** (-req / 20))
    margin = 20 * math.log10(rn / d.peak_solved_ohm)
    return DampingDesign(
        d.l_h,
        d.c_f,
        d.r0_ohm,
        d.target_peak_ohm,
        d.n,
        d.cb_f,
        d.rf_ohm,
        d.peak_formula_ohm,
        d.peak_solved_ohm,
        d.f_peak_hz,
        margin,
        req,
        margin >= req - MARGIN_TOL_DB,
    )
