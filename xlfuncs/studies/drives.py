"""Harmonic current spectra of converters, ready for the sources table.

The ideal p-pulse converter (rectangular line current) has characteristic orders
h = k·p ± 1 with magnitudes I_h = I_1/h (common practice; e.g. six-pulse: 5, 7, 11,
13, …). Real spectra depend on the drive's DC choke or line reactor: give them as a table.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from ..errors import InputError

__all__ = ["characteristic_orders", "drive_sources"]


def characteristic_orders(pulses: int = 6, max_order: int = 25) -> list[int]:
    """Orders k·pulses ± 1 (k ≥ 1) up to ``max_order``."""
    if pulses not in (6, 12, 18, 24):
        raise InputError("argument", None, "pulses", pulses, "expected 6, 12, 18 or 24")
    if not 2 <= max_order <= 200:
        raise InputError("argument", None, "max_order", max_order, "expected 2 … 200")
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
        A measured or maker's spectrum; replaces the ideal I1/h law.
    phase_deg : float
        Phase of every harmonic tone (a screening choice: aligned tones give the highest
        peaks; RMS and THD do not depend on it).
    include_fundamental : bool
        Add the fundamental as a tone too (for a drive modelled purely as a current source).

    The source pushes current into ``to_node`` (its current flows from ``from_node`` to
    ``to_node`` through it); for a drive injecting into a bus use ``from = GND``, ``to = bus``.
    """
    if not math.isfinite(i1_rms) or i1_rms <= 0:
        raise InputError("argument", None, "i1_rms", i1_rms, "expected a current > 0 A")
    rows: list[list[object]] = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    if include_fundamental:
        rows.append([name, "I", from_node, to_node, 1.0, float(i1_rms), float(phase_deg)])
    if spectrum is None:
        for h in characteristic_orders(pulses, max_order):
            rows.append([name, "I", from_node, to_node, float(h), i1_rms / h, float(phase_deg)])
    else:
        for i, (order, pct) in enumerate(spectrum):
            if not (math.isfinite(order) and order > 1) or not (math.isfinite(pct) and pct >= 0):
                raise InputError(
                    "spectrum",
                    i + 2,
                    "order" if not h > 1 else "percent",
                    (h, pct),
                    "expected an order > 1 and a percentage ≥ 0",
                )
            rows.append(
                [name, "I", from_node, to_node, float(h), i1_rms * pct / 100, float(phase_deg)]
            )
    return rows
