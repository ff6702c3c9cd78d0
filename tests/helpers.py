"""Small builders shared by the tests (tables as a worksheet delivers them)."""

from __future__ import annotations

PARTS_HEADER = ["name", "kind", "from", "to", "value"]
SOURCES_HEADER = ["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"]


def parts(*rows, header=PARTS_HEADER):
    return [list(header), *[list(r) for r in rows]]


def sources(*rows, header=SOURCES_HEADER):
    return [list(header), *[list(r) for r in rows]]
