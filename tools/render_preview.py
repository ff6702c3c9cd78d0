"""Render workbooks to PNG pages for a visual check (LibreOffice → PDF → PNG).

LibreOffice does not know the CKT_ functions, so it is given a values-only copy (formulas
removed, cached values kept) — what Excel shows before any recalculation. Needs Debian's
libreoffice-calc-nogui and poppler-utils (not project dependencies).

    python tools/render_preview.py OUT_DIR workbook_templates/*.xlsx
"""

from __future__ import annotations

import re
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


def main(argv: list[str]) -> int:
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
            pdf = Path(tmp) / f"{src.stem}.pdf"
            subprocess.run(
                ["pdftoppm", "-r", "70", "-png", str(pdf), str(out / src.stem)], check=True
            )
            print(f"{src.name}: {len(list(out.glob(src.stem + '*.png')))} pages → {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
