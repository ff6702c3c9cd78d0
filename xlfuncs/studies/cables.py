"""Conductor AC resistance at harmonic frequencies and the harmonic loss of a cable.

AC resistance by the skin- and proximity-effect formulas of IEC 60287-1-1 (conductor AC
resistance, skin effect factor y_s and proximity effect factor y_p; clause numbers are not
cited, the formulas are **from memory: confirm against the standard**; the skin-effect
branches agree with a published secondary summary of the standard):

* R_ac = R'·(1 + y_s + y_p), R' the DC resistance per metre at the operating temperature;
* x_s² = (8πf / R')·10⁻⁷·k_s, x_p² = (8πf / R')·10⁻⁷·k_p (R' in Ω/m);
* skin effect, three ranges of x_s:
  y_s = x_s⁴/(192 + 0.8·x_s⁴) for x_s ≤ 2.8;
  y_s = −0.136 − 0.0177·x_s + 0.0563·x_s² for 2.8 < x_s ≤ 3.8;
  y_s = 0.354·x_s − 0.733 for x_s > 3.8.
  The published branches meet only approximately: y_s jumps by +1.0e-3 at x_s = 2.8 and
  by +2.5e-3 at x_s = 3.8 (these are properties of the standard's fit; the tests measure
  them);
* proximity effect, with F(x_p) = x_p⁴/(192 + 0.8·x_p⁴), d_c the conductor diameter and
  s the distance between conductor axes:
  two-core cable or two single-core cables (``2core``): y_p = F·(d_c/s)²·2.9;
  three-core cable or three single-core cables (``3core``):
  y_p = F·(d_c/s)²·[0.312·(d_c/s)² + 1.18/(F + 0.27)];
  three-core cable with shaped (sector) conductors (``3sector``): 2/3 of the ``3core``
  value with d_c = d_x, the diameter of an equivalent round conductor of equal area and
  compaction, and s = d_x + t, t the insulation thickness between conductors.
  The proximity formula is stated for x_p ≤ 2.8. Beyond that it is refused, unless the
  caller asks for ``extrapolate``: F is then continued with the skin-effect branches
  above (an extrapolation outside the standard's stated range; every result says from
  which order it applies).
* k_s, k_p come from the standard's table of conductor constructions (from memory: round
  stranded copper or aluminium conductors k_s = 1; k_p = 1 with extruded insulation,
  0.8 for dried and impregnated paper; segmental (Milliken) conductors much lower).

Alternative: the √h law R(h) = R_ac(1)·√max(1, h) (common practice; the parts table's
``r_exponent`` = 0.5).

Harmonic loss ratio of a current with RMS components I_h (order h, h = 0 is DC):
Σ I_h²·R(h) / (I_rms²·R(1)), I_rms² = Σ I_h². Holding the conductor loss at its rated
sinusoidal value, the permissible RMS current is 1/√ratio of the sinusoidal rating.
Conductor loss only: dielectric loss, sheath, screen and armour losses and a neutral
conductor carrying zero-sequence currents are not included. Screening calculation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from .transformer import read_harmonic_spectrum, study_item

__all__ = [
    "ARRANGEMENTS",
    "CableLoss",
    "CableResistance",
    "Conductor",
    "ItemCableLoss",
    "cable_ac_resistance",
    "cable_harmonic_loss",
    "item_cable_loss",
    "parse_arrangement",
    "read_harmonic_spectrum",
    "skin_effect_factor",
]

ARRANGEMENTS = {
    "none": "no proximity effect (an isolated conductor)",
    "2core": "two-core cable or two single-core cables",
    "3core": "three-core cable or three single-core cables",
    "3sector": "three-core cable with shaped (sector) conductors",
}
X_LIMIT_LOW = 2.8  # upper end of the first skin branch and of the proximity formula
X_LIMIT_HIGH = 3.8  # upper end of the second skin branch
_MU0_TERM = 8 * math.pi * 1e-7  # 8π·10⁻⁷ of x² = 8πf·10⁻⁷·k / R'


def parse_arrangement(value: Any, column: str = "arrangement") -> str:
    if value is None or (isinstance(value, str) and not value.strip()):
        raise InputError(
            "argument", None, column, expected="missing: none, 2core, 3core or 3sector"
        )
    key = str(value).strip().lower().replace(" ", "").replace("-", "").replace("_", "")
    if key in ARRANGEMENTS:
        return key
    raise InputError("argument", None, column, value, "expected none, 2core, 3core or 3sector")


def skin_effect_factor(x: Any) -> np.ndarray:
    """y_s(x_s) of IEC 60287-1-1, all three ranges (from memory: confirm against the
    standard). Also the continuation F(x_p) used by ``extrapolate``."""
    xx = np.asarray(x, dtype=float)
    x4 = xx**4
    low = x4 / (192 + 0.8 * x4)
    mid = -0.136 - 0.0177 * xx + 0.0563 * xx**2
    high = 0.354 * xx - 0.733
    return np.where(xx <= X_LIMIT_LOW, low, np.where(xx <= X_LIMIT_HIGH, mid, high))


@dataclass(frozen=True)
class CableResistance:
    """AC resistance per frequency (arrays of shape (F,)); ``extrapolated`` marks the
    frequencies whose proximity factor lies outside x_p ≤ 2.8."""

    freqs_hz: np.ndarray
    x_s: np.ndarray
    y_s: np.ndarray
    x_p: np.ndarray
    y_p: np.ndarray
    r_dc_ohm_km: float
    arrangement: str
    extrapolated: np.ndarray

    @property
    def r_ac_ohm_km(self) -> np.ndarray:
        return self.r_dc_ohm_km * (1 + self.y_s + self.y_p)

    @property
    def ratio(self) -> np.ndarray:
        """R_ac / R_dc."""
        return 1 + self.y_s + self.y_p


def _positive(value: Any, name: str, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("argument", None, name, value, f"expected {what}")
    if value <= 0:
        raise InputError("argument", None, name, value, f"expected {what}")
    return float(value)


@dataclass(frozen=True)
class Conductor:
    """A conductor as the IEC 60287-1-1 AC resistance needs it (validated on creation).

    Attributes
    ----------
    r_dc_ohm_km : float
        DC resistance at the operating temperature, Ω/km (the formula's R' per metre is
        this / 1000).
    k_s, k_p : float
        Skin and proximity coefficients of the conductor construction (standard's table).
    arrangement : ``none``, ``2core``, ``3core`` or ``3sector``
    d_c_mm, s_mm : float
        Conductor diameter (d_x for sector conductors) and axis spacing, mm (same unit
        for both; only their ratio counts). Needed unless ``arrangement`` is ``none``.
    extrapolate : bool
        Continue the proximity factor beyond x_p = 2.8 with the skin-effect branches
        instead of refusing.
    """

    r_dc_ohm_km: float
    k_s: float
    k_p: float
    arrangement: str
    d_c_mm: float | None = None
    s_mm: float | None = None
    extrapolate: bool = False

    def __post_init__(self) -> None:
        put = object.__setattr__
        for name, what in (
            ("r_dc_ohm_km", "a DC resistance > 0 Ω/km"),
            ("k_s", "a skin-effect coefficient k_s > 0 (1 for round stranded)"),
            ("k_p", "a proximity coefficient k_p > 0"),
        ):
            put(self, name, _positive(getattr(self, name), name, what))
        if not isinstance(self.extrapolate, (bool, np.bool_)):
            raise InputError(
                "argument", None, "extrapolate", self.extrapolate, "expected TRUE or FALSE"
            )
        put(self, "arrangement", parse_arrangement(self.arrangement))
        if self.arrangement == "none":
            return
        dc = _positive(self.d_c_mm, "d_c_mm", "the conductor diameter > 0 mm")
        s = _positive(self.s_mm, "s_mm", "the distance between conductor axes > 0 mm")
        if s <= dc:
            raise InputError(
                "argument",
                None,
                "s_mm",
                self.s_mm,
                f"expected an axis spacing larger than the conductor diameter {self.d_c_mm!r} mm",
            )
        put(self, "d_c_mm", dc)
        put(self, "s_mm", s)


def cable_ac_resistance(conductor: Conductor, freqs_hz: Any) -> CableResistance:
    """IEC 60287-1-1 AC resistance of ``conductor`` at each of ``freqs_hz`` (≥ 0 Hz).

    Examples
    --------
    f → 0 gives the DC resistance:

    >>> r = cable_ac_resistance(Conductor(0.0754, 1.0, 1.0, "none"), [0.0, 50.0])
    >>> float(r.ratio[0]), round(float(r.ratio[1]), 6)
    (1.0, 1.014301)
    """
    c = conductor
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f < 0):
        raise InputError("argument", None, "freqs_hz", None, "expected frequencies ≥ 0 Hz")
    r_per_m = c.r_dc_ohm_km / 1000.0
    x_s = np.sqrt(_MU0_TERM * f / r_per_m * c.k_s)
    x_p = np.sqrt(_MU0_TERM * f / r_per_m * c.k_p)
    y_s = skin_effect_factor(x_s)
    beyond = np.zeros(f.size, dtype=bool)
    if c.arrangement == "none":
        y_p = np.zeros_like(f)
    else:
        assert c.d_c_mm is not None and c.s_mm is not None
        beyond = x_p > X_LIMIT_LOW
        if beyond.any() and not c.extrapolate:
            k = int(np.argmax(beyond))
            raise InputError(
                "argument",
                None,
                "extrapolate",
                False,
                f"x_p = {x_p[k]:.3g} at {f[k]:g} Hz exceeds 2.8, the stated range of the "
                "IEC 60287-1-1 proximity formula; limit the frequencies, or set extrapolate "
                "to continue it with the skin-effect branches (an approximation)",
            )
        x4 = x_p**4
        fx = np.where(beyond, skin_effect_factor(x_p), x4 / (192 + 0.8 * x4))
        ratio2 = (c.d_c_mm / c.s_mm) ** 2
        if c.arrangement == "2core":
            y_p = fx * ratio2 * 2.9
        else:
            y_p = fx * ratio2 * (0.312 * ratio2 + 1.18 / (fx + 0.27))
            if c.arrangement == "3sector":
                y_p = y_p * (2.0 / 3.0)
    return CableResistance(f, x_s, y_s, x_p, y_p, c.r_dc_ohm_km, c.arrangement, beyond)


@dataclass(frozen=True)
class CableLoss:
    """Harmonic loss of a conductor (see :func:`cable_harmonic_loss`)."""

    loss_ratio: float
    derating: float
    i1_max_pu: float
    loss_ratio_sqrt_h: float
    derating_sqrt_h: float
    rac1_ohm_km: float
    rac1_over_rdc: float
    extrapolated_from_order: float | None
    resistance: CableResistance

    @property
    def basis(self) -> str:
        text = (
            "IEC 60287-1-1 skin and proximity formulas (from memory: confirm against the "
            f"standard), {ARRANGEMENTS[self.resistance.arrangement]}; conductor loss only "
            "(dielectric, sheath, armour and neutral losses excluded); derating = permissible "
            "RMS current / sinusoidal rating at equal conductor loss. Screening calculation."
        )
        if self.extrapolated_from_order is not None:
            text += (
                f" Proximity factor extrapolated beyond x_p = 2.8 from order "
                f"{self.extrapolated_from_order:g}: an approximation."
            )
        return text

    def rows(self) -> list[list[Any]]:
        return [
            ["quantity", "value"],
            ["loss_ratio", self.loss_ratio],
            ["derating", self.derating],
            ["I1_max_pu", self.i1_max_pu],
            ["loss_ratio_sqrt_h", self.loss_ratio_sqrt_h],
            ["derating_sqrt_h", self.derating_sqrt_h],
            ["Rac1_ohm_km", self.rac1_ohm_km],
            ["Rac1_over_Rdc", self.rac1_over_rdc],
            ["basis", self.basis],
        ]


def cable_harmonic_loss(
    conductor: Conductor, orders: Any, pct: Any, fundamental_hz: float
) -> CableLoss:
    """Harmonic loss ratio Σ I_h²·R_ac(h) / (I_rms²·R_ac(1)) and the derating it implies.

    ``orders`` (≥ 0; 0 is DC, R = R_dc) and ``pct`` (% of I₁, the order-1 row 100)
    describe the current in ``conductor``. The √h-law figures use
    R(h) = R_ac(1)·√max(1, h) for comparison.

    Examples
    --------
    >>> c = cable_harmonic_loss(Conductor(0.0754, 1, 1, "none"), [1, 5, 7], [100, 20, 14], 50)
    >>> round(c.loss_ratio, 4), round(c.derating, 4)
    (1.0181, 0.9911)
    """
    f1 = _positive(fundamental_hz, "fundamental_hz", "a fundamental frequency > 0 Hz")
    h = np.asarray(orders, dtype=float).reshape(-1)
    p = np.asarray(pct, dtype=float).reshape(-1)
    if h.size != p.size or h.size == 0 or not np.any(np.abs(h - 1) <= 1e-9):
        raise InputError(
            "argument", None, "spectrum", None, "expected orders and pct with an order-1 row"
        )
    if not (np.all(np.isfinite(h)) and np.all(np.isfinite(p))) or np.any(h < 0) or np.any(p < 0):
        raise InputError("argument", None, "spectrum", None, "expected orders ≥ 0 and pct ≥ 0")
    res = cable_ac_resistance(conductor, np.concatenate([[f1], h * f1]))
    r1 = float(res.r_ac_ohm_km[0])
    rh = res.r_ac_ohm_km[1:]
    w = (p / 100.0) ** 2
    ratio = float(np.sum(w * rh) / (np.sum(w) * r1))
    ratio_sqrt = float(np.sum(w * np.sqrt(np.maximum(1.0, h))) / np.sum(w))
    i_rms_over_i1 = math.sqrt(float(np.sum(w)))
    beyond = res.extrapolated[1:]
    from_order = float(h[beyond].min()) if beyond.any() else None
    return CableLoss(
        loss_ratio=ratio,
        derating=1 / math.sqrt(ratio),
        i1_max_pu=1 / math.sqrt(ratio) / i_rms_over_i1,
        loss_ratio_sqrt_h=ratio_sqrt,
        derating_sqrt_h=1 / math.sqrt(ratio_sqrt),
        rac1_ohm_km=r1,
        rac1_over_rdc=float(res.ratio[0]),
        extrapolated_from_order=from_order,
        resistance=res,
    )


@dataclass(frozen=True)
class ItemCableLoss:
    """:func:`cable_harmonic_loss` of a study cable's own current, with its conductor loss
    in watts (three phase conductors over the cable's length, IEC 60287-1-1 R_ac)."""

    loss: CableLoss
    item: str
    length_km: float
    orders: np.ndarray
    i_rms_a: np.ndarray  # RMS conductor current per order, A (orders as above)

    @property
    def i_total_a(self) -> float:
        return float(np.sqrt(np.sum(self.i_rms_a**2)))

    @property
    def loss_w(self) -> float:
        """3·Σ I_h²·R_ac(h)·length, W."""
        r_h = self.loss.resistance.r_ac_ohm_km[1:]
        return float(3 * np.sum(self.i_rms_a**2 * r_h) * self.length_km)

    @property
    def loss1_w(self) -> float:
        """The same conductor loss if only the fundamental current flowed, W."""
        return float(3 * self.i_rms_a[0] ** 2 * self.loss.rac1_ohm_km * self.length_km)

    def rows(self) -> list[list[Any]]:
        """The rows of :meth:`CableLoss.rows`, then I_rms_a, I1_a, loss_w,
        loss_fundamental_w and the basis."""
        head = self.loss.rows()
        return [
            *head[:-1],
            ["I_rms_a", self.i_total_a],
            ["I1_a", float(self.i_rms_a[0])],
            ["loss_w", self.loss_w],
            ["loss_fundamental_w", self.loss1_w],
            [
                "basis",
                f"{head[-1][1]} Current: the series (conductor) current of cable "
                f"{self.item!r} from the harmonic study, every studied order (the line current "
                "at its bus end less the charging current of the pi model's half capacitance "
                "there); loss_w over the three phase conductors and the length.",
            ],
        ]


def item_cable_loss(study: Any, item: str, conductor: Conductor) -> ItemCableLoss:
    """Harmonic loss of a cable of a three-phase harmonic study
    (:func:`xlfuncs.power.harmonic_study`) with the current the study puts through it.

    ``conductor`` describes the cable's conductor for the IEC 60287-1-1 AC resistance
    (the study's own cable model, R·√h from ``r_ohm_km``, is not used: give the DC
    resistance at the operating temperature). The current is that of the series branch:
    the line current at the bus end less the charging current of the half capacitance of
    the pi model at that end (read from the expanded networks).
    """
    it = study_item(study, item, "cable")
    line = study.branch_current(it.name, "bus").phasors
    v = study.bus_voltage(it.bus).phasors
    seqs = ["1" if h == 1 else study.sequence(int(h)) for h in study.orders]
    half = {q: _part_value(study.network(q).parts, f"{it.name}.Ca") for q in set(seqs)}
    c_half = np.array([half[q] for q in seqs])
    series = line - 1j * 2 * np.pi * study.freqs_hz * c_half * v
    rms = np.abs(series) / math.sqrt(2)
    i1 = float(rms[0])
    if i1 <= 1e-12 * float(np.sqrt(np.sum(rms**2))):
        raise InputError(
            "argument",
            None,
            "item",
            item,
            f"cable {it.name!r} carries no fundamental current in the study (the loss ratio "
            "is relative to it)",
        )
    orders = study.orders.astype(float)
    loss = cable_harmonic_loss(conductor, orders, 100 * rms / i1, study.f1)
    return ItemCableLoss(loss, it.name, float(it["length_km"]), orders, rms)


def _part_value(parts: list[list[Any]], name: str) -> float:
    """The value of part ``name`` in a parts table (header row first), 0 when absent."""
    key = name.lower()
    return next((float(r[4]) for r in parts[1:] if str(r[0]).lower() == key), 0.0)
