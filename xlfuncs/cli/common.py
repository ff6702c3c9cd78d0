"""What every command shares: reading CSV tables, numbers typed with SI prefixes, numbers
printed in engineering notation, aligned tables, file errors."""

from __future__ import annotations

import argparse
import csv
import math
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, XlfuncsError
from ..tables import parse_cell

__all__ = [
    "XlfuncsFileError",
    "count_arg",
    "eng",
    "format_table",
    "hz_arg",
    "read_csv_table",
]

# prefixes for printing (the micro sign, as the tables accept it)
_OUT_PREFIXES = {
    -15: "f",
    -12: "p",
    -9: "n",
    -6: "µ",
    -3: "m",
    0: "",
    3: "k",
    6: "M",
    9: "G",
    12: "T",
}


def eng(value: Any, unit: str = "", digits: int = 4, prefix: bool = True) -> str:
    """A number in engineering notation with an SI prefix: ``eng(20620, "A")`` →
    ``'20.62 kA'``, ``eng(1.2e-6, "F")`` → ``'1.2 µF'``, ``eng(0.5)`` → ``'500m'``.

    ``digits`` significant digits (trailing zeros dropped); magnitudes beyond the prefixes
    (below 1e-15, from 1e15) in exponent form; ``prefix=False`` for quantities that take no
    prefix (degrees, percent). Text passes through unchanged."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return str(value)
    x = float(value)
    sep = " " if unit else ""
    if not math.isfinite(x):
        return f"{x}{sep}{unit}"
    if x == 0.0:
        return f"0{sep}{unit}"
    if not prefix:
        return f"{x:.{digits}g}{sep}{unit}"
    exp3 = 3 * math.floor(math.log10(abs(x)) / 3)
    mant = float(f"{x / 10.0**exp3:.{digits}g}")
    if abs(mant) >= 1000:  # 999.96 rounds up to the next prefix
        exp3 += 3
        mant = float(f"{x / 10.0**exp3:.{digits}g}")
    if exp3 not in _OUT_PREFIXES:
        return f"{x:.{digits - 1}e}{sep}{unit}"
    return f"{mant:.{digits}g}{sep}{_OUT_PREFIXES[exp3]}{unit}"


_NO_PREFIX = ("_deg", "_pct", "angle", "phase")


def format_table(
    rows: Sequence[Sequence[Any]],
    units: Sequence[str] | None = None,
    *,
    engineering: bool | None = None,
) -> str:
    """Aligned plain-text table.

    With ``engineering`` (the default when ``units`` are given) numbers print through
    :func:`eng` — SI prefixes, 4 significant digits, degrees and percentages without a
    prefix — and ``units`` (one per column) form a second header line. Without it numbers
    print with 6 significant digits (``%.6g``), as commands that parse their own output
    expect."""
    header = [str(h) for h in rows[0]]
    use_eng = units is not None if engineering is None else engineering
    no_prefix = [any(k in h.lower() for k in _NO_PREFIX) for h in header]

    def fmt(v: Any, col: int) -> str:
        if isinstance(v, (np.floating, np.integer)):
            v = float(v)
        if not isinstance(v, float):
            return str(v)
        if not math.isfinite(v):  # a bug of ours: no non-finite number leaves the package
            raise ValueError(f"format_table: {v!r} in column {header[col]!r}")
        return eng(v, prefix=not no_prefix[col]) if use_eng else f"{v:.6g}"

    cells = [header]
    if units is not None:
        if len(units) != len(header):  # a bug of ours, not of the user's input
            raise ValueError(f"format_table: {len(units)} units for {len(header)} columns")
        cells.append([u or "" for u in units])
    cells += [[fmt(v, i) for i, v in enumerate(r)] for r in rows[1:]]
    heads = 2 if units is not None else 1
    widths = [max(len(r[i]) for r in cells) for i in range(len(header))]
    lines = []
    for k, r in enumerate(cells):
        line = "  ".join(
            c.rjust(w) if k >= heads else c.ljust(w) for c, w in zip(r, widths, strict=True)
        )
        lines.append(line.rstrip() if use_eng else line)
        if k == heads - 1:
            lines.append("  ".join("-" * w for w in widths))
    return "\n".join(lines)


def read_csv_table(path: str | Path) -> list[list[Any]]:
    """A CSV file as a worksheet would deliver it: empty → None, numbers → float."""
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            reader = csv.reader(fh)
            rows = []
            try:
                for r in reader:
                    rows.append(r)
            except csv.Error as exc:
                raise XlfuncsFileError(
                    f"{str(p)!r} row {reader.line_num}: unreadable CSV ({exc}); tables hold "
                    "short values — is this the right file?"
                ) from None
    except OSError as exc:
        raise XlfuncsFileError(f"cannot read {str(p)!r}: {exc.strerror or exc}") from None
    except UnicodeDecodeError:
        raise XlfuncsFileError(f"{str(p)!r} is not UTF-8 text (save the CSV as UTF-8)") from None
    if rows and len(rows[0]) == 1:
        for sep, name in ((";", "semicolon"), ("\t", "tab")):
            if sep in rows[0][0]:
                raise XlfuncsFileError(
                    f"{str(p)!r} row 1: {name}-separated? the header {rows[0][0]!r} is one "
                    "column; save the table as comma-separated CSV"
                )
    if rows:
        width = len(rows[0])
        for num, r in enumerate(rows[1:], start=2):
            if len(r) > width and any(c.strip() for c in r[width:]):
                raise XlfuncsFileError(
                    f"{str(p)!r} row {num}: {len(r)} cells but the header has {width} (a value "
                    'with an unquoted comma? write 1.5k, or quote it: "1,5k")'
                )
    return [[parse_cell(c) for c in r] for r in rows]


class XlfuncsFileError(XlfuncsError, OSError):
    """A file or argument named on the command line cannot be used."""


def _number(text: str, unit: str | None, option: str) -> float:
    from ..units import parse_number

    try:
        return parse_number(text, unit=unit, table="argument", row=None, column=option)
    except InputError as exc:
        raise argparse.ArgumentTypeError(exc.expected or str(exc)) from None


def hz_arg(text: str) -> float:
    """A frequency as the tables take it: ``5k``, ``5 kHz``, ``2.5e3``."""
    return _number(text, "Hz", "frequency")


def number_arg(unit: str | None = None) -> Callable[[str], float]:
    """A number as the tables take it, in ``unit`` (``48``, ``48 V``, ``10m``, ``4.7u``)."""

    def parse(text: str) -> float:
        return _number(text, unit, unit or "number")

    return parse


def band_stop_arg(text: str) -> float:
    """A band's last frequency: ``hz_arg``, or ``inf`` for all frequencies."""
    if text.strip().lower() in ("inf", "infinity", "∞"):
        return math.inf
    return hz_arg(text)


def _whole(text: str, least: int) -> int:
    x = _number(text, None, "count")
    if not x.is_integer() or x < least:
        raise argparse.ArgumentTypeError(f"expected a whole number ≥ {least}, got {text!r}")
    return int(x)


def count0_arg(text: str) -> int:
    """A whole number ≥ 0 (SI prefixes allowed)."""
    return _whole(text, 0)


def count_arg(text: str) -> int:
    """A whole number ≥ 1 (SI prefixes allowed: ``1k`` = 1000)."""
    return _whole(text, 1)


def warn_without_sources(
    args: argparse.Namespace, command: str, changes: str = "the result"
) -> None:
    """Commands that zero the sources: without the sources table a supply's nodes dangle and
    the network studied is not the one drawn, so say so on stderr."""
    if getattr(args, "sources", None) is None:
        print(
            f"xlfuncs: warning: {command} without --sources: parts that connect only to a "
            f"source are left dangling and a supply's impedance is missing, which changes "
            f"{changes}; give the sources table (sources are zeroed, not removed)",
            file=sys.stderr,
        )
