"""Transfer functions, Bode data, group delay and port impedances against closed forms.

References (closed forms written here, not taken from the package):
* RC low-pass H = 1/(1 + jωRC): |H|, arg H = −atan(ωRC), τ = RC/(1 + (ωRC)²) (any circuits
  text).
* Butterworth low-pass of order 4: |H|² = 1/(1 + (ω/ω_c)⁸) (the defining property, S.
  Butterworth, Wireless Engineer 7, 1930), built from two unity-gain Sallen–Key sections
  H_k = 1/(1 + s/(ω_cQ_k) + s²/ω_c²) (the section's H is derived with sympy in
  test_poles.py), Q_k = 1/(2·sin((2k − 1)π/8)); the phase of each section is
  −atan2(ω/(ω_cQ), 1 − ω²/ω_c²), continuous from 0 to −180°, and its group delay the
  ω-derivative of that, written out below.
* a resistor following R(f) = R·(f/f₁)^x above f₁ in an RC low-pass: arg H =
  −atan(ωR(f)C), τ = (R + ω·dR/dω)·C/(1 + (ωRC)²) with ω·dR/dω = x·R above f₁.
"""

import doctest
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs.studies.transfer
from xlfuncs.cli import main
from xlfuncs.errors import InputError, NetworkError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import bode, frequency_response, port_impedance, two_port_impedances

HEAD = ["name", "kind", "from", "to", "value"]
SHEAD = ["name", "kind", "from", "to", "freq_hz", "peak"]
R, C = 1e3, 1e-6
RC_PARTS = [HEAD, ["R", "R", "in", "out", R], ["C", "C", "out", "GND", C]]
RC_SOURCES = [SHEAD, ["Vin", "V", "in", "GND", 50, 1.0]]
F = np.geomspace(1, 1e6, 61)
W = 2 * np.pi * F


def test_docstring_examples_run():
    res = doctest.testmod(xlfuncs.studies.transfer)
    assert res.attempted > 0 and res.failed == 0


def test_rc_low_pass_closed_forms():
    r = frequency_response(RC_PARTS, RC_SOURCES, "Vin", "out", F)
    h = 1 / (1 + 1j * W * R * C)
    assert r.gain == pytest.approx(np.abs(h), rel=1e-12)
    assert r.gain_db == pytest.approx(20 * np.log10(np.abs(h)), rel=1e-11, abs=1e-11)
    assert r.phase_deg == pytest.approx(-np.degrees(np.arctan(W * R * C)), abs=1e-10)
    assert r.phase_unwrapped_deg == pytest.approx(r.phase_deg, abs=1e-9)
    assert r.group_delay_s == pytest.approx(R * C / (1 + (W * R * C) ** 2), rel=1e-10)
    assert r.output == "V(out)" and r.source == "Vin" and r.unit == "V/V"


def _butterworth(fc, r=10e3):
    rows = [[*HEAD, "ctrl_from", "ctrl_to"]]
    node = "in"
    qs = [1 / (2 * math.sin((2 * k - 1) * math.pi / 8)) for k in (1, 2)]
    wc = 2 * math.pi * fc
    for k, q in enumerate(qs):
        c2 = 1 / (2 * q * r * wc)  # equal R: ω0 = 1/(R√(C1C2)), Q = √(C1C2)/(2C2)
        c1 = 4 * q * q * c2
        a, b, out = f"a{k}", f"b{k}", f"out{k}"
        rows += [
            [f"R1_{k}", "R", node, a, r, None, None],
            [f"R2_{k}", "R", a, b, r, None, None],
            [f"C1_{k}", "C", a, out, c1, None, None],
            [f"C2_{k}", "C", b, "GND", c2, None, None],
            [f"E{k}", "VCVS", out, "GND", 1.0, b, "GND"],
        ]
        node = out
    return rows, [SHEAD, ["Vin", "V", "in", "GND", 0, 1.0]], qs


def test_butterworth_gain_phase_and_group_delay():
    fc = 1000.0
    parts, sources, qs = _butterworth(fc)
    f = np.geomspace(10, 1e5, 400)
    w, wc = 2 * np.pi * f, 2 * np.pi * fc
    r = bode(parts, sources, "Vin", "out1", 10, 1e5, 400)
    assert r.gain**2 == pytest.approx(1 / (1 + (f / fc) ** 8), rel=1e-10)
    phase = np.zeros_like(f)
    delay = np.zeros_like(f)
    for q in qs:
        y, x = w / (wc * q), 1 - (w / wc) ** 2
        phase -= np.arctan2(y, x)
        delay += (x / (wc * q) - y * (-2 * w / wc**2)) / (x * x + y * y)
    assert r.phase_unwrapped_deg == pytest.approx(np.degrees(phase), abs=1e-8)
    assert r.group_delay_s == pytest.approx(delay, rel=1e-9)
    assert r.phase_unwrapped_deg[-1] < -350  # −360° at high frequency: 4 poles
    assert -180 < r.phase_deg[-1] <= 180


def test_outputs_of_every_kind():
    jwc = 1j * W * C
    cases = [
        ("C", "I", jwc / (1 + jwc * R)),  # capacitor current (from → to)
        ("R", "V", jwc * R / (1 + jwc * R)),  # resistor voltage V(in) − V(out)
        ("Vin", "I", -jwc / (1 + jwc * R)),  # the source's own current in → GND through it
        ("Vin", "V", np.ones_like(W)),  # the source's own voltage: itself
    ]
    for name, q, h in cases:
        r = frequency_response(RC_PARTS, RC_SOURCES, "Vin", name, F, q)
        assert r.h == pytest.approx(h, rel=1e-11, abs=1e-15), name
    # a current source into R ‖ C: transfer impedance R/(1 + jωRC); its own current is 1
    parts = [HEAD, ["R", "R", "n", "GND", R], ["C", "C", "n", "GND", C]]
    src = [SHEAD, ["Iin", "I", "GND", "n", 50, 1.0], ["I2", "I", "GND", "n", 60, 1.0]]
    r = frequency_response(parts, src, "Iin", "n", F)
    assert r.h == pytest.approx(R / (1 + 1j * W * R * C), rel=1e-11)
    assert r.unit == "V/A"
    assert frequency_response(parts, src, "Iin", "Iin", F).h == pytest.approx(np.ones_like(W))
    with pytest.raises(NetworkError, match="exactly 0"):  # a zeroed source carries nothing
        frequency_response(parts, src, "Iin", "I2", F)


def test_resistance_law_phase_and_group_delay():
    f1, x = 50.0, 0.5
    parts = [
        [*HEAD, "r_exponent"],
        ["R", "R", "in", "out", R, x],
        ["C", "C", "out", "GND", C, None],
    ]
    f = np.geomspace(5, 5e4, 120)
    w = 2 * np.pi * f
    r = frequency_response(parts, RC_SOURCES, "Vin", "out", f, options=[["fundamental_hz", f1]])
    rf = R * np.maximum(1.0, f / f1) ** x
    assert r.phase_deg == pytest.approx(-np.degrees(np.arctan(w * rf * C)), abs=1e-10)
    w_drdw = np.where(f >= f1, x * rf, 0.0)  # ω·dR/dω (from above at f₁)
    tau = (rf + w_drdw) * C / (1 + (w * rf * C) ** 2)
    assert r.group_delay_s == pytest.approx(tau, rel=1e-10)
    assert r.phase_unwrapped_deg == pytest.approx(-np.degrees(np.arctan(w * rf * C)), abs=1e-6)


def test_port_impedance_between_two_nodes():
    parts = [
        HEAD,
        ["R1", "R", "a", "m", 100.0],
        ["C", "C", "m", "b", C],
        ["R3", "R", "b", "GND", 1.0],
    ]
    _f, z = port_impedance(parts, "a", "b", F)
    assert z == pytest.approx(100.0 + 1 / (1j * W * C), rel=1e-12)
    _f, z0 = port_impedance(parts, "b", "GND", F)
    assert z0 == pytest.approx(np.ones_like(W), rel=1e-12)  # the C-branch floats beyond b
    with pytest.raises(InputError, match="argument node_a: 'x' — no node of that name"):
        port_impedance(parts, "x", "b", F)


def test_two_port_input_and_output_impedance():
    # L-section: Rs series, Rp shunt, load RL; the supply a voltage source at `in`
    rs, rp, rl = 10.0, 40.0, 20.0
    parts = [
        HEAD,
        ["Rs", "R", "in", "out", rs],
        ["Rp", "R", "out", "GND", rp],
        ["RL", "R", "out", "GND", rl],
    ]
    r = two_port_impedances(parts, "in", "out", "RL", [50.0])
    assert r.z_in[0] == pytest.approx(rs + rp * rl / (rp + rl), rel=1e-12)
    assert r.z_out[0] == pytest.approx(rp, rel=1e-12)  # input open, load removed
    supply = [SHEAD, ["Vs", "V", "in", "GND", 50, 1.0]]
    r = two_port_impedances(parts, ["in", "GND"], [["out", "GND"]], "RL", [50.0], sources=supply)
    assert r.z_out[0] == pytest.approx(rs * rp / (rs + rp), rel=1e-12)  # supply shorted
    with pytest.raises(InputError, match="the load must connect across the output port"):
        two_port_impedances(parts, "in", "out", "Rs", [50.0])


def test_bad_arguments_name_the_argument():
    with pytest.raises(
        InputError, match=r"argument source: 'Vx' — no part, source or node of that name"
    ):
        bode(RC_PARTS, RC_SOURCES, "Vx", "out", 10, 100)
    with pytest.raises(InputError, match=r"argument output: 'nowhere'"):
        bode(RC_PARTS, RC_SOURCES, "Vin", "nowhere", 10, 100)
    with pytest.raises(InputError, match=r"argument f_stop"):
        bode(RC_PARTS, RC_SOURCES, "Vin", "out", 10, 5)
    with pytest.raises(InputError, match=r"argument quantity"):
        bode(RC_PARTS, RC_SOURCES, "Vin", "out", 10, 100, quantity="I")


def test_worksheet_functions():
    out = FUNCTIONS["CKT_GAIN"].call(RC_PARTS, RC_SOURCES, "Vin", "out", 10.0, 1e4, 5.0)
    assert out[0] == ["freq_hz", "gain", "gain_db", "phase_deg", "group_delay_s"]
    f = np.array([row[0] for row in out[1:]])
    assert f == pytest.approx(np.geomspace(10, 1e4, 5), rel=1e-15)
    w = 2 * np.pi * f
    assert [row[3] for row in out[1:]] == pytest.approx(
        -np.degrees(np.arctan(w * R * C)), abs=1e-9
    )
    fc = 1 / (2 * math.pi * R * C)
    at = FUNCTIONS["CKT_GAIN_AT"].call
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", fc, "gain_db") == pytest.approx(
        -10 * math.log10(2), rel=1e-12
    )
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", fc, "phase_deg") == pytest.approx(
        -45.0, abs=1e-10
    )
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", fc, None) == pytest.approx(
        math.sqrt(0.5), rel=1e-12
    )
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", fc, "group_delay_s") == pytest.approx(
        R * C / 2, rel=1e-12
    )
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", 0.0, "real") == pytest.approx(1.0, rel=1e-15)
    assert at(RC_PARTS, RC_SOURCES, "Vin", "out", fc, "slope").startswith(
        "ERROR: argument measure"
    )
    z = FUNCTIONS["CKT_PORT_Z"].call(RC_PARTS, "out", "GND", 10.0, 1e4, 3.0)
    assert z[0] == ["freq_hz", "z_ohm", "angle_deg", "r_ohm", "x_ohm"]
    # at `out` with `in` open (no sources given): the capacitor alone
    assert z[1][4] == pytest.approx(-1 / (2 * math.pi * 10 * C), rel=1e-12)
    tp = FUNCTIONS["CKT_TWOPORT_Z"].call(
        [*RC_PARTS, ["RL", "R", "out", "GND", 50.0]], "in", "out", "RL", 10.0, 1e3, 2.0
    )
    assert tp[0] == ["freq_hz", "zin_ohm", "zin_deg", "zout_ohm", "zout_deg"] and len(tp) == 3


def test_cli_gain(capsys, tmp_path):
    p, s = tmp_path / "p.csv", tmp_path / "s.csv"
    p.write_text("name,kind,from,to,value\nR,R,in,out,1k\nC,C,out,GND,1u\n")
    s.write_text("name,kind,from,to,freq_hz,peak\nVin,V,in,GND,50,1\n")
    fc = 1 / (2 * math.pi * R * C)
    args = ["gain", str(p), str(s), "--source", "Vin", "--output", "out"]
    assert main([*args, "--f-start", str(fc), "--f-stop", str(10 * fc), "--points", "2"]) == 0
    text = capsys.readouterr().out
    assert "-3.0103" in text and "-45" in text and "0.0005" in text
    assert (
        main(
            [
                "port-z",
                str(p),
                "--node-a",
                "out",
                "--node-b",
                "GND",
                "--f-start",
                "10",
                "--f-stop",
                "100",
            ]
        )
        == 0
    )
    assert main([*args[:6], "nowhere", "--f-start", "1", "--f-stop", "10"]) == 2
    assert "no part, source or node of that name" in capsys.readouterr().err


def test_cli_twoport(capsys, tmp_path):
    p = tmp_path / "p.csv"
    p.write_text("name,kind,from,to,value\nRs,R,in,out,10\nRp,R,out,GND,40\nRL,R,out,GND,20\n")
    args = ["twoport", str(p), "--port-in", "in", "--port-out", "out,GND", "--load", "RL"]
    assert main([*args, "--f-start", "10", "--f-stop", "100", "--points", "2"]) == 0
    out = capsys.readouterr().out
    assert "23.3333" in out and "40" in out  # Z_in = 10 + 40‖20, Z_out = 40 (input open)


@settings(max_examples=25, deadline=None)
@given(
    st.lists(st.floats(0.1, 10.0), min_size=12, max_size=12),
    st.sampled_from(["n2", "C2", "L1", "G"]),
    st.floats(10.0, 1e4),
)
def test_exact_group_delay_matches_central_differences(vals, output, f):
    # random network with coupled coils and a controlled source; the reference is the
    # phase of the solved response differenced at f(1 ± 1e-6) (independent of the
    # derivative formula; truncation error ~1e-12 relative)
    v = vals
    parts = [
        ["name", "kind", "from", "to", "value", "ctrl_from", "ctrl_to", "coil_a", "coil_b"],
        ["R1", "R", "in", "n1", 10 * v[0], None, None, None, None],
        ["L1", "L", "n1", "n2", 1e-3 * v[1], None, None, None, None],
        ["C1", "C", "n1", "GND", 1e-6 * v[2], None, None, None, None],
        ["L2", "L", "n2", "GND", 1e-3 * v[3], None, None, None, None],
        ["K", "COUPLING", None, None, 0.05 * v[4], None, None, "L1", "L2"],
        ["C2", "C", "n2", "n3", 1e-6 * v[5], None, None, None, None],
        ["R3", "R", "n3", "GND", 10 * v[6], None, None, None, None],
        ["G", "VCCS", "n3", "GND", 1e-3 * v[7], "n1", "GND", None, None],
        ["R4", "R", "n2", "GND", 100 * v[8], None, None, None, None],
    ]
    h = 1e-6
    fs = [f * (1 - h), f, f * (1 + h)]
    q = "I" if output in ("C2", "L1", "G") else None
    r = frequency_response(parts, RC_SOURCES, "Vin", output, fs, q)
    dphi = np.angle(r.h[2] / r.h[0]) / (2 * np.pi * f * 2 * h)
    assert r.group_delay_s[1] == pytest.approx(-dphi, rel=1e-5, abs=1e-12 / f)


# ------------------------------------------------------------------ names the user gives
# The core's lookup (Circuit.find / node_name) answers an unknown name with the closest
# existing name and what exists; the studies pass that message through, naming their own
# argument. Closest name: the ratio of difflib (Python's standard library), ≥ 0.6.
NAMED_PARTS = [HEAD, ["R", "R", "in", "out", R], ["C", "C", "out", "GND", C]]


@pytest.mark.parametrize(
    "call, message",
    [
        (
            lambda: frequency_response(NAMED_PARTS, RC_SOURCES, "Vin", "outt", [50.0]),
            "argument output: 'outt' — no part, source or node of that name; nodes: "
            "in, out, GND; parts: R, C; sources: Vin; did you mean 'out'?",
        ),
        (
            lambda: frequency_response(NAMED_PARTS, RC_SOURCES, "Vinn", "out", [50.0]),
            "argument source: 'Vinn' — no part, source or node of that name; nodes: "
            "in, out, GND; parts: R, C; sources: Vin; did you mean 'Vin'?",
        ),
        (
            lambda: frequency_response(NAMED_PARTS, RC_SOURCES, "R", "out", [50.0]),
            "argument source: 'R' — expected a source; 'R' is a part (parts row 2) (sources: Vin)",
        ),
        (
            lambda: port_impedance(NAMED_PARTS, "ot", "GND", [50.0]),
            "argument node_a: 'ot' — no node of that name; nodes: in, out, GND; did "
            "you mean 'out'?",
        ),
        (
            lambda: port_impedance(NAMED_PARTS, "out", "GNDD", [50.0]),
            "argument node_b: 'GNDD' — no node of that name; nodes: in, out, GND; did "
            "you mean 'GND'?",
        ),
        (
            lambda: two_port_impedances(NAMED_PARTS, "in", "out", "CC", [50.0]),
            "argument load: 'CC' — no part, source or node of that name; nodes: in, "
            "out, GND; parts: R, C; did you mean 'C'?",
        ),
    ],
)
def test_unknown_names_get_the_cores_suggestion_under_their_own_argument(call, message):
    with pytest.raises(InputError) as exc:
        call()
    assert str(exc.value) == message
    assert isinstance(exc.value, KeyError) or "expected a source" in message


def test_names_resolve_as_everywhere_else():
    # letter case ignored and the node:/part: prefixes taken (as Circuit.find documents)
    ref = frequency_response(RC_PARTS, RC_SOURCES, "Vin", "out", [50.0]).h
    assert frequency_response(RC_PARTS, RC_SOURCES, "vin", "OUT", [50.0]).h == pytest.approx(ref)
    assert frequency_response(RC_PARTS, RC_SOURCES, "Vin", "node:out", [50.0]).h == (
        pytest.approx(ref)
    )
    _f, z = port_impedance(RC_PARTS, "node:OUT", "gnd", [50.0])
    _f, z_ref = port_impedance(RC_PARTS, "out", "GND", [50.0])
    assert z == pytest.approx(z_ref, rel=1e-15)
    # a part and a node of the same name: the load is the part, the source the source
    parts = [
        HEAD,
        ["Rp", "R", "in", "GND", 30.0],
        ["Rs", "R", "in", "x", 10.0],
        ["x", "R", "x", "GND", 40.0],
    ]
    src = [SHEAD, ["in", "V", "in", "GND", 50, 1.0]]
    r = two_port_impedances(parts, "in", "x", "x", [50.0])
    assert r.z_in == pytest.approx([30.0 * 50.0 / 80.0], rel=1e-12)  # Rp ∥ (Rs + x)
    assert r.z_out == pytest.approx([40.0], rel=1e-12)  # Rs + Rp, the load taken out
    h = frequency_response(parts, src, "in", "node:x", [50.0]).h
    assert h == pytest.approx([40.0 / 50.0], rel=1e-12)  # divider 40/(10 + 40)
