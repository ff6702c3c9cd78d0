"""Render workbooks to PNG pages for a visual check (LibreOffice → PDF → PNG).

LibreOffice does not know the CKT_ functions, so it is given a values-only copy (formulas
removed, cached values kept) — what Excel shows before any recalculation. Needs two Debian
packages (not project dependencies):

    apt-get install -y libreoffice-calc-nogui poppler-utils

    python tools/render_preview.py OUT_DIR workbook_templates/*.xlsx     (make preview)

Each page is written as OUT_DIR/<book>-<page>-<sheet>.png (the sheet name is read from
the page's footer), and OUT_DIR/<book>.pdf is kept.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

from xlfuncs.workbook.package import Package

_PROFILE = """<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>1</value></prop></item>
</oor:items>
"""


def values_only(src: Path, dst: Path) -> None:
    pkg = Package(src)
    for part in pkg.sheet_paths.values():
        xml = pkg.data[part].decode("utf-8")
        xml = re.sub(r"<f\b[^>]*/>|<f\b[^>]*>.*?</f>", "", xml, flags=re.S)
        pkg.replaced[part] = xml.encode("utf-8")
    pkg.write(dst)


def _sheet_of(pdf: Path, page: int, sheets: list[str]) -> str:
    text = subprocess.run(
        ["pdftotext", "-f", str(page), "-l", str(page), "-layout", str(pdf), "-"],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
    found = [s for s in sheets if re.search(rf"· {re.escape(s)}\b", text)]
    return found[-1] if found else "page"


def main(argv: list[str]) -> int:
    missing = [t for t in ("soffice", "pdftoppm", "pdftotext") if shutil.which(t) is None]
    if missing or len(argv) < 2:
        print(
            "usage: render_preview.py OUT_DIR BOOK.xlsx ...; needs LibreOffice and poppler: "
            "apt-get install -y libreoffice-calc-nogui poppler-utils"
            + (f" (missing: {', '.join(missing)})" if missing else ""),
            file=sys.stderr,
        )
        return 2
    out = Path(argv[0])
    out.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        profile = Path(tmp) / "profile" / "user"
        profile.mkdir(parents=True)
        (profile / "registrymodifications.xcu").write_text(_PROFILE, encoding="utf-8")
        for name in argv[1:]:
            src = Path(name)
            flat = Path(tmp) / src.name
            values_only(src, flat)
            subprocess.run(
                [
                    "soffice",
                    f"-env:UserInstallation=file://{Path(tmp) / 'profile'}",
                    "--headless",
                    "--convert-to",
                    "pdf",
                    "--outdir",
                    tmp,
                    str(flat),
                ],
                check=True,
                capture_output=True,
                timeout=300,
            )
            pdf = out / f"{src.stem}.pdf"
            shutil.move(Path(tmp) / f"{src.stem}.pdf", pdf)
            raw = Path(tmp) / "png"
            raw.mkdir(exist_ok=True)
            subprocess.run(["pdftoppm", "-r", "80", "-png", str(pdf), str(raw / "p")], check=True)
            sheets = Package(src).sheet_paths.keys()
            pages = sorted(raw.glob("p-*.png"))
            for k, png in enumerate(pages, 1):
                sheet = _sheet_of(pdf, k, list(sheets))
                shutil.move(png, out / f"{src.stem}-{k:02d}-{sheet}.png")
            print(f"{src.name}: {len(pages)} pages → {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
