"""Studies built on the core solver: resonances, IEEE 519 limits, IEEE 18 capacitor duty,
detuning reactors, converter spectra and tolerance spreads."""

from .capacitor import IEEE18_LIMITS, CapacitorDuty, capacitor_duty
from .detuning import Detuning, detuning
from .drives import characteristic_orders, drive_sources
from .limits import (
    CurrentCheck,
    VoltageCheck,
    check_current,
    check_voltage,
    current_limit_pct,
    tdd_limit_pct,
    voltage_limits_pct,
)
from .resonance import Resonance, find_resonances, resonance_order_rule
from .tolerance import METRICS, ToleranceResult, tolerance_study

__all__ = [
    "IEEE18_LIMITS",
    "METRICS",
    "CapacitorDuty",
    "CurrentCheck",
    "Detuning",
    "Resonance",
    "ToleranceResult",
    "VoltageCheck",
    "capacitor_duty",
    "characteristic_orders",
    "check_current",
    "check_voltage",
    "current_limit_pct",
    "detuning",
    "drive_sources",
    "find_resonances",
    "resonance_order_rule",
    "tdd_limit_pct",
    "tolerance_study",
    "voltage_limits_pct",
]
