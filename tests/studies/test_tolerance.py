"""Tolerance studies against independent solves and known distributions."""

import itertools
import math

import numpy as np
import pytest

import xlfuncs
from xlfuncs.studies import tolerance_study

SRC = [["name", "kind", "from", "to", "freq_hz", "peak"], ["V", "V", "in", "GND", 50, 10.0]]


def _divider(t1, t2):
    return [
        ["name", "kind", "from", "to", "value", "tolerance"],
        ["R1", "R", "in", "out", 1000.0, t1],
        ["R2", "R", "out", "GND", 1000.0, t2],
    ]


def test_no_tolerance_gives_the_nominal_everywhere():
    r = tolerance_study(_divider(None, None), SRC, target="out", samples=50)
    assert np.all(r.values == r.nominal) and r.corner_method == "none"


def test_exhaustive_corners_equal_explicit_solves():
    tols = (0.05, 0.1)
    r = tolerance_study(_divider(*tols), SRC, target="out", samples=200)
    vals = []
    for s1, s2 in itertools.product((-1, 1), repeat=2):  # independent: rebuild the tables
        p = [
            ["name", "kind", "from", "to", "value"],
            ["R1", "R", "in", "out", 1000.0 * (1 + s1 * tols[0])],
            ["R2", "R", "out", "GND", 1000.0 * (1 + s2 * tols[1])],
        ]
        vals.append(float(xlfuncs.solve(p, SRC).voltage("out").rms_total))
    assert r.corner_method == "exhaustive"
    assert r.corner_min == pytest.approx(min(vals), rel=1e-12)
    assert r.corner_max == pytest.approx(max(vals), rel=1e-12)
    assert r.corner_min <= r.values.min() and r.values.max() <= r.corner_max


def test_monte_carlo_percentiles_follow_the_uniform_law():
    # V_out = V·R2/(R1+R2) is monotone in R2, so its p-quantile is the formula at R2's
    # p-quantile 1000·(1 − t + 2tp) (uniform law); 20 000 samples → quantile error ~0.3 %
    t = 0.2
    r = tolerance_study(_divider(None, t), SRC, target="out", samples=20_000, seed=7)
    for q in (5, 50, 95):
        r2 = 1000 * (1 - t + 2 * t * q / 100)
        expect = 10 / math.sqrt(2) * r2 / (1000 + r2)
        assert r.percentile(q) == pytest.approx(expect, rel=3e-3)


def test_normal_law_uses_three_sigma():
    # V = I·R is linear in R, so std(V)/V_nominal = σ_R/R = t/3 (band read as ±3σ, common
    # practice); 40 000 samples → the sample std is within ~1 % of σ
    t = 0.3
    p = [
        ["name", "kind", "from", "to", "value", "tolerance", "tol_dist"],
        ["R", "R", "n", "GND", 50.0, t, "normal"],
    ]
    s = [["name", "kind", "from", "to", "freq_hz", "peak"], ["I", "I", "GND", "n", 0, 2.0]]
    r = tolerance_study(p, s, target="n", metric="dc", samples=40_000, seed=11)
    assert r.nominal == pytest.approx(100.0, rel=1e-15)
    assert np.std(r.values, ddof=1) / r.nominal == pytest.approx(t / 3, rel=0.02)
    assert np.mean(r.values) == pytest.approx(100.0, rel=2e-3)


def test_resonance_order_corners_match_closed_form():
    # parallel L‖C (light damping): order = 1/(2π√(LC)) / f1, monotone in L (closed form)
    ind, cap, f1, t = 1e-3, 100e-6, 50.0, 0.1
    p = [
        ["name", "kind", "from", "to", "value", "tolerance"],
        ["R", "R", "n", "GND", 1e5, None],
        ["L", "L", "n", "GND", ind, t],
        ["C", "C", "n", "GND", cap, None],
    ]
    s = [["name", "kind", "from", "to", "freq_hz", "peak"], ["I", "I", "GND", "n", 50, 1.0]]
    r = tolerance_study(
        p, s, [["fundamental_hz", f1]], target="n", metric="resonance", samples=300
    )
    h = [1 / (2 * math.pi * math.sqrt(ind * (1 + k * t) * cap)) / f1 for k in (1, -1)]
    assert r.nominal == pytest.approx(1 / (2 * math.pi * math.sqrt(ind * cap)) / f1, rel=1e-4)
    assert r.corner_min == pytest.approx(h[0], rel=1e-4)
    assert r.corner_max == pytest.approx(h[1], rel=1e-4)


def test_linearised_corners_beyond_twelve_parts():
    # 13 resistors in series: V across the last one; linearised corners are exact for this
    # monotone result (closed form of the divider)
    n = 13
    p = [["name", "kind", "from", "to", "value", "tolerance"]]
    nodes = ["in"] + [f"n{i}" for i in range(1, n)] + ["GND"]
    for i in range(n):
        p.append([f"R{i}", "R", nodes[i], nodes[i + 1], 100.0, 0.1])
    r = tolerance_study(p, SRC, target=f"R{n - 1}", quantity="V", samples=100)
    assert r.corner_method == "linearised"
    hi = 110.0 / (110.0 + 90.0 * (n - 1)) * 10 / math.sqrt(2)
    lo = 90.0 / (90.0 + 110.0 * (n - 1)) * 10 / math.sqrt(2)
    assert r.corner_max == pytest.approx(hi, rel=1e-9)
    assert r.corner_min == pytest.approx(lo, rel=1e-9)


def test_bad_metric_is_named():
    with pytest.raises(xlfuncs.InputError, match="argument metric: 'median'"):
        tolerance_study(_divider(0.1, 0.1), SRC, target="out", metric="median", samples=10)
