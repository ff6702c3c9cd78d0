"""Reading and writing the parts of a workbook package that recalculation touches.

Writing never goes through a spreadsheet library's save (an openpyxl load/save drops the
dynamic-array metadata and writes no cached values). Instead the input archive is copied
member by member, byte for byte, and only the ``<sheetData>`` of changed worksheets is
edited in place: cached values (``<v>``) of formula cells, the values of spilled cells,
the ``ref`` of spilling formulas, and the ``<dimension>``. Styles, number formats, widths,
merged cells, charts, defined names, a ``.xlsm``'s VBA project and the dynamic-array
metadata all pass through untouched. Output is written to a temporary file, flushed to
disk, renamed over the target and the directory flushed, so a crash leaves either the old
file or the complete new one. Every member copied was read and CRC-checked by
:func:`~.safety.read_archive`.

The copy drops ``fullCalcOnLoad`` and raises ``calcId`` in ``<calcPr>``: its cached values
are current, and a spreadsheet program that recalculates everything on load (it does when
asked to, or when the file's ``calcId`` is lower than its own engine's identifier:
[MS-XLS] §2.4.215, ECMA-376 Part 1 §18.2.2) would turn every ``CKT_`` cell into ``#NAME?``
where the add-in is not loaded.
"""

from __future__ import annotations

import errno
import io
import math
import os
import re
import stat
import tempfile
import zipfile
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path, PurePosixPath
from typing import IO, Any
from xml.sax.saxutils import escape, unescape

from defusedxml.ElementTree import fromstring

from ..errors import WorkbookError
from .cells import cell_ref, col_index, parse_range
from .engine import CellError
from .safety import DEFAULT_LIMITS, Archive, Limits, read_archive

__all__ = [
    "FormulaCell",
    "Package",
    "SheetXml",
    "cells_of",
    "check_output_file",
    "fsync_dir",
    "output_error",
    "write_atomic",
]

CALC_ID = "999999"  # above every released engine identifier (124519 = 2007, 145621 = 2010)
_UNESCAPE = {"&quot;": '"', "&apos;": "'"}

_NS_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_NS_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_NS_PKG_REL = "http://schemas.openxmlformats.org/package/2006/relationships"
_ATTR = re.compile(r'([\w:]+)\s*=\s*"([^"]*)"')

_METADATA_XML = (
    '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
    '<metadata xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
    'xmlns:xda="http://schemas.microsoft.com/office/spreadsheetml/2017/dynamicarray">'
    '<metadataTypes count="1"><metadataType name="XLDAPR" minSupportedVersion="120000" '
    'copy="1" pasteAll="1" pasteValues="1" merge="1" splitFirst="1" rowColShift="1" '
    'clearFormats="1" clearComments="1" assign="1" coerce="1" cellMeta="1"/></metadataTypes>'
    '<futureMetadata name="XLDAPR" count="1"><bk><extLst>'
    '<ext uri="{bdbb8cdc-fa1e-496e-a857-3c3f30c029c3}">'
    '<xda:dynamicArrayProperties fDynamic="1" fCollapsed="0"/></ext></extLst></bk>'
    '</futureMetadata><cellMetadata count="1"><bk><rc t="1" v="0"/></bk></cellMetadata>'
    "</metadata>"
)


def _attrs(tag: str) -> dict[str, str]:
    return dict(_ATTR.findall(tag))


_ref = cell_ref
_CELL_COL = re.compile(r"\$?([A-Za-z]{1,3})\$?\d+")


@dataclass
class FormulaCell:
    row: int
    col: int
    f_type: str  # "", "array", "shared", "dataTable"
    f_ref: str  # the f element's ref (array/shared), "" otherwise
    cm: str  # the cell's cell-metadata index, "" when none


@dataclass
class _Row:
    attrs: str  # the row's attribute text, as found
    cells: dict[int, str] = field(default_factory=dict)  # col -> full <c> element


@lru_cache(maxsize=8)
def _patterns(prefix: str) -> dict[str, re.Pattern[str]]:
    p = re.escape(prefix)
    return {
        "row": re.compile(rf"<{p}row\b([^>]*?)(?:/>|>(.*?)</{p}row>)", re.S),
        "c": re.compile(rf"<{p}c\b([^>]*?)(?:/>|>(.*?)</{p}c>)", re.S),
        "f_open": re.compile(rf"<{p}f\b([^>]*?)(?:/>|>)"),
        "f_text": re.compile(rf"(<{p}f\b[^>]*?>)(.*?)(</{p}f>)", re.S),
        "f_any": re.compile(rf"<{p}f[\s/>]"),
        "f_elem": re.compile(rf"<{p}f\b[^>]*?(?:/>|>.*?</{p}f>)", re.S),
        "ext": re.compile(rf"<{p}extLst\b.*?</{p}extLst>", re.S),
        "r_attr": re.compile(r'\sr="([^"]*)"'),
    }


class SheetXml:
    """One worksheet's XML with an editable ``<sheetData>``."""

    def __init__(self, xml: str, part: str) -> None:
        self.part = part
        m = re.search(r"<(\w+:)?sheetData\b[^>]*?(?:/>|>(.*?)</\1?sheetData>)", xml, re.S)
        if m is None:
            raise WorkbookError(part, "worksheet without sheetData")
        self.prefix = m.group(1) or ""
        self._pat = _patterns(self.prefix)
        self._head, self._tail = xml[: m.start()], xml[m.end() :]
        self._open = f"<{self.prefix}sheetData>"
        self.rows: dict[int, _Row] = {}
        self._changed_rows: set[int] = set()
        self._formulas: set[tuple[int, int]] = set()
        body = m.group(2) or ""
        next_row = 1
        f_any, r_attr = self._pat["f_any"], self._pat["r_attr"]
        for rm in self._pat["row"].finditer(body):
            ra = r_attr.search(rm.group(1))
            r = int(ra.group(1)) if ra else next_row
            next_row = r + 1
            row = _Row(rm.group(1))
            next_col = 1
            for cm_ in self._pat["c"].finditer(rm.group(2) or ""):
                ca = r_attr.search(cm_.group(1))
                cm = _CELL_COL.match(ca.group(1)) if ca else None
                c = col_index(cm.group(1)) if cm else next_col
                next_col = c + 1
                cell = cm_.group(0)
                row.cells[c] = cell
                if f_any.search(cell):
                    self._formulas.add((r, c))
            self.rows[r] = row

    def copy(self) -> SheetXml:
        """An independent copy (edits to one do not show in the other)."""
        new = object.__new__(SheetXml)
        new.__dict__.update(self.__dict__)
        new.rows = {r: _Row(row.attrs, dict(row.cells)) for r, row in self.rows.items()}
        new._changed_rows = set(self._changed_rows)
        new._formulas = set(self._formulas)
        return new

    # ---------------------------------------------------------------------- reading
    def formula_cells(self) -> list[FormulaCell]:
        out = []
        f_open = self._pat["f_open"]
        for r, c in sorted(self._formulas):
            cell = self.rows[r].cells[c]
            fm = f_open.search(cell)
            if fm is None:
                continue
            fa = _attrs(fm.group(1))
            ca = _attrs(cell[: cell.index(">")])
            out.append(FormulaCell(r, c, fa.get("t", ""), fa.get("ref", ""), ca.get("cm", "")))
        return out

    def formula_texts(self) -> list[tuple[int, int, str]]:
        """(row, col, formula text without '=') of every formula cell that holds text."""
        out = []
        f_text = self._pat["f_text"]
        for r, c in sorted(self._formulas):
            fm = f_text.search(self.rows[r].cells[c])
            if fm and fm.group(2):
                out.append((r, c, unescape(fm.group(2), _UNESCAPE)))
        return out

    def replace_formula_text(self, row: int, col: int, text: str) -> None:
        """Replace a formula cell's formula text (the cell keeps everything else)."""
        cell = self.rows[row].cells[col]
        fm = self._pat["f_text"].search(cell)
        if fm is None:
            raise KeyError((row, col))
        new = fm.group(1) + escape(text) + fm.group(3)
        self.rows[row].cells[col] = cell[: fm.start()] + new + cell[fm.end() :]
        self._changed_rows.add(row)

    def used_extent(self) -> tuple[int, int]:
        """(last row, last column) holding a cell; (0, 0) for an empty sheet."""
        rows = [r for r, row in self.rows.items() if row.cells]
        if not rows:
            return 0, 0
        return max(rows), max(max(row.cells) for row in self.rows.values() if row.cells)

    def has_formula(self, row: int, col: int) -> bool:
        return (row, col) in self._formulas

    # ---------------------------------------------------------------------- writing
    def _value_xml(self, value: Any, formula: bool) -> tuple[str | None, str]:
        """(t attribute or None, inner XML) for a cached value."""
        p = self.prefix
        if isinstance(value, CellError):
            return "e", f"<{p}v>{escape(value.code)}</{p}v>"
        if isinstance(value, bool):
            return "b", f"<{p}v>{int(value)}</{p}v>"
        if isinstance(value, (int, float)):
            x = float(value)
            if not math.isfinite(x):
                return "e", f"<{p}v>#NUM!</{p}v>"
            return None, f"<{p}v>{x!r}</{p}v>"
        if value is None:
            return ("str", f"<{p}v></{p}v>") if formula else (None, "")
        text = escape(str(value))
        if formula:
            return "str", f"<{p}v>{text}</{p}v>"
        return "inlineStr", f'<{p}is><{p}t xml:space="preserve">{text}</{p}t></{p}is>'

    def set_formula_value(
        self, row: int, col: int, value: Any, spill_ref: str | None = None, cm: str | None = None
    ) -> None:
        """Refresh a formula cell's cached value; for a spilling anchor set its ``ref``
        (and the dynamic-array cell-metadata index ``cm`` when given)."""
        cell = self.rows[row].cells[col]
        open_end = cell.index(">")
        self_closing = cell[open_end - 1] == "/"
        open_tag = cell[: open_end - 1 if self_closing else open_end]
        inner = "" if self_closing else cell[open_end + 1 : cell.rindex("<")]
        fm = self._pat["f_elem"].search(inner)
        f_xml = fm.group(0) if fm else ""
        ext = self._pat["ext"].search(inner)
        if spill_ref is not None and f_xml:
            ftag_end = f_xml.index(">")
            ftag = f_xml[:ftag_end]
            selfc = ftag.endswith("/")
            ftag = ftag.rstrip("/")
            ftag = re.sub(r'\s(t|ref)="[^"]*"', "", ftag)
            ftag += f' t="array" ref="{spill_ref}"'
            f_xml = ftag + ("/>" if selfc else f_xml[ftag_end:])
        t, v_xml = self._value_xml(value, formula=True)
        open_tag = re.sub(r'\st="[^"]*"', "", open_tag)
        if cm is not None:
            open_tag = re.sub(r'\scm="[^"]*"', "", open_tag) + f' cm="{cm}"'
        if t:
            open_tag += f' t="{t}"'
        self.rows[row].cells[col] = (
            f"{open_tag}>{f_xml}{v_xml}{ext.group(0) if ext else ''}</{self.prefix}c>"
        )
        self._changed_rows.add(row)

    def set_value(self, row: int, col: int, value: Any) -> None:
        """Write a plain (non-formula) value, keeping the cell's style."""
        pfx = self.prefix
        row_obj = self.rows.setdefault(row, _Row(f' r="{row}"'))
        old = row_obj.cells.get(col)
        style = ""
        if old is not None:
            s = _attrs(old[: old.index(">")]).get("s")
            style = f' s="{s}"' if s else ""
        t, inner = self._value_xml(value, formula=False)
        t_attr = f' t="{t}"' if t else ""
        if inner:
            row_obj.cells[col] = f'<{pfx}c r="{_ref(row, col)}"{style}{t_attr}>{inner}</{pfx}c>'
        elif style:
            row_obj.cells[col] = f'<{pfx}c r="{_ref(row, col)}"{style}/>'
        else:
            row_obj.cells.pop(col, None)
        self._formulas.discard((row, col))
        self._changed_rows.add(row)

    def render(self) -> str:
        parts = []
        for r in sorted(self.rows):
            row = self.rows[r]
            attrs = row.attrs
            if r in self._changed_rows:
                attrs = re.sub(r'\sspans="[^"]*"', "", attrs)  # an optional hint; now stale
            if not row.cells:
                parts.append(f"<{self.prefix}row{attrs}/>")
                continue
            cells = "".join(row.cells[c] for c in sorted(row.cells))
            parts.append(f"<{self.prefix}row{attrs}>{cells}</{self.prefix}row>")
        body = f"{self._open}{''.join(parts)}</{self.prefix}sheetData>"
        head = self._head
        used = [(r, c) for r, row in self.rows.items() for c in row.cells]
        if used:
            r1, r2 = min(u[0] for u in used), max(u[0] for u in used)
            c1, c2 = min(u[1] for u in used), max(u[1] for u in used)
            dim = f"{_ref(r1, c1)}:{_ref(r2, c2)}" if (r1, c1) != (r2, c2) else _ref(r1, c1)
            head = re.sub(
                rf'(<{re.escape(self.prefix)}dimension\b[^>]*\sref=")[^"]*(")',
                rf"\g<1>{dim}\g<2>",
                head,
            )
        return head + body + self._tail


class Package:
    """The parts of a workbook archive, read once; edits are collected, then written."""

    def __init__(self, source: str | Path | Archive, limits: Limits = DEFAULT_LIMITS) -> None:
        archive = source if isinstance(source, Archive) else read_archive(source, limits)
        self.path = archive.path
        self.infos = archive.infos
        self.data = archive.data  # shared, never modified: edits go to ``replaced``
        self.replaced: dict[str, bytes] = {}
        self.sheet_paths = self._sheet_paths()
        self._sheets: dict[str, SheetXml] = {}

    def copy(self) -> Package:
        """An independent copy sharing the verified member bytes (sheets already parsed are
        copied, not parsed again)."""
        new = object.__new__(Package)
        new.path, new.infos, new.data = self.path, self.infos, self.data
        new.sheet_paths = self.sheet_paths
        new.replaced = dict(self.replaced)
        new._sheets = {k: v.copy() for k, v in self._sheets.items()}
        return new

    def parse_all(self) -> Package:
        """Parse every worksheet now (so that copies share the work)."""
        for name in self.sheet_paths:
            self.sheet(name)
        return self

    def _xml(self, name: str) -> Any:
        try:
            return fromstring(self.data[name])
        except Exception as exc:  # malformed XML in a part we need
            raise WorkbookError(self.path, f"malformed XML: {exc}", name) from None

    def _sheet_paths(self) -> dict[str, str]:
        wb = self._xml("xl/workbook.xml")
        rels_name = "xl/_rels/workbook.xml.rels"
        targets: dict[str, str] = {}
        if rels_name in self.data:
            for rel in self._xml(rels_name):
                t = rel.get("Target", "")
                path = t.lstrip("/") if t.startswith("/") else str(PurePosixPath("xl") / t)
                targets[rel.get("Id", "")] = os.path.normpath(path).replace(os.sep, "/")
        out = {}
        sheets = wb.find(f"{{{_NS_MAIN}}}sheets")
        for s in sheets if sheets is not None else []:
            rid = s.get(f"{{{_NS_REL}}}id", "")
            if rid in targets and targets[rid] in self.data:
                out[s.get("name", "")] = targets[rid]
        return out

    def sheet(self, name: str) -> SheetXml:
        if name not in self._sheets:
            part = self.sheet_paths.get(name)
            if part is None:
                raise WorkbookError(self.path, f"no worksheet named {name!r}")
            try:
                text = self.data[part].decode("utf-8")
            except UnicodeDecodeError:
                raise WorkbookError(self.path, "worksheet XML is not UTF-8", part) from None
            self._sheets[name] = SheetXml(text, part)
        return self._sheets[name]

    def defined_names(self) -> dict[str, tuple[str, str | None]]:
        """Defined names (lower-cased) → (reference text, sheet of a sheet-local name)."""
        wb = self._xml("xl/workbook.xml")
        sheets = wb.find(f"{{{_NS_MAIN}}}sheets")
        order = [s.get("name", "") for s in (sheets if sheets is not None else [])]
        out: dict[str, tuple[str, str | None]] = {}
        names = wb.find(f"{{{_NS_MAIN}}}definedNames")
        for dn in names if names is not None else []:
            local = dn.get("localSheetId")
            scope = (
                order[int(local)]
                if local is not None and local.isdigit() and int(local) < len(order)
                else None
            )
            out.setdefault((dn.get("name") or "").lower(), (dn.text or "", scope))
        return out

    def keep_cached_values_on_load(self) -> None:
        """Make the copy's ``<calcPr>`` ask for no recalculation on load (see the module
        docstring): drop ``fullCalcOnLoad``, raise ``calcId``."""
        name = "xl/workbook.xml"
        xml = self.replaced.get(name, self.data[name]).decode("utf-8")
        m = re.search(r"<(\w+:)?calcPr\b[^>]*?/?>", xml)
        if m is None:
            return
        tag = m.group(0)
        new = re.sub(r'\sfullCalcOnLoad="[^"]*"', "", tag)
        if re.search(r'\scalcId="', new):
            new = re.sub(
                r'\scalcId="(\d*)"',
                lambda k: f' calcId="{max(int(k.group(1) or 0), int(CALC_ID))}"',
                new,
            )
        else:
            end = -2 if new.endswith("/>") else -1
            new = new[:end] + f' calcId="{CALC_ID}"' + new[end:]
        if new != tag:
            self.replaced[name] = (xml[: m.start()] + new + xml[m.end() :]).encode("utf-8")

    # --------------------------------------------------------------- dynamic arrays
    def dynamic_array_cm(self, create: bool) -> str | None:
        """The cell-metadata index that marks a dynamic-array formula (adding the
        metadata part when ``create`` and there is none)."""
        name = "xl/metadata.xml"
        raw = self.replaced.get(name, self.data.get(name))
        if raw is not None:
            root = fromstring(raw)
            types = root.find(f"{{{_NS_MAIN}}}metadataTypes")
            names = [t.get("name") for t in (types if types is not None else [])]
            if "XLDAPR" not in names:
                return None
            type_idx = str(names.index("XLDAPR") + 1)
            cells = root.find(f"{{{_NS_MAIN}}}cellMetadata")
            for k, bk in enumerate(cells if cells is not None else []):
                for rc in bk:
                    if rc.get("t") == type_idx:
                        return str(k + 1)
            return None
        if not create:
            return None
        self.replaced[name] = _METADATA_XML.encode("utf-8")
        ct = self.replaced.get("[Content_Types].xml", self.data["[Content_Types].xml"]).decode(
            "utf-8"
        )
        if "/xl/metadata.xml" not in ct:
            ct = ct.replace(
                "</Types>",
                '<Override PartName="/xl/metadata.xml" ContentType="application/'
                'vnd.openxmlformats-officedocument.spreadsheetml.sheetMetadata+xml"/></Types>',
            )
            self.replaced["[Content_Types].xml"] = ct.encode("utf-8")
        rels_name = "xl/_rels/workbook.xml.rels"
        rels = self.replaced.get(rels_name, self.data[rels_name]).decode("utf-8")
        if "sheetMetadata" not in rels:
            ids = {int(m) for m in re.findall(r'Id="rId(\d+)"', rels)}
            rid = f"rId{max(ids, default=0) + 1}"
            rels = rels.replace(
                "</Relationships>",
                f'<Relationship Id="{rid}" Type="http://schemas.openxmlformats.org/'
                'officeDocument/2006/relationships/sheetMetadata" Target="metadata.xml"/>'
                "</Relationships>",
            )
            self.replaced[rels_name] = rels.encode("utf-8")
        return "1"

    def drop_cached_spills(self) -> None:
        """Remove the cached values of spilled cells (plain cells inside an array
        formula's ``ref``), leaving every formula in place. The formula engine would take
        them for user values that block the spill; Excel knows them as the formula's output."""
        for name in self.sheet_paths:
            sx = self.sheet(name)
            for fc in sx.formula_cells():
                if fc.f_type != "array" or ":" not in fc.f_ref:
                    continue
                for r, c in cells_of(fc.f_ref) - {(fc.row, fc.col)}:
                    if not sx.has_formula(r, c) and r in sx.rows:
                        sx.rows[r].cells.pop(c, None)

    # ------------------------------------------------------------------------ write
    def _members(self) -> list[tuple[zipfile.ZipInfo | str, bytes]]:
        for sx in self._sheets.values():
            self.replaced[sx.part] = sx.render().encode("utf-8")
        members: list[tuple[zipfile.ZipInfo | str, bytes]] = []
        for info in self.infos:
            members.append((info, self.replaced.get(info.filename, self.data[info.filename])))
        known = {i.filename for i in self.infos}
        for name, raw in self.replaced.items():
            if name not in known:
                members.append((name, raw))
        return members

    def write(self, out_path: str | Path) -> None:
        self.keep_cached_values_on_load()
        write_atomic(out_path, self._members())

    def to_bytes(self) -> bytes:
        """The package as archive bytes for the formula engine (stored, not compressed:
        nothing is written to disk and inflating is work saved)."""
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w", zipfile.ZIP_STORED) as zf:
            for info, raw in self._members():
                name = info.filename if isinstance(info, zipfile.ZipInfo) else info
                zf.writestr(name, raw)
        return buf.getvalue()


def cells_of(ref: str) -> set[tuple[int, int]]:
    """Every (row, col) of an A1 range reference."""
    if not ref:
        return set()
    r1, c1, r2, c2 = parse_range(ref)
    return {(r, c) for r in range(int(r1), int(r2) + 1) for c in range(int(c1), int(c2) + 1)}


def fsync_dir(path: str | Path) -> None:
    """Flush a directory entry (a new or renamed file) to disk; a no-op where the platform
    cannot open directories (Windows)."""
    try:
        fd = os.open(str(path), os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


_HINTS = {
    errno.EISDIR: "it is a directory; give a file name",
    errno.ENOTDIR: "a part of the path is a file, not a directory",
    errno.EACCES: "no permission to write there; choose another place",
    errno.EPERM: "no permission to write there; choose another place",
    errno.EROFS: "the file system is read-only; choose another place",
    errno.ENOSPC: "the disk is full; free some space and run again",
    errno.EFBIG: "the disk is full or a file-size limit was reached; free space and run again",
    errno.EDQUOT: "the disk quota is exhausted; free some space and run again",
    errno.ENAMETOOLONG: "the file name is too long",
    errno.EEXIST: "a part of the path exists and is not a directory",
}


def output_error(path: str | Path, exc: OSError, what: str = "cannot write") -> WorkbookError:
    """A one-line error for a file that cannot be written, saying what to do."""
    hint = _HINTS.get(exc.errno or 0, "")
    reason = exc.strerror or str(exc)
    return WorkbookError(str(path), f"{what}: {reason}" + (f" ({hint})" if hint else ""))


def check_output_file(out_path: str | Path) -> None:
    """Refuse, before any work, an output path that cannot be a new file."""
    out = Path(out_path)
    if out.is_dir():
        raise WorkbookError(str(out), "is a directory; give a file name for the output")
    for parent in out.parents:
        if parent.exists():
            if not parent.is_dir():
                raise WorkbookError(
                    str(out), f"cannot write there: {str(parent)!r} is a file, not a directory"
                )
            break


def _current_umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


# read once at import (reading it means setting it, which is not safe while other threads
# create files); a process changes its umask rarely, and never in this package
_UMASK = _current_umask()


def _new_file_mode(path: Path) -> int:
    """The mode a file written at ``path`` should have: the mode of the file it replaces,
    else what ``open()`` would give (0o666 less the umask) — not ``mkstemp``'s 0o600."""
    try:
        return stat.S_IMODE(path.stat().st_mode)
    except OSError:
        return 0o666 & ~_UMASK


def write_file_atomic(path: str | Path, write: Callable[[IO[bytes]], None]) -> None:
    """Write a file through a temporary file beside ``path``: ``write(fh)`` fills it, then it
    is flushed to disk, given the mode of the file it replaces (else the umask's default),
    renamed over ``path`` and the directory flushed — a crash leaves the old file or the new
    one. Any OS failure is one :class:`WorkbookError` and leaves nothing behind."""
    out = Path(path)
    tmp: str | None = None
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{out.name}.", suffix=".tmp", dir=out.parent)
        with os.fdopen(fd, "wb") as fh:
            write(fh)
            fh.flush()
            os.chmod(tmp, _new_file_mode(out))
            os.fsync(fh.fileno())
        os.replace(tmp, out)
        tmp = None
        fsync_dir(out.parent)
    except OSError as exc:
        raise output_error(out, exc) from None
    finally:
        if tmp is not None:
            Path(tmp).unlink(missing_ok=True)


def write_atomic(
    out_path: str | Path, members: Iterable[tuple[zipfile.ZipInfo | str, bytes]]
) -> None:
    """Write a zip archive atomically at ``out_path`` (:func:`write_file_atomic`), after
    checking that the path can take a file."""
    out = Path(out_path)
    check_output_file(out)

    def write(fh: IO[bytes]) -> None:
        with zipfile.ZipFile(fh, "w", zipfile.ZIP_DEFLATED) as zf:
            for info, raw in members:
                if isinstance(info, zipfile.ZipInfo):
                    zf.writestr(info, raw, compress_type=info.compress_type)
                else:
                    zf.writestr(info, raw)

    write_file_atomic(out, write)
