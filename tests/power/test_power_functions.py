"""Worksheet functions and the ``study`` command on equipment tables: the fixed names and
spill columns, one-line errors, and a headless recalculation of a workbook using them."""

from __future__ import annotations

import math
from pathlib import Path

import openpyxl
import plants
import pytest
from plants import converter, row, supply, table, transformer

from xlfuncs.cli import main
from xlfuncs.functions import FUNCTIONS
from xlfuncs.power import harmonic_study

EX = Path(__file__).parent.parent.parent / "examples" / "power"
OPTS = [["key", "value"], ["fundamental_hz", 60], ["max_order", 25]]
SPECTRA = [["spectrum", "order", "pct", "phase_deg"], ["S", 3, 40, 0], ["S", 5, 25, 180]]


def eq():
    return table(
        supply(mva_sc=200, x_r=10),
        transformer("T1", "PCC", "LV", "Dyn11", kva=1500, z_pct=6, x_r=7),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=300, connection="YN"),
        converter("D1", "LV", kw=500, pf=0.93, connection="YN", spectrum="S"),
        converter("D2", "LV", kw=300, pf=0.95, pulses=6),
    )


def call(name, *args):
    return FUNCTIONS[name].call(*args)


def test_bus_harmonics_spill():
    out = call("CKT_BUS_HARMONICS", eq(), SPECTRA, "LV", OPTS)
    assert out[0] == ["order", "freq_hz", "sequence", "v_rms", "v_pct", "angle_deg"]
    assert [r[0] for r in out[1:-1]] == [1.0, 3.0, 5.0, 7.0, 11.0, 13.0, 17.0, 19.0, 23.0, 25.0]
    assert [r[2] for r in out[1:4]] == ["+", "0", "-"]
    assert out[1][4] == 100.0
    st = harmonic_study(eq(), SPECTRA, OPTS)
    sp = st.bus_voltage("LV")
    assert out[-1][:3] == ["total", "", ""] and out[-1][5] == ""
    assert out[-1][3] == pytest.approx(float(sp.rms_total), rel=1e-12)
    assert out[-1][4] == pytest.approx(100 * float(sp.thd()), rel=1e-12)
    assert all(len(r) == 6 for r in out)


def test_branch_and_neutral_harmonics_spill():
    out = call("CKT_BRANCH_HARMONICS", eq(), SPECTRA, "T1", OPTS, "bus")
    assert out[0] == ["order", "freq_hz", "sequence", "i_rms", "i_pct", "angle_deg"]
    assert out[2][:4] == [3.0, 180.0, "0", 0.0]  # no triplens in the HV lines of a Dyn11
    lv = call("CKT_BRANCH_HARMONICS", eq(), SPECTRA, "T1", OPTS, "bus_to")
    neutral = call("CKT_NEUTRAL_HARMONICS", eq(), SPECTRA, "T1", OPTS)
    assert neutral[2][3] == pytest.approx(3 * lv[2][3], rel=1e-12)  # I_N = 3·I0
    assert neutral[1][3] == 0.0 and neutral[-1][0] == "total"


def test_expand_spills_the_parts_table_without_empty_values():
    out = call("CKT_EXPAND", eq(), "+", OPTS)
    assert out[0][:8] == [
        "name",
        "kind",
        "from",
        "to",
        "value",
        "sec_from",
        "sec_to",
        "r_exponent",
    ]
    assert out[0][8:] == ["zone_shift_deg", "item", "note"]
    assert all(c is not None for r in out for c in r)
    zero = call("CKT_EXPAND", eq(), 0.0, OPTS)
    assert {r[0] for r in zero[1:]} >= {"T1.0R", "C1.C"} and "U1.R" not in {r[0] for r in zero}
    none = call("CKT_EXPAND", table(supply()), "0", OPTS)
    assert none[1][0] == "(empty)" and "no converter has connection YN" in none[1][-1]


def test_studies_on_the_equipment_table():
    v = call("CKT_BUS_V519", eq(), SPECTRA, "PCC", OPTS)
    assert v[0] == ["item", "percent", "limit_percent", "result"] and v[-1][0] == "basis"
    assert "bus 13.8 kV" in v[-1][1]
    assert v[-1][1].endswith("; fundamental 60 Hz (from fundamental_hz)")
    i = call("CKT_BRANCH_I519", eq(), SPECTRA, "U1", 8000, 50, OPTS)
    assert i[-2][0] == "verdict"
    assert i[-1][1].endswith("; fundamental 60 Hz (from fundamental_hz)")
    d = call("CKT_ITEM_CAPDUTY", eq(), SPECTRA, "C1", OPTS)
    assert d[0] == ["quantity", "value", "rated", "ratio", "limit", "pass"]
    assert d[1][2] == pytest.approx(480 / math.sqrt(3))
    scan = call("CKT_BUS_SCAN", eq(), "LV", 60, 3000, 20, "+", OPTS)
    assert scan[0] == ["freq_hz", "z_ohm", "angle_deg"] and len(scan) == 21
    res = call("CKT_BUS_RESONANCES", eq(), "LV", 60, 3000, None, None, OPTS)
    assert res[1][0] == "parallel" and 4 < res[1][2] < 25


@pytest.mark.parametrize(
    "args, fragment",
    [
        (("CKT_BUS_HARMONICS", None, None, "LV", OPTS), "ERROR: equipment table: no range given"),
        (("CKT_BUS_HARMONICS", "x", None, "LV", OPTS), "ERROR: equipment table: expected a range"),
        (("CKT_BUS_HARMONICS", None, None, "LV", None), "ERROR: options table: fundamental_hz"),
        (("CKT_BUS_HARMONICS", "EQ", SPECTRA, "XX", OPTS), "ERROR: argument bus: 'XX'"),
        (("CKT_EXPAND", "EQ", "pos2", OPTS), "ERROR: argument sequence: 'pos2'"),
        (("CKT_BRANCH_HARMONICS", "EQ", SPECTRA, "C1", OPTS, "bus_to"), "bus_to only"),
        # IEEE 519 has editions 2014 and 2022; 2014.5 is no edition (was read as 2014)
        (
            ("CKT_BRANCH_I519", "EQ", SPECTRA, "U1", 8000, 50, OPTS, 2014.5),
            "ERROR: argument edition: 2014.5",
        ),
        # Isc/IL below 1 is no short-circuit ratio (CKT_I519 refuses it the same way)
        (
            ("CKT_BRANCH_I519", "EQ", SPECTRA, "U1", 40, 50, OPTS),
            "ERROR: argument i_sc: 40 — expected a short-circuit current ≥ i_l (50 A)",
        ),
        (("CKT_BUS_RESONANCES", "EQ", "LV", 60, 3000, 0, None, OPTS), "argument points: 0"),
        (
            ("CKT_BUS_HARMONICS", "EQ#", SPECTRA, "LV", OPTS),
            "ERROR: equipment row 2, column kv: '#N/A' — the cell holds an Excel error",
        ),
    ],
)
def test_errors_are_one_line_in_the_cell(args, fragment):
    name, *rest = args
    rest = [eq() if a == "EQ" else a for a in rest]
    if "EQ#" in rest:
        bad = eq()
        bad[1][plants.HEADER.index("kv")] = "#N/A"
        rest = [bad if a == "EQ#" else a for a in rest]
    out = call(name, *rest)
    assert isinstance(out, str) and "\n" not in out
    assert out.startswith("ERROR: ") and fragment in out, out


def test_an_empty_spectra_range_means_ideal_spectra():
    plain = table(
        supply(), transformer("T1", "PCC", "LV", "Dyn11"), converter("D1", "LV", pulses=6)
    )
    a = call("CKT_BUS_HARMONICS", plain, [[None, None], [None, None]], "LV", OPTS)
    b = call("CKT_BUS_HARMONICS", plain, None, "LV", OPTS)
    assert a == b and a[2][0] == 5.0


# ------------------------------------------------------------------ command line
def test_study_command_prints_the_bus_table_basis_and_cautions(capsys):
    code = main(
        [
            "study",
            str(EX / "equipment.csv"),
            "--spectra",
            str(EX / "spectra.csv"),
            "--options",
            str(EX / "options.csv"),
            "--bus",
            "PCC",
            "--item",
            "U1",
            "--neutral",
            "T1",
        ]
    )
    out = capsys.readouterr().out
    assert code == 0
    lines = out.splitlines()
    head = next(i for i, ln in enumerate(lines) if ln.startswith("Bus PCC"))
    assert lines[head + 1].split() == [
        "order",
        "freq_hz",
        "sequence",
        "v_rms",
        "v_pct",
        "angle_deg",
    ]
    assert any(ln.startswith("total") for ln in lines[head:])
    assert "THD: √(Σ_h=2..50" in out and "Screening calculation" in out and "Not modelled" in out
    assert "Item U1" in out and "neutral current" in out


def test_study_command_errors_are_one_line(tmp_path, capsys):
    bad = tmp_path / "eq.csv"
    bad.write_text("name,kind,bus,kv,mva_sc,x_r\nU1,supply,B,13.8k,100,10\n", encoding="utf-8")
    opts = tmp_path / "o.csv"
    opts.write_text("fundamental_hz,60\n", encoding="utf-8")
    code = main(["study", str(bad), "--options", str(opts), "--bus", "B"])
    err = capsys.readouterr().err.strip()
    assert code == 2 and "\n" not in err
    assert err.startswith("xlfuncs: error: equipment row 2, column kv: '13.8k' — ambiguous")
    code = main(["study", str(bad).replace("eq", "nothere"), "--bus", "B"])
    assert code == 2 and "cannot read" in capsys.readouterr().err


# ------------------------------------------------------------------ headless workbook
def test_headless_recalc_of_a_workbook_using_the_equipment_functions(tmp_path):
    from xlfuncs.workbook.recalc import recalc

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Plant"
    for r in eq():
        ws.append(r)
    for i, r in enumerate(SPECTRA):
        for j, v in enumerate(r):
            ws.cell(row=10 + i, column=1 + j, value=v)
    for i, r in enumerate(OPTS):
        for j, v in enumerate(r):
            ws.cell(row=15 + i, column=1 + j, value=v)
    last = openpyxl.utils.get_column_letter(len(plants.HEADER))
    ws["A20"] = f'=CKT_BUS_HARMONICS(A1:{last}6,A10:D12,"LV",A15:B17)'
    src = tmp_path / "plant.xlsx"
    wb.save(src)
    out = tmp_path / "plant_out.xlsx"
    recalc(src, out)
    got = openpyxl.load_workbook(out, data_only=True)["Plant"]
    want = call("CKT_BUS_HARMONICS", eq(), SPECTRA, "LV", OPTS)
    assert [c.value for c in got["A20:F20"][0]] == want[0]
    assert got["D21"].value == pytest.approx(want[1][3], rel=1e-12)
    assert got["A31"].value == "total" and got["E31"].value == pytest.approx(
        want[-1][4], rel=1e-12
    )
