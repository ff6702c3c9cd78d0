"""CKT_PEAK and CKT_CREST never present a bound as a peak.

The true peak comes with its method (CONTRACTS §2): ``exact`` and ``supremum`` are the
peak itself; ``bound`` is only an upper bound, so the cell gets one ERROR line that
states the bound and where it is shown with its basis.
"""

from __future__ import annotations

import math
import types

import pytest

from xlfuncs import solution as solution_module
from xlfuncs.functions import FUNCTIONS, cache_clear

PARTS = [
    ["name", "kind", "from", "to", "value"],
    ["R1", "R", "in", "out", "1k"],
    ["R2", "R", "out", "GND", "3k"],
]
# 50 Hz and 50·√2 Hz: no common period (√2 is irrational)
SOURCES = [
    ["name", "kind", "from", "to", "freq_hz", "peak"],
    ["Vs", "V", "in", "GND", 50.0, 1.0],
    ["Vs", "V", "in", "GND", 50.0 * math.sqrt(2), 1.0],
]


def _method():
    from xlfuncs.functions.cache import solution

    return solution(PARTS, SOURCES, None).voltage("out").true_peak().method


def test_tones_without_a_common_period():
    cache_clear()
    peak = FUNCTIONS["CKT_PEAK"].call(PARTS, SOURCES, "out")
    crest = FUNCTIONS["CKT_CREST"].call(PARTS, SOURCES, "out")
    # V(out) = 0.75·(cos 2π·50t + cos 2π·50√2t): its supremum over time is the sum of the
    # amplitudes, 1.5 V, approached but never reached (Kronecker's theorem on rationally
    # independent frequencies; common practice); RMS = 0.75·√(½ + ½) = 0.75 V.
    if _method() == "bound":
        assert peak == (
            "ERROR: V(out): only an upper bound of the true peak is known for these tones, "
            "1.5 V (the peak may be lower); CKT_SOLVE's total row shows it with its basis"
        )
        assert crest.startswith("ERROR: V(out): only an upper bound of the true peak is known")
        assert "the crest factor is at most 2 (peak bound 1.5 V / rms 0.75)" in crest
    else:  # the exact supremum
        assert peak == pytest.approx(1.5, rel=1e-9)
        assert crest == pytest.approx(2.0, rel=1e-9)


@pytest.mark.parametrize(
    ("method", "peak_out", "crest_out"),
    [
        ("exact", 1.2, 1.2 / 0.75),
        ("supremum", 1.2, 1.2 / 0.75),
        (
            "bound",
            "ERROR: V(out): only an upper bound of the true peak is known for these tones, "
            "1.2 V (the peak may be lower); CKT_SOLVE's total row shows it with its basis",
            "ERROR: V(out): only an upper bound of the true peak is known for these tones, so "
            "the crest factor is at most 1.6 (peak bound 1.2 V / rms 0.75); CKT_SOLVE's total "
            "row shows the bound's basis",
        ),
    ],
)
def test_each_peak_method(monkeypatch, method, peak_out, crest_out):
    fake = types.SimpleNamespace(value=1.2, time_s=math.nan, method=method)
    monkeypatch.setattr(solution_module.Spectrum, "true_peak", lambda self: fake)
    cache_clear()
    peak = FUNCTIONS["CKT_PEAK"].call(PARTS, SOURCES, "out")
    crest = FUNCTIONS["CKT_CREST"].call(PARTS, SOURCES, "out")
    if isinstance(peak_out, str):
        assert (peak, crest) == (peak_out, crest_out)
    else:
        assert peak == pytest.approx(peak_out, rel=1e-12)
        assert crest == pytest.approx(crest_out, rel=1e-12)
    cache_clear()


def test_an_unknown_method_is_an_error_not_a_number(monkeypatch):
    fake = types.SimpleNamespace(value=1.2, time_s=math.nan, method="guess")
    monkeypatch.setattr(solution_module.Spectrum, "true_peak", lambda self: fake)
    cache_clear()
    out = FUNCTIONS["CKT_PEAK"].call(PARTS, SOURCES, "out")
    assert out == "ERROR: internal error RuntimeError: unknown peak method 'guess'"
    cache_clear()


def test_crest_factor_of_a_zero_signal_is_refused():
    # the reference node's voltage is zero at every frequency
    sources = [["name", "kind", "from", "to", "freq_hz", "peak"], ["I", "I", "GND", "out", 50, 1]]
    parts = [["name", "kind", "from", "to", "value"], ["R1", "R", "out", "GND", "1k"]]
    cache_clear()
    out = FUNCTIONS["CKT_CREST"].call(parts, sources, "GND", "V")
    assert out == "ERROR: V(GND): the signal is zero; a crest factor needs a non-zero RMS"
