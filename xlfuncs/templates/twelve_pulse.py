"""Twelve-pulse drive pair: two equal six-pulse drives behind transformers of different
vector groups (Dyn11 and Yyn0) on one plant bus; the 5th and 7th cancel in the common
feeder, the 11th and 13th add.

Invented demo data; this scenario passes its checks.
"""

from __future__ import annotations

from . import common as cm
from .formulas import pick, spilled
from .model import (
    Axis,
    Block,
    Chart,
    Check,
    Col,
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
)
from .plant import (
    EQ,
    NOT_COVERED,
    SO,
    STUDY_OPTS,
    USING,
    derating_block,
    equipment,
    got,
    harmonics_block,
    order_pick,
    spectra_table,
    spectrum_grid,
)

# fmt: off
N_ORD = len(cm.ORDERS)
SPECTRUM = spectrum_grid(cm.ORDERS, cm.DRIVE_PCT)
D2_ON = "d2_kw>0"
NA = "the T2 current check with drive 2 off"

INPUTS = (
    Section("Supply (utility at the point of common coupling)", (
        Input("f_hz", "System frequency", 60, "Hz", num(40, 70), "fundamental of every order"),
        Input("kv_pcc", "Plant supply voltage, line-to-line", 13.8, "kV", num(1, 69),
              "the PCC and the plant's MV bus"),
        Input("ssc_mva", "Utility short-circuit power, maximum", 250, "MVA", num(1, 1e5),
              "at the PCC, from the utility"),
        Input("ssc_min_mva", "Utility short-circuit power, minimum", 150, "MVA", num(1, 1e5),
              "the weakest supply, for the scenario table"),
        Input("xr_util", "Utility X/R", 10, "", num(0.1, 100)),
        Input("i_l", "Maximum demand load current I_L at the PCC", 120, "A", num(0.1, 1e5),
              "whole plant, 12-month average of monthly maxima (IEEE 519 TDD basis)"),
    )),
    Section("Common feeder (PCC to the plant's MV bus)", (
        Input("fd_km", "Feeder length", 1.0, "km", num(0.001, 100)),
        Input("fd_r", "Feeder resistance", 0.12, "Ω/km", num(0, 10), "at the fundamental"),
        Input("fd_x", "Feeder reactance", 0.11, "Ω/km", num(0, 10), "at the fundamental"),
    )),
    Section("Drive transformers (T1 and T2 alike; vector groups on the Network sheet)", (
        Input("tx_kva", "Rating of each transformer", 2000, "kVA", num(10, 1e5)),
        Input("v_lv", "LV voltage, line-to-line", 480, "V", num(100, 1000),
              "rated LV voltage; the drives' buses"),
        Input("tx_z_pct", "Impedance", 5.75, "%", num(0.5, 25), "nameplate %Z"),
        Input("tx_xr", "X/R", 8, "", num(0.1, 100)),
        Input("tx_tsl_pu", "Total stray loss at rated current, P_TSL-R", 0.25, "pu of I²R",
              num(0, 5), "for IEEE Std C57.110 derating; from the test report (demo value)"),
        Input("tx_ec_share", "Winding eddy-current share of the stray loss", 0.33, "fraction",
              num(0, 1), "IEEE Std C57.110 guidance when only P_TSL-R is known (from memory): "
              "about 0.33 for liquid-immersed, 0.67 for dry-type units"),
    )),
    Section("Drives (six-pulse, one behind each transformer)", (
        Input("d1_kw", "Drive 1 load (behind T1)", 800, "kW", num(1, 1e5)),
        Input("d2_kw", "Drive 2 load (behind T2)", 800, "kW", num(0, 1e5),
              "equal to drive 1 for full cancellation; 0 = out of service"),
        Input("drive_pf", "Displacement power factor of both", 0.95, "", num(0.5, 1)),
    )),
    SPECTRUM,
)

EQUIPMENT, EQ_NOTES = equipment((
    ({"name": "U1", "kind": "supply", "bus": "PCC", "kv": "=kv_pcc", "mva_sc": "=ssc_mva",
      "x_r": "=xr_util"}, "utility at the PCC", None),
    ({"name": "K1", "kind": "cable", "bus": "PCC", "bus_to": "MV", "length_km": "=fd_km",
      "r_ohm_km": "=fd_r", "x_ohm_km": "=fd_x"},
     "common feeder: carries both transformers' currents", None),
    ({"name": "T1", "kind": "transformer", "bus": "MV", "bus_to": "LV1", "kva": "=tx_kva",
      "kv_hv": "=kv_pcc", "kv_lv": "=v_lv/1000", "z_pct": "=tx_z_pct", "x_r": "=tx_xr",
      "connection": "Dyn11"}, "LV leads HV by 30° (positive sequence)", None),
    ({"name": "T2", "kind": "transformer", "bus": "MV", "bus_to": "LV2", "kva": "=tx_kva",
      "kv_hv": "=kv_pcc", "kv_lv": "=v_lv/1000", "z_pct": "=tx_z_pct", "x_r": "=tx_xr",
      "connection": "Yyn0"}, "no shift; set its connection to Dyn11 to see the 5th and 7th add", None),
    ({"name": "D1", "kind": "converter", "bus": "LV1", "kv": "=v_lv/1000", "kw": "=d1_kw",
      "pf": "=drive_pf", "spectrum": "VFD6"}, "six-pulse drive 1", None),
    ({"name": "D2", "kind": "converter", "bus": "LV2", "kv": "=v_lv/1000", "kw": "=d2_kw",
      "pf": "=drive_pf", "spectrum": "VFD6"}, "six-pulse drive 2 (same spectrum)", D2_ON),
), "Equipment (ratings only; the study expands them into per-phase sequence networks; notes "
   "on each row on the Notes sheet)")


def _ratio(h: int) -> str:
    return (f'IFERROR(INDEX({{cancel:ratio}},MATCH({h},{{cancel:h}},0)),'
            f'"no order {h} in the spectrum")')


CANCEL = Table("cancel", "Harmonic currents per order: each transformer vs the common feeder "
               "(A rms, HV side)", (
    Col("h", "int", key="h"), Col("freq_hz", "hz", key="f"),
    Col("T1, A", "3", 10, "t1"), Col("T2, A", "3", 10, "t2"),
    Col("common feeder, A", "3", 12, "fd"), Col("T1 + T2 (arithmetic), A", "3", 13, "sum"),
    Col("feeder / (T1 + T2), %", "1", 13, "ratio"),
), tuple(Row((
    f"=INDEX(drive_orders,{k + 1})", "={@h}*f_hz",
    "=" + order_pick("it1", 4), "=" + order_pick("it2", 4), "=" + order_pick("ifd", 4),
    "={@t1}+{@t2}", '=IF({@sum}>0,{@fd}/{@sum}*100,"n/a")',
)) for k in range(N_ORD)), excel=False)


def _v519(key: str, bus: str, title: str) -> Block:
    return Block(key, title, f'CKT_BUS_V519({EQ},"{bus}",{SO})', cm.V519_COLS, 13,
                 notes=cm.BASIS_CHARS)


def _vchecks(key: str, where: str) -> tuple[Check, ...]:
    return (
        Check(f"{where} voltage THD", "=" + pick(key, "THD", "percent"),
              "=" + pick(key, "THD", "limit_percent"), "%",
              "IEEE Std 519-2014 Table 1 (THD, by bus voltage)"),
        Check(f"{where}: largest individual voltage harmonic",
              "=" + spilled(key, "item", f'_xlfn.MAXIFS({{{key}:percent}},{{{key}:item}},"h*")'),
              "=" + spilled(key, "item",
                            f'_xlfn.MINIFS({{{key}:limit_percent}},{{{key}:item}},"h*")'), "%",
              "IEEE Std 519-2014 Table 1 (individual harmonic)"),
    )


RESULTS = (
    Section("Network values derived from the inputs", (
        Result("isc_a", "Short-circuit current at the PCC", "=ssc_mva*1E3/(SQRT(3)*kv_pcc)",
               "A", "thou", "utility alone"),
        Result("isc_il", "Isc / I_L", "=isc_a/i_l", "", "1", "selects the IEEE 519 Table 2 row"),
        Result("tx_pec_pu", "Winding eddy loss P_EC-R (rated current)",
               "=tx_ec_share*tx_tsl_pu", "pu of I²R", "3"),
        Result("tx_posl_pu", "Other stray loss P_OSL-R (rated current)",
               "=(1-tx_ec_share)*tx_tsl_pu", "pu of I²R", "3"),
    )),
    Section("Key results", (
        Result("h5_fd_pct", "5th in the common feeder, % of T1 + T2", "=" + _ratio(5), "%",
               "2", "≈ 0: cancelled"),
        Result("h7_fd_pct", "7th in the common feeder, % of T1 + T2", "=" + _ratio(7), "%",
               "2", "≈ 0: cancelled"),
        Result("h11_fd_pct", "11th in the common feeder, % of T1 + T2", "=" + _ratio(11), "%",
               "2", "≈ 100: the orders 12k ± 1 add"),
        Result("h13_fd_pct", "13th in the common feeder, % of T1 + T2", "=" + _ratio(13), "%",
               "2", "≈ 100: the orders 12k ± 1 add"),
        Result("fd_thd_pct", "Common feeder current THD", "=" + got("ifd", "total", "i_pct"),
               "%", "2", "% of its fundamental"),
        Result("t1_thd_pct", "T1 current THD", "=" + got("it1", "total", "i_pct"), "%", "2",
               "a six-pulse spectrum"),
        Result("pcc_tdd_pct", "TDD at the PCC", "=" + got("i519", "TDD", "percent", "item"), "%", "2",
               "% of I_L"),
        Result("pcc_thd_pct", "PCC voltage THD", "=" + got("vpcc", "total", "v_pct"), "%", "2"),
        Result("lv1_thd_pct", "LV1 (drive 1 bus) voltage THD", "=" + got("vl1", "THD", "percent", "item"),
               "%", "2", "no cancellation on the drives' own buses"),
        Result("lv2_thd_pct", "LV2 (drive 2 bus) voltage THD", "=" + got("vl2", "THD", "percent", "item"),
               "%", "2"),
        Result("t1_i_pu", "T1 RMS current / rated", "=" + got("xd1", "load_pu", "value", "quantity"), "pu", "3"),
        Result("t1_imax_pu", "T1 permissible RMS current (C57.110)",
               "=" + got("xd1", "I_max_pu", "value", "quantity"), "pu", "3",
               "IEEE Std C57.110, winding hot spot"),
        Result("t2_i_pu", "T2 RMS current / rated", f'=IF({D2_ON},{got("xd2", "load_pu", "value", "quantity")},"n/a")', "pu", "3"),
        Result("t2_imax_pu", "T2 permissible RMS current (C57.110)",
               f'=IF({D2_ON},{got("xd2", "I_max_pu", "value", "quantity")},"n/a")', "pu", "3",
               "IEEE Std C57.110, winding hot spot"),
    )),
    CANCEL,
    harmonics_block("ifd", "Common feeder current at the PCC end",
                    f'CKT_BRANCH_HARMONICS({EQ},"K1",{SO})', N_ORD + 3, v=False),
    harmonics_block("it1", "T1 line current, HV side", f'CKT_BRANCH_HARMONICS({EQ},"T1",{SO})',
                    N_ORD + 3, v=False),
    harmonics_block("it2", "T2 line current, HV side", f'CKT_BRANCH_HARMONICS({EQ},"T2",{SO})',
                    N_ORD + 3, v=False),
    Block("i519", "IEEE 519 current check at the PCC (the common feeder's current)",
          f'CKT_BRANCH_I519({EQ},"K1",isc_a,i_l,{SO})', cm.V519_COLS, 14, notes=cm.BASIS_CHARS),
    harmonics_block("vpcc", "PCC voltage per order (line-to-neutral)",
                    f'CKT_BUS_HARMONICS({EQ},"PCC",{SO})', N_ORD + 3, v=True),
    _v519("v519", "PCC", "IEEE 519 voltage check at the PCC"),
    _v519("vl1", "LV1", "IEEE 519 voltage check at LV1 (drive 1 bus)"),
    _v519("vl2", "LV2", "IEEE 519 voltage check at LV2 (drive 2 bus)"),
    derating_block("xd1", "T1", "T1 derating for its harmonic load current (IEEE Std C57.110, "
                   "formulas from memory; LV star winding)"),
    derating_block("xd2", "T2", "T2 derating for its harmonic load current (IEEE Std C57.110, "
                   "formulas from memory; LV star winding)", D2_ON),
)

CHECKS = (
    *_vchecks("v519", "PCC"),
    Check("TDD at the PCC", "=" + got("i519", "TDD", "percent", "item"),
          "=" + pick("i519", "TDD", "limit_percent"), "%",
          "IEEE Std 519-2014 Table 2 (TDD, row by Isc/I_L)"),
    Check("Current harmonics at the PCC over their limit",
          "=" + spilled("i519", "item", 'COUNTIFS({i519:result},"FAIL",{i519:item},"h*")'),
          "=0", "orders", "IEEE Std 519-2014 Table 2 (individual orders)", fmt="int"),
    *_vchecks("vl1", "LV1"),
    *_vchecks("vl2", "LV2"),
    Check("T1 RMS current vs permissible", "=t1_i_pu", "=t1_imax_pu", "pu",
          "IEEE Std C57.110 (formulas from memory): maximum RMS current with this spectrum "
          "for the winding hot spot", fmt="3"),
    Check("T2 RMS current vs permissible", "=t2_i_pu", "=t2_imax_pu", "pu",
          "IEEE Std C57.110 (formulas from memory), as for T1", applies=D2_ON, fmt="3"),
)

CHARTS = (
    Chart("Harmonic currents per order: each transformer vs the common feeder",
          Axis("harmonic order h"), Axis("current, A rms (HV side)"), (
              Series("T1 (HV side)", "{cancel:h}", "{cancel:t1}", "column", "#23395B"),
              Series("T2 (HV side)", "{cancel:h}", "{cancel:t2}", "column", "#7A9CC6"),
              Series("common feeder", "{cancel:h}", "{cancel:fd}", "column", "#C0392B"),
          ), kind="column"),
    Chart("Impedance seen at the MV bus, with the injected orders",
          Axis("harmonic order h = f / f₁", lo=0, hi=40), Axis("|Z| (Ω)", log=True), (
              Series("|Z| at the MV bus (positive sequence)", "{scan_h:h}", "{scan:z_ohm}"),
              Series("injected orders", "{cancel:h}", "{zinj:z_ohm}", "markers", "#C0392B"),
          )),
)

DATA = (
    Block("scan", "Impedance scan at the MV bus (200 points, positive sequence)",
          f'CKT_BUS_SCAN(eq_tbl,"MV",f_hz,40*f_hz,200,"+",{SO})',
          (Col("freq_hz", "hz"), Col("z_ohm", "sig"), Col("angle_deg", "deg")), 201),
    Block("scan_h", "harmonic order", "{scan:freq_hz}/f_hz", (Col("h", "2"),), 201,
          headed=False),
    Block("zinj", "Impedance at the injected orders (expanded network)",
          'CKT_IMPEDANCE({xp},"MV",{cancel:f},opts)',
          (Col("freq_hz", "hz"), Col("z_ohm", "sig"), Col("angle_deg", "deg")), N_ORD + 1),
    Block("xp", "Expanded positive-sequence network (Ω, H, F at each item's voltage)",
          f'CKT_EXPAND(eq_tbl,"+",{SO})',
          (Col("name", width=10), Col("kind"), Col("from"), Col("to"), Col("value", "sig", 11),
           Col("sec_from"), Col("sec_to"), Col("r_exponent"), Col("zone_shift_deg"),
           Col("item"), Col("note", width=40)), 16),
)

TEMPLATE = Template(
    file="twelve_pulse.xlsx",
    title="Twelve-pulse drive pair",
    subtitle="Two equal six-pulse drives behind drive transformers of different vector groups "
    "(Dyn11 and Yyn0) on one plant bus: the 30° between the transformers makes the 5th, 7th, "
    "17th and 19th cancel in the common feeder while the 11th, 13th, 23rd and 25th add — the "
    "twelve-pulse principle — checked against IEEE 519 at the PCC and on the drives' buses, "
    "with IEEE C57.110 derating of each drive transformer.",
    scope=(
        "In scope: balanced operation, the orders of the drive spectrum in their sequence "
        "networks, each transformer's phase shift, drive 2 at full, half and no load at the "
        "minimum and maximum short-circuit level (Scenarios sheet).",
        "Not in scope: unbalance, single-phase loads on one phase, interharmonics, background "
        "distortion of the utility, the plant's other loads (I_L is an input), capacitor banks.",
        "This invented scenario PASSES: with equal halves the 5th and 7th vanish from the "
        "feeder. Set drive 2 lower, or T2 to Dyn11 on the Network sheet, to see them return.",
    ),
    inputs=INPUTS,
    network=(EQUIPMENT, spectra_table(N_ORD), STUDY_OPTS, cm.OPTIONS),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("h5_fd_pct", "h7_fd_pct", "h11_fd_pct", "h13_fd_pct", "pcc_tdd_pct",
                 "pcc_thd_pct", "lv1_thd_pct", "t1_i_pu", "t1_imax_pu"),
    na_example=NA,
    scenarios=Scenarios((
        Sweep("d2_kw", "drive 2 load", ("=d1_kw", "=d1_kw/2", 0), ("equal", "half", "off")),
        Sweep("ssc_mva", "utility short-circuit power", ("=ssc_min_mva", "=ssc_mva"),
              ("min", "max")),
    ), cm.SCENARIO_NOTE),
    notes=(
        ("Method", (
            "The equipment table (Network sheet) holds ratings only. The study expands each "
            "item into per-phase parts in ohms at its own voltage, solves the fundamental with "
            "the drives as constant-power loads (each drive's fundamental current angle θ1), "
            "then injects each order of the spectrum at h·θ1 + phase into its sequence network "
            "(h ≡ 1 mod 3 positive, 2 negative, 0 zero), with each transformer's phase shift "
            "carried by the frame of its LV zone, and combines the orders.",
            "Why the pair cancels: drive 1's fundamental current, like its bus voltage, leads "
            "drive 2's by 30° (Dyn11 against Yyn0), so its h-th current leads by h·30° on the LV "
            "side. Referred to the HV side, T1 shifts positive-sequence orders (7, 13, 19, 25) "
            "by −30° and negative-sequence orders (5, 11, 17, 23) by +30°: drive 1's h-th "
            "current then differs from drive 2's by (h − 1)·30° or (h + 1)·30°, i.e. 180° for "
            "h = 5, 7, 17, 19 (they cancel) and 360° for h = 11, 13, 23, 25 (they add). The "
            "common feeder carries the characteristic orders 12k ± 1 of a twelve-pulse "
            "converter.",
            EQ_NOTES,
            "Models (xlfuncs documentation, \"Three-phase harmonic studies from equipment "
            "ratings\", file docs/THREE_PHASE.md): utility R + jhX from its short-circuit power and "
            "X/R; feeder R·√h + jhX; transformers an ideal ratio with the vector group's shift "
            "and the leakage impedance from %Z and X/R, R ∝ √h; drives ideal current sources "
            "with the spectrum of the inputs.",
            "Transformer derating: IEEE Std C57.110 (formulas from memory) from each "
            "transformer's own current (a six-pulse spectrum: the cancellation happens "
            "upstream, not in the transformers); P_EC-R and P_OSL-R from the total stray loss "
            "and its eddy share.",
        )),
        ("What the model does not cover", (
            NOT_COVERED,
            "With equal halves the model cancels the 5th and 7th exactly. Real pairs keep a "
            "residue: unequal loading (see the Scenarios sheet), unequal transformer impedances, "
            "supply unbalance and the drives' own asymmetry; budget for it from measurements "
            "or the maker's data, not from this figure.",
            "The plant's other loads are not modelled; they usually lower the distortion "
            "slightly, so leaving them out errs on the safe side for the PCC current.",
        )),
        ("Cautions", (
            "Screening calculation of a balanced model: confirm against measurements before "
            "rating equipment; the utility sets the PCC limits, the equipment makers rate "
            "their transformers and drives, and a licensed engineer signs the design.",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Limits and their sources", (
            "IEEE Std 519-2014 Table 1 (voltage distortion by bus voltage) and Table 2 (current "
            "distortion by Isc/I_L); IEEE Std C57.110 (transformer derating, formulas from "
            "memory).",
        )),
        ("Verdicts", cm.verdicts(NA)),
        ("Using the book", USING),
    ),
)
