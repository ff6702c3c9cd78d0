"""THD's fundamental is never guessed silently, and a resistance law needs its f₁.

THD basis: IEEE Std 519-2014 (harmonics 2…50 over the fundamental, DC and
interharmonics excluded); check values are the closed form √(Σ h-rms²)/rms₁.
Resistance law R(f) = R·(f/f₁)^x: the form the parts table documents (common practice
for skin effect).
"""

import math

import numpy as np
import pytest
from helpers import parts, sources

import xlfuncs
from xlfuncs import InputError, Spectrum
from xlfuncs.functions import FUNCTIONS, cache_clear
from xlfuncs.solution import ThdResult
from xlfuncs.studies import find_resonances

P = parts(["R1", "R", "a", "GND", 1.0])


def _tones(*rows):
    return sources(*[["Vs", "V", "a", "GND", f, pk, 0.0] for f, pk in rows])


def test_a_subharmonic_is_not_taken_for_the_fundamental():
    # 50 Hz 1 V, 25 Hz 2 % subharmonic, 5th 10 %, 7th 5 %: THD = √(0.1² + 0.05²)
    s = _tones((25.0, 0.02), (50.0, 1.0), (250.0, 0.1), (350.0, 0.05))
    sol = xlfuncs.solve(P, s)
    with pytest.raises(InputError) as exc:
        sol.voltage("a").thd_result()
    msg = str(exc.value)
    assert msg.startswith("options, column fundamental_hz — THD of V(a): no fundamental_hz")
    assert "the lowest tone (25 Hz) is not the largest (50 Hz is)" in msg
    sol50 = xlfuncs.solve(P, s, [["fundamental_hz", 50]])
    r = sol50.voltage("a").thd_result()
    assert isinstance(r, ThdResult) and not r.assumed and r.fundamental_hz == 50.0
    assert float(r) == pytest.approx(math.hypot(0.1, 0.05), rel=1e-12)  # 0.1118
    assert "from fundamental_hz" in r.basis and "2…50 of 50 Hz" in r.basis


def test_the_documented_rule_says_when_it_assumed():
    s = _tones((50.0, 1.0), (250.0, 0.1), (350.0, 0.05))
    r = xlfuncs.solve(P, s).voltage("a").thd_result()
    assert r.assumed and r.fundamental_hz == 50.0
    assert float(r) == pytest.approx(math.hypot(0.1, 0.05), rel=1e-12)
    assert "assumed: the lowest tone, also the largest" in r.basis
    assert np.asarray(r) == pytest.approx(float(r))


def test_a_resonant_harmonic_larger_than_the_fundamental_is_refused_without_f1():
    s = _tones((50.0, 1.0), (250.0, 1.5))
    with pytest.raises(InputError, match=r"lowest tone \(50 Hz\) is not the largest \(250 Hz"):
        xlfuncs.solve(P, s).voltage("a").thd_result()
    r = xlfuncs.solve(P, s, [["fundamental_hz", 50]]).voltage("a").thd_result()
    assert float(r) == pytest.approx(1.5, rel=1e-12)


def test_thd_with_a_zero_fundamental_is_refused_not_infinite():
    sp = Spectrum(np.array([50.0, 150.0]), np.array([0.0, 1.0]), "V(x)", fundamental_hz=50.0)
    with pytest.raises(
        InputError, match=r"THD is undefined: the signal is zero at the fundamental"
    ):
        sp.thd_result()
    cache_clear()
    # a 150 Hz source only, fundamental 50 Hz: no tone at the fundamental at all
    out = FUNCTIONS["CKT_THD"].call(P, _tones((150.0, 1.0)), "a", None, [["fundamental_hz", 50]])
    assert isinstance(out, str) and "fundamental (50 Hz)" in out


def test_crest_factor_of_a_zero_signal_is_refused_not_nan():
    sp = Spectrum(np.array([50.0]), np.array([0.0]), "V(x)")
    with pytest.raises(InputError, match="crest factor of a zero signal is undefined"):
        _ = sp.crest_factor


RLAW = [["name", "kind", "from", "to", "value", "r_exponent"], ["Rs", "R", "a", "GND", 2.0, 0.5]]


@pytest.mark.parametrize(
    "run",
    [
        lambda: xlfuncs.solve(RLAW, _tones((50.0, 1.0), (250.0, 0.1))),
        lambda: xlfuncs.impedance_scan(RLAW, "a", [50.0, 250.0]),
        lambda: find_resonances(RLAW, "a", 10.0, 1e3),
        lambda: xlfuncs.Circuit.from_tables(RLAW),
    ],
)
def test_a_resistance_law_without_fundamental_is_refused_everywhere(run):
    with pytest.raises(InputError) as exc:
        run()
    msg = str(exc.value)
    assert msg.startswith("parts row 2, column r_exponent: 0.5")
    assert "needs f₁: give fundamental_hz in the options table" in msg


def test_a_resistance_law_with_its_fundamental():
    # R(250 Hz) = 2 Ω · (250/50)^0.5 = 2√5 Ω; below f₁ the law holds R at 2 Ω
    _f, z = xlfuncs.impedance_scan(RLAW, "a", [25.0, 50.0, 250.0], [["fundamental_hz", 50]])
    np.testing.assert_allclose(np.abs(z), [2.0, 2.0, 2 * math.sqrt(5)], rtol=1e-12)


@pytest.mark.parametrize("x", [-0.5, 2.5])
def test_resistance_law_exponent_range(x):
    p = [RLAW[0], ["Rs", "R", "a", "GND", 2.0, x]]
    with pytest.raises(InputError, match="parts row 2, column r_exponent"):
        xlfuncs.Circuit.from_tables(p, None, [["fundamental_hz", 50]])
