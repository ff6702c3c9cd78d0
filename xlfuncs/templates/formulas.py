"""Formula text helpers: name substitution outside string literals, dependencies, and
small formula builders the descriptions share."""

from __future__ import annotations

import re
from collections.abc import Callable, Iterable

__all__ = [
    "eng_text", "names_in", "pick", "placeholders", "spilled", "substitute", "wrap_deg",
]  # fmt: skip

_STRING = re.compile(r'"(?:[^"]|"")*"')
_NAME = re.compile(r"(?<![A-Za-z0-9_.!$'])([A-Za-z_][A-Za-z0-9_]*)(?![A-Za-z0-9_(!])")
_PLACE = re.compile(r"\{(@?[A-Za-z_][A-Za-z0-9_]*)(?::([^{}]+))?\}")


def _code_parts(formula: str) -> list[tuple[bool, str]]:
    """(is_code, text) pieces: string literals are never touched."""
    out, pos = [], 0
    for m in _STRING.finditer(formula):
        out += [(True, formula[pos : m.start()]), (False, m.group(0))]
        pos = m.end()
    return [*out, (True, formula[pos:])]


def substitute(
    formula: str, names: dict[str, str], place: Callable[[str, str | None], str]
) -> str:
    """Replace ``{key}``/``{key:col}`` placeholders through ``place`` and bare names found
    in ``names`` by their reference; literals stay as they are."""
    out = []
    for code, piece in _code_parts(formula):
        if code:
            piece = _PLACE.sub(lambda m: place(m.group(1), m.group(2)), piece)
            piece = _NAME.sub(lambda m: names.get(m.group(1), m.group(1)), piece)
        out.append(piece)
    return "".join(out)


def names_in(formula: str, known: Iterable[str]) -> set[str]:
    """The known names and placeholder keys a formula uses."""
    known = set(known)
    found: set[str] = set()
    for code, piece in _code_parts(formula):
        if code:
            found |= {m.group(1) for m in _PLACE.finditer(piece)} & known
            found |= set(_NAME.findall(_PLACE.sub("", piece))) & known
    return found


def placeholders(formula: str) -> set[str]:
    return {m.group(1) for code, p in _code_parts(formula) if code for m in _PLACE.finditer(p)}


def pick(block: str, row: str, col: str) -> str:
    """The cell of a spilled table found by its row label (first column) and header."""
    b = "{" + block + "}"
    return f'INDEX({b},MATCH("{row}",INDEX({b},0,1),0),MATCH("{col}",INDEX({b},1,0),0))'


def spilled(block: str, header: str, expr: str) -> str:
    """``expr`` (an aggregate over a block's column ranges) only when the block spilled
    its table (first header as expected); else what the block shows (its one-line error,
    an error value or "n/a") — so an empty range can never read as 0."""
    first = "{" + block + ":@}"  # (ANCHORARRAY of a cell that did not spill is #REF!)
    return f'IF({first}="{header}",{expr},{first})'


def wrap_deg(x: str) -> str:
    """An angle in degrees wrapped to (−180°, 180°]."""
    return f"180-MOD(180-({x}),360)"


def eng_text(ref: str, unit: str) -> str:
    """A number shown with an SI prefix and three significant figures (22.0 µH)."""
    k = f"MAX(-5,MIN(4,FLOOR(LOG10(ABS({ref}))/3,1)))"
    m = f"{ref}/10^(3*{k})"
    body = (
        f'TEXT({m},IF(ABS({m})>=99.95,"0",IF(ABS({m})>=9.995,"0.0","0.00")))'
        f'&" "&TRIM(MID("fpnµm kMGT",{k}+6,1))&"{unit}"'
    )
    return f'IF(ISNUMBER({ref}),IF({ref}=0,"0 {unit}",{body}),{ref})'
