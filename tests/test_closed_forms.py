"""Solver against closed-form results of circuit theory, to 1e-12 relative.

Formulas: voltage divider, series and parallel RLC impedance, resonance ω0 = 1/√(LC),
series-resonance current V/R, quality factor. Source: C. K. Alexander, M. N. O. Sadiku,
*Fundamentals of Electric Circuits*, 5th ed., McGraw-Hill 2013, ch. 14 "Series
resonance" / "Parallel resonance" (section numbers from memory); the formulas are
common practice in every circuits text.
"""

import math

import numpy as np
import pytest
from helpers import parts, sources

import xlfuncs

RTOL = 1e-12  # closed forms: only round-off separates the two


def rel(a, b):
    return abs(a - b) / abs(b)


@pytest.mark.parametrize(
    ("r1", "r2", "vdc", "vac", "f"),
    [
        (1e3, 1e3, 10.0, 2.0, 50.0),  # divider ratio R2/(R1+R2) — common practice
        (4.7e3, 1e3, -5.0, 1.0, 1e3),
        (1.0, 1e6, 1.0, 1.0, 60.0),
    ],
)
def test_resistive_divider_dc_and_ac(r1, r2, vdc, vac, f):
    sol = xlfuncs.solve(
        parts(["R1", "R", "in", "out", r1], ["R2", "R", "out", "GND", r2]),
        sources(["Vs", "V", "in", "GND", 0, vdc, 0], ["Vs", "V", "in", "GND", f, vac, 30]),
    )
    v = sol.voltage("out")
    k = r2 / (r1 + r2)
    assert rel(v.dc, vdc * k) < RTOL
    assert rel(v.phasors[1], vac * k * np.exp(1j * math.radians(30))) < RTOL
    # total RMS of DC + sine: sqrt(Vdc² + (Vac/√2)²) (IEEE Std 1459-2010 RMS definition)
    assert rel(v.rms_total, k * math.sqrt(vdc**2 + vac**2 / 2)) < RTOL


@pytest.mark.parametrize(
    ("r", "ind", "cap"), [(10.0, 10e-3, 100e-6), (0.5, 2e-3, 47e-6), (1e3, 1.0, 1e-9)]
)
def test_series_rlc_impedance_and_resonance(r, ind, cap):
    w0 = 1 / math.sqrt(ind * cap)  # ω0 = 1/√(LC)
    f0 = w0 / (2 * math.pi)
    freqs = [f0 / 3, f0, 2.5 * f0]
    tbl = sources(*[["Vs", "V", "in", "GND", f, 1.0, 0] for f in freqs])
    sol = xlfuncs.solve(
        parts(["R1", "R", "in", "a", r], ["L1", "L", "a", "b", ind], ["C1", "C", "b", "GND", cap]),
        tbl,
    )
    i = sol.current("R1").phasors
    for k, f in enumerate(freqs):
        w = 2 * math.pi * f
        z = r + 1j * w * ind + 1 / (1j * w * cap)  # series RLC: Z = R + jωL + 1/(jωC)
        assert rel(i[k], 1 / z) < 1e-11
    # at resonance the current is V/R and the capacitor voltage is Q·V, Q = ω0 L / R
    assert rel(i[1], 1 / r) < 1e-9
    assert rel(abs(sol.voltage("C1").phasors[1]), w0 * ind / r) < 1e-9


@pytest.mark.parametrize(("r", "ind", "cap"), [(100.0, 10e-3, 10e-6), (1e4, 1e-3, 1e-6)])
def test_parallel_rlc_driving_point_impedance(r, ind, cap):
    f = np.array([10.0, 1 / (2 * math.pi * math.sqrt(ind * cap)), 1e5])
    _freqs, z = xlfuncs.impedance_scan(
        parts(
            ["R1", "R", "n", "GND", r], ["L1", "L", "n", "GND", ind], ["C1", "C", "n", "GND", cap]
        ),
        "n",
        f,
    )
    w = 2 * np.pi * f
    expect = 1 / (1 / r + 1 / (1j * w * ind) + 1j * w * cap)  # parallel RLC: Y = G + 1/(jωL) + jωC
    np.testing.assert_allclose(z, expect, rtol=1e-9)
    assert rel(abs(z[1]), r) < 1e-9  # at resonance |Z| = R


def test_current_source_into_rc_and_dc_exactness():
    # I = 2 A DC into R‖C: V = I·R exactly (capacitor open at DC); AC: V = I / (G + jωC)
    r, c, f = 5.0, 1e-3, 50.0
    sol = xlfuncs.solve(
        parts(["R1", "R", "n", "GND", r], ["C1", "C", "n", "GND", c]),
        sources(["Is", "I", "GND", "n", 0, 2.0, 0], ["Is", "I", "GND", "n", f, 1.0, 0]),
    )
    v = sol.voltage("n").phasors
    assert v[0] == pytest.approx(10.0, rel=RTOL)
    assert rel(v[1], 1 / (1 / r + 2j * math.pi * f * c)) < RTOL
    assert sol.current("C1").phasors[0] == 0


def test_inductor_is_a_short_at_dc():
    sol = xlfuncs.solve(
        parts(["R1", "R", "in", "a", 4.0], ["L1", "L", "a", "GND", 1.0]),
        sources(["Vs", "V", "in", "GND", 0, 12.0, 0]),
    )
    assert sol.current("L1").dc == pytest.approx(3.0, rel=RTOL)
    assert sol.voltage("L1").dc == 0.0


def test_ideal_transformer_reflects_impedance_by_n_squared():
    # an ideal transformer n:1 loaded by R presents n²R at its primary (common practice)
    n, r = 5.0, 8.0
    tbl = [
        ["name", "kind", "from", "to", "value", "sec_from", "sec_to"],
        ["T1", "XFMR", "p", "GND", n, "s", "GND"],
        ["RL", "R", "s", "GND", r, None, None],
    ]
    _f, z = xlfuncs.impedance_scan(tbl, "p", [50.0, 1e3])
    np.testing.assert_allclose(z, n**2 * r, rtol=RTOL)


def test_coupled_inductors_series_aiding_and_opposing():
    # series-aiding coils: L = L1 + L2 + 2M; opposing: L1 + L2 − 2M, M = k√(L1L2)
    l1, l2, k = 4e-3, 9e-3, 0.5
    m = k * math.sqrt(l1 * l2)
    w = 2 * math.pi * 1e3
    head = ["name", "kind", "from", "to", "value", "coil_a", "coil_b"]
    aid = [
        head,
        ["L1", "L", "n", "a", l1, None, None],
        ["L2", "L", "a", "GND", l2, None, None],
        ["K1", "COUPLING", None, None, k, "L1", "L2"],
        ["Rp", "R", "n", "GND", 1e12, None, None],
    ]
    opp = [
        head,
        ["L1", "L", "n", "a", l1, None, None],
        ["L2", "L", "GND", "a", l2, None, None],
        ["K1", "COUPLING", None, None, k, "L1", "L2"],
        ["Rp", "R", "n", "GND", 1e12, None, None],
    ]
    _f, za = xlfuncs.impedance_scan(aid, "n", [1e3])
    _f, zo = xlfuncs.impedance_scan(opp, "n", [1e3])
    ya = 1 / (1j * w * (l1 + l2 + 2 * m)) + 1e-12
    yo = 1 / (1j * w * (l1 + l2 - 2 * m)) + 1e-12
    assert rel(za[0], 1 / ya) < 1e-10
    assert rel(zo[0], 1 / yo) < 1e-10
