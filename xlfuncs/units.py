"""Numbers as engineers type them: SI prefixes, optional unit symbols, IEC 60062 codes.

Accepted forms (``unit`` is the symbol expected for the quantity, e.g. ``"F"``):

* plain numbers: ``1e-6``, ``-3.3``, ``0.1`` (spreadsheets send floats);
* number + SI prefix: ``4.7u``, ``4.7µ``, ``10k``, ``1M`` (mega), ``1m`` (milli);
* number + optional prefix + unit: ``4.7 µF``, ``4.7uF``, ``10 kΩ``, ``10 kohm``, ``2.2 mH``;
* resistor/capacitor letter codes of IEC 60062: ``4k7`` (4.7 k), ``2R2`` (2.2), ``4n7``.

``M`` is mega and ``m`` is milli; ``f`` is femto while ``F`` is the farad.

Every value returned is finite and its magnitude is 0 or at most ``MAX_MAGNITUDE``
(1e24 in base units): far beyond any physical part or signal, and small enough that
the products a solve forms (conductances, powers, squared RMS values) stay finite in
double precision. Parsing takes time linear in the length of the text.
"""

from __future__ import annotations

import math
import re
from typing import Any

from .errors import InputError, UnitError

__all__ = ["MAX_MAGNITUDE", "PREFIXES", "UNIT_NAMES", "check_scalar", "parse_number"]

MAX_MAGNITUDE = 1e24

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

# Canonical symbol -> spellings accepted (compared after the rules in _which_unit).
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
# spelling -> canonical symbol; "ohm"/"ohms" also match in any letter case
_SPELLING: dict[str, str] = {sp: c for c, sps in _UNIT_SPELLINGS.items() for sp in sps}
_SPELLING_FOLDED = {"ohm": "Ω", "ohms": "Ω"}

# A number at the start of the (stripped) text; re.match stops at the first success, so
# the scan is linear in the text's length whatever follows the number.
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_LETTER_CODE = re.compile(r"(\d+)([pnuµμmkMGR])(\d+)")
_DECIMAL_COMMA = re.compile(r"[+-]?\d+,\d+")


def _which_unit(symbol: str) -> str | None:
    """Canonical unit for ``symbol``, or None."""
    canon = _SPELLING.get(symbol)
    if canon is None:
        canon = _SPELLING_FOLDED.get(symbol.lower())
    return canon


def _finite(number: float, value: Any, table: str, row: int | None, column: str) -> float:
    if not math.isfinite(number):
        raise InputError(table, row, column, value, "expected a finite number")
    if abs(number) > MAX_MAGNITUDE:
        raise InputError(
            table,
            row,
            column,
            value,
            f"magnitude {abs(number):.3g} is beyond {MAX_MAGNITUDE:g} (base units); "
            "check the exponent and prefix",
        )
    return number


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
        The value in base SI units: finite, magnitude 0 or ≤ ``MAX_MAGNITUDE``.

    Examples
    --------
    >>> parse_number("4.7 µF", unit="F", table="parts", row=2, column="value")
    4.7e-06
    >>> parse_number("4k7", unit="Ω", table="parts", row=3, column="value")
    4700.0
    """
    if isinstance(value, float):  # the common case first: spreadsheets send floats
        return _finite(value, value, table, row, column)
    if isinstance(value, bool):
        raise InputError(table, row, column, value, "expected a number, not TRUE/FALSE")
    if isinstance(value, int):
        try:
            number = float(value)
        except OverflowError:
            raise InputError(table, row, column, value, "expected a finite number") from None
        return _finite(number, value, table, row, column)
    if not isinstance(value, str):
        raise InputError(table, row, column, value, "expected a number or text like '4.7u'")
    return _parse_text(value, unit, table, row, column)


def _parse_text(value: str, unit: str | None, table: str, row: int | None, column: str) -> float:
    text = value.strip()
    code = _LETTER_CODE.fullmatch(text)
    if code:
        whole, letter, frac = code.groups()
        scale = 1.0 if letter == "R" else PREFIXES[letter]
        return _finite(float(f"{whole}.{frac}") * scale, value, table, row, column)

    match = _NUMBER.match(text)
    if not match:
        raise InputError(
            table, row, column, value, "expected a number, optionally with an SI prefix (4.7u)"
        )
    comma = _DECIMAL_COMMA.match(text)
    if comma:
        raise InputError(table, row, column, value, _decimal_comma_hint(text, comma.end()))
    number = float(match.group(0))  # range checked once scaled by a prefix
    suffix = text[match.end() :].strip()
    if suffix == "":
        return _finite(number, value, table, row, column)

    expected_unit = f"{unit} ({UNIT_NAMES.get(unit, unit)})" if unit else "no unit (a plain ratio)"
    # 1. the suffix is the unit alone
    canon = _which_unit(suffix)
    if canon is not None:
        if canon == unit:
            return _finite(number, value, table, row, column)
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
        if rest != "":
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
        return _finite(number * PREFIXES[head], value, table, row, column)
    raise UnitError(table, row, column, value, f"unknown unit prefix {head!r} ({_PREFIX_HELP})")


def _decimal_comma_hint(text: str, end: int) -> str:
    """'4,7k' → "decimal comma? write 4.7k or 4k7"."""
    number = text[:end]
    whole, frac = number.split(",", 1)
    rest = text[end:].strip()
    dotted = f"{whole}.{frac}{rest}"
    if rest == "" and len(frac) == 3:
        return (
            f"a comma in a number: write {dotted} (decimal point) or {whole}{frac} (no separator)"
        )
    if len(rest) == 1 and rest in PREFIXES:
        return f"decimal comma? write {dotted} or {whole}{rest}{frac}"
    return f"decimal comma? write {dotted}"


def check_scalar(
    value: Any,
    column: str,
    lo: float,
    hi: float,
    what: str,
    *,
    lo_open: bool = False,
    table: str = "argument",
    row: int | None = None,
) -> float:
    """A finite number within ``[lo, hi]`` (``(lo, hi]`` with ``lo_open``), as a float;
    anything else is a one-line error naming ``column`` and saying ``what`` is expected
    (the range is appended)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(table, row, column, value, f"expected {what} (a number)")
    try:
        v = float(value)
    except OverflowError:
        v = math.inf
    inside = (lo < v if lo_open else lo <= v) and v <= hi
    if not (math.isfinite(v) and inside):
        bracket = "(" if lo_open else "["
        raise InputError(table, row, column, value, f"expected {what} in {bracket}{lo:g}, {hi:g}]")
    return v
