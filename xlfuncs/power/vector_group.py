"""Transformer vector groups (IEC 60076-1 notation) and what they do to each sequence.

A vector group names the high-voltage winding (capital letters), the low-voltage winding
(small letters) and a clock number: ``Dyn11`` is a delta HV winding, a star LV winding with
its neutral brought out (and, in this model, grounded), and a phase displacement of
11 × 30° — the LV positive-sequence voltage lags the HV one by 330°, i.e. leads it by 30°
(IEC 60076-1, connection symbols and phase displacement).

Accepted windings: ``D``/``d`` (delta), ``Y``/``y`` (star, neutral not grounded),
``YN``/``yn`` (star, neutral grounded). Zigzag windings (``z``, ``zn``) and three-winding
groups are refused. Star-star and delta-delta groups have an even clock number, star-delta
and delta-star ones an odd number (the windings' voltages are then 30° apart).

What each sequence sees (common practice; e.g. J. J. Grainger and W. D. Stevenson, *Power
System Analysis*, 1994, ch. 11 "symmetrical components" — from memory):

* positive sequence: LV = HV shifted by −clock × 30°;
* negative sequence: LV = HV shifted by +clock × 30° (the opposite way);
* zero sequence: passes between the sides only for a grounded star on both sides
  (``YNyn``, shift 0° or 180°); a grounded star facing a delta sees the transformer's
  zero-sequence impedance to ground (the delta circulates the current); a delta winding
  and an ungrounded star are open circuits.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from ..errors import InputError

__all__ = ["SEQUENCES", "VectorGroup", "parse_vector_group", "sequence_of"]

SEQUENCES = ("+", "-", "0")

_GROUP = re.compile(r"(YN|Y|D)(YN|Y|D)(\d{1,2})")
ACCEPTED = (
    "expected an IEC 60076-1 vector group: HV winding D, Y or YN, LV winding d, y or yn, "
    "clock number 0-11 (e.g. Dyn11, Dyn1, YNd11, YNyn0, Yyn0, Dd0)"
)


def sequence_of(order: int) -> str:
    """Sequence of harmonic ``order`` in balanced operation: h ≡ 1 (mod 3) positive,
    h ≡ 2 negative, h ≡ 0 zero (common practice)."""
    return ("0", "+", "-")[int(order) % 3]


def wrap_deg(angle: int) -> int:
    """An angle in whole degrees, wrapped to (−180, 180]."""
    a = angle % 360
    return a - 360 if a > 180 else a


@dataclass(frozen=True)
class VectorGroup:
    """A two-winding vector group: ``hv`` in ``Y YN D``, ``lv`` in ``y yn d``, ``clock``."""

    hv: str
    lv: str
    clock: int

    @property
    def name(self) -> str:
        return f"{self.hv}{self.lv}{self.clock}"

    @property
    def passes_zero(self) -> bool:
        """Zero-sequence current passes from one side to the other (``YNyn``)."""
        return self.hv == "YN" and self.lv == "yn"

    @property
    def zero_to_ground(self) -> str | None:
        """``"hv"`` or ``"lv"``: the grounded-star side that faces a delta and so sees the
        zero-sequence impedance to ground; None when no side does."""
        if self.hv == "YN" and self.lv == "d":
            return "hv"
        if self.lv == "yn" and self.hv == "D":
            return "lv"
        return None

    def grounded(self, side: str) -> bool:
        """True when the winding on ``side`` (``"hv"``/``"lv"``) is a grounded star."""
        return (self.hv if side == "hv" else self.lv).lower() == "yn"

    def shift_deg(self, sequence: str) -> int | None:
        """Angle (whole degrees, wrapped to (−180, 180]) by which LV-side quantities of
        ``sequence`` are rotated against the HV side; None where the sequence does not
        pass (zero sequence of every group but ``YNyn``)."""
        if sequence == "+":
            return wrap_deg(-30 * self.clock)
        if sequence == "-":
            return wrap_deg(30 * self.clock)
        if sequence == "0":
            return wrap_deg(-30 * self.clock) if self.passes_zero else None
        raise ValueError(f"unknown sequence {sequence!r}")  # pragma: no cover - internal


def parse_vector_group(cell: Any, table: str = "equipment", row: int | None = None) -> VectorGroup:
    """Parse a vector group such as ``Dyn11`` (letters case-insensitive, spaces ignored).

    >>> parse_vector_group("Dyn11").shift_deg("+")
    30
    >>> parse_vector_group("YNd1").zero_to_ground
    'hv'
    """
    if not isinstance(cell, str) or not cell.strip():
        raise InputError(table, row, "connection", cell, ACCEPTED)
    text = re.sub(r"[\s\-_]+", "", cell).upper()
    if "Z" in text:
        raise InputError(
            table, row, "connection", cell, "zigzag windings (z, zn) are not modelled; " + ACCEPTED
        )
    m = _GROUP.fullmatch(text)
    if m is None:
        raise InputError(table, row, "connection", cell, ACCEPTED)
    hv, lv, clock_txt = m.group(1), m.group(2).lower(), m.group(3)
    clock = int(clock_txt)
    if clock > 11:
        raise InputError(table, row, "connection", cell, "the clock number is 0 to 11")
    same = (hv == "D") == (lv == "d")
    if same and clock % 2:
        kind = "delta-delta" if hv == "D" else "star-star"
        raise InputError(
            table,
            row,
            "connection",
            cell,
            f"a {kind} transformer has an even clock number (0, 2, …, 10); " + ACCEPTED,
        )
    if not same and clock % 2 == 0:
        kind = "delta-star" if hv == "D" else "star-delta"
        raise InputError(
            table,
            row,
            "connection",
            cell,
            f"a {kind} transformer has an odd clock number (1, 3, …, 11); " + ACCEPTED,
        )
    return VectorGroup(hv, lv, clock)
