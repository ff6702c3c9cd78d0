"""Detuned capacitor bank: reactor sizing from p and the filter's duty under drive injections.

Invented demo data; this scenario passes its checks (the design that fixes a bank tuned
near a characteristic order).
"""

from __future__ import annotations

from . import common as cm
from .formulas import pick
from .model import (
    Block,
    Check,
    Col,
    Input,
    Result,
    Row,
    Scenarios,
    Section,
    Sweep,
    Table,
    Template,
    num,
    whole,
)

# fmt: off
ARGS = "parts_tbl,sources_tbl"
W = cm.W
DET = "{det}"

INPUTS = (
    Section("Supply at the bus (utility and transformer together)", (
        Input("f_hz", "System frequency", 50, "Hz", num(40, 70)),
        Input("v_ll", "Bus voltage, line-to-line", 400, "V", num(100, 1000)),
        Input("ssc_mva", "Short-circuit power at the bus, maximum", 25, "MVA", num(0.1, 1e4),
              "utility + transformer"),
        Input("ssc_min_mva", "Short-circuit power at the bus, minimum", 12, "MVA",
              num(0.1, 1e4), "the weakest supply, for the scenario table"),
        Input("xr_src", "Source X/R", 8, "", num(0.1, 100)),
    )),
    Section("Detuned bank (each step: capacitors + reactor)", (
        Input("step_kvar", "Capacitor kvar of one step", 50, "kvar", num(1, 1e4),
              "at the capacitors' rated voltage"),
        Input("bank_steps", "Steps in service", 4, "", whole(0, 20),
              "0 = no bank (the base case)"),
        Input("cap_v_rated", "Capacitor rated voltage, line-to-line", 440, "V", num(100, 1000),
              "detuned banks use capacitors rated above the bus voltage"),
        Input("p_ratio", "Reactor ratio p", 0.07, "fraction", num(0.01, 0.2),
              "X_L / X_C at the fundamental (7 % is common practice)"),
        Input("reactor_q", "Reactor quality factor", 50, "", num(5, 500),
              "X_L / R_L at the fundamental"),
    )),
    Section("Drives", (
        Input("drive_i1", "Drive fundamental current", 400, "A", num(0, 1e5),
              "six-pulse drives, combined"),
    )),
    cm.DRIVE_GRID,
)

WHEN = "bank_steps>0"
NA = "the tuning, capacitor duty and series resonance checks with 0 steps in service"
PARTS = Table("parts_tbl", "Parts (values in Ω, H, F; the bank's steps in parallel)",
              cm.PART_COLS, (
    Row(("R_src", "R", "SRC", "S1", "=z_src/SQRT(1+xr_src^2)"), "source resistance"),
    Row(("L_src", "L", "S1", "BUS", f"=z_src*xr_src/SQRT(1+xr_src^2)/{W}"), "source inductance"),
    Row(("L_det", "L", "BUS", "M", "=" + pick("det", "reactor inductance", "value") + "/bank_steps"),
        "detuning reactors of the steps in service", when=WHEN),
    Row(("R_det", "R", "M", "N",
         "=" + pick("det", "reactor reactance", "value") + "/reactor_q/bank_steps"),
        "reactor resistance", when=WHEN),
    Row(("C_det", "C", "N", "GND", "=" + pick("det", "capacitance", "value") + "*bank_steps"),
        "capacitors (wye equivalent)", when=WHEN),
), si_col="value")

SOURCES = Table("sources_tbl", "Sources (one row per tone; rms in V or A)", cm.SOURCE_COLS, (
    Row(("V_src", "V", "SRC", "GND", 1, "=v_ll/SQRT(3)", 0), "supply (phase value)"),
    *cm.drive_rows("GND", "BUS", "drive_i1", "harmonic injection into the bus"),
))

RESULTS = (
    Section("Values derived from the inputs", (
        Result("bank_kvar", "Bank capacitor kvar in service", "=step_kvar*bank_steps", "kvar",
               "1"),
        Result("z_src", "Source impedance |Z|", "=v_ll^2/(ssc_mva*1E6)", "Ω", "sig"),
    )),
    Section("Key results", (
        Result("tuned_order", "Tuned order 1/√p", "=" + pick("det", "tuned order", "value"), "h",
               "3", "common practice"),
        Result("tuned_hz", "Tuned frequency", "=" + pick("det", "tuned frequency", "value"), "Hz",
               "1"),
        Result("l_det_mh", "Reactor inductance of one step (per phase)",
               "=" + pick("det", "reactor inductance", "value") + "*1E3", "mH", "4"),
        Result("v_rise", "Capacitor fundamental voltage rise U_C/U",
               "=" + pick("det", "capacitor voltage rise", "value"), "", "4", "1/(1−p)"),
        Result("v_cap_ll", "Capacitor fundamental voltage, line-to-line", "=v_ll*v_rise", "V",
               "1", "compare with the rated voltage"),
        Result("series_order", "Series resonance found in the scan",
               cm.first_resonance("series", 3), "h", "3", "should equal 1/√p"),
        Result("bus_thd_pct", "Bus voltage THD", f'=100*CKT_THD({ARGS},"BUS","V",opts)', "%",
               "2", "harmonics 2–50, DC excluded"),
        Result("cap_i_rms", "Capacitor current, total RMS",
               f'=IF({WHEN},CKT_RMS({ARGS},"C_det","I",opts),"n/a")', "A", "1"),
    )),
    Block("det", "Reactor sizing for one step", "CKT_DETUNE(step_kvar,cap_v_rated,f_hz,p_ratio)",
          (Col("quantity", width=22), Col("value", "qty"), Col("unit")), 10),
    cm.vbus_block(),
    cm.harm_table(with_distance=False),
    Block("v519", "IEEE 519 voltage check at the bus", f'CKT_V519({ARGS},"BUS",v_ll/1000,opts)',
          cm.V519_COLS, 13, notes=cm.BASIS_CHARS),
    cm.resonance_block("30*f_hz", "Resonances seen at the bus (supply source shorted)"),
    cm.duty_block(
        "C_det", "bank_kvar/3", "cap_v_rated/SQRT(3)", WHEN,
        "Capacitor duty of one phase (IEEE Std 18-2002 continuous limits; the per-phase model: "
        "line-to-neutral volts, a third of the bank's kvar)",
    ),
)

CHECKS = (
    Check("Tuned order below the lowest injected order", "=tuned_order", "=MIN(drive_orders)",
          "h", "common practice: detune below the 5th for six-pulse drives", rule="<",
          applies=WHEN, fmt="3"),
    Check("Capacitor voltage with the rise / rated", "=v_cap_ll/cap_v_rated", "=1.1", "ratio",
          "IEEE Std 18-2002: 110 % of rated RMS voltage (fundamental only here)", applies=WHEN,
          fmt="3"),
    *cm.duty_checks(WHEN),
    Check("Series resonance vs 1/√p", "=ABS(series_order/tuned_order-1)*100", "=1", "%",
          "consistency of the network with the sizing (closed form 1/√p)", applies=WHEN,
          fmt="3"),
    *cm.v_checks(),
)

DATA = (*cm.scan_blocks("30*f_hz"), cm.limits_block())

TEMPLATE = Template(
    file="detuned_filter.xlsx",
    title="Detuned filter sizing",
    subtitle="A capacitor bank in steps, each step behind a detuning reactor sized from the "
    "reactor ratio p: tuned order 1/√p, reactor inductance, capacitor voltage rise U/(1−p), "
    "and the filter's duty and the bus distortion under six-pulse drive injections.",
    scope=(
        "In scope: the steps of the bank from 0 to its size at the minimum and maximum "
        "short-circuit level (Scenarios sheet), the characteristic orders of the drive spectrum, "
        "capacitor duty against IEEE 18 and bus voltage distortion against IEEE 519 Table 1.",
        "Not in scope: reactor thermal rating, inrush and switching transients, unbalance, "
        "background distortion of the supply.",
        "This invented scenario PASSES: the bank is tuned below the 5th, so no parallel "
        "resonance sits on an injected order.",
    ),
    inputs=INPUTS,
    network=(PARTS, SOURCES, cm.OPTIONS),
    results=RESULTS,
    checks=CHECKS,
    charts=(cm.harmonics_chart(), cm.impedance_chart(30)),
    data=DATA,
    key_results=("tuned_order", "l_det_mh", "v_cap_ll", "bus_thd_pct", "cap_i_rms",
                 "series_order"),
    na_example=NA,
    scenarios=Scenarios((
        Sweep("bank_steps", "steps in service", (0, 1, 2, 3, 4)),
        Sweep("ssc_mva", "short-circuit power at the bus", ("=ssc_min_mva", "=ssc_mva"),
              ("min", "max")),
    ), cm.SCENARIO_NOTE),
    notes=(
        ("Method", (
            "Reactor sized from p for one step: h = 1/√p, X_C = V²/Q, X_L = p·X_C, "
            "U_C = U/(1−p) (common practice); the steps in service act in parallel (C × n, "
            "L / n, same tuning). The filter's duty under the drive injections comes from one "
            "phasor solve per harmonic order.",
            "Per-phase wye model; the supply is a voltage source behind its short-circuit "
            "impedance; the reactor has R = X_L/Q. The capacitors' kvar and voltage are their "
            "own ratings (a detuned bank's capacitors are rated above the bus voltage because "
            "of the rise U/(1−p)). With 0 steps the bank rows are left out.",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Limits and their sources", (
            "IEEE Std 18-2002 continuous capacitor limits; IEEE Std 519-2014 Table 1 for the "
            "bus voltage; detuning below the lowest characteristic order is common practice.",
        )),
        ("Verdicts", cm.verdicts(NA)),
        ("Using the book", cm.LIVE),
    ),
)
