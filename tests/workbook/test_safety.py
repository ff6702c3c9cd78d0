"""Workbooks from elsewhere: hostile, damaged or mistaken files are refused with one line
that says what the file is and what to do."""

from __future__ import annotations

import zipfile

import pytest
from books import (
    compound_file,
    damage_member,
    divider_book,
    duplicate_member,
    near_threshold_book,
    ods_renamed,
    with_media,
)

from xlfuncs.cli import main
from xlfuncs.errors import WorkbookError
from xlfuncs.workbook import safety
from xlfuncs.workbook.recalc import recalc
from xlfuncs.workbook.safety import Limits, check_archive, read_archive

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
        f"{bad} (xl/worksheets/sheet1.xml): refused: XML with a DTD (entity expansion is not "
        "allowed)"
    )


def test_dtd_after_a_large_prolog_comment_is_found(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    filler = bytes(range(256)).hex() * 400  # 200 KiB that does not compress much
    sneaky = '<?xml version="1.0"?><!--' + filler + "-->" + BILLION_LAUGHS.split("?>", 1)[1]
    bad = _rewrite(src, tmp_path / "s.xlsx", {"xl/styles.xml": sneaky})
    with pytest.raises(WorkbookError, match="refused: XML with a DTD"):
        check_archive(bad)


def test_zip_bomb_ratio_is_refused(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    # 512 KiB of zeros: below the old 1 MiB threshold, far above 200:1
    bomb = _rewrite(src, tmp_path / "bomb.xlsx", {"xl/media/zeros.bin": b"\0" * 2**19})
    with pytest.raises(
        WorkbookError, match=r"compression ratio \d+:1 \(limit 200:1\), a zip bomb"
    ):
        check_archive(bomb)


def test_many_members_near_the_threshold_are_refused_from_the_headers(tmp_path, monkeypatch):
    # each member compresses ~1000:1 but was too small for the per-member check; their total
    # far exceeds 100× the archive: refused before a single member is inflated
    book = near_threshold_book(tmp_path / "near.xlsx", members=48, size=2**20)

    def must_not_read(*_a):
        raise AssertionError("a member was inflated")

    monkeypatch.setattr(safety, "_read_member", must_not_read)
    with pytest.raises(WorkbookError) as exc:
        check_archive(book, Limits(ratio_floor=2**21))  # the member check alone misses it
    assert "refused: 48 MiB uncompressed from a 0.05 MiB archive (limit 32 MiB" in str(exc.value)


def test_total_size_and_member_count_caps(tmp_path):
    src = divider_book(tmp_path / "a.xlsx")
    with pytest.raises(WorkbookError, match=r"refused: \d+ parts in the archive \(limit 3\)"):
        check_archive(src, Limits(max_members=3))
    with pytest.raises(WorkbookError, match=r"MiB archive \(limit 0 MiB"):
        check_archive(src, Limits(max_total_bytes=1000))


@pytest.mark.parametrize(
    ("content", "message"),
    [
        (b"plain text, not a zip", "not a workbook (an .xlsx/.xlsm file is a zip archive"),
        (b"", "empty file, not a workbook"),
        (b"<html><body>a web page</body></html>", "an XML or HTML file with a workbook's name"),
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
    assert pb.read("Vout_rms") == "ERROR: argument 1 (parts) covers 15 cells (limit 10)"
    pb.write(out)
    assert recalc(src, tmp_path / "fine.xlsx").errors  # default limits: the book evaluates


@pytest.mark.parametrize(
    ("how", "message"),
    [
        ("crc", "damaged archive: Bad CRC-32 for file 'xl/media/image9.png'"),
        ("size", "damaged archive: the size header says 8192 bytes, the data holds 2048"),
        ("encrypted", "damaged archive: the member is flagged as encrypted"),
    ],
)
def test_damaged_members_are_refused(tmp_path, capsys, how, message):
    bad = damage_member(divider_book(tmp_path / "a.xlsx"), tmp_path / f"{how}.xlsx", how)
    assert main(["recalc", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and f"{bad} (xl/media/image9.png): {message}" in err, err


def test_every_copied_member_is_verified(tmp_path):
    # an intact binary member passes and is copied byte for byte
    src = with_media(divider_book(tmp_path / "a.xlsx"), tmp_path / "m.xlsx")
    recalc(src, tmp_path / "o.xlsx")
    assert zipfile.ZipFile(tmp_path / "o.xlsx").read("xl/media/image9.png") == (
        zipfile.ZipFile(src).read("xl/media/image9.png")
    )


def test_duplicate_member_names_are_refused(tmp_path):
    bad = duplicate_member(divider_book(tmp_path / "a.xlsx"), tmp_path / "dup.xlsx")
    with pytest.raises(
        WorkbookError, match=r"two archive members share the name 'xl/workbook\.xml'"
    ):
        check_archive(bad)


@pytest.mark.parametrize(
    ("build", "message"),
    [
        # what each looks like from outside: [MS-CFB] compound files (checked against
        # olefile 0.47, an independent reader), an OpenDocument zip with its mimetype member
        (
            lambda p: compound_file(p, ["EncryptionInfo", "EncryptedPackage"]),
            "a password-protected (encrypted) workbook: its contents cannot be read without "
            "the password; open it in Excel, clear the password",
        ),
        (
            lambda p: compound_file(p, ["Workbook"]),
            "a legacy binary Excel workbook (.xls), not .xlsx/.xlsm: open it in Excel (or "
            "LibreOffice) and save it as an Excel Workbook (.xlsx)",
        ),
        (lambda p: compound_file(p, ["WordDocument"]), "an OLE compound document, not an Excel"),
        (ods_renamed, "an OpenDocument spreadsheet (.ods) with an .xlsx name: open it in Excel"),
    ],
)
def test_other_file_kinds_say_what_they_are(tmp_path, capsys, build, message):
    p = build(tmp_path / "book.xlsx")
    assert main(["recalc", str(p)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and f"{p}: {message}" in err, err


def test_truncated_and_directory_inputs(tmp_path, capsys):
    src = divider_book(tmp_path / "a.xlsx")
    cut = tmp_path / "cut.xlsx"
    cut.write_bytes(src.read_bytes()[: src.stat().st_size // 2])
    assert main(["recalc", str(cut)]) == 2
    assert "damaged workbook: its zip directory cannot be read" in capsys.readouterr().err
    assert main(["recalc", str(tmp_path)]) == 2
    assert "is a directory, not a workbook" in capsys.readouterr().err


def test_argument_beyond_the_cap_is_refused_before_materialising(tmp_path):
    import xlsxwriter
    from books import PARTS, SOURCES

    p = tmp_path / "big.xlsx"
    wb = xlsxwriter.Workbook(str(p))
    ws = wb.add_worksheet("Net")
    for i, row in enumerate(PARTS):
        ws.write_row(i, 0, row)
    for i, row in enumerate(SOURCES):
        ws.write_row(9 + i, 0, row)
    ws.write_formula("M1", '=CKT_RMS(A1:J100001,A10:F12,"out")')  # 1,000,010 cells
    wb.close()
    rep = recalc(p, tmp_path / "o.xlsx")
    assert rep.errors == ["Net!M1: ERROR: argument 1 (parts) covers 1000010 cells (limit 1000000)"]
    assert read_archive(p).data  # the book itself is small and fine
