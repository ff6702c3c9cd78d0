"""Detuned (blocking) reactors for capacitor banks.

A reactor of p (fraction of the capacitor's reactance at the fundamental) in series with
the bank tunes the pair to order h = 1/√p; the capacitor sees a fundamental voltage rise
U_C = U/(1 − p). Common practice in power-factor correction with detuned filters.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import InputError
from ..units import check_scalar

__all__ = ["Detuning", "detuning"]

# argument ranges: wide around practice, tight enough that every result is finite
KVAR_RANGE = (1e-6, 1e7)  # up to 10 Gvar, beyond any bank
VOLTS_RANGE = (1e-3, 2e6)  # up to 2 MV, beyond any transmission voltage
FUNDAMENTAL_RANGE_HZ = (1.0, 1e5)
P_RANGE = (1e-6, 0.99)  # tuned order 1000 down to 1.005


@dataclass(frozen=True)
class Detuning:
    """Sizing of a capacitor + detuning reactor (single-phase or per-phase values).

    Attributes
    ----------
    p : float
        Reactor reactance over capacitor reactance at the fundamental (fraction).
    order, tuned_hz : float
        Series tuning order 1/√p and frequency.
    x_c_ohm, x_l_ohm : float
        Capacitor and reactor reactances at the fundamental.
    c_farad, l_henry : float
    voltage_rise : float
        U_C / U = 1/(1 − p): the capacitor's fundamental voltage over the bus voltage.
    """

    p: float
    order: float
    tuned_hz: float
    x_c_ohm: float
    x_l_ohm: float
    c_farad: float
    l_henry: float
    voltage_rise: float

    def rows(self) -> list[list[object]]:
        return [
            ["quantity", "value", "unit"],
            ["p", self.p, "fraction"],
            ["tuned order", self.order, "h"],
            ["tuned frequency", self.tuned_hz, "Hz"],
            ["capacitor reactance", self.x_c_ohm, "Ω"],
            ["reactor reactance", self.x_l_ohm, "Ω"],
            ["capacitance", self.c_farad, "F"],
            ["reactor inductance", self.l_henry, "H"],
            ["capacitor voltage rise", self.voltage_rise, "U_C/U"],
        ]


def detuning(
    kvar: float,
    volts: float,
    fundamental_hz: float,
    p: float | None = None,
    order: float | None = None,
) -> Detuning:
    """Size the reactor for a bank of ``kvar`` rated at ``volts`` (its own rating).

    Give either ``p`` or the tuned ``order``; h = 1/√p. X_C = V²/Q at the fundamental,
    X_L = p·X_C. Ranges: kvar 1e-6 … 1e7, volts 1e-3 … 2e6, fundamental 1 Hz … 100 kHz,
    p 1e-6 … 0.99 (order 1.005 … 1000).

    Examples
    --------
    Published detuned-reactor calculation: 80 kvar at 525 V, 50 Hz, p = 7 % gives
    X_C = 3.445 Ω, L = 0.768 mH, tuned to 189 Hz.

    >>> d = detuning(80, 525, 50, p=0.07)
    >>> round(d.x_c_ohm, 3), round(d.l_henry * 1e3, 3), round(d.tuned_hz)
    (3.445, 0.768, 189)
    """
    kvar = check_scalar(kvar, "kvar", *KVAR_RANGE, "a bank rating in kvar")
    volts = check_scalar(volts, "volts", *VOLTS_RANGE, "a rated voltage in V")
    fundamental_hz = check_scalar(
        fundamental_hz, "fundamental_hz", *FUNDAMENTAL_RANGE_HZ, "a fundamental in Hz"
    )
    if (p is None) == (order is None):
        raise InputError("argument", None, "p", p, "give either p or the tuned order, not both")
    if p is not None:
        pp = check_scalar(p, "p", *P_RANGE, "a reactor ratio p (0.07 for 7 %)")
    else:
        lo, hi = 1.0 / math.sqrt(P_RANGE[1]), 1.0 / math.sqrt(P_RANGE[0])
        h_order = check_scalar(order, "order", lo, hi, "a tuned order")
        pp = 1.0 / h_order**2
    w = 2 * math.pi * fundamental_hz
    x_c = volts**2 / (kvar * 1e3)
    x_l = pp * x_c
    h = 1 / math.sqrt(pp)
    return Detuning(
        p=pp,
        order=h,
        tuned_hz=h * fundamental_hz,
        x_c_ohm=x_c,
        x_l_ohm=x_l,
        c_farad=1 / (w * x_c),
        l_henry=x_l / w,
        voltage_rise=1 / (1 - pp),
    )
