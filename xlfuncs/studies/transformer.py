"""Transformer capability with non-sinusoidal load currents (IEEE Std C57.110) and the
K-factor of the UL transformer standards (UL 1561 / UL 1562).

The standards could not be read here: every formula below is **from memory** and is
checked in the tests against its closed form (sympy), not against a worked example of
the standard. Confirm against IEEE Std C57.110 before relying on a figure.

With I_h the RMS current of order h and I₁ the fundamental (the spectrum is given in % of
I₁, order 1 = 100):

* harmonic loss factor for winding eddy-current loss
  F_HL = Σ (I_h/I₁)²·h² / Σ (I_h/I₁)²;
* harmonic loss factor for other stray loss (exponent 0.8)
  F_HL-STR = Σ (I_h/I₁)²·h^0.8 / Σ (I_h/I₁)²;
* maximum permissible RMS current in per unit of the rated current, for the **winding
  hot spot**: I_max(pu) = √( P_LL-R(pu) / (1 + F_HL·P_EC-R(pu)) ) with
  P_LL-R(pu) = 1 + P_EC-R(pu), all in per unit of the rated I²R loss. This formula counts
  the I²R loss and the winding eddy-current loss only: the other stray loss (in clamps,
  tank and structural parts, factor F_HL-STR) heats the oil and the structure, not the
  winding hot spot, and the no-load loss does not depend on the load current; neither is
  in I_max.
* load loss at rated RMS current with this spectrum (needs P_OSL-R):
  P_LL(pu) = 1 + F_HL·P_EC-R + F_HL-STR·P_OSL-R, against the rated
  P_LL-R = 1 + P_EC-R + P_OSL-R; the RMS current at which the total load loss equals its
  rated value is √(P_LL-R / P_LL(pu)) — a screening figure for the oil rise only (the
  no-load loss and the oil-rise exponent are not included).
* K-factor (UL 1561 / 1562): K = Σ I_h(pu)²·h² with I_h in per unit of the RMS load
  current (from memory). Normalised that way it equals F_HL numerically; the figures
  differ in use: K selects a K-rated transformer, F_HL derates a standard one.

DC is refused (it is not a harmonic loss: a DC current magnetises the core and is outside
these factors). Interharmonic orders (non-integer h > 1) are accepted in the same sums.

Guidance on the loss split (from memory of IEEE Std C57.110; the maker's test data take
precedence): when only the total stray loss P_TSL = P_LL − I²R of the test report is known,
about 33 % of it is winding eddy loss for liquid-immersed units and about 67 % for
dry-type units, the remainder other stray loss.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, TableError
from ..tables import _norm_header
from ..units import MAX_MAGNITUDE

__all__ = [
    "STRAY_EXPONENT",
    "ItemDerating",
    "TransformerDerating",
    "harmonic_loss_factor",
    "item_derating",
    "k_factor",
    "read_harmonic_spectrum",
    "transformer_derating",
]

STRAY_EXPONENT = 0.8  # exponent of h in F_HL-STR (IEEE Std C57.110, from memory)
_ORDER_ATOL = 1e-9
# highest harmonic order a spectrum row may name (as the THD order limit of the tables)
MAX_ORDER = 100_000
_SPECTRUM_HEADERS = {"order": ("order", "h", "harmonic"), "pct": ("pct", "percent", "%")}


def read_harmonic_spectrum(
    data: Any, table: str = "spectrum", min_order: float = 1.0
) -> tuple[np.ndarray, np.ndarray]:
    """A two-column range with its header ``order | pct`` → ``(orders, pct)``.

    ``pct`` is in percent of the fundamental current; exactly one row has order 1 and
    pct 100. Blank rows are skipped; rows are counted as the user counts them (header =
    row 1). Orders must be ≥ ``min_order`` and distinct.
    """
    if data is None:
        raise TableError(table, "missing: expected a range order | pct with its header row")
    rows = [list(r) if isinstance(r, (list, tuple)) else [r] for r in data]
    if not rows:
        raise TableError(table, "empty: expected a header row order | pct and data rows")
    head = [_norm_header(c) for c in rows[0]]  # as every table reads its header
    cols: dict[str, int] = {}
    for key, names in _SPECTRUM_HEADERS.items():
        for k, name in enumerate(head):
            if name in names:
                cols[key] = k
                break
        else:
            raise TableError(
                table, f"header row 1 must name the columns order | pct (found {rows[0]!r})"
            )
    orders: list[float] = []
    pcts: list[float] = []
    seen: dict[float, int] = {}
    for k, r in enumerate(rows[1:], start=2):
        cells = [r[cols["order"]] if cols["order"] < len(r) else None]
        cells.append(r[cols["pct"]] if cols["pct"] < len(r) else None)
        if all(c is None or (isinstance(c, str) and not c.strip()) for c in cells):
            continue
        h, pct = cells
        if isinstance(h, bool) or not isinstance(h, (int, float)) or not math.isfinite(h):
            raise InputError(table, k, "order", h, "expected a harmonic order (a number)")
        if h < min_order:
            lim = "≥ 1 (DC is not a harmonic loss here)" if min_order == 1 else f"≥ {min_order:g}"
            raise InputError(table, k, "order", h, f"expected an order {lim}")
        if isinstance(pct, bool) or not isinstance(pct, (int, float)) or not math.isfinite(pct):
            raise InputError(table, k, "pct", pct, "expected a percentage of I1 (a number ≥ 0)")
        if pct < 0:
            raise InputError(table, k, "pct", pct, "expected a percentage of I1 ≥ 0")
        if pct > MAX_MAGNITUDE or h > MAX_ORDER:
            col, v, lim = (
                ("pct", pct, f"{MAX_MAGNITUDE:g} %")
                if pct > MAX_MAGNITUDE
                else ("order", h, f"{MAX_ORDER:,}")
            )
            raise InputError(table, k, col, v, f"expected at most {lim} (the tables' range)")
        rounded = round(float(h), 9)
        if rounded in seen:
            raise InputError(
                table, k, "order", h, f"order {h:g} is already given in row {seen[rounded]}"
            )
        seen[rounded] = k
        if abs(h - 1) <= _ORDER_ATOL and abs(pct - 100) > 1e-9:
            raise InputError(
                table, k, "pct", pct, "the order-1 row must be 100 (the spectrum is in % of I1)"
            )
        orders.append(float(h))
        pcts.append(float(pct))
    if not any(abs(h - 1) <= _ORDER_ATOL for h in orders):
        raise TableError(table, "no row of order 1 (the fundamental, pct 100)")
    return np.array(orders), np.array(pcts)


def _check_spectrum(orders: Any, pct: Any) -> tuple[np.ndarray, np.ndarray]:
    h = np.asarray(orders, dtype=float).reshape(-1)
    p = np.asarray(pct, dtype=float).reshape(-1)
    if h.size != p.size or h.size == 0:
        raise InputError(
            "argument", None, "spectrum", (h.size, p.size), "expected as many orders as pct"
        )
    if not (np.all(np.isfinite(h)) and np.all(np.isfinite(p))):
        raise InputError("argument", None, "spectrum", None, "expected finite orders and pct")
    if np.any(h < 1) or np.any(p < 0):
        raise InputError("argument", None, "spectrum", None, "expected orders ≥ 1 and pct ≥ 0")
    if not np.any(np.abs(h - 1) <= _ORDER_ATOL):
        raise InputError("argument", None, "spectrum", None, "expected an order-1 row")
    return h, p


def harmonic_loss_factor(orders: Any, pct: Any, exponent: float = 2.0) -> float:
    """Σ (I_h/I₁)²·h^exponent / Σ (I_h/I₁)²: F_HL for exponent 2, F_HL-STR for 0.8."""
    h, p = _check_spectrum(orders, pct)
    w = (p / 100.0) ** 2
    return float(np.sum(w * h**exponent) / np.sum(w))


def k_factor(orders: Any, pct: Any) -> float:
    """K = Σ I_h(pu)²·h², I_h per unit of the RMS of the given current (UL 1561/1562,
    from memory)."""
    h, p = _check_spectrum(orders, pct)
    i_pu = (p / 100.0) / math.sqrt(float(np.sum((p / 100.0) ** 2)))
    return float(np.sum(i_pu**2 * h**2))


@dataclass(frozen=True)
class TransformerDerating:
    """Outcome of :func:`transformer_derating` (per-unit values of the rated I²R loss and
    of the rated current)."""

    F_HL: float
    F_HL_STR: float
    K_factor: float
    I_max_pu: float
    p_ec_pu: float
    p_osl_pu: float | None
    i_rms_over_i1: float

    @property
    def p_ll_pu(self) -> float | None:
        """Load loss at rated RMS current with this spectrum (pu of rated I²R)."""
        if self.p_osl_pu is None:
            return None
        return 1 + self.F_HL * self.p_ec_pu + self.F_HL_STR * self.p_osl_pu

    @property
    def p_ll_rated_pu(self) -> float | None:
        if self.p_osl_pu is None:
            return None
        return 1 + self.p_ec_pu + self.p_osl_pu

    @property
    def i_equal_load_loss_pu(self) -> float | None:
        """RMS current (pu) at which the total load loss equals its rated value."""
        if self.p_osl_pu is None:
            return None
        assert self.p_ll_pu is not None and self.p_ll_rated_pu is not None
        return math.sqrt(self.p_ll_rated_pu / self.p_ll_pu)

    basis = (
        "IEEE Std C57.110 and UL 1561/1562 formulas from memory (checked against their closed "
        "forms, not a worked example of the standard); I_max_pu: winding hot spot, counts "
        "I²R and winding eddy loss only (other stray and no-load loss excluded); per unit of "
        "rated current and rated I²R loss. Screening calculation: the maker decides."
    )

    def rows(self) -> list[list[Any]]:
        """``quantity | value``: F_HL, F_HL_STR, K_factor, I_max_pu, then the load-loss
        rows (empty text without p_osl_pu) and the basis."""

        def cell(x: float | None) -> Any:
            return "" if x is None else x

        return [
            ["quantity", "value"],
            ["F_HL", self.F_HL],
            ["F_HL_STR", self.F_HL_STR],
            ["K_factor", self.K_factor],
            ["I_max_pu", self.I_max_pu],
            ["P_LL_pu", cell(self.p_ll_pu)],
            ["P_LL_R_pu", cell(self.p_ll_rated_pu)],
            ["I_equal_load_loss_pu", cell(self.i_equal_load_loss_pu)],
            ["Irms_over_I1", self.i_rms_over_i1],
            [
                "basis",
                self.basis
                + ("" if self.p_osl_pu is not None else " Give p_osl_pu for the load-loss rows."),
            ],
        ]


def _per_unit(value: Any, name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("argument", None, name, value, "expected a per-unit loss ≥ 0 (0.08)")
    if value < 0:
        raise InputError("argument", None, name, value, "expected a per-unit loss ≥ 0 (0.08)")
    return float(value)


def transformer_derating(
    orders: Any, pct: Any, p_ec_pu: float, p_osl_pu: float | None = None
) -> TransformerDerating:
    """Harmonic loss factors, K-factor and maximum permissible current of a transformer.

    Parameters
    ----------
    orders, pct : arrays
        Harmonic orders (≥ 1, one of them 1) and currents in % of I₁ (order 1 → 100).
    p_ec_pu : float
        Rated winding eddy-current loss in per unit of the rated I²R loss (at the hot spot
        for the hot-spot limit), from the maker or the test report.
    p_osl_pu : float, optional
        Rated other stray loss, per unit of the rated I²R loss; needed only for the
        load-loss figures.

    Examples
    --------
    Fundamental plus 20 % fifth harmonic, P_EC-R = 0.1 pu:

    >>> d = transformer_derating([1, 5], [100, 20], 0.1)
    >>> round(d.F_HL, 12), round(d.I_max_pu, 12)
    (1.923076923077, 0.960510616892)
    """
    h, p = _check_spectrum(orders, pct)
    pec = _per_unit(p_ec_pu, "p_ec_pu")
    posl = None if p_osl_pu is None else _per_unit(p_osl_pu, "p_osl_pu")
    f_hl = harmonic_loss_factor(h, p, 2.0)
    f_str = harmonic_loss_factor(h, p, STRAY_EXPONENT)
    i_max = math.sqrt((1 + pec) / (1 + f_hl * pec))
    ratio = math.sqrt(float(np.sum((p / 100.0) ** 2)))
    return TransformerDerating(f_hl, f_str, k_factor(h, p), i_max, pec, posl, ratio)


@dataclass(frozen=True)
class ItemDerating:
    """:func:`transformer_derating` of a study transformer's own current, with its load:
    ``load_pu`` = I_rms / I_rated at the end whose line current is the winding current."""

    derating: TransformerDerating
    item: str
    end: str
    orders: np.ndarray
    pct: np.ndarray
    i_rms_a: float
    i_rated_a: float
    end_note: str

    @property
    def load_pu(self) -> float:
        return self.i_rms_a / self.i_rated_a

    @property
    def load_over_i_max(self) -> float:
        """load_pu / I_max_pu: at most 1 when the winding hot spot stays within its rating."""
        return self.load_pu / self.derating.I_max_pu

    def rows(self) -> list[list[Any]]:
        """The rows of :meth:`TransformerDerating.rows`, then I_rms_a, I_rated_a, load_pu,
        load_over_I_max and the basis."""
        head = self.derating.rows()
        return [
            *head[:-1],
            ["I_rms_a", self.i_rms_a],
            ["I_rated_a", self.i_rated_a],
            ["load_pu", self.load_pu],
            ["load_over_I_max", self.load_over_i_max],
            [
                "basis",
                f"{head[-1][1]} Spectrum: the line current of {self.item!r} at its {self.end} "
                f"({self.end_note}), every studied order, from the harmonic study.",
            ],
        ]


_ZERO_RTOL = 1e-9  # zero-sequence current below this fraction of the RMS is round-off


def study_item(study: Any, item: str, kind: str) -> Any:
    """The item ``item`` of a harmonic study's equipment table, refused unless a ``kind``."""
    it = study.equipment.item(item)
    if it.kind != kind:
        raise InputError(
            "argument", None, "item", item, f"{it.name!r} is a {it.kind}; expected a {kind}"
        )
    return it


def item_derating(
    study: Any,
    item: str,
    p_ec_pu: float,
    p_osl_pu: float | None = None,
    end: str | None = None,
) -> ItemDerating:
    """Derate a transformer of a three-phase harmonic study
    (:func:`xlfuncs.power.harmonic_study`) for the harmonic current the study puts
    through it, and compare its load with the permissible current.

    The spectrum is the transformer's line current at ``end`` in % of its fundamental.
    Ampere-turns balance (no magnetising branch), so in per unit both windings carry the
    same current — except that a delta winding's line current lacks the zero-sequence
    current circulating in the delta. The default end is therefore the star winding's
    (``bus_to`` unless the LV winding is a delta facing a star HV); an end at a delta
    winding is refused when the other winding carries zero-sequence current.
    ``I_rated`` = kVA / (√3 · kV of that winding).
    """
    from ..power.vector_group import sequence_of

    it = study_item(study, item, "transformer")
    vg = it.group
    if end is None or (isinstance(end, str) and not end.strip()):
        e = "bus" if vg.lv == "d" and vg.hv != "D" else "bus_to"
        note = "the star winding" if (vg.lv != "d" or vg.hv != "D") else "delta-delta"
    else:
        e = str(end).strip().lower()
        note = "as given"
    cur = study.branch_current(it.name, e)  # validates the end
    winding = vg.hv if e == "bus" else vg.lv
    if winding.lower() == "d":
        other = study.branch_current(it.name, "bus_to" if e == "bus" else "bus")
        zero = np.array([sequence_of(int(h)) == "0" for h in study.orders])
        zs = float(np.sqrt(np.sum(np.abs(other.phasors[zero]) ** 2)))
        if zs > _ZERO_RTOL * float(np.sqrt(np.sum(np.abs(other.phasors) ** 2))):
            raise InputError(
                "argument",
                None,
                "winding_end",
                end,
                f"the line current at the delta winding of {it.name!r} lacks the zero-sequence "
                "current circulating in the delta; use the star winding's end",
            )
    rms = np.abs(cur.phasors) / math.sqrt(2)
    total = float(np.sqrt(np.sum(rms**2)))
    i1 = float(rms[0])
    if total == 0 or i1 <= 1e-12 * total:
        raise InputError(
            "argument",
            None,
            "item",
            item,
            f"transformer {it.name!r} carries no fundamental current in the study (no load to "
            "derate)",
        )
    pct = 100 * rms / i1
    pct[0] = 100.0
    orders = study.orders.astype(float)
    kv = it["kv_hv"] if e == "bus" else it["kv_lv"]
    i_rated = it["kva"] * 1e3 / (math.sqrt(3) * kv * 1e3)
    return ItemDerating(
        transformer_derating(orders, pct, p_ec_pu, p_osl_pu),
        it.name,
        e,
        orders,
        pct,
        total,
        i_rated,
        f"{vg.name}, {note}",
    )
