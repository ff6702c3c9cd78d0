"""Numbers as engineers type them: SI prefixes, optional unit symbols, IEC 60062 codes.

Accepted forms (``unit`` is the symbol expected for the quantity, e.g. ``"F"``):

* plain numbers: ``1e-6``, ``-3.3``, ``0.1`` (spreadsheets send floats);
* number + SI prefix: ``4.7u``, ``4.7µ``, ``10k``, ``1M`` (mega), ``1m`` (milli);
* number + optional prefix + unit: ``4.7 µF``, ``4.7uF``, ``10 kΩ``, ``10 kohm``, ``2.2 mH``;
* resistor/capacitor letter codes of IEC 60062: ``4k7`` (4.7 k), ``2R2`` (2.2), ``4n7``.

``M`` is mega and ``m`` is milli; ``f`` is femto while ``F`` is the farad.
"""

from __future__ import annotations

import math
import re
from typing import Any

from .errors import InputError, UnitError

__all__ = ["PREFIXES", "UNIT_NAMES", "parse_number"]

PREFIXES: dict[str, float] = {
    "f": 1e-15,
    "p": 1e-12,
    "n": 1e-9,
    "u": 1e-6,
    "µ": 1e-6,  # MICRO SIGN
    "μ": 1e-6,  # GREEK SMALL LETTER MU
    "m": 1e-3,
    "k": 1e3,
    "M": 1e6,
    "G": 1e9,
    "T": 1e12,
}
_PREFIX_HELP = "use f p n u µ m k M G T"

# Canonical symbol -> spellings accepted (compared after the rules in _unit_matches).
_UNIT_SPELLINGS: dict[str, tuple[str, ...]] = {
    "Ω": ("Ω", "Ω", "ohm", "ohms"),  # OHM SIGN and GREEK CAPITAL OMEGA
    "H": ("H",),
    "F": ("F",),
    "S": ("S", "A/V"),
    "V": ("V",),
    "A": ("A",),
    "Hz": ("Hz",),
    "rad/s": ("rad/s",),
    "W": ("W",),
    "VA": ("VA",),
    "var": ("var", "VAr"),
    "°": ("°", "deg"),
    # amplitude spectral densities of noise sources
    "V/√Hz": ("V/√Hz", "V/rtHz", "V/sqrt(Hz)", "V/sqrtHz"),
    "A/√Hz": ("A/√Hz", "A/rtHz", "A/sqrt(Hz)", "A/sqrtHz"),
}
UNIT_NAMES: dict[str, str] = {
    "Ω": "ohms",
    "H": "henries",
    "F": "farads",
    "S": "siemens",
    "V": "volts",
    "A": "amperes",
    "Hz": "hertz",
    "rad/s": "radians per second",
    "W": "watts",
    "VA": "volt-amperes",
    "var": "vars",
    "°": "degrees",
    "V/√Hz": "volts per root hertz",
    "A/√Hz": "amperes per root hertz",
}

_NUMBER = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")
_LETTER_CODE = re.compile(r"^\s*(\d+)([pnuµμmkMGR])(\d+)\s*$")


def _which_unit(symbol: str) -> str | None:
    """Canonical unit for ``symbol``, or None."""
    for canon, spellings in _UNIT_SPELLINGS.items():
        for sp in spellings:
            if sp.lower() in ("ohm", "ohms"):
                if symbol.lower() == sp:
                    return canon
            elif symbol == sp:
                return canon
    return None


def parse_number(
    value: Any,
    *,
    unit: str | None,
    table: str,
    row: int | None,
    column: str,
) -> float:
    """Turn a cell into a float, honouring SI prefixes and checking the unit.

    Parameters
    ----------
    value : float, int or str
        The cell as a spreadsheet delivers it.
    unit : str or None
        Canonical unit symbol that fits the quantity (``"F"``, ``"Ω"``...); ``None`` for
        a dimensionless number, which then accepts no unit symbol.
    table, row, column :
        Where the value came from, for the error message.

    Returns
    -------
    float
        The value in base SI units. Never NaN or infinite.

    Examples
    --------
    >>> parse_number("4.7 µF", unit="F", table="parts", row=2, column="value")
    4.7e-06
    >>> parse_number("4k7", unit="Ω", table="parts", row=3, column="value")
    4700.0
    """
    if isinstance(value, bool):
        raise InputError(table, row, column, value, "expected a number, not TRUE/FALSE")
    if isinstance(value, (int, float)):
        number = float(value)
        if not math.isfinite(number):
            raise InputError(table, row, column, value, "expected a finite number")
        return number
    if not isinstance(value, str):
        raise InputError(table, row, column, value, "expected a number or text like '4.7u'")

    code = _LETTER_CODE.match(value)
    if code:
        whole, letter, frac = code.groups()
        scale = 1.0 if letter == "R" else PREFIXES[letter]
        return float(f"{whole}.{frac}") * scale

    match = _NUMBER.match(value)
    if not match:
        raise InputError(
            table, row, column, value, "expected a number, optionally with an SI prefix (4.7u)"
        )
    number = float(match.group(1))
    if not math.isfinite(number):
        raise InputError(table, row, column, value, "expected a finite number")
    suffix = match.group(2)
    if suffix == "":
        return number

    expected_unit = f"{unit} ({UNIT_NAMES[unit]})" if unit else "no unit (a plain ratio)"
    # 1. the suffix is the unit alone
    canon = _which_unit(suffix)
    if canon is not None:
        if canon == unit:
            return number
        raise UnitError(
            table,
            row,
            column,
            value,
            f"unit {suffix!r} does not fit here; expected {expected_unit}",
        )
    # 2. prefix, then an optional unit
    head, rest = suffix[0], suffix[1:].strip()
    if head in PREFIXES:
        if rest == "":
            return number * PREFIXES[head]
        canon = _which_unit(rest)
        if canon is None:
            raise UnitError(
                table, row, column, value, f"unknown unit {rest!r}; expected {expected_unit}"
            )
        if canon != unit:
            raise UnitError(
                table,
                row,
                column,
                value,
                f"unit {rest!r} does not fit here; expected {expected_unit}",
            )
        return number * PREFIXES[head]
    raise UnitError(table, row, column, value, f"unknown unit prefix {head!r} ({_PREFIX_HELP})")
