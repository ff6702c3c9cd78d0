"""Reading single-cell worksheet arguments (names, numbers, counts) with one-line errors.

Every reader treats None (an argument left out, skipped in the middle of a formula, or
an empty cell) as "not given": the default where there is one, else "missing …".
Numbers are checked against the range the argument can take (finite always; positive,
whole, within a sane ceiling where the quantity needs it), so that nothing absurd
reaches the calculation and nothing non-finite comes out of it.
"""

from __future__ import annotations

import contextlib
import math
from collections.abc import Collection, Iterator
from typing import Any

from ..errors import InputError

__all__ = [
    "FREQ_MAX_HZ",
    "FREQ_MIN_HZ",
    "argument_named",
    "blank",
    "choice_arg",
    "freeze",
    "freq_arg",
    "name_arg",
    "num_arg",
    "points_arg",
    "quantity_arg",
    "whole_arg",
]

# Frequencies a lumped-element network can be asked about (scans, impedances): from
# a period of about 11.6 days to 1 THz; outside it a value is a unit slip, not a study.
FREQ_MIN_HZ = 1e-6
FREQ_MAX_HZ = 1e12


def freeze(value: Any) -> Any:
    """A hashable copy of a worksheet value (2-D lists become tuples of tuples)."""
    if isinstance(value, (list, tuple)):
        return tuple(freeze(v) for v in value)
    if hasattr(value, "tolist") and not isinstance(value, (str, float, int)):
        return freeze(value.tolist())  # a numpy array
    return value


def _given(value: Any) -> bool:
    return not (value is None or (isinstance(value, str) and not value.strip()))


def name_arg(value: Any, column: str) -> str:
    if not _given(value):
        raise InputError("argument", None, column, expected="missing name")
    if isinstance(value, bool):
        raise InputError("argument", None, column, value, "expected a name")
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError("argument", None, column, value, "expected a name")
        return str(int(value)) if value.is_integer() else str(value)
    if isinstance(value, (list, tuple)):
        raise InputError("argument", None, column, expected="expected one cell, not a range")
    return str(value).strip()


def quantity_arg(value: Any) -> str | None:
    if not _given(value):
        return None
    q = str(value).strip().upper() if isinstance(value, str) else None
    if q not in ("V", "I"):
        raise InputError("argument", None, "quantity", value, "expected V or I")
    return q


def _fmt(x: float) -> str:
    return str(int(x)) if float(x).is_integer() and abs(x) <= 1e7 else f"{x:g}"


def _range_text(above: float | None, lo: float | None, hi: float | None, unit: str) -> str:
    u = f" {unit}" if unit else ""
    if lo is not None and hi is not None:
        return f"from {_fmt(lo)} to {_fmt(hi)}{u}"
    if above is not None and hi is not None:
        return f"> {_fmt(above)} and ≤ {_fmt(hi)}{u}"
    if above is not None:
        return f"> {_fmt(above)}{u}"
    if lo is not None:
        return f"≥ {_fmt(lo)}{u}"
    if hi is not None:
        return f"≤ {_fmt(hi)}{u}"
    return ""


def num_arg(
    value: Any,
    column: str,
    default: float | None = None,
    *,
    above: float | None = None,
    lo: float | None = None,
    hi: float | None = None,
    unit: str = "",
) -> float:
    """A finite number, > ``above`` / ≥ ``lo`` / ≤ ``hi`` where given; None → default."""
    if not _given(value):
        if default is None:
            raise InputError("argument", None, column, expected="missing number")
        return default
    rng = _range_text(above, lo, hi, unit)
    expected = f"expected a number {rng}".rstrip()
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("argument", None, column, value, expected)
    x = float(value)
    if (
        (above is not None and not x > above)
        or (lo is not None and x < lo)
        or (hi is not None and x > hi)
    ):
        raise InputError("argument", None, column, value, expected)
    return x


def whole_arg(
    value: Any, column: str, default: int | None = None, *, lo: int, hi: int, unit: str = ""
) -> int:
    """A whole number from ``lo`` to ``hi``; None → default."""
    if not _given(value):
        if default is None:
            raise InputError("argument", None, column, expected="missing whole number")
        return default
    if (
        isinstance(value, bool)
        or not isinstance(value, (int, float))
        or not math.isfinite(value)
        or not float(value).is_integer()
        or not lo <= value <= hi
    ):
        raise InputError(
            "argument",
            None,
            column,
            value,
            f"expected a whole number {_range_text(None, lo, hi, unit)}",
        )
    return int(value)


def choice_arg(value: Any, column: str, choices: Collection[int], default: int) -> int:
    """One of a few whole numbers (an edition, a pulse number); None → default."""
    if not _given(value):
        return default
    ok = (
        not isinstance(value, bool)
        and isinstance(value, (int, float))
        and math.isfinite(value)
        and float(value).is_integer()
        and int(value) in choices
    )
    if not ok:
        text = ", ".join(str(c) for c in sorted(choices))
        raise InputError("argument", None, column, value, f"expected one of {text}")
    return int(value)


def points_arg(
    value: Any, column: str = "points", *, lo: int | None = None, hi: int | None = None
) -> int | None:
    """A whole count (from ``lo`` to ``hi`` when both are given), or None when not given
    (the function's default)."""
    if not _given(value):
        return None
    if lo is None or hi is None:
        if (
            isinstance(value, bool)
            or not isinstance(value, (int, float))
            or not math.isfinite(value)
            or not float(value).is_integer()
        ):
            raise InputError("argument", None, column, value, "expected a whole number")
        return int(value)
    return whole_arg(
        value, column, lo=-(2**63) if lo is None else lo, hi=2**63 if hi is None else hi
    )


def freq_arg(value: Any, column: str, *, dc: bool = False) -> float:
    """A frequency in Hz within [FREQ_MIN_HZ, FREQ_MAX_HZ] (or 0 for DC where allowed)."""
    if dc and not isinstance(value, bool) and value == 0:
        return 0.0
    if not _given(value):
        raise InputError("argument", None, column, expected="missing frequency")
    if (
        isinstance(value, bool)
        or not isinstance(value, (int, float))
        or not math.isfinite(value)
        or not FREQ_MIN_HZ <= value <= FREQ_MAX_HZ
    ):
        rng = _range_text(None, FREQ_MIN_HZ, FREQ_MAX_HZ, "Hz")
        raise InputError(
            "argument",
            None,
            column,
            value,
            f"expected 0 Hz (DC) or a frequency {rng}" if dc else f"expected a frequency {rng}",
        )
    return float(value)


@contextlib.contextmanager
def argument_named(name: str, value: Any) -> Iterator[None]:
    """Name the function's own argument (and its value) in an error raised while the
    core looks ``value`` up: the core's lookups speak of a ``target`` (or of the
    ``quantity`` a node cannot have)."""
    try:
        yield
    except InputError as exc:
        if exc.table == "argument" and exc.column in ("target", "quantity"):
            exc.column = name
            exc.value = value
        raise


def blank(value: float) -> Any:
    """A cell value: the number, or empty text where there is none (NaN)."""
    return "" if not math.isfinite(value) else value
