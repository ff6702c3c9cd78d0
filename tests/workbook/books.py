"""Workbooks built for the tests with XlsxWriter (and openpyxl), as engineers' tools write them,
and damaged or hostile files built byte by byte (nothing here imports xlfuncs, so the fault
campaign can use these builders against any version of the package)."""

from __future__ import annotations

import re
import struct
import zipfile
from pathlib import Path

import xlsxwriter

PARTS = [
    ["name", "kind", "from", "to", "value"],
    ["R1", "R", "in", "out", "1k"],
    ["R2", "R", "out", "GND", "1k"],
]
SOURCES = [
    ["name", "kind", "from", "to", "freq_hz", "peak"],
    ["Vs", "V", "in", "GND", 0, 10],
    ["Vs", "V", "in", "GND", 50, 2],
]


def divider_book(path: Path, vba: bytes | None = None) -> Path:
    """Inputs on a sheet with defined names; a spilled CKT_SOLVE, scalars, A1# references,
    a blocked spill, Excel errors, styles, widths, a merged title and a chart."""
    wb = xlsxwriter.Workbook(str(path))
    if vba is not None:
        bin_path = path.with_name("vbaProject.bin")
        bin_path.write_bytes(vba)
        wb.add_vba_project(str(bin_path))
    bold = wb.add_format({"bold": True, "bg_color": "#DDEEFF"})
    num = wb.add_format({"num_format": "0.000"})
    ws = wb.add_worksheet("Net")
    ws.merge_range("A20:D20", "Divider — demo data", bold)
    ws.set_column("H:K", 14)
    for i, r in enumerate(PARTS):
        ws.write_row(i, 0, r, bold if i == 0 else None)
    for i, r in enumerate(SOURCES):
        ws.write_row(9 + i, 0, r)
    ws.write_dynamic_array_formula("H1:H1", '=CKT_SOLVE(A1:E3,A10:F12,"out")')
    ws.write_formula("M1", '=CKT_RMS(A1:E3,A10:F12,"out")', num)
    ws.write_formula("M2", "=ROWS(_xlfn.ANCHORARRAY(H1))")
    ws.write_formula("M3", "=SUM(INDEX(_xlfn.ANCHORARRAY(H1),0,3))")
    ws.write_dynamic_array_formula("P1:P1", '=CKT_SOLVE(A1:E3,A10:F12,"out")')
    ws.write("P2", "in the way")  # blocks P1's spill
    ws.write_formula("M5", "=1/0")
    ws.write_formula("M6", "=M5+1")
    ws.write_formula("M7", '=CKT_RMS(A1:E3,A10:F12,"nowhere")')
    ws.write_formula("M8", "=M1*2")
    wb.define_name("R1_value", "=Net!$E$2")
    wb.define_name("Vdc", "=Net!$F$11")
    wb.define_name("Vout_rms", "=Net!$M$1")
    wb.define_name("Spectrum", "=Net!$H$1")
    chart = wb.add_chart({"type": "line"})
    chart.add_series({"values": "=Net!$J$2:$J$3", "name": "rms"})
    ws.insert_chart("H12", chart)
    wb.close()
    return path


def clean_divider_book(path: Path, validate: bool = True) -> Path:
    """A divider whose formulas all compute (no deliberate errors), with data validation on
    its inputs as a template would carry it: R1 decimal > 0 (with the book's own message),
    the DC source a decimal between -100 and 100, a step count whole ≥ 0, a mode from a list."""
    wb = xlsxwriter.Workbook(str(path))
    ws = wb.add_worksheet("Net")
    for i, r in enumerate(PARTS):
        ws.write_row(i, 0, r)
    for i, r in enumerate(SOURCES):
        ws.write_row(9 + i, 0, r)
    ws.write("H1", 2)  # steps (whole ≥ 0)
    ws.write("H2", "fast")  # mode (list)
    ws.write_formula("M1", '=CKT_RMS(A1:E3,A10:F12,"out")')
    ws.write_formula("M2", "=M1*2+H1")
    wb.define_name("R1_value", "=Net!$E$2")
    wb.define_name("Vdc", "=Net!$F$11")
    wb.define_name("steps", "=Net!$H$1")
    wb.define_name("mode", "=Net!$H$2")
    wb.define_name("Vout_rms", "=Net!$M$1")
    if validate:
        ws.data_validation(
            "E2",
            {
                "validate": "decimal",
                "criteria": ">",
                "value": 0,
                "error_message": "R1 must be a positive resistance in ohms",
            },
        )
        ws.data_validation(
            "F11", {"validate": "decimal", "criteria": "between", "minimum": -100, "maximum": 100}
        )
        ws.data_validation(
            "H1", {"validate": "integer", "criteria": ">=", "value": 0, "ignore_blank": False}
        )
        ws.data_validation("H2", {"validate": "list", "source": ["fast", "slow"]})
    wb.close()
    return path


def rewrite_zip(src: Path, dst: Path, replace: dict[str, bytes | str]) -> Path:
    """Copy ``src`` to ``dst`` replacing (or adding) members."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            zout.writestr(info, replace.get(info.filename, zin.read(info)))
        for name, data in replace.items():
            if name not in zin.namelist():
                zout.writestr(name, data)
    return dst


def add_validation(src: Path, dst: Path, sheet_part: str, rules: str) -> Path:
    """Copy a workbook adding ``<dataValidations>`` (XML text of the rules) to one sheet part,
    at the place the schema wants it (before hyperlinks/printOptions/pageMargins/…)."""
    with zipfile.ZipFile(src) as z:
        xml = z.read(sheet_part).decode("utf-8")
    block = f'<dataValidations count="{rules.count("<dataValidation ")}">{rules}</dataValidations>'
    m = re.search(
        r"<(hyperlinks|printOptions|pageMargins|pageSetup|headerFooter|drawing|tableParts|extLst)\b",
        xml,
    )
    at = m.start() if m else xml.rindex("</worksheet>")
    return rewrite_zip(src, dst, {sheet_part: xml[:at] + block + xml[at:]})


def _central_offsets(data: bytes, name: str) -> tuple[int, int]:
    """(local header offset, central directory entry offset) of a member, by name."""
    cd = data.index(b"PK\x01\x02")
    while True:
        n_len, x_len, c_len = struct.unpack_from("<HHH", data, cd + 28)
        entry_name = data[cd + 46 : cd + 46 + n_len].decode("utf-8")
        if entry_name == name:
            (local,) = struct.unpack_from("<I", data, cd + 42)
            return local, cd
        cd += 46 + n_len + x_len + c_len
        if data[cd : cd + 4] != b"PK\x01\x02":
            raise KeyError(name)


PNG_BYTES = bytes(range(256)) * 8  # stands in for an image: stored, not compressed


def with_media(src: Path, dst: Path, name: str = "xl/media/image9.png") -> Path:
    """Copy of a workbook with one stored (uncompressed) binary member added."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            zout.writestr(info, zin.read(info))
        zout.writestr(zipfile.ZipInfo(name), PNG_BYTES, compress_type=zipfile.ZIP_STORED)
    return dst


def damage_member(src: Path, dst: Path, how: str, name: str = "xl/media/image9.png") -> Path:
    """A workbook whose binary member is damaged: ``crc`` (a data byte flipped), ``size``
    (the size headers lie: claim more bytes than there are), ``encrypted`` (the encryption
    flag set on a member that is not encrypted)."""
    data = bytearray(with_media(src, dst).read_bytes())
    local, central = _central_offsets(bytes(data), name)
    n_len, x_len = struct.unpack_from("<HH", data, local + 26)
    start = local + 30 + n_len + x_len
    if how == "crc":
        data[start + 100] ^= 0xFF
    elif how == "size":
        for off in (local + 22, central + 24):  # uncompressed size
            struct.pack_into("<I", data, off, len(PNG_BYTES) * 4)
    elif how == "encrypted":
        for off in (local + 6, central + 8):  # general-purpose flags: bit 0 = encrypted
            data[off] |= 0x01
    else:
        raise ValueError(how)
    dst.write_bytes(bytes(data))
    return dst


def duplicate_member(src: Path, dst: Path, name: str = "xl/workbook.xml") -> Path:
    """A workbook with a second member of the same name (a different workbook.xml)."""
    import warnings

    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for info in zin.infolist():
            zout.writestr(info, zin.read(info))
        other = zin.read(name).replace(b'name="Net"', b'name="Other"')
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            zout.writestr(name, other)
    return dst


def near_threshold_book(dst: Path, members: int = 480, size: int = 2**20) -> Path:
    """Many XML members, each exactly at the size below which the per-member compression
    ratio was not checked, and each compressing about 1000:1."""
    body = b"<a>" + b"x" * (size - 7) + b"</a>"
    with zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("[Content_Types].xml", "<Types/>")
        z.writestr("xl/workbook.xml", "<workbook/>")
        for i in range(members):
            z.writestr(f"xl/parts/p{i}.xml", body)
    return dst


def ods_renamed(dst: Path) -> Path:
    """An OpenDocument spreadsheet saved under an .xlsx name."""
    with zipfile.ZipFile(dst, "w") as z:
        z.writestr(
            zipfile.ZipInfo("mimetype"),
            "application/vnd.oasis.opendocument.spreadsheet",
            compress_type=zipfile.ZIP_STORED,
        )
        z.writestr("content.xml", "<office:document-content/>")
        z.writestr("META-INF/manifest.xml", "<manifest:manifest/>")
    return dst


def compound_file(dst: Path, streams: list[str]) -> Path:
    """A minimal OLE compound file (version 3, 512-byte sectors) holding empty streams of
    the given names: what a legacy ``.xls`` (a ``Workbook`` stream) or a password-protected
    OOXML file (``EncryptionInfo`` + ``EncryptedPackage``) looks like from outside.
    Layout after [MS-CFB] §2.2 (header), §2.3 (FAT), §2.6 (directory entries)."""
    end, free, fatsect, nostream = 0xFFFFFFFE, 0xFFFFFFFF, 0xFFFFFFFD, 0xFFFFFFFF
    header = bytearray(512)
    header[0:8] = bytes.fromhex("D0CF11E0A1B11AE1")
    struct.pack_into("<HHHHH", header, 24, 0x3E, 3, 0xFFFE, 9, 6)
    struct.pack_into("<IIII", header, 40, 0, 1, 1, 0)  # dir sectors, FAT sectors, 1st dir, txn
    struct.pack_into("<IIIII", header, 56, 0x1000, end, 0, end, 0)
    difat = [0] + [free] * 108
    struct.pack_into("<109I", header, 76, *difat)
    fat = [fatsect, end] + [free] * 126
    fat_sector = struct.pack("<128I", *fat)

    def entry(name: str, kind: int, right: int, child: int) -> bytes:
        e = bytearray(128)
        raw = name.encode("utf-16-le") + b"\0\0"
        e[0 : len(raw)] = raw
        struct.pack_into("<HBB", e, 64, len(raw), kind, 1)
        struct.pack_into("<III", e, 68, nostream, right, child)
        struct.pack_into("<IQ", e, 116, end, 0)
        return bytes(e)

    entries = [entry("Root Entry", 5, nostream, 1 if streams else nostream)]
    for k, name in enumerate(streams):
        entries.append(entry(name, 2, k + 2 if k + 1 < len(streams) else nostream, nostream))
    directory = b"".join(entries).ljust(512, b"\0")
    dst.write_bytes(bytes(header) + fat_sector + directory)
    return dst
