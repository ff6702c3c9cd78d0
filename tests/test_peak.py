"""True peak and the common period."""

import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from xlfuncs import common_period, true_peak


@pytest.mark.parametrize(
    ("freqs", "base", "orders"),
    [
        ([0, 50, 250, 350], 50.0, [0, 1, 5, 7]),
        ([50, 60], 10.0, [5, 6]),  # 50 Hz and 60 Hz share a 10 Hz base (common practice)
        ([16e3, 50], 50.0, [320, 1]),
    ],
)
def test_common_period(freqs, base, orders):
    b, o = common_period(np.array(freqs, dtype=float))
    assert b == pytest.approx(base, rel=1e-12)
    assert list(o) == orders


def test_incommensurate_tones_have_no_common_period():
    assert common_period(np.array([50.0, 50.0 * math.sqrt(2)])) is None


def test_peak_of_aligned_cosines_is_the_sum():
    # 0.25 + cos θ + 0.5 cos 3θ: every term peaks at θ = 0, so max = 1.75 (closed form)
    pk = true_peak(np.array([0.0, 50.0, 150.0]), np.array([0.25, 1.0, 0.5]))
    assert pk.method == "exact"
    assert pk.value == pytest.approx(1.75, rel=1e-13)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_peak_matches_bounded_optimiser(seed):
    rng = np.random.default_rng(seed)
    f = np.array([0.0, 50.0, 250.0, 350.0, 550.0, 650.0])
    x = rng.normal(size=6) + 1j * rng.normal(size=6)
    x[0] = x[0].real
    pk = true_peak(f, x)

    def neg(t):
        return -abs(np.real(np.sum(x * np.exp(2j * np.pi * f * t))))

    # reference: scipy's bounded optimiser from every point of a fine grid's best cell
    grid = np.linspace(0, 0.02, 20001)
    vals = np.abs(np.real(np.exp(2j * np.pi * np.outer(grid, f)) @ x))
    t0 = grid[np.argmax(vals)]
    ref = -minimize_scalar(
        neg, bounds=(t0 - 1e-6, t0 + 1e-6), method="bounded", options={"xatol": 1e-14}
    ).fun
    assert pk.value == pytest.approx(ref, rel=1e-9)
    assert abs(-neg(pk.time_s)) == pytest.approx(pk.value, rel=1e-12)


def test_incommensurate_peak_is_the_supremum():
    # -1 + 2cos(ωt) + 3cos(√2ωt + 90°): the two phases are dense on the torus
    # (Kronecker), so sup|x| = |-1 - 2 - 3| = 6, approached but never reached
    f = np.array([0.0, 50.0, 50.0 * math.sqrt(2)])
    x = np.array([-1.0, 2.0, 3.0j])
    pk = true_peak(f, x)
    assert pk.method == "supremum" and pk.families == 2
    assert pk.value == pytest.approx(6.0, rel=1e-12)
    assert pk.reached <= pk.value


def test_vectorised_over_signals():
    f = np.array([50.0, 150.0])
    x = np.array([[1.0, 2.0], [0.5, -2.0]])
    pk = true_peak(f, x)
    assert pk.value.shape == (2,)
    assert pk.value[0] == pytest.approx(1.5, rel=1e-12)
