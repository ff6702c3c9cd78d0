"""Results shaped as rectangular tables (header row first): what a worksheet spills and
what the command line prints. Cells are finite floats or short strings, never None.

Wherever a true peak is shown, the table says its basis (see :class:`PeakResult`):
``peak exact``, ``peak supremum (…)`` or ``peak upper bound (…)``: in the empty phase
cell of ``solve_table``'s total row, and in the trailing ``peak_basis`` column of
``element_table`` and ``node_table``.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .errors import InputError, NetworkError
from .solution import Solution
from .tables import FREQ_RANGE_HZ

__all__ = [
    "element_table",
    "node_table",
    "scan_freqs",
    "scan_table",
    "solve_table",
    "wave_table",
]

Table = list[list[Any]]


def _finite(table: Table) -> Table:
    """``table`` itself; a non-finite number in it is refused (never spilled)."""
    nums = [c for row in table for c in row if isinstance(c, float)]
    if not np.all(np.isfinite(nums)):
        raise NetworkError(
            "a result overflows double precision (values or gains far beyond physical ranges)"
        )
    return table


def solve_table(sol: Solution, target: str, quantity: str | None = None) -> Table:
    """``freq_hz | peak | rms | phase_deg`` per frequency, ascending, then a ``total``
    row holding the true peak (peak column), the total RMS (rms column) and the peak's
    basis (phase column: ``peak exact``, ``peak supremum (…)``, ``peak upper bound (…)``)."""
    sp = sol.signal(target, quantity)
    out: Table = [["freq_hz", "peak", "rms", "phase_deg"]]
    rows = np.column_stack([sp.freqs_hz, sp.peak, sp.rms, sp.phase_deg]).tolist()
    out.extend(rows)
    pk = sp.true_peak()
    out.append(["total", float(pk.value), float(sp.rms_total), pk.describe()])
    return _finite(out)


def element_table(sol: Solution) -> Table:
    """One row per part and source: RMS voltage and current, true peak current, average
    power absorbed and the basis of the peak (``peak_basis``); then a ``balance`` row
    whose power is the sum over all elements."""
    v = sol.spectrum(sol.element_voltages, "elements")
    i = sol.spectrum(sol.element_currents, "elements")
    v_rms = np.atleast_1d(v.rms_total)
    i_rms = np.atleast_1d(i.rms_total)
    pk = i.true_peak()
    i_pk = np.atleast_1d(pk.value)
    p = sol.element_power.sum(axis=0)
    out: Table = [["part", "kind", "v_rms", "i_rms", "i_peak", "power_w", "peak_basis"]]
    for k, name in enumerate(sol.element_names):
        out.append(
            [
                name,
                sol.element_kinds[k],
                float(v_rms[k]),
                float(i_rms[k]),
                float(i_pk[k]),
                float(p[k]),
                pk.describe(k),
            ]
        )
    delivered, _absorbed, _res = sol.power_balance()
    out.append(["balance", f"{delivered:.6g} W delivered", "", "", "", float(p.sum()), ""])
    return _finite(out)


def node_table(sol: Solution) -> Table:
    """One row per node: DC value, total RMS, true peak and the peak's basis
    (``peak_basis``)."""
    sp = sol.spectrum(sol.node_voltages, "nodes")
    dc = np.atleast_1d(sp.dc)
    rms = np.atleast_1d(sp.rms_total)
    res = sp.true_peak()
    pk = np.atleast_1d(res.value)
    out: Table = [["node", "dc", "rms", "peak", "peak_basis"]]
    for k, name in enumerate(sol.circuit.nodes):
        out.append([name, float(dc[k]), float(rms[k]), float(pk[k]), res.describe(k)])
    return _finite(out)


def wave_table(
    sol: Solution, target: str, quantity: str | None = None, points: int | None = None
) -> Table:
    """``time_s | value`` over one common period of the tones (see Spectrum.window)."""
    sp = sol.signal(target, quantity)
    if points is not None and not 2 <= points <= 100_000:
        raise InputError("argument", None, "points", points, "expected 2 … 100000 points")
    t, _note = sp.window(points)
    y = sp.waveform(t)
    out: Table = [["time_s", "value"]]
    out.extend(np.column_stack([t, y]).tolist())
    return _finite(out)


def scan_freqs(f_start: Any, f_stop: Any, points: Any = None) -> np.ndarray:
    """Log-spaced frequencies, both ends included; validated as worksheet arguments."""
    try:
        f0, f1 = float(f_start), float(f_stop)
    except (TypeError, ValueError):
        raise InputError(
            "argument",
            None,
            "f_start",
            f_start if not _num(f_start) else f_stop,
            "expected numbers in Hz",
        ) from None
    lo, hi = FREQ_RANGE_HZ
    if not (np.isfinite(f0) and f0 > 0):
        raise InputError("argument", None, "f_start", f_start, "expected a frequency > 0 Hz")
    if not (np.isfinite(f1) and f1 > f0):
        raise InputError("argument", None, "f_stop", f_stop, "expected a frequency > f_start")
    for col, v, cell in (("f_start", f0, f_start), ("f_stop", f1, f_stop)):
        if not lo <= v <= hi:
            raise InputError(
                "argument", None, col, cell, "expected a frequency from 1 µHz to 1 THz"
            )
    n = 200 if points is None else points
    if not isinstance(n, (int, float)) or not float(n).is_integer() or not 2 <= n <= 100_000:
        raise InputError("argument", None, "points", points, "expected a whole number 2 … 100000")
    return np.geomspace(f0, f1, int(n))


def _num(x: Any) -> bool:
    try:
        float(x)
    except (TypeError, ValueError):
        return False
    return True


def scan_table(freqs: np.ndarray, z: np.ndarray) -> Table:
    """``freq_hz | z_ohm | angle_deg``."""
    out: Table = [["freq_hz", "z_ohm", "angle_deg"]]
    out.extend(np.column_stack([freqs, np.abs(z), np.degrees(np.angle(z))]).tolist())
    return _finite(out)
