"""Generator of the calculation templates in ``workbook_templates/``.

``python -m xlfuncs.templates workbook_templates`` writes each template with XlsxWriter
(formulas stored as Excel 365 dynamic arrays, so they spill when opened), then recalculates
it headlessly so that every formula carries a cached value before anyone opens it. A test
fails when the committed templates differ from what this produces.

Every scenario here is invented demo data, marked as such on every sheet.
"""

from __future__ import annotations

import datetime as dt
import sys
import tempfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

__all__ = ["TEMPLATES", "build_all"]

CAUTION = (
    "Screening calculation only. Results that feed equipment ratings must be confirmed; local "
    "codes, the utility, the equipment makers and a licensed engineer have the last word."
)
DEMO = "DEMO DATA — an invented scenario for illustration; replace every input with your own."
_FIXED_TIME = dt.datetime(2026, 1, 1, 0, 0, 0)

# our own palette
NAVY, TEAL, PALE, SAND, PASS_BG, FAIL_BG = (
    "#23395B",
    "#2E8B8B",
    "#EAF4F4",
    "#F4F1EA",
    "#D8F3DC",
    "#FADBD8",
)


@dataclass
class _Book:
    """Thin layer over an XlsxWriter workbook with our formats and naming."""

    path: Path
    title: str
    wb: Any = None
    f: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        import xlsxwriter

        self.wb = xlsxwriter.Workbook(str(self.path))
        self.wb.set_properties(
            {
                "title": self.title,
                "author": "xlfuncs templates",
                "created": _FIXED_TIME,
                "comments": DEMO,
            }
        )
        add = self.wb.add_format
        self.f = {
            "title": add({"bold": True, "font_size": 14, "font_color": NAVY}),
            "demo": add({"italic": True, "font_color": "#9C2F2F"}),
            "caution": add({"italic": True, "font_color": "#6B4E16", "text_wrap": True}),
            "head": add({"bold": True, "font_color": "white", "bg_color": NAVY, "border": 1}),
            "input": add({"bg_color": PALE, "font_color": "#0B3D91", "border": 1}),
            "calc": add({"bg_color": SAND, "border": 1, "num_format": "0.0000"}),
            "num": add({"num_format": "0.0000"}),
            "pct": add({"num_format": "0.00"}),
            "text": add({"text_wrap": True, "valign": "top"}),
            "label": add({"bold": True}),
            "pass": add({"bg_color": PASS_BG}),
            "fail": add({"bg_color": FAIL_BG}),
        }

    def sheet(self, name: str, heading: str, caution: bool = False) -> Any:
        ws = self.wb.add_worksheet(name)
        ws.write("A1", heading, self.f["title"])
        ws.write("A2", DEMO, self.f["demo"])
        if caution:
            ws.merge_range("A3:F3", CAUTION, self.f["caution"])
            ws.set_row(2, 32)
        ws.set_column("A:A", 46)
        ws.set_landscape()
        ws.set_paper(9)  # A4
        ws.fit_to_pages(1, 0)  # one page wide, as many tall as needed
        ws.hide_gridlines(1)  # gridlines on screen, not on paper
        return ws

    def inputs(
        self, ws: Any, first_row: int, rows: Sequence[tuple[str, float, str, str, str]]
    ) -> int:
        """One input per row: label | value | unit | name | note; each value gets a name."""
        ws.write_row(
            first_row, 0, ["input", "value", "unit", "defined name", "note"], self.f["head"]
        )
        ws.set_column("B:B", 14)
        ws.set_column("C:C", 10)
        ws.set_column("D:D", 16)
        ws.set_column("E:E", 60)
        for k, (label, value, unit, name, note) in enumerate(rows):
            r = first_row + 1 + k
            ws.write(r, 0, label)
            ws.write(r, 1, value, self.f["input"])
            ws.write(r, 2, unit)
            ws.write(r, 3, name)
            ws.write(r, 4, note)
            self.wb.define_name(name, f"={ws.name}!$B${r + 1}")
        return first_row + 1 + len(rows)

    def table(
        self,
        ws: Any,
        first_row: int,
        name: str,
        header: list[str],
        rows: list[list[Any]],
        range_name: str,
    ) -> int:
        """An Excel Table (for people) plus a defined name over header + rows (for formulas)."""
        last = first_row + len(rows)
        cols = len(header)
        ws.add_table(
            first_row,
            0,
            last,
            cols - 1,
            {
                "name": name,
                "style": "Table Style Light 9",
                "columns": [{"header": h} for h in header],
                "data": [[None] * cols for _ in rows],
            },
        )
        for k, row in enumerate(rows):
            for c, v in enumerate(row):
                if isinstance(v, str) and v.startswith("="):
                    ws.write_formula(first_row + 1 + k, c, v, self.f["num"])
                elif v is not None:
                    ws.write(first_row + 1 + k, c, v)
        self.wb.define_name(
            range_name, f"={ws.name}!$A${first_row + 1}:${_col(cols - 1)}${last + 1}"
        )
        return last + 1

    def spill(self, ws: Any, row: int, col: int, formula: str) -> None:
        ws.write_dynamic_array_formula(row, col, row, col, formula)

    def output(
        self, ws: Any, row: int, label: str, formula: str, unit: str, name: str, note: str = ""
    ) -> None:
        ws.write(row, 0, label)
        ws.write_formula(row, 1, formula, self.f["calc"])
        ws.write(row, 2, unit)
        ws.write(row, 3, name)
        if note:
            ws.write(row, 4, note)
        self.wb.define_name(name, f"={ws.name}!$B${row + 1}")

    def chart(
        self,
        ws: Any,
        anchor: str,
        kind: str,
        title: str,
        x_axis: dict[str, Any],
        y_axis: dict[str, Any],
        series: Sequence[dict[str, Any]],
    ) -> None:
        """A native chart: ``kind`` "line" (x–y lines) or "column"; series as XlsxWriter takes them."""
        spec = {"type": "scatter", "subtype": "straight"} if kind == "line" else {"type": kind}
        ch = self.wb.add_chart(spec)
        for one in series:
            ch.add_series(one)
        ch.set_title({"name": title})
        ch.set_x_axis(x_axis)
        ch.set_y_axis(y_axis)
        ws.insert_chart(anchor, ch, {"x_scale": 1.2, "y_scale": 1.1})

    def data_sheet(self) -> Any:
        ws = self.wb.add_worksheet("Data")
        ws.write("A1", f"{self.title} — long spilled results used by the charts", self.f["title"])
        ws.write("A2", DEMO, self.f["demo"])
        ws.set_column("A:P", 13)
        return ws

    def notes(self, lines: Sequence[str]) -> None:
        ws = self.sheet("Notes", f"{self.title} — method, assumptions, conventions", caution=True)
        ws.set_column("A:A", 120)
        for k, line in enumerate(lines):
            ws.write(4 + k, 0, line, self.f["label"] if line.endswith(":") else self.f["text"])

    def close(self) -> None:
        self.wb.close()


def _col(c: int) -> str:
    from openpyxl.utils import get_column_letter

    return get_column_letter(c + 1)


def _checks(
    b: _Book, ws: Any, first_row: int, rows: Sequence[tuple[str, str, str, str, str, str]]
) -> int:
    """check | value | limit | unit | result | limit source; result =IF(value<=limit, …)."""
    ws.write_row(
        first_row,
        0,
        ["check", "value", "limit", "unit", "result", "source of the limit"],
        b.f["head"],
    )
    ws.set_column("B:D", 14)
    ws.set_column("E:E", 10)
    ws.set_column("F:F", 70)
    for k, (label, value, limit, unit, rule, source) in enumerate(rows):
        r = first_row + 1 + k
        ws.write(r, 0, label)
        ws.write_formula(r, 1, value, b.f["num"])
        ws.write_formula(r, 2, limit, b.f["num"]) if limit.startswith("=") else ws.write(
            r, 2, limit
        )
        ws.write(r, 3, unit)
        ws.write_formula(r, 4, rule)
        ws.write(r, 5, source)
    last = first_row + len(rows)
    rng = f"E{first_row + 2}:E{last + 1}"
    ws.conditional_format(
        rng, {"type": "cell", "criteria": "==", "value": '"PASS"', "format": b.f["pass"]}
    )
    ws.conditional_format(
        rng, {"type": "cell", "criteria": "==", "value": '"FAIL"', "format": b.f["fail"]}
    )
    ws.write(last + 2, 0, "overall", b.f["label"])
    ws.write_formula(last + 2, 4, f'=IF(COUNTIF({rng},"FAIL")=0,"PASS","FAIL")')
    b.wb.define_name("verdict", f"={ws.name}!$E${last + 3}")
    return last + 3


ORDERS = [5, 7, 11, 13, 17, 19, 23, 25]
DRIVE_PCT = [30.0, 12.0, 7.0, 5.0, 3.5, 2.8, 2.0, 1.8]  # invented spectrum, % of I1


# ============================================================================ template 1
def plant_harmonics(path: Path) -> None:
    b = _Book(path, "Plant bus harmonic study")
    ws = b.sheet(
        "Inputs", "Plant bus harmonic study — inputs (per-phase model at the low-voltage bus)"
    )
    r = b.inputs(
        ws,
        4,
        [
            ("System frequency", 60, "Hz", "f_hz", "fundamental of every harmonic order"),
            (
                "Bus voltage, line-to-line",
                480,
                "V",
                "v_ll",
                "the plant bus = point of common coupling here",
            ),
            (
                "Utility short-circuit power at the primary",
                50,
                "MVA",
                "ssc_mva",
                "from the utility",
            ),
            ("Utility X/R", 10, "", "xr_util", ""),
            ("Transformer rating", 1500, "kVA", "tx_kva", ""),
            ("Transformer impedance", 5.75, "%", "tx_z_pct", "nameplate %Z"),
            ("Transformer X/R", 7, "", "tx_xr", ""),
            (
                "Capacitor step",
                100,
                "kvar",
                "cap_kvar_step",
                "rated kvar of one step at its rated voltage",
            ),
            ("Capacitor steps in service", 3, "", "cap_steps", "sweep this in the batch example"),
            ("Capacitor rated voltage, line-to-line", 480, "V", "cap_v_rated", ""),
            (
                "Capacitor loss factor tan δ",
                0.0005,
                "",
                "cap_tan_d",
                "sets the bank's series resistance",
            ),
            ("Linear load", 500, "kW", "load_kw", "modelled as R ‖ L"),
            ("Linear load power factor", 0.85, "", "load_pf", ""),
            ("Drive load", 600, "kW", "drive_kw", "six-pulse drives, combined"),
            ("Drive displacement power factor", 0.95, "", "drive_pf", ""),
            (
                "Maximum demand load current I_L",
                1400,
                "A",
                "i_l",
                "12-month average of monthly maxima (IEEE 519 TDD basis)",
            ),
        ],
    )
    ws.write(
        r + 1, 0, "Drive harmonic spectrum (% of the drive's fundamental current)", b.f["label"]
    )
    ws.write_row(r + 2, 0, ["order h", "% of I1"], b.f["head"])
    for k, (h, pct) in enumerate(zip(ORDERS, DRIVE_PCT, strict=True)):
        ws.write(r + 3 + k, 0, h)
        ws.write(r + 3 + k, 1, pct, b.f["input"])
    b.wb.define_name("drive_orders", f"=Inputs!$A${r + 4}:$A${r + 3 + len(ORDERS)}")
    spec_first = r + 4

    # ---------------------------------------------------------------- network
    net = b.sheet(
        "Network", "Network — parts and sources (per phase, referred to the bus voltage)"
    )
    net.set_column("B:D", 9)
    net.set_column("E:E", 16)
    net.set_column("F:G", 12)
    net.set_column("H:H", 44)
    w = "(2*PI()*f_hz)"
    zu = "(v_ll^2/(ssc_mva*1E6))"
    zt = "(tx_z_pct/100*v_ll^2/(tx_kva*1E3))"
    c_val = f"(cap_steps*cap_kvar_step*1E3/({w}*cap_v_rated^2))"
    parts = [
        ["R_util", "R", "SRC", "U1", f"={zu}/SQRT(1+xr_util^2)", "utility resistance"],
        ["L_util", "L", "U1", "PRI", f"={zu}*xr_util/SQRT(1+xr_util^2)/{w}", "utility inductance"],
        ["R_tx", "R", "PRI", "T1", f"={zt}/SQRT(1+tx_xr^2)", "transformer resistance"],
        [
            "L_tx",
            "L",
            "T1",
            "BUS",
            f"={zt}*tx_xr/SQRT(1+tx_xr^2)/{w}",
            "transformer inductance; its current is the PCC current",
        ],
        ["C_bank", "C", "BUS", "CAP", f"={c_val}", "power-factor capacitor bank (wye equivalent)"],
        [
            "R_cap",
            "R",
            "CAP",
            "GND",
            f"=cap_tan_d/({w}*{c_val})",
            "bank series resistance from tan δ",
        ],
        ["R_load", "R", "BUS", "GND", "=v_ll^2/(load_kw*1E3)", "linear load, active part"],
        [
            "L_load",
            "L",
            "BUS",
            "GND",
            f"=v_ll^2/(load_kw*1E3*TAN(ACOS(load_pf)))/{w}",
            "linear load, reactive part",
        ],
    ]
    row = b.table(
        net, 4, "Parts", ["name", "kind", "from", "to", "value", "note"], parts, "parts_tbl"
    )
    i1 = "(drive_kw*1E3/(SQRT(3)*v_ll*drive_pf))"
    sources = [["V_util", "V", "SRC", "GND", 1, "=v_ll/SQRT(3)", 0, "utility (phase value)"]]
    sources.append(
        [
            "I_drive",
            "I",
            "BUS",
            "GND",
            1,
            f"={i1}",
            "=-DEGREES(ACOS(drive_pf))",
            "drive fundamental, drawn from the bus",
        ]
    )
    for k, h in enumerate(ORDERS):
        sources.append(
            [
                "I_drive",
                "I",
                "BUS",
                "GND",
                h,
                f"={i1}*Inputs!$B${spec_first + k}/100",
                0,
                "harmonic tone (phase 0: affects peaks only)",
            ]
        )
    row = b.table(
        net,
        row + 2,
        "Sources",
        ["name", "kind", "from", "to", "harmonic", "rms", "phase_deg", "note"],
        sources,
        "sources_tbl",
    )
    net.write(row + 1, 0, "Options", b.f["label"])
    net.write_row(row + 2, 0, ["key", "value"], b.f["head"])
    net.write(row + 3, 0, "fundamental_hz")
    net.write_formula(row + 3, 1, "=f_hz")
    net.write(row + 4, 0, "ground")
    net.write(row + 4, 1, "GND")
    b.wb.define_name("opts", f"=Network!$A${row + 3}:$B${row + 5}")

    # ---------------------------------------------------------------- results
    res = b.sheet(
        "Results", "Results — bus voltage, PCC current, capacitor duty, resonance", caution=True
    )
    res.set_column("B:B", 16)
    res.set_column("C:G", 13)
    args = "parts_tbl,sources_tbl"
    res.write_row(4, 0, ["result", "value", "unit", "defined name", "note"], b.f["head"])
    out = [
        (
            "Bus voltage, total RMS (phase)",
            f'=CKT_RMS({args},"BUS","V",opts)',
            "V",
            "bus_v_rms",
            "",
        ),
        (
            "Bus voltage, true peak",
            f'=CKT_PEAK({args},"BUS","V",opts)',
            "V",
            "bus_v_peak",
            "insulation",
        ),
        (
            "Bus voltage THD",
            f'=100*CKT_THD({args},"BUS","V",opts)',
            "%",
            "bus_thd_pct",
            "harmonics 2-50, DC excluded",
        ),
        (
            "PCC current, total RMS",
            f'=CKT_RMS({args},"L_tx","I",opts)',
            "A",
            "pcc_i_rms",
            "through the transformer",
        ),
        (
            "Short-circuit current at the bus",
            f"=v_ll/SQRT(3)/SQRT((Network!$E$6+Network!$E$8)^2+({w}*(Network!$E$7+Network!$E$9))^2)",
            "A",
            "isc_a",
            "utility + transformer",
        ),
        ("Isc / I_L", "=isc_a/i_l", "", "isc_il", "selects the IEEE 519 Table 2 row"),
        ("Short-circuit power at the bus", "=SQRT(3)*v_ll*isc_a/1E6", "MVA", "ssc_bus_mva", ""),
        (
            "Capacitor bank at bus voltage",
            "=cap_steps*cap_kvar_step*(v_ll/cap_v_rated)^2/1E3",
            "Mvar",
            "q_cap_mvar",
            "",
        ),
        (
            "Resonance order, rule of thumb √(S_sc/Q_cap)",
            "=SQRT(ssc_bus_mva/q_cap_mvar)",
            "h",
            "res_rule",
            "common practice",
        ),
        (
            "Parallel resonance order, from the scan",
            "=INDEX(_xlfn.ANCHORARRAY(A48),2,3)",
            "h",
            "res_order",
            "first row of the resonance list",
        ),
        (
            "Capacitor current, total RMS",
            f'=CKT_RMS({args},"C_bank","I",opts)',
            "A",
            "cap_i_rms",
            "",
        ),
        (
            "Capacitor RMS current / nominal",
            "=INDEX(_xlfn.ANCHORARRAY(G48),4,4)",
            "ratio",
            "cap_i_duty",
            "IEEE Std 18 limit 1.35",
        ),
        (
            "Capacitor peak voltage / rated peak",
            "=INDEX(_xlfn.ANCHORARRAY(G48),3,4)",
            "ratio",
            "cap_vpk_duty",
            "IEEE Std 18 limit 1.20",
        ),
    ]
    for k, (label, formula, unit, name, note) in enumerate(out):
        b.output(res, 5 + k, label, formula, unit, name, note)

    res.write(18, 0, "Bus voltage per frequency (V, peak / rms, phase °)", b.f["label"])
    b.spill(res, 19, 0, f'=CKT_SOLVE({args},"BUS","V",opts)')
    res.write(18, 6, "Harmonic table (voltage in % of the fundamental)", b.f["label"])
    res.write_row(
        19, 6, ["h", "freq_hz", "V_h %", "limit %", "|Z| ohm", "resonance distance %"], b.f["head"]
    )
    vspill = "_xlfn.ANCHORARRAY(A20)"
    for k, h in enumerate(ORDERS):
        rr = 20 + k
        res.write(rr, 6, h)
        res.write_formula(rr, 7, f"=G{rr + 1}*f_hz")
        res.write_formula(
            rr,
            8,
            f"=100*INDEX({vspill},MATCH(H{rr + 1}*(1+1E-9),INDEX({vspill},0,1),1),3)"
            f"/INDEX({vspill},MATCH(f_hz*(1+1E-9),INDEX({vspill},0,1),1),3)",
            b.f["pct"],
        )
        res.write_formula(rr, 9, "=INDEX(_xlfn.ANCHORARRAY(Data!J6),2,1)", b.f["pct"])
        res.write_formula(rr, 10, f"=INDEX(_xlfn.ANCHORARRAY(Data!M6),{k + 2},2)", b.f["pct"])
        res.write_formula(rr, 11, f"=ABS(res_order-G{rr + 1})/G{rr + 1}*100", b.f["pct"])

    res.write(32, 0, "IEEE 519 voltage check at the bus", b.f["label"])
    b.spill(res, 33, 0, f'=CKT_V519({args},"BUS",v_ll/1000,opts)')
    res.write(32, 6, "IEEE 519 current check at the PCC", b.f["label"])
    b.spill(res, 33, 6, f'=CKT_I519({args},"L_tx",isc_a,i_l,v_ll/1000,2014,opts)')
    res.write(46, 0, "Resonances seen at the bus (utility source shorted)", b.f["label"])
    b.spill(res, 47, 0, '=CKT_RESONANCES(parts_tbl,"BUS",f_hz,40*f_hz,400,opts,sources_tbl)')
    res.write(46, 6, "Capacitor duty (IEEE Std 18 continuous limits)", b.f["label"])
    b.spill(
        res,
        47,
        6,
        f'=CKT_CAPDUTY({args},"C_bank",cap_steps*cap_kvar_step/3,cap_v_rated/SQRT(3),opts)',
    )

    res.write(53, 0, "Charts", b.f["label"])
    b.chart(
        res,
        "A55",
        "column",
        "Bus voltage harmonics",
        {"name": "harmonic order"},
        {"name": "% of fundamental"},
        [
            {
                "name": "V_h % of fundamental",
                "categories": "=Results!$G$21:$G$28",
                "values": "=Results!$I$21:$I$28",
                "fill": {"color": TEAL},
            },
            {
                "name": "IEEE 519 individual limit",
                "categories": "=Results!$G$21:$G$28",
                "values": "=Results!$J$21:$J$28",
                "fill": {"color": "#C0C0C0"},
            },
        ],
    )

    b.chart(
        res,
        "A72",
        "line",
        "Impedance scan with injected harmonic orders",
        {"name": "frequency (Hz)", "log_base": 10},
        {"name": "|Z| (ohm)"},
        [
            {
                "name": "|Z| at the bus",
                "categories": "=Data!$A$7:$A$206",
                "values": "=Data!$B$7:$B$206",
                "line": {"color": NAVY, "width": 1.5},
            },
            {
                "name": "injected orders",
                "categories": "=Results!$H$21:$H$28",
                "values": "=Results!$K$21:$K$28",
                "marker": {"type": "diamond", "size": 8, "fill": {"color": "#C0392B"}},
                "line": {"none": True},
            },
        ],
    )

    b.chart(
        res,
        "A89",
        "line",
        "Bus voltage waveform (one period)",
        {"name": "time (s)"},
        {"name": "V"},
        [
            {
                "name": "bus voltage",
                "categories": "=Data!$E$7:$E$406",
                "values": "=Data!$F$7:$F$406",
                "line": {"color": TEAL},
            },
        ],
    )
    res.print_area("A1:L105")

    # ---------------------------------------------------------------- checks
    chk = b.sheet(
        "Checks", "Checks — pass/fail against limits, with the source of each limit", caution=True
    )
    duty = "_xlfn.ANCHORARRAY(Results!G48)"
    i519 = "_xlfn.ANCHORARRAY(Results!G34)"
    _checks(
        b,
        chk,
        4,
        [
            (
                "Bus voltage THD",
                "=bus_thd_pct",
                "=INDEX(_xlfn.ANCHORARRAY(Data!J6),2,2)",
                "%",
                '=IF(B6<=C6,"PASS","FAIL")',
                "IEEE Std 519-2014 Table 1 (THD, by bus voltage)",
            ),
            (
                "Largest individual voltage harmonic",
                "=MAX(Results!I21:I28)",
                "=INDEX(_xlfn.ANCHORARRAY(Data!J6),2,1)",
                "%",
                '=IF(B7<=C7,"PASS","FAIL")',
                "IEEE Std 519-2014 Table 1 (individual harmonic)",
            ),
            (
                "TDD at the PCC",
                f'=INDEX({i519},MATCH("TDD",INDEX({i519},0,1),0),2)',
                f'=INDEX({i519},MATCH("TDD",INDEX({i519},0,1),0),3)',
                "%",
                '=IF(B8<=C8,"PASS","FAIL")',
                "IEEE Std 519-2014 Table 2 (TDD, row by Isc/I_L)",
            ),
            (
                "Current harmonics over their limit",
                f'=COUNTIF(INDEX({i519},0,4),"FAIL")',
                "=0",
                "rows",
                '=IF(B9<=C9,"PASS","FAIL")',
                "IEEE Std 519-2014 Table 2 (individual orders; even orders 25 %)",
            ),
            (
                "Capacitor RMS voltage / rated",
                f"=INDEX({duty},2,4)",
                f"=INDEX({duty},2,5)",
                "ratio",
                '=IF(B10<=C10,"PASS","FAIL")',
                "IEEE Std 18-2002: 110 % of rated RMS voltage",
            ),
            (
                "Capacitor peak voltage / rated peak",
                f"=INDEX({duty},3,4)",
                f"=INDEX({duty},3,5)",
                "ratio",
                '=IF(B11<=C11,"PASS","FAIL")',
                "IEEE Std 18-2002: 120 % of rated peak voltage (arithmetic sum of harmonic peaks)",
            ),
            (
                "Capacitor RMS current / nominal",
                f"=INDEX({duty},4,4)",
                f"=INDEX({duty},4,5)",
                "ratio",
                '=IF(B12<=C12,"PASS","FAIL")',
                "IEEE Std 18-2002: 135 % of nominal RMS current",
            ),
            (
                "Capacitor kvar / rated",
                f"=INDEX({duty},5,4)",
                f"=INDEX({duty},5,5)",
                "ratio",
                '=IF(B13<=C13,"PASS","FAIL")',
                "IEEE Std 18-2002: 135 % of rated kvar",
            ),
            (
                "Resonance distance from nearest injected order",
                "=MIN(Results!L21:L28)",
                "=10",
                "%",
                '=IF(B14>=C14,"PASS","FAIL")',
                "common practice (from memory): keep a parallel resonance ≥ 10 % away from characteristic orders",
            ),
            (
                "Resonance order: scan vs rule of thumb",
                "=ABS(res_order/res_rule-1)*100",
                "=15",
                "%",
                '=IF(B15<=C15,"PASS","FAIL")',
                "consistency check: rule of thumb h ≈ √(S_sc/Q_cap), common practice (large X/R)",
            ),
        ],
    )

    b.notes(
        [
            "Method:",
            "Superposition by frequency: one phasor solve (modified nodal analysis) per harmonic order, then RMS, "
            "peak, THD and duty combine the orders (xlfuncs CKT_ functions).",
            "Per-phase (wye-equivalent) model referred to the bus voltage; balanced three-phase operation assumed; "
            "triplen and interharmonic currents not modelled.",
            "Utility: a voltage source behind R + L from its short-circuit power and X/R. Transformer: R + L from "
            "%Z and X/R. Capacitor bank: C from rated kvar at rated voltage, series R from tan δ. Linear load: R ‖ L.",
            "Drive: a current source drawing its fundamental (displacement power factor) and its harmonic currents "
            "(% of I1 from the spectrum table, phase 0: phases change peaks, not RMS or THD).",
            "The resonance list and impedance scan short the utility source (sources zeroed).",
            "Assumptions:",
            "PCC = the low-voltage bus; I_L from demand records (input). Resistances are frequency-independent "
            "(add an r_exponent column to the parts table for skin effect).",
            "Sign conventions:",
            "A part's voltage is V(from) − V(to); its current flows from 'from' to 'to' through it. Phasors are peak "
            "values, cosine reference; RMS values combine as √Σ rms².",
            "Limits and their sources:",
            "IEEE Std 519-2014 Tables 1 and 2 (voltage and current distortion); IEEE Std 18-2002 continuous "
            "capacitor limits (110 % RMS V, 120 % peak V, 135 % RMS I, 135 % kvar).",
            "Cautions:",
            CAUTION,
            DEMO,
        ]
    )
    data = b.data_sheet()
    data.write(4, 0, "Impedance scan at the bus (200 points)", b.f["label"])
    b.spill(data, 5, 0, '=CKT_SCAN(parts_tbl,"BUS",f_hz,40*f_hz,200,opts,sources_tbl)')
    data.write(4, 4, "Bus voltage waveform over one period", b.f["label"])
    b.spill(data, 5, 4, '=CKT_WAVE(parts_tbl,sources_tbl,"BUS","V",400,opts)')
    data.write(4, 9, "IEEE 519 Table 1 limits", b.f["label"])
    b.spill(data, 5, 9, "=CKT_V519_LIMITS(v_ll/1000)")
    data.write(4, 12, "Impedance at the injected orders", b.f["label"])
    b.spill(data, 5, 12, '=CKT_IMPEDANCE(parts_tbl,"BUS",Results!H21:H28,opts,sources_tbl)')
    b.close()


# ============================================================================ template 2
def detuned_filter(path: Path) -> None:
    b = _Book(path, "Detuned filter sizing")
    ws = b.sheet("Inputs", "Detuned capacitor bank — inputs (per-phase model at the bus)")
    r = b.inputs(
        ws,
        4,
        [
            ("System frequency", 50, "Hz", "f_hz", ""),
            ("Bus voltage, line-to-line", 400, "V", "v_ll", ""),
            ("Short-circuit power at the bus", 25, "MVA", "ssc_mva", "utility + transformer"),
            ("Source X/R", 8, "", "xr_src", ""),
            ("Bank rating", 200, "kvar", "bank_kvar", "capacitor kvar at its rated voltage"),
            (
                "Capacitor rated voltage, line-to-line",
                440,
                "V",
                "cap_v_rated",
                "detuned banks use capacitors rated above the bus voltage",
            ),
            (
                "Reactor ratio p",
                0.07,
                "fraction",
                "p_ratio",
                "X_L / X_C at the fundamental (7 % is common practice)",
            ),
            ("Reactor quality factor", 50, "", "reactor_q", "X_L / R_L at the fundamental"),
            ("Drive fundamental current", 400, "A", "drive_i1", "six-pulse drives, combined"),
        ],
    )
    ws.write(r + 1, 0, "Drive harmonic spectrum (% of I1)", b.f["label"])
    ws.write_row(r + 2, 0, ["order h", "% of I1"], b.f["head"])
    for k, (h, pct) in enumerate(zip(ORDERS, DRIVE_PCT, strict=True)):
        ws.write(r + 3 + k, 0, h)
        ws.write(r + 3 + k, 1, pct, b.f["input"])
    b.wb.define_name("drive_orders", f"=Inputs!$A${r + 4}:$A${r + 3 + len(ORDERS)}")
    spec_first = r + 4

    net = b.sheet("Network", "Network — parts and sources (per phase)")
    net.set_column("E:E", 16)
    net.set_column("H:H", 44)
    w = "(2*PI()*f_hz)"
    zs = "(v_ll^2/(ssc_mva*1E6))"
    det = "_xlfn.ANCHORARRAY(Results!A20)"
    parts = [
        ["R_src", "R", "SRC", "S1", f"={zs}/SQRT(1+xr_src^2)", "source resistance"],
        ["L_src", "L", "S1", "BUS", f"={zs}*xr_src/SQRT(1+xr_src^2)/{w}", "source inductance"],
        ["L_det", "L", "BUS", "M", f"=INDEX({det},8,2)", "detuning reactor (from the sizing)"],
        ["R_det", "R", "M", "N", f"=INDEX({det},6,2)/reactor_q", "reactor resistance"],
        ["C_det", "C", "N", "GND", f"=INDEX({det},7,2)", "capacitor (wye equivalent)"],
    ]
    row = b.table(
        net, 4, "Parts", ["name", "kind", "from", "to", "value", "note"], parts, "parts_tbl"
    )
    sources = [["V_src", "V", "SRC", "GND", 1, "=v_ll/SQRT(3)", 0, "supply (phase value)"]]
    for k, h in enumerate(ORDERS):
        sources.append(
            [
                "I_drive",
                "I",
                "GND",
                "BUS",
                h,
                f"=drive_i1*Inputs!$B${spec_first + k}/100",
                0,
                "harmonic injection into the bus",
            ]
        )
    row = b.table(
        net,
        row + 2,
        "Sources",
        ["name", "kind", "from", "to", "harmonic", "rms", "phase_deg", "note"],
        sources,
        "sources_tbl",
    )
    net.write_row(row + 2, 0, ["key", "value"], b.f["head"])
    net.write(row + 3, 0, "fundamental_hz")
    net.write_formula(row + 3, 1, "=f_hz")
    b.wb.define_name("opts", f"=Network!$A${row + 3}:$B${row + 4}")

    res = b.sheet("Results", "Results — reactor sizing and filter duty", caution=True)
    res.set_column("B:H", 14)
    args = "parts_tbl,sources_tbl"
    res.write_row(4, 0, ["result", "value", "unit", "defined name", "note"], b.f["head"])
    outs = [
        (
            "Tuned order 1/√p",
            "=INDEX(_xlfn.ANCHORARRAY(A20),3,2)",
            "h",
            "tuned_order",
            "common practice",
        ),
        ("Tuned frequency", "=INDEX(_xlfn.ANCHORARRAY(A20),4,2)", "Hz", "tuned_hz", ""),
        (
            "Reactor inductance (per phase)",
            "=INDEX(_xlfn.ANCHORARRAY(A20),8,2)*1E3",
            "mH",
            "l_det_mh",
            "",
        ),
        (
            "Capacitor fundamental voltage rise U_C/U",
            "=INDEX(_xlfn.ANCHORARRAY(A20),9,2)",
            "",
            "v_rise",
            "1/(1−p)",
        ),
        (
            "Capacitor fundamental voltage, line-to-line",
            "=v_ll*v_rise",
            "V",
            "v_cap_ll",
            "compare with the rated voltage",
        ),
        (
            "Series resonance found in the scan",
            '=INDEX(FILTER(_xlfn.ANCHORARRAY(A40),INDEX(_xlfn.ANCHORARRAY(A40),0,1)="series"),1,3)'.replace(
                "FILTER", "_xlfn._xlws.FILTER"
            ),
            "h",
            "series_order",
            "should equal 1/√p",
        ),
        ("Bus voltage THD", f'=100*CKT_THD({args},"BUS","V",opts)', "%", "bus_thd_pct", ""),
        (
            "Capacitor current, total RMS",
            f'=CKT_RMS({args},"C_det","I",opts)',
            "A",
            "cap_i_rms",
            "",
        ),
    ]
    for k, (label, formula, unit, name, note) in enumerate(outs):
        b.output(res, 5 + k, label, formula, unit, name, note)
    res.write(18, 0, "Reactor sizing", b.f["label"])
    b.spill(res, 19, 0, "=CKT_DETUNE(bank_kvar,cap_v_rated,f_hz,p_ratio)")
    res.write(18, 5, "Capacitor duty (IEEE Std 18)", b.f["label"])
    b.spill(res, 19, 5, f'=CKT_CAPDUTY({args},"C_det",bank_kvar/3,cap_v_rated/SQRT(3),opts)')
    res.write(38, 0, "Resonances seen at the bus", b.f["label"])
    b.spill(res, 39, 0, '=CKT_RESONANCES(parts_tbl,"BUS",f_hz,30*f_hz,400,opts,sources_tbl)')
    res.write(45, 0, "Chart", b.f["label"])
    b.chart(
        res,
        "A47",
        "line",
        "Bus impedance with the detuned bank",
        {"name": "frequency (Hz)", "log_base": 10},
        {"name": "|Z| (ohm)"},
        [
            {
                "name": "|Z| at the bus",
                "categories": "=Data!$A$7:$A$206",
                "values": "=Data!$B$7:$B$206",
                "line": {"color": NAVY},
            },
        ],
    )

    chk = b.sheet(
        "Checks", "Checks — pass/fail against limits, with the source of each limit", caution=True
    )
    duty = "_xlfn.ANCHORARRAY(Results!F20)"
    _checks(
        b,
        chk,
        4,
        [
            (
                "Tuned order below the lowest injected order",
                "=tuned_order",
                "=MIN(drive_orders)",
                "h",
                '=IF(B6<C6,"PASS","FAIL")',
                "common practice: detune below the 5th for six-pulse drives",
            ),
            (
                "Capacitor voltage with the rise / rated",
                "=v_cap_ll/cap_v_rated",
                "=1.1",
                "ratio",
                '=IF(B7<=C7,"PASS","FAIL")',
                "IEEE Std 18-2002: 110 % of rated RMS voltage (fundamental only here)",
            ),
            (
                "Capacitor RMS voltage / rated",
                f"=INDEX({duty},2,4)",
                f"=INDEX({duty},2,5)",
                "ratio",
                '=IF(B8<=C8,"PASS","FAIL")',
                "IEEE Std 18-2002: 110 % of rated RMS voltage",
            ),
            (
                "Capacitor peak voltage / rated peak",
                f"=INDEX({duty},3,4)",
                f"=INDEX({duty},3,5)",
                "ratio",
                '=IF(B9<=C9,"PASS","FAIL")',
                "IEEE Std 18-2002: 120 % of rated peak voltage",
            ),
            (
                "Capacitor RMS current / nominal",
                f"=INDEX({duty},4,4)",
                f"=INDEX({duty},4,5)",
                "ratio",
                '=IF(B10<=C10,"PASS","FAIL")',
                "IEEE Std 18-2002: 135 % of nominal RMS current",
            ),
            (
                "Capacitor kvar / rated",
                f"=INDEX({duty},5,4)",
                f"=INDEX({duty},5,5)",
                "ratio",
                '=IF(B11<=C11,"PASS","FAIL")',
                "IEEE Std 18-2002: 135 % of rated kvar",
            ),
            (
                "Series resonance vs 1/√p",
                "=ABS(series_order/tuned_order-1)*100",
                "=1",
                "%",
                '=IF(B12<=C12,"PASS","FAIL")',
                "consistency of the network with the sizing (closed form 1/√p)",
            ),
        ],
    )
    b.notes(
        [
            "Method:",
            "Reactor sized from p: h = 1/√p, X_C = V²/Q, X_L = p·X_C, U_C = U/(1−p) (common practice); the filter's "
            "duty under the drive injections from one phasor solve per harmonic order.",
            "Per-phase wye model; the supply is a voltage source behind its short-circuit impedance; the reactor has "
            "R = X_L/Q. The capacitor's kvar and voltage are its own ratings (a detuned bank's capacitors are rated "
            "above the bus voltage because of the rise U/(1−p)).",
            "Sign conventions:",
            "Part voltage V(from) − V(to), current from → to; phasors peak, cosine reference.",
            "Limits and their sources:",
            "IEEE Std 18-2002 continuous capacitor limits; detuning below the lowest characteristic order is common "
            "practice.",
            "Cautions:",
            CAUTION,
            DEMO,
        ]
    )
    data = b.data_sheet()
    data.write(4, 0, "Impedance scan at the bus (200 points)", b.f["label"])
    b.spill(data, 5, 0, '=CKT_SCAN(parts_tbl,"BUS",f_hz,30*f_hz,200,opts,sources_tbl)')
    b.close()


# ============================================================================ template 3
def dc_link_ripple(path: Path) -> None:
    b = _Book(path, "DC link / LC output ripple")
    ws = b.sheet("Inputs", "LC filter after a switching stage — inputs")
    b.inputs(
        ws,
        4,
        [
            ("Input DC voltage", 48, "V", "v_in", "switch-node high level"),
            ("Duty cycle D", 0.25, "", "duty", "switch-node low level is 0 V"),
            ("Switching frequency", 100000, "Hz", "f_sw", ""),
            ("Filter inductance", 22e-6, "H", "l_f", ""),
            ("Filter capacitance", 100e-6, "F", "c_f", ""),
            ("Capacitor ESR", 0.005, "Ω", "esr", ""),
            ("Load resistance", 2.4, "Ω", "r_load", ""),
            (
                "Capacitor rated ripple current",
                3.0,
                "A",
                "cap_i_rated",
                "from the capacitor maker's data sheet",
            ),
            (
                "Allowed output ripple, peak-to-peak",
                1.0,
                "%",
                "ripple_allow_pct",
                "of the DC output",
            ),
        ],
    )
    net = b.sheet(
        "Network", "Network — switch-node voltage as DC + harmonics of the switching frequency"
    )
    net.set_column("E:G", 14)
    net.set_column("H:H", 44)
    parts = [
        ["L_f", "L", "SW", "OUT", "=l_f", "filter inductor"],
        ["C_f", "C", "OUT", "X", "=c_f", "filter capacitor"],
        ["R_esr", "R", "X", "GND", "=esr", "capacitor ESR"],
        ["R_load", "R", "OUT", "GND", "=r_load", "load"],
    ]
    row = b.table(
        net, 4, "Parts", ["name", "kind", "from", "to", "value", "note"], parts, "parts_tbl"
    )
    # switch node: D·Vin + Σ (2·Vin/(nπ))·sin(nπD)·cos(nωt − nπD)
    sources = [["V_sw", "V", "SW", "GND", 0, "=v_in*duty", None, "DC level D·Vin"]]
    for n in range(1, 16):
        sources.append(
            [
                "V_sw",
                "V",
                "SW",
                "GND",
                f"={n}*f_sw",
                f"=ABS(2*v_in/({n}*PI())*SIN({n}*PI()*duty))",
                f"=-{n}*180*duty+IF(SIN({n}*PI()*duty)<0,180,0)",
                f"harmonic {n} of the rectangular switch-node voltage",
            ]
        )
    b.table(
        net,
        row + 2,
        "Sources",
        ["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg", "note"],
        sources,
        "sources_tbl",
    )

    res = b.sheet("Results", "Results — ripple currents and voltages", caution=True)
    res.set_column("B:H", 14)
    args = "parts_tbl,sources_tbl"
    res.write_row(4, 0, ["result", "value", "unit", "defined name", "note"], b.f["head"])
    outs = [
        ("Output DC voltage", f'=CKT_DC({args},"OUT","V")', "V", "v_out_dc", ""),
        (
            "Output ripple, peak-to-peak",
            "=MAX(INDEX(_xlfn.ANCHORARRAY(Data!A6),0,2))-MIN(INDEX(_xlfn.ANCHORARRAY(Data!A6),0,2))",
            "V",
            "v_ripple_pp",
            "from the waveform",
        ),
        ("Output ripple / DC", "=100*v_ripple_pp/v_out_dc", "%", "ripple_pct", ""),
        (
            "Capacitor ripple current, RMS",
            f'=CKT_RMS({args},"C_f","I")',
            "A",
            "cap_i_rms",
            "the capacitor carries no DC",
        ),
        ("Inductor current, DC", f'=CKT_DC({args},"L_f","I")', "A", "il_dc", ""),
        (
            "Inductor ripple current, peak-to-peak",
            "=MAX(INDEX(_xlfn.ANCHORARRAY(Data!D6),0,2))-MIN(INDEX(_xlfn.ANCHORARRAY(Data!D6),0,2))",
            "A",
            "il_ripple_pp",
            "",
        ),
        (
            "Inductor ripple, closed form (Vin−Vout)·D/(L·f)",
            "=(v_in-v_out_dc)*duty/(l_f*f_sw)",
            "A",
            "il_ripple_cf",
            "common practice (ideal switch)",
        ),
    ]
    for k, (label, formula, unit, name, note) in enumerate(outs):
        b.output(res, 5 + k, label, formula, unit, name, note)
    res.write(18, 0, "Output voltage per frequency", b.f["label"])
    b.spill(res, 19, 0, f'=CKT_SOLVE({args},"OUT","V")')
    res.write(39, 0, "Charts", b.f["label"])
    b.chart(
        res,
        "A41",
        "line",
        "Output voltage ripple (one switching period)",
        {"name": "time (s)"},
        {"name": "V"},
        [
            {
                "name": "output voltage",
                "categories": "=Data!$A$7:$A$406",
                "values": "=Data!$B$7:$B$406",
                "line": {"color": NAVY},
            },
        ],
    )
    b.chart(
        res,
        "A58",
        "line",
        "Inductor current (one switching period)",
        {"name": "time (s)"},
        {"name": "A"},
        [
            {
                "name": "inductor current",
                "categories": "=Data!$D$7:$D$406",
                "values": "=Data!$E$7:$E$406",
                "line": {"color": TEAL},
            },
        ],
    )
    b.chart(
        res,
        "A75",
        "column",
        "Output ripple spectrum (AC tones)",
        {"name": "frequency (Hz)"},
        {"name": "V peak", "log_base": 10},
        [
            {
                "name": "output voltage peak per frequency",
                "categories": "=Results!$A$22:$A$36",
                "values": "=Results!$B$22:$B$36",
                "fill": {"color": TEAL},
            },
        ],
    )

    chk = b.sheet(
        "Checks", "Checks — pass/fail against limits, with the source of each limit", caution=True
    )
    _checks(
        b,
        chk,
        4,
        [
            (
                "Capacitor ripple current / rated",
                "=cap_i_rms/cap_i_rated",
                "=1",
                "ratio",
                '=IF(B6<=C6,"PASS","FAIL")',
                "capacitor maker's rated ripple current (input)",
            ),
            (
                "Output ripple, peak-to-peak",
                "=ripple_pct",
                "=ripple_allow_pct",
                "%",
                '=IF(B7<=C7,"PASS","FAIL")',
                "design requirement (input)",
            ),
            (
                "Inductor ripple vs closed form",
                "=ABS(il_ripple_pp/il_ripple_cf-1)*100",
                "=5",
                "%",
                '=IF(B8<=C8,"PASS","FAIL")',
                "consistency with ΔI = (Vin−Vout)·D/(L·f), common practice; "
                "differs by the 15-harmonic truncation and the load's share of the ripple",
            ),
        ],
    )
    b.notes(
        [
            "Method:",
            "The switch-node voltage is a rectangular wave: its DC level D·Vin plus 15 harmonics of the switching "
            "frequency (Fourier series, common practice). Each tone is solved through the LC filter by phasors and "
            "the results combined: RMS ripple current, waveforms over one switching period, spectra.",
            "Assumptions:",
            "Ideal switch (zero rise time), continuous conduction; capacitor ESR constant with frequency; the 15 "
            "harmonics truncate the switch-node edges (ripple figures converge as 1/n²).",
            "Sign conventions:",
            "Part voltage V(from) − V(to), current from → to; phasors peak, cosine reference.",
            "Cautions:",
            CAUTION,
            DEMO,
        ]
    )
    data = b.data_sheet()
    data.write(4, 0, "Output voltage over one switching period", b.f["label"])
    b.spill(data, 5, 0, '=CKT_WAVE(parts_tbl,sources_tbl,"OUT","V",400)')
    data.write(4, 3, "Inductor current over one period", b.f["label"])
    b.spill(data, 5, 3, '=CKT_WAVE(parts_tbl,sources_tbl,"L_f","I",400)')
    b.close()


TEMPLATES = {
    "plant_harmonics.xlsx": plant_harmonics,
    "detuned_filter.xlsx": detuned_filter,
    "dc_link_ripple.xlsx": dc_link_ripple,
}


def build_all(out_dir: str | Path) -> list[Path]:
    """Write every template into ``out_dir`` with cached values from our engine."""
    from .workbook.recalc import recalc

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    written = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, build in TEMPLATES.items():
            raw = Path(tmp) / name
            build(raw)
            rep = recalc(raw, out / name)
            if rep.errors:
                raise RuntimeError(f"{name}: formula errors after recalculation: {rep.errors[:5]}")
            written.append(out / name)
    return written


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    for p in build_all(args[0] if args else "workbook_templates"):
        print(f"wrote {p}")
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
