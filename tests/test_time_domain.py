"""Phasor solver against an independent time-domain simulation.

The circuits' differential equations are written out by hand here, integrated with
scipy (DOP853) to periodic steady state, sampled over one common period and Fourier
analysed; per-frequency phasors, total RMS (IEEE Std 1459-2010: the RMS of the
waveform) and average power (the mean of v·i) must agree with the phasor solution.
Tolerance 1e-6 relative to the largest amplitude: set by the integrator (rtol 1e-11)
and by the residual transient after 30 time constants.
"""

import math

import numpy as np
import pytest
from helpers import parts
from scipy.integrate import solve_ivp

import xlfuncs

F0 = 50.0  # common base frequency, Hz
T = 1 / F0
NS = 4096  # samples per period for the Fourier analysis
TOL = 1e-6


def _steady_state(rhs, n_states, t_settle):
    t_end = t_settle + T
    t_eval = t_settle + np.arange(NS) * T / NS
    sol = solve_ivp(
        rhs,
        (0, t_end),
        np.zeros(n_states),
        method="DOP853",
        rtol=1e-11,
        atol=1e-12,
        t_eval=t_eval,
        max_step=T / 200,
    )
    assert sol.success
    return sol.t, sol.y


def _phasors(samples, orders):
    """Complex peak phasors (cosine reference) of harmonics ``orders`` of F0."""
    spec = np.fft.rfft(samples) / NS
    return np.array([spec[0].real if h == 0 else 2 * spec[h] for h in orders])


def _tone(t, tones):
    return sum(a * np.cos(2 * np.pi * f * t + math.radians(ph)) for f, a, ph in tones)


# ---------------------------------------------------------------------------- circuit A
# Vs (DC + 50 Hz + 150 Hz) → R1 → L1 → node n1;  C1 ‖ R2 from n1 to GND;
# a 250 Hz current source injects into n1.
R1, L1, C1, R2 = 10.0, 10e-3, 100e-6, 20.0
VS = [(0.0, 10.0, 0.0), (50.0, 20.0, 0.0), (150.0, 5.0, 30.0)]
IS = [(250.0, 0.5, -45.0)]


def _circuit_a():
    p = parts(
        ["R1", "R", "in", "a", R1],
        ["L1", "L", "a", "n1", L1],
        ["C1", "C", "n1", "GND", C1],
        ["R2", "R", "n1", "GND", R2],
    )
    s = [["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"]]
    s += [["Vs", "V", "in", "GND", f, a, ph] for f, a, ph in VS]
    s += [["Is", "I", "GND", "n1", f, a, ph] for f, a, ph in IS]
    return xlfuncs.solve(p, s)


def _simulate_a():
    def rhs(t, y):
        il, vc = y
        vs = _tone(t, VS)
        is_ = _tone(t, IS)
        return [(vs - R1 * il - vc) / L1, (il - vc / R2 + is_) / C1]

    return _steady_state(rhs, 2, t_settle=0.4)  # slowest time constant ≈ 2 ms


def test_circuit_a_phasors_match_simulation():
    _t, (il, vc) = _simulate_a()
    sol = _circuit_a()
    orders = [0, 1, 3, 5]
    np.testing.assert_allclose(sol.freqs_hz, [0, 50, 150, 250])
    for got, sim in (
        (sol.voltage("n1").phasors, _phasors(vc, orders)),
        (sol.current("L1").phasors, _phasors(il, orders)),
    ):
        scale = np.abs(sim).max()
        assert np.abs(got - sim).max() <= TOL * scale


def test_circuit_a_rms_power_and_peak_match_waveform():
    t, (il, vc) = _simulate_a()
    sol = _circuit_a()
    # IEEE Std 1459-2010: RMS is the root of the mean square of the waveform
    assert sol.voltage("n1").rms_total == pytest.approx(math.sqrt(np.mean(vc**2)), rel=TOL)
    assert sol.current("L1").rms_total == pytest.approx(math.sqrt(np.mean(il**2)), rel=TOL)
    # active power is the mean of the instantaneous power v·i
    assert sol.power("R2") == pytest.approx(np.mean(vc**2 / R2), rel=TOL)
    assert sol.power("R1") == pytest.approx(np.mean(R1 * il**2), rel=TOL)
    vs = _tone(t, VS)
    assert sol.power("Vs") == pytest.approx(-np.mean(vs * il), rel=TOL)  # source delivers
    # the true peak is at least the largest sample and within the sampling error of it
    pk = sol.voltage("n1").true_peak()
    assert pk.method == "exact"
    assert np.abs(vc).max() <= pk.value * (1 + TOL)
    assert pk.value <= np.abs(vc).max() * (1 + 1e-5)


# ---------------------------------------------------------------------------- circuit B
# Coupled coils with a current-controlled current source:
# Vs → Rp → node p; Lp from p to GND (current i1); Ls from s to GND (current i2), k = 0.8;
# Rs from s to GND; CCCS injects β·i1 into s.
RP, RS, LP, LS, K, BETA = 5.0, 10.0, 10e-3, 5e-3, 0.8, 0.3
M = K * math.sqrt(LP * LS)
VB = [(0.0, 3.0, 0.0), (50.0, 10.0, 0.0), (350.0, 2.0, 90.0)]


def test_coupled_coils_and_cccs_match_simulation():
    lmat = np.array([[LP, M], [M, LS]])
    linv = np.linalg.inv(lmat)

    def rhs(t, y):
        i1, i2 = y
        vs = _tone(t, VB)
        vp = vs - RP * i1
        v_s = RS * (BETA * i1 - i2)
        return linv @ np.array([vp, v_s])

    t, (i1, i2) = _steady_state(rhs, 2, t_settle=0.3)
    head = ["name", "kind", "from", "to", "value", "coil_a", "coil_b", "ctrl_part"]
    p = [
        head,
        ["Rp", "R", "in", "p", RP, None, None, None],
        ["Lp", "L", "p", "GND", LP, None, None, None],
        ["Ls", "L", "s", "GND", LS, None, None, None],
        ["K1", "COUPLING", None, None, K, "Lp", "Ls", None],
        ["Rs", "R", "s", "GND", RS, None, None, None],
        ["F1", "CCCS", "GND", "s", BETA, None, None, "Lp"],
    ]
    s = [["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"]]
    s += [["Vs", "V", "in", "GND", f, a, ph] for f, a, ph in VB]
    sol = xlfuncs.solve(p, s)
    orders = [0, 1, 7]
    for name, sim in (("Lp", i1), ("Ls", i2)):
        ref = _phasors(sim, orders)
        got = sol.current(name).phasors
        assert np.abs(got - ref).max() <= TOL * np.abs(ref).max()
    # power balance of the simulated waveforms equals the solver's
    vs = _tone(t, VB)
    assert sol.power("Vs") == pytest.approx(-np.mean(vs * i1), rel=TOL)
