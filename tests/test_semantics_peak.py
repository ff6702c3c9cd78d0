"""True peak: the global maximum to 1e-9 (checked against dense sampling refined by
scipy's bounded scalar optimiser, an independent method), the supremum of rationally
independent tone families (Kronecker's theorem: their phases fill the torus densely, so
sup x(t) is the sum of each family's own maximum — common practice in the theory of
almost-periodic functions), bounds that say so, and bounded memory.
"""

import math
import tracemalloc

import numpy as np
import pytest
from helpers import parts, sources
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

import xlfuncs
from xlfuncs import true_peak
from xlfuncs.views import element_table, node_table, solve_table


def _x(f, x, t):
    return np.real(np.exp(2j * np.pi * np.outer(np.atleast_1d(t), f)) @ x)


def _reference_peak(f, x, period, per_period=400):
    """max |x(t)| over one period: a dense grid (``per_period`` points per period of the
    highest tone), then scipy's bounded optimiser on every grid maximum within 1e-3 of the
    best, over ± one grid step."""
    n = int(per_period * period * f.max()) + 16
    t = np.linspace(0.0, period, n, endpoint=False)
    y = np.abs(_x(f, x, t))
    dt = t[1] - t[0]
    is_max = (y >= np.roll(y, 1)) & (y >= np.roll(y, -1))
    best = y.max()
    ref = best
    for i in np.flatnonzero(is_max & (y >= best * (1 - 1e-3))):
        res = minimize_scalar(
            lambda s: -abs(_x(f, x, s)[0]),
            bounds=(t[i] - dt, t[i] + dt),
            method="bounded",
            options={"xatol": 1e-15 * period},
        )
        ref = max(ref, -res.fun)
    return ref


def test_the_global_maximum_is_found_when_top_samples_share_one_lobe():
    # the reproduction: 50 Hz and 777.5 Hz (common period 0.4 s); the waveform reaches
    # 3.7443320 while picking the top samples' lobe gave 3.7441806
    f = np.array([50.0, 777.5])
    x = np.array([1.0, 2.642143638965749 - 0.7419256038597898j])
    pk = true_peak(f, x)
    ref = _reference_peak(f, x, 0.4)
    assert pk.method == "exact"
    assert pk.value == pytest.approx(ref, rel=1e-9)
    assert pk.value == pytest.approx(3.7443320, abs=5e-8)
    assert abs(_x(f, x, pk.time_s)[0]) == pytest.approx(pk.value, rel=1e-12)


@st.composite
def _spectra(draw):
    n = draw(st.integers(min_value=1, max_value=7))
    orders = draw(st.lists(st.integers(1, 40), min_size=n, max_size=n, unique=True))
    amp = st.floats(-1, 1, allow_nan=False, allow_infinity=False)
    re = draw(st.lists(amp, min_size=n, max_size=n))
    im = draw(st.lists(amp, min_size=n, max_size=n))
    x = np.array(re) + 1j * np.array(im)
    if np.abs(x).max() < 1e-3:
        x[0] = 1.0
    base = draw(st.floats(1.0, 100.0))
    f = base * np.array(orders, dtype=float)
    if draw(st.booleans()):
        f = np.concatenate([[0.0], f])
        x = np.concatenate([[draw(amp)], x])
    return f, x, base


@settings(max_examples=40, deadline=None)
@given(_spectra())
def test_exact_peak_matches_dense_sampling_with_refinement(case):
    f, x, base = case
    pk = true_peak(f, x)
    ref = _reference_peak(f, x, 1.0 / base)
    assert pk.method == "exact"
    scale = np.abs(x).sum()
    assert abs(pk.value - ref) <= 1e-9 * ref + 1e-13 * scale
    assert abs(abs(_x(f, x, pk.time_s)[0]) - pk.value) <= 1e-12 * scale


def test_independent_families_give_the_supremum():
    # 50 Hz 1∠0°, 150 Hz (1/6)∠180°, 50√2 Hz 0.05: the first family cos θ − cos 3θ / 6 peaks
    # at √3/2 (closed form: 1.5c − (2/3)c³ at c = √3/2); the supremum adds 0.05
    f = np.array([50.0, 150.0, 50.0 * math.sqrt(2)])
    x = np.array([1.0, -1 / 6, 0.05])
    pk = true_peak(f, x)
    assert pk.method == "supremum" and pk.families == 2
    assert pk.value == pytest.approx(math.sqrt(3) / 2 + 0.05, rel=1e-12)  # 0.9160
    assert pk.reached <= pk.value and math.isfinite(pk.time_s)
    rms = math.sqrt((1 + 1 / 36 + 0.05**2) / 2)
    assert pk.value / rms == pytest.approx(1.2763, abs=1e-4)  # crest factor
    # and never exceeds it: dense sampling over 100 s stays below
    t = np.linspace(0, 100.0, 400_001)
    assert np.abs(_x(f, x, t)).max() <= pk.value * (1 + 1e-12)


def test_a_dc_offset_adds_to_the_side_it_favours():
    # -0.2 + cos(2π·50t) + 0.3cos(2π·50√2 t): sup|x| = 0.2 + 1 + 0.3 (both down together)
    f = np.array([0.0, 50.0, 50.0 * math.sqrt(2)])
    x = np.array([-0.2, 1.0, 0.3])
    pk = true_peak(f, x)
    assert pk.method == "supremum" and pk.value == pytest.approx(1.5, rel=1e-12)


def test_families_with_common_bases_are_grouped():
    # 50 and 60 Hz share 10 Hz; 50√2 and 60√2 share 10√2 Hz: two families
    r2 = math.sqrt(2)
    f = np.array([50.0, 60.0, 50 * r2, 60 * r2])
    x = np.array([1.0, 0.5, 0.25, 0.125])
    pk = true_peak(f, x)
    assert pk.method == "supremum" and pk.families == 2
    # each family's own maximum, from its own exact peak (all cosines align at t = 0)
    assert pk.value == pytest.approx(1.875, rel=1e-12)


def test_related_families_are_an_upper_bound_with_its_accuracy():
    # bases 50, 50√2 and 50(1+√2) are pairwise incommensurate but related (b3 = b1 + b2):
    # the phases stay on a 2-D subtorus, so the family sum is only an upper bound
    r2 = math.sqrt(2)
    f = np.array([50.0, 50 * r2, 50 * (1 + r2)])
    x = np.array([1.0, 1.0, 1.0j])
    pk = true_peak(f, x)
    assert pk.method == "bound" and pk.families == 3
    assert pk.value == pytest.approx(3.0, rel=1e-12)
    assert pk.reached <= pk.value and pk.accuracy == pytest.approx(1 - pk.reached / pk.value)
    t = np.linspace(0, 40.0, 400_001)
    assert np.abs(_x(f, x, t)).max() <= pk.value


def test_commensurate_beyond_the_order_cap_is_a_bound():
    # 1 Hz and 100 kHz: one period, but 100000 harmonics: the sum of peaks bounds the value
    f = np.array([1.0, 1e5])
    x = np.array([1.0, 0.5j])
    pk = true_peak(f, x)
    assert pk.method == "bound"
    assert pk.value == pytest.approx(1.5, rel=1e-12)
    # the fast tone peaks within 5 µs of the slow one's peak: 1 − cos(2π·5e-6) ≈ 5e-10
    assert pk.accuracy < 1e-8 and pk.reached <= pk.value


def test_memory_stays_bounded_for_far_apart_tones_on_many_signals():
    # tones at 1 Hz and 65,536 Hz on 117 signals (the size of a 117-part report)
    rng = np.random.default_rng(7)
    x = rng.normal(size=(2, 117)) + 1j * rng.normal(size=(2, 117))
    f = np.array([1.0, 65536.0])
    tracemalloc.start()
    try:
        pk = true_peak(f, x)
        peak_bytes = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak_bytes < 200e6
    assert pk.method in ("exact", "bound")
    total = np.abs(x).sum(axis=0)
    assert np.all(pk.value <= total * (1 + 1e-15))  # never above |X1| + |X2|
    assert np.all(pk.reached <= pk.value) and np.all(pk.accuracy < 1e-4)
    # the times given reach the values stated
    y = np.array([abs(_x(f, x[:, k], pk.time_s[k])[0]) for k in range(117)])
    np.testing.assert_allclose(y, pk.reached, rtol=1e-9)


def test_memory_stays_bounded_for_a_tolerance_sized_batch():
    rng = np.random.default_rng(8)
    x = rng.normal(size=(2, 10_000)) + 1j * rng.normal(size=(2, 10_000))
    tracemalloc.start()
    try:
        pk = true_peak(np.array([1.0, 65536.0]), x)
        peak_bytes = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak_bytes < 200e6
    assert pk.method == "bound"
    assert np.all(pk.reached <= pk.value) and np.all(pk.value <= np.abs(x).sum(axis=0) + 1e-12)
    np.testing.assert_allclose(pk.accuracy, np.maximum(1 - pk.reached / pk.value, 1e-9))
    assert np.all(pk.accuracy < 1e-2)
    # the stated interval holds the true maximum (the exact path, one signal at a time)
    for k in (0, 1):
        exact = true_peak(np.array([1.0, 65536.0]), x[:, k])
        assert exact.method == "exact"
        assert pk.reached[k] <= exact.value * (1 + 1e-12)
        assert exact.value <= pk.value[k] * (1 + 1e-12)


def test_tables_say_the_basis_of_every_peak():
    p = parts(["R1", "R", "a", "b", 1.0], ["R2", "R", "b", "GND", 1.0])
    exact = xlfuncs.solve(
        p, sources(["Vs", "V", "a", "GND", 50.0, 2.0, 0.0], ["Vs", "V", "a", "GND", 150.0, 1, 0])
    )
    total = solve_table(exact, "b")[-1]
    assert total[0] == "total" and total[3] == "peak exact"
    assert total[1] == pytest.approx(1.5, rel=1e-12)  # (2 + 1)/2, aligned cosines
    s = sources(
        ["Vs", "V", "a", "GND", 50.0, 1.0, 0.0], ["Vs", "V", "a", "GND", 50 * math.sqrt(2), 1, 0]
    )
    sup = xlfuncs.solve(p, s)
    assert solve_table(sup, "b")[-1][3] == "peak supremum (2 independent tone families)"
    rep = element_table(sup)
    assert rep[0][-1] == "peak_basis" and rep[0][:6] == [
        "part",
        "kind",
        "v_rms",
        "i_rms",
        "i_peak",
        "power_w",
    ]
    assert {r[-1] for r in rep[1:-1]} == {"peak supremum (2 independent tone families)"}
    nodes = node_table(sup)
    assert nodes[0] == ["node", "dc", "rms", "peak", "peak_basis"]
    assert [r[3] for r in nodes[1:]] == pytest.approx([2.0, 1.0], rel=1e-12)  # a: 1 + 1
    s3 = sources(["Vs", "V", "a", "GND", 1.0, 1.0, 0.0], ["Vs", "V", "a", "GND", 1e5, 1, 0])
    bound = solve_table(xlfuncs.solve(p, s3), "b")[-1][3]
    assert bound.startswith("peak upper bound (")
