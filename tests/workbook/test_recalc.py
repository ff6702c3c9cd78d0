"""Headless recalculation: values through the formula engine, everything else preserved."""

from __future__ import annotations

import hashlib
import math
import re
import zipfile

import openpyxl
import pytest
from books import divider_book

from xlfuncs.cli import main
from xlfuncs.errors import WorkbookError
from xlfuncs.workbook.recalc import recalc


def _sha(p):
    return hashlib.sha256(p.read_bytes()).hexdigest()


def _xml(path, part):
    return zipfile.ZipFile(path).read(part).decode("utf-8")


@pytest.fixture
def book(tmp_path):
    return divider_book(tmp_path / "divider.xlsx")


def test_values_spills_and_errors(book, tmp_path):
    before = _sha(book)
    out = tmp_path / "out.xlsx"
    rep = recalc(book, out, {"R1_value": "3k"})
    assert _sha(book) == before  # the input is never modified
    ws = openpyxl.load_workbook(out, data_only=True)["Net"]
    # divider 1k/(3k+1k): DC 10 V → 2.5 V, 50 Hz 2 V peak → 0.5 V (closed form, common practice)
    assert [c.value for c in ws["H1:K1"][0]] == ["freq_hz", "peak", "rms", "phase_deg"]
    assert ws["H2"].value == 0 and ws["I2"].value == pytest.approx(2.5, rel=1e-12)
    assert ws["H3"].value == 50 and ws["I3"].value == pytest.approx(0.5, rel=1e-12)
    assert ws["H4"].value == "total" and ws["I4"].value == pytest.approx(3.0, rel=1e-12)
    rms = math.sqrt(2.5**2 + 0.5**2 / 2)
    assert ws["M1"].value == pytest.approx(rms, rel=1e-12)
    assert ws["M2"].value == 4  # ROWS(H1#): A1# resolved to the spilled block
    assert ws["M3"].value == pytest.approx(2.5 + 0.5 / math.sqrt(2) + rms, rel=1e-12)
    assert ws["M8"].value == pytest.approx(2 * rms, rel=1e-12)
    assert ws["P1"].value == "#SPILL!"  # blocked spill
    assert ws["P2"].value == "in the way"
    assert ws["M5"].value == "#DIV/0!" and ws["M6"].value == "#DIV/0!"  # errors propagate
    assert ws["M7"].value.startswith("ERROR: argument, column target: 'nowhere'")
    assert ws["E2"].value == "3k"  # the --set input is written too
    assert rep.spills == 1 and "Net!P1: #SPILL!" in rep.errors


def test_everything_else_is_preserved(book, tmp_path):
    out = tmp_path / "out.xlsx"
    recalc(book, out)
    zin, zout = zipfile.ZipFile(book), zipfile.ZipFile(out)
    assert sorted(zin.namelist()) == sorted(zout.namelist())
    for name in zin.namelist():
        if name != "xl/worksheets/sheet1.xml":  # styles, chart, drawing, names, metadata…
            assert zin.read(name) == zout.read(name), name
    wb = openpyxl.load_workbook(out)
    ws = wb["Net"]
    assert ws["A1"].font.b and ws["M1"].number_format == "0.000"
    assert ws.column_dimensions["H"].width == pytest.approx(14.7109375, abs=0.8)
    assert "A20:D20" in {str(r) for r in ws.merged_cells.ranges}
    assert set(wb.defined_names) >= {"R1_value", "Vdc", "Vout_rms", "Spectrum"}
    sheet = _xml(out, "xl/worksheets/sheet1.xml")
    # the dynamic-array anchor keeps its metadata index and now records its spill extent
    assert re.search(r'<c r="H1" cm="1"[^>]*><f t="array" ref="H1:K4">CKT_SOLVE', sheet)
    # (XlsxWriter stores a formula using ANCHORARRAY as a one-cell dynamic array)
    assert '<f t="array" ref="M2">ROWS(_xlfn.ANCHORARRAY(H1))</f><v>4.0</v>' in sheet
    assert '<dimension ref="A1:P20"/>' in sheet


def test_xlsm_keeps_its_vba_project_untouched(tmp_path):
    vba = b"\xd0\xcf\x11\xe0 not run, only carried" * 50
    src = divider_book(tmp_path / "macro.xlsm", vba=vba)
    out = tmp_path / "macro_out.xlsm"
    recalc(src, out)
    z = zipfile.ZipFile(out)
    assert z.read("xl/vbaProject.bin") == vba
    assert "vbaProject" in z.read("[Content_Types].xml").decode()


def test_plain_formula_that_spills_becomes_a_dynamic_array(tmp_path):
    # openpyxl writes a plain formula and no dynamic-array metadata: the engine spills it,
    # so the output marks it as a dynamic array (metadata part added) and caches the block
    from books import PARTS, SOURCES

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    for r in PARTS:
        ws.append(r)
    for i, r in enumerate(SOURCES):
        for j, v in enumerate(r):
            ws.cell(row=10 + i, column=1 + j, value=v)
    ws["H1"] = '=CKT_SOLVE(A1:E3,A10:F12,"out")'
    src = tmp_path / "plain.xlsx"
    wb.save(src)
    out = tmp_path / "plain_out.xlsx"
    recalc(src, out)
    z = zipfile.ZipFile(out)
    assert "xl/metadata.xml" in z.namelist()
    assert "sheetMetadata" in z.read("xl/_rels/workbook.xml.rels").decode()
    assert re.search(r'<c r="H1"[^>]* cm="1"', z.read("xl/worksheets/sheet1.xml").decode())
    ws2 = openpyxl.load_workbook(out, data_only=True)["S"]
    assert ws2["I2"].value == pytest.approx(5.0, rel=1e-12)


def test_refuses_to_overwrite_the_input(book):
    with pytest.raises(WorkbookError, match="refusing to overwrite the input"):
        recalc(book, book)


@pytest.mark.parametrize(
    ("sets", "message"),
    [
        ({"nope": 1.0}, "'nope' is neither a defined name nor a Sheet!A1 address"),
        ({"Net!M1": 1.0}, "holds a formula; set input cells only"),
        ({"Ghost!A1": 1.0}, "no sheet named 'Ghost'"),
    ],
)
def test_bad_set_targets(book, tmp_path, sets, message):
    with pytest.raises(WorkbookError, match=re.escape(message)):
        recalc(book, tmp_path / "o.xlsx", sets)


def test_cli_recalc(book, tmp_path, capsys):
    out = tmp_path / "cli.xlsx"
    assert (
        main(["recalc", str(book), "-o", str(out), "--set", "Vdc=20", "--set", "Net!F12=4"]) == 0
    )
    text = capsys.readouterr().out
    assert "recalculated 9 formulas (1 spilling)" in text and str(out) in text
    ws = openpyxl.load_workbook(out, data_only=True)["Net"]
    assert ws["I2"].value == pytest.approx(10.0) and ws["I3"].value == pytest.approx(2.0)
    assert main(["recalc", str(book), "--set", "oops"]) == 2
    assert "expected NAME=VALUE" in capsys.readouterr().err
