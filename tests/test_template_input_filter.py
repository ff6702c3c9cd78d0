"""The committed input-filter template against references from outside the package.

Every check value here is computed independently of xlfuncs' solver, from the book's own
inputs: closed forms of an LC filter (f₀ = 1/(2π√(LC)), R₀ = √(L/C), circuit theory), the
converter's negative input resistance −V²/P (R. D. Middlebrook, "Input filter
considerations in design and application of switching regulators", IEEE IAS Annual
Meeting, 1976), the filter's output impedance and current divider written out by hand and
evaluated with numpy (its peak found with scipy.optimize), the characteristic polynomial
derived in sympy, and the converter's rectangular input current Fourier-analysed with
numpy's FFT. Tolerances follow from each method and are stated beside it.
"""

from __future__ import annotations

import functools
import math
from pathlib import Path

import numpy as np
import openpyxl
import pytest
import sympy as sp
from scipy.optimize import minimize_scalar

from xlfuncs.templates import TEMPLATES
from xlfuncs.workbook.recalc import PreparedBook

BOOK = Path(__file__).parent.parent / "workbook_templates" / "input_filter.xlsx"
N_HARM = 15


@functools.cache
def _wb() -> openpyxl.Workbook:
    return openpyxl.load_workbook(BOOK, data_only=True)


@functools.cache
def _named() -> dict[str, object]:
    wb = _wb()
    out = {}
    for name, dn in wb.defined_names.items():
        ((sheet, ref),) = dn.destinations
        if ":" not in ref:
            out[name] = wb[sheet][ref.replace("$", "")].value
    return out


def _n(name: str) -> float:
    v = _named()[name]
    assert isinstance(v, (int, float)), (name, v)
    return float(v)


# --------------------------------------------------------- the filter, written out by hand
def _y(f, *, damping=True, ideal=False):
    """Admittance seen by the converter at OUT, supply shorted (circuit theory):
    (DCR + sL) ‖ (ESR + 1/sC) ‖ (R_d + 1/sC_b)."""
    s = 2j * np.pi * np.asarray(f, dtype=float)
    L, C = _n("l_uh") * 1e-6, _n("c_uf") * 1e-6
    rl, rc = (0.0, 0.0) if ideal else (_n("dcr_mohm") * 1e-3, _n("esr_mohm") * 1e-3)
    y_l, y_c = 1 / (rl + s * L), 1 / (rc + 1 / (s * C))
    y_d = 1 / (_n("rd_ohm") + 1 / (s * _n("cb_uf") * 1e-6)) if damping else 0
    return y_l, y_c, y_d


def _zout(f, **kw):
    y_l, y_c, y_d = _y(f, **kw)
    return 1 / (y_l + y_c + y_d)


def _h_line(f):
    """Supply-line current per converter current: the current divider Y_L / ΣY."""
    y_l, y_c, y_d = _y(f)
    return y_l / (y_l + y_c + y_d)


def _peak(fun, lo: float, hi: float) -> tuple[float, float]:
    """max |fun(f)| over [lo, hi]: a dense log grid, then scipy's bounded search around the
    best point (on log10 f)."""
    f = np.geomspace(lo, hi, 40001)
    k = int(np.argmax(np.abs(fun(f))))
    a, b = np.log10(f[max(k - 1, 0)]), np.log10(f[min(k + 1, f.size - 1)])
    r = minimize_scalar(lambda u: -abs(fun(10**u)), bounds=(a, b), method="bounded",
                        options={"xatol": 1e-12})  # fmt: skip
    return float(-r.fun), float(10**r.x)


def _band() -> tuple[float, float]:
    return _n("band_lo_khz") * 1e3, _n("band_hi_khz") * 1e3


# ------------------------------------------------------------------ reading the book
def _data_block(title: str) -> dict[str, list]:
    """A spilled block of the Data sheet by its title (row 5), its header in row 6."""
    ws = _wb()["Data"]
    col = next(c for c in range(1, ws.max_column + 1) if ws.cell(5, c).value == title)
    out: dict[str, list] = {}
    c = col
    while ws.cell(6, c).value not in (None, ""):
        out[ws.cell(6, c).value] = [
            ws.cell(r, c).value
            for r in range(7, ws.max_row + 1)
            if ws.cell(r, c).value is not None
        ]
        c += 1
    return out


def _results_table(title: str) -> tuple[list[str], list[list]]:
    ws = _wb()["Results"]
    r = next(r for r in range(1, ws.max_row + 1) if ws.cell(r, 1).value == title)
    head = [ws.cell(r + 1, c).value for c in range(1, 9)]
    rows = []
    for k in range(r + 2, ws.max_row + 1):
        row = [ws.cell(k, c).value for c in range(1, 9)]
        if row[0] is None:
            break
        rows.append(row)
    return head, rows


def _ripple() -> dict[str, list]:
    head, rows = _results_table(
        f"Ripple at the switching frequency and its multiples (harmonics 1–{N_HARM}): "
        "supply-line current per converter ripple current"
    )
    return {h: [r[i] for r in rows] for i, h in enumerate(head) if h}


# ------------------------------------------------------------------ closed forms
def test_lc_closed_forms_and_negative_resistance():
    L, C = _n("l_uh") * 1e-6, _n("c_uf") * 1e-6
    # f₀ = 1/(2π√(LC)), R₀ = √(L/C) (circuit theory)
    assert _n("f0_khz") * 1e3 == pytest.approx(1 / (2 * math.pi * math.sqrt(L * C)), rel=1e-12)
    assert _n("r0_ohm") == pytest.approx(math.sqrt(L / C), rel=1e-12)
    # R_N = −V²/P with P the converter's input power (Middlebrook 1976)
    p_in = _n("p_out") / _n("eff")
    assert _n("p_in") == pytest.approx(p_in, rel=1e-12)
    assert _n("rn_ohm") == pytest.approx(_n("v_in") ** 2 / p_in, rel=1e-12)
    # ideal buck in continuous conduction: D = V_out/V_in (common practice)
    assert _n("duty") == pytest.approx(_n("v_out") / _n("v_in"), rel=1e-12)


def test_undamped_peak_against_the_closed_form_impedance():
    """|Z_out| of the undamped filter: its exact peak (numpy + scipy on the hand-written
    impedance) and the high-Q approximation R₀²/(DCR + ESR)."""
    zmax, f_at = _peak(lambda f: _zout(f, damping=False), *_band())
    assert _n("zpk_bare") == pytest.approx(zmax, rel=1e-9)
    bare = _data_block("Middlebrook check, without damping")
    f_worst = bare["value"][bare["item"].index("f_worst_hz")]
    assert f_worst == pytest.approx(f_at, rel=1e-6)  # a flat maximum: located to ~1e-7
    r_s = (_n("dcr_mohm") + _n("esr_mohm")) * 1e-3
    r0 = _n("r0_ohm")
    assert _n("zpk_bare_cf") == pytest.approx(r0**2 / r_s, rel=1e-12)
    # the approximation holds to O(1/Q²) (Q = R₀/R_s ≈ 62 here)
    assert zmax == pytest.approx(r0**2 / r_s, rel=2 / (r0 / r_s) ** 2)
    # and without damping the filter fails Middlebrook's criterion by a wide margin
    margin = 20 * math.log10(_n("rn_ohm") / zmax)
    assert _n("margin_bare_db") == pytest.approx(margin, abs=1e-8)
    assert margin < 0 < _n("margin_req_db")


def test_middlebrook_margin_computed_independently():
    """margin = 20·log10((V²/P) / max|Z_out|) over the band, numpy on the closed-form
    impedance of the damped filter (not our solver)."""
    zmax, f_at = _peak(_zout, *_band())
    rn = _n("v_in") ** 2 / (_n("p_out") / _n("eff"))
    assert _n("zout_peak") == pytest.approx(zmax, rel=1e-9)
    assert _n("margin_db") == pytest.approx(20 * math.log10(rn / zmax), abs=1e-8)
    assert _n("f_worst_khz") * 1e3 == pytest.approx(f_at, rel=1e-6)
    # the chart's scan: the impedance at every point and the margin curve
    scan = _data_block("|Z_out| of the damped filter and |R_N|")
    f = np.array(scan["freq_hz"])
    assert (
        f.size == 200 and f[0] == pytest.approx(_band()[0]) and f[-1] == pytest.approx(_band()[1])
    )
    np.testing.assert_allclose(scan["zout_ohm"], np.abs(_zout(f)), rtol=1e-9)
    np.testing.assert_allclose(scan["margin_db"], 20 * np.log10(rn / np.abs(_zout(f))), atol=1e-8)
    np.testing.assert_allclose(scan["rn_ohm"], rn, rtol=1e-12)
    # the exact smallest margin lies at or below every grid point's
    assert _n("margin_db") <= min(scan["margin_db"]) + 1e-12


def test_attenuation_at_the_switching_frequency_and_its_multiples():
    rip = _ripple()
    fsw = _n("f_sw_khz") * 1e3
    f = np.array(rip["freq (kHz)"]) * 1e3
    np.testing.assert_allclose(f, fsw * np.arange(1, N_HARM + 1), rtol=1e-12)
    h = _h_line(f)
    np.testing.assert_allclose(rip["gain (dB)"], 20 * np.log10(np.abs(h)), atol=1e-9)
    np.testing.assert_allclose(rip["attenuation (dB)"], -20 * np.log10(np.abs(h)), atol=1e-9)
    np.testing.assert_allclose(rip["phase_deg"], np.degrees(np.angle(h)), atol=1e-8)
    # second-order LC closed form: |H| = 1/|1 − (f/f₀)²| (no losses, no damping)
    f0 = 1 / (2 * math.pi * math.sqrt(_n("l_uh") * 1e-6 * _n("c_uf") * 1e-6))
    ideal = 20 * math.log10((fsw / f0) ** 2 - 1)
    assert _n("att_ideal_db") == pytest.approx(ideal, rel=1e-12)
    # the ideal form's attenuation from the hand-written network with DCR, ESR, damping at 0
    y_l, y_c, _ = _y(fsw, damping=False, ideal=True)
    assert ideal == pytest.approx(-20 * math.log10(abs(y_l / (y_l + y_c))), rel=1e-9)
    # the real filter's losses and damping leg move it by well under 1 dB at f_sw ≫ f₀
    assert rip["attenuation (dB)"][0] == pytest.approx(ideal, abs=0.5)
    assert _n("att_min_db") == pytest.approx(min(rip["attenuation (dB)"]), rel=1e-12)
    ok = ["meets the requirement" if a >= _n("atten_req_db") else "below the requirement"
          for a in rip["attenuation (dB)"]]  # fmt: skip
    assert rip["against the required attenuation"] == ok


def test_bode_spill_against_the_closed_form():
    """gain, dB, continuous phase and group delay −dφ/dω of I(L_f)/I_conv."""
    bode = _data_block("Ripple attenuation: supply-line current / converter current")
    f = np.array(bode["freq_hz"])
    h = _h_line(f)
    np.testing.assert_allclose(bode["gain"], np.abs(h), rtol=1e-9)
    np.testing.assert_allclose(bode["gain_db"], 20 * np.log10(np.abs(h)), atol=1e-9)
    # adjacent points are 6 % apart: numpy's unwrap follows the phase without ambiguity
    np.testing.assert_allclose(bode["phase_deg"], np.degrees(np.unwrap(np.angle(h))), atol=1e-7)
    # −dφ/dω by central differences on the closed form (step 1e-6 relative: error ~1e-12)
    w, dw = 2 * np.pi * f, 2 * np.pi * f * 1e-6
    dphi = np.angle(_h_line((w + dw) / (2 * np.pi)) / _h_line((w - dw) / (2 * np.pi)))
    np.testing.assert_allclose(bode["group_delay_s"], -dphi / (2 * dw), rtol=1e-5, atol=1e-15)
    assert bode["group_delay_s"][0] > 0  # a lagging, low-pass-like response: positive


def test_poles_against_the_characteristic_polynomial():
    """Natural frequencies with the supply shorted and the converter open are the zeros of
    the admittance at OUT: the numerator of Y(s), derived in sympy."""
    s = sp.symbols("s")
    L, C, Cb = (sp.nsimplify(_n(k)) * sp.Rational(1, 10**6) for k in ("l_uh", "c_uf", "cb_uf"))
    rl, rc = (sp.nsimplify(_n(k)) / 1000 for k in ("dcr_mohm", "esr_mohm"))
    rd = sp.nsimplify(_n("rd_ohm"))

    def naturals(y):
        num = sp.Poly(sp.numer(sp.together(y)), s)
        roots = np.array([complex(r) for r in num.nroots(n=30)])
        rows = {}
        for r in roots:
            fn, zeta = abs(r) / (2 * math.pi), -r.real / abs(r)
            rows[round(fn, 3)] = (fn, zeta)  # a conjugate pair once
        return sorted(rows.values())

    y_bare = 1 / (rl + s * L) + 1 / (rc + 1 / (s * C))
    poles = naturals(y_bare + 1 / (rd + 1 / (s * Cb)))
    _head, rows = _results_table(
        "Natural frequencies of the damped filter (supply shorted, converter open)"
    )
    got = sorted((r[0], r[1]) for r in rows)
    assert len(got) == len(poles) == 2  # one conjugate pair and one real pole
    for (f_got, z_got), (f_ref, z_ref) in zip(got, poles, strict=True):
        assert f_got == pytest.approx(f_ref, rel=1e-9)
        assert z_got == pytest.approx(z_ref, rel=1e-9, abs=1e-12)
    least = min(poles, key=lambda p: p[1])
    assert _n("pole_khz") * 1e3 == pytest.approx(least[0], rel=1e-9)
    assert _n("pole_zeta") == pytest.approx(least[1], rel=1e-9)
    assert _n("pole_q") == pytest.approx(1 / (2 * least[1]), rel=1e-9)
    # undamped: one series RLC loop, ω₀ = 1/√(LC) and ζ = (R/2)√(C/L) (circuit theory)
    _head, bare = _results_table("Natural frequencies without the damping leg")
    assert len(bare) == 1
    lf, cf, r = float(L), float(C), float(rl + rc)
    assert bare[0][0] == pytest.approx(1 / (2 * math.pi * math.sqrt(lf * cf)), rel=1e-9)
    assert bare[0][1] == pytest.approx(r / 2 * math.sqrt(cf / lf), rel=1e-9)


def test_damping_sizing_restores_the_margin():
    """The sized R_d–C_b leg on the ideal LC: its peak |Z_out| (numpy + scipy on the
    hand-written impedance) meets |R_N|·10^(−margin/20), and R_d is the optimum for its
    C_b (a small change either way raises the peak)."""
    L, C = _n("l_uh") * 1e-6, _n("c_uf") * 1e-6
    cb, rd = _n("damp_cb_uf") * 1e-6, _n("damp_rd")
    assert _n("damp_n") == pytest.approx(cb / C, rel=1e-12)

    def z(f, r=rd):
        s = 2j * np.pi * f
        return 1 / (1 / (s * L) + s * C + 1 / (r + 1 / (s * cb)))

    target = _n("rn_ohm") * 10 ** (-_n("margin_req_db") / 20)
    peak, _f = _peak(z, *_band())
    assert peak == pytest.approx(target, rel=1e-7)
    assert _n("damp_peak") == pytest.approx(peak, rel=1e-7)
    assert _n("damp_margin") == pytest.approx(_n("margin_req_db"), abs=1e-6)
    for k in (0.99, 1.01):
        assert _peak(lambda f, r=rd * k: z(f, r), *_band())[0] > peak
    # the installed leg has at least the sized C_b, and the installed filter passes
    assert _n("cb_uf") >= _n("damp_cb_uf") and _n("margin_db") >= _n("margin_req_db")


def _pulse_train_harmonics(n_harm: int):
    """Peak amplitude and phase (cosine reference) of the converter's rectangular input
    current, from numpy's FFT of the sampled waveform (midpoint samples: error ~(n/N)²)."""
    d, i_pk = _n("duty"), _n("i_pulse")
    n = 3 * 2**15
    t = (np.arange(n) + 0.5) / n
    wave = np.where(t < d, i_pk, 0.0)
    k = np.arange(1, n_harm + 1)
    c = np.fft.rfft(wave)[: n_harm + 1] / n
    c[1:] *= np.exp(-1j * np.pi * k / n)  # the samples sit half a step after t = k/N
    return 2 * np.abs(c[k]), np.degrees(np.angle(c[k])), wave


def test_converter_current_spectrum_from_the_fft():
    amp, phase, wave = _pulse_train_harmonics(N_HARM)
    wb = _wb()
    ws = wb["Network"]
    rows = [[c.value for c in row] for row in ws.iter_rows()]
    conv = [r for r in rows if r[0] == "I_conv"]
    assert conv[0][4] == 0 and conv[0][5] == pytest.approx(wave.mean(), rel=1e-6)
    assert _n("i_in_dc") == pytest.approx(_n("p_out") / _n("eff") / _n("v_in"), rel=1e-12)
    for k, r in enumerate(conv[1:]):
        assert r[4] == pytest.approx((k + 1) * _n("f_sw_khz") * 1e3, rel=1e-12)
        assert r[5] == pytest.approx(amp[k], rel=1e-6, abs=1e-6 * amp.max())
        if amp[k] > 1e-6 * amp.max():  # the phase of an exact zero means nothing
            assert (r[6] - phase[k] + 180) % 360 - 180 == pytest.approx(0, abs=1e-4)
        else:
            assert r[5] == 0 and r[6] == 0
    # Parseval: the RMS of the ripple (DC removed) is I_pulse·√(D(1−D))
    assert _n("i_ac_rms") == pytest.approx(np.std(wave), rel=1e-6)


def test_ripple_currents_and_their_upper_bounds():
    """Line current from the divider; the capacitor's and the damping resistor's ripple
    from 2000 harmonics of the closed-form spectrum through the hand-written divider: the
    book's figures (15 harmonics + the tail as stated) are bounds, and tight ones."""
    d, i_pk, fsw = _n("duty"), _n("i_pulse"), _n("f_sw_khz") * 1e3
    k = np.arange(1, 2001)
    amp = np.abs(2 * i_pk / (k * np.pi) * np.sin(k * np.pi * d))  # Fourier series
    amp[amp < 1e-12 * amp.max()] = 0.0
    y_l, y_c, y_d = _y(k * fsw)
    y = y_l + y_c + y_d
    rip = _ripple()
    line = np.abs(amp[:N_HARM] * y_l[:N_HARM] / y[:N_HARM]) * 1e3
    np.testing.assert_allclose(rip["supply-line ripple, mA peak"], line, rtol=1e-9, atol=1e-15)
    assert _n("i_line_ma") == pytest.approx(math.sqrt(np.sum(line**2) / 2), rel=1e-9)
    i_c = math.sqrt(np.sum(np.abs(amp * y_c / y) ** 2) / 2)
    p_d = _n("rd_ohm") * np.sum(np.abs(amp * y_d / y) ** 2) / 2
    assert i_c <= _n("i_cf_rms") <= i_c * 1.01
    assert p_d <= _n("p_rd_w") <= p_d * 1.01
    tail = math.sqrt(_n("i_ac_rms") ** 2 - np.sum(amp[:N_HARM] ** 2) / 2)
    assert _n("i_tail_rms") == pytest.approx(tail, rel=1e-6)


def test_checks_verdict_and_which_checks_decide():
    """The default scenario passes; the Notes say which checks are closest to their limits."""
    t = TEMPLATES["input_filter.xlsx"]
    n = _named()
    assert n["verdict"] == "PASS" and n["inputs_invalid"] == 0
    ws = _wb()["Checks"]
    got = {ws.cell(r, 1).value: ws.cell(r, 6).value for r in range(7, 7 + len(t.checks))}
    assert got == {c.label: "PASS" for c in t.checks}
    margin_room = _n("margin_db") - _n("margin_req_db")
    att_room = _n("att_min_db") - _n("atten_req_db")
    cap, res = _n("i_cf_rms") / _n("c_i_rated"), _n("p_rd_w") / _n("rd_p_rated")
    assert margin_room > 3 and 0 < att_room < margin_room  # "several dB to spare"
    assert res < 0.2 < cap < 1  # the resistor "far below its rating"


def test_scenarios_every_column_against_the_independent_margin():
    """Each scenario column: the margin from |R_N| of that column's V and P over the same
    (independently found) |Z_out| peak; the worst is the lowest line at full load."""
    ws = _wb()["Scenarios"]
    head = next(r for r in range(1, 60) if ws.cell(r, 1).value == "check")
    cols = range(3, 9)
    zmax, _f = _peak(_zout, *_band())
    label = "Middlebrook margin, smallest over the band"
    row = next(r for r in range(head, head + 12) if ws.cell(r, 1).value == label)
    seen = set()
    for c in cols:
        v, p = ws.cell(head + 1, c).value, ws.cell(head + 2, c).value
        seen.add((v, p))
        rn = v**2 / (p / _n("eff"))
        assert ws.cell(row, c).value == pytest.approx(20 * math.log10(rn / zmax), abs=1e-8)
    assert seen == {(v, p) for v in (36, 48, 60) for p in (_n("p_out") / 2, _n("p_out"))}
    worst = ws.cell(row, 9).value
    assert worst == pytest.approx(_n("margin_db"), abs=1e-12)  # 36 V, full power: the inputs
    assert ws.cell(row, 10).value == "S2"
    verdicts = next(r for r in range(head, 120) if ws.cell(r, 1).value == "verdict per scenario")
    assert {ws.cell(verdicts, c).value for c in cols} == {"PASS"}


def test_a_boost_operating_point_is_refused_not_guessed():
    """V_out ≥ V_in is no buck: the duty cycle says so and no check reads PASS from it."""
    pb = PreparedBook(BOOK)
    pb.evaluate()
    sheet, r, c = pb.input_cell("v_out")
    pb.engine.set_value(sheet, r, c, 40.0)  # an accepted number, above V_in = 36 V
    pb.engine.evaluate()
    assert str(pb.read("duty")).startswith("expects V_out < V_in")
    assert pb.read("inputs_invalid") == 0
    assert pb.read("verdict") == "INCOMPLETE"
    s2, r2, _c, _r, _c2 = pb.resolve("verdict")
    results = [pb.engine.value(s2, k, 6) for k in range(r2 - 5, r2 - 1)]
    assert "ERROR" in results and "FAIL" not in results
