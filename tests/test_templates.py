"""The committed calculation templates: current, error-free, spilling, and right.

Reference values come from outside the project: IEEE Std 519-2014 Tables 1-2, IEEE Std 18-2002
continuous limits, and closed forms of circuit theory or common practice named beside each
check.
"""

from __future__ import annotations

import math
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest

from xlfuncs.templates import CAUTION, DEMO, TEMPLATES, build_all
from xlfuncs.workbook import recalc

ROOT = Path(__file__).parent.parent
TPL = ROOT / "workbook_templates"


def _values(path: Path) -> dict[tuple[str, str], object]:
    wb = openpyxl.load_workbook(path, data_only=True)
    return {
        (ws.title, c.coordinate): c.value
        for ws in wb
        for row in ws.iter_rows()
        for c in row
        if c.value is not None
    }


def _formulas(path: Path) -> dict[tuple[str, str], object]:
    """Formula text of every formula cell (compared exactly; cached numbers, including the
    plain values of spilled cells, are compared by ``_values`` with a tolerance)."""
    wb = openpyxl.load_workbook(path)
    out: dict[tuple[str, str], object] = {}
    for ws in wb:
        for row in ws.iter_rows():
            for c in row:
                v = c.value.text if hasattr(c.value, "text") else c.value
                if isinstance(v, str) and v.startswith("="):
                    out[(ws.title, c.coordinate)] = v
    return out


@pytest.fixture(scope="module")
def rebuilt(tmp_path_factory):
    return build_all(tmp_path_factory.mktemp("templates"))


def test_committed_templates_are_current(rebuilt):
    for fresh in rebuilt:
        committed = TPL / fresh.name
        assert committed.exists(), f"run `make templates` and commit {committed}"
        zc, zf = zipfile.ZipFile(committed), zipfile.ZipFile(fresh)
        assert sorted(zc.namelist()) == sorted(zf.namelist())
        for name in zc.namelist():
            if not name.startswith("xl/worksheets/sheet"):
                assert zc.read(name) == zf.read(name), (
                    f"{committed.name}:{name} is stale (make templates)"
                )
        assert _formulas(committed) == _formulas(fresh)
        vc, vf = _values(committed), _values(fresh)
        assert vc.keys() == vf.keys()
        # cached numbers differ in the last bits between BLAS kernels (CPU-dependent):
        # relative 1e-9 is far above that round-off and far below any change of meaning
        for k, v in vc.items():
            if isinstance(v, float):
                assert vf[k] == pytest.approx(v, rel=1e-9, abs=1e-12), k
            else:
                assert vf[k] == v, k


@pytest.mark.parametrize("name", sorted(TEMPLATES))
def test_template_recalculates_without_error_values(name, tmp_path):
    rep = recalc(TPL / name, tmp_path / name)
    assert rep.errors == []
    bad = [
        (k, v)
        for k, v in _values(tmp_path / name).items()
        if isinstance(v, str)
        and (v.startswith("ERROR:") or re.fullmatch(r"#[A-Z/0!?_]+[!?A]?", v))
    ]
    assert bad == []
    assert rep.spills >= 3


@pytest.mark.parametrize("name", sorted(TEMPLATES))
def test_spilling_formulas_carry_dynamic_array_metadata(name):
    z = zipfile.ZipFile(TPL / name)
    assert "xl/metadata.xml" in z.namelist()
    anchors = 0
    for part in z.namelist():
        if part.startswith("xl/worksheets/sheet"):
            xml = z.read(part).decode()
            for m in re.finditer(
                r'<c r="[A-Z]+\d+"([^>]*)><f t="array" ref="([A-Z0-9:]+)">(CKT_\w+)', xml
            ):
                assert 'cm="1"' in m.group(1), m.group(0)
                anchors += 1
    assert anchors >= 3


@pytest.mark.parametrize("name", sorted(TEMPLATES))
def test_sheets_carry_demo_marking_and_cautions(name):
    wb = openpyxl.load_workbook(TPL / name)
    assert wb.sheetnames == ["Inputs", "Network", "Results", "Checks", "Notes", "Data"]
    for ws in wb:
        assert ws["A2"].value == DEMO
    for title in ("Results", "Checks", "Notes"):
        assert wb[title]["A3"].value == CAUTION
    assert len(wb["Network"].tables) == 2  # parts and sources as Excel Tables


def _named(path: Path) -> dict[str, object]:
    wb = openpyxl.load_workbook(path, data_only=True)
    out = {}
    for name, dn in wb.defined_names.items():
        ((sheet, ref),) = dn.destinations
        cell = wb[sheet][ref.replace("$", "")] if ":" not in ref else None
        if cell is not None:
            out[name] = cell.value
    return out


def _checks(path: Path) -> dict[str, list]:
    ws = openpyxl.load_workbook(path, data_only=True)["Checks"]
    return {
        ws.cell(r, 1).value: [ws.cell(r, c).value for c in range(2, 6)]
        for r in range(6, 30)
        if ws.cell(r, 1).value
    }


def test_plant_study_against_standards_and_rule_of_thumb():
    p = TPL / "plant_harmonics.xlsx"
    n, chk = _named(p), _checks(p)
    # IEEE Std 519-2014 Table 1, V ≤ 1.0 kV: individual 5.0 %, THD 8.0 %
    assert (
        chk["Bus voltage THD"][1] == 8.0 and chk["Largest individual voltage harmonic"][1] == 5.0
    )
    # IEEE Std 519-2014 Table 2, Isc/IL < 20: TDD 5.0 %
    assert n["isc_il"] < 20 and chk["TDD at the PCC"][1] == 5.0
    # IEEE Std 18-2002 continuous limits
    assert [
        chk[k][1]
        for k in (
            "Capacitor RMS voltage / rated",
            "Capacitor peak voltage / rated peak",
            "Capacitor RMS current / nominal",
            "Capacitor kvar / rated",
        )
    ] == [1.1, 1.2, 1.35, 1.35]
    # rule of thumb h ≈ √(S_sc/Q_cap) (common practice), from the inputs by hand:
    v, f = n["v_ll"], n["f_hz"]
    zu, zt = v**2 / (n["ssc_mva"] * 1e6), n["tx_z_pct"] / 100 * v**2 / (n["tx_kva"] * 1e3)
    r = zu / math.sqrt(1 + n["xr_util"] ** 2) + zt / math.sqrt(1 + n["tx_xr"] ** 2)
    x = zu * n["xr_util"] / math.sqrt(1 + n["xr_util"] ** 2) + zt * n["tx_xr"] / math.sqrt(
        1 + n["tx_xr"] ** 2
    )
    s_sc = v**2 / math.hypot(r, x) / 1e6
    q = n["cap_steps"] * n["cap_kvar_step"] / 1e3
    assert n["res_rule"] == pytest.approx(math.sqrt(s_sc / q), rel=1e-9)
    # the solver's scan finds the parallel resonance where the rule of thumb puts it (±5 %:
    # the rule neglects the load and resistance)
    assert n["res_order"] == pytest.approx(n["res_rule"], rel=0.05)
    assert f == 60


def test_detuned_filter_against_closed_forms():
    n = _named(TPL / "detuned_filter.xlsx")
    p, kvar, v, f = n["p_ratio"], n["bank_kvar"], n["cap_v_rated"], n["f_hz"]
    assert n["tuned_order"] == pytest.approx(1 / math.sqrt(p), rel=1e-12)  # h = 1/√p
    x_c = v**2 / (kvar * 1e3)  # X_C = V²/Q
    assert n["l_det_mh"] == pytest.approx(
        p * x_c / (2 * math.pi * f) * 1e3, rel=1e-12
    )  # X_L = p·X_C
    assert n["v_rise"] == pytest.approx(1 / (1 - p), rel=1e-12)  # U_C = U/(1−p)
    # the network built from the sizing has its series resonance at 1/√p (within 0.1 %)
    assert n["series_order"] == pytest.approx(1 / math.sqrt(p), rel=1e-3)


def test_dc_link_against_closed_forms():
    n = _named(TPL / "dc_link_ripple.xlsx")
    vin, d, f, ind = n["v_in"], n["duty"], n["f_sw"], n["l_f"]
    assert n["v_out_dc"] == pytest.approx(d * vin, rel=1e-12)  # ideal buck: V_out = D·V_in
    di = (vin - d * vin) * d / (ind * f)  # ΔI_L = (V_in − V_out)·D/(L·f), common practice
    assert n["il_ripple_pp"] == pytest.approx(di, rel=0.03)  # 15 harmonics: within 3 %
    # a triangular ripple current of peak-to-peak ΔI has RMS ΔI/√12 (common practice); the
    # capacitor carries nearly all of it
    assert n["cap_i_rms"] == pytest.approx(di / math.sqrt(12), rel=0.03)


def test_batch_example_sweep(tmp_path):
    from xlfuncs.workbook import run_batch

    rep = run_batch(
        TPL / "plant_harmonics.xlsx",
        ROOT / "examples" / "cases_plant.csv",
        tmp_path,
        collect=["bus_thd_pct", "res_order", "res_rule", "cap_i_duty", "cap_vpk_duty", "verdict"],
        progress=False,
    )
    assert (rep.done, rep.failed) == (12, 0)
    import csv

    with (tmp_path / "summary.csv").open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    for row in rows:
        # resonance order follows √(S_sc/Q_cap) in every case (rule of thumb, ±5 %)
        assert float(row["res_order"]) == pytest.approx(float(row["res_rule"]), rel=0.05)
    for row in rows:  # duty ratios are positive numbers, the verdict is PASS or FAIL
        assert float(row["cap_i_duty"]) > 0 and float(row["cap_vpk_duty"]) > 0
        assert row["verdict"] in ("PASS", "FAIL")
    by = {r["case"]: float(r["res_order"]) for r in rows}
    # more capacitance lowers the resonance: h ∝ 1/√Q (rule of thumb)
    assert by["1 steps, 50 MVA"] / by["4 steps, 50 MVA"] == pytest.approx(2.0, rel=0.05)
