"""Resonances against the rule of thumb h_r ≈ √(S_sc / Q_cap) and closed forms.

Rule of thumb: common practice, stated in IEEE 519-type application guidance and in
power-quality texts (e.g. R. C. Dugan et al., Electrical Power Systems Quality, 2nd ed.,
McGraw-Hill 2002, ch. 5 — chapter from memory). The two worked cases below (480 V bus,
1000 kVA 5.3 % transformer, 100 kvar → h ≈ 13.7; 13.8 kV bus, 125 MVA short-circuit,
5 Mvar → h ≈ 5.0) are as published in power-quality notes collected in the project's
reference notes.
"""

import math

import pytest

from xlfuncs.studies import find_resonances, resonance_order_rule


def _bank_on_source(v_ll, s_sc_va, q_var, f1, x_over_r=20.0):
    """Per-phase: source reactance from S_sc with X/R, bank from Q, all at the bus."""
    w = 2 * math.pi * f1
    z = v_ll**2 / s_sc_va
    x = z * x_over_r / math.sqrt(1 + x_over_r**2)
    c = q_var / (w * v_ll**2)
    return [
        ["name", "kind", "from", "to", "value"],
        ["Rs", "R", "bus", "m", x / x_over_r],
        ["Ls", "L", "m", "GND", x / w],
        ["Cb", "C", "bus", "GND", c],
    ]


@pytest.mark.parametrize(
    ("v_ll", "s_sc", "q", "f1", "h_published"),
    [
        (480.0, 1000e3 / 0.053, 100e3, 60.0, 13.7),  # 1000 kVA, 5.3 %, 100 kvar → ≈ 13.7
        (13.8e3, 125e6, 5e6, 60.0, 5.0),  # 125 MVA short-circuit, 5 Mvar → ≈ 5.0
    ],
)
def test_parallel_resonance_matches_rule_of_thumb(v_ll, s_sc, q, f1, h_published):
    p = _bank_on_source(v_ll, s_sc, q, f1)
    res = find_resonances(p, "bus", f1, 50 * f1, fundamental_hz=f1)
    par = [r for r in res if r.kind == "parallel"]
    assert len(par) == 1
    assert resonance_order_rule(s_sc / 1e6, q / 1e6) == pytest.approx(h_published, abs=0.05)
    assert par[0].order == pytest.approx(h_published, abs=0.05)


def test_sharp_peak_between_grid_points_found_within_0p1_percent():
    # high-Q parallel RLC: |Z| peaks exactly at ω0 = 1/√(LC) (closed form); a 10-point grid
    # over three decades cannot see it, the natural-frequency seeds and refinement do
    ind, cap = 1e-3, 1e-6
    f0 = 1 / (2 * math.pi * math.sqrt(ind * cap))
    p = [
        ["name", "kind", "from", "to", "value"],
        ["R", "R", "n", "GND", 1e7],
        ["L", "L", "n", "GND", ind],
        ["C", "C", "n", "GND", cap],
    ]
    res = find_resonances(p, "n", 100, 1e5, points=10)
    assert len(res) == 1 and res[0].kind == "parallel"
    assert abs(res[0].freq_hz - f0) / f0 < 1e-3
    assert res[0].z_ohm == pytest.approx(1e7, rel=1e-3)  # |Z(ω0)| = R


def test_series_and_parallel_of_a_detuned_bank():
    # source L_s feeding a bus with a series L_f–C branch: series resonance of the branch at
    # 1/(2π√(L_f C)); parallel resonance below it at 1/(2π√((L_s+L_f) C)) (closed forms)
    ls, lf, c = 50e-6, 200e-6, 1e-3
    p = [
        ["name", "kind", "from", "to", "value"],
        ["Ls", "L", "bus", "GND", ls],
        ["Lf", "L", "bus", "m", lf],
        ["C", "C", "m", "x", c],
        ["Rd", "R", "x", "GND", 1e-4],
    ]
    res = find_resonances(p, "bus", 10, 2000, fundamental_hz=50)
    kinds = {r.kind: r for r in res}
    fs = 1 / (2 * math.pi * math.sqrt(lf * c))
    fp = 1 / (2 * math.pi * math.sqrt((ls + lf) * c))
    assert kinds["series"].freq_hz == pytest.approx(fs, rel=1e-3)
    assert kinds["parallel"].freq_hz == pytest.approx(fp, rel=1e-3)
