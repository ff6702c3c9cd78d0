"""Workbooks built for the tests with XlsxWriter (and openpyxl), as engineers' tools write them."""

from __future__ import annotations

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
