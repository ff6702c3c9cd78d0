"""Plant bus harmonic study on the equipment table: utility, transformer, LV incomer,
capacitor bank in steps, linear load and six-pulse drives (converters with a spectrum).

Invented demo data; it fails its checks on purpose (a bank tuned near the 7th). The
equipment-table pieces (columns, rows, spectrum grid, the spectra and options tables and
the waveform rebuilt from a harmonic table) are shared with the twelve-pulse description.
"""

from __future__ import annotations

from typing import Any

from . import common as cm
from .formulas import pick, spilled
from .model import (
    Axis,
    Block,
    Chart,
    Check,
    Col,
    Grid,
    Input,
    Result,
    Row,
    Scenarios,
    Section,
    Series,
    Sweep,
    Table,
    Template,
    num,
    whole,
)

# fmt: off
W = cm.W
EQ = "eq_tbl,spectra_tbl"  # the study's tables: equipment, spectra
SO = "study_opts"  # the study's options (fundamental_hz, max_order)

# ------------------------------------------------------------------ equipment pieces
# every column the descriptions use, in this order, with its display format
EQ_FORMATS = {
    "name": "general", "kind": "general", "bus": "general", "bus_to": "general",
    "kv": "0.0##", "mva_sc": "0.0", "x_r": "0.0", "kva": "#,##0", "kv_hv": "0.0##",
    "kv_lv": "0.0##", "z_pct": "0.00", "connection": "general", "length_km": "0.0##",
    "r_ohm_km": "0.0###", "x_ohm_km": "0.0###", "kvar": "#,##0.0", "steps": "0",
    "steps_on": "0", "kw": "#,##0.0", "pf": "0.00", "model": "general", "spectrum": "general",
}
WIDTHS = {"name": 6, "kind": 10, "bus": 6, "bus_to": 7, "kv": 7, "mva_sc": 7, "x_r": 5,
          "kva": 6, "kv_hv": 7, "kv_lv": 7, "z_pct": 6, "connection": 10, "length_km": 9,
          "r_ohm_km": 9, "x_ohm_km": 9, "kvar": 7, "steps": 6, "steps_on": 8, "kw": 7, "pf": 5,
          "model": 8, "spectrum": 9}


def equipment(
    rows: tuple[tuple[dict[str, Any], str, str | None], ...], title: str
) -> tuple[Table, str]:
    """The equipment table (an Excel Table on the Network sheet) from rows given as
    (column → value, note, condition), only the columns some row uses; and its row notes
    as one paragraph for the Notes sheet (the table is wide enough without them)."""
    used = [c for c in EQ_FORMATS if any(c in r for r, _n, _w in rows)]
    cols = tuple(Col(c, EQ_FORMATS[c], WIDTHS[c]) for c in used)
    table = Table("eq_tbl", title, cols, tuple(
        Row(tuple(r.get(c) for c in used), "", when) for r, _note, when in rows))
    notes = "; ".join(
        f"{r['name']} ({r['kind']}): {note}" + ("" if when is None else f", in service when {when}")
        for r, note, when in rows)
    return table, f"Equipment rows (Network sheet) — {notes}."


def spectrum_grid(orders: tuple[int, ...], pct: tuple[float, ...]) -> Grid:
    """The drive spectrum as inputs: order, % of I1, phase relative to the fundamental."""
    phase = tuple(180.0 if (h + 1) % 6 == 0 else 0.0 for h in orders)
    return Grid(
        "Drive harmonic spectrum (% of the drive's fundamental current; phase relative to "
        "its own fundamental: 180° for 6k−1, 0° for 6k+1 in the ideal six-pulse bridge)",
        (Col("order h", "int"), Col("% of I1", "1"), Col("phase_deg", "deg")),
        ("drive_orders", "drive_pct", "drive_phase"),
        (whole(2, 50), num(0, 100), num(-180, 180)),
        tuple(zip(orders, pct, phase, strict=True)),
        note="A maker's or measured spectrum, one order per row; phase relative to the "
        "drive's own fundamental (h·θ1 + phase). Default phases: 180° for 6k−1, 0° for 6k+1 "
        "(the ideal six-pulse bridge).",
    )


def spectra_table(n: int, name: str = "VFD6") -> Table:
    return Table("spectra_tbl", "Spectra (from the drive spectrum inputs)", (
        Col("spectrum", width=10), Col("order", "int"), Col("pct", "1"),
        Col("phase_deg", "deg", 10)), tuple(
        Row((name, f"=INDEX(drive_orders,{k})", f"=INDEX(drive_pct,{k})",
             f"=INDEX(drive_phase,{k})")) for k in range(1, n + 1)))


STUDY_OPTS = Table(
    "study_opts", "Study options", (Col("key", width=15), Col("value")),
    (Row(("fundamental_hz", "=f_hz")), Row(("max_order", 50))), excel=False,
)


def harmonics_block(key: str, title: str, formula: str, rows: int, v: bool,
                    when: str | None = None) -> Block:
    """A spilled bus (v) or branch harmonic table of the study."""
    q = "v" if v else "i"
    return Block(key, title, formula, (
        Col("order", "general", 8), Col("freq_hz", "hz"), Col("sequence", width=9),
        Col(f"{q}_rms", "2", 10), Col(f"{q}_pct", "2", 9), Col("angle_deg", "deg", 10)),
        rows, when=when)


def wave_tables(block: str, n: int) -> tuple[Table, Table]:
    """A 1 Ω resistor driven by one source per row of a bus harmonic table: its voltage
    is the bus voltage rebuilt from the study's RMS values and angles (for the waveform
    and its true peak, CKT_PEAK / CKT_WAVE on these tables)."""
    b = "{" + block + "}"
    head = (Col("name"), Col("kind"), Col("from"), Col("to"))  # narrow: the sheet is wide
    parts = Table("wave_parts", "Waveform circuit: a 1 Ω load across the sources below",
                  (*head, Col("value", "0", 7)), (Row(("R_x", "R", "X", "GND", 1)),),
                  excel=False)
    srcs = Table("wave_src", "Waveform circuit: the bus voltage per order (RMS and angle from "
                 "the study's bus table)", (*head, Col("harmonic", "int", 8), Col("rms", "2", 8),
                                           Col("phase_deg", "deg", 9)), tuple(
        Row(("V_bus", "V", "X", "GND", f"=INDEX({b},{k + 1},1)", f"=INDEX({b},{k + 1},4)",
             f"=INDEX({b},{k + 1},6)")) for k in range(1, n + 1)), excel=False)
    return parts, srcs


def head_rows(formula: str, n: int) -> str:
    """The first ``n`` rows of a spilled table (a one-line message passes unchanged)."""
    return f"_xlfn.LET(_xlpm.t,{formula},IF(ROWS(_xlpm.t)>1,_xlfn.TAKE(_xlpm.t,{n}),_xlpm.t))"


def got(block: str, row: str, col: str, header: str = "order") -> str:
    """A cell of a spilled study table by row label and header, or the block's own
    one-line message (or "n/a") when it did not spill its table."""
    return spilled(block, header, pick(block, row, col))


def order_pick(block: str, col: int, h: str = "{@h}") -> str:
    """Column ``col`` of the row of a harmonic table whose order is ``h``."""
    b = "{" + block + "}"
    return f"INDEX({b},MATCH({h},INDEX({b},0,1),0),{col})"


# ------------------------------------------------------------------ the plant
SPECTRUM = spectrum_grid(cm.ORDERS, cm.DRIVE_PCT)
N_ORD = len(cm.ORDERS)

INPUTS = (
    Section("Supply (utility at the transformer primary)", (
        Input("f_hz", "System frequency", 60, "Hz", num(40, 70), "fundamental of every order"),
        Input("kv_hv", "Transformer primary voltage, line-to-line", 13.8, "kV",
              num(1, 500), "the utility's voltage; the transformer's rated HV voltage"),
        Input("ssc_mva", "Utility short-circuit power, maximum", 50, "MVA", num(0.1, 1e4),
              "at the transformer primary, from the utility"),
        Input("xr_util", "Utility X/R", 10, "", num(0.1, 100)),
        Input("ssc_min_mva", "Utility short-circuit power, minimum", 25, "MVA", num(0.1, 1e4),
              "the weakest supply, for the scenario table"),
    )),
    Section("Transformer and LV incomer", (
        Input("v_ll", "Plant bus voltage, line-to-line", 480, "V", num(100, 1000),
              "the transformer's rated LV voltage; the plant bus is the point of common "
              "coupling (PCC) here"),
        Input("tx_kva", "Transformer rating", 1500, "kVA", num(10, 1e5)),
        Input("tx_z_pct", "Transformer impedance", 5.75, "%", num(0.5, 25), "nameplate %Z"),
        Input("tx_xr", "Transformer X/R", 7, "", num(0.1, 100)),
        Input("inc_m", "LV incomer length (transformer to plant bus)", 15, "m", num(0.1, 2000),
              "busway or parallel cables"),
        Input("inc_r", "LV incomer resistance", 0.02, "Ω/km", num(0, 10),
              "all parallel runs together, at the fundamental"),
        Input("inc_x", "LV incomer reactance", 0.015, "Ω/km", num(0, 10),
              "all parallel runs together, at the fundamental"),
    )),
    Section("Transformer losses (for IEEE Std C57.110 derating)", (
        Input("tx_tsl_pu", "Total stray loss at rated current, P_TSL-R", 0.25, "pu of I²R",
              num(0, 5), "load loss minus I²R loss, from the test report (demo value)"),
        Input("tx_ec_share", "Winding eddy-current share of the stray loss", 0.33, "fraction",
              num(0, 1), "IEEE Std C57.110 guidance when only P_TSL-R is known (from memory): "
              "about 0.33 for liquid-immersed, 0.67 for dry-type units; the maker's P_EC-R "
              "takes precedence"),
    )),
    Section("Capacitor bank", (
        Input("cap_kvar_step", "Capacitor step", 100, "kvar", num(1, 1e4),
              "rated kvar of one step at its rated voltage"),
        Input("cap_steps_installed", "Capacitor steps installed", 4, "", whole(1, 20),
              "the bank's size"),
        Input("cap_steps", "Capacitor steps in service", 3, "", whole(0, 20),
              "0 = no bank (the base case); at most the steps installed"),
        Input("cap_v_rated", "Capacitor rated voltage, line-to-line", 480, "V", num(100, 1000),
              "delta-connected units"),
    )),
    Section("Loads", (
        Input("load_kw", "Linear load", 500, "kW", num(0, 1e5), "modelled as R ‖ L"),
        Input("load_pf", "Linear load power factor", 0.85, "", num(0.5, 1)),
        Input("drive_kw", "Drive load", 600, "kW", num(0, 1e5), "six-pulse drives, combined"),
        Input("drive_pf", "Drive displacement power factor", 0.95, "", num(0.5, 1)),
        Input("i_l", "Maximum demand load current I_L", 1400, "A", num(1, 1e6),
              "12-month average of monthly maxima (IEEE 519 TDD basis)"),
    )),
    SPECTRUM,
)

BANK = "cap_steps>0"
NA = "the capacitor checks with 0 steps in service, or the resonance distance when the scan finds none"
EQUIPMENT, EQ_NOTES = equipment((
    ({"name": "U1", "kind": "supply", "bus": "HV", "kv": "=kv_hv", "mva_sc": "=ssc_mva",
      "x_r": "=xr_util"}, "utility at the transformer primary", None),
    ({"name": "T1", "kind": "transformer", "bus": "HV", "bus_to": "LVT", "kva": "=tx_kva",
      "kv_hv": "=kv_hv", "kv_lv": "=v_ll/1000", "z_pct": "=tx_z_pct", "x_r": "=tx_xr",
      "connection": "Dyn11"}, "plant transformer; its vector group is the connection cell", None),
    ({"name": "K1", "kind": "cable", "bus": "LVT", "bus_to": "BUS", "length_km": "=inc_m/1000",
      "r_ohm_km": "=inc_r", "x_ohm_km": "=inc_x"},
     "LV incomer; its current is the PCC current", None),
    ({"name": "C1", "kind": "capacitor", "bus": "BUS", "kv": "=cap_v_rated/1000",
      "kvar": "=cap_steps_installed*cap_kvar_step", "steps": "=cap_steps_installed",
      "steps_on": "=cap_steps", "connection": "D"}, "capacitor bank in steps", None),
    ({"name": "L1", "kind": "load", "bus": "BUS", "kv": "=v_ll/1000", "kw": "=load_kw",
      "pf": "=load_pf", "model": "parallel"}, "linear load (R ‖ L)", "load_kw>0"),
    ({"name": "D1", "kind": "converter", "bus": "BUS", "kv": "=v_ll/1000", "kw": "=drive_kw",
      "pf": "=drive_pf", "spectrum": "VFD6"}, "six-pulse drives, combined", "drive_kw>0"),
), "Equipment (ratings only; the study expands them into per-phase sequence networks; notes "
   "on each row on the Notes sheet)")

WAVE_PARTS, WAVE_SRC = wave_tables("vbus", N_ORD + 1)
RES = "{res}"
BUS_FIRST_PARALLEL = (
    f'=IF(NOT({BANK}),"n/a",IF(LEFT({{res:@}},6)="ERROR:",{{res:@}},'
    f'IFERROR(INDEX(_xlfn._xlws.FILTER(INDEX({RES},0,3),INDEX({RES},0,1)="parallel"),1,1),'
    f'"none found")))'
)

HARM = Table("harm", "Harmonic table at the injected orders", (
    Col("h", "int", key="h"), Col("freq_hz", "hz", key="f"),
    Col("V_h % of V_1", "2", 12, "vh"), Col("limit %", "2", key="lim"),
    Col("|Z| at the bus, Ω", "sig", 14, "z"), Col("distance to the resonance %", "1", 14, "dist"),
), tuple(Row((
    f"=INDEX(drive_orders,{k + 1})", "={@h}*f_hz", "=" + order_pick("vbus", 5),
    '=INDEX({limits},2,MATCH("individual_pct",INDEX({limits},1,0),0))',
    f'=INDEX({{zinj}},{k + 2},MATCH("z_ohm",INDEX({{zinj}},1,0),0))',
    '=IF(ISNUMBER(res_order),ABS(res_order-{@h})/{@h}*100,"n/a")',
)) for k in range(N_ORD)), excel=False)

DERATE_ROWS = 13  # header, the C57.110 factors, I_rms_a, I_rated_a, load_pu, load_over_I_max
DERATE_UNITS = (("I_max_pu", "pu"), ("P_LL_pu", "pu"), ("P_LL_R_pu", "pu"),
                ("I_equal_load_loss_pu", "pu"), ("Irms_over_I1", "ratio"), ("I_rms_a", "A"),
                ("I_rated_a", "A"), ("load_pu", "pu"), ("load_over_I_max", "ratio"))


def derating_block(key: str, item: str, title: str, when: str | None = None) -> Block:
    """IEEE C57.110 derating of a transformer of the study for the current the study puts
    through it (its star winding), without the long basis row (the Notes carry it)."""
    return Block(key, title, head_rows(
        f'CKT_ITEM_XFMR_DERATE({EQ},"{item}",tx_pec_pu,{SO},tx_posl_pu)', DERATE_ROWS),
        (Col("quantity", width=22), Col("value", "qty", 14)), DERATE_ROWS, when=when,
        units=DERATE_UNITS)


RESULTS = (
    Section("Network values derived from the inputs", (
        Result("z_util", "Utility |Z| referred to the bus voltage",
               "=v_ll^2/(ssc_mva*1E6)", "Ω", "sig"),
        Result("z_tx", "Transformer impedance |Z|", "=tx_z_pct/100*v_ll^2/(tx_kva*1E3)", "Ω",
               "sig"),
        Result("z_inc", "LV incomer impedance |Z|", "=inc_m/1000*SQRT(inc_r^2+inc_x^2)", "Ω",
               "sig"),
        Result("r_sc", "Short-circuit resistance at the bus",
               "=z_util/SQRT(1+xr_util^2)+z_tx/SQRT(1+tx_xr^2)+inc_m/1000*inc_r", "Ω", "sig"),
        Result("x_sc", "Short-circuit reactance at the bus (f1)",
               "=z_util*xr_util/SQRT(1+xr_util^2)+z_tx*tx_xr/SQRT(1+tx_xr^2)+inc_m/1000*inc_x",
               "Ω", "sig"),
        Result("c_bank_f", "Bank capacitance per phase (star equivalent)",
               f"=cap_steps*cap_kvar_step*1E3/({W}*cap_v_rated^2)", "F", "sig"),
        Result("i1_drive", "Drive I1 at the rated bus voltage",
               "=drive_kw*1E3/(SQRT(3)*v_ll*drive_pf)", "A", "1",
               "the study solves it at the actual bus voltage"),
        Result("tx_i_rated", "Transformer rated LV current", "=tx_kva*1E3/(SQRT(3)*v_ll)", "A",
               "1"),
        Result("tx_pec_pu", "Winding eddy loss P_EC-R (rated current)",
               "=tx_ec_share*tx_tsl_pu", "pu of I²R", "3"),
        Result("tx_posl_pu", "Other stray loss P_OSL-R (rated current)",
               "=(1-tx_ec_share)*tx_tsl_pu", "pu of I²R", "3"),
    )),
    Section("Key results", (
        Result("bus_v_rms", "Bus voltage, total RMS (line-to-neutral)",
               "=" + got("vbus", "total", "v_rms"), "V", "1"),
        Result("bus_v_peak", "Bus voltage, true peak (line-to-neutral)",
               '=IF(ISNUMBER(bus_v_rms),CKT_PEAK(wave_parts,wave_src,"X","V",opts),bus_v_rms)', "V", "1",
               "insulation; waveform rebuilt from the bus table"),
        Result("bus_thd_pct", "Bus voltage THD", "=" + got("vbus", "total", "v_pct"), "%",
               "2", "harmonics 2–50, DC excluded"),
        Result("pcc_i_rms", "PCC current, total RMS", "=" + got("itx", "total", "i_rms"), "A",
               "1", "through the transformer and the incomer"),
        Result("isc_a", "Short-circuit current at the bus", "=v_ll/SQRT(3)/SQRT(r_sc^2+x_sc^2)",
               "A", "thou", "utility + transformer + incomer"),
        Result("isc_il", "Isc / I_L", "=isc_a/i_l", "", "1", "selects the IEEE 519 Table 2 row"),
        Result("ssc_bus_mva", "Short-circuit power at the bus", "=SQRT(3)*v_ll*isc_a/1E6",
               "MVA", "2"),
        Result("q_cap_mvar", "Capacitor bank at bus voltage",
               "=cap_steps*cap_kvar_step*(v_ll/cap_v_rated)^2/1E3", "Mvar", "3"),
        Result("res_rule", "Resonance order, rule of thumb √(S_sc/Q_cap)",
               '=IF(q_cap_mvar>0,SQRT(ssc_bus_mva/q_cap_mvar),"n/a")', "h", "2",
               "common practice"),
        Result("res_order", "Parallel resonance order, from the scan", BUS_FIRST_PARALLEL, "h",
               "2", "first parallel resonance listed"),
        Result("cap_i_rms", "Capacitor line current, total RMS",
               f'=IF({BANK},{got("icap", "total", "i_rms")},"n/a")', "A", "1"),
        Result("cap_i_duty", "Capacitor RMS current / nominal",
               f'=IF({BANK},{got("duty", "rms current", "ratio", "quantity")},"n/a")', "ratio", "3",
               "IEEE Std 18 limit 1.35"),
        Result("cap_vpk_duty", "Capacitor peak voltage / rated peak",
               f'=IF({BANK},{got("duty", "peak voltage", "ratio", "quantity")},"n/a")', "ratio", "3",
               "IEEE Std 18 limit 1.20"),
        Result("tx_i_pu", "Transformer RMS current / rated",
               "=" + got("xfd", "load_pu", "value", "quantity"), "pu", "3",
               "LV line current of the study"),
        Result("tx_fhl", "Harmonic loss factor F_HL (eddy loss)",
               "=" + got("xfd", "F_HL", "value", "quantity"), "", "3", "IEEE Std C57.110"),
        Result("tx_imax_pu", "Transformer permissible RMS current (C57.110)",
               "=" + got("xfd", "I_max_pu", "value", "quantity"), "pu", "3",
               "IEEE Std C57.110, winding hot spot"),
    )),
    harmonics_block("vbus", "Bus voltage per order (line-to-neutral)",
                    f'CKT_BUS_HARMONICS({EQ},"BUS",{SO})', N_ORD + 3, v=True),
    HARM,
    Block("v519", "IEEE 519 voltage check at the bus", f'CKT_BUS_V519({EQ},"BUS",{SO})',
          cm.V519_COLS, 13, notes=cm.BASIS_CHARS),
    harmonics_block("itx", "PCC current: transformer LV line current (= the incomer's)",
                    f'CKT_BRANCH_HARMONICS({EQ},"T1",{SO},"bus_to")', N_ORD + 3, v=False),
    Block("i519", "IEEE 519 current check at the PCC (the incomer's current)",
          f'CKT_BRANCH_I519({EQ},"K1",isc_a,i_l,{SO})', cm.V519_COLS, 14, notes=cm.BASIS_CHARS),
    Block("res", "Resonances seen at the bus (positive-sequence network, supply shorted)",
          f'CKT_BUS_RESONANCES(eq_tbl,"BUS",f_hz,40*f_hz,400,"+",{SO})',
          cm.RES_COLS, 8, notes=320),  # the method note of a network with a resistance law
    Block("duty", "Capacitor duty of one delta unit (IEEE Std 18-2002 continuous limits)",
          f'CKT_ITEM_CAPDUTY({EQ},"C1",{SO})',
          (Col("quantity", width=16), Col("value", "2"), Col("rated", "2"), Col("ratio", "3"),
           Col("limit", "2"), Col("pass")), 6, when=BANK, units=cm.DUTY_UNITS),
    derating_block("xfd", "T1", "Transformer derating for its harmonic load current (IEEE Std "
                   "C57.110, formulas from memory; I_max_pu for the winding hot spot)"),
)

CHECKS = (
    *cm.v_checks(),
    Check("TDD at the PCC", "=" + pick("i519", "TDD", "percent"),
          "=" + pick("i519", "TDD", "limit_percent"), "%",
          "IEEE Std 519-2014 Table 2 (TDD, row by Isc/I_L)"),
    Check("Current harmonics over their limit",
          "=" + spilled("i519", "item", 'COUNTIFS({i519:result},"FAIL",{i519:item},"h*")'),
          "=0", "orders", "IEEE Std 519-2014 Table 2 (individual orders)", fmt="int"),
    *cm.duty_checks(BANK),
    Check("Resonance distance from the nearest injected order",
          "=MIN(((res_order-drive_orders)/drive_orders)^2)^0.5*100", "=10", "%",
          "common practice (from memory): keep a parallel resonance ≥ 10 % away from the "
          "characteristic orders", rule=">=", applies="ISNUMBER(res_order)", fmt="1"),
    Check("Resonance order: scan vs rule of thumb", "=ABS(res_order/res_rule-1)*100", "=15", "%",
          "consistency: h ≈ √(S_sc/Q_cap), common practice (large X/R)", applies=BANK, fmt="1"),
    Check("Transformer RMS current vs permissible", "=tx_i_pu", "=tx_imax_pu", "pu",
          "IEEE Std C57.110 (formulas from memory): maximum RMS current with this spectrum "
          "for the winding hot spot, from F_HL and P_EC-R", fmt="3"),
)

CHARTS = (
    cm.harmonics_chart(),
    cm.impedance_chart(40),
    Chart("Bus voltage over one fundamental period", Axis("time (ms)", lo=0),
          Axis("voltage, line-to-neutral (V)"),
          (Series("bus voltage", "{wave_ms:t}", "{wave:value}", color=cm.TEAL),)),
)

DATA = (
    Block("scan", "Impedance scan at the bus (200 points, positive sequence)",
          f'CKT_BUS_SCAN(eq_tbl,"BUS",f_hz,40*f_hz,200,"+",{SO})',
          (Col("freq_hz", "hz"), Col("z_ohm", "sig"), Col("angle_deg", "deg")), 201),
    Block("scan_h", "harmonic order", "{scan:freq_hz}/f_hz", (Col("h", "2"),), 201,
          headed=False),
    Block("zinj", "Impedance at the injected orders (expanded network)",
          'CKT_IMPEDANCE({xp},"BUS",{harm:f},opts)',
          (Col("freq_hz", "hz"), Col("z_ohm", "sig"), Col("angle_deg", "deg")), N_ORD + 1),
    Block("xp", "Expanded positive-sequence network (Ω, H, F at each item's voltage)",
          f'CKT_EXPAND(eq_tbl,"+",{SO})',
          (Col("name", width=10), Col("kind"), Col("from"), Col("to"), Col("value", "sig", 11),
           Col("sec_from"), Col("sec_to"), Col("r_exponent"), Col("zone_shift_deg"),
           Col("item"), Col("note", width=40)), 16),
    harmonics_block("icap", "Capacitor line current per order",
                    f'CKT_BRANCH_HARMONICS({EQ},"C1",{SO})', N_ORD + 3, v=False, when=BANK),
    Block("wave", "Bus voltage over one period", 'CKT_WAVE(wave_parts,wave_src,"X","V",400,opts)',
          (Col("time_s", "sig"), Col("value", "2")), 401),
    Block("wave_ms", "time (ms)", "{wave:time_s}*1000", (Col("t", "3"),), 401, headed=False),
    cm.limits_block(),
)

USING = (
    cm.LIVE[0],
    "Numbers in the equipment table are in the unit of their column (kv in kV line-to-line, "
    "kva in kVA, kvar in kvar, kw in kW, mva_sc in MVA) or carry their unit as text (480 V, "
    "13.8 kV, 2 MVA); a bare SI prefix (13.8k in a kV column) is refused as ambiguous. The "
    "inputs are plain numbers in the unit shown beside each.",
    cm.HIDDEN,
)
NOT_COVERED = (
    "Balanced operation only: every harmonic order is one sequence; unbalance, single-phase "
    "loads on one phase, interharmonics, background distortion of the utility, converter "
    "Norton impedances (drives are ideal current sources), transformer magnetising branches "
    "and transient switching duty are not modelled."
)

TEMPLATE = Template(
    file="plant_harmonics.xlsx",
    title="Plant bus harmonic study",
    subtitle="Three-phase harmonic study of a low-voltage plant bus from its equipment "
    "ratings: utility short-circuit level, transformer (kVA, %Z, X/R, vector group), LV "
    "incomer, a capacitor bank in steps, a linear load and six-pulse drives with a spectrum; "
    "voltage distortion against IEEE 519 Table 1, PCC current against Table 2, capacitor duty "
    "against IEEE 18, transformer derating by IEEE C57.110 and the parallel resonance against "
    "the injected orders.",
    scope=(
        "In scope: balanced operation, the orders of the drive spectrum in their sequence "
        "networks, every capacitor step from 0 to 4 at the minimum and maximum short-circuit "
        "level (Scenarios sheet), transformer derating for the harmonic load current.",
        "Not in scope: unbalance, single-phase loads on one phase, triplen and interharmonic "
        "currents, background distortion of the utility, transient switching duty.",
        "This invented scenario FAILS on purpose: the bank puts a parallel resonance near the "
        "7th. The detuned filter template shows a design that passes.",
    ),
    inputs=INPUTS,
    network=(EQUIPMENT, spectra_table(N_ORD), STUDY_OPTS, cm.OPTIONS, WAVE_PARTS, WAVE_SRC),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("bus_thd_pct", "bus_v_peak", "pcc_i_rms", "isc_il", "res_order", "res_rule",
                 "cap_i_duty", "cap_vpk_duty", "tx_i_pu", "tx_imax_pu"),
    na_example=NA,
    scenarios=Scenarios((
        Sweep("cap_steps", "capacitor steps in service", (0, 1, 2, 3, 4)),
        Sweep("ssc_mva", "utility short-circuit power", ("=ssc_min_mva", "=ssc_mva"),
              ("min", "max")),
    ), cm.SCENARIO_NOTE),
    notes=(
        ("Method", (
            "The equipment table (Network sheet) holds ratings only. The study (xlfuncs "
            "CKT_BUS_HARMONICS and its companions) expands each item into per-phase parts in "
            "ohms at its own voltage, solves the fundamental with the drives as constant-power "
            "loads, then injects each order of the drive spectrum at angle h·θ1 + phase into "
            "its sequence network (h ≡ 1 mod 3 positive, 2 negative, 0 zero) and combines the "
            "orders into RMS, THD and duty.",
            "Models (xlfuncs documentation, \"Three-phase harmonic studies from equipment "
            "ratings\", file docs/THREE_PHASE.md): utility R + jhX from its short-circuit power and "
            "X/R; transformer an ideal ratio with the vector group's phase shift and the "
            "leakage impedance from %Z and X/R, R ∝ √h; incomer R·√h + jhX; capacitor bank C "
            "from the kvar of the steps in service at the rated voltage (lossless); linear load "
            "R ‖ L; drives ideal current sources.",
            EQ_NOTES,
            "The resonance list and the impedance scan use the positive-sequence network with "
            "the drives open and the utility as its impedance. Its resistances grow with √h, so "
            "the resonances are found by a dense scan (200 points per decade, densified at the "
            "network's natural frequencies) refined by bisection: a search, not a proof that "
            "none is missed. The expanded network is on the Data sheet (every ohm, with its "
            "source).",
            "The bus voltage waveform and its true peak are rebuilt from the study's bus table "
            "(one source per order across 1 Ω on the Network sheet).",
        )),
        ("Transformer derating", (
            "IEEE Std C57.110 (formulas from memory, checked against their closed forms): F_HL "
            "= Σ(I_h/I1)²h² / Σ(I_h/I1)² from the transformer's LV line current of the study; "
            "I_max = √((1 + P_EC-R)/(1 + F_HL·P_EC-R)) per unit of rated current, for the "
            "winding hot spot. The check compares the RMS load current in per unit of rated "
            "with I_max.",
            "P_EC-R and P_OSL-R in per unit of the rated I²R loss: take them from the maker or "
            "the test report; with only the total stray loss known, the standard's guidance "
            "(from memory) puts about 33 % of it in the winding eddy loss for liquid-immersed "
            "and about 67 % for dry-type units.",
        )),
        ("Not modelled", (NOT_COVERED,)),
        ("Assumptions", (
            "PCC = the low-voltage plant bus; I_L from demand records (input). The capacitor "
            "steps in service may not exceed the steps installed (the study refuses it).",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Limits and their sources", (
            "IEEE Std 519-2014 Tables 1 and 2 (voltage and current distortion); IEEE Std 18-2002 "
            "continuous capacitor limits (110 % RMS V, 120 % peak V, 135 % RMS I, 135 % kvar); "
            "IEEE Std C57.110 (transformer derating, formulas from memory); the 10 % resonance "
            "margin is common practice (from memory).",
        )),
        ("Verdicts", cm.verdicts(NA)),
        ("Using the book", USING),
    ),
)
