"""Checks on workbooks from elsewhere, before anything parses them.

A workbook is a zip archive of XML parts. Refused, each with a one-line message:

* anything that is not a readable zip archive;
* archives with too many members, an absurd total uncompressed size, or a member whose
  compression ratio is absurd (a "zip bomb");
* XML parts that declare a DTD or entities (entity-expansion attacks), checked with
  ``defusedxml``, which refuses them outright.

Macros are never run: a ``.xlsm``'s VBA project is carried over byte for byte and
nothing in it is executed. Formula ranges are capped separately (see ``engine``).
"""

from __future__ import annotations

import zipfile
from dataclasses import dataclass
from pathlib import Path

from defusedxml import DefusedXmlException
from defusedxml.ElementTree import fromstring

from ..errors import WorkbookError

__all__ = ["Limits", "check_archive"]


@dataclass(frozen=True)
class Limits:
    """Ceilings for workbooks from elsewhere (all generous for real calculation books)."""

    max_members: int = 10_000
    max_total_bytes: int = 512 * 2**20  # uncompressed
    max_ratio: float = 200.0  # uncompressed / compressed, for members above 1 MiB
    max_range_cells: int = 1_000_000  # cells one argument of our functions may pull in


DEFAULT_LIMITS = Limits()


def check_archive(path: str | Path, limits: Limits = DEFAULT_LIMITS) -> None:
    """Raise :class:`WorkbookError` unless ``path`` is a sane, non-hostile workbook."""
    p = str(path)
    if not Path(p).is_file():
        raise WorkbookError(p, "no such file")
    try:
        zf = zipfile.ZipFile(p)
    except (zipfile.BadZipFile, OSError) as exc:
        raise WorkbookError(p, f"not a workbook (.xlsx/.xlsm is a zip archive): {exc}") from None
    with zf:
        infos = zf.infolist()
        if len(infos) > limits.max_members:
            raise WorkbookError(
                p, f"refused: {len(infos)} parts in the archive (limit {limits.max_members})"
            )
        total = sum(i.file_size for i in infos)
        if total > limits.max_total_bytes:
            raise WorkbookError(
                p,
                f"refused: {total / 2**20:.0f} MiB uncompressed (limit {limits.max_total_bytes / 2**20:.0f} MiB)",
            )
        for i in infos:
            if i.file_size > 2**20 and i.file_size > limits.max_ratio * max(i.compress_size, 1):
                raise WorkbookError(
                    p,
                    f"refused: compression ratio {i.file_size / max(i.compress_size, 1):.0f}:1 "
                    f"(limit {limits.max_ratio:.0f}:1), a zip bomb",
                    i.filename,
                )
        names = {i.filename for i in infos}
        if "[Content_Types].xml" not in names or "xl/workbook.xml" not in names:
            raise WorkbookError(p, "not an Excel workbook (no xl/workbook.xml in the archive)")
        for i in infos:
            if i.filename.endswith((".xml", ".rels", ".vml")):
                try:
                    fromstring(zf.read(i))
                except DefusedXmlException as exc:
                    raise WorkbookError(
                        p,
                        f"refused: XML with a DTD or entity declarations ({type(exc).__name__})",
                        i.filename,
                    ) from None
                except Exception as exc:  # malformed XML
                    raise WorkbookError(p, f"malformed XML: {exc}", i.filename) from None
