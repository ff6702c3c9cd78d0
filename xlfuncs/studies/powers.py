"""Power quantities under non-sinusoidal conditions after IEEE Std 1459-2010.

Definitions (IEEE Std 1459-2010; clause numbers are not cited because they could not be
checked against the standard here — the section names are given instead):

One-phase port (single-phase non-sinusoidal section), with V_h, I_h the RMS values of each
component and θ_h the angle by which the voltage leads the current:

* V² = V₁² + V_H², I² = I₁² + I_H² — the fundamental and everything else;
* P = Σ_h V_h·I_h·cos θ_h (DC: V₀·I₀) — active power;
* P₁ = V₁·I₁·cos θ₁, Q₁ = V₁·I₁·sin θ₁ — fundamental active and reactive power;
* S = V·I, S₁ = V₁·I₁, S_N² = S² − S₁² — apparent, fundamental apparent and
  non-fundamental apparent power;
* S_N² = D_I² + D_V² + S_H² with D_I = V₁·I_H (current distortion power),
  D_V = V_H·I₁ (voltage distortion power), S_H = V_H·I_H (harmonic apparent power);
* PF = P/S, PF₁ = P₁/S₁ (displacement power factor);
* THD_V = V_H/V₁, THD_I = I_H/I₁.

Basis of the non-fundamental part: as in IEEE Std 1459, V_H and I_H contain **every**
component other than the fundamental — DC, harmonics of any order and interharmonics —
with no upper order. (IEEE Std 519 THD, returned by ``Spectrum.thd``, counts harmonics
2…50 only and excludes DC; the two THD figures differ when DC, interharmonics or orders
above 50 are present.)

Balanced three-phase item (three-phase non-sinusoidal section, balanced case). The three
phases carry the same waveform displaced by one third of the fundamental period, so a
component at frequency f has phase b = phase a · e^(−j2πf/(3f₁)). The standard's
effective quantities (from memory: the defaults ρ = 1 for the neutral-to-line resistance
ratio and ξ = 1 for the delta/star load split) are

* four-wire: I_e² = (I_a² + I_b² + I_c² + I_n²)/3,
  V_e² = [3(V_a² + V_b² + V_c²) + V_ab² + V_bc² + V_ca²]/18;
* three-wire: I_e² = (I_a² + I_b² + I_c²)/3, V_e² = (V_ab² + V_bc² + V_ca²)/9;

and S_e = 3·V_e·I_e, S_e1 = 3·V_e1·I_e1, D_eI = 3·V_e1·I_eH, D_eV = 3·V_eH·I_e1,
S_eH = 3·V_eH·I_eH, THD_eV = V_eH/V_e1, THD_eI = I_eH/I_e1. Balanced: P = 3·P_a,
P₁⁺ = 3·P₁a, Q₁⁺ = 3·Q₁a, V_e1 = V₁ and I_e1 = I₁ of phase a. Zero-sequence components
(DC and orders 3, 6, 9 … of a balanced set) add in the neutral (I_n = 3·I_h) and vanish
from the line-to-line voltages; a three-wire item cannot carry them and is refused when its
current has any.

Signs: the part's voltage is V(from) − V(to) and its current flows from ``from`` to ``to``;
P and Q₁ are absorbed (a source that delivers shows P < 0); Q₁ > 0 for a lagging
(inductive) current.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError

__all__ = [
    "POWER_ROWS",
    "WIRINGS",
    "PowerQuantities",
    "item_powers",
    "parse_wiring",
    "port_powers",
    "power_quantities",
]

# wiring code -> description
WIRINGS = {
    "1ph": "one-phase port",
    "3ph4w": "balanced three-phase four-wire item (per-phase model, line-to-neutral voltage)",
    "3ph3w": "balanced three-phase three-wire item (per-phase model, line-to-neutral voltage)",
}

# the fixed rows of CKT_POWERS, in order, with their units
POWER_ROWS = (
    ("P", "W"),
    ("P1", "W"),
    ("Q1", "var"),
    ("S1", "VA"),
    ("S", "VA"),
    ("SN", "VA"),
    ("DI", "var"),
    ("DV", "var"),
    ("SH", "VA"),
    ("PF", "fraction"),
    ("PF1", "fraction"),
    ("THD_V", "fraction"),
    ("THD_I", "fraction"),
)

_F1_RTOL = 1e-6  # a tone within this relative distance of f1 is the fundamental
_ZERO = 1e-12  # a fundamental below this fraction of the total RMS is round-off, i.e. zero
_ZS_RTOL = 1e-9  # zero-sequence current a three-wire item may show as round-off


def parse_wiring(value: Any, column: str = "wiring") -> str:
    """``1ph``, ``3ph4w`` or ``3ph3w`` (case, spaces, hyphens and ``-wire`` ignored);
    empty means ``1ph``."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return "1ph"
    key = str(value).strip().lower().replace(" ", "").replace("-", "").replace("_", "")
    key = key.replace("wire", "w").replace("phase", "ph")
    if key in WIRINGS:
        return key
    raise InputError(
        "argument", None, column, value, "expected 1ph, 3ph4w or 3ph3w (three-phase 4/3-wire)"
    )


@dataclass(frozen=True)
class PowerQuantities:
    """IEEE Std 1459-2010 quantities of one port or one balanced three-phase item.

    Attributes are in W, var, VA and fractions (see :data:`POWER_ROWS`); ``v_rms`` and
    ``i_rms`` are the RMS values (effective values V_e, I_e for a three-phase item),
    ``v1``, ``i1`` the fundamental RMS values of one phase.
    """

    P: float
    P1: float
    Q1: float
    S1: float
    S: float
    SN: float
    DI: float
    DV: float
    SH: float
    PF: float
    PF1: float
    THD_V: float
    THD_I: float
    v_rms: float
    i_rms: float
    v1: float
    i1: float
    fundamental_hz: float
    fundamental_note: str
    wiring: str
    label: str = ""
    note: str = ""

    @property
    def basis(self) -> str:
        text = (
            f"IEEE Std 1459-2010, {WIRINGS[self.wiring]}; fundamental {self.fundamental_hz:g} Hz "
            f"({self.fundamental_note}); V_H, I_H hold every other component (DC, all harmonic "
            "orders, interharmonics); P, Q1 absorbed, Q1 > 0 lagging"
        )
        if self.wiring != "1ph":
            text += "; effective V_e, I_e with rho = 1, xi = 1"
        return text + (f"; {self.note}" if self.note else "")

    def rows(self) -> list[list[Any]]:
        """``quantity | value | unit``: the fixed rows, then V, I, f1_hz and the basis."""
        out: list[list[Any]] = [["quantity", "value", "unit"]]
        out += [[name, float(getattr(self, name)), unit] for name, unit in POWER_ROWS]
        eff = " (effective)" if self.wiring != "1ph" else ""
        out.append(["V", self.v_rms, "V" + eff])
        out.append(["I", self.i_rms, "A" + eff])
        out.append(["f1_hz", self.fundamental_hz, "Hz"])
        out.append(["basis", self.basis, ""])
        return out


def _phase_weights(
    freqs_hz: np.ndarray, f1: float, wiring: str, rho: float, xi: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per-component weights (w_V, w_I) turning phase-a RMS² into effective RMS², and the
    neutral factor |1 + a + a²|² of each component (9 for zero sequence, 0 for ±)."""
    phi = 2 * np.pi * freqs_hz / (3 * f1)  # delay of phase b behind phase a, per component
    ll = 4 * np.sin(phi / 2) ** 2  # |1 − e^(−jφ)|²: line-to-line over line-to-neutral
    neutral = np.abs(1 + np.exp(-1j * phi) + np.exp(-2j * phi)) ** 2
    if wiring == "1ph":
        one = np.ones_like(freqs_hz)
        return one, one, neutral
    if wiring == "3ph4w":
        w_v = (9 + xi * 3 * ll) / (9 * (1 + xi))
        w_i = 1 + rho * neutral / 3
        return w_v, w_i, neutral
    return 3 * ll / 9, np.ones_like(freqs_hz), neutral


def power_quantities(
    freqs_hz: Any,
    v_peak: Any,
    i_peak: Any,
    fundamental_hz: float,
    wiring: str = "1ph",
    *,
    label: str = "",
    fundamental_note: str = "given",
    note: str = "",
    rho: float = 1.0,
    xi: float = 1.0,
) -> PowerQuantities:
    """IEEE Std 1459-2010 quantities from voltage and current phasors.

    Parameters
    ----------
    freqs_hz : array, shape (F,)
        Frequencies of the components (0 = DC), distinct.
    v_peak, i_peak : array, shape (F,), complex
        Peak phasors (cosine reference) of the port voltage and current; for a
        three-phase item, of phase a of its per-phase model (line-to-neutral voltage,
        line current). DC entries are signed real values.
    fundamental_hz : float
        The fundamental f₁; exactly one component must lie within 1e-6 of it.
    wiring : ``"1ph"``, ``"3ph4w"`` or ``"3ph3w"``
    rho, xi : float
        Four-wire effective-quantity weights of IEEE Std 1459 (neutral-to-line
        resistance ratio, delta/star power split); 1 and 1 are its defaults (from memory).

    Refuses (one line) whatever would give a non-finite figure: no fundamental voltage or
    current (THD, PF₁ undefined), a port with no voltage or current at all.

    Examples
    --------
    Sinusoid plus a fifth harmonic (closed forms of IEEE Std 1459, one-phase port):

    >>> import numpy as np
    >>> r2 = 2 ** 0.5
    >>> q = power_quantities([50, 250], [230 * r2, 23 * r2], [10 * r2, 3 * r2], 50)
    >>> round(q.P, 6), round(q.S, 6), round(q.THD_V, 12), round(q.THD_I, 12)
    (2369.0, 2413.246983, 0.1, 0.3)
    """
    wiring = parse_wiring(wiring)
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    v = np.asarray(v_peak, dtype=complex).reshape(-1)
    i = np.asarray(i_peak, dtype=complex).reshape(-1)
    if not (f.size == v.size == i.size) or f.size == 0:
        raise InputError(
            "argument",
            None,
            "phasors",
            (f.size, v.size, i.size),
            "expected as many voltage and current phasors as frequencies (and at least one)",
        )
    if not (np.all(np.isfinite(f)) and np.all(f >= 0)):
        raise InputError("argument", None, "freqs_hz", None, "expected finite frequencies ≥ 0")
    if not (np.all(np.isfinite(v)) and np.all(np.isfinite(i))):
        raise InputError("argument", None, "phasors", None, "expected finite phasors")
    if not (isinstance(fundamental_hz, (int, float)) and math.isfinite(fundamental_hz)):
        raise InputError("argument", None, "fundamental_hz", fundamental_hz, "expected Hz > 0")
    f1 = float(fundamental_hz)
    if f1 <= 0:
        raise InputError("argument", None, "fundamental_hz", fundamental_hz, "expected Hz > 0")
    what = f"part {label!r}" if label else "the port"
    is1 = np.abs(f - f1) <= _F1_RTOL * f1
    n1 = int(is1.sum())
    if n1 == 0:
        raise InputError(
            "argument",
            None,
            "fundamental_hz",
            f1,
            f"{what} has no component at the fundamental {f1:g} Hz (THD and PF1 undefined)",
        )
    if n1 > 1:
        raise InputError(
            "argument",
            None,
            "fundamental_hz",
            f1,
            f"{what} has {n1} components within 1e-6 of {f1:g} Hz; merge them first",
        )
    dc = f == 0
    scale = np.where(dc, 1.0, 1 / math.sqrt(2))
    vr, ir = np.abs(v) * scale, np.abs(i) * scale  # RMS of each component
    # active power per component: V·I at DC, ½·Re(V·I*) otherwise (peak phasors)
    p_k = np.where(dc, (v * np.conj(i)).real, 0.5 * (v * np.conj(i)).real)
    k1 = int(np.flatnonzero(is1)[0])
    s1c = 0.5 * v[k1] * np.conj(i[k1])  # fundamental complex power P1 + jQ1, one phase
    v1, i1 = float(vr[k1]), float(ir[k1])
    w_v, w_i, neutral = _phase_weights(f, f1, wiring, rho, xi)
    v_all = float(np.sqrt(np.sum(w_v * vr**2)))
    i_all = float(np.sqrt(np.sum(w_i * ir**2)))
    for name, total, fund in (("voltage", v_all, v1), ("current", i_all, i1)):
        if total == 0:
            raise InputError(
                "argument", None, "part", label or None, f"{what} carries no {name} at all"
            )
        if fund <= _ZERO * total:
            raise InputError(
                "argument",
                None,
                "part",
                label or None,
                f"{what} has no fundamental {name} at {f1:g} Hz "
                f"({fund:.3g} of {total:.3g} rms: THD and PF1 would be infinite)",
            )
    if wiring == "3ph3w":
        zs = math.sqrt(float(np.sum(neutral * ir**2)) / 9)  # in-phase sum per phase
        if zs > _ZS_RTOL * i_all:
            k = int(np.argmax(neutral * ir**2))
            raise InputError(
                "argument",
                None,
                "wiring",
                "3ph3w",
                f"a balanced three-wire item cannot carry the zero-sequence current of {what} "
                f"({ir[k]:.4g} A rms at {f[k]:g} Hz: DC and orders 3, 6, 9 … add in a neutral); "
                "use 3ph4w",
            )
    not1 = ~is1
    vh = float(np.sqrt(np.sum(w_v[not1] * vr[not1] ** 2)))
    ih = float(np.sqrt(np.sum(w_i[not1] * ir[not1] ** 2)))
    m = 1.0 if wiring == "1ph" else 3.0
    p = m * float(p_k.sum())
    p1, q1 = m * float(s1c.real), m * float(s1c.imag)
    s1 = m * v1 * i1
    s = m * v_all * i_all
    di, dv, sh = m * v1 * ih, m * vh * i1, m * vh * ih
    sn = math.sqrt(di * di + dv * dv + sh * sh)  # = √(S² − S₁²) without cancellation
    # |P| ≤ S and |P1| ≤ S1 hold exactly (Cauchy–Schwarz); clip the round-off beyond ±1
    pf = max(-1.0, min(1.0, p / s))
    pf1 = max(-1.0, min(1.0, p1 / s1))
    return PowerQuantities(
        P=p,
        P1=p1,
        Q1=q1,
        S1=s1,
        S=s,
        SN=sn,
        DI=di,
        DV=dv,
        SH=sh,
        PF=pf,
        PF1=pf1,
        THD_V=vh / v1,
        THD_I=ih / i1,
        v_rms=v_all,
        i_rms=i_all,
        v1=v1,
        i1=i1,
        fundamental_hz=f1,
        fundamental_note=fundamental_note,
        wiring=wiring,
        label=label,
        note=note,
    )


def port_powers(
    parts: Any,
    sources: Any = None,
    part: str = "",
    options: Any = None,
    wiring: str = "1ph",
    fundamental_hz: float | None = None,
) -> PowerQuantities:
    """Solve the tables and return the IEEE 1459 quantities of one part or source.

    The fundamental is ``fundamental_hz``, else the options' ``fundamental_hz``, else the
    lowest non-zero source frequency; which one was used is stated in the result.
    ``parts`` may be a ready :class:`~xlfuncs.Solution` (``sources`` and ``options`` are
    then ignored).
    """
    from ..api import solve
    from ..solution import Solution

    sol = parts if isinstance(parts, Solution) else solve(parts, sources, options)
    if not isinstance(part, str) or not part.strip():
        raise InputError("argument", None, "part", part, "expected a part or source name")
    if _known(sol, part) and sol.circuit.find(part)[0] == "node":
        raise InputError("argument", None, "part", part, "a node is not a port; name a part")
    v = sol.voltage(part)
    i = sol.current(part)
    if fundamental_hz is not None:
        f1, note = float(fundamental_hz), "given"
    elif sol.circuit.options.fundamental_hz is not None:
        f1, note = float(sol.circuit.options.fundamental_hz), "options fundamental_hz"
    else:
        nz = sol.freqs_hz[sol.freqs_hz > 0]
        if nz.size == 0:
            raise InputError(
                "sources", None, "freq_hz", expected="only DC tones: there is no fundamental"
            )
        f1, note = float(nz.min()), "lowest source frequency; set fundamental_hz to choose"
    return power_quantities(
        v.freqs_hz,
        v.phasors,
        i.phasors,
        f1,
        wiring,
        label=part,
        fundamental_note=note,
    )


def _known(sol: Any, name: str) -> bool:
    try:
        sol.circuit.find(name)
    except KeyError:
        return False
    return True


def item_powers(
    study: Any, item: str, end: str | None = None, wiring: str | None = None
) -> PowerQuantities:
    """IEEE 1459 quantities of a balanced three-phase item of a harmonic study
    (:func:`xlfuncs.power.harmonic_study`), at its end ``end`` (``bus``, default, or
    ``bus_to`` of a transformer or cable).

    The voltage is the line-to-neutral voltage of that end's bus and the current the line
    current from that bus into the item, both phase a over every studied order: powers are
    absorbed (a supply that delivers shows P < 0; the two ends of a cable add up to its
    losses). ``wiring`` is ``3ph4w`` or ``3ph3w``; by default ``3ph4w`` where the item
    offers a zero-sequence path at that end (a grounded star; a cable carrying
    zero-sequence current), else ``3ph3w`` — the two agree whenever no zero-sequence
    component is present, and the basis row says which was used and why.
    """
    from ..power.vector_group import sequence_of

    it = study.equipment.item(item)
    e = "bus" if end is None or (isinstance(end, str) and not end.strip()) else end
    cur = study.branch_current(it.name, e)  # validates the end; refuses an unloaded motor
    e = str(e).strip().lower()
    bus = it.bus if e == "bus" else it.bus_to
    volt = study.bus_voltage(bus)
    zero = np.array([sequence_of(int(h)) == "0" for h in study.orders])
    if wiring is None or (isinstance(wiring, str) and not wiring.strip()):
        if it.kind == "cable":
            four = bool(np.any(np.abs(cur.phasors[zero]) > 0))
            why = "a cable carrying zero-sequence current" if four else "no zero-sequence current"
        else:
            four = _grounded_star(study, it.name, e)
            why = "a grounded star at that end" if four else "no grounded star at that end"
        w = "3ph4w" if four else "3ph3w"
        how = f"wiring {w} from the item ({why})"
    else:
        w = parse_wiring(wiring, "item_wiring")
        how = f"wiring {w} as given"
        if w == "1ph":
            raise InputError(
                "argument",
                None,
                "item_wiring",
                wiring,
                "a study item is three-phase: 3ph4w or 3ph3w",
            )
    return power_quantities(
        study.freqs_hz,
        volt.phasors,
        cur.phasors,
        study.f1,
        w,
        label=f"{it.name} at {e}",
        fundamental_note="the study's fundamental_hz",
        note=f"item {it.name!r} at its {e} ({bus}), harmonic study orders {_orders(study)}; {how}",
    )


def _grounded_star(study: Any, name: str, end: str) -> bool:
    try:
        return bool(study.neutral_end(name, end) == end)
    except InputError:
        return False


def _orders(study: Any) -> str:
    h = [int(x) for x in study.orders]
    return ", ".join(map(str, h)) if len(h) <= 8 else f"{h[0]}…{h[-1]} ({len(h)} orders)"
