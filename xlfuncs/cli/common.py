"""What every command shares: reading CSV tables, printing aligned tables, file errors."""

from __future__ import annotations

import csv
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from ..errors import XlfuncsError
from ..tables import parse_cell

__all__ = ["XlfuncsFileError", "format_table", "read_csv_table"]


def read_csv_table(path: str | Path) -> list[list[Any]]:
    """A CSV file as a worksheet would deliver it: empty → None, numbers → float."""
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            rows = list(csv.reader(fh))
    except OSError as exc:
        raise XlfuncsFileError(f"cannot read {str(p)!r}: {exc.strerror or exc}") from None
    except UnicodeDecodeError:
        raise XlfuncsFileError(f"{str(p)!r} is not UTF-8 text (save the CSV as UTF-8)") from None
    return [[parse_cell(c) for c in r] for r in rows]


class XlfuncsFileError(XlfuncsError, OSError):
    """A file named on the command line cannot be read."""


def format_table(rows: Sequence[Sequence[Any]]) -> str:
    """Aligned plain-text table; numbers with 6 significant digits."""

    def fmt(v: Any) -> str:
        if isinstance(v, float):
            return f"{v:.6g}"
        return str(v)

    cells = [[fmt(v) for v in r] for r in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(cells[0]))]
    lines = []
    for k, r in enumerate(cells):
        lines.append(
            "  ".join(c.rjust(w) if k else c.ljust(w) for c, w in zip(r, widths, strict=True))
        )
        if k == 0:
            lines.append("  ".join("-" * w for w in widths))
    return "\n".join(lines)
