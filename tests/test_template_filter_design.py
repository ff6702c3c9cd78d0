"""The single-tuned filter template against closed forms of circuit theory, its scenarios
and its verdict.

Check values: the reactive power of R + jX_L − jX_C at V (Q = V²·X/(R² + X²), circuit
theory); the tuning h_n/√(c·l) of an L-C pair; the lossless parallel resonance
√(X_C/(X_s + X_L)) of a filter with its supply (common practice); the short-circuit
impedance |Z_s| = V²/S_sc split by X/R (definition of the short-circuit power); a current
source into the supply impedance without the filter (V_h = I_h·|R_s + jhX_s|, Ohm's law);
IEEE Std 18-2002 continuous limits; IEEE Std 519-2014 Table 1 (V ≤ 1 kV: 5 %, 8 %).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import openpyxl
import pytest

from xlfuncs.templates import TEMPLATES

BOOK = Path(__file__).parent.parent / "workbook_templates" / "filter_design.xlsx"
T = TEMPLATES["filter_design.xlsx"]


@pytest.fixture(scope="module")
def wb():
    return openpyxl.load_workbook(BOOK, data_only=True)


@pytest.fixture(scope="module")
def n(wb):
    out = {}
    for name, dn in wb.defined_names.items():
        ((sheet, ref),) = dn.destinations
        if ":" not in ref:
            out[name] = wb[sheet][ref.replace("$", "")].value
    return out


def _table(ws, first_header: str, width: int) -> list[list]:
    """Rows of the table whose header row starts with ``first_header`` (until a blank)."""
    rows = list(ws.iter_rows(values_only=True))
    k = next(i for i, r in enumerate(rows) if r[0] == first_header and r[1] is not None)
    out = []
    for r in rows[k + 1 :]:
        if r[0] is None:
            break
        out.append(list(r[:width]))
    return out


def _checks(wb) -> dict[str, list]:
    ws = wb["Checks"]
    labels = {c.label for c in T.checks}
    return {r[0]: [r[1], r[3], r[5]] for r in ws.iter_rows(values_only=True) if r[0] in labels}


def test_sizing_delivers_the_kvar_and_tunes_where_asked(n):
    v, f1, h, q = n["v_ll"], n["f_hz"], n["tuned_order"], n["q_factor"]
    assert h == pytest.approx(n["h_serve"] * (1 - n["detune_pct"] / 100), rel=1e-15)
    w = 2 * math.pi * f1
    xc = 1 / (w * n["c_uf"] * 1e-6)
    xl = w * n["l_mh"] * 1e-3
    r = n["r_mohm"] * 1e-3
    # Q = V²·(X_C − X_L)/(R² + (X_C − X_L)²) at the fundamental (circuit theory)
    assert v**2 * (xc - xl) / (r**2 + (xc - xl) ** 2) / 1e3 == pytest.approx(
        n["filter_kvar"], rel=1e-9
    )
    assert math.sqrt(xc / xl) == pytest.approx(h, rel=1e-12)  # X_L = X_C/h²
    assert math.sqrt(xc * xl) / r == pytest.approx(q, rel=1e-12)  # Q = X_n/R
    # the capacitor's voltage is X_C·I = X_C/|Z|·V
    assert n["v_cap_ll"] == pytest.approx(v * xc / math.hypot(r, xc - xl), rel=1e-9)


def test_drift_and_resonance_closed_forms(n):
    temp = abs(n["c_tempco_ppm"]) * 1e-6 * n["dt_k"]
    c_lo, l_lo = (1 - n["c_tol_minus"]) * (1 - temp), 1 - n["l_tol"]
    assert n["c_lo"] == pytest.approx(c_lo, rel=1e-15)
    assert n["tuned_high"] == pytest.approx(n["tuned_order"] / math.sqrt(c_lo * l_lo), rel=1e-12)
    w = 2 * math.pi * n["f_hz"]
    xc, xl = 1 / (w * n["c_uf"] * 1e-6), w * n["l_mh"] * 1e-3
    z = n["v_ll"] ** 2 / (n["ssc_mva"] * 1e6)
    xs = z * n["xr_src"] / math.sqrt(1 + n["xr_src"] ** 2)
    lossless = math.sqrt(xc / (xs + xl))
    assert n["par_order"] == pytest.approx(lossless, rel=0.01)  # damping moves it < 1 %
    assert n["net_par_order"] == pytest.approx(n["par_order"], rel=1e-6)
    assert n["series_order"] == pytest.approx(n["tuned_order"], rel=0.01)
    nearest = min(abs(n["par_order"] - h) / h for h in (5, 7, 11, 13, 17, 19, 23, 25))
    assert n["par_dist_pct"] == pytest.approx(100 * nearest, rel=1e-12)


def test_before_the_filter_the_drives_see_the_supply_alone(wb, n):
    """Without the filter: V_h = I_h·|R_s + jh·X_s| at every injected order and V_1 is the
    supply voltage (nothing draws fundamental current)."""
    z = n["v_ll"] ** 2 / (n["ssc_mva"] * 1e6)
    xr = n["xr_src"]
    rs, xs = z / math.sqrt(1 + xr * xr), z * xr / math.sqrt(1 + xr * xr)
    orders = np.array([5, 7, 11, 13, 17, 19, 23, 25], float)
    pct = np.array([30.0, 12.0, 7.0, 5.0, 3.5, 2.8, 2.0, 1.8])
    v_h = n["drive_i1"] * pct / 100 * np.abs(rs + 1j * orders * xs)
    v_1 = n["v_ll"] / math.sqrt(3)
    assert n["thd_before"] == pytest.approx(100 * math.sqrt(float(np.sum(v_h**2))) / v_1, rel=1e-9)
    harm = _table(wb["Results"], "order", 8)
    assert [r[0] for r in harm] == list(orders)
    assert [r[4] for r in harm] == pytest.approx(list(100 * v_h / v_1), rel=1e-9)
    assert [r[7] for r in harm] == pytest.approx(list(np.abs(rs + 1j * orders * xs)), rel=1e-9)
    # IEEE Std 519-2014 Table 1, V ≤ 1 kV: 5 % individual; without the filter the 5th
    # exceeds it, with the filter every order and the THD are within the limits
    assert harm[0][4] > 5.0 and all(r[3] < r[5] == 5.0 for r in harm)
    assert n["thd_after"] < 8.0


def test_rating_by_hand(wb, n):
    """Capacitor RMS current = √(I₁² + Σ I_h²), I₁ = V_max/√3/|Z(f₁)| of the filter as
    built, I_h from the harmonic table; nominal current = Q/(√3·V) of the nameplate."""
    w = 2 * math.pi * n["f_hz"]
    xc, xl = 1 / (w * n["c_uf"] * 1e-6), w * n["l_mh"] * 1e-3
    r = n["r_mohm"] * 1e-3
    i1 = n["v_ll"] * n["v_max_pu"] / math.sqrt(3) / math.hypot(r, xc - xl)
    amps = np.array([row[2] for row in _table(wb["Results"], "order", 8)])
    i_rms = math.sqrt(i1**2 + float(np.sum(amps**2)))
    i_nom = n["cap_kvar"] * 1e3 / (math.sqrt(3) * n["cap_v"])
    assert n["cap_i_ratio"] == pytest.approx(i_rms / i_nom, rel=1e-9)
    assert n["reactor_i"] == pytest.approx(i_rms, rel=1e-9)  # series branch: one current
    assert n["loss_kw"] == pytest.approx(3 * r * i_rms**2 / 1e3, rel=1e-9)
    chk = _checks(wb)
    limits = [chk[c.label][1] for c in T.checks if c.label.startswith("Capacitor")]
    assert limits == [1.1, 1.2, 1.35, 1.35]  # IEEE Std 18-2002 continuous limits


def test_default_case_passes_and_every_scenario_passes(wb, n):
    assert n["verdict"] == "PASS"
    assert {v[2] for v in _checks(wb).values()} == {"PASS"}
    ws = wb["Scenarios"]
    rows = list(ws.iter_rows(values_only=True))
    head = next(i for i, r in enumerate(rows) if r[0] == "check")
    got = {(rows[head + 1][c], rows[head + 2][c]) for c in range(2, 8)}
    assert got == {
        (cf, s) for cf in (n["c_lo"], 1, n["c_hi"]) for s in (n["ssc_min_mva"], n["ssc_mva"])
    }
    verdicts = next(r for r in rows if r[0] == "verdict per scenario")
    assert set(verdicts[2:8]) == {"PASS"}
    # the column with the book's own inputs equals the Checks sheet
    col = next(
        c for c in range(2, 8) if rows[head + 1][c] == 1 and rows[head + 2][c] == n["ssc_mva"]
    )
    chk = _checks(wb)
    for i, c in enumerate(T.checks):
        assert rows[head + 3 + i][col] == pytest.approx(chk[c.label][0], rel=1e-9), c.label
    # the capacitance that decides: the highest gives the largest capacitor and reactor
    # currents, the lowest (with the strongest supply) the smallest resonance distance
    worst = {rows[head + 3 + i][0]: rows[head + 3 + i][9] for i in range(len(T.checks))}
    highest_weak = next(
        f"S{c - 1}" for c in range(2, 8)
        if rows[head + 1][c] == n["c_hi"] and rows[head + 2][c] == n["ssc_min_mva"]
    )  # fmt: skip
    assert worst["Capacitor RMS current / nominal"] == highest_weak
    assert worst["Reactor RMS current / rated"] == highest_weak


def test_a_filter_tuned_onto_the_harmonic_fails_honestly(tmp_path):
    """Tuned only 1 % below the 5th, the capacitance tolerance moves it onto the 5th: the
    drift check reads FAIL (and the verdict FAIL), never PASS."""
    from xlfuncs.workbook.recalc import PreparedBook

    pb = PreparedBook(BOOK)
    sheet, r, c = pb.input_cell("detune_pct")
    pb.engine.set_value(sheet, r, c, 1)
    pb.engine.evaluate()
    assert pb.read("tuned_high") > 5 and pb.read("verdict") == "FAIL"
