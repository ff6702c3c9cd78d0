"""The IEEE 519 checks count harmonic orders from the core's one fundamental rule, and say
which fundamental they used.

Rule (``Spectrum.fundamental``): fundamental_hz of the options when given; otherwise the
lowest AC tone, only where that tone is the signal's largest; otherwise refused. Check
values: IEEE Std 519-2014 Table 1 (bus ≤ 1 kV: 5.0 % individual, 8.0 % THD) and Table 2
(120 V-69 kV, 50 ≤ Isc/IL < 100: 10.0 % for 3 ≤ h < 11, TDD 12.0 %); the percentages are
the tone ratios themselves (closed form: a voltage source across the node, a current
source through a resistor).
"""

from __future__ import annotations

import math

import pytest

from xlfuncs.functions import FUNCTIONS, cache_clear

PARTS = [["name", "kind", "from", "to", "value"], ["R", "R", "b", "GND", 1.0]]


def _v(*tones):
    head = [["name", "kind", "from", "to", "freq_hz", "rms"]]
    return head + [["V", "V", "b", "GND", f, v] for f, v in tones]


def _i(*tones):
    head = [["name", "kind", "from", "to", "freq_hz", "rms"]]
    return head + [["I", "I", "GND", "b", f, a] for f, a in tones]


def _call(name, *args):
    cache_clear()
    return FUNCTIONS[name].call(*args)


def _rows(table):
    return {r[0]: r for r in table[1:]}


def test_v519_refuses_a_subharmonic_that_the_old_rule_took_for_the_fundamental():
    # 25 Hz at 2 % below a 50 Hz, 400 V bus with a 5th of 10 % and a 7th of 5 %: the lowest
    # tone is not the largest, so no fundamental is assumed (the 50 Hz tone would have read
    # as "h2" at 5000 %)
    src = _v((25.0, 8.0), (50.0, 400.0), (250.0, 40.0), (350.0, 20.0))
    out = _call("CKT_V519", PARTS, src, "b", 0.4, None)
    assert isinstance(out, str) and out.startswith("ERROR: options, column fundamental_hz")
    assert "the lowest tone (25 Hz) is not the largest (50 Hz is)" in out
    out = _call("CKT_V519", PARTS, src, "b", 0.4, [["fundamental_hz", 50.0]])
    rows = _rows(out)
    assert "h2" not in rows  # the subharmonic is no harmonic of 50 Hz
    # IEEE Std 519-2014 Table 1, V <= 1 kV: individual 5 %, THD 8 %
    assert rows["h5"][1:] == [pytest.approx(10.0, rel=1e-12), 5.0, "FAIL"]
    assert rows["h7"][1:] == [pytest.approx(5.0, rel=1e-12), 5.0, "PASS"]
    assert rows["THD"][1:] == [pytest.approx(math.hypot(10.0, 5.0), rel=1e-12), 8.0, "FAIL"]
    assert rows["basis"][1].endswith("; fundamental 50 Hz (from fundamental_hz)")


def test_v519_says_when_it_assumed_the_lowest_tone():
    src = _v((60.0, 480.0), (300.0, 14.4))  # 5th at 3 %
    out = _call("CKT_V519", PARTS, src, "b", 0.48, None)
    rows = _rows(out)
    assert rows["h5"][1:] == [pytest.approx(3.0, rel=1e-12), 5.0, "PASS"]  # Table 1
    assert rows["verdict"][3] == "PASS"
    assert rows["basis"][1].endswith(
        "; fundamental 60 Hz (assumed: the lowest tone, also the largest)"
    )


def test_i519_refuses_a_current_whose_harmonic_outgrows_its_fundamental():
    # a branch carrying more 5th-harmonic than fundamental current (a tuned filter's
    # branch): the lowest tone is not the largest
    src = _i((60.0, 10.0), (300.0, 30.0))
    args = (PARTS, src, "R", 7500.0, 125.0, 13.8, None)
    out = _call("CKT_I519", *args, None)
    assert isinstance(out, str) and "the lowest tone (60 Hz) is not the largest (300 Hz is)" in out
    out = _call("CKT_I519", *args, [["fundamental_hz", 60.0]])
    rows = _rows(out)
    # Isc/IL = 60 → IEEE Std 519-2014 Table 2 row 50 < 100: h5 limit 10 %, TDD 12 %;
    # 30 A / 125 A = 24 %
    assert rows["h5"][1:] == [pytest.approx(24.0, rel=1e-12), 10.0, "FAIL"]
    assert rows["TDD"][1:] == [pytest.approx(24.0, rel=1e-12), 12.0, "FAIL"]
    assert rows["basis"][1].endswith("; fundamental 60 Hz (from fundamental_hz)")


def test_the_thd_description_states_the_rule_and_the_refusal():
    ret = FUNCTIONS["CKT_THD"].returns
    assert "lowest source frequency" not in ret
    assert "only where that tone is the signal's largest" in ret and "ERROR" in ret
    for name in ("CKT_V519", "CKT_I519"):
        assert "names the fundamental used" in FUNCTIONS[name].returns
