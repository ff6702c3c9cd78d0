"""The Python API on a small plant bus (DEMO DATA: an invented scenario).

A 400 V, 50 Hz bus fed through 8 µH + 0.8 mΩ (about 20 MVA short-circuit power), a 150 kvar
capacitor bank and a six-pulse drive drawing 300 A with the ideal 1/h harmonic spectrum.
"""

from __future__ import annotations

import xlfuncs
from xlfuncs.studies import capacitor_duty, drive_sources, find_resonances, resonance_order_rule

parts = [
    ["name", "kind", "from", "to", "value"],
    ["R_s", "R", "src", "m", "0.8m"],
    ["L_s", "L", "m", "bus", "25.5u"],
    ["C_bank", "C", "bus", "GND", "2.98m"],  # 150 kvar at 400 V, wye equivalent
    ["R_load", "R", "bus", "GND", 1.6],
]
sources = drive_sources("I_drive", "GND", "bus", i1_rms=300.0, pulses=6, max_order=25)
sources.append(["V_grid", "V", "src", "GND", 1.0, 230.9, 0.0])
options = [["fundamental_hz", 50]]

sol = xlfuncs.solve(parts, sources, options)
v_bus = sol.voltage("bus")
i_cap = sol.current("C_bank")
print(
    f"bus voltage: {float(v_bus.rms_total):.1f} V rms, THD {100 * float(v_bus.thd()):.2f} %, "
    f"true peak {float(v_bus.true_peak().value):.1f} V"
)
print(
    f"capacitor current: {float(i_cap.rms_total):.1f} A rms, crest factor {float(i_cap.crest_factor):.3f}"
)
print(f"power balance (delivered, absorbed, residual) W: {sol.power_balance()}")

res = find_resonances(parts, "bus", 50, 2500, fundamental_hz=50, sources=sources, options=options)
for r in res:
    print(
        f"{r.kind} resonance at {r.freq_hz:.1f} Hz (order {r.order:.2f}), |Z| = {r.z_ohm:.4f} ohm"
    )
print(f"rule of thumb: h ≈ {resonance_order_rule(20.0, 0.15):.2f}")

duty = capacitor_duty(
    v_bus.freqs_hz, sol.voltage("C_bank").rms, i_cap.rms, rated_kvar=50, rated_volts=230.9
)
for row in duty.table():
    print("  ".join(f"{c:.4g}" if isinstance(c, float) else str(c) for c in row))
print(
    "Screening calculation: defer to local codes, the utility, equipment makers and a licensed engineer."
)
