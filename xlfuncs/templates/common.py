"""Pieces the harmonic-study descriptions share (all values invented demo data)."""

from __future__ import annotations

from .formulas import pick, spilled
from .model import Axis, Block, Chart, Check, Col, Grid, Row, Series, Table, num, whole

# fmt: off
ORDERS = (5, 7, 11, 13, 17, 19, 23, 25)
DRIVE_PCT = (30.0, 12.0, 7.0, 5.0, 3.5, 2.8, 2.0, 1.8)  # invented spectrum, % of I1
W = "(2*PI()*f_hz)"
TEAL = "#2E8B8B"
SCENARIO_NOTE = (
    "Each column S1… is the whole check list evaluated again with the swept values in place of "
    "the inputs (the network, results and spilled studies of every column are on the hidden "
    "Cases sheet). The outlined value in each row is the worst case of that check."
)


def verdicts(na_example: str) -> tuple[str, ...]:
    """The Notes paragraph on verdicts, with the book's own example of a check that does
    not apply (the template's ``na_example``)."""
    return (
        "A check reads PASS or FAIL only from numbers; a check whose value or limit is not a "
        f"number reads ERROR; n/a marks a check that does not apply ({na_example}). The "
        "overall verdict is PASS only when every applicable check passes and every input is "
        "accepted; otherwise FAIL, INCOMPLETE or INVALID INPUT.",
    )

DRIVE_GRID = Grid(
    "Drive harmonic spectrum (% of the drive's fundamental current)",
    (Col("order h", "int"), Col("% of I1", "1")),
    ("drive_orders", "drive_pct"),
    (whole(2, 50), num(0, 100)),
    tuple(zip(ORDERS, DRIVE_PCT, strict=True)),
    note="A maker's or measured spectrum of the drives, one harmonic order per row.",
)


def drive_rows(frm: str, to: str, i1: str, note: str) -> tuple[Row, ...]:
    """One sources row per order of the drive spectrum grid (phase 0: peaks only)."""
    return tuple(
        Row(
            ("I_drive", "I", frm, to, f"=INDEX(drive_orders,{k + 1})",
             f"={i1}*INDEX(drive_pct,{k + 1})/100", 0),
            note,
        )
        for k in range(len(ORDERS))
    )


SOURCE_COLS = (
    Col("name"), Col("kind"), Col("from"), Col("to"), Col("harmonic", "int"),
    Col("rms", "3", 11), Col("phase_deg", "deg", 10),
)
PART_COLS = (Col("name"), Col("kind"), Col("from"), Col("to"), Col("value", "sig", 12))
OPTIONS = Table(
    "opts", "Options", (Col("key", width=15), Col("value")),
    (Row(("fundamental_hz", "=f_hz")), Row(("ground", "GND"))), excel=False,
)


DUTY_UNITS = (("rms voltage", "V"), ("peak voltage", "V"), ("rms current", "A"),
              ("kvar", "kvar"))


def duty_block(
    part: str, kvar: str, volts: str, when: str,
    title: str = "Capacitor duty (IEEE Std 18-2002 continuous limits)",
) -> Block:
    return Block(
        "duty",
        title,
        f'CKT_CAPDUTY(parts_tbl,sources_tbl,"{part}",{kvar},{volts},opts)',
        (Col("quantity", width=16), Col("value", "2"), Col("rated", "2"), Col("ratio", "3"),
         Col("limit", "2"), Col("pass")),
        6,
        when=when,
        units=DUTY_UNITS,
    )


def duty_checks(applies: str | None, block: str = "duty", row: str = "") -> tuple[Check, ...]:
    """The four IEEE 18 checks from the ratio and limit columns of a duty table (``block``;
    its row names prefixed by ``row``, e.g. "capacitor ")."""
    rows = (
        ("Capacitor RMS voltage / rated", "rms voltage", "110 % of rated RMS voltage"),
        ("Capacitor peak voltage / rated peak", "peak voltage",
         "120 % of rated peak voltage (arithmetic sum of harmonic peaks)"),
        ("Capacitor RMS current / nominal", "rms current", "135 % of nominal RMS current"),
        ("Capacitor kvar / rated", "kvar", "135 % of rated kvar"),
    )
    return tuple(
        Check(label, "=" + pick(block, row + name, "ratio"), "=" + pick(block, row + name, "limit"),
              "ratio", f"IEEE Std 18-2002 continuous limits: {src}", applies=applies,
              fmt="3")
        for label, name, src in rows
    )


def scan_blocks(f_stop: str, parts: str = "parts_tbl", key: str = "",
                what: str = "") -> tuple[Block, ...]:
    """The impedance scan at the bus (block ``scan`` + key) and at the injected orders
    (``zinj`` + key) of the parts table ``parts``, and, for the first set (no key), the
    scan's x axis as harmonic order (``scan_h``) — Data sheet."""
    z_cols = (Col("freq_hz", "hz"), Col("z_ohm", "sig"), Col("angle_deg", "deg"))
    return (
        Block(f"scan{key}", f"Impedance scan at the bus{what} (200 points)",
              f'CKT_SCAN({parts},"BUS",f_hz,{f_stop},200,opts,sources_tbl)', z_cols, 201),
        *(() if key else (Block("scan_h", "harmonic order", "{scan:freq_hz}/f_hz",
                                (Col("h", "2"),), 201, headed=False),)),
        Block(f"zinj{key}", f"Impedance at the injected orders{what}",
              f'CKT_IMPEDANCE({parts},"BUS",{{harm:f}},opts,sources_tbl)', z_cols, 9),
    )


# columns of CKT_RESONANCES / CKT_BUS_RESONANCES
RES_COLS = (
    Col("kind", width=12),
    Col("freq_hz", "hz"),
    Col("order", "2"),
    Col("z_ohm", "sig"),
    Col("damping", "4"),
    Col("q", "1"),
)


def resonance_block(f_stop: str, title: str) -> Block:
    return Block(
        "res", title, f'CKT_RESONANCES(parts_tbl,"BUS",f_hz,{f_stop},400,opts,sources_tbl)',
        RES_COLS,
        8,
    )


def first_resonance(kind: str, col: int) -> str:
    """The first resonance of a kind from the resonance list, or "none found"; an error
    line of the function stays visible as it is."""
    return (
        f'=IF(LEFT({{res:@}},6)="ERROR:",{{res:@}},IFERROR(INDEX('
        f'_xlfn._xlws.FILTER(INDEX({{res}},0,{col}),INDEX({{res}},0,1)="{kind}"),1,1),'
        f'"none found"))'
    )


SIGNS = (
    "A part's voltage is V(from) − V(to); its current flows from 'from' to 'to' through it. "
    "Phasors are peak values, cosine reference; RMS values combine as √Σ rms²; angles are "
    "shown in (−180°, 180°].",
)
HIDDEN = (
    "The Data sheet (the long tables behind the charts) and, in a book with scenarios, the "
    "Cases sheet (one copy of the calculation per scenario) are hidden so that they do not "
    "print; right-click a sheet tab and choose Unhide to see them."
)
LIVE = (
    "The book opens with the values xlfuncs computed when it was written (no recalculation on "
    "opening). To make it live in Excel: install xlfuncs and the xlwings add-in, set UDF "
    "Modules to xlfuncs.worksheet, Import Functions, then recalculate everything with "
    "Ctrl+Alt+F9. Without the functions, edited cells that depend on CKT_ functions show "
    "#NAME?. Headless: xlfuncs recalc BOOK.xlsx -o OUT.xlsx --set name=value.",
    HIDDEN,
    "Numbers typed into the Network tables may carry SI prefixes and units (22u, 4.7 µF, "
    "10 kΩ); the inputs are plain numbers in the unit shown beside each.",
)


BASIS_CHARS = 170  # the basis line of an IEEE 519 table (bus voltage, Isc/IL, fundamental)
V519_COLS = (Col("item", width=12), Col("percent", "2"), Col("limit_percent", "2", 14),
             Col("result", width=9))


def v_checks() -> tuple[Check, ...]:
    """Bus voltage THD and the largest individual harmonic against IEEE 519 Table 1."""
    return (
        Check("Bus voltage THD", "=" + pick("v519", "THD", "percent"),
              "=" + pick("v519", "THD", "limit_percent"), "%",
              "IEEE Std 519-2014 Table 1 (THD, by bus voltage)"),
        Check("Largest individual voltage harmonic",
              "=" + spilled("v519", "item", '_xlfn.MAXIFS({v519:percent},{v519:item},"h*")'),
              "=" + spilled("v519", "item",
                            '_xlfn.MINIFS({v519:limit_percent},{v519:item},"h*")'), "%",
              "IEEE Std 519-2014 Table 1 (individual harmonic)"),
    )


def harm_table(with_distance: bool) -> Table:
    """Per injected order: V_h in % of V_1 (from block vbus), the Table 1 limit (block
    limits), |Z| at the bus (block zinj) and optionally the distance to res_order."""
    cols: tuple[Col, ...] = (
        Col("h", "int", key="h"), Col("freq_hz", "hz", key="f"),
        Col("V_h % of V_1", "2", 12, "vh"), Col("limit %", "2", key="lim"),
        Col("|Z| at the bus, Ω", "sig", 14, "z"),
    )
    dist = '=IF(ISNUMBER(res_order),ABS(res_order-{@h})/{@h}*100,"n/a")'
    rows = tuple(
        Row((
            f"=INDEX(drive_orders,{k + 1})", "={@h}*f_hz",
            "=100*INDEX({vbus},MATCH({@f}*(1+1E-9),INDEX({vbus},0,1),1),3)"
            "/INDEX({vbus},MATCH(f_hz*(1+1E-9),INDEX({vbus},0,1),1),3)",
            '=INDEX({limits},2,MATCH("individual_pct",INDEX({limits},1,0),0))',
            f'=INDEX({{zinj}},{k + 2},MATCH("z_ohm",INDEX({{zinj}},1,0),0))',
            *((dist,) if with_distance else ()),
        ))
        for k in range(len(ORDERS))
    )
    if with_distance:
        cols = (*cols, Col("distance to the resonance %", "1", 14, "dist"))
    return Table("harm", "Harmonic table at the injected orders", cols, rows, excel=False)


SOLVE_COLS = (Col("freq_hz", "hz"), Col("peak", "2"), Col("rms", "2"), Col("phase_deg", "deg"))


def vbus_block(parts: str = "parts_tbl", key: str = "vbus", what: str = "") -> Block:
    """The bus voltage per frequency from CKT_SOLVE (of the parts table ``parts``)."""
    return Block(key, f"Bus voltage per frequency{what} (V, line-to-neutral)",
                 f'CKT_SOLVE({parts},sources_tbl,"BUS","V",opts)', SOLVE_COLS, 12)


def limits_block() -> Block:
    return Block("limits", "IEEE 519 Table 1 limits", "CKT_V519_LIMITS(v_ll/1000)",
                 (Col("individual_pct", "1", 14), Col("thd_pct", "1")), 2)


def harmonics_chart() -> Chart:
    return Chart(
        "Bus voltage harmonics against the IEEE 519 individual limit",
        Axis("harmonic order h"), Axis("% of the fundamental", fmt="0"), (
            Series("V_h, % of V_1", "{harm:h}", "{harm:vh}", "column", "#2E8B8B"),
            Series("IEEE 519 individual limit", "{harm:h}", "{harm:lim}", "column", "#B0B0B0"),
        ), kind="column",
    )


def impedance_chart(max_order: int) -> Chart:
    return Chart(
        "Impedance seen at the bus, with the injected orders",
        Axis("harmonic order h = f / f₁", lo=0, hi=max_order), Axis("|Z| (Ω)", log=True), (
            Series("|Z| at the bus", "{scan_h:h}", "{scan:z_ohm}"),
            Series("injected orders", "{harm:h}", "{harm:z}", "markers", "#C0392B"),
        ),
    )
