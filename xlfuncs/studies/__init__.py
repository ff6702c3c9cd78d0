"""Studies built on the core solver: resonances, IEEE 519 limits, IEEE 18 capacitor duty,
detuning reactors, converter spectra, tolerance spreads, transfer functions, natural
frequencies, input-filter stability and noise."""

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
from .noise import (
    BOLTZMANN,
    NoiseContribution,
    NoiseResult,
    NoiseSpectrum,
    noise_density,
    noise_rms,
)
from .poles import NaturalFrequency, network_poles, transfer_poles_zeros, transfer_zeros
from .resonance import Resonance, Resonances, find_resonances, resonance_order_rule
from .stability import (
    DampingDesign,
    FilterMargin,
    damping_for_margin,
    input_filter_margin,
    negative_input_resistance,
    size_parallel_damping,
)
from .tolerance import METRICS, ToleranceResult, tolerance_study
from .transfer import (
    FrequencyResponse,
    TwoPortImpedance,
    bode,
    frequency_response,
    port_impedance,
    two_port_impedances,
)

__all__ = [
    "BOLTZMANN",
    "IEEE18_LIMITS",
    "METRICS",
    "CapacitorDuty",
    "CurrentCheck",
    "DampingDesign",
    "Detuning",
    "FilterMargin",
    "FrequencyResponse",
    "NaturalFrequency",
    "NoiseContribution",
    "NoiseResult",
    "NoiseSpectrum",
    "Resonance",
    "Resonances",
    "ToleranceResult",
    "TwoPortImpedance",
    "VoltageCheck",
    "bode",
    "capacitor_duty",
    "characteristic_orders",
    "check_current",
    "check_voltage",
    "current_limit_pct",
    "damping_for_margin",
    "detuning",
    "drive_sources",
    "find_resonances",
    "frequency_response",
    "input_filter_margin",
    "negative_input_resistance",
    "network_poles",
    "noise_density",
    "noise_rms",
    "port_impedance",
    "resonance_order_rule",
    "size_parallel_damping",
    "tdd_limit_pct",
    "tolerance_study",
    "transfer_poles_zeros",
    "transfer_zeros",
    "two_port_impedances",
    "voltage_limits_pct",
]
