"""Natural frequencies and transfer zeros against closed forms, a Butterworth filter built
from Sallen–Key stages (ideal controlled sources) whose transfer function is derived here
in sympy, and the Butterworth pole positions.

References:
* series RLC: ω₀ = 1/√(LC), ζ = (R/2)·√(C/L), poles s = −ζω₀ ± ω₀√(ζ² − 1) (any circuits
  text, e.g. J. W. Nilsson, S. A. Riedel, Electric Circuits, ch. 8 — chapter from memory).
* Butterworth: the n poles lie equally spaced on the circle |s| = ω_c in the left half
  plane, s_k = ω_c·exp(jπ(2k + n − 1)/(2n)) (S. Butterworth, "On the theory of filter
  amplifiers", Experimental Wireless and the Wireless Engineer 7, 1930); for n = 4 the
  section Q values 1/(2·sin((2k − 1)π/8)) = 1.3066 and 0.5412 are those of published
  Butterworth tables (table values from memory; the formula is the check).
* the Sallen–Key unity-gain low-pass section's H(s) is derived below from its nodal
  equations with sympy, independently of the package.
"""

import doctest
import math

import numpy as np
import pytest
import sympy as sp

import xlfuncs.studies.poles
from xlfuncs.cli import main
from xlfuncs.errors import InputError, NetworkError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import network_poles, transfer_poles_zeros, transfer_zeros

HEAD = ["name", "kind", "from", "to", "value"]
CHEAD = [*HEAD, "ctrl_from", "ctrl_to"]


def test_docstring_examples_run():
    res = doctest.testmod(xlfuncs.studies.poles)
    assert res.attempted > 0 and res.failed == 0


@pytest.mark.parametrize("r", [0.5, 10.0, 63.2455532, 200.0, 1000.0])
def test_series_rlc_closed_forms(r):
    ind, cap = 1e-3, 1e-6
    parts = [
        HEAD,
        ["R", "R", "GND", "b", r],
        ["L", "L", "b", "c", ind],
        ["C", "C", "c", "GND", cap],
    ]
    w0 = 1 / math.sqrt(ind * cap)
    zeta = r / 2 * math.sqrt(cap / ind)
    poles = network_poles(parts)
    if zeta < 1:
        (p,) = poles
        assert p.freq_hz == pytest.approx(w0 / (2 * math.pi), rel=1e-12)
        assert p.damping == pytest.approx(zeta, rel=1e-10)
        assert p.q == pytest.approx(1 / (2 * zeta), rel=1e-10)
        assert p.time_constant_s == pytest.approx(1 / (zeta * w0), rel=1e-10)
    else:
        roots = sorted(
            [zeta * w0 - w0 * math.sqrt(zeta**2 - 1), zeta * w0 + w0 * math.sqrt(zeta**2 - 1)]
        )
        assert [p.is_real for p in poles] == [True, True]
        for p, root in zip(poles, roots, strict=True):
            assert p.freq_hz == pytest.approx(root / (2 * math.pi), rel=1e-9)
            assert p.damping == 1.0 and p.q == 0.5
            assert p.time_constant_s == pytest.approx(1 / root, rel=1e-9)


def _sallen_key_h():
    """H(s) of a unity-gain Sallen–Key low-pass (R1 in→a, R2 a→b, C1 a→out, C2 b→GND,
    out = V(b)), from its nodal equations."""
    s, r1, r2, c1, c2, vin, va, vb = sp.symbols("s R1 R2 C1 C2 Vin Va Vb")
    vout = vb
    eqs = [
        sp.Eq((va - vin) / r1 + (va - vb) / r2 + (va - vout) * s * c1, 0),
        sp.Eq((vb - va) / r2 + vb * s * c2, 0),
    ]
    sol = sp.solve(eqs, [va, vb], dict=True)[0]
    return s, (r1, r2, c1, c2), sp.simplify(sol[vb] / vin)


def test_sallen_key_transfer_function_derived_in_sympy():
    s, (r1, r2, c1, c2), h = _sallen_key_h()
    assert sp.simplify(h - 1 / (s**2 * r1 * r2 * c1 * c2 + s * c2 * (r1 + r2) + 1)) == 0


def _butterworth_parts(fc, r=10e3):
    """A 4th-order Butterworth low-pass: two unity-gain Sallen–Key sections, equal R."""
    s, syms, h = _sallen_key_h()
    wc = 2 * math.pi * fc
    rows = [CHEAD]
    node_in = "in"
    for k, q in enumerate([1 / (2 * math.sin((2 * i - 1) * math.pi / 8)) for i in (1, 2)]):
        # with R1 = R2 = R: ω0 = 1/(R√(C1C2)), Q = √(C1C2)/(2·C2) (from H above)
        c2 = 1 / (2 * q * r * wc)
        c1 = 4 * q * q * c2
        den = sp.Poly(
            sp.denom(sp.together(h)).subs(dict(zip(syms, (r, r, c1, c2), strict=True))), s
        )
        a2, a1, a0 = (float(x) for x in den.all_coeffs())
        assert math.sqrt(a0 / a2) == pytest.approx(wc, rel=1e-12)
        assert math.sqrt(a0 * a2) / a1 == pytest.approx(q, rel=1e-12)
        a, b, out = f"a{k}", f"b{k}", f"out{k}"
        rows += [
            [f"R1_{k}", "R", node_in, a, r, None, None],
            [f"R2_{k}", "R", a, b, r, None, None],
            [f"C1_{k}", "C", a, out, c1, None, None],
            [f"C2_{k}", "C", b, "GND", c2, None, None],
            [f"E{k}", "VCVS", out, "GND", 1.0, b, "GND"],
        ]
        node_in = out
    sources = [
        ["name", "kind", "from", "to", "freq_hz", "peak"],
        ["Vin", "V", "in", "GND", 0, 1.0],
    ]
    return rows, sources


def test_butterworth_poles_from_controlled_source_stages():
    fc = 1000.0
    parts, sources = _butterworth_parts(fc)
    poles = network_poles(parts, sources)
    assert len(poles) == 2 and not any(p.is_real for p in poles)
    # the upper-half-plane members, at 5π/8 and 7π/8
    expected = [np.exp(1j * math.pi * (2 * k + 4 - 1) / 8) * 2 * math.pi * fc for k in (1, 2)]
    got = [p.s for p in poles]
    for g, e in zip(
        sorted(got, key=lambda z: z.real), sorted(expected, key=lambda z: z.real), strict=True
    ):
        assert abs(g - e) <= 1e-10 * abs(e)
    assert sorted(p.q for p in poles) == pytest.approx([0.5411961, 1.3065630], rel=1e-6)


def test_notch_zeros_closed_form():
    # R series, shunt RL–L–C: H = (s²LC + sR_L·C + 1)/(s²LC + s(R + R_L)C + 1)
    r, rl, ind, cap = 100.0, 0.5, 1e-3, 1e-6
    parts = [
        HEAD,
        ["R", "R", "in", "out", r],
        ["RL", "R", "out", "x", rl],
        ["L", "L", "x", "y", ind],
        ["C", "C", "y", "GND", cap],
    ]
    sources = [["name", "kind", "from", "to", "freq_hz", "peak"], ["V", "V", "in", "GND", 50, 1.0]]
    poles, zeros = transfer_poles_zeros(parts, sources, "V", "out")
    zr = np.roots([ind * cap, rl * cap, 1.0])
    pr = np.roots([ind * cap, (r + rl) * cap, 1.0])
    (z,) = zeros
    assert abs(z.s - zr[np.argmax(zr.imag)]) <= 1e-10 * abs(z.s)
    # ζ = ((R + R_L)/2)·√(C/L) ≈ 1.59: two real poles
    assert [p.is_real for p in poles] == [True, True]
    for p, root in zip(poles, sorted(pr, key=abs), strict=True):
        assert abs(p.s - root) <= 1e-10 * abs(root)


def test_a_mode_the_output_does_not_see_is_no_zero():
    # a lossy tank on its own node shares no path with in → out: a pole of the network, but
    # it cancels out of the transfer function
    parts = [
        HEAD,
        ["R", "R", "in", "out", 1e3],
        ["C", "C", "out", "GND", 1e-6],
        ["Rt", "R", "iso", "GND", 1e3],
        ["Lt", "L", "iso", "GND", 1e-3],
        ["Ct", "C", "iso", "GND", 1e-6],
    ]
    sources = [["name", "kind", "from", "to", "freq_hz", "peak"], ["V", "V", "in", "GND", 50, 1.0]]
    assert len(network_poles(parts, sources)) == 2  # the RC pole and the tank's pair
    poles, zeros = transfer_poles_zeros(parts, sources, "V", "out")
    assert zeros == ()
    (p,) = poles
    assert p.is_real and p.freq_hz == pytest.approx(1 / (2 * math.pi * 1e-3), rel=1e-12)


def test_capacitor_current_has_a_zero_at_dc():
    parts = [HEAD, ["R", "R", "in", "m", 1e3], ["C", "C", "m", "GND", 1e-6]]
    sources = [["name", "kind", "from", "to", "freq_hz", "peak"], ["V", "V", "in", "GND", 50, 1.0]]
    (z,) = transfer_zeros(parts, sources, "V", "C", "I")
    assert z.freq_hz == 0 and z.damping is None and z.q is None


def test_resistive_network_has_no_poles_and_tight_coupling_no_spurious_ones():
    assert (
        network_poles(
            [
                HEAD,
                ["R1", "R", "a", "GND", 1.0],
                ["R2", "R", "a", "b", 2.0],
                ["R3", "R", "b", "GND", 3.0],
            ]
        )
        == ()
    )
    # k = 1 between equal inductors: they act as one L with both resistors in parallel
    # across it: a single real pole at −R/(2L) (closed form), the other mode is infinite
    r, ind = 10.0, 1e-3
    parts = [
        ["name", "kind", "from", "to", "value", "coil_a", "coil_b"],
        ["L1", "L", "n1", "GND", ind, None, None],
        ["L2", "L", "n2", "GND", ind, None, None],
        ["K", "COUPLING", None, None, 1.0, "L1", "L2"],
        ["R1", "R", "n1", "GND", r, None, None],
        ["R2", "R", "n2", "GND", r, None, None],
    ]
    (p,) = network_poles(parts)
    assert p.is_real and p.freq_hz == pytest.approx(r / (2 * ind) / (2 * math.pi), rel=1e-10)


def test_growing_pole_of_an_active_network():
    # a VCCS feeding its own node back acts as −g: s = (g − 1/R)/C > 0 (closed form)
    r, g, cap = 1e3, 2e-3, 1e-6
    parts = [
        CHEAD,
        ["R", "R", "n", "GND", r, None, None],
        ["C", "C", "n", "GND", cap, None, None],
        ["G", "VCCS", "GND", "n", g, "n", "GND"],
    ]
    (p,) = network_poles(parts)
    s = (g - 1 / r) / cap
    assert p.s.real == pytest.approx(s, rel=1e-10)
    assert p.damping == -1.0 and p.time_constant_s == pytest.approx(-1 / s, rel=1e-10)


def test_lossless_pair_reads_zero_damping():
    parts = [HEAD, ["L", "L", "n", "GND", 1e-3], ["C", "C", "n", "GND", 1e-6]]
    (p,) = network_poles(parts)
    assert p.damping == 0.0 and p.q is None and p.time_constant_s is None
    out = FUNCTIONS["CKT_POLES"].call(parts, None, None)
    assert out[1][1:] == [0.0, "none", "none"]


def test_refusals():
    law = [
        [*HEAD, "r_exponent"],
        ["R", "R", "n", "GND", 1.0, 0.5],
        ["C", "C", "n", "GND", 1e-6, None],
    ]
    with pytest.raises(InputError, match=r"parts row 2, column r_exponent.*no poles"):
        network_poles(law, None, [["fundamental_hz", 50]])
    # a VCVS of gain 1 across its own control: no unique solution at any frequency
    bad = [
        CHEAD,
        ["R", "R", "a", "GND", 1.0, None, None],
        ["C", "C", "a", "GND", 1e-6, None, None],
        ["E", "VCVS", "a", "GND", 1.0, "a", "GND"],
    ]
    with pytest.raises(NetworkError, match="every frequency"):
        network_poles(bad)


def test_worksheet_and_cli(capsys, tmp_path):
    parts, sources = _butterworth_parts(1000.0)
    out = FUNCTIONS["CKT_POLES"].call(parts, sources, None)
    assert out[0] == ["freq_hz", "damping", "q", "time_constant_s"]
    assert [row[0] for row in out[1:]] == pytest.approx([1000.0, 1000.0], rel=1e-10)
    z = FUNCTIONS["CKT_ZEROS"].call(parts, sources, "Vin", "out1", None, None)
    assert z[1][0] == "no finite zeros"  # an all-pole low-pass
    p = tmp_path / "p.csv"
    p.write_text("name,kind,from,to,value\nR,R,GND,b,10\nL,L,b,c,1m\nC,C,c,GND,1u\n")
    assert main(["poles", str(p)]) == 0
    text = capsys.readouterr().out
    assert "5032.92" in text and "0.158114" in text


def test_cli_zeros(capsys, tmp_path):
    p, s = tmp_path / "p.csv", tmp_path / "s.csv"
    p.write_text(
        "name,kind,from,to,value\nR,R,in,out,100\nRL,R,out,x,0.5\nL,L,x,y,1m\nC,C,y,GND,1u\n"
    )
    s.write_text("name,kind,from,to,freq_hz,peak\nV,V,in,GND,50,1\n")
    assert main(["zeros", str(p), str(s), "--source", "V", "--output", "out"]) == 0
    out = capsys.readouterr().out
    assert "5032.92" in out and "63.2456" in out  # f0 = 1/(2π√(LC)), Q = √(L/C)/R_L


def test_a_node_floating_at_dc_gives_a_mode_at_zero_not_a_growing_one():
    # a, b with R (a–GND), C1 (a–b), C2 (b–GND): det Y(s) = s·((C1+C2)/R + s·C1·C2), so the
    # natural frequencies are s = 0 (b's charge is conserved) and s = −(C1+C2)/(R·C1·C2)
    # (closed form of the 2-node admittance matrix)
    parts = [["name", "kind", "from", "to", "value"],
             ["R", "R", "a", "GND", 1e3], ["C1", "C", "a", "b", 1e-6],
             ["C2", "C", "b", "GND", 1e-6]]  # fmt: skip
    zero, real = network_poles(parts)
    assert zero.s == 0 and zero.freq_hz == 0 and zero.damping is None
    assert real.s.real == pytest.approx(-(2e-6) / (1e3 * 1e-12), rel=1e-9)
