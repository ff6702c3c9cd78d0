"""Single-tuned harmonic filter: sizing, capacitor and reactor rating, the impedance seen at
the bus before and after, the parallel resonance with the supply and the tuning drift.

Invented demo data; this scenario passes its checks in every scenario (the tuning drift
against the harmonic served and the reactor and capacitor currents at the highest
capacitance are the ones that decide).
"""

from __future__ import annotations

from . import common as cm
from .formulas import pick
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
BEFORE = "parts_nof,sources_tbl"
W = cm.W
F_STOP = "30*f_hz"
TEMP = "ABS(c_tempco_ppm)*1E-6*dt_k"  # capacitance change from temperature, fraction


def size(row: str) -> str:
    """A value of the sizing block by its quantity name."""
    return pick("size", row, "value")


INPUTS = (
    Section("Supply at the bus (utility and transformer together)", (
        Input("f_hz", "System frequency", 50, "Hz", num(40, 70)),
        Input("v_ll", "Bus voltage, line-to-line", 400, "V", num(100, 1000)),
        Input("ssc_mva", "Short-circuit power at the bus, maximum", 12, "MVA", num(0.1, 1e4),
              "utility + transformer"),
        Input("ssc_min_mva", "Short-circuit power at the bus, minimum", 6, "MVA",
              num(0.1, 1e4), "the weakest supply, for the scenario table"),
        Input("xr_src", "Supply X/R", 6, "", num(0.1, 100), "at the fundamental"),
    )),
    Section("Drives", (
        Input("drive_i1", "Drive fundamental current", 600, "A", num(0, 1e5),
              "six-pulse drives, combined"),
    )),
    cm.DRIVE_GRID,
    Section("Filter (single-tuned R-L-C, star-connected, three-phase)", (
        Input("filter_kvar", "Filter reactive power at the fundamental", 250, "kvar",
              num(1, 1e5), "delivered at the bus voltage and f₁, three-phase"),
        Input("h_serve", "Harmonic the filter serves", 5, "h", whole(2, 49)),
        Input("detune_pct", "Tuned below that harmonic by", 6, "%", num(0, 20),
              "common practice: a few percent"),
        Input("q_factor", "Quality factor Q = X_n/R", 40, "", num(5, 200),
              "X_n = √(L/C); typically 20–100 (from memory)"),
    )),
    Section("Ratings (the makers' data)", (
        Input("cap_kvar", "Capacitor rated kvar, three-phase", 300, "kvar", num(1, 1e5),
              "nameplate, at the rated voltage"),
        Input("cap_v", "Capacitor rated voltage, line-to-line", 480, "V", num(100, 1000),
              "above the bus voltage: the reactor raises the capacitor's voltage"),
        Input("reactor_i_rated", "Reactor rated RMS current", 480, "A", num(1, 1e5),
              "continuous, fundamental and harmonics together"),
        Input("v_max_pu", "Highest operating bus voltage", 1.05, "pu", num(1, 1.2),
              "the fundamental duty is rated at this voltage"),
    )),
    Section("Tolerances and margins", (
        Input("c_tol_minus", "Capacitance tolerance below nominal", 0.05, "fraction",
              num(0, 0.5), "with an allowance for ageing and lost elements"),
        Input("c_tol_plus", "Capacitance tolerance above nominal", 0.10, "fraction",
              num(0, 0.5), "maker's data"),
        Input("l_tol", "Reactor inductance tolerance, ±", 0.03, "fraction", num(0, 0.2),
              "maker's data"),
        Input("c_tempco_ppm", "Capacitance temperature coefficient", -300, "ppm/K",
              num(-2000, 2000), "maker's data"),
        Input("dt_k", "Temperature excursion from the rating temperature, ±", 30, "K",
              num(0, 100)),
        Input("c_factor", "Capacitance in the network / nominal", 1, "", num(0.5, 1.5),
              "1 = nominal; the Scenarios sheet sweeps the tolerance range"),
        Input("margin_pct", "Least distance of the parallel resonance from an injected order",
              10, "%", num(0, 50), "common practice (from memory): 10 %"),
    )),
)

FILTER_COLS = cm.PART_COLS
SUPPLY_ROWS = (
    Row(("R_src", "R", "SRC", "S1", "=z_src/SQRT(1+xr_src^2)"), "supply resistance"),
    Row(("L_src", "L", "S1", "BUS", f"=z_src*xr_src/SQRT(1+xr_src^2)/{W}"), "supply inductance"),
)
PARTS = Table("parts_tbl", "Parts with the filter (values in Ω, H, F; per phase, star)",
              FILTER_COLS, (
    *SUPPLY_ROWS,
    Row(("F_L", "L", "BUS", "M", "=" + size("l_henry")), "filter reactor"),
    Row(("F_R", "R", "M", "N", "=" + size("r_ohm")), "reactor and filter resistance, X_n/Q"),
    Row(("F_C", "C", "N", "GND", "=" + size("c_farad") + "*c_factor"),
        "filter capacitor (star) × capacitance factor"),
), si_col="value")
BEFORE_PARTS = Table("parts_nof", "Parts without the filter (the case before)", FILTER_COLS,
                     SUPPLY_ROWS, excel=False, si_col="value")

SOURCES = Table("sources_tbl", "Sources (one row per tone; rms in V or A)", cm.SOURCE_COLS, (
    Row(("V_src", "V", "SRC", "GND", 1, "=v_ll/SQRT(3)", 0), "supply (phase value)"),
    *cm.drive_rows("GND", "BUS", "drive_i1", "harmonic injection into the bus"),
))

RATING_COLS = (Col("quantity", width=26), Col("value", "qty", 12), Col("rated", "qty", 11),
               Col("ratio", "3"), Col("limit", "2"), Col("result"))
# units of the rating rows; the function gives the reactor rows' units in its "result"
# column, which the page leaves blank for them (the unit column says them)
RATING_UNITS = (
    ("capacitor rms voltage", "V"), ("capacitor peak voltage", "V"),
    ("capacitor rms current", "A"), ("capacitor kvar", "kvar"),
    ("reactor rms current", "A"), ("reactor peak current", "A, sum of the tone peaks"),
    ("reactor fundamental current", "A"), ("reactor rms voltage", "V"),
    ("losses in R", "W, R constant with frequency"),
)


def _units_out(table: str) -> str:
    """The rating table without the unit texts the function puts in the "result" column of
    the reactor rows (the unit column says them; a one-line message passes unchanged)."""
    t, first = "_xlpm.t", "INDEX(_xlpm.t,0,1)"
    rows = "+".join(f'({first}="{name}")' for name, _ in RATING_UNITS[4:])
    col = f'MATCH("result",INDEX({t},1,0),0)'
    mask = f"(_xlfn.SEQUENCE(1,COLUMNS({t}))={col})*({rows})"
    return f'_xlfn.LET({t},{table},IF(ROWS({t})>1,IF({mask},"",{t}),{t}))'


QVU = (Col("quantity", width=18), Col("value", "qty", 12), Col("unit", width=22))


def _vh(block: str) -> str:
    """V_h in % of V_1 at the row's frequency, from a CKT_SOLVE block of the bus voltage."""
    b = "{" + block + "}"
    at = f"INDEX({b},MATCH(FREQ*(1+1E-9),INDEX({b},0,1),1),3)"
    return "=100*" + at.replace("FREQ", "{@f}") + "/" + at.replace("FREQ", "f_hz")


def _z_at(block: str, k: int) -> str:
    return f'=INDEX({{{block}}},{k + 2},MATCH("z_ohm",INDEX({{{block}}},1,0),0))'


HARM = Table("harm", "Harmonic table at the injected orders", (
    Col("order", "int", key="h"), Col("freq_hz", "hz", key="f"),
    Col("amps", "2", 11, "amps"), Col("V_h % of V_1, with the filter", "2", 13, "vh"),
    Col("V_h % of V_1, without", "2", 12, "vh0"), Col("limit %", "2", key="lim"),
    Col("|Z| with the filter, Ω", "sig", 13, "z"), Col("|Z| without, Ω", "sig", 12, "z0"),
), tuple(
    Row((
        f"=INDEX(drive_orders,{k + 1})", "={@h}*f_hz",
        "=INDEX({ifil},MATCH({@f}*(1+1E-9),INDEX({ifil},0,1),1),3)",
        _vh("vbus"), _vh("vbus0"),
        '=INDEX({limits},2,MATCH("individual_pct",INDEX({limits},1,0),0))',
        _z_at("zinj", k), _z_at("zinj0", k),
    ))
    for k in range(len(cm.ORDERS))
), excel=False)

RESULTS = (
    Section("Values derived from the inputs", (
        Result("tuned_order", "Tuned order h_serve·(1 − detuning)", "=h_serve*(1-detune_pct/100)",
               "h", "3", "a few percent below the harmonic served"),
        Result("z_src", "Supply impedance |Z| = V²/S_sc", "=v_ll^2/(ssc_mva*1E6)", "Ω", "sig"),
        Result("c_lo", "Capacitance factor, lowest", f"=(1-c_tol_minus)*(1-{TEMP})", "", "4",
               "tolerance and temperature"),
        Result("c_hi", "Capacitance factor, highest", f"=(1+c_tol_plus)*(1+{TEMP})", "", "4"),
    )),
    Block("size", "Filter sizing (CKT_TUNED_FILTER; per phase of the star equivalent)",
          "_xlfn.DROP(CKT_TUNED_FILTER(filter_kvar,v_ll,f_hz,3,tuned_order,q_factor),-1)",
          QVU, 17),
    Section("The filter in the network (capacitance × c_factor)", (
        Result("tuned_b", "Tuned order in the network", "=tuned_order/SQRT(c_factor)", "h", "3",
               "h_n/√c"),
        Result("q_b", "Quality factor in the network", "=q_factor/SQRT(c_factor)", "", "2",
               "X_n/R with X_n = √(L/C)"),
        Result("x_b", "Net reactance X_C/c − X_L at the fundamental",
               f'={size("x_c_ohm")}/c_factor-{size("x_l_ohm")}', "Ω", "sig"),
        Result("kvar_b", "Reactive power delivered at the bus voltage",
               f'=v_ll^2*x_b/({size("r_ohm")}^2+x_b^2)/1000', "kvar", "1",
               "V²·X/(R² + X²), three-phase"),
    )),
    Section("Key results", (
        Result("c_uf", "Capacitance per phase (star)", "=" + size("c_farad") + "*1E6", "µF", "1",
               "a delta bank: one third of it per leg"),
        Result("l_mh", "Reactor inductance per phase", "=" + size("l_henry") + "*1E3", "mH", "4"),
        Result("r_mohm", "Filter resistance per phase", "=" + size("r_ohm") + "*1E3", "mΩ", "3",
               "X_n/Q"),
        Result("v_cap_ll", "Capacitor fundamental voltage, line-to-line",
               "=v_ll*" + size("voltage_rise"), "V", "1", "the rise h²/(h² − 1)"),
        Result("tuned_high", "Tuned order, highest with the tolerances",
               "=" + pick("drift", "order_high", "value"), "h", "3", "smallest C and L"),
        Result("par_order", "Parallel resonance with the supply",
               "=" + pick("fres", "parallel_order", "value"), "h", "3", "CKT_FILTER_RESONANCE"),
        Result("par_dist_pct", "Its distance from the nearest injected order",
               "=MIN(((par_order-drive_orders)/drive_orders)^2)^0.5*100", "%", "1"),
        Result("series_order", "Series resonance found in the network scan",
               cm.first_resonance("series", 3), "h", "3", "should be the tuned order"),
        Result("net_par_order", "Parallel resonance found in the network scan",
               cm.first_resonance("parallel", 3), "h", "3"),
        Result("thd_before", "Bus voltage THD without the filter",
               f'=100*CKT_THD({BEFORE},"BUS","V",opts)', "%", "2", "harmonics 2–50"),
        Result("thd_after", "Bus voltage THD with the filter",
               f'=100*CKT_THD({ARGS},"BUS","V",opts)', "%", "2", "harmonics 2–50"),
        Result("cap_i_ratio", "Capacitor RMS current / nominal",
               "=" + pick("rating", "capacitor rms current", "ratio"), "ratio", "3",
               "IEEE Std 18 limit 1.35"),
        Result("reactor_i", "Reactor RMS current",
               "=" + pick("rating", "reactor rms current", "value"), "A", "1"),
        Result("loss_kw", "Losses in the filter resistance",
               "=" + pick("rating", "losses in R", "value") + "/1000", "kW", "3",
               "three phases, at the highest voltage"),
    )),
    Block("drift", "Tuning drift with the tolerances (CKT_FILTER_DRIFT)",
          "CKT_FILTER_DRIFT(tuned_order,f_hz,c_tol_minus,c_tol_plus,l_tol,c_tempco_ppm,dt_k)",
          QVU, 11),
    Block("fres", "Parallel resonance of the filter with the supply (CKT_FILTER_RESONANCE)",
          'CKT_FILTER_RESONANCE("tuned",kvar_b,v_ll,f_hz,3,ssc_mva,xr_src,tuned_b,q_b)',
          (Col("quantity", width=18), Col("value", "qty", 12), Col("unit", width=34)), 7),
    Block("ifil", "Filter current per frequency (A, line current)",
          f'CKT_SOLVE({ARGS},"F_L","I",opts)', cm.SOLVE_COLS, 11),
    cm.vbus_block(),
    cm.vbus_block("parts_nof", "vbus0", " without the filter"),
    HARM,
    Block("rating", "Filter rating at the highest voltage, with the harmonic currents it absorbs "
          "(CKT_FILTER_RATING)",
          _units_out("_xlfn.DROP(CKT_FILTER_RATING(\"tuned\",kvar_b*v_max_pu^2,v_ll*v_max_pu,"
                     "f_hz,3,tuned_b,q_b,{harm},cap_kvar,cap_v),-1)"), RATING_COLS, 11,
          units=RATING_UNITS),
    Block("v519", "IEEE 519 voltage check at the bus, with the filter",
          f'_xlfn.DROP(CKT_V519({ARGS},"BUS",v_ll/1000,opts),-1)', cm.V519_COLS, 12),
    cm.resonance_block(F_STOP, "Resonances seen at the bus with the filter (supply source "
                       "shorted)"),
)

CHECKS = (
    Check("Highest tuned order (tolerances) below h served",
          "=tuned_high", "=h_serve", "h",
          "common practice: capacitance lost with age, failed elements or temperature moves the "
          "tuning up; it must stay below the harmonic served (tolerances: makers' data)",
          rule="<", fmt="3"),
    Check("Parallel resonance distance from injected orders", "=par_dist_pct",
          "=margin_pct", "%", "common practice (from memory): ≥ 10 % from every injected order "
          "(margin is an input)", rule=">=", fmt="1"),
    *cm.duty_checks(None, "rating", "capacitor "),
    Check("Reactor RMS current / rated", "=reactor_i/reactor_i_rated", "=1", "ratio",
          "reactor maker's rated current (input)", fmt="3"),
    *cm.v_checks(),
    Check("Series resonance of the network vs the tuned order", "=ABS(series_order/tuned_b-1)*100",
          "=1", "%", "consistency of the network with the sizing (series resonance at h_n/√c)",
          fmt="3"),
    # rounded to 1e-6 % (1e-8 relative, far inside both methods' agreement): the two agree to
    # rounding, and a difference of rounding noise must not decide which scenario is "worst"
    Check("Parallel resonance: network vs filter function",
          "=ROUND(ABS(net_par_order/par_order-1)*100,6)", "=0.1", "%",
          "consistency: the same supply and filter solved two ways (to 1e-6 %)", fmt="4"),
)

DATA = (
    *cm.scan_blocks(F_STOP),
    *cm.scan_blocks(F_STOP, "parts_nof", "0", " without the filter"),
    cm.limits_block(),
)

CHARTS = (
    Chart("Impedance seen at the bus before and after the filter, with the injected orders",
          Axis("harmonic order h = f / f₁", lo=0, hi=30), Axis("|Z| (Ω)", log=True), (
              Series("|Z| without the filter", "{scan_h:h}", "{scan0:z_ohm}", color="#B0B0B0"),
              Series("|Z| with the filter", "{scan_h:h}", "{scan:z_ohm}"),
              Series("injected orders (with the filter)", "{harm:h}", "{harm:z}", "markers",
                     "#C0392B"),
          )),
    Chart("Bus voltage harmonics before and after, against the IEEE 519 individual limit",
          Axis("harmonic order h"), Axis("% of the fundamental", fmt="0.0"), (
              Series("V_h without the filter", "{harm:h}", "{harm:vh0}", "column", "#B0B0B0"),
              Series("V_h with the filter", "{harm:h}", "{harm:vh}", "column", cm.TEAL),
              Series("IEEE 519 individual limit", "{harm:h}", "{harm:lim}", "column", "#23395B"),
          ), kind="column"),
    Chart("Current the filter absorbs at each injected order", Axis("harmonic order h"),
          Axis("filter current (A rms)", fmt="0"),
          (Series("filter current", "{harm:h}", "{harm:amps}", "column", cm.TEAL),),
          kind="column"),
)

TEMPLATE = Template(
    file="filter_design.xlsx",
    title="Single-tuned filter design",
    subtitle="A single-tuned R-L-C filter sized from its kvar at the fundamental, tuned a few "
    "percent below the harmonic it serves, with its quality factor: C, L, R, the capacitor "
    "rated against IEEE 18 and the reactor's current and losses with the harmonic currents the "
    "filter absorbs, the impedance at the bus before and after, the parallel resonance with "
    "the supply and the tuning drift from capacitor tolerance and temperature.",
    scope=(
        "In scope: one star-connected single-tuned filter at a low-voltage bus, six-pulse drive "
        "injections from the spectrum table, the supply at its minimum and maximum short-circuit "
        "level and the capacitance from its lowest to its highest (Scenarios sheet).",
        "Not in scope: background distortion of the supply, other capacitor banks and filters, "
        "unbalance and triplen currents, switching transients and inrush, the reactor's thermal "
        "design and the protection of the filter.",
        "This invented scenario PASSES in every scenario (without the filter the bus would "
        "exceed the IEEE 519 limits). The checks that decide are the tuned order at the "
        "highest with the tolerances against the 5th, and, with the highest capacitance and "
        "the weakest supply, the reactor current against its rating and the capacitor current "
        "against IEEE 18.",
    ),
    inputs=INPUTS,
    network=(PARTS, BEFORE_PARTS, SOURCES, cm.OPTIONS),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("tuned_order", "c_uf", "l_mh", "v_cap_ll", "par_order", "par_dist_pct",
                 "cap_i_ratio", "reactor_i", "loss_kw", "thd_before", "thd_after"),
    scenarios=Scenarios((
        Sweep("c_factor", "capacitance in the network / nominal", ("=c_lo", 1, "=c_hi"),
              ("lowest", "nominal", "highest"), "4"),
        Sweep("ssc_mva", "short-circuit power at the bus", ("=ssc_min_mva", "=ssc_mva"),
              ("min", "max")),
    ), cm.SCENARIO_NOTE),
    notes=(
        ("Method", (
            "Sizing (CKT_TUNED_FILTER): the filter delivers the given kvar at the bus voltage "
            "and f₁ with R included; X_L = X_C/h_n², Q = X_n/R with X_n = √(L/C), per phase of "
            "the star equivalent. The tuned order is the harmonic served less the detuning.",
            "Network: the supply is a voltage source behind R + L with |Z| = V²/S_sc split by "
            "X/R; the drives are current sources at the orders of the spectrum table; one "
            "phasor solve per order. The filter's capacitance is multiplied by c_factor (1 on "
            "the other sheets; the Scenarios sheet sweeps it over the tolerance range), which "
            "moves the tuning to h_n/√c and the quality factor to Q/√c.",
            "Rating (CKT_FILTER_RATING): the capacitor's RMS and peak voltage, RMS current and "
            "kvar from its fundamental current at the highest operating voltage and the "
            "harmonic currents the filter absorbs in the network (amps column of the harmonic "
            "table; V_C,h = I_h·X_C/h), against the IEEE Std 18 limits with the capacitor's "
            "nameplate; the reactor's RMS and peak current and voltage and the losses in R "
            "(constant with frequency).",
            "Parallel resonance (CKT_FILTER_RESONANCE): the |Z| maximum of supply and filter "
            "found by the core solver, with its lossless value √(X_C/(X_s + X_L)); the network "
            "scan finds the same resonance (a consistency check). Tuning drift "
            "(CKT_FILTER_DRIFT): h_n/√(c·l) at the extremes of capacitance (tolerance and "
            "temperature) and inductance.",
            "Before and after: the same supply and injections without the filter (the second "
            "parts table) give the impedance scan, the harmonic voltages and the THD before.",
        )),
        ("Bases of the spilled tables", (
            "The sizing, rating and IEEE 519 tables are shown without the basis line their "
            "functions return last (a long text): sizing — single-tuned filter (R, L, C in "
            "series), three-phase kvar, line-to-line volts and line currents, C, L and R per "
            "phase of the star equivalent; rating — the same basis, capacitor limits of IEEE Std "
            "18 (1.10 V rms, 1.20 V peak, 1.35 I rms, 1.35 kvar), reactor values against the "
            "maker's rating; IEEE 519 — Table 1 at the bus voltage, % of the fundamental, "
            "harmonics 2–50, DC and interharmonics excluded. The reactor's peak current is the "
            "sum of the tone peaks (an upper bound).",
        )),
        ("Assumptions", (
            "Balanced three-phase operation, per-phase model; the drives are ideal current "
            "sources (their harmonic currents do not change with the bus voltage); no "
            "background distortion of the supply; R constant with frequency. The harmonic "
            "currents are those at the nominal voltage; the fundamental duty is rated at the "
            "highest operating voltage (input).",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Limits and their sources", (
            "IEEE Std 18-2002 continuous capacitor limits (110 % RMS V, 120 % peak V, 135 % RMS "
            "I, 135 % kvar); IEEE Std 519-2014 Table 1 for the bus voltage; the reactor's "
            "rating from its maker (input); tuning below the harmonic served and the 10 % "
            "resonance margin are common practice (from memory).",
            "Screening calculation: the capacitor and reactor makers, the utility and a "
            "licensed engineer decide on the design.",
        )),
        ("Verdicts", (
            "A check reads PASS or FAIL only from numbers; a check whose value or limit is not "
            "a number reads ERROR. The overall verdict is PASS only when every check passes "
            "and every input is accepted; otherwise FAIL, INCOMPLETE or INVALID INPUT.",
        )),
        ("Using the book", cm.LIVE),
    ),
)
