"""Capacitor duty under harmonics against the continuous limits of IEEE Std 18.

Limits (IEEE Std 18-2002, as cited in capacitor-application guides; that the 2012 edition
keeps them is from memory): 110 % of rated RMS voltage, 120 % of rated peak voltage
(harmonics included), 135 % of nominal RMS current (from rated kvar and voltage), 135 % of
rated kvar.

Duty quantities (common practice):
V_rms = √ΣV_h², V_peak = Σ√2·V_h (arithmetic sum of the harmonic peaks, conservative),
I_rms = √ΣI_h², kvar = ΣV_h·I_h, with V_h, I_h the RMS values of each tone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..units import check_scalar

__all__ = ["IEEE18_LIMITS", "CapacitorDuty", "capacitor_duty"]

IEEE18_LIMITS = {"rms voltage": 1.10, "peak voltage": 1.20, "rms current": 1.35, "kvar": 1.35}


@dataclass(frozen=True)
class CapacitorDuty:
    """Each row: (quantity, value, rated value, ratio, limit ratio, passed)."""

    rows: tuple[tuple[str, float, float, float, float, bool], ...]
    passed: bool

    def table(self) -> list[list[object]]:
        out: list[list[object]] = [["quantity", "value", "rated", "ratio", "limit", "pass"]]
        for name, v, r, ratio, lim, ok in self.rows:
            out.append([name, v, r, ratio, lim, "PASS" if ok else "FAIL"])
        return out


def capacitor_duty(
    freqs_hz: np.ndarray,
    v_rms: np.ndarray,
    i_rms: np.ndarray,
    rated_kvar: float,
    rated_volts: float,
) -> CapacitorDuty:
    """Duty of a capacitor from its per-tone RMS voltages and currents.

    A DC tone (0 Hz) adds |V_dc| to the peak (not √2·V) and, carrying no capacitor
    current, nothing to the kvar.

    ``rated_kvar`` and ``rated_volts`` must be on the same basis as the solved quantities:
    for a per-phase (line-to-neutral) model of a wye bank use the kvar per phase and the
    line-to-neutral rating. The displacement between V_h and I_h of an ideal capacitor is
    90°, so ΣV_h·I_h is its reactive power.
    """
    rated_kvar = check_scalar(rated_kvar, "rated_kvar", 1e-6, 1e7, "a rating in kvar")
    rated_volts = check_scalar(rated_volts, "rated_volts", 1e-3, 2e6, "a rated voltage in V")
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    v = np.asarray(v_rms, dtype=float).reshape(-1)
    i = np.asarray(i_rms, dtype=float).reshape(-1)
    if not (f.size == v.size == i.size):
        raise InputError(
            "argument",
            None,
            "v_rms",
            None,
            f"expected one value per frequency: {f.size} frequencies, {v.size} voltages, "
            f"{i.size} currents",
        )
    for name, arr in (("freqs_hz", f), ("v_rms", v), ("i_rms", i)):
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            raise InputError("argument", None, name, None, "expected finite values ≥ 0")
    peak_factor = np.where(f == 0, 1.0, math.sqrt(2))
    q_rated = rated_kvar * 1e3
    i_rated = q_rated / rated_volts
    vals = {
        "rms voltage": (float(np.sqrt((v**2).sum())), rated_volts),
        "peak voltage": (float((peak_factor * v).sum()), math.sqrt(2) * rated_volts),
        "rms current": (float(np.sqrt((i**2).sum())), i_rated),
        "kvar": (float((v * i).sum()) / 1e3, rated_kvar),
    }
    rows = []
    for name, (value, rated) in vals.items():
        ratio = value / rated
        lim = IEEE18_LIMITS[name]
        rows.append((name, value, rated, ratio, lim, ratio <= lim))
    return CapacitorDuty(tuple(rows), all(r[5] for r in rows))
