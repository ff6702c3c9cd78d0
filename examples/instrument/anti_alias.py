"""Anti-alias filter of a sensor channel: poles, gain, phase, group delay, alias rejection
and noise. DEMO DATA: an invented channel, not a product.

A 1 kΩ sensor drives a 4th-order Butterworth low-pass (target f_c = 2 kHz: two unity-gain
Sallen–Key stages built with standard capacitor values, op-amps of open-loop gain 10⁵)
ahead of an ADC sampling at 20 kHz. Run from the repository root:

    .venv/bin/python examples/instrument/anti_alias.py
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from xlfuncs.cli import read_csv_table
from xlfuncs.studies import frequency_response, network_poles, noise_rms

HERE = Path(__file__).parent
FS = 20_000.0  # ADC sampling rate, Hz (demo)
FC = 2_000.0  # target cut-off, Hz
FULL_SCALE_RMS = 2.5 / math.sqrt(2)  # ADC full scale, a 2.5 V peak sine (demo)


def main() -> int:
    parts = read_csv_table(HERE / "anti_alias_parts.csv")
    sources = read_csv_table(HERE / "anti_alias_sources.csv")
    print("DEMO DATA — anti-alias filter of an invented sensor channel")
    print()
    print("Natural frequencies of the built filter against the 4th-order Butterworth targets")
    print("(f0 = 2 kHz; section Q = 1/(2·sin((2k−1)π/8)) = 0.541 and 1.307)")
    for p, q_target in zip(network_poles(parts, sources), (0.5412, 1.3066), strict=True):
        print(f"  f0 {p.freq_hz:8.1f} Hz   Q {p.q:6.3f}   (target Q {q_target:.3f})")
    print()
    f = np.array([10.0, 100.0, 1000.0, FC, FS / 2, FS - FC, FS - 100.0])
    r = frequency_response(parts, sources, "V_sensor", "out", f)
    print("Gain, phase (unwrapped, cosine reference) and group delay")
    for k in range(f.size):
        print(
            f"  {f[k]:8.0f} Hz  {r.gain_db[k]:8.2f} dB  {r.phase_unwrapped_deg[k]:8.1f}°  "
            f"{r.group_delay_s[k] * 1e6:7.1f} µs"
        )
    band = np.geomspace(10, 1000, 100)
    tau = frequency_response(parts, sources, "V_sensor", "out", band).group_delay_s
    print(
        f"  group delay 10 Hz–1 kHz: {tau.min() * 1e6:.1f} … {tau.max() * 1e6:.1f} µs "
        f"(variation {(tau.max() - tau.min()) * 1e6:.1f} µs)"
    )
    print()
    print(f"Alias rejection: a tone at fs − f folds onto f (fs = {FS:g} Hz)")
    for fb in (100.0, 1000.0, FC):
        img = frequency_response(parts, sources, "V_sensor", "out", [fb, FS - fb])
        print(
            f"  {FS - fb:7.0f} Hz folds onto {fb:6.0f} Hz: attenuated {-img.gain_db[1]:6.1f} dB "
            f"({img.gain_db[0] - img.gain_db[1]:6.1f} dB below the wanted tone there)"
        )
    print()
    nz = noise_rms(parts, sources, "out", 1.0, FS / 2, 25.0)
    print(f"Output noise 1 Hz – {FS / 2:g} Hz at 25 °C: {nz.rms_v * 1e6:.3f} µV rms")
    for c in nz.contributions[:5]:
        print(f"  {c.name:8s} ({c.kind})  {c.rms_v * 1e6:7.3f} µV rms  {100 * c.share:5.1f} %")
    print(
        f"  dynamic range against full scale: {20 * math.log10(FULL_SCALE_RMS / nz.rms_v):.1f} dB"
    )
    print()
    print("Screening calculation: check against the built channel's measured response.")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
