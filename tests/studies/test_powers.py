"""IEEE Std 1459-2010 power quantities: closed forms (by hand and sympy), waveform means
from dense time sampling (an independent method), the balanced three-phase effective
quantities, refusals and the worksheet function."""

import math

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from sympy.simplify.fu import TR8

import xlfuncs
from xlfuncs.errors import InputError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import POWER_ROWS, port_powers, power_quantities

R2 = math.sqrt(2)
F1 = 50.0


def _phasor(rms, deg, f=1.0):
    """Peak phasor of an RMS value and phase (DC: the signed value)."""
    return rms * (R2 if f else 1.0) * np.exp(1j * math.radians(deg))


# --------------------------------------------------------------------- closed forms
# V: 230 V ∠0° at 50 Hz + 23 V ∠30° at 250 Hz; I: 10 A ∠−30° + 3 A ∠−60°.
# By hand with the IEEE Std 1459-2010 single-phase non-sinusoidal definitions:
#   θ1 = 30°, θ5 = 90°: P1 = 2300·cos30°, Q1 = 2300·sin30° = 1150, P5 = 69·cos90° = 0
#   V1 = 230, VH = 23, I1 = 10, IH = 3: S1 = 2300, DI = V1·IH = 690, DV = VH·I1 = 230,
#   SH = VH·IH = 69, S = √(230² + 23²)·√(10² + 3²), SN = √(690² + 230² + 69²) = √533761
#   THD_V = 0.1, THD_I = 0.3, PF = P/S, PF1 = cos30°
HAND = {
    "P": 2300 * math.cos(math.radians(30)),
    "P1": 2300 * math.cos(math.radians(30)),
    "Q1": 1150.0,
    "S1": 2300.0,
    "S": math.sqrt(230**2 + 23**2) * math.sqrt(10**2 + 3**2),
    "SN": math.sqrt(533761),
    "DI": 690.0,
    "DV": 230.0,
    "SH": 69.0,
    "PF": 2300 * math.cos(math.radians(30)) / (math.sqrt(230**2 + 23**2) * math.sqrt(109)),
    "PF1": math.cos(math.radians(30)),
    "THD_V": 0.1,
    "THD_I": 0.3,
}


def _two_tone():
    f = np.array([F1, 5 * F1])
    v = np.array([_phasor(230, 0), _phasor(23, 30)])
    i = np.array([_phasor(10, -30), _phasor(3, -60)])
    return f, v, i


@pytest.mark.parametrize("name", [n for n, _u in POWER_ROWS])
def test_sinusoid_plus_one_harmonic_by_hand(name):
    q = power_quantities(*_two_tone(), F1)
    assert getattr(q, name) == pytest.approx(HAND[name], rel=1e-13, abs=1e-10)


def test_sinusoid_plus_one_harmonic_in_sympy():
    # derive every quantity in sympy from the time functions over one period (independent
    # of the phasor arithmetic): v = √2·V1 cos(ωt) + √2·V5 cos(5ωt + a),
    # i = √2·I1 cos(ωt − b) + √2·I5 cos(5ωt + c)
    t = sp.symbols("t", real=True)
    V1, V5, I1, I5 = (sp.Integer(230), sp.Integer(23), sp.Integer(10), sp.Integer(3))
    a, b, c = sp.pi / 6, sp.pi / 6, -sp.pi / 3
    w = 2 * sp.pi  # period 1 (the values do not depend on the frequency)
    v1 = sp.sqrt(2) * V1 * sp.cos(w * t)
    i1 = sp.sqrt(2) * I1 * sp.cos(w * t - b)
    v = v1 + sp.sqrt(2) * V5 * sp.cos(5 * w * t + a)
    i = i1 + sp.sqrt(2) * I5 * sp.cos(5 * w * t + c)

    def mean(e):  # products turned into sums of cosines (TR8), then integrated
        return sp.integrate(sp.expand(TR8(sp.expand(e))), (t, 0, 1))

    P = mean(v * i)
    Vr, Ir = sp.sqrt(mean(v**2)), sp.sqrt(mean(i**2))
    P1 = mean(v1 * i1)
    Q1 = mean(v1.subs(t, t - sp.Rational(1, 4)) * i1)  # v1 delayed a quarter period
    S1 = sp.sqrt(mean(v1**2) * mean(i1**2))
    VH, IH = sp.sqrt(Vr**2 - mean(v1**2)), sp.sqrt(Ir**2 - mean(i1**2))
    ref = {
        "P": P,
        "P1": P1,
        "Q1": Q1,
        "S1": S1,
        "S": Vr * Ir,
        "SN": sp.sqrt((Vr * Ir) ** 2 - S1**2),
        "DI": sp.sqrt(mean(v1**2)) * IH,
        "DV": VH * sp.sqrt(mean(i1**2)),
        "SH": VH * IH,
        "PF": P / (Vr * Ir),
        "PF1": P1 / S1,
        "THD_V": VH / sp.sqrt(mean(v1**2)),
        "THD_I": IH / sp.sqrt(mean(i1**2)),
    }
    q = power_quantities(*_two_tone(), F1)
    for name, expr in ref.items():
        assert getattr(q, name) == pytest.approx(float(sp.N(expr, 30)), rel=1e-12, abs=1e-9), name


# ------------------------------------------------------------ dense time sampling
def _time_domain(f, v, i, f1, n=4096):
    """Waveform means over one common period sampled at n points (trapezoid rule: exact
    for trigonometric polynomials of degree < n/2) — independent of the phasor formulas."""
    base = f1 / 2  # the test spectra are multiples of f1/2
    t = np.arange(n) / (n * base)

    def wave(x):
        return np.real(np.exp(2j * np.pi * np.outer(t, f)) @ x)

    vt, it = wave(v), wave(i)
    c1, s1 = np.cos(2 * np.pi * f1 * t), np.sin(2 * np.pi * f1 * t)
    # the fundamental by Fourier projection, then its quarter-period delay for Q1
    v1 = 2 * (np.mean(vt * c1) * c1 + np.mean(vt * s1) * s1)
    i1 = 2 * (np.mean(it * c1) * c1 + np.mean(it * s1) * s1)
    v1_delayed = 2 * (np.mean(vt * c1) * s1 - np.mean(vt * s1) * c1)
    vr, ir = math.sqrt(np.mean(vt**2)), math.sqrt(np.mean(it**2))
    vr1, ir1 = math.sqrt(np.mean(v1**2)), math.sqrt(np.mean(i1**2))
    p, p1 = float(np.mean(vt * it)), float(np.mean(v1 * i1))
    vh, ih = math.sqrt(vr * vr - vr1 * vr1), math.sqrt(ir * ir - ir1 * ir1)
    return {
        "P": p,
        "P1": p1,
        "Q1": float(np.mean(v1_delayed * i1)),
        "S1": vr1 * ir1,
        "S": vr * ir,
        "SN": math.sqrt((vr * ir) ** 2 - (vr1 * ir1) ** 2),
        "DI": vr1 * ih,
        "DV": vh * ir1,
        "SH": vh * ih,
        "PF": p / (vr * ir),
        "PF1": p1 / (vr1 * ir1),
        "THD_V": vh / vr1,
        "THD_I": ih / ir1,
    }


def test_waveform_means_with_dc_harmonics_and_an_interharmonic():
    # DC, fundamental, 2.5·f1 (interharmonic), 3rd, 7th: IEEE 1459 counts all but the
    # fundamental in V_H, I_H; the time-domain means see every component
    f = np.array([0.0, F1, 2.5 * F1, 3 * F1, 7 * F1])
    v = np.array([12.0, _phasor(230, 10), _phasor(4, 70), _phasor(9, -40), _phasor(6, 120)])
    i = np.array([-1.5, _phasor(20, -25), _phasor(0.8, 10), _phasor(4, 15), _phasor(2, -80)])
    q = power_quantities(f, v, i, F1)
    ref = _time_domain(f, v, i, F1)
    for name, _unit in POWER_ROWS:
        assert getattr(q, name) == pytest.approx(ref[name], rel=1e-9, abs=1e-9), name
    # the IEEE 519 THD of the same voltage excludes DC and the interharmonic: smaller
    s519 = xlfuncs.Spectrum(f, v, fundamental_hz=F1).thd()
    assert s519 < q.THD_V
    assert s519 == pytest.approx(math.hypot(9, 6) / 230, rel=1e-12)


def test_solved_network_matches_hand_phasors_and_source_delivers():
    # R–L load on a source with DC, 50 Hz and 250 Hz tones; per tone I = V/(R + jωL)
    r, ind = 4.0, 0.02
    parts = [["name", "kind", "from", "to", "value"], ["R1", "R", "a", "b", r]]
    parts.append(["L1", "L", "b", "GND", ind])
    sources = [
        ["name", "kind", "from", "to", "freq_hz", "rms", "phase_deg"],
        ["Vs", "V", "a", "GND", 0, 10.0, None],
        ["Vs", "V", "a", "GND", 50, 230.0, 0.0],
        ["Vs", "V", "a", "GND", 250, 15.0, 40.0],
    ]
    f = np.array([0.0, 50.0, 250.0])
    vs = np.array([10.0, _phasor(230, 0), _phasor(15, 40)])
    i = vs / (r + 1j * 2 * np.pi * f * ind)
    q_r = port_powers(parts, sources, "R1", [["fundamental_hz", 50]])
    ref = power_quantities(f, r * i, i, 50.0)
    for name, _unit in POWER_ROWS:
        assert getattr(q_r, name) == pytest.approx(getattr(ref, name), rel=1e-12, abs=1e-9)
    assert pytest.approx(1.0, abs=1e-15) == q_r.PF and pytest.approx(0, abs=1e-9) == q_r.Q1
    q_s = port_powers(parts, sources, "Vs", [["fundamental_hz", 50]])
    assert pytest.approx(-q_r.P, rel=1e-12) == q_s.P  # the source delivers what R absorbs
    q_l = port_powers(parts, sources, "L1", [["fundamental_hz", 50]])
    assert q_l.Q1 > 0 and pytest.approx(0, abs=1e-9) == q_l.P  # lagging, lossless


def test_fundamental_default_is_reported():
    parts = [["name", "kind", "from", "to", "value"], ["R1", "R", "a", "GND", 1.0]]
    src = [["name", "kind", "from", "to", "freq_hz", "rms"], ["V", "V", "a", "GND", 60, 1.0]]
    src.append(["V", "V", "a", "GND", 300, 0.1])
    q = port_powers(parts, src, "R1")
    assert q.fundamental_hz == 60 and "lowest source frequency" in q.basis


# -------------------------------------------------------------------- three-phase
def _three_phase_reference(f, v, i, f1, wiring, n=4096):
    """Phases b, c are phase a delayed by T/3, 2T/3; line-to-line voltages and the neutral
    current from the sampled waveforms; effective V_e, I_e as IEEE Std 1459-2010 defines
    them (balanced case, ρ = ξ = 1, from memory)."""
    t = np.arange(n) / (n * f1 / 2)
    shift = 1 / (3 * f1)

    def wave(x, dt):
        return np.real(np.exp(2j * np.pi * np.outer(t - dt, f)) @ x)

    va, vb, vc = (wave(v, k * shift) for k in range(3))
    ia, ib, ic = (wave(i, k * shift) for k in range(3))

    def ms(x):
        return float(np.mean(x**2))

    if wiring == "3ph4w":
        ve2 = (3 * (ms(va) + ms(vb) + ms(vc)) + ms(va - vb) + ms(vb - vc) + ms(vc - va)) / 18
        ie2 = (ms(ia) + ms(ib) + ms(ic) + ms(ia + ib + ic)) / 3
    else:
        ve2 = (ms(va - vb) + ms(vb - vc) + ms(vc - va)) / 9
        ie2 = (ms(ia) + ms(ib) + ms(ic)) / 3
    p = float(np.mean(va * ia + vb * ib + vc * ic))
    return math.sqrt(ve2), math.sqrt(ie2), p


@pytest.mark.parametrize("wiring", ["3ph4w", "3ph3w"])
def test_balanced_three_phase_effective_quantities(wiring):
    f = np.array([F1, 3 * F1, 5 * F1, 7 * F1, 0.0])
    v = np.array([_phasor(230, 0), _phasor(8, 20), _phasor(11, -30), _phasor(7, 60), 3.0])
    if wiring == "3ph4w":  # triplen and DC currents flow in the neutral
        i = np.array([_phasor(50, -20), _phasor(12, 5), _phasor(9, 45), _phasor(5, -10), 0.7])
    else:  # no zero-sequence current in a three-wire item
        i = np.array([_phasor(50, -20), 0, _phasor(9, 45), _phasor(5, -10), 0.0])
    q = power_quantities(f, v, i, F1, wiring)
    ve, ie, p = _three_phase_reference(f, v, i, F1, wiring)
    ve1, ie1 = 230.0, 50.0  # balanced: V_e1 = V_1, I_e1 = I_1 of phase a
    assert q.v_rms == pytest.approx(ve, rel=1e-12) and q.i_rms == pytest.approx(ie, rel=1e-12)
    assert pytest.approx(p, rel=1e-10) == q.P
    assert pytest.approx(3 * ve * ie, rel=1e-12) == q.S
    assert pytest.approx(3 * ve1 * ie1, rel=1e-12) == q.S1
    veh, ieh = math.sqrt(ve**2 - ve1**2), math.sqrt(ie**2 - ie1**2)
    assert pytest.approx(3 * ve1 * ieh, rel=1e-10) == q.DI
    assert pytest.approx(3 * veh * ie1, rel=1e-10) == q.DV
    assert pytest.approx(3 * veh * ieh, rel=1e-10) == q.SH
    assert pytest.approx(veh / ve1, rel=1e-10) == q.THD_V
    assert pytest.approx(math.cos(math.radians(20)), rel=1e-13) == q.PF1
    assert pytest.approx(3 * 230 * 50 * math.cos(math.radians(20)), rel=1e-13) == q.P1


def test_balanced_sinusoid_three_phase_is_three_times_one_phase():
    f, v, i = np.array([F1]), np.array([_phasor(230, 0)]), np.array([_phasor(10, -36.87)])
    one = power_quantities(f, v, i, F1)
    for wiring in ("3ph4w", "3ph3w"):
        three = power_quantities(f, v, i, F1, wiring)
        for name in ("P", "P1", "Q1", "S1", "S"):
            assert getattr(three, name) == pytest.approx(3 * getattr(one, name), rel=1e-14)
        assert pytest.approx(0, abs=1e-9) == three.SN and pytest.approx(one.PF) == three.PF


def test_three_wire_refuses_zero_sequence_current():
    f = np.array([F1, 3 * F1])
    v = np.array([_phasor(230, 0), _phasor(5, 0)])
    i = np.array([_phasor(10, 0), _phasor(2, 0)])
    with pytest.raises(InputError, match="three-wire item cannot carry the zero-sequence"):
        power_quantities(f, v, i, F1, "3ph3w")
    power_quantities(f, v, i, F1, "3ph4w")  # fine with a neutral


# ------------------------------------------------------------------------ refusals
@pytest.mark.parametrize(
    ("v", "i", "fund", "match"),
    [
        ([0, _phasor(20, 0)], [_phasor(1, 0), _phasor(1, 0)], F1, "no fundamental voltage"),
        ([_phasor(230, 0), _phasor(20, 0)], [0, _phasor(1, 0)], F1, "no fundamental current"),
        ([_phasor(230, 0), 1], [0, 0], F1, "carries no current at all"),
        ([_phasor(230, 0), 1], [_phasor(1, 0), 1], 60.0, "no component at the fundamental"),
    ],
)
def test_refuses_what_would_be_non_finite(v, i, fund, match):
    with pytest.raises(InputError, match=match) as exc:
        power_quantities([F1, 5 * F1], v, i, fund)
    assert "\n" not in str(exc.value)


def test_worksheet_function_rows_and_errors():
    parts = [["name", "kind", "from", "to", "value"], ["R1", "R", "a", "b", 2.0]]
    parts.append(["L1", "L", "b", "GND", 0.01])
    src = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    src += [["V", "V", "a", "GND", 1, 230.0, 0], ["V", "V", "a", "GND", 5, 20.0, 10]]
    opts = [["fundamental_hz", 50]]
    out = FUNCTIONS["CKT_POWERS"].call(parts, src, "R1", opts)
    assert out[0] == ["quantity", "value", "unit"]
    assert [r[0] for r in out[1:14]] == [n for n, _u in POWER_ROWS]  # the fixed contract
    assert [r[2] for r in out[1:14]] == [u for _n, u in POWER_ROWS]
    assert all(len(r) == 3 for r in out)
    ref = port_powers(parts, src, "R1", opts)
    assert out[1][1] == pytest.approx(ref.P, rel=1e-15)
    err = FUNCTIONS["CKT_POWERS"].call(parts, src, "nope", opts)
    assert err.startswith("ERROR: ") and "nope" in err and "\n" not in err
    err = FUNCTIONS["CKT_POWERS"].call(parts, src, "R1", opts, "2ph")
    assert err.startswith("ERROR: argument wiring: '2ph'")


# ------------------------------------------------------------------- properties
_amp = st.floats(0.01, 100)
_deg = st.floats(-180, 180)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(_amp, _deg, _amp, _deg), min_size=1, max_size=5),
    _amp,
    _deg,
    _amp,
    _deg,
)
def test_identities_of_the_standard(harm, v1, a1, i1, b1):
    f = [F1] + [F1 * (k + 2) for k in range(len(harm))]
    v = [_phasor(v1, a1)] + [_phasor(x[0], x[1]) for x in harm]
    i = [_phasor(i1, b1)] + [_phasor(x[2], x[3]) for x in harm]
    q = power_quantities(f, v, i, F1)
    assert pytest.approx(q.S1**2 + q.SN**2, rel=1e-9) == q.S**2  # S² = S1² + SN²
    assert pytest.approx(q.P1**2 + q.Q1**2, rel=1e-9) == q.S1**2  # S1² = P1² + Q1²
    assert pytest.approx(q.S1 * q.THD_I, rel=1e-12) == q.DI
    assert pytest.approx(q.S1 * q.THD_V, rel=1e-12) == q.DV
    assert pytest.approx(q.S1 * q.THD_V * q.THD_I, rel=1e-12) == q.SH
    assert -1 <= q.PF <= 1 and -1 <= q.PF1 <= 1


def test_command_line(tmp_path, capsys):
    from xlfuncs.cli import main

    (tmp_path / "p.csv").write_text("name,kind,from,to,value\nR1,R,a,GND,2\n", encoding="utf-8")
    (tmp_path / "s.csv").write_text(
        "name,kind,from,to,freq_hz,rms,phase_deg\nV,V,a,GND,50,230,0\nV,V,a,GND,250,23,0\n",
        encoding="utf-8",
    )
    args = ["duty", "powers", str(tmp_path / "p.csv"), str(tmp_path / "s.csv"), "--part", "R1"]
    assert main(args) == 0
    out = capsys.readouterr().out
    rows = {ln.split()[0]: ln.split()[1:] for ln in out.splitlines()[3:] if ln.strip()}
    assert float(rows["THD_V"][0]) == pytest.approx(0.1, rel=1e-5)  # 6 significant digits
    assert float(rows["P"][0]) == pytest.approx((230**2 + 23**2) / 2, rel=1e-5)
    assert "basis: IEEE Std 1459-2010" in out
    assert main([*args[:-1], "nope"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("xlfuncs: error:") and "nope" in err and "\n" not in err


def test_powers_through_the_xlwings_call_path():
    from xlwings_harness import MISSING, call, xlwings_udfs

    parts = (("name", "kind", "from", "to", "value"), ("R1", "R", "a", "GND", 2.0))
    src = (
        ("name", "kind", "from", "to", "harmonic", "rms", "phase_deg"),
        ("V", "V", "a", "GND", 1.0, 230.0, 0.0),
        ("V", "V", "a", "GND", 3.0, 23.0, 0.0),
    )
    opts = (("fundamental_hz", 50.0),)
    with xlwings_udfs() as udf:
        one_phase = call(udf, "CKT_POWERS", parts, src, "R1", opts, MISSING)
        four_wire = call(udf, "CKT_POWERS", parts, src, "R1", opts, "3ph4w")
        three_wire = call(udf, "CKT_POWERS", parts, src, "R1", opts, "3ph3w")
    assert one_phase[1][:2] == ["P", pytest.approx((230**2 + 23**2) / 2, rel=1e-14)]
    assert four_wire[1][1] == pytest.approx(3 * one_phase[1][1], rel=1e-14)
    # the third harmonic is zero sequence: a three-wire item cannot carry it
    assert three_wire[0][0].startswith("ERROR: argument wiring: '3ph3w'")


def test_docstring_examples_run():
    import doctest

    import xlfuncs.studies.powers as module

    res = doctest.testmod(module)
    assert res.attempted > 0 and res.failed == 0


# ------------------------------------------------------------ items of a three-phase study
# An invented 480 V, 60 Hz bus (demo data): supply 20 MVA, X/R 10; a 150 kvar star bank; a
# 100 kW resistive load (series form, pf 1: R = kV²/P); a 200 kW six-pulse converter with the
# ideal spectrum. No transformer, so every zone frame is 0° and the expanded networks can be
# merged into one core solve (the per-part path).
EQ_HEAD = ["name", "kind", "bus", "bus_to", "kv", "mva_sc", "x_r", "mva_sc_1ph", "kvar"]
EQ_HEAD += ["connection", "kw", "pf", "model", "pulses", "spectrum", "length_km", "r_ohm_km"]
EQ_HEAD += ["x_ohm_km", "r0_ohm_km", "x0_ohm_km"]


def _eq(*rows):
    return [EQ_HEAD, *[[r.get(h) for h in EQ_HEAD] for r in rows]]


SUPPLY = {"name": "U1", "kind": "supply", "bus": "B1", "kv": 0.48, "mva_sc": 20.0, "x_r": 10.0}
BANK = {"name": "C1", "kind": "capacitor", "bus": "B1", "kv": 0.48, "kvar": 150.0}
LOAD = {"name": "L1", "kind": "load", "bus": "B1", "kv": 0.48, "kw": 100.0, "pf": 1.0}
DRIVE = {"name": "D1", "kind": "converter", "bus": "B1", "kv": 0.48, "kw": 200.0, "pf": 0.95}
PLANT = _eq(
    SUPPLY,
    BANK | {"connection": "Y"},
    LOAD | {"model": "series"},
    DRIVE | {"pulses": 6},
)
STUDY_OPTS = [["key", "value"], ["fundamental_hz", 60]]


def _merged_tables(study):
    """The fundamental network with every harmonic injection added: one core solve gives
    what the study gives (all frames 0°; a voltage source is a short at other tones)."""
    one = study.network("1")
    sources = one.sources + [r for s in "+-" for r in study.network(s).sources[1:]]
    return one.parts, sources, one.options


@pytest.mark.parametrize(("item", "part"), [("C1", "C1.C"), ("L1", "L1.R")])
def test_study_item_powers_equal_the_per_part_path(item, part):
    from xlfuncs.power import harmonic_study

    st = harmonic_study(PLANT, None, STUDY_OPTS)
    parts, sources, opts = _merged_tables(st)
    want = FUNCTIONS["CKT_POWERS"].call(parts, sources, part, opts, "3ph3w")
    got = FUNCTIONS["CKT_ITEM_POWERS"].call(PLANT, None, item, STUDY_OPTS)
    scale = max(abs(r[1]) for r in want[1:4])  # P, P1, Q1: round-off is relative to them
    for (name, a, _u), (name2, b, _u2) in zip(want[1:-1], got[1:-1], strict=True):
        assert name == name2
        assert b == pytest.approx(a, rel=1e-9, abs=1e-12 * scale), name


def test_study_item_powers_closed_forms():
    """A capacitor absorbs no active power and carries h·ω₁·C·V_h; its fundamental
    reactive power is its rating times (V₁/kV)²; a resistor's current follows its voltage
    (THD_I = THD_V, PF1 = 1) and P = Σ 3·V_h²/R (circuit theory)."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_powers

    st = harmonic_study(PLANT, None, STUDY_OPTS)
    v = st.bus_voltage("B1")
    v_rms = np.abs(v.phasors) / R2
    h = st.orders.astype(float)
    cap = item_powers(st, "C1")
    p, q1, thd_i = cap.P, cap.Q1, cap.THD_I
    assert abs(p) <= 1e-12 * cap.S
    assert q1 == pytest.approx(-150e3 * (math.sqrt(3) * v_rms[0] / 480) ** 2, rel=1e-12)
    ih = np.sqrt(np.sum((h[1:] * v_rms[1:]) ** 2))
    assert thd_i == pytest.approx(ih / v_rms[0], rel=1e-12)
    assert cap.wiring == "3ph3w" and "no grounded star" in cap.basis
    res = item_powers(st, "L1")
    p, thd_i, thd_v, pf, pf1 = res.P, res.THD_I, res.THD_V, res.PF, res.PF1
    r = 480**2 / 100e3  # R = kV²/P of the series form at pf 1
    assert p == pytest.approx(3 * float(np.sum(v_rms**2)) / r, rel=1e-12)
    assert thd_i == pytest.approx(thd_v, rel=1e-12)
    assert pf1 == pytest.approx(1.0, abs=1e-12) and pf == pytest.approx(1.0, abs=1e-12)
    # the supply delivers what the items absorb (power balance)
    absorbed = sum(item_powers(st, n).P for n in ("C1", "L1", "D1"))
    delivered = -item_powers(st, "U1").P
    assert delivered == pytest.approx(absorbed, rel=1e-9)


def test_study_cable_ends_add_up_to_its_losses():
    """P(bus) + P(bus_to) of a cable is what its series R absorbs: 3·Σ I_h²·R·√h with the
    study's R ∝ √h (power balance of the branch)."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_powers

    cable = {"name": "K1", "kind": "cable", "bus": "B1", "bus_to": "B2", "length_km": 0.2}
    cable |= {"r_ohm_km": 0.1, "x_ohm_km": 0.08}
    eq = _eq(SUPPLY, cable, DRIVE | {"bus": "B2", "pulses": 6})
    st = harmonic_study(eq, None, STUDY_OPTS)
    i = np.abs(st.branch_current("K1").phasors) / R2
    loss = 3 * float(np.sum(i**2 * 0.02 * np.sqrt(st.orders)))
    both = sum(item_powers(st, "K1", end).P for end in ("bus", "bus_to"))
    assert both == pytest.approx(loss, rel=1e-9)


def test_study_item_with_zero_sequence_is_four_wire():
    """Triplens of a grounded-star converter into a grounded-star bank: the default wiring
    is 3ph4w and equals power_quantities on the per-network phasors; 3ph3w is refused."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_powers

    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S1", 3, 60, 0], ["S1", 5, 30, 0]]
    eq = _eq(
        SUPPLY | {"mva_sc_1ph": 15.0},
        BANK | {"connection": "YN"},
        DRIVE | {"connection": "YN", "spectrum": "S1"},
    )
    st = harmonic_study(eq, spectra, STUDY_OPTS)
    q = item_powers(st, "C1")
    assert q.wiring == "3ph4w" and "grounded star" in q.basis
    freqs, v, i = [], [], []
    for s in ("1", "+", "-", "0"):
        net = st.network(s)
        if net.sources is None:
            continue
        sol = xlfuncs.solve(net.parts, net.sources, net.options)
        freqs += list(sol.freqs_hz)
        v += list(sol.voltage("C1.C").phasors)
        i += list(sol.current("C1.C").phasors)
    ref = power_quantities(freqs, v, i, 60.0, "3ph4w")
    for name, _unit in POWER_ROWS:
        assert getattr(q, name) == pytest.approx(getattr(ref, name), rel=1e-9, abs=1e-9), name
    with pytest.raises(InputError, match="zero-sequence"):
        item_powers(st, "C1", wiring="3ph3w")


def test_study_item_powers_refusals():
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_powers

    motor = {"name": "M1", "kind": "motor", "bus": "B1", "kv": 0.48, "x_r": 10.0}
    eq = _eq(SUPPLY, DRIVE | {"pulses": 6}, motor)
    eq[0] += ["kva", "x_pct"]
    for r in eq[1:]:
        r += [250.0, 17.0] if r[0] == "M1" else [None, None]
    st = harmonic_study(eq, None, STUDY_OPTS)
    with pytest.raises(InputError, match="kw and pf"):
        item_powers(st, "M1")  # no running load: no fundamental current to refer to
    with pytest.raises(InputError, match=r"item_wiring.*three-phase"):
        item_powers(st, "D1", wiring="1ph")
    with pytest.raises(InputError, match="bus_to only"):
        item_powers(st, "D1", "bus_to")
    out = FUNCTIONS["CKT_ITEM_POWERS"].call(PLANT, None, "#N/A", STUDY_OPTS)
    assert out.startswith("ERROR: argument item: '#N/A'")
    out = FUNCTIONS["CKT_ITEM_POWERS"].call(PLANT, None, "X9", STUDY_OPTS)
    assert out.startswith("ERROR: ") and "no item of that name" in out


def test_study_item_command_line(tmp_path, capsys):
    import csv

    from xlfuncs.cli import main

    path = tmp_path / "equipment.csv"
    with path.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(PLANT)
    opts = tmp_path / "options.csv"
    opts.write_text("key,value\nfundamental_hz,60\n", encoding="utf-8")
    assert main(["duty", "item", str(path), "--options", str(opts), "--item", "C1"]) == 0
    out = capsys.readouterr().out
    assert "IEEE Std 1459-2010" in out and "Capacitor duty of one phase unit" in out
    assert "licensed engineer" in out
    assert (
        main(["duty", "item", str(path), "--options", str(opts), "--item", "C1", "--p-ec", "0.1"])
        == 2
    )
    assert "not a transformer" in capsys.readouterr().err
