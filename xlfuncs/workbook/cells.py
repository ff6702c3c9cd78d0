"""A1 cell addresses: column letters, cell and range references (1-based rows/columns).

Small and local, so that reading a workbook does not import a spreadsheet library.
"""

from __future__ import annotations

import re
from functools import lru_cache

__all__ = ["cell_ref", "col_index", "col_letter", "parse_cell", "parse_range"]

_CELL = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]+)$")


@lru_cache(maxsize=4096)
def col_letter(col: int) -> str:
    """1 → ``A``, 28 → ``AB``, 16384 → ``XFD``."""
    if col < 1:
        raise ValueError(f"column {col} < 1")
    out = ""
    while col:
        col, rem = divmod(col - 1, 26)
        out = chr(65 + rem) + out
    return out


@lru_cache(maxsize=4096)
def col_index(letters: str) -> int:
    """``A`` → 1, ``ab`` → 28, ``XFD`` → 16384."""
    n = 0
    for ch in letters.upper():
        if not "A" <= ch <= "Z":
            raise ValueError(f"not a column: {letters!r}")
        n = n * 26 + ord(ch) - 64
    return n


def cell_ref(row: int, col: int) -> str:
    return f"{col_letter(col)}{row}"


def parse_cell(ref: str) -> tuple[int, int]:
    """``B14`` (or ``$B$14``) → (14, 2)."""
    m = _CELL.match(ref.strip())
    if m is None:
        raise ValueError(f"not a cell reference: {ref!r}")
    return int(m.group(2)), col_index(m.group(1))


def parse_range(ref: str) -> tuple[int, int, int, int]:
    """``A1:C3`` or ``B2`` → (row1, col1, row2, col2), corners in order."""
    first, _, last = ref.partition(":")
    r1, c1 = parse_cell(first)
    r2, c2 = parse_cell(last) if last else (r1, c1)
    return min(r1, r2), min(c1, c2), max(r1, r2), max(c1, c2)
