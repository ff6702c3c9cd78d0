"""Headless recalculation: values through the formula engine, everything else preserved."""

from __future__ import annotations

import hashlib
import math
import os
import re
import subprocess
import sys
import tempfile
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
    assert ws["M7"].value.startswith("ERROR: argument target: 'nowhere'")
    assert ws["E2"].value == "3k"  # the --set input is written too
    assert rep.spills == 1 and "Net!P1: #SPILL!" in rep.errors
    assert len(rep.errors) == 4 and rep.errors[-1].startswith("Net!M7: ERROR: argument")


def test_everything_else_is_preserved(book, tmp_path):
    out = tmp_path / "out.xlsx"
    recalc(book, out)
    zin, zout = zipfile.ZipFile(book), zipfile.ZipFile(out)
    assert sorted(zin.namelist()) == sorted(zout.namelist())
    for name in zin.namelist():
        if name not in ("xl/worksheets/sheet1.xml", "xl/workbook.xml"):
            assert zin.read(name) == zout.read(name), name  # styles, chart, drawing, metadata…
    # the workbook part differs only in <calcPr>: no full recalculation forced on load
    calc = re.compile(rb"<calcPr\b[^>]*/>")
    wb_in, wb_out = zin.read("xl/workbook.xml"), zout.read("xl/workbook.xml")
    assert calc.sub(b"", wb_in) == calc.sub(b"", wb_out)
    assert b'fullCalcOnLoad="1"' in wb_in and b"fullCalcOnLoad" not in wb_out
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
        ({"nope": 1.0}, "'nope' is neither a defined name nor a Sheet!A1 address; inputs: "
                        "R1_value, Vdc"),
        ({"r1_valu": 1.0}, "'r1_valu' is neither a defined name nor a Sheet!A1 address; "
                           "did you mean 'R1_value'? inputs: R1_value, Vdc"),
        ({"Net!M1": 1.0}, "holds a formula; set input cells only"),
        ({"Ghost!A1": 1.0}, "no sheet named 'Ghost' (in 'Ghost!A1'); sheets: Net"),
        ({"nett!A1": 1.0}, "no sheet named 'nett' (in 'nett!A1'); did you mean 'Net'? sheets: Net"),
        ({"Net!A0": 1.0}, "'Net!A0' is outside the sheet (rows 1…1048576, columns A…XFD)"),
        ({"Net!A99999999": 1.0}, "'Net!A99999999' is outside the sheet"),
        ({"Net!XFE1": 1.0}, "'Net!XFE1' is outside the sheet"),
        ({"Net!ZZZZ1": 1.0}, "'Net!ZZZZ1' is outside the sheet"),
    ],
)  # fmt: skip
def test_bad_set_targets(book, tmp_path, sets, message):
    with pytest.raises(WorkbookError, match=re.escape(message)):
        recalc(book, tmp_path / "o.xlsx", sets)


def test_cli_recalc(book, tmp_path, capsys):
    out = tmp_path / "cli.xlsx"
    # written, but its formula cells hold (deliberate) errors: exit status 1
    assert (
        main(["recalc", str(book), "-o", str(out), "--set", "Vdc=20", "--set", "Net!F12=4"]) == 1
    )
    text = capsys.readouterr().out
    assert "recalculated 9 formulas (1 spilling)" in text and str(out) in text
    assert "4 formula cells hold errors: Net!P1: #SPILL!, Net!M5: #DIV/0!" in text
    ws = openpyxl.load_workbook(out, data_only=True)["Net"]
    assert ws["I2"].value == pytest.approx(10.0) and ws["I3"].value == pytest.approx(2.0)
    assert main(["recalc", str(book), "--set", "oops"]) == 2
    assert "expected NAME=VALUE" in capsys.readouterr().err


def test_exit_status_zero_only_when_every_formula_computes(tmp_path, capsys):
    from books import clean_divider_book

    clean = clean_divider_book(tmp_path / "c.xlsx")
    assert main(["recalc", str(clean), "-o", str(tmp_path / "c_out.xlsx")]) == 0
    assert "formula cells hold errors" not in capsys.readouterr().out
    # an input the book's formulas cannot use (no validation on it): errors, exit 1
    assert main(["recalc", str(clean), "-o", str(tmp_path / "x.xlsx"), "--set", "Net!F12=x"]) == 1
    assert "2 formula cells hold errors: Net!M1: ERROR: sources row 3" in capsys.readouterr().out


def _one_line(capsys, code, args, message):
    assert main(args) == code
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("xlfuncs: error: ") and message in err, err


def test_output_problems_are_one_line(book, tmp_path, capsys, monkeypatch):
    (tmp_path / "a_file").write_text("x")
    (tmp_path / "a_dir").mkdir()
    for out, message in (
        (tmp_path / "a_dir", "is a directory; give a file name for the output"),
        (tmp_path / "a_file" / "o.xlsx", "is a file, not a directory"),
        (tmp_path / "a_file" / "deeper" / "o.xlsx", "is a file, not a directory"),
    ):
        _one_line(capsys, 2, ["recalc", str(book), "-o", str(out)], message)
    if os.geteuid() == 0:  # permissions do not stop root: the temporary file is refused
        real = tempfile.mkstemp

        def refuse(*a, **k):
            if k.get("dir") == tmp_path / "ro":
                raise PermissionError(13, "Permission denied")
            return real(*a, **k)

        monkeypatch.setattr(tempfile, "mkstemp", refuse)
        (tmp_path / "ro").mkdir()
    else:
        (tmp_path / "ro").mkdir()
        (tmp_path / "ro").chmod(0o555)
    _one_line(
        capsys,
        2,
        ["recalc", str(book), "-o", str(tmp_path / "ro" / "o.xlsx")],
        "cannot write: Permission denied (no permission to write there; choose another place)",
    )
    assert list((tmp_path / "ro").iterdir()) == []


def test_full_disk_leaves_nothing_behind(book, tmp_path):
    # RLIMIT_FSIZE: no file may grow beyond 4 KiB, as on a full disk
    out = tmp_path / "full" / "o.xlsx"
    code = (
        "import resource, sys; resource.setrlimit(resource.RLIMIT_FSIZE, (4096, 4096)); "
        "from xlfuncs.cli import main; sys.exit(main(sys.argv[1:]))"
    )
    env = dict(os.environ, PYTHONWARNINGS="ignore")
    r = subprocess.run(
        [sys.executable, "-c", code, "recalc", str(book), "-o", str(out)],
        capture_output=True,
        text=True,
        env=env,
    )
    assert r.returncode == 2 and r.stderr.count("\n") == 1, r.stderr
    assert r.stderr == (
        f"xlfuncs: error: {out}: cannot write: File too large (the disk is full or a "
        "file-size limit was reached; free space and run again)\n"
    )
    assert list(out.parent.iterdir()) == []  # no temporary file left


def test_cached_values_survive_opening(book, tmp_path):
    # a spreadsheet program recalculates everything on load when asked (fullCalcOnLoad) or
    # when calcId is below its engine's ([MS-XLS] 2.4.215; 145621 is Excel 2010's, as its
    # documentation states): the copy asks for neither, so CKT_ values stay visible
    out = tmp_path / "o.xlsx"
    recalc(book, out)
    wb = zipfile.ZipFile(out).read("xl/workbook.xml").decode()
    (calc,) = re.findall(r"<calcPr\b[^>]*/>", wb)
    assert "fullCalcOnLoad" not in calc
    assert int(re.search(r'calcId="(\d+)"', calc).group(1)) > 145621


@pytest.mark.skipif(os.name != "posix", reason="POSIX permission bits")
def test_output_files_get_the_umask_mode_or_keep_the_replaced_files_mode(book, tmp_path):
    # POSIX: a new file is created 0o666 less the umask (open(2), common practice); a file
    # replaced in place keeps its mode. mkstemp's private 0o600 must not leak into results.
    fresh = tmp_path / "fresh.xlsx"
    run = subprocess.run(
        [sys.executable, "-m", "xlfuncs", "recalc", str(book), "-o", str(fresh)],
        preexec_fn=lambda: os.umask(0o027),
        capture_output=True,
    )
    assert run.returncode in (0, 1), run.stderr  # 1: written, the book holds error cells
    assert fresh.stat().st_mode & 0o777 == 0o640
    kept = tmp_path / "kept.xlsx"
    kept.write_bytes(b"")
    kept.chmod(0o604)
    recalc(book, kept)
    assert kept.stat().st_mode & 0o777 == 0o604
    from xlfuncs.workbook.batch import _write_atomic_bytes

    summary = tmp_path / "summary.csv"
    summary.write_bytes(b"")
    summary.chmod(0o664)
    _write_atomic_bytes(summary, b"case\n")
    assert summary.stat().st_mode & 0o777 == 0o664 and summary.read_bytes() == b"case\n"


def test_the_output_keeps_the_inputs_ending(book, tmp_path):
    # a workbook written under a .csv name opens as garbage in every program that trusts
    # the ending; refused before anything is written
    with pytest.raises(WorkbookError, match=r"give it the ending \.xlsx"):
        recalc(book, tmp_path / "out.csv")
    assert not (tmp_path / "out.csv").exists()
