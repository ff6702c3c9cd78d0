"""Plant bus harmonic study: utility + transformer + capacitor bank in steps + drives.

Invented demo data; it fails its checks on purpose (a bank tuned near the 7th).
"""

from __future__ import annotations

from . import common as cm
from .formulas import pick, spilled, wrap_deg
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
    whole,
)

# fmt: off
ARGS = "parts_tbl,sources_tbl"
W = cm.W

INPUTS = (
    Section("Supply (utility at the transformer primary)", (
        Input("f_hz", "System frequency", 60, "Hz", num(40, 70), "fundamental of every order"),
        Input("v_ll", "Bus voltage, line-to-line", 480, "V", num(100, 1000),
              "the plant bus is the point of common coupling (PCC) here"),
        Input("ssc_mva", "Utility short-circuit power, maximum", 50, "MVA", num(0.1, 1e4),
              "at the transformer primary, from the utility"),
        Input("xr_util", "Utility X/R", 10, "", num(0.1, 100)),
        Input("ssc_min_mva", "Utility short-circuit power, minimum", 25, "MVA", num(0.1, 1e4),
              "the weakest supply, for the scenario table"),
    )),
    Section("Transformer", (
        Input("tx_kva", "Transformer rating", 1500, "kVA", num(10, 1e5)),
        Input("tx_z_pct", "Transformer impedance", 5.75, "%", num(0.5, 25), "nameplate %Z"),
        Input("tx_xr", "Transformer X/R", 7, "", num(0.1, 100)),
    )),
    Section("Capacitor bank", (
        Input("cap_kvar_step", "Capacitor step", 100, "kvar", num(1, 1e4),
              "rated kvar of one step at its rated voltage"),
        Input("cap_steps", "Capacitor steps in service", 3, "", whole(0, 20),
              "0 = no bank (the base case)"),
        Input("cap_v_rated", "Capacitor rated voltage, line-to-line", 480, "V", num(100, 1000)),
        Input("cap_tan_d", "Capacitor loss factor tan δ", 0.0005, "", num(1e-5, 0.05),
              "sets the bank's series resistance"),
    )),
    Section("Loads", (
        Input("load_kw", "Linear load", 500, "kW", num(0, 1e5), "modelled as R ‖ L"),
        Input("load_pf", "Linear load power factor", 0.85, "", num(0.5, 1)),
        Input("drive_kw", "Drive load", 600, "kW", num(0, 1e5), "six-pulse drives, combined"),
        Input("drive_pf", "Drive displacement power factor", 0.95, "", num(0.5, 1)),
        Input("i_l", "Maximum demand load current I_L", 1400, "A", num(1, 1e6),
              "12-month average of monthly maxima (IEEE 519 TDD basis)"),
    )),
    cm.DRIVE_GRID,
)

BANK = "cap_steps>0"
PARTS = Table("parts_tbl", "Parts (values in Ω, H, F)", cm.PART_COLS, (
    Row(("R_util", "R", "SRC", "U1", "=z_util/SQRT(1+xr_util^2)"), "utility resistance"),
    Row(("L_util", "L", "U1", "PRI", f"=z_util*xr_util/SQRT(1+xr_util^2)/{W}"),
        "utility inductance"),
    Row(("R_tx", "R", "PRI", "T1", "=z_tx/SQRT(1+tx_xr^2)"), "transformer resistance"),
    Row(("L_tx", "L", "T1", "BUS", f"=z_tx*tx_xr/SQRT(1+tx_xr^2)/{W}"),
        "transformer inductance; its current is the PCC current"),
    Row(("C_bank", "C", "BUS", "CAP", "=c_bank_f"), "capacitor bank (wye equivalent)", BANK),
    Row(("R_cap", "R", "CAP", "GND", f"=cap_tan_d/({W}*c_bank_f)"),
        "bank series resistance from tan δ", BANK),
    Row(("R_load", "R", "BUS", "GND", "=v_ll^2/(load_kw*1E3)"), "linear load, active part",
        "load_kw>0"),
    Row(("L_load", "L", "BUS", "GND", f"=v_ll^2/(load_kw*1E3*TAN(ACOS(load_pf)))/{W}"),
        "linear load, reactive part", "AND(load_kw>0,load_pf<1)"),
), si_col="value")

SOURCES = Table("sources_tbl", "Sources (one row per tone; rms in V or A)", cm.SOURCE_COLS, (
    Row(("V_util", "V", "SRC", "GND", 1, "=v_ll/SQRT(3)", 0), "utility (phase value)"),
    Row(("I_drive", "I", "BUS", "GND", 1, "=i1_drive",
         "=" + wrap_deg("-DEGREES(ACOS(drive_pf))")), "drive fundamental, drawn from the bus"),
    *cm.drive_rows("BUS", "GND", "i1_drive", "harmonic tone (phase 0: affects peaks only)"),
))

RESULTS = (
    Section("Network values derived from the inputs", (
        Result("z_util", "Utility impedance |Z| at the bus voltage", "=v_ll^2/(ssc_mva*1E6)",
               "Ω", "sig"),
        Result("z_tx", "Transformer impedance |Z|", "=tx_z_pct/100*v_ll^2/(tx_kva*1E3)", "Ω",
               "sig"),
        Result("r_sc", "Short-circuit resistance at the bus",
               "=z_util/SQRT(1+xr_util^2)+z_tx/SQRT(1+tx_xr^2)", "Ω", "sig"),
        Result("x_sc", "Short-circuit reactance at the bus (fundamental)",
               "=z_util*xr_util/SQRT(1+xr_util^2)+z_tx*tx_xr/SQRT(1+tx_xr^2)", "Ω", "sig"),
        Result("c_bank_f", "Bank capacitance per phase (wye)",
               f"=cap_steps*cap_kvar_step*1E3/({W}*cap_v_rated^2)", "F", "sig"),
        Result("i1_drive", "Drive fundamental current", "=drive_kw*1E3/(SQRT(3)*v_ll*drive_pf)",
               "A", "1"),
    )),
    Section("Key results", (
        Result("bus_v_rms", "Bus voltage, total RMS (phase)",
               f'=CKT_RMS({ARGS},"BUS","V",opts)', "V", "1"),
        Result("bus_v_peak", "Bus voltage, true peak", f'=CKT_PEAK({ARGS},"BUS","V",opts)',
               "V", "1", "insulation"),
        Result("bus_thd_pct", "Bus voltage THD", f'=100*CKT_THD({ARGS},"BUS","V",opts)', "%",
               "2", "harmonics 2–50, DC excluded"),
        Result("pcc_i_rms", "PCC current, total RMS", f'=CKT_RMS({ARGS},"L_tx","I",opts)', "A",
               "1", "through the transformer"),
        Result("isc_a", "Short-circuit current at the bus", "=v_ll/SQRT(3)/SQRT(r_sc^2+x_sc^2)",
               "A", "thou", "utility + transformer"),
        Result("isc_il", "Isc / I_L", "=isc_a/i_l", "", "1", "selects the IEEE 519 Table 2 row"),
        Result("ssc_bus_mva", "Short-circuit power at the bus", "=SQRT(3)*v_ll*isc_a/1E6",
               "MVA", "2"),
        Result("q_cap_mvar", "Capacitor bank at bus voltage",
               "=cap_steps*cap_kvar_step*(v_ll/cap_v_rated)^2/1E3", "Mvar", "3"),
        Result("res_rule", "Resonance order, rule of thumb √(S_sc/Q_cap)",
               '=IF(q_cap_mvar>0,SQRT(ssc_bus_mva/q_cap_mvar),"n/a")', "h", "2",
               "common practice"),
        Result("res_order", "Parallel resonance order, from the scan",
               cm.first_resonance("parallel", 3), "h", "2", "first parallel resonance listed"),
        Result("cap_i_rms", "Capacitor current, total RMS",
               f'=IF({BANK},CKT_RMS({ARGS},"C_bank","I",opts),"n/a")', "A", "1"),
        Result("cap_i_duty", "Capacitor RMS current / nominal",
               f'=IF({BANK},{pick("duty", "rms current", "ratio")},"n/a")', "ratio", "3",
               "IEEE Std 18 limit 1.35"),
        Result("cap_vpk_duty", "Capacitor peak voltage / rated peak",
               f'=IF({BANK},{pick("duty", "peak voltage", "ratio")},"n/a")', "ratio", "3",
               "IEEE Std 18 limit 1.20"),
    )),
    cm.vbus_block(),
    cm.harm_table(with_distance=True),
    Block("v519", "IEEE 519 voltage check at the bus", f'CKT_V519({ARGS},"BUS",v_ll/1000,opts)',
          cm.V519_COLS, 13),
    Block("i519", "IEEE 519 current check at the PCC (transformer current)",
          f'CKT_I519({ARGS},"L_tx",isc_a,i_l,v_ll/1000,2014,opts)', cm.V519_COLS, 14),
    cm.resonance_block("40*f_hz", "Resonances seen at the bus (utility source shorted)"),
    cm.duty_block("C_bank", "cap_steps*cap_kvar_step/3", "cap_v_rated/SQRT(3)", BANK),
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
          "characteristic orders", rule=">=", applies='res_order<>"none found"', fmt="1"),
    Check("Resonance order: scan vs rule of thumb", "=ABS(res_order/res_rule-1)*100", "=15", "%",
          "consistency: h ≈ √(S_sc/Q_cap), common practice (large X/R)", applies=BANK, fmt="1"),
)

CHARTS = (
    cm.harmonics_chart(),
    cm.impedance_chart(40),
    Chart("Bus voltage over one fundamental period", Axis("time (ms)", lo=0),
          Axis("voltage, line-to-neutral (V)"),
          (Series("bus voltage", "{wave_ms:t}", "{wave:value}", color=cm.TEAL),)),
)

DATA = (
    *cm.scan_blocks("40*f_hz"),
    Block("wave", "Bus voltage over one period", f'CKT_WAVE({ARGS},"BUS","V",400,opts)',
          (Col("time_s", "sig"), Col("value", "2")), 401),
    Block("wave_ms", "time (ms)", "{wave:time_s}*1000", (Col("t", "3"),), 401, headed=False),
    cm.limits_block(),
)

TEMPLATE = Template(
    file="plant_harmonics.xlsx",
    title="Plant bus harmonic study",
    subtitle="Per-phase harmonic study of a low-voltage plant bus: utility and transformer "
    "short-circuit impedance, a capacitor bank in steps and six-pulse drive injections; "
    "voltage distortion against IEEE 519 Table 1, PCC current against Table 2, capacitor duty "
    "against IEEE 18 and the parallel resonance against the injected orders.",
    scope=(
        "In scope: balanced operation, the characteristic orders of the drive spectrum, every "
        "capacitor step from 0 to 4 at the minimum and maximum short-circuit level (Scenarios "
        "sheet).",
        "Not in scope: unbalance, triplen and interharmonic currents, background distortion of "
        "the utility, transient switching duty, and the cable network inside the plant.",
        "This invented scenario FAILS on purpose: the bank puts a parallel resonance near the "
        "7th. The detuned filter template shows a design that passes.",
    ),
    inputs=INPUTS,
    network=(PARTS, SOURCES, cm.OPTIONS),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("bus_thd_pct", "bus_v_peak", "pcc_i_rms", "isc_il", "res_order", "res_rule",
                 "cap_i_duty", "cap_vpk_duty"),
    scenarios=Scenarios((
        Sweep("cap_steps", "capacitor steps in service", (0, 1, 2, 3, 4)),
        Sweep("ssc_mva", "utility short-circuit power", ("=ssc_min_mva", "=ssc_mva"),
              ("min", "max")),
    ), cm.SCENARIO_NOTE),
    notes=(
        ("Method", (
            "Superposition by frequency: one phasor solve (modified nodal analysis) per harmonic "
            "order, then RMS, peak, THD and duty combine the orders (xlfuncs CKT_ functions).",
            "Per-phase (wye-equivalent) model referred to the bus voltage; balanced three-phase "
            "operation; triplen and interharmonic currents are not modelled.",
            "Utility: a voltage source behind R + L from its short-circuit power and X/R. "
            "Transformer: R + L from %Z and X/R. Capacitor bank: C from the rated kvar at the "
            "rated voltage, series R from tan δ; with 0 steps the bank rows are left out. Linear "
            "load: R ‖ L.",
            "Drive: a current source drawing its fundamental (displacement power factor) and its "
            "harmonic currents (% of I1 from the spectrum table, phase 0: phases change peaks, "
            "not RMS or THD). The resonance list and the impedance scan zero the sources (the "
            "utility source becomes a short).",
        )),
        ("Assumptions", (
            "PCC = the low-voltage bus; I_L from demand records (input). Resistances do not vary "
            "with frequency (an r_exponent column in the parts table adds skin effect).",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Limits and their sources", (
            "IEEE Std 519-2014 Tables 1 and 2 (voltage and current distortion); IEEE Std 18-2002 "
            "continuous capacitor limits (110 % RMS V, 120 % peak V, 135 % RMS I, 135 % kvar); "
            "the 10 % resonance margin is common practice (from memory).",
        )),
        ("Verdicts", cm.VERDICTS),
        ("Using the book", cm.LIVE),
    ),
)
