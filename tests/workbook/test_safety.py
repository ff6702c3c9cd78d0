"""Workbooks from elsewhere: hostile archives and XML are refused with one line."""

from __future__ import annotations

import zipfile

import pytest
from books import divider_book

from xlfuncs.cli import main
from xlfuncs.errors import WorkbookError
from xlfuncs.workbook.recalc import recalc
from xlfuncs.workbook.safety import Limits, check_archive

BILLION_LAUGHS = (
    '<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol">'
    '<!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">'
    '<!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">]>'
    '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
    '<sheetData><row r="1"><c r="A1" t="inlineStr"><is><t>&lol3;</t></is></c></row>'
    "</sheetData></worksheet>"
)


def _rewrite(src, dst, replace):
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            zout.writestr(info, replace.get(info.filename, zin.read(info)))
        for name, data in replace.items():
            if name not in zin.namelist():
                zout.writestr(name, data)
    return dst


def test_entity_expansion_is_refused(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    bad = _rewrite(src, tmp_path / "laughs.xlsx", {"xl/worksheets/sheet1.xml": BILLION_LAUGHS})
    with pytest.raises(WorkbookError) as exc:
        check_archive(bad)
    assert str(exc.value) == (
        f"{bad} (xl/worksheets/sheet1.xml): refused: XML with a DTD or entity declarations "
        "(EntitiesForbidden)"
    )


def test_zip_bomb_ratio_is_refused(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    bomb = _rewrite(src, tmp_path / "bomb.xlsx", {"xl/media/zeros.bin": b"\0" * (20 * 2**20)})
    with pytest.raises(
        WorkbookError, match=r"compression ratio \d+:1 \(limit 200:1\), a zip bomb"
    ):
        check_archive(bomb)


def test_total_size_and_member_count_caps(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    with pytest.raises(WorkbookError, match=r"refused: \d+ parts in the archive \(limit 3\)"):
        check_archive(src, Limits(max_members=3))
    with pytest.raises(WorkbookError, match=r"MiB uncompressed \(limit 0 MiB\)"):
        check_archive(src, Limits(max_total_bytes=1000))


@pytest.mark.parametrize(
    ("content", "message"),
    [
        (b"plain text, not a zip", "not a workbook (.xlsx/.xlsm is a zip archive)"),
        (None, "not an Excel workbook (no xl/workbook.xml in the archive)"),
    ],
)
def test_not_a_workbook(tmp_path, content, message):
    p = tmp_path / "x.xlsx"
    if content is None:
        with zipfile.ZipFile(p, "w") as z:
            z.writestr("[Content_Types].xml", "<Types/>")
    else:
        p.write_bytes(content)
    with pytest.raises(WorkbookError, match=message.replace("(", r"\(").replace(")", r"\)")):
        check_archive(p)


def test_cli_refusal_is_one_line(tmp_path, capsys):
    src = divider_book(tmp_path / "a.xlsx")
    bad = _rewrite(src, tmp_path / "laughs.xlsx", {"xl/worksheets/sheet1.xml": BILLION_LAUGHS})
    assert main(["recalc", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "refused: XML with a DTD" in err


def test_formula_ranges_are_capped(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    out = tmp_path / "o.xlsx"
    from xlfuncs.workbook.recalc import PreparedBook

    pb = PreparedBook(src, Limits(max_range_cells=10))
    pb.evaluate()
    assert pb.read("Vout_rms") == "ERROR: argument 1 pulls in 15 cells (limit 10)"
    pb.write(out)
    assert recalc(src, tmp_path / "fine.xlsx").errors  # default limits: the book evaluates
