"""Transformer derating (IEEE Std C57.110) and K-factor (UL 1561/1562).

The standards could not be read: the formulas are from memory (see the module), and the
check values here are their closed forms evaluated in sympy with exact rationals — not a
worked example of the standard.
"""

import math

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from xlfuncs.errors import InputError, TableError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import (
    harmonic_loss_factor,
    k_factor,
    read_harmonic_spectrum,
    transformer_derating,
)

SIX_PULSE = [5, 7, 11, 13, 17, 19, 23, 25]  # ideal six-pulse orders 6k ± 1 (common practice)


def _sympy_factors(orders, pct, p_ec, p_osl):
    """F_HL, F_HL-STR, K, I_max, P_LL of the closed forms, in exact arithmetic."""
    h = [sp.nsimplify(x) for x in orders]
    r = [sp.nsimplify(x) / 100 for x in pct]  # I_h / I_1
    den = sum(x**2 for x in r)
    f_hl = sum(x**2 * hh**2 for x, hh in zip(r, h, strict=True)) / den
    f_str = sum(x**2 * hh ** sp.Rational(4, 5) for x, hh in zip(r, h, strict=True)) / den
    i_pu = [x / sp.sqrt(den) for x in r]  # per unit of the RMS current
    k = sum(x**2 * hh**2 for x, hh in zip(i_pu, h, strict=True))
    pec, posl = sp.nsimplify(p_ec), sp.nsimplify(p_osl)
    i_max = sp.sqrt((1 + pec) / (1 + f_hl * pec))
    p_ll = 1 + f_hl * pec + f_str * posl
    return [float(sp.N(x, 30)) for x in (f_hl, f_str, k, i_max, p_ll)]


@pytest.mark.parametrize(
    ("orders", "pct"),
    [
        ([1, 5], [100, 20]),
        ([1, 5, 7, 11, 13], [100, 20, 14.3, 9.1, 7.7]),
        ([1, *SIX_PULSE], [100, *[100 / h for h in SIX_PULSE]]),  # ideal I_h = I_1/h
        ([1, 3, 5, 2.5], [100, 80, 60, 3]),  # triplens and an interharmonic
    ],
)
def test_factors_against_closed_forms(orders, pct):
    d = transformer_derating(orders, pct, 0.12, 0.35)
    f_hl, f_str, k, i_max, p_ll = _sympy_factors(orders, pct, 0.12, 0.35)
    assert pytest.approx(f_hl, rel=1e-13) == d.F_HL
    assert pytest.approx(f_str, rel=1e-13) == d.F_HL_STR
    assert d.K_factor == pytest.approx(k, rel=1e-13)
    assert d.I_max_pu == pytest.approx(i_max, rel=1e-13)
    assert d.p_ll_pu == pytest.approx(p_ll, rel=1e-13)
    assert d.i_equal_load_loss_pu == pytest.approx(math.sqrt((1 + 0.12 + 0.35) / p_ll), rel=1e-13)


def test_ideal_six_pulse_loss_factor_by_hand():
    # I_h = I_1/h: Σ (I_h/I_1)²·h² = 9 terms of 1, Σ (I_h/I_1)² = 1 + Σ 1/h²
    exact = 9 / (1 + sum(sp.Rational(1, h * h) for h in SIX_PULSE))
    assert harmonic_loss_factor([1, *SIX_PULSE], [100, *[100 / h for h in SIX_PULSE]]) == (
        pytest.approx(float(exact), rel=1e-14)
    )


def test_sinusoidal_load_needs_no_derating():
    d = transformer_derating([1], [100], 0.3, 0.1)
    assert (d.F_HL, d.F_HL_STR, d.K_factor, d.I_max_pu) == (1.0, 1.0, 1.0, 1.0)
    assert d.i_equal_load_loss_pu == 1.0 and d.i_rms_over_i1 == 1.0


def test_zero_eddy_loss_keeps_full_current():
    assert transformer_derating([1, 5, 7], [100, 30, 20], 0.0).I_max_pu == 1.0


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(st.floats(1.01, 49), st.floats(0, 200)), min_size=0, max_size=8),
    st.floats(0.0, 2.0),
)
def test_properties(harm, p_ec):
    orders = [1.0] + [h for h, _ in harm]
    if len({round(h, 9) for h in orders}) != len(orders):
        return
    pct = [100.0] + [p for _, p in harm]
    d = transformer_derating(orders, pct, p_ec)
    # h ≥ 1 in every term: F_HL ≥ F_HL-STR ≥ 1; K equals F_HL when normalised to RMS
    assert d.F_HL >= d.F_HL_STR - 1e-12 and d.F_HL_STR >= 1 - 1e-12
    assert d.K_factor == pytest.approx(d.F_HL, rel=1e-12)
    assert 0 < d.I_max_pu <= 1 + 1e-15
    # more eddy loss never allows more current
    assert transformer_derating(orders, pct, p_ec + 0.1).I_max_pu <= d.I_max_pu + 1e-15


def test_k_factor_with_per_unit_spectrum():
    # K = Σ I_h(pu)² h² with Σ I_h(pu)² = 1 (UL 1561/1562 convention, from memory):
    # a current with 0.8 pu fundamental and 0.6 pu fifth: K = 0.64 + 0.36·25 = 9.64
    assert k_factor([1, 5], [100, 75]) == pytest.approx(9.64, rel=1e-14)


def test_load_loss_rows_need_the_stray_loss():
    rows = dict(transformer_derating([1, 5], [100, 20], 0.1).rows()[1:])
    assert rows["P_LL_pu"] == "" and "Give p_osl_pu" in rows["basis"]
    assert "winding eddy loss only" in rows["basis"]  # which losses I_max counts


# ----------------------------------------------------------------- worksheet + input
SPECTRUM = [["order", "pct"], [1, 100], [5, 20.0], [7, 14.3], [None, None], [11, 9.1]]


def test_worksheet_function_rows():
    out = FUNCTIONS["CKT_XFMR_DERATE"].call(SPECTRUM, 0.1, 0.2)
    assert out[0] == ["quantity", "value"]
    assert [r[0] for r in out[1:5]] == ["F_HL", "F_HL_STR", "K_factor", "I_max_pu"]
    ref = transformer_derating([1, 5, 7, 11], [100, 20, 14.3, 9.1], 0.1, 0.2)
    assert out[1][1] == ref.F_HL and out[4][1] == ref.I_max_pu
    assert all(len(r) == 2 for r in out)


@pytest.mark.parametrize(
    ("table", "match"),
    [
        ([["h", "x"], [1, 100]], "header row 1 must name the columns order | pct"),
        ([["order", "pct"], [5, 20]], "no row of order 1"),
        ([["order", "pct"], [1, 90]], "spectrum row 2, column pct: 90 — the order-1 row"),
        ([["order", "pct"], [1, 100], [5, "#N/A"]], "spectrum row 3, column pct: '#N/A'"),
        ([["order", "pct"], [1, 100], [5, -1]], "spectrum row 3, column pct: -1"),
        ([["order", "pct"], [1, 100], [0, 5]], "spectrum row 3, column order: 0 — expected"),
        ([["order", "pct"], [1, 100], [5, 2], [5, 3]], "row 4, column order: 5 — order 5"),
    ],
)
def test_bad_spectrum_is_refused_with_its_place(table, match):
    with pytest.raises((InputError, TableError), match=match):
        read_harmonic_spectrum(table)
    out = FUNCTIONS["CKT_XFMR_DERATE"].call(table, 0.1)
    assert out.startswith("ERROR: ") and "\n" not in out


@pytest.mark.parametrize("bad", [-0.1, float("nan"), "x", True])
def test_bad_loss_split_is_refused(bad):
    with pytest.raises(InputError, match="p_ec_pu"):
        transformer_derating(np.array([1.0, 5.0]), np.array([100.0, 20.0]), bad)


def test_command_line(tmp_path, capsys):
    from xlfuncs.cli import main

    spec = tmp_path / "load.csv"
    spec.write_text("order,pct\n1,100\n5,20\n", encoding="utf-8")
    assert main(["duty", "xfmr", str(spec), "--p-ec", "0.1", "--p-osl", "0.2"]) == 0
    out = capsys.readouterr().out
    rows = {ln.split()[0]: ln.split()[1:] for ln in out.splitlines()[3:] if ln.strip()}
    assert float(rows["F_HL"][0]) == pytest.approx(2 / 1.04, rel=1e-5)
    assert "licensed engineer" in out  # the caution is printed
    spec.write_text("order,pct\n1,100\n5,x\n", encoding="utf-8")
    assert main(["duty", "xfmr", str(spec), "--p-ec", "0.1"]) == 2
    err = capsys.readouterr().err.strip()
    assert (
        err
        == "xlfuncs: error: spectrum row 3, column pct: 'x' — expected a percentage of I1 (a number ≥ 0)"
    )


def test_through_the_xlwings_call_path():
    # Excel hands ranges over as tuples of rows; an error cell arrives as its COM code,
    # which xlwings turns into its text; an omitted optional argument as MISSING
    from xlwings_harness import COM_ERRORS, MISSING, call, xlwings_udfs

    spec = (("order", "pct"), (1.0, 100.0), (5.0, 20.0), (None, None))
    with xlwings_udfs() as udf:
        out = call(udf, "CKT_XFMR_DERATE", spec, 0.1, MISSING)
        assert out[1] == ["F_HL", pytest.approx(2 / 1.04, rel=1e-14)]
        assert out[5] == ["P_LL_pu", ""]
        bad = (*spec[:2], (5.0, COM_ERRORS["#N/A"]))
        err = call(udf, "CKT_XFMR_DERATE", bad, 0.1)
    cell = "the cell holds an Excel error"
    assert err == [[f"ERROR: spectrum row 3, column pct: '#N/A' — {cell}"]]


def test_docstring_examples_run():
    import doctest

    import xlfuncs.studies.transformer as module

    res = doctest.testmod(module)
    assert res.attempted > 0 and res.failed == 0


# ------------------------------------------------------------ a transformer of a study
# Invented plant (demo data): 13.8 kV supply of 250 MVA, a 2000 kVA 13.8/0.48 kV transformer,
# and on its LV bus only a six-pulse converter: every harmonic current of the converter flows
# through the transformer (Kirchhoff's current law), so the LV line current is the ideal
# six-pulse current, I_h = I_1/h at h = 6k ± 1 (its Fourier series, common practice).
XF_HEAD = ["name", "kind", "bus", "bus_to", "kv", "mva_sc", "x_r", "mva_sc_1ph", "kva"]
XF_HEAD += ["kv_hv", "kv_lv", "z_pct", "connection", "kw", "pf", "pulses", "spectrum"]


def _plant(group, converter_extra=None):
    conv = {"name": "D1", "kind": "converter", "bus": "LV", "kv": 0.48, "kw": 800.0, "pf": 0.95}
    conv |= converter_extra or {"pulses": 6}
    rows = [
        {"name": "U1", "kind": "supply", "bus": "PCC", "kv": 13.8, "mva_sc": 250.0, "x_r": 12.0},
        {"name": "T1", "kind": "transformer", "bus": "PCC", "bus_to": "LV", "kva": 2000.0,
         "kv_hv": 13.8, "kv_lv": 0.48, "z_pct": 5.75, "x_r": 8.0, "connection": group},
        conv,
    ]  # fmt: skip
    return [XF_HEAD, *[[r.get(h) for h in XF_HEAD] for r in rows]]


OPTS = [["key", "value"], ["fundamental_hz", 60], ["max_order", 50]]


@pytest.mark.parametrize("group", ["Dyn11", "Yyn0", "YNd1"])
def test_study_transformer_derating_closed_form(group):
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_derating

    st = harmonic_study(_plant(group), None, OPTS)
    h = np.array([6 * k + s for k in range(1, 9) for s in (-1, 1) if 6 * k + s <= 50], float)
    f_hl = (1 + h.size) / (1 + float(np.sum(1 / h**2)))  # Σ(1/h)²h² / Σ(1/h)², h = 1 included
    d = item_derating(st, "T1", 0.1)
    got = d.derating
    f_hl_, k_, i_max = got.F_HL, got.K_factor, got.I_max_pu
    assert f_hl_ == pytest.approx(f_hl, rel=1e-9)
    assert k_ == pytest.approx(f_hl, rel=1e-9)
    assert i_max == pytest.approx(math.sqrt(1.1 / (1 + 0.1 * f_hl)), rel=1e-9)
    # the winding end: the star winding's (LV unless a delta faces a star HV)
    assert d.end == ("bus" if group == "YNd1" else "bus_to")
    # the load against the rating: I_rms = I_1·√(1 + Σ 1/h²), I_rated = kVA/(√3·kV)
    i1 = abs(st.branch_current("D1").phasors[0]) / math.sqrt(2)
    kv = 13.8 if d.end == "bus" else 0.48
    ratio = (0.48 / 13.8) if d.end == "bus" else 1.0  # line currents scale with the ratio
    i_rms = i1 * ratio * math.sqrt(1 + float(np.sum(1 / h**2)))
    assert d.i_rms_a == pytest.approx(i_rms, rel=1e-9)
    assert d.i_rated_a == pytest.approx(2000 / (math.sqrt(3) * kv), rel=1e-12)
    assert d.load_over_i_max == pytest.approx(d.load_pu / d.derating.I_max_pu, rel=1e-15)
    # in per unit both windings carry the same spectrum (no zero sequence here)
    other = item_derating(st, "T1", 0.1, end="bus" if d.end == "bus_to" else "bus_to")
    f_other = other.derating.F_HL
    assert f_other == pytest.approx(f_hl, rel=1e-9)


def test_study_transformer_with_triplens_uses_the_star_winding():
    """A grounded-star converter with a 3rd harmonic behind a Dyn11: the triplen current
    circulates in the delta, so the HV line current lacks it and is refused as a winding
    current; the LV star end gives F_HL of the injected spectrum (closed form)."""
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_derating

    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S", 3, 50, 0], ["S", 5, 20, 0]]
    eq = _plant("Dyn11", {"spectrum": "S", "connection": "YN"})
    eq[0].append("note")
    for r in eq[1:]:
        r.append(None)
    st = harmonic_study(eq, spectra, OPTS)
    d = item_derating(st, "T1", 0.08, 0.2)
    r = np.array([1.0, 0.5, 0.2])
    h = np.array([1.0, 3.0, 5.0])
    f_hl = d.derating.F_HL
    assert f_hl == pytest.approx(float(np.sum(r**2 * h**2) / np.sum(r**2)), rel=1e-9)
    with pytest.raises(InputError, match="delta"):
        item_derating(st, "T1", 0.08, end="bus")


def test_study_transformer_worksheet_function_and_refusals():
    from xlfuncs.power import harmonic_study
    from xlfuncs.studies import item_derating

    eq = _plant("Dyn11")
    out = FUNCTIONS["CKT_ITEM_XFMR_DERATE"].call(eq, None, "T1", 0.1, OPTS, 0.2)
    ref = item_derating(harmonic_study(eq, None, OPTS), "T1", 0.1, 0.2).rows()
    assert [r[0] for r in out[:5]] == ["quantity", "F_HL", "F_HL_STR", "K_factor", "I_max_pu"]
    assert [r[0] for r in out[-5:]] == [
        "I_rms_a",
        "I_rated_a",
        "load_pu",
        "load_over_I_max",
        "basis",
    ]
    for a, b in zip(out[1:-1], ref[1:-1], strict=True):
        assert a[1] == pytest.approx(b[1], rel=1e-12) if b[1] != "" else a[1] == ""
    bad = FUNCTIONS["CKT_ITEM_XFMR_DERATE"].call(eq, None, "D1", 0.1, OPTS)
    assert bad == "ERROR: argument item: 'D1' — 'D1' is a converter; expected a transformer"
    bad = FUNCTIONS["CKT_ITEM_XFMR_DERATE"].call(eq, None, "T1", "#N/A", OPTS)
    assert bad.startswith("ERROR: argument p_ec_pu: '#N/A'")


def test_study_derating_through_the_xlwings_call_path():
    """An Excel error in an optional argument is refused, never read as an omitted one."""
    from xlwings_harness import COM_ERRORS, MISSING, call, xlwings_udfs

    eq = tuple(tuple(c for c in r) for r in _plant("Dyn11"))
    opts = (("fundamental_hz", 60.0),)
    with xlwings_udfs() as udf:
        ok = call(udf, "CKT_ITEM_XFMR_DERATE", eq, MISSING, "T1", 0.1, opts, MISSING, MISSING)
        bad = call(udf, "CKT_ITEM_XFMR_DERATE", eq, MISSING, "T1", 0.1, opts, COM_ERRORS["#N/A"])
        end = call(
            udf, "CKT_ITEM_XFMR_DERATE", eq, MISSING, "T1", 0.1, opts, MISSING, COM_ERRORS["#REF!"]
        )
    assert ok[1][0] == "F_HL" and isinstance(ok[1][1], float)
    assert bad == [["ERROR: argument p_osl_pu: '#N/A' — the cell holds an Excel error"]]
    assert end[0][0].startswith("ERROR: argument winding_end: '#REF!'")
