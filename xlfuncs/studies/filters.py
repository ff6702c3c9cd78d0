"""Passive harmonic filters: sizing, tuning drift, resonance with the supply, rating, and
the capacitor step that keeps the parallel resonance clear of the injected orders.

Basis. ``phases = 1``: single-phase values. ``phases = 3``: a three-phase filter given by
its three-phase kvar, the line-to-line bus voltage and the three-phase short-circuit
power; it is computed per phase of its star (wye) equivalent, so C, L and R are per phase
of a star-connected filter (a delta-connected capacitor has C_Δ = C_Y/3), currents are line
currents, and capacitor voltages and kvar are reported line-to-line and three-phase.

Filters (per phase, h_n the tuned order, ω₁ = 2πf₁):

* single-tuned: R, L and C in series; X_L = X_C/h_n²; quality factor Q = X_n/R with
  X_n = √(L/C) = h_n·X_L the reactance of L (and of C) at the tuned frequency;
* second-order high-pass (damped): C in series with L ∥ R; corner order h_n where
  X_L(h) = X_C(h); quality factor Q = R/X_n;
* plain capacitor (no reactor), for the step search.

The quality-factor definitions are the usual textbook ones (e.g. J. Arrillaga and
N. R. Watson, *Power System Harmonics*, 2nd ed., Wiley 2003, chapter on passive filters —
from memory); typical values, also from memory: Q ≈ 20…100 for single-tuned filters,
0.5…2 for damped high-pass filters.

Sizing is exact at the fundamental, R included: ``kvar`` is the reactive power the filter
delivers at ``bus_v`` and f₁, so X_C = V²·Im(1/z₀)/Q_kvar with z₀ the filter impedance at f₁
in units of X_C (lossless single-tuned: X_C = (V²/Q_kvar)·h_n²/(h_n² − 1)). Capacitor
fundamental voltage V_C1 = I₁·X_C (the voltage rise h²/(h² − 1) of a detuned bank).

Tuning drift: the tuned order is h_n/√(c·l) for capacitance and inductance factors c, l;
capacitor tolerance and temperature (coefficient × excursion) and reactor tolerance give
the range of c and l. A capacitor losing capacitance (ageing, blown internal fuses) moves
the tuning **up**, toward the harmonic the filter serves.

Resonance with the supply: the supply is R_s + jX_s per phase with |Z_s| = V²/S_sc (the
definition of the short-circuit power) split by X/R at f₁, X_s = |Z_s|·(X/R)/√(1 + (X/R)²),
R_s = X_s/(X/R) constant with frequency; the impedance seen at the bus with the filter
connected is found by the core solver (:func:`xlfuncs.studies.find_resonances`: scan,
natural-frequency seeds and refinement to 1e-7). Lossless check value:
h_p = √(X_C/(X_s + X_L)) (common practice; √(S_sc/Q_cap) without a reactor).

Rating: the capacitor's duty against the IEEE Std 18 continuous limits is computed by
:func:`xlfuncs.studies.capacitor_duty` from the fundamental current of the sizing and the
harmonic currents the filter absorbs; the reactor's RMS and peak current and voltage and
the loss in R are reported without limits (the reactor maker's rating applies).

Screening calculations: the capacitor and reactor makers, the utility and a licensed
engineer decide.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, TableError
from ..units import MAX_MAGNITUDE
from .capacitor import capacitor_duty
from .transformer import MAX_ORDER, study_item

__all__ = [
    "CapacitorStep",
    "FilterDesign",
    "FilterRating",
    "SupplyResonance",
    "TuningDrift",
    "capacitor_bank",
    "capacitor_steps",
    "filter_rating",
    "filter_resonance",
    "highpass_filter",
    "item_filter_rating",
    "read_order_amps",
    "tuned_filter",
    "tuning_drift",
]

_KINDS = {
    "single-tuned": "single-tuned filter (R, L, C in series)",
    "high-pass": "second-order high-pass filter (C in series with L parallel R)",
    "capacitor": "capacitor without reactor",
}


def _qvu(rows: Iterable[tuple[str, Any, str]]) -> list[list[Any]]:
    """A ``quantity | value | unit`` table from (quantity, value, unit) triples."""
    return [["quantity", "value", "unit"], *(list(r) for r in rows)]


def _num(value: Any, name: str, what: str, *, low: float = 0.0, strict: bool = True) -> float:
    ok = (
        not isinstance(value, bool)
        and isinstance(value, (int, float, np.floating, np.integer))
        and math.isfinite(float(value))
        and (float(value) > low if strict else float(value) >= low)
    )
    if not ok:
        raise InputError("argument", None, name, value, f"expected {what}")
    return float(value)


def _phases(value: Any) -> int:
    if isinstance(value, bool) or value not in (1, 3, 1.0, 3.0):
        raise InputError(
            "argument",
            None,
            "phases",
            value,
            "expected 1 (single-phase values) or 3 (three-phase kvar, line-to-line volts)",
        )
    return int(value)


@dataclass(frozen=True)
class FilterDesign:
    """A sized filter. Reactances, C, L and R are per phase (star equivalent); ``kvar``,
    ``bus_v`` and the reported voltages and powers are on the caller's basis."""

    kind: str
    phases: int
    fundamental_hz: float
    bus_v: float
    kvar: float
    tuned_order: float | None
    q_factor: float | None
    x_c_ohm: float
    x_l_ohm: float
    r_ohm: float

    # --------------------------------------------------------------- derived values
    @property
    def v_phase(self) -> float:
        return self.bus_v / math.sqrt(3) if self.phases == 3 else self.bus_v

    @property
    def line_factor(self) -> float:
        """Phase voltage → reported voltage (√3 for three-phase line-to-line)."""
        return math.sqrt(3) if self.phases == 3 else 1.0

    @property
    def c_farad(self) -> float:
        return 1 / (2 * math.pi * self.fundamental_hz * self.x_c_ohm)

    @property
    def l_henry(self) -> float:
        return self.x_l_ohm / (2 * math.pi * self.fundamental_hz)

    @property
    def x_n_ohm(self) -> float:
        """Characteristic reactance √(L/C) (0 without a reactor)."""
        return math.sqrt(self.x_l_ohm * self.x_c_ohm)

    def impedance(self, freqs_hz: Any) -> np.ndarray:
        """Per-phase impedance at ``freqs_hz`` (> 0), Ω."""
        f = np.asarray(freqs_hz, dtype=float)
        h = f / self.fundamental_hz
        zc = -1j * self.x_c_ohm / h
        zl = 1j * self.x_l_ohm * h
        if self.kind == "single-tuned":
            return self.r_ohm + zl + zc
        if self.kind == "high-pass":
            return zc + self.r_ohm * zl / (self.r_ohm + zl)
        return zc

    @property
    def i1_a(self) -> float:
        """Fundamental current at ``bus_v`` (line current), A."""
        return float(self.v_phase / abs(self.impedance(self.fundamental_hz)))

    @property
    def v_c1(self) -> float:
        """Capacitor fundamental voltage (line-to-line for three-phase), V."""
        return self.i1_a * self.x_c_ohm * self.line_factor

    @property
    def kvar_cap1(self) -> float:
        """Reactive power of the capacitor alone at the fundamental, kvar (all phases)."""
        return self.phases * self.i1_a**2 * self.x_c_ohm / 1e3

    @property
    def kvar_delivered(self) -> float:
        """Reactive power the filter delivers at bus_v and f₁, kvar (equals ``kvar``)."""
        y = 1 / self.impedance(self.fundamental_hz)
        return float(self.phases * self.v_phase**2 * y.imag / 1e3)

    @property
    def p1_w(self) -> float:
        """Active power absorbed by R at the fundamental, W (all phases)."""
        y = 1 / self.impedance(self.fundamental_hz)
        return float(self.phases * self.v_phase**2 * y.real)

    def parts_rows(self, node: str = "bus", ground: str = "GND", prefix: str = "F") -> list[list]:
        """The filter as rows of a parts table (no header): one phase, star equivalent."""
        n1, n2 = f"{prefix}_n1", f"{prefix}_n2"
        if self.kind == "single-tuned":
            return [
                [f"{prefix}_R", "R", node, n1, self.r_ohm],
                [f"{prefix}_L", "L", n1, n2, self.l_henry],
                [f"{prefix}_C", "C", n2, ground, self.c_farad],
            ]
        if self.kind == "high-pass":
            return [
                [f"{prefix}_C", "C", node, n1, self.c_farad],
                [f"{prefix}_L", "L", n1, ground, self.l_henry],
                [f"{prefix}_R", "R", n1, ground, self.r_ohm],
            ]
        return [[f"{prefix}_C", "C", node, ground, self.c_farad]]

    @property
    def basis(self) -> str:
        if self.phases == 3:
            return (
                "three-phase: kvar total, volts line-to-line, line currents; C, L, R per phase "
                "of the star equivalent"
            )
        return "single-phase values"

    def rows(self) -> list[list[Any]]:
        """``quantity | value | unit`` table of the design."""
        h = self.tuned_order
        q_unit = "X_n/R" if self.kind == "single-tuned" else "R/X_n"
        tuning = (
            ()
            if h is None
            else (
                ("tuned_order", h, "h"),
                ("tuned_hz", h * self.fundamental_hz, "Hz"),
                ("q_factor", self.q_factor, q_unit),
            )
        )
        return _qvu(
            (
                *tuning,
                ("x_c_ohm", self.x_c_ohm, "Ω at f1"),
                ("x_l_ohm", self.x_l_ohm, "Ω at f1"),
                ("r_ohm", self.r_ohm, "Ω"),
                ("x_n_ohm", self.x_n_ohm, "Ω, √(L/C)"),
                ("c_farad", self.c_farad, "F"),
                ("l_henry", self.l_henry, "H"),
                ("i1_a", self.i1_a, "A rms"),
                ("v_c1", self.v_c1, "V rms"),
                ("voltage_rise", self.v_c1 / self.bus_v, "V_C1/V"),
                ("kvar_cap1", self.kvar_cap1, "kvar"),
                ("kvar_delivered", self.kvar_delivered, "kvar"),
                ("p1_loss_w", self.p1_w, "W"),
                ("basis", f"{_KINDS[self.kind]}; {self.basis}", ""),
            )
        )


def _size(
    kind: str,
    kvar: Any,
    bus_v: Any,
    fundamental_hz: Any,
    tuned_order: Any,
    q_factor: Any,
    phases: Any,
) -> FilterDesign:
    q_kvar = _num(kvar, "kvar", "the filter's kvar at the fundamental > 0")
    v = _num(bus_v, "bus_v", "the bus voltage > 0 V")
    f1 = _num(fundamental_hz, "fundamental_hz", "a fundamental frequency > 0 Hz")
    ph = _phases(phases)
    v_ph = v / math.sqrt(3) if ph == 3 else v
    q_ph = q_kvar * 1e3 / ph
    if kind == "capacitor":
        x_c = v_ph**2 / q_ph
        return FilterDesign(kind, ph, f1, v, q_kvar, None, None, x_c, 0.0, 0.0)
    h = _num(tuned_order, "tuned_order", "a tuned order > 1 (e.g. 4.7)", low=1.0)
    q = _num(q_factor, "q_factor", "a quality factor > 0")
    if kind == "single-tuned":
        z0 = 1 / (h * q) + 1j * (1 / h**2 - 1)  # impedance at f1 in units of X_C
        r_per_xc = 1 / (h * q)
    else:
        rp, xl = q / h, 1 / h**2  # R and X_L at f1 in units of X_C
        z0 = -1j + rp * 1j * xl / (rp + 1j * xl)
        r_per_xc = rp
    b = (1 / z0).imag
    if not b > 0:  # pragma: no cover - h > 1 keeps both kinds capacitive at f1
        raise InputError("argument", None, "tuned_order", tuned_order, "filter not capacitive")
    x_c = v_ph**2 * b / q_ph
    return FilterDesign(kind, ph, f1, v, q_kvar, h, q, x_c, x_c / h**2, r_per_xc * x_c)


Sizer = Callable[[float, float, float, float, float, int], FilterDesign]


def _sizer(kind: str, name: str, doc: str) -> Sizer:
    """The public sizing function of one filter kind (one signature for every kind)."""

    def size(kvar, bus_v, fundamental_hz, tuned_order, q_factor, phases):
        return _size(kind, kvar, bus_v, fundamental_hz, tuned_order, q_factor, phases)

    size.__name__ = size.__qualname__ = name
    size.__doc__ = doc
    return size


tuned_filter = _sizer(
    "single-tuned",
    "tuned_filter",
    """Size a single-tuned filter delivering ``kvar`` at ``bus_v`` and f₁:
    ``tuned_filter(kvar, bus_v, fundamental_hz, tuned_order, q_factor, phases)``.

    Examples
    --------
    The published detuned-reactor example (80 kvar capacitor at 525 V, 50 Hz, p = 7 %:
    X_C = 3.445 Ω, L = 0.768 mH, 189 Hz) as a filter on a 525 V bus: a lossless filter
    with p = 7 % delivers Q_C/(1 − p) = 86.02 kvar.

    >>> d = tuned_filter(80 / 0.93, 525, 50, 0.07 ** -0.5, 1e9, 1)
    >>> round(d.x_c_ohm, 3), round(d.l_henry * 1e3, 3), round(d.tuned_order * 50)
    (3.445, 0.768, 189)
    """,
)
highpass_filter = _sizer(
    "high-pass",
    "highpass_filter",
    """Size a second-order high-pass (damped) filter: C in series with L ∥ R, corner at
    ``tuned_order`` (X_L = X_C there), Q = R/√(L/C); arguments as :func:`tuned_filter`.""",
)


def capacitor_bank(kvar: float, bus_v: float, fundamental_hz: float, phases: int) -> FilterDesign:
    """A plain capacitor of ``kvar`` at ``bus_v`` (X_C = V²/Q)."""
    return _size("capacitor", kvar, bus_v, fundamental_hz, None, None, phases)


# ------------------------------------------------------------------------------ drift
@dataclass(frozen=True)
class TuningDrift:
    """Range of the tuned order over capacitance factors c_low…c_high and inductance
    factors l_low…l_high."""

    nominal: float
    low: float
    high: float
    c_low: float
    c_high: float
    l_low: float
    l_high: float
    fundamental_hz: float

    def rows(self) -> list[list[Any]]:
        ends = (
            ("nominal", self.nominal, "h"),
            ("low", self.low, "h (largest C and L)"),
            ("high", self.high, "h (smallest C and L)"),
        )
        return _qvu(
            (
                *((f"order_{end}", h, unit) for end, h, unit in ends),
                *((f"hz_{end}", h * self.fundamental_hz, "Hz") for end, h, _u in ends),
                ("c_factor_low", self.c_low, "C/C_nominal"),
                ("c_factor_high", self.c_high, "C/C_nominal"),
                ("l_factor_low", self.l_low, "L/L_nominal"),
                ("l_factor_high", self.l_high, "L/L_nominal"),
            )
        )


def tuning_drift(
    tuned_order: float,
    fundamental_hz: float,
    c_tol_minus: float,
    c_tol_plus: float,
    l_tol: float,
    c_tempco_ppm: float = 0.0,
    dt_k: float = 0.0,
) -> TuningDrift:
    """Tuned order h_n/√(c·l) at the extremes of capacitance and inductance.

    ``c_tol_minus``/``c_tol_plus`` are the capacitance tolerance below/above nominal
    (fractions ≥ 0, e.g. 0 and 0.10), ``l_tol`` the reactor's ± tolerance;
    the temperature adds ±|c_tempco_ppm|·1e-6·dt_k to the capacitance factor
    (``dt_k``: the ± excursion from the temperature at which C is rated, K).
    """
    h = _num(tuned_order, "tuned_order", "a tuned order > 1", low=1.0)
    f1 = _num(fundamental_hz, "fundamental_hz", "a fundamental frequency > 0 Hz")
    cm = _num(c_tol_minus, "c_tol_minus", "a fraction 0 ≤ tol < 1", strict=False)
    cp = _num(c_tol_plus, "c_tol_plus", "a fraction 0 ≤ tol < 1", strict=False)
    lt = _num(l_tol, "l_tol", "a fraction 0 ≤ tol < 1", strict=False)
    tc = c_tempco_ppm
    if isinstance(tc, bool) or not isinstance(tc, (int, float)) or not math.isfinite(tc):
        raise InputError("argument", None, "c_tempco_ppm", tc, "expected a number (ppm/K)")
    dt = _num(dt_k, "dt_k", "a temperature excursion ≥ 0 K", strict=False)
    temp = abs(tc) * 1e-6 * dt
    for name, value, frac in (
        ("c_tol_minus", c_tol_minus, cm),
        ("c_tol_plus", c_tol_plus, cp),  # +100 % or more is a percentage typed as a fraction
        ("l_tol", l_tol, lt),
        ("c_tempco_ppm", c_tempco_ppm, temp),
    ):
        if frac >= 1:
            raise InputError(
                "argument",
                None,
                name,
                value,
                "deviations must stay below 1 (100 %) of nominal; a fraction: 10 % is 0.10",
            )
    c_lo, c_hi = (1 - cm) * (1 - temp), (1 + cp) * (1 + temp)
    l_lo, l_hi = 1 - lt, 1 + lt
    return TuningDrift(
        h, h / math.sqrt(c_hi * l_hi), h / math.sqrt(c_lo * l_lo), c_lo, c_hi, l_lo, l_hi, f1
    )


# -------------------------------------------------------------------------- resonance
@dataclass(frozen=True)
class SupplyResonance:
    """The parallel resonance of a filter (or capacitor) with the supply, seen at the bus."""

    order: float
    freq_hz: float
    z_ohm: float
    order_lossless: float
    x_s_ohm: float
    r_s_ohm: float

    def rows(self) -> list[list[Any]]:
        return _qvu(
            (
                ("parallel_order", self.order, "h"),
                ("parallel_hz", self.freq_hz, "Hz"),
                ("z_ohm", self.z_ohm, "Ω per phase, |Z| at the resonance"),
                ("order_lossless", self.order_lossless, "h, √(X_C/(X_s+X_L))"),
                ("x_s_ohm", self.x_s_ohm, "Ω per phase at f1"),
                ("r_s_ohm", self.r_s_ohm, "Ω per phase"),
            )
        )


def _supply(design: FilterDesign, ssc_mva: Any, xr_ratio: Any) -> tuple[float, float]:
    s = _num(ssc_mva, "ssc_mva", "the short-circuit power at the bus > 0 MVA")
    xr = _num(xr_ratio, "xr_ratio", "the supply X/R ratio at the fundamental > 0")
    z_s = design.bus_v**2 / (s * 1e6)  # |Z_s| per phase on either basis
    x_s = z_s * xr / math.sqrt(1 + xr * xr)
    return x_s, x_s / xr


def _parallel_resonances(
    design: FilterDesign, ssc_mva: Any, xr_ratio: Any
) -> tuple[list[Any], float, float, float]:
    """The parallel resonances of ``design`` with the supply by the core solver, the
    supply's X_s and R_s per phase and the lossless estimate √(X_C/(X_s + X_L)); refuses
    a network too heavily damped to show a |Z| maximum."""
    from .resonance import find_resonances

    x_s, r_s = _supply(design, ssc_mva, xr_ratio)
    f1 = design.fundamental_hz
    w = 2 * math.pi * f1
    parts = [
        ["name", "kind", "from", "to", "value"],
        ["Supply_R", "R", "bus", "supply", r_s],
        ["Supply_L", "L", "supply", "GND", x_s / w],
        *design.parts_rows("bus", "GND"),
    ]
    est = math.sqrt(design.x_c_ohm / (x_s + design.x_l_ohm))
    res = find_resonances(parts, "bus", f1 * est / 4, f1 * est * 4, points=160, fundamental_hz=f1)
    par = [r for r in res if r.kind == "parallel"]
    if not par:
        raise InputError(
            "argument",
            None,
            "ssc_mva",
            ssc_mva,
            f"no parallel resonance near order {est:.3g} for {design.kvar:g} kvar (the network "
            "is too heavily damped to show a |Z| maximum)",
        )
    return par, x_s, r_s, est


def filter_resonance(design: FilterDesign, ssc_mva: float, xr_ratio: float) -> SupplyResonance:
    """Parallel resonance of ``design`` with a supply of ``ssc_mva`` (three-phase MVA for
    a three-phase design) and X/R ``xr_ratio``, by the core solver."""
    par, x_s, r_s, est = _parallel_resonances(design, ssc_mva, xr_ratio)
    best = max(par, key=lambda r: r.z_ohm)
    return SupplyResonance(best.order, best.freq_hz, best.z_ohm, est, x_s, r_s)


# ----------------------------------------------------------------------------- rating
def _blank(v: Any) -> bool:
    return v is None or (isinstance(v, str) and not v.strip())


def read_order_amps(data: Any, table: str = "harmonics") -> tuple[list[float], list[float]]:
    """A range ``order | amps`` with its header row (row 1) → (orders, RMS amps).

    Orders > 1 and distinct (the fundamental follows from the sizing); blank rows skipped.
    """
    if not isinstance(data, (list, tuple)) or not data:
        raise TableError(table, "expected a range order | amps with its header row")
    head = [str(c).strip().lower() if c is not None else "" for c in data[0]]
    try:
        ko, ka = head.index("order"), head.index("amps")
    except ValueError:
        raise TableError(
            table, f"header row 1 must name the columns order | amps (found {list(data[0])!r})"
        ) from None
    orders: list[float] = []
    amps: list[float] = []
    for k, row in enumerate(data[1:], start=2):
        h = row[ko] if ko < len(row) else None
        a = row[ka] if ka < len(row) else None
        if _blank(h) and _blank(a):
            continue
        for col, v in (("order", h), ("amps", a)):
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise InputError(table, k, col, v, "expected a number")
        assert isinstance(h, (int, float)) and isinstance(a, (int, float))
        if h <= 1:
            raise InputError(
                table,
                k,
                "order",
                h,
                "expected a harmonic order > 1 (the fundamental follows from the sizing)",
            )
        if a < 0:
            raise InputError(table, k, "amps", a, "expected a current ≥ 0 A rms")
        if a > MAX_MAGNITUDE or h > MAX_ORDER:
            col, v = ("amps", a) if a > MAX_MAGNITUDE else ("order", h)
            raise InputError(
                table, k, col, v,
                f"expected at most {MAX_MAGNITUDE:g} A and order {MAX_ORDER:,} (the tables' range)",
            )  # fmt: skip
        if any(abs(h - o) <= 1e-9 for o in orders):
            raise InputError(table, k, "order", h, "this order is given twice")
        orders.append(float(h))
        amps.append(float(a))
    return orders, amps


@dataclass(frozen=True)
class FilterRating:
    """Capacitor duty (IEEE Std 18) and reactor duty of a filter."""

    capacitor_rows: tuple[tuple[str, float, float, float, float, bool], ...]
    capacitor_passed: bool
    reactor_rms_a: float
    reactor_peak_a: float
    reactor_i1_a: float
    reactor_rms_v: float
    loss_w: float
    design: FilterDesign
    basis: str

    def rows(self) -> list[list[Any]]:
        """``quantity | value | rated | ratio | limit | result``."""
        out: list[list[Any]] = [["quantity", "value", "rated", "ratio", "limit", "result"]]
        for name, v, r, ratio, lim, ok in self.capacitor_rows:
            out.append([f"capacitor {name}", v, r, ratio, lim, "PASS" if ok else "FAIL"])
        out.append(
            ["capacitor verdict", "", "", "", "", "PASS" if self.capacitor_passed else "FAIL"]
        )
        out += [
            ["reactor rms current", self.reactor_rms_a, "", "", "", "A rms"],
            ["reactor peak current", self.reactor_peak_a, "", "", "", "A (sum of tone peaks)"],
            ["reactor fundamental current", self.reactor_i1_a, "", "", "", "A rms"],
            ["reactor rms voltage", self.reactor_rms_v, "", "", "", "V rms"],
            ["losses in R", self.loss_w, "", "", "", "W (R constant with frequency)"],
        ]
        out.append(["basis", self.basis, "", "", "", ""])
        return out


_IEEE18 = "capacitor limits IEEE Std 18 (1.10 V rms, 1.20 V peak, 1.35 I rms, 1.35 kvar)"
_MAKERS = (
    "reactor values against the maker's rating. Screening calculation: the makers and a "
    "licensed engineer decide."
)


def _rated(
    design: FilterDesign,
    duty: Any,
    scale: dict[str, float],
    hh: np.ndarray,
    i_l: np.ndarray,
    loss_w: float,
    basis: str,
) -> FilterRating:
    """A rating from a capacitor duty (its rows scaled to the reported basis) and the
    reactor's RMS current per tone ``i_l`` at orders ``hh`` (the first the fundamental)."""
    a_l = np.abs(i_l)
    return FilterRating(
        capacitor_rows=tuple(
            (n, v * scale[n], r * scale[n], ratio, lim, ok)
            for n, v, r, ratio, lim, ok in duty.rows
        ),
        capacitor_passed=duty.passed,
        reactor_rms_a=float(np.sqrt(np.sum(a_l**2))),
        reactor_peak_a=float(math.sqrt(2) * np.sum(a_l)),
        reactor_i1_a=float(a_l[0]),
        reactor_rms_v=float(np.sqrt(np.sum((a_l * design.x_l_ohm * hh) ** 2)) * scale["volts"]),
        loss_w=loss_w,
        design=design,
        basis=basis,
    )


def filter_rating(
    design: FilterDesign,
    orders: Any,
    amps_rms: Any,
    cap_kvar: float,
    cap_v: float,
) -> FilterRating:
    """Rate the filter's capacitor (IEEE Std 18) and reactor.

    Parameters
    ----------
    design : FilterDesign
        From :func:`tuned_filter` or :func:`highpass_filter` (its fundamental current at
        ``bus_v`` is taken from the sizing: size it at the highest operating voltage for a
        rating).
    orders, amps_rms : arrays
        Harmonic orders (> 1, distinct) and the RMS (line) currents the filter absorbs at
        each, A — total filter currents, including what the bus harmonic voltage drives.
    cap_kvar, cap_v : float
        The capacitor's nameplate rating on the design's basis (three-phase kvar and
        line-to-line volts for ``phases = 3``).
    """
    if design.kind == "capacitor":
        raise InputError("argument", None, "design", design.kind, "expected a filter")
    h = np.asarray(orders, dtype=float).reshape(-1)
    i = np.asarray(amps_rms, dtype=float).reshape(-1)
    if h.size != i.size:
        raise InputError(
            "argument", None, "harmonics", (h.size, i.size), "expected one current per order"
        )
    if not (np.all(np.isfinite(h)) and np.all(np.isfinite(i))) or np.any(h <= 1) or np.any(i < 0):
        raise InputError(
            "argument", None, "harmonics", None, "expected orders > 1 and currents ≥ 0 A"
        )
    if np.unique(np.round(h, 9)).size != h.size:
        raise InputError("argument", None, "harmonics", None, "an order is given twice")
    kv = _num(cap_kvar, "cap_kvar", "the capacitor's rated kvar > 0")
    cv = _num(cap_v, "cap_v", "the capacitor's rated voltage > 0 V")
    f1 = design.fundamental_hz
    hh = np.concatenate([[1.0], h])
    i_all = np.concatenate([[design.i1_a], i])  # branch (= capacitor) current per tone
    v_cap = i_all * design.x_c_ohm / hh  # per phase
    lf = design.line_factor
    duty = capacitor_duty(hh * f1, v_cap, i_all, kv / design.phases, cv / lf)
    scale = {"rms voltage": lf, "peak voltage": lf, "rms current": 1.0, "kvar": design.phases}
    zl = 1j * design.x_l_ohm * hh
    if design.kind == "single-tuned":
        i_l = i_r = i_all.astype(complex)
    else:  # high-pass: L ∥ R share the branch current
        i_l = i_all * design.r_ohm / (design.r_ohm + zl)
        i_r = i_all * zl / (design.r_ohm + zl)
    loss = float(design.phases * np.sum(np.abs(i_r) ** 2) * design.r_ohm)
    basis = f"{_IEEE18}; {design.basis}; {_MAKERS}"
    return _rated(design, duty, scale | {"volts": lf}, hh, i_l, loss, basis)


def item_filter_rating(study: Any, item: str) -> FilterRating:
    """Rate a filter item of a three-phase harmonic study (:func:`xlfuncs.power.harmonic_study`)
    with the currents the study puts through it.

    The capacitor rows are the study's IEEE Std 18 duty of one phase unit against the
    item's own rating (:meth:`~xlfuncs.power.HarmonicStudy.capacitor_duty`: kvar/3 at
    kv/√3 for a star, at kv for a delta). The reactor figures are those of one phase unit
    too (a delta leg carries 1/√3 of the line current and has three times the star
    equivalent's reactance); the losses are those of all three phases in R (constant with
    frequency, as the study models it). ``design`` is the item's star equivalent at the
    nominal voltage of its bus (X_C = kV²/kvar of the capacitor's rating, X_L = X_C/h_t²,
    R = X_n/q).
    """
    from ..power.expand import tuned_order

    it = study_item(study, item, "filter")
    duty = study.capacitor_duty(it.name)
    i_line = np.abs(study.branch_current(it.name).phasors) / math.sqrt(2)  # rms per order
    delta = it.connection == "D"
    v = it["kv"] * 1e3
    x_c = v * v / (it["kvar"] * 1e3)
    h_t = tuned_order(it)
    x_l = x_c / h_t**2
    bus_v = study.bus_kv(it.bus) * 1e3
    d = FilterDesign(
        "single-tuned",
        3,
        study.f1,
        bus_v,
        0.0,
        h_t,
        it["q_factor"],
        x_c,
        x_l,
        x_c / h_t / it["q_factor"],
    )
    d = dataclasses.replace(d, kvar=d.kvar_delivered)
    leg = 1 / math.sqrt(3) if delta else 1.0
    hh = study.orders.astype(float)
    loss = float(3 * np.sum(i_line**2) * d.r_ohm)
    basis = (
        f"{_IEEE18}; one phase unit of filter {it.name!r} ({it.connection}, "
        f"{'line-to-line' if delta else 'line-to-neutral'} voltage) against its own rating, "
        "currents from the harmonic study (balanced; every studied order); losses of all "
        f"three phases; {_MAKERS}"
    )
    scale = {"rms voltage": 1.0, "peak voltage": 1.0, "rms current": 1.0, "kvar": 1.0}
    return _rated(d, duty, scale | {"volts": 3.0 if delta else 1.0}, hh, i_line * leg, loss, basis)


# ------------------------------------------------------------------------ step search
@dataclass(frozen=True)
class CapacitorStep:
    """Every candidate size k·step with its parallel resonance orders and distance to the
    nearest injected order; ``smallest`` is the smallest passing size (None: none)."""

    candidates: tuple[tuple[float, tuple[float, ...], float, float, bool], ...]
    smallest_kvar: float | None
    margin: float
    relative: bool
    injected: tuple[float, ...]

    def rows(self) -> list[list[Any]]:
        unit = "fraction of the order" if self.relative else "orders"
        out: list[list[Any]] = [["kvar", "resonance_order", "nearest_order", "distance", "result"]]
        for kvar, orders, nearest, dist, ok in self.candidates:
            out.append([kvar, orders[0], nearest, dist, "PASS" if ok else "FAIL"])
        out.append(
            ["smallest", "" if self.smallest_kvar is None else self.smallest_kvar, "", "", ""]
        )
        out.append(
            [
                "basis",
                f"distance ≥ {self.margin:g} ({unit}) from every injected order "
                f"{', '.join(f'{h:g}' for h in self.injected)} (common practice, no standard "
                "fixes it); resonance from the core solver. Screening calculation.",
                "",
                "",
                "",
            ]
        )
        return out


def capacitor_steps(
    step_kvar: float,
    max_steps: int,
    bus_v: float,
    fundamental_hz: float,
    phases: int,
    ssc_mva: float,
    xr_ratio: float,
    injected: Any,
    margin: float,
    tuned_order: float | None = None,
    q_factor: float | None = None,
    relative: bool = False,
) -> CapacitorStep:
    """Smallest bank size k·``step_kvar`` (k = 1 … ``max_steps``) whose parallel resonance
    with the supply keeps at least ``margin`` from every injected order.

    Each size is a plain capacitor, or, with ``tuned_order`` and ``q_factor``, a
    single-tuned (detuned) bank of that tuning (k equal steps in parallel keep the tuning).
    The distance is |h_r − h_i| in orders, or |h_r − h_i|/h_i with ``relative``. The rule
    and its margin are common practice (no standard fixes them). Every candidate is
    reported, so the switched states of a stepped bank can all be checked.
    """
    step = _num(step_kvar, "step_kvar", "the kvar of one step > 0")
    if isinstance(max_steps, bool) or not isinstance(max_steps, (int, float, np.integer)):
        raise InputError("argument", None, "max_steps", max_steps, "expected a whole number")
    if not float(max_steps).is_integer() or not 1 <= max_steps <= 100:
        raise InputError("argument", None, "max_steps", max_steps, "expected a whole number 1…100")
    mg = _num(margin, "margin", "a distance > 0 (orders, or a fraction with %)")
    inj = np.asarray(injected, dtype=float).reshape(-1)
    if inj.size == 0 or not np.all(np.isfinite(inj)) or np.any(inj <= 0):
        raise InputError("argument", None, "injected", None, "expected injected orders > 0")
    if (tuned_order is None) != (q_factor is None):
        raise InputError(
            "argument",
            None,
            "q_factor" if q_factor is None else "tuned_order",
            None,
            "give both tuned_order and q_factor for a detuned bank, or neither",
        )
    cands = []
    smallest = None
    for k in range(1, int(max_steps) + 1):
        kvar = k * step
        if tuned_order is None:
            d = capacitor_bank(kvar, bus_v, fundamental_hz, phases)
        else:
            d = tuned_filter(kvar, bus_v, fundamental_hz, tuned_order, q_factor or 0.0, phases)
        par, _x_s, _r_s, _est = _parallel_resonances(d, ssc_mva, xr_ratio)
        orders = tuple(sorted(r.order for r in par))
        dist_all = np.abs(np.array(orders)[:, None] - inj[None, :])
        if relative:
            dist_all = dist_all / inj[None, :]
        a, b = np.unravel_index(np.argmin(dist_all), dist_all.shape)
        dist = float(dist_all[a, b])
        ok = dist >= mg
        cands.append((kvar, orders, float(inj[b]), dist, ok))
        if ok and smallest is None:
            smallest = kvar
    return CapacitorStep(tuple(cands), smallest, mg, relative, tuple(float(x) for x in inj))
