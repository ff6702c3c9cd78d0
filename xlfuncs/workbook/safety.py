"""Checks on workbooks from elsewhere, before anything parses them.

A workbook is a zip archive of XML parts. :func:`read_archive` reads every member once —
what it approves is exactly what the rest of the package uses and copies — and refuses,
each with a one-line message naming the file (and the member):

* files that are not an ``.xlsx``/``.xlsm`` archive, saying what they are and what to do: a
  password-protected workbook, a legacy ``.xls``, another compound document, an OpenDocument
  spreadsheet or a binary ``.xlsb`` under an ``.xlsx`` name, a truncated archive;
* duplicate member names (part names compare case-insensitively), which different readers
  resolve differently;
* archives with too many members, too many uncompressed bytes in total — an absolute
  ceiling, and a ceiling proportional to the archive's own size — or a member whose
  compression ratio is absurd (a "zip bomb"). The work of the check is bounded by these
  declared sizes: the reader never inflates more than a member declares, so any file is
  decided after at most ``max_total_ratio`` bytes of inflation per byte of archive;
* damaged members: a bad CRC-32, a size header that does not match the data, an encryption
  flag, an unsupported compression method;
* XML parts that declare a DTD or entities (entity-expansion and external-entity attacks).
  Entities can only be declared in a document type declaration, which must come before the
  root element, so each XML part is parsed (expat) up to its root element only: the check
  costs the same for a 1 KiB part and a 100 MiB one.

Macros are never run: a ``.xlsm``'s VBA project is carried over byte for byte and
nothing in it is executed. Formula ranges are capped separately (see ``engine``).
"""

from __future__ import annotations

import struct
import zipfile
import zlib
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from xml.parsers import expat

from ..errors import WorkbookError

__all__ = ["Archive", "Limits", "check_archive", "read_archive"]


@dataclass(frozen=True)
class Limits:
    """Ceilings for workbooks from elsewhere (all generous for real calculation books)."""

    max_members: int = 10_000
    max_total_bytes: int = 512 * 2**20  # uncompressed, whatever the archive's size
    max_ratio: float = 200.0  # uncompressed / compressed, for members above ratio_floor
    ratio_floor: int = 64 * 2**10
    max_total_ratio: float = 100.0  # total uncompressed / archive size, above total_floor
    total_floor: int = 32 * 2**20
    max_range_cells: int = 1_000_000  # cells one argument of our functions may pull in


DEFAULT_LIMITS = Limits()

_CFB_MAGIC = bytes.fromhex("D0CF11E0A1B11AE1")
_TO_EXCEL = "open it in Excel (or LibreOffice) and save it as an Excel Workbook (.xlsx)"


@dataclass
class Archive:
    """The verified members of a workbook archive, in archive order."""

    path: str
    infos: list[zipfile.ZipInfo]
    data: dict[str, bytes] = field(repr=False)


# --------------------------------------------------------------------- not a zip
def _cfb_stream_names(head: bytes, read_at: Callable[[int, int], bytes]) -> set[str] | None:
    """Names in an OLE compound file's directory ([MS-CFB] §2.2 header, §2.3 FAT,
    §2.6 directory entries); None when the structure does not hold together. Reads at most
    the first 109 FAT sectors' worth and 256 directory sectors: enough to tell what it is."""
    try:
        shift = struct.unpack_from("<H", head, 30)[0]
        if shift not in (9, 12):
            return None
        size = 1 << shift
        n_fat, first_dir = struct.unpack_from("<II", head, 44)
        difat = struct.unpack_from("<109I", head, 76)[: min(n_fat, 109)]
        fat: list[int] = []
        for s in difat:
            block = read_at(size + s * size, size)
            if len(block) < size:
                return None
            fat.extend(struct.unpack(f"<{size // 4}I", block))
        names: set[str] = set()
        sector, seen = first_dir, 0
        while sector < 0xFFFFFFFA and seen < 256:
            block = read_at(size + sector * size, size)
            if len(block) < size:
                return None
            for k in range(0, size, 128):
                e = block[k : k + 128]
                n_len, kind = struct.unpack_from("<HB", e, 64)
                if kind in (1, 2, 5) and 2 <= n_len <= 64:
                    names.add(e[: n_len - 2].decode("utf-16-le", "replace"))
            sector = fat[sector] if sector < len(fat) else 0xFFFFFFFE
            seen += 1
        return names
    except (struct.error, UnicodeDecodeError, IndexError):
        return None


def _not_a_zip(p: str, head: bytes) -> WorkbookError:
    """What a file that is not a zip archive is, and what to do with it."""
    if head.startswith(_CFB_MAGIC):
        with open(p, "rb") as fh:

            def read_at(offset: int, n: int) -> bytes:
                fh.seek(offset)
                return fh.read(n)

            names = _cfb_stream_names(fh.read(512), read_at) or set()
        if {"EncryptionInfo", "EncryptedPackage"} & names:
            return WorkbookError(
                p,
                "a password-protected (encrypted) workbook: its contents cannot be read "
                "without the password; open it in Excel, clear the password (File > Info > "
                "Protect Workbook > Encrypt with Password) and save a copy to recalculate",
            )
        if {"Workbook", "Book"} & names:
            return WorkbookError(
                p, f"a legacy binary Excel workbook (.xls), not .xlsx/.xlsm: {_TO_EXCEL}"
            )
        return WorkbookError(
            p, f"an OLE compound document, not an Excel workbook (.xlsx/.xlsm): {_TO_EXCEL}"
        )
    stripped = head.lstrip(b"\xef\xbb\xbf \t\r\n").lower()
    if stripped.startswith((b"<?xml", b"<html", b"<!doctype", b"<table")):
        return WorkbookError(
            p,
            "an XML or HTML file with a workbook's name, not an .xlsx/.xlsm archive: " + _TO_EXCEL,
        )
    if not head:
        return WorkbookError(p, "empty file, not a workbook")
    return WorkbookError(
        p, f"not a workbook (an .xlsx/.xlsm file is a zip archive; this one starts {head[:8]!r})"
    )


# ------------------------------------------------------------------------ XML
class _RootReached(Exception):
    pass


class _Declared(Exception):
    pass


def _check_prolog(raw: bytes) -> str | None:
    """None when the XML's prolog declares no DTD and no entity (parsed up to the root
    element only); otherwise what was found."""
    parser = expat.ParserCreate()

    def doctype(*_a: object) -> None:
        raise _Declared("a DTD")

    def entity(*_a: object) -> None:
        raise _Declared("an entity declaration")

    def root(*_a: object) -> None:
        raise _RootReached

    parser.StartDoctypeDeclHandler = doctype
    parser.EntityDeclHandler = entity
    parser.StartElementHandler = root
    step = 1 << 16
    try:
        for i in range(0, len(raw), step):
            parser.Parse(raw[i : i + step], False)
        parser.Parse(b"", True)
    except _RootReached:
        return None
    except _Declared as exc:
        return str(exc)
    except expat.ExpatError as exc:
        return f"malformed XML ({exc})"
    return "malformed XML (no root element)"


def _looks_like_xml(raw: bytes) -> bool:
    head = raw[:64]
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):  # UTF-16 text
        return True
    return head.lstrip(b"\xef\xbb\xbf \t\r\n").startswith(b"<")


# ---------------------------------------------------------------------- reading
def _read_member(p: str, zf: zipfile.ZipFile, info: zipfile.ZipInfo) -> bytes:
    try:
        with zf.open(info) as fh:
            raw = fh.read(info.file_size + 1)
    except RuntimeError:  # the encryption flag
        raise WorkbookError(
            p,
            "damaged archive: the member is flagged as encrypted (a workbook's parts never "
            "are; a password-protected workbook is not a zip archive at all)",
            info.filename,
        ) from None
    except NotImplementedError as exc:
        raise WorkbookError(
            p, f"unsupported compression in the archive ({exc})", info.filename
        ) from None
    except (zipfile.BadZipFile, EOFError, zlib.error, OSError, ValueError) as exc:
        raise WorkbookError(
            p, f"damaged archive: {exc} (a truncated or corrupted copy?)", info.filename
        ) from None
    if len(raw) != info.file_size:
        raise WorkbookError(
            p,
            f"damaged archive: the size header says {info.file_size} bytes, the data holds "
            f"{len(raw)}",
            info.filename,
        )
    return raw


def read_archive(path: str | Path, limits: Limits = DEFAULT_LIMITS) -> Archive:
    """Read and verify every member of a workbook; raise :class:`WorkbookError` unless it
    is a sane, non-hostile ``.xlsx``/``.xlsm``."""
    p = str(path)
    fp = Path(p)
    if fp.is_dir():
        raise WorkbookError(p, "is a directory, not a workbook")
    if not fp.is_file():
        raise WorkbookError(p, "no such file")
    try:
        archive_bytes = fp.stat().st_size
        with fp.open("rb") as fh:
            head = fh.read(512)
    except OSError as exc:
        raise WorkbookError(p, f"cannot read: {exc.strerror or exc}") from None
    if not head.startswith(b"PK"):
        raise _not_a_zip(p, head)
    try:
        zf = zipfile.ZipFile(p)
    except (zipfile.BadZipFile, OSError, ValueError, EOFError) as exc:
        raise WorkbookError(
            p, f"damaged workbook: its zip directory cannot be read ({exc}); a truncated copy?"
        ) from None
    with zf:
        infos = zf.infolist()
        if len(infos) > limits.max_members:
            raise WorkbookError(
                p, f"refused: {len(infos)} parts in the archive (limit {limits.max_members})"
            )
        seen: dict[str, str] = {}
        for i in infos:
            key = i.filename.casefold()
            if key in seen:
                raise WorkbookError(
                    p,
                    "refused: two archive members share the name "
                    f"{i.filename!r} (readers would disagree about which one counts)",
                )
            seen[key] = i.filename
        names = {i.filename for i in infos}
        if "mimetype" in names and _read_member(p, zf, zf.getinfo("mimetype")).startswith(
            b"application/vnd.oasis.opendocument"
        ):
            raise WorkbookError(
                p, f"an OpenDocument spreadsheet (.ods) with an .xlsx name: {_TO_EXCEL}"
            )
        if "xl/workbook.bin" in names:
            raise WorkbookError(
                p, "a binary workbook (.xlsb): save it as .xlsx or .xlsm in Excel to recalculate"
            )
        if "[Content_Types].xml" not in names or "xl/workbook.xml" not in names:
            raise WorkbookError(p, "not an Excel workbook (no xl/workbook.xml in the archive)")
        total = sum(i.file_size for i in infos)
        ceiling = min(
            limits.max_total_bytes, max(limits.total_floor, limits.max_total_ratio * archive_bytes)
        )
        if total > ceiling:
            raise WorkbookError(
                p,
                f"refused: {total / 2**20:.0f} MiB uncompressed from a "
                f"{archive_bytes / 2**20:.2f} MiB archive (limit {ceiling / 2**20:.0f} MiB: "
                f"{limits.max_total_ratio:.0f}× the archive, at least "
                f"{limits.total_floor / 2**20:.0f} MiB, at most "
                f"{limits.max_total_bytes / 2**20:.0f} MiB)",
            )
        for i in infos:
            if i.file_size > limits.ratio_floor and i.file_size > limits.max_ratio * max(
                i.compress_size, 1
            ):
                raise WorkbookError(
                    p,
                    f"refused: compression ratio {i.file_size / max(i.compress_size, 1):.0f}:1 "
                    f"(limit {limits.max_ratio:.0f}:1), a zip bomb",
                    i.filename,
                )
        data: dict[str, bytes] = {}
        for i in infos:
            raw = _read_member(p, zf, i)
            if _looks_like_xml(raw):
                found = _check_prolog(raw)
                if found is not None and not found.startswith("malformed"):
                    raise WorkbookError(
                        p,
                        f"refused: XML with {found} (entity expansion is not allowed)",
                        i.filename,
                    )
                if found is not None and i.filename.endswith((".xml", ".rels")):
                    raise WorkbookError(p, found, i.filename)
            data[i.filename] = raw
    return Archive(p, infos, data)


def check_archive(path: str | Path, limits: Limits = DEFAULT_LIMITS) -> None:
    """Raise :class:`WorkbookError` unless ``path`` is a sane, non-hostile workbook."""
    read_archive(path, limits)
