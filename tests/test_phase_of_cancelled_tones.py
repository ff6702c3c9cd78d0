"""A tone cancelled between sources has no phase to report.

Check values: two equal currents 180° apart into one node cancel exactly (their sum is 0,
Kirchhoff's current law; common practice), so the tone is zero and its phase is reported as
an exact zero's, 0°; a genuine small tone keeps its phase (closed form V = I·R).
"""

from __future__ import annotations

import pytest

import xlfuncs
from xlfuncs.functions import FUNCTIONS

PARTS = [["name", "kind", "from", "to", "value"], ["R1", "R", "a", "GND", "2"]]


def _sources(small_pct: float) -> list[list[object]]:
    return [
        ["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"],
        ["I1", "I", "GND", "a", 50, 1.0, 0.0],
        ["I2", "I", "GND", "a", 250, 1.0, 0.0],
        ["I3", "I", "GND", "a", 250, 1.0, 180.0],  # cancels I2 exactly
        ["I4", "I", "GND", "a", 350, small_pct / 100, 37.0],
    ]


def test_a_cancelled_tone_shows_phase_zero_and_a_small_one_keeps_its_own():
    v = xlfuncs.solve(PARTS, _sources(1e-4)).voltage("a")
    assert list(v.freqs_hz) == [50, 250, 350]
    assert v.peak[1] <= 1e-12  # the rounding residue of cos(180°) and sin(180°), ~2e-16 V
    assert v.phase_deg[1] == 0.0
    assert v.peak[2] == pytest.approx(2 * 1e-6, rel=1e-12)  # V = I·R
    assert v.phase_deg[2] == pytest.approx(37.0, abs=1e-9)
    spill = FUNCTIONS["CKT_SOLVE"].call(PARTS, _sources(1e-4), "a")
    assert spill[2][0] == 250 and spill[2][3] == 0.0 and spill[3][3] == pytest.approx(37.0)


def test_waveform_times_must_be_finite_and_near_enough_to_keep_the_phase():
    from xlfuncs.errors import InputError

    v = xlfuncs.solve(PARTS, _sources(1e-4)).voltage("a")
    for bad in ([float("nan")], float("inf"), [1e9]):  # 1e9 s: 3.5e11 periods of 350 Hz
        with pytest.raises(InputError, match="argument times_s"):
            v.waveform(bad)
    # x(0) = Σ Re(X_k) (closed form at t = 0): 2 V at 50 Hz, 0 at 250 Hz, 2e-6·cos 37° at 350
    assert float(v.waveform([0.0])[0]) == pytest.approx(2 + 2e-6 * 0.7986355100472928, rel=1e-12)
