"""Input-filter stability (Middlebrook's criterion) and parallel R–C damping.

References:
* R_N = −V²/P and the criterion |Z_out| ≪ |R_N|: R. D. Middlebrook, "Input filter
  considerations in design and application of switching regulators", IEEE IAS Annual
  Meeting, 1976.
* The lossy LC filter's output impedance (supply shorted) is (R_s + jωL) ‖ 1/(jωC); its
  peak is found here by scipy's bounded scalar minimisation of that closed form.
* Optimum parallel R_f–C_b damping (R. W. Erickson, D. Maksimović, Fundamentals of Power
  Electronics, 2nd ed., 2001, §10.4.1 — from memory): R_f = R0·√((2+n)(4+3n)/(2n²(4+n))),
  peak R0·√(2(2+n))/n. Because the formulas are recalled, they are checked here against a
  brute-force optimisation of the closed-form impedance L ‖ C ‖ (R_f + 1/(jωC_b)) with
  scipy, independently of the package.
"""

import doctest
import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

import xlfuncs.studies.stability
from xlfuncs.cli import main
from xlfuncs.errors import InputError, NetworkError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import (
    damping_for_margin,
    input_filter_margin,
    negative_input_resistance,
    size_parallel_damping,
)

HEAD = ["name", "kind", "from", "to", "value"]
SUPPLY = [["name", "kind", "from", "to", "freq_hz", "peak"], ["Vbus", "V", "in", "GND", 0, 48.0]]
RS, L, C = 0.02, 10e-6, 100e-6
LC = [HEAD, ["Rs", "R", "in", "a", RS], ["L", "L", "a", "out", L], ["C", "C", "out", "GND", C]]


def _zout(w):
    zl = RS + 1j * w * L
    return zl / (1 + zl * 1j * w * C)


def _closed_form_peak(zfun, w0):
    res = minimize_scalar(
        lambda u: -abs(zfun(math.exp(u))),
        bounds=(math.log(w0 / 3), math.log(w0 * 3)),
        method="bounded",
        options={"xatol": 1e-12},
    )
    return math.exp(res.x), -res.fun


def test_docstring_examples_run():
    res = doctest.testmod(xlfuncs.studies.stability)
    assert res.attempted > 0 and res.failed == 0


def test_negative_input_resistance():
    assert negative_input_resistance(48.0, 200.0) == pytest.approx(-11.52, rel=1e-15)
    with pytest.raises(InputError, match="argument p_in"):
        negative_input_resistance(48.0, 0.0)


def test_margin_of_a_lossy_lc_filter():
    w0 = 1 / math.sqrt(L * C)
    w_pk, z_pk = _closed_form_peak(_zout, w0)
    m = input_filter_margin(LC, "out", 48.0, 200.0, 10, 1e6, 6.0, sources=SUPPLY)
    assert m.rn_ohm == pytest.approx(11.52, rel=1e-15)
    assert m.zout_peak_ohm == pytest.approx(z_pk, rel=1e-10)
    assert m.f_worst_hz == pytest.approx(w_pk / (2 * math.pi), rel=1e-6)
    assert m.margin_db == pytest.approx(20 * math.log10(11.52 / z_pk), abs=1e-9)
    assert m.passed and m.complete and m.note == ""
    assert np.abs(m.z_out) == pytest.approx(np.abs(_zout(2 * np.pi * m.freqs_hz)), rel=1e-11)
    strict = input_filter_margin(LC, "out", 48.0, 200.0, 10, 1e6, 8.0, sources=SUPPLY)
    assert not strict.passed  # 7.2 dB < 8 dB


def test_a_converter_part_across_the_port_is_taken_out():
    with_load = [*LC, ["Rconv", "R", "out", "GND", 11.52]]
    a = input_filter_margin(with_load, "out", 48.0, 200.0, 10, 1e6, sources=SUPPLY, load="Rconv")
    b = input_filter_margin(LC, "out", 48.0, 200.0, 10, 1e6, sources=SUPPLY)
    assert a.zout_peak_ohm == pytest.approx(b.zout_peak_ohm, rel=1e-12)


def test_band_edge_and_lossless_cases_are_stated_or_refused():
    m = input_filter_margin(LC, "out", 48.0, 200.0, 10, 1000, sources=SUPPLY)
    assert m.f_worst_hz == 1000 and "band edge" in m.note
    lossless = [HEAD, ["L", "L", "in", "out", L], ["C", "C", "out", "GND", C]]
    with pytest.raises(NetworkError, match="lossless resonance"):
        input_filter_margin(lossless, "out", 48.0, 200.0, 10, 1e6, sources=SUPPLY)


@pytest.mark.parametrize("n", [0.25, 1.0, 4.0])
def test_recalled_damping_formulas_against_brute_force(n):
    # normalised filter L = C = 1 (R0 = 1): optimise R_f of L ‖ C ‖ (R_f + 1/(s·n·C))
    w = np.geomspace(0.05, 20, 400_001)
    s = 1j * w

    def peak(rf):
        return float(np.abs(1 / (1 / s + s + 1 / (rf + 1 / (s * n)))).max())

    res = minimize_scalar(
        lambda u: peak(math.exp(u)), bounds=(-5, 5), method="bounded", options={"xatol": 1e-9}
    )
    rf_formula = math.sqrt((2 + n) * (4 + 3 * n) / (2 * n * n * (4 + n)))
    assert math.exp(res.x) == pytest.approx(rf_formula, rel=1e-4)  # a flat optimum
    assert res.fun == pytest.approx(math.sqrt(2 * (2 + n)) / n, rel=1e-8)


def test_sized_damping_is_verified_by_the_solver():
    target = 1.5
    d = size_parallel_damping(L, C, target)
    assert d.r0_ohm == pytest.approx(math.sqrt(L / C), rel=1e-15)
    assert d.peak_formula_ohm == pytest.approx(target, rel=1e-12)
    assert d.peak_solved_ohm == pytest.approx(target, rel=1e-9)

    def zd(w):
        return 1 / (1 / (1j * w * L) + 1j * w * C + 1 / (d.rf_ohm + 1 / (1j * w * d.cb_f)))

    w_pk, z_pk = _closed_form_peak(zd, 1 / math.sqrt(L * C))
    assert d.peak_solved_ohm == pytest.approx(z_pk, rel=1e-9)
    assert d.f_peak_hz == pytest.approx(w_pk / (2 * math.pi), rel=1e-5)


def test_damping_restores_the_margin_on_the_filter():
    d = damping_for_margin(L, C, 12.0, 100.0, 10.0)
    assert d.margin_db == pytest.approx(10.0, abs=1e-8) and d.passed
    damped = [
        HEAD,
        ["L", "L", "in", "out", L],
        ["C", "C", "out", "GND", C],
        ["Rf", "R", "out", "x", d.rf_ohm],
        ["Cb", "C", "x", "GND", d.cb_f],
    ]
    m = input_filter_margin(damped, "out", 12.0, 100.0, 10, 1e6, 10.0, sources=SUPPLY)
    assert m.margin_db == pytest.approx(10.0, abs=1e-8) and m.passed


def test_worksheet_and_cli(capsys, tmp_path):
    out = FUNCTIONS["CKT_FILTER_MARGIN"].call(
        LC, "out", 48.0, 200.0, 10.0, 1e6, None, None, SUPPLY
    )
    rows = {r[0]: r[1] for r in out[1:]}
    assert out[0] == ["item", "value", "unit"]
    assert rows["required_db"] == 6.0 and rows["verdict"] == "PASS"
    assert rows["margin_db"] == pytest.approx(7.23, abs=0.01)
    scan = FUNCTIONS["CKT_MARGIN_SCAN"].call(
        LC, [["out", "GND"]], 48.0, 200.0, 10.0, 1e6, 5.0, None, SUPPLY
    )
    assert scan[0] == ["freq_hz", "zout_ohm", "zout_deg", "rn_ohm", "margin_db"] and len(scan) == 6
    dmp = FUNCTIONS["CKT_DAMPING"].call(10e-6, 100e-6, 12.0, 100.0, None)
    d = {r[0]: r[1] for r in dmp[1:]}
    assert d["margin_db"] == pytest.approx(6.0, abs=1e-8) and d["verdict"] == "PASS"
    assert "from memory" in d["source"]
    bad = FUNCTIONS["CKT_FILTER_MARGIN"].call(LC, "out", -48.0, 200.0, 10.0, 1e6)
    assert bad.startswith("ERROR: argument v_in")
    p, s = tmp_path / "p.csv", tmp_path / "s.csv"
    p.write_text("name,kind,from,to,value\nRs,R,in,a,0.02\nL,L,a,out,10u\nC,C,out,GND,100u\n")
    s.write_text("name,kind,from,to,freq_hz,peak\nVbus,V,in,GND,0,48\n")
    assert (
        main(
            [
                "filter-margin",
                str(p),
                "--port",
                "out",
                "--v-in",
                "48",
                "--p-in",
                "200",
                "--f-start",
                "10",
                "--f-stop",
                "1e6",
                "--sources",
                str(s),
            ]
        )
        == 0
    )
    text = capsys.readouterr().out
    assert "verdict" in text and "PASS" in text and "11.52" in text
    assert (
        main(["damping", "--l-h", "10e-6", "--c-f", "100e-6", "--v-in", "12", "--p-in", "100"])
        == 0
    )
    assert "rf_ohm" in capsys.readouterr().out
