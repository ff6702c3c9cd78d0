"""Detuning, drive spectra, capacitor duty and the frequency-dependent resistance law."""

import math

import numpy as np
import pytest
import sympy as sp

import xlfuncs
from xlfuncs.studies import capacitor_duty, characteristic_orders, detuning, drive_sources


def test_detuning_published_example():
    # Published detuned-reactor calculation (power-factor-correction design note, as given in
    # the project's reference notes): 80 kvar at 525 V, 50 Hz, p = 7 % →
    # X_C = 3.445 Ω, X_L = 0.241 Ω, L = 0.768 mH, tuned to 189 Hz
    d = detuning(80, 525, 50, p=0.07)
    assert round(d.x_c_ohm, 3) == 3.445
    assert round(d.x_l_ohm, 3) == 0.241
    assert round(d.l_henry * 1e3, 3) == 0.768
    assert round(d.tuned_hz) == 189


@pytest.mark.parametrize(
    ("p", "order"),
    [(0.0567, 4.2), (0.07, 3.78), (0.14, 2.67)],  # typical p and h (common practice)
)
def test_detuning_typical_ratios(p, order):
    assert detuning(50, 400, 50, p=p).order == pytest.approx(order, abs=0.005)
    assert detuning(50, 400, 50, order=1 / math.sqrt(p)).p == pytest.approx(p, rel=1e-12)


def test_detuning_voltage_rise_closed_form():
    assert detuning(50, 400, 50, p=0.07).voltage_rise == pytest.approx(
        1 / 0.93, rel=1e-15
    )  # U/(1−p)


def test_detuned_filter_tunes_where_the_solver_says():
    # the series L–C built from the sizing has its |Z| minimum at the tuned order
    d = detuning(80, 525, 50, p=0.07)
    p = [
        ["name", "kind", "from", "to", "value"],
        ["L", "L", "n", "m", d.l_henry],
        ["C", "C", "m", "GND", d.c_farad],
        ["R", "R", "n", "GND", 1e6],
    ]
    _f, z = xlfuncs.impedance_scan(p, "n", [d.tuned_hz * 0.999, d.tuned_hz, d.tuned_hz * 1.001])
    assert abs(z[1]) < abs(z[0]) and abs(z[1]) < abs(z[2])


def test_six_pulse_orders_and_ideal_thd():
    assert characteristic_orders(6, 25) == [5, 7, 11, 13, 17, 19, 23, 25]  # 6k ± 1
    assert characteristic_orders(12, 25) == [11, 13, 23, 25]  # 12k ± 1
    rows = drive_sources("Id", "GND", "bus", 100.0, 6, 25)
    h = [r[4] for r in rows[1:]]
    i = np.array([r[5] for r in rows[1:]])
    assert np.allclose(i, 100.0 / np.array(h))  # ideal I_h = I_1/h (common practice)
    thd = math.sqrt((i**2).sum()) / 100.0
    # ≈ 29 % for orders 5…25, as stated in a published AC-drives harmonics guide (named in
    # the project's reference notes); exact value from sympy: √(Σ 1/h²)
    exact = float(sp.sqrt(sum(sp.Rational(1, hh * hh) for hh in (5, 7, 11, 13, 17, 19, 23, 25))))
    assert thd == pytest.approx(exact, rel=1e-14)
    assert round(100 * thd) == 29


def test_drive_rows_solve_to_the_same_thd_in_a_resistor():
    rows = drive_sources("Id", "GND", "bus", 100.0, include_fundamental=True)
    sol = xlfuncs.solve(
        [["name", "kind", "from", "to", "value"], ["R", "R", "bus", "GND", 1.0]],
        rows,
        [["fundamental_hz", 50]],
    )
    assert sol.current("R").thd() == pytest.approx(0.29036, abs=5e-5)


def test_capacitor_duty_definitions():
    # 1.0 pu fundamental + 5 % fifth on an ideal capacitor: I_h ∝ h·V_h (common practice);
    # IEEE Std 18 duty quantities (from the definitions in the capacitor module)
    f = np.array([60.0, 300.0])
    v = np.array([1.0, 0.05]) * 480
    i = np.array([1.0, 0.25]) * 100.0
    d = capacitor_duty(f, v, i, rated_kvar=48.0, rated_volts=480.0)
    r = {row[0]: row for row in d.rows}
    assert r["rms voltage"][3] == pytest.approx(math.sqrt(1 + 0.05**2), rel=1e-15)
    assert r["peak voltage"][3] == pytest.approx(1.05, rel=1e-15)  # arithmetic sum of peaks
    assert r["rms current"][3] == pytest.approx(math.sqrt(1 + 0.25**2), rel=1e-15)
    assert r["kvar"][3] == pytest.approx(1 + 0.05 * 0.25, rel=1e-15)
    assert [row[4] for row in d.rows] == [1.10, 1.20, 1.35, 1.35]  # IEEE Std 18-2002 limits
    assert d.passed


def test_capacitor_duty_from_a_solved_bank():
    # a 4.8 kvar (per phase) capacitor on a 480 V source with 10 % 5th harmonic voltage
    w = 2 * math.pi * 60
    c = 4.8e3 / (w * 480**2)
    sol = xlfuncs.solve(
        [["name", "kind", "from", "to", "value"], ["C1", "C", "b", "GND", c]],
        [
            ["name", "kind", "from", "to", "harmonic", "rms"],
            ["V", "V", "b", "GND", 1, 480.0],
            ["V", "V", "b", "GND", 5, 48.0],
        ],
        [["fundamental_hz", 60]],
    )
    v, i = sol.voltage("C1"), sol.current("C1")
    d = capacitor_duty(v.freqs_hz, v.rms, i.rms, 4.8, 480.0)
    r = {row[0]: row for row in d.rows}
    assert r["rms current"][3] == pytest.approx(math.sqrt(1 + 0.5**2), rel=1e-12)  # I5 = 5·0.1
    assert r["kvar"][3] == pytest.approx(1 + 0.1 * 0.5, rel=1e-12)
    assert r["peak voltage"][3] == pytest.approx(1.1, rel=1e-12)
    assert r["rms current"][5] and d.passed is True


def test_frequency_dependent_resistance_law():
    # R(h) = R1·h^x with x = 0.5 (skin effect, common practice): at h = 4 the resistance doubles
    p = [["name", "kind", "from", "to", "value", "r_exponent"], ["R", "R", "n", "GND", 2.0, 0.5]]
    s = [
        ["name", "kind", "from", "to", "harmonic", "peak"],
        ["I", "I", "GND", "n", 1, 1.0],
        ["I", "I", "GND", "n", 4, 1.0],
        ["I", "I", "GND", "n", 0, 1.0],
    ]
    sol = xlfuncs.solve(p, s, [["fundamental_hz", 50]])
    v = sol.voltage("n").phasors
    assert v[0] == pytest.approx(2.0, rel=1e-15)  # DC: R1
    assert v[1] == pytest.approx(2.0, rel=1e-15)  # fundamental: R1
    assert v[2] == pytest.approx(4.0, rel=1e-14)  # h = 4: R1·√4
    assert sol.power_balance()[2] == pytest.approx(0, abs=1e-12)
