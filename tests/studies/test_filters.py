"""Harmonic filters: sizing (published detuned-reactor example, closed forms, the core
solver), tuning drift, resonance with the supply, IEEE 18 rating, capacitor steps."""

import math

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs
from xlfuncs.errors import InputError, TableError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import (
    capacitor_bank,
    capacitor_duty,
    capacitor_steps,
    detuning,
    filter_rating,
    filter_resonance,
    highpass_filter,
    read_order_amps,
    tuned_filter,
    tuning_drift,
)


def _delivered_kvar_by_solver(design):
    """Reactive power the filter delivers at f1, from a core solve of one phase."""
    f1 = design.fundamental_hz
    parts = [["name", "kind", "from", "to", "value"], *design.parts_rows("bus", "GND")]
    src = [["name", "kind", "from", "to", "freq_hz", "rms"]]
    src.append(["Vs", "V", "bus", "GND", f1, design.v_phase])
    sol = xlfuncs.solve(parts, src)
    v = sol.voltage("Vs").phasors[0]
    i = sol.current("Vs").phasors[0]  # the source's current from bus through it to GND
    s_source = 0.5 * v * np.conj(i)  # absorbed by the source
    return design.phases * s_source.imag / 1e3  # the filter supplies what the source absorbs


# ------------------------------------------------------------------------- sizing
def test_published_detuned_reactor_example():
    # Published detuned-reactor calculation (power-factor-correction design note, as given in
    # the project's reference notes): 80 kvar at 525 V, 50 Hz, p = 7 % → X_C = 3.445 Ω,
    # X_L = 0.241 Ω, L = 0.768 mH, tuned to 189 Hz. As a lossless filter on a 525 V bus it
    # delivers Q_C/(1 − p) (common practice: U_C = U/(1 − p)).
    d = tuned_filter(80 / 0.93, 525, 50, 1 / math.sqrt(0.07), 1e12, 1)
    assert round(d.x_c_ohm, 3) == 3.445
    assert round(d.x_l_ohm, 3) == 0.241
    assert round(d.l_henry * 1e3, 3) == 0.768
    assert round(d.tuned_order * 50) == 189
    ref = detuning(80, 525, 50, p=0.07)  # the same reactor from the capacitor's rating
    assert d.c_farad == pytest.approx(ref.c_farad, rel=1e-9)
    assert d.l_henry == pytest.approx(ref.l_henry, rel=1e-9)
    assert d.v_c1 / d.bus_v == pytest.approx(ref.voltage_rise, rel=1e-9)


@pytest.mark.parametrize("phases", [1, 3])
@pytest.mark.parametrize(("h", "q"), [(4.7, 50.0), (2.8, 8.0), (10.7, 100.0)])
def test_single_tuned_sizing_closed_form_and_solver(phases, h, q):
    v, kvar, f1 = 480.0, 300.0, 60.0
    d = tuned_filter(kvar, v, f1, h, q, phases)
    # lossless closed form X_C = (V²/Q)·h²/(h² − 1) (common practice), R shifts it by ~1/Q²
    assert d.x_c_ohm == pytest.approx(v**2 / (kvar * 1e3) * h * h / (h * h - 1), rel=1 / q**2)
    assert d.x_l_ohm == pytest.approx(d.x_c_ohm / h**2, rel=1e-15)
    assert d.x_n_ohm / d.r_ohm == pytest.approx(q, rel=1e-14)  # Q = X_n/R
    # the core solver: delivered kvar, series resonance at the tuned order with |Z| = R
    assert _delivered_kvar_by_solver(d) == pytest.approx(kvar, rel=1e-10)
    ft = h * f1
    _f, z = xlfuncs.impedance_scan(
        [["name", "kind", "from", "to", "value"], *d.parts_rows()], "bus", [ft]
    )
    assert abs(z[0]) == pytest.approx(d.r_ohm, rel=1e-8)
    assert d.kvar_delivered == pytest.approx(kvar, rel=1e-12)


def test_exact_sizing_in_sympy():
    # delivered reactive power of R + jX_L − jX_C at V, with X_L = X_C/h², R = X_C/(hQ):
    # Q = V²·(X_C − X_L)/|Z|²; solve for X_C (sympy), compare
    xc = sp.symbols("x_c", positive=True)
    h, q, v, kvar = sp.Rational(47, 10), sp.Integer(40), sp.Integer(400), sp.Integer(150)
    xl, r = xc / h**2, xc / (h * q)
    eq = sp.Eq(v**2 * (xc - xl) / (r**2 + (xc - xl) ** 2), kvar * 1000)
    (sol,) = sp.solve(eq, xc)
    d = tuned_filter(150, 400, 50, 4.7, 40, 1)
    assert d.x_c_ohm == pytest.approx(float(sol), rel=1e-13)


def test_high_pass_sizing():
    v, kvar, f1, h, q = 13800.0, 3000.0, 60.0, 12.5, 1.5
    d = highpass_filter(kvar, v, f1, h, q, 3)
    assert d.r_ohm / d.x_n_ohm == pytest.approx(q, rel=1e-14)  # Q = R/X_n
    assert d.x_l_ohm * h == pytest.approx(d.x_c_ohm / h, rel=1e-14)  # corner: X_L = X_C
    assert _delivered_kvar_by_solver(d) == pytest.approx(kvar, rel=1e-10)
    # sympy: Im(1/Z(ω1))·V_ph² = Q_ph with Z = −jX_C + R·jX_L/(R + jX_L)
    xc = sp.symbols("x_c", positive=True)
    hh, qq = sp.Rational(25, 2), sp.Rational(3, 2)
    z = -sp.I * xc + (qq * xc / hh) * (sp.I * xc / hh**2) / (qq * xc / hh + sp.I * xc / hh**2)
    y_im = sp.im(sp.simplify(1 / z))
    (sol,) = sp.solve(sp.Eq((sp.Integer(13800) ** 2 / 3) * y_im, sp.Integer(1000 * 1000)), xc)
    assert d.x_c_ohm == pytest.approx(float(sol), rel=1e-12)
    # at high orders the filter tends to R (the damping resistor)
    assert abs(d.impedance(1e3 * f1)) == pytest.approx(d.r_ohm, rel=1e-3)


def test_three_phase_basis_is_per_phase_star():
    one = tuned_filter(100, 277.128, 60, 4.7, 50, 1)  # one phase of a 480 V star
    three = tuned_filter(300, 480, 60, 4.7, 50, 3)
    assert three.x_c_ohm == pytest.approx(one.x_c_ohm, rel=1e-6)
    assert three.i1_a == pytest.approx(one.i1_a, rel=1e-6)  # line current
    assert three.v_c1 == pytest.approx(one.v_c1 * math.sqrt(3), rel=1e-6)  # line-to-line


# -------------------------------------------------------------------------- drift
def test_tuning_drift_closed_form():
    # h' = h/√(c·l): C +10 % and L +3 % lower the tuning; C −0 % and L −3 % raise it
    d = tuning_drift(4.7, 50, 0.0, 0.10, 0.03)
    assert d.low == pytest.approx(4.7 / math.sqrt(1.10 * 1.03), rel=1e-15)
    assert d.high == pytest.approx(4.7 / math.sqrt(1.0 * 0.97), rel=1e-15)
    t = tuning_drift(4.7, 50, 0.05, 0.05, 0.0, -400, 25)  # ±1 % from temperature
    assert t.c_low == pytest.approx(0.95 * 0.99, rel=1e-15)
    assert t.c_high == pytest.approx(1.05 * 1.01, rel=1e-15)
    assert t.rows()[5][1] == pytest.approx(4.7 * 50 / math.sqrt(1.05 * 1.01), rel=1e-15)


@pytest.mark.parametrize(
    ("args", "col"),
    [((1.0, 50, 0, 0.1, 0.03), "tuned_order"), ((4.7, 50, -0.1, 0.1, 0.03), "c_tol_minus")],
)
def test_tuning_drift_refuses(args, col):
    with pytest.raises(InputError, match=col):
        tuning_drift(*args)


# ------------------------------------------------------------------------- resonance
@pytest.mark.parametrize(
    ("ssc_mva", "kvar", "v", "expected"),
    [
        # resonance-order rule h ≈ √(S_sc/Q_cap), published power-quality notes (common
        # practice): 1000 kVA, 5.3 % transformer, 480 V, 100 kvar → 13.7; 13.8 kV bus of
        # 125 MVA with 5 Mvar → 5.0
        (1.0 / 0.053, 100.0, 480.0, 13.7),
        (125.0, 5000.0, 13800.0, 5.0),
    ],
)
def test_capacitor_resonance_matches_the_published_rule(ssc_mva, kvar, v, expected):
    d = capacitor_bank(kvar, v, 60, 3)
    r = filter_resonance(d, ssc_mva, 1e4)
    assert round(r.order, 1) == expected
    assert r.order == pytest.approx(math.sqrt(ssc_mva * 1e3 / kvar), rel=1e-6)


def test_tuned_filter_resonance_closed_form_and_damping():
    d = tuned_filter(300, 480, 60, 4.7, 1e4, 3)
    lossless = filter_resonance(d, 30, 1e4)
    xs = 480**2 / 30e6 * 1e4 / math.sqrt(1 + 1e8)  # |Z_s| = V²/S_sc split by X/R
    h_p = math.sqrt(d.x_c_ohm / (xs + d.x_l_ohm))  # lossless closed form (common practice)
    assert lossless.order == pytest.approx(h_p, rel=1e-6)
    damped = filter_resonance(tuned_filter(300, 480, 60, 4.7, 30, 3), 30, 5)
    assert damped.z_ohm < lossless.z_ohm and abs(damped.order / h_p - 1) < 0.02
    # |Z| at the resonance agrees with the closed-form parallel impedance there
    zs5 = 480**2 / 30e6 / math.sqrt(26)  # R_s of |Z_s| = V²/S_sc at X/R = 5
    zs = zs5 + 1j * 5 * zs5 * damped.order
    zf = tuned_filter(300, 480, 60, 4.7, 30, 3).impedance(damped.freq_hz)
    assert damped.z_ohm == pytest.approx(abs(zs * zf / (zs + zf)), rel=1e-9)


def test_supply_impedance_is_the_short_circuit_power_split_by_x_over_r():
    """S_sc = V²/|Z_s| (definition of the short-circuit power; IEC 60909-0 with c = 1):
    at X/R = 1 the supply is |Z_s|/√2 + j|Z_s|/√2. The three-phase study models its supply
    the same way, so a study of supply + filter item finds the same parallel resonance."""
    from xlfuncs.power import harmonic_study

    d = tuned_filter(300, 480, 60, 4.7, 30, 3)
    r = filter_resonance(d, 2.0, 1.0)
    z = 480**2 / 2e6
    assert r.x_s_ohm == pytest.approx(z / math.sqrt(2), rel=1e-14)
    assert r.r_s_ohm == pytest.approx(z / math.sqrt(2), rel=1e-14)
    head = ["name", "kind", "bus", "kv", "mva_sc", "x_r", "kvar", "tuned_order", "q_factor"]
    eq = [
        [*head, "connection"],
        ["U1", "supply", "B1", 0.48, 2.0, 1.0, None, None, None, None],
        ["F1", "filter", "B1", 0.48, None, None, 480**2 / d.x_c_ohm / 1e3, 4.7, 30.0, "Y"],
    ]
    st = harmonic_study(eq, None, {"fundamental_hz": 60})
    par = [x for x in st.resonances("B1", 60, 20 * 60) if x.kind == "parallel"]
    assert par[0].order == pytest.approx(r.order, rel=1e-6)


# ----------------------------------------------------------------------------- rating
def test_rating_reuses_ieee18_duty_and_matches_a_solved_network():
    d = tuned_filter(120, 400, 50, 4.7, 40, 1)
    orders, amps = [5.0, 7.0, 11.0], [60.0, 15.0, 6.0]
    rt = filter_rating(d, orders, amps, 150, 440)
    # the same duty from capacitor_duty with V_C,h = I_h·X_C/h (capacitor reactance at h)
    i = np.array([d.i1_a, *amps])
    h = np.array([1.0, *orders])
    ref = capacitor_duty(h * 50, i * d.x_c_ohm / h, i, 150, 440)
    for mine, theirs in zip(rt.capacitor_rows, ref.rows, strict=True):
        assert mine[1] == pytest.approx(theirs[1], rel=1e-14) and mine[5] == theirs[5]
    # independent: drive the filter in the core solver by voltage tones that force those
    # currents (V_h = I_h·|Z(h)|) and read its capacitor through CKT_CAPDUTY
    parts = [["name", "kind", "from", "to", "value"], *d.parts_rows()]
    src = [["name", "kind", "from", "to", "harmonic", "rms"], ["V", "V", "bus", "GND", 1, 400.0]]
    for hh, a in zip(orders, amps, strict=True):
        src.append(["V", "V", "bus", "GND", hh, a * abs(d.impedance(hh * 50))])
    duty = FUNCTIONS["CKT_CAPDUTY"].call(parts, src, "F_C", 150, 440, [["fundamental_hz", 50]])
    for mine, row in zip(rt.capacitor_rows, duty[1:], strict=True):
        assert mine[1] == pytest.approx(row[1], rel=1e-9)
    # reactor current = branch current; losses Σ I_h²·R
    assert rt.reactor_rms_a == pytest.approx(math.sqrt(float(np.sum(i**2))), rel=1e-14)
    assert rt.loss_w == pytest.approx(float(np.sum(i**2)) * d.r_ohm, rel=1e-14)
    assert rt.reactor_peak_a == pytest.approx(math.sqrt(2) * float(np.sum(i)), rel=1e-14)


def test_high_pass_reactor_and_resistor_share_the_current():
    d = highpass_filter(300, 480, 60, 12, 2, 3)
    rt = filter_rating(d, [11, 13], [20, 15], 400, 600)
    zl = 1j * d.x_l_ohm * np.array([1, 11, 13])
    i = np.array([d.i1_a, 20, 15])
    i_l = np.abs(i * d.r_ohm / (d.r_ohm + zl))  # current divider (Ohm's law)
    assert rt.reactor_rms_a == pytest.approx(math.sqrt(float(np.sum(i_l**2))), rel=1e-13)
    p_r = 3 * float(np.sum(np.abs(i * zl / (d.r_ohm + zl)) ** 2)) * d.r_ohm
    assert rt.loss_w == pytest.approx(p_r, rel=1e-13)


def test_three_phase_rating_ratios_equal_per_phase_ratios():
    three = filter_rating(tuned_filter(300, 480, 60, 4.7, 50, 3), [5, 7], [90, 25], 400, 600)
    one = filter_rating(
        tuned_filter(100, 480 / math.sqrt(3), 60, 4.7, 50, 1),
        [5, 7],
        [90, 25],
        400 / 3,
        600 / math.sqrt(3),
    )
    for a, b in zip(three.capacitor_rows, one.capacitor_rows, strict=True):
        assert a[3] == pytest.approx(b[3], rel=1e-12)


@pytest.mark.parametrize(
    ("table", "match"),
    [
        ([["order", "amps"], [1, 10]], "harmonics row 2, column order: 1"),
        ([["order", "amps"], [5, -1]], "harmonics row 2, column amps: -1"),
        ([["order", "amps"], [5, "#VALUE!"]], "harmonics row 2, column amps: '#VALUE!'"),
        ([["order", "amps"], [5, 2], [5, 3]], "harmonics row 3, column order: 5"),
        ([["h", "i"], [5, 2]], "order | amps"),
    ],
)
def test_rating_input_errors(table, match):
    with pytest.raises((InputError, TableError), match=match):
        read_order_amps(table)
    out = FUNCTIONS["CKT_FILTER_RATING"].call("tuned", 300, 480, 60, 3, 4.7, 50, table, 400, 600)
    assert out.startswith("ERROR: ") and "\n" not in out


# -------------------------------------------------------------------------- steps
def test_capacitor_steps_by_hand():
    # plain capacitor: h(k) = √(S_sc/(k·ΔQ)) (common practice) = √(600/k) for 30 MVA and
    # 50 kvar steps: 24.49, 17.32, 14.14, … Injected 5…25 (six-pulse), margin 0.6 orders:
    # k = 1 is 0.505 from 25, k = 2 is 0.32 from 17, k = 3 is 1.14 from 13 → 150 kvar
    res = capacitor_steps(50, 4, 480, 60, 3, 30, 1e4, [5, 7, 11, 13, 17, 19, 23, 25], 0.6)
    orders = [c[1][0] for c in res.candidates]
    assert orders == pytest.approx([math.sqrt(600 / k) for k in range(1, 5)], rel=1e-6)
    assert [c[4] for c in res.candidates] == [False, False, True, True]
    assert res.smallest_kvar == 150
    rel = capacitor_steps(50, 4, 480, 60, 3, 30, 1e4, [13, 17], 0.1, relative=True)
    assert rel.candidates[2][3] == pytest.approx((math.sqrt(200) - 13) / 13, rel=1e-6)


def test_detuned_steps_stay_below_their_tuning():
    res = capacitor_steps(50, 6, 480, 60, 3, 30, 10, [5, 7, 11], 0.3, 4.7, 50)
    orders = [c[1][0] for c in res.candidates]
    assert all(o < 4.7 for o in orders) and orders == sorted(orders, reverse=True)
    d1 = tuned_filter(50, 480, 60, 4.7, 50, 3)
    hp = math.sqrt(d1.x_c_ohm / (480**2 / 30e6 + d1.x_l_ohm))  # closed form, lossless
    assert orders[0] == pytest.approx(hp, rel=0.01)


def test_worksheet_step_function_and_no_pass():
    out = FUNCTIONS["CKT_CAP_STEP"].call(50, 3, 480, 60, 3, 30, 1e4, [[23, 25]], 10.0)
    assert out[0] == ["kvar", "resonance_order", "nearest_order", "distance", "result"]
    assert out[4] == ["smallest", "", "", "", ""]  # none passes: empty, never a number
    out = FUNCTIONS["CKT_CAP_STEP"].call(50, 3, 480, 60, 3, 30, 1e4, [[13, None]], "10%")
    assert out[4][1] == 50
    err = FUNCTIONS["CKT_CAP_STEP"].call(50, 3, 480, 60, 3, 30, 1e4, [["x"]], 0.5)
    assert err.startswith("ERROR: injected row 1, column 1: 'x'")
    err = FUNCTIONS["CKT_CAP_STEP"].call(50, 3, 480, 60, 3, 30, 1e4, [[5]], 0.5, 4.7)
    assert "q_factor" in err


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda: tuned_filter(300, 480, 60, 1.0, 50, 3), "tuned_order"),
        (lambda: tuned_filter(300, 480, 60, 4.7, 50, 2), "phases"),
        (lambda: tuned_filter(-1, 480, 60, 4.7, 50, 3), "kvar"),
        (lambda: highpass_filter(300, 480, 60, 12, 0, 3), "q_factor"),
        (lambda: filter_resonance(capacitor_bank(300, 480, 60, 3), 30, 0), "xr_ratio"),
    ],
)
def test_bad_filter_arguments(call, match):
    with pytest.raises(InputError, match=match):
        call()


def test_worksheet_sizing_functions_spill_their_tables():
    out = FUNCTIONS["CKT_TUNED_FILTER"].call(300, 480, 60, 3, 4.7, 50)
    names = [r[0] for r in out]
    assert names[:4] == ["quantity", "tuned_order", "tuned_hz", "q_factor"]
    assert {"c_farad", "l_henry", "r_ohm", "basis"} <= set(names)
    hp = FUNCTIONS["CKT_HIGHPASS_FILTER"].call(300, 480, 60, 3, 12, 1.5)
    assert dict((r[0], r[1]) for r in hp[1:])["q_factor"] == 1.5
    res = FUNCTIONS["CKT_FILTER_RESONANCE"].call("capacitor", 300, 480, 60, 3, 30, 1e4)
    assert res[1][0] == "parallel_order" and res[1][1] == pytest.approx(10.0, rel=1e-6)
    bad = FUNCTIONS["CKT_FILTER_RESONANCE"].call("notch", 300, 480, 60, 3, 30, 10)
    assert bad.startswith("ERROR: argument filter_type: 'notch'")


def test_command_line(tmp_path, capsys):
    from xlfuncs.cli import main

    cur = tmp_path / "filter_i.csv"
    cur.write_text("order,amps\n5,100\n7,20\n", encoding="utf-8")
    base = ["duty", "filter", "tuned", "--kvar", "300", "--bus-v", "480", "--f1", "60"]
    base += ["--phases", "3", "--order", "4.7", "--q", "50"]
    extra = ["--ssc-mva", "30", "--xr", "10", "--harmonics", str(cur), "--cap-kvar", "400"]
    extra += ["--cap-v", "600", "--c-tol-minus", "0", "--c-tol-plus", "0.1", "--l-tol", "0.03"]
    assert main(base + extra) == 0
    out = capsys.readouterr().out
    for title in ("sizing", "Parallel resonance", "Rating", "Tuning drift", "licensed engineer"):
        assert title in out
    assert main([*base, "--ssc-mva", "30"]) == 2  # the supply needs its X/R too
    captured = capsys.readouterr()
    assert captured.out == "" and "--xr" in captured.err  # nothing printed before the error
    step = ["duty", "cap-step", "--step-kvar", "50", "--max-steps", "4", "--bus-v", "480"]
    step += ["--f1", "60", "--phases", "3", "--ssc-mva", "30", "--xr", "1e4"]
    step += ["--injected", "5,7,11,13,17,19,23,25", "--margin", "0.6"]
    assert main(step) == 0
    lines = capsys.readouterr().out.splitlines()
    assert next(ln for ln in lines if ln.startswith("smallest")).split()[1] == "150"


def test_error_cells_are_refused_not_read_as_blank():
    # through xlwings an Excel error cell would arrive as None (a blank) unless read with
    # err_to_str; an optional argument must not fall back to its default because of it
    from xlwings_harness import COM_ERRORS, MISSING, call, xlwings_udfs

    with xlwings_udfs() as udf:
        ok = call(udf, "CKT_FILTER_DRIFT", 4.7, 50.0, 0.0, 0.1, 0.03, MISSING, MISSING)
        bad = call(udf, "CKT_FILTER_DRIFT", 4.7, 50.0, 0.0, 0.1, 0.03, COM_ERRORS["#N/A"], 30.0)
        inj = ((5.0, COM_ERRORS["#DIV/0!"]),)
        bad_range = call(udf, "CKT_CAP_STEP", 50.0, 3.0, 480.0, 60.0, 3.0, 30.0, 10.0, inj, 0.3)
    assert ok[1] == ["order_nominal", 4.7, "h"]
    cell = "the cell holds an Excel error"
    assert bad == [[f"ERROR: argument c_tempco_ppm: '#N/A' — {cell}"]]
    assert bad_range == [[f"ERROR: injected row 1, column 2: '#DIV/0!' — {cell}"]]


def test_docstring_examples_run():
    import doctest

    import xlfuncs.studies.filters as module

    res = doctest.testmod(module)
    assert res.attempted > 0 and res.failed == 0


# ------------------------------------------------------------ a filter item of a study
# Invented 480 V, 60 Hz bus (demo data): supply 20 MVA, X/R 10; a 300 kvar single-tuned
# filter item (4.7th, q 40); a 250 kW six-pulse converter with the ideal spectrum.
F_HEAD = ["name", "kind", "bus", "kv", "mva_sc", "x_r", "kvar", "tuned_order", "q_factor"]
F_HEAD += ["connection", "kw", "pf", "pulses"]


def _filter_plant(connection):
    rows = [
        {"name": "U1", "kind": "supply", "bus": "B1", "kv": 0.48, "mva_sc": 20.0, "x_r": 10.0},
        {"name": "F1", "kind": "filter", "bus": "B1", "kv": 0.48, "kvar": 300.0,
         "tuned_order": 4.7, "q_factor": 40.0, "connection": connection},
        {"name": "D1", "kind": "converter", "bus": "B1", "kv": 0.48, "kw": 250.0, "pf": 0.95,
         "pulses": 6},
    ]  # fmt: skip
    return [F_HEAD, *[[r.get(h) for h in F_HEAD] for r in rows]]


STUDY_OPTS = [["key", "value"], ["fundamental_hz", 60]]


def test_study_filter_rating_by_the_current_divider():
    """The converter's h-th current splits between supply and filter:
    I_f = I_h·Z_s/(Z_s + Z_f) (circuit theory), Z_f = R + j(h·X_L − X_C/h) from the item's
    ratings (X_C = kV²/kvar, X_L = X_C/h_t², R = X_C/(h_t·q)), Z_s = R_s + jh·X_s from
    kV²/MVA and X/R; at the fundamental I_f = V_bus/Z_f."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_filter_rating

    st = harmonic_study(_filter_plant("Y"), None, STUDY_OPTS)
    xc = 480**2 / 300e3
    xl, r = xc / 4.7**2, xc / 4.7 / 40
    zs_mag = 480**2 / 20e6
    rs = zs_mag / math.sqrt(101)
    h = st.orders.astype(float)
    zf = r + 1j * (h * xl - xc / h)
    zs = rs + 1j * h * 10 * rs
    inj = np.abs(st.branch_current("D1").phasors) / math.sqrt(2)  # the converter's own current
    i_f = inj * np.abs(zs / (zs + zf))
    i_f[0] = abs(st.bus_voltage("B1").phasors[0]) / math.sqrt(2) / abs(zf[0])
    rt = item_filter_rating(st, "F1")
    assert rt.reactor_rms_a == pytest.approx(math.sqrt(float(np.sum(i_f**2))), rel=1e-9)
    assert rt.reactor_i1_a == pytest.approx(i_f[0], rel=1e-9)
    assert rt.loss_w == pytest.approx(3 * r * float(np.sum(i_f**2)), rel=1e-9)
    assert rt.reactor_rms_v == pytest.approx(
        math.sqrt(float(np.sum((i_f * xl * h) ** 2))), rel=1e-9
    )
    rows = {row[0]: row for row in rt.capacitor_rows}
    v_c = math.sqrt(float(np.sum((i_f * xc / h) ** 2)))  # V_C,h = I_h·X_C/h, one star unit
    assert rows["rms voltage"][1] == pytest.approx(v_c, rel=1e-9)
    assert rows["rms voltage"][2] == pytest.approx(480 / math.sqrt(3), rel=1e-12)
    assert rows["kvar"][2] == pytest.approx(100.0, rel=1e-12)  # kvar/3 per unit
    # the same duty as the study's own IEEE 18 check of the item
    duty = FUNCTIONS["CKT_ITEM_CAPDUTY"].call(_filter_plant("Y"), None, "F1", STUDY_OPTS)
    for mine, theirs in zip(rt.capacitor_rows, duty[1:], strict=True):
        assert mine[3] == pytest.approx(theirs[3], rel=1e-12)
    assert rt.design.tuned_order == 4.7 and rt.design.x_c_ohm == pytest.approx(xc, rel=1e-15)


def test_study_delta_filter_is_its_star_equivalent_per_leg():
    """A delta leg has three times the star equivalent's impedance and carries 1/√3 of the
    line current (delta-star equivalence): reactor current /√3, reactor voltage ×√3, the
    same losses; the network (star equivalent) is the same."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_filter_rating

    y = item_filter_rating(harmonic_study(_filter_plant("Y"), None, STUDY_OPTS), "F1")
    d = item_filter_rating(harmonic_study(_filter_plant("D"), None, STUDY_OPTS), "F1")
    assert d.reactor_rms_a == pytest.approx(y.reactor_rms_a / math.sqrt(3), rel=1e-12)
    assert d.reactor_rms_v == pytest.approx(y.reactor_rms_v * math.sqrt(3), rel=1e-12)
    assert d.loss_w == pytest.approx(y.loss_w, rel=1e-12)
    assert "line-to-line" in d.basis and "(D," in d.basis


def test_study_filter_rating_worksheet_function_and_refusals():
    out = FUNCTIONS["CKT_ITEM_FILTER_RATING"].call(_filter_plant("Y"), None, "F1", STUDY_OPTS)
    assert out[0] == ["quantity", "value", "rated", "ratio", "limit", "result"]
    assert [r[0] for r in out[1:5]] == [
        "capacitor rms voltage", "capacitor peak voltage", "capacitor rms current",
        "capacitor kvar",
    ]  # fmt: skip
    assert out[-1][0] == "basis" and "licensed engineer" in out[-1][1]
    bad = FUNCTIONS["CKT_ITEM_FILTER_RATING"].call(_filter_plant("Y"), None, "U1", STUDY_OPTS)
    assert bad == "ERROR: argument item: 'U1' — 'U1' is a supply; expected a filter"


@settings(max_examples=12, deadline=None)
@given(
    st.floats(2.0, 50.0),  # short-circuit MVA
    st.floats(2.0, 20.0),  # X/R
    st.floats(100.0, 600.0),  # filter kvar
    st.floats(2.5, 12.0),  # tuned order
    st.floats(10.0, 100.0),  # q
    st.floats(50.0, 400.0),  # converter kW
)
def test_study_filter_losses_are_its_ieee1459_active_power(ssc, xr, kvar, h_t, q, kw):
    """Power balance of the filter branch: the active power IEEE 1459 finds at its
    terminals (every order) is what its R dissipates, 3·Σ I_h²·R."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_filter_rating, item_powers

    eq = _filter_plant("Y")
    eq[1][F_HEAD.index("mva_sc")], eq[1][F_HEAD.index("x_r")] = ssc, xr
    eq[2][F_HEAD.index("kvar")], eq[2][F_HEAD.index("tuned_order")] = kvar, h_t
    eq[2][F_HEAD.index("q_factor")], eq[3][F_HEAD.index("kw")] = q, kw
    st_ = harmonic_study(eq, None, STUDY_OPTS)
    absorbed = item_powers(st_, "F1").P
    assert absorbed == pytest.approx(item_filter_rating(st_, "F1").loss_w, rel=1e-9)


def test_a_percentage_typed_as_a_fraction_is_refused():
    # capacitor tolerances are fractions well below 1 (e.g. −5 %/+10 %: common practice);
    # `--c-tol-plus 10` means 10 %, not +1000 %: refused with the hint, never computed
    with pytest.raises(InputError, match=r"argument c_tol_plus: 10 — .*10 % is 0.10"):
        tuning_drift(4.7, 50, 0.0, 10, 0.03)
    assert tuning_drift(4.7, 50, 0.0, 0.10, 0.03).low < 4.7
