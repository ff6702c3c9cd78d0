"""Harmonic current spectra of converters, ready for the sources table.

The ideal p-pulse converter (rectangular line current) has characteristic orders
h = k·p ± 1 with magnitudes I_h = I_1/h (common practice; e.g. six-pulse: 5, 7, 11,
13, …). Real spectra depend on the drive's DC choke or line reactor: give them as a table.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..errors import InputError
from ..units import MAX_MAGNITUDE, check_scalar

__all__ = ["characteristic_orders", "drive_sources"]

_MAX_SPECTRUM_ORDER = 10_000.0
_MAX_PERCENT = 1000.0


def characteristic_orders(pulses: int = 6, max_order: int = 25) -> list[int]:
    """Orders k·pulses ± 1 (k ≥ 1) up to ``max_order``."""
    if isinstance(pulses, bool) or pulses not in (6, 12, 18, 24):
        raise InputError("argument", None, "pulses", pulses, "expected 6, 12, 18 or 24")
    if (
        isinstance(max_order, bool)
        or not isinstance(max_order, (int, float))
        or not float(max_order).is_integer()
        or not 2 <= max_order <= 200
    ):
        raise InputError(
            "argument", None, "max_order", max_order, "expected a whole number 2 … 200"
        )
    pulses, max_order = int(pulses), int(max_order)
    out = []
    k = 1
    while k * pulses - 1 <= max_order:
        for h in (k * pulses - 1, k * pulses + 1):
            if h <= max_order:
                out.append(h)
        k += 1
    return out


def drive_sources(
    name: str,
    from_node: str,
    to_node: str,
    i1_rms: float,
    pulses: int = 6,
    max_order: int = 25,
    phase_deg: float = 0.0,
    spectrum: Sequence[tuple[float, float]] | None = None,
    include_fundamental: bool = False,
) -> list[list[object]]:
    """Sources-table rows (header first) for a drive's harmonic current injection.

    Parameters
    ----------
    i1_rms : float
        Fundamental current of the drive (A rms).
    spectrum : sequence of (order, percent of I1), optional
        A measured or maker's spectrum; replaces the ideal I1/h law. Orders 1 < h ≤ 10000
        (interharmonics allowed), each once; percentages 0 … 1000. Rows in messages are
        counted as in a table whose header is row 1.
    phase_deg : float
        Phase of every harmonic tone (a screening choice: aligned tones give the highest
        peaks; RMS and THD do not depend on it).
    include_fundamental : bool
        Add the fundamental as a tone too (for a drive modelled purely as a current source).

    The source pushes current into ``to_node`` (its current flows from ``from_node`` to
    ``to_node`` through it); for a drive injecting into a bus use ``from = GND``, ``to = bus``.
    """
    for col, text in (("source_name", name), ("node_from", from_node), ("node_to", to_node)):
        if not isinstance(text, str) or not text.strip():
            raise InputError("argument", None, col, text, "expected a name")
    if from_node.strip().casefold() == to_node.strip().casefold():
        raise InputError(
            "argument", None, "node_to", to_node, "expected a node other than node_from"
        )
    i1_rms = check_scalar(i1_rms, "i1_rms", 0.0, MAX_MAGNITUDE, "a current in A", lo_open=True)
    phase_deg = check_scalar(phase_deg, "phase_deg", -1e9, 1e9, "a phase in degrees")
    ideal = characteristic_orders(pulses, max_order)  # validates both, used or not
    rows: list[list[object]] = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    if include_fundamental:
        rows.append([name, "I", from_node, to_node, 1.0, i1_rms, phase_deg])
    if spectrum is None:
        for h in ideal:
            rows.append([name, "I", from_node, to_node, float(h), i1_rms / h, phase_deg])
    else:
        if len(spectrum) == 0:
            raise InputError("spectrum", None, None, expected="no rows: give order | percent rows")
        seen: dict[float, int] = {}
        for i, pair in enumerate(spectrum):
            row = i + 2
            if not isinstance(pair, (tuple, list)) or len(pair) != 2:
                raise InputError("spectrum", row, None, pair, "expected order | percent")
            order = check_scalar(
                pair[0],
                "order",
                1.0,
                _MAX_SPECTRUM_ORDER,
                "a harmonic order above 1",
                lo_open=True,
                table="spectrum",
                row=row,
            )
            pct = check_scalar(
                pair[1],
                "percent",
                0.0,
                _MAX_PERCENT,
                "a percentage of I1",
                table="spectrum",
                row=row,
            )
            if order in seen:
                raise InputError(
                    "spectrum", row, "order", pair[0], f"order given twice (row {seen[order]})"
                )
            seen[order] = row
            rows.append([name, "I", from_node, to_node, order, i1_rms * pct / 100, phase_deg])
    return rows
