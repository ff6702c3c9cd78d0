"""Reading single-cell worksheet arguments (names, numbers, counts) with one-line errors."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import InputError

__all__ = ["blank", "freeze", "name_arg", "num_arg", "points_arg", "quantity_arg"]


def freeze(value: Any) -> Any:
    """A hashable copy of a worksheet value (2-D lists become tuples of tuples)."""
    if isinstance(value, (list, tuple)):
        return tuple(freeze(v) for v in value)
    if isinstance(value, np.ndarray):
        return freeze(value.tolist())
    return value


def name_arg(value: Any, column: str) -> str:
    if value is None or (isinstance(value, str) and not value.strip()):
        raise InputError("argument", None, column, expected="missing name")
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError("argument", None, column, value, "expected a name")
        return str(int(value)) if value.is_integer() else str(value)
    if isinstance(value, (list, tuple)):
        raise InputError("argument", None, column, expected="expected one cell, not a range")
    return str(value).strip()


def quantity_arg(value: Any) -> str | None:
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    q = str(value).strip().upper()
    if q not in ("V", "I"):
        raise InputError("argument", None, "quantity", value, "expected V or I")
    return q


def points_arg(value: Any, column: str = "points") -> int | None:
    if value is None or value == "":
        return None
    if (
        isinstance(value, bool)
        or not isinstance(value, (int, float))
        or not float(value).is_integer()
    ):
        raise InputError("argument", None, column, value, "expected a whole number")
    return int(value)


def num_arg(value: Any, column: str, default: float | None = None) -> float:
    if value is None or value == "":
        if default is None:
            raise InputError("argument", None, column, expected="missing number")
        return default
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError("argument", None, column, value, "expected a number")
    return float(value)


def blank(value: float | None) -> Any:
    """A cell value: the number, or empty text where there is none (NaN)."""
    return "" if value is None or not math.isfinite(value) else value
