"""Input filter of a DC/DC converter: LC filter with a parallel R–C damping leg.

Bode of the ripple attenuation, the filter's output impedance against the converter's
negative input resistance (Middlebrook's criterion), the damping sizing that restores a
chosen margin, the ripple at the switching frequency and its multiples, and the filter's
natural frequencies. Invented demo data; this scenario passes its checks.
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
)

# fmt: off
ARGS = "parts_tbl,sources_tbl"
N_HARM = 15  # harmonics of the switching frequency in the converter's input current
FLOOR = "1E-12"  # |sin(nπD)| below this is an exact zero of the spectrum (round-off)
BAND = "band_lo_khz*1E3,band_hi_khz*1E3"
PORT = '"OUT"'
RED, ORANGE, GREY = "#C0392B", "#D68910", "#8C8C8C"

INPUTS = (
    Section("Converter (a buck regulator drawing its input through the filter)", (
        Input("v_in", "Converter input voltage", 36, "V", num(1, 1e4),
              "lowest line: the worst case (|R_N| = V²/P smallest)"),
        Input("v_out", "Converter output voltage", 12, "V", num(0.01, 1e4),
              "buck: duty cycle D = V_out / V_in"),
        Input("p_out", "Converter output power", 150, "W", num(0.001, 1e7)),
        Input("eff", "Converter efficiency", 0.92, "", num(0.1, 1),
              "input power P = P_out / efficiency"),
        Input("f_sw_khz", "Switching frequency", 300, "kHz", num(0.01, 1e5)),
    )),
    Section("Input filter", (
        Input("l_uh", "Filter inductance L", 4.7, "µH", num(0.001, 1e6)),
        Input("dcr_mohm", "Inductor winding resistance (DCR)", 8, "mΩ", num(0.001, 1e6)),
        Input("c_uf", "Filter capacitance C", 10, "µF", num(0.001, 1e6), "ceramic, at the "
              "converter's terminals"),
        Input("esr_mohm", "Filter capacitor ESR", 3, "mΩ", num(0.001, 1e6)),
    )),
    Section("Damping leg as installed (R_d in series with C_b, across C)", (
        Input("rd_ohm", "Damping resistance R_d", 1.0, "Ω", num(1e-4, 1e6),
              "compare with the sizing on the Results sheet"),
        Input("cb_uf", "Blocking capacitance C_b", 10, "µF", num(0.001, 1e6),
              "electrolytic; C_b ≥ the sized value keeps the margin"),
    )),
    Section("Study band", (
        Input("band_lo_khz", "Lowest frequency of the study", 0.1, "kHz", num(1e-6, 1e6),
              "the margin is the smallest over the whole band"),
        Input("band_hi_khz", "Highest frequency of the study", 10000, "kHz", num(1e-6, 1e9),
              "above the lowest frequency"),
    )),
    Section("Requirements and ratings", (
        Input("margin_req_db", "Required Middlebrook margin", 6, "dB", num(0, 60),
              "6 dB: |Z_out| at most half of V²/P (common practice)"),
        Input("atten_req_db", "Required attenuation at f_sw and multiples", 40,
              "dB", num(0, 300), "design requirement (invented for the demo)"),
        Input("c_i_rated", "Filter capacitor rated ripple current", 8, "A", num(1e-4, 1e5),
              "RMS, maker's data sheet (all parallel parts)"),
        Input("rd_p_rated", "Damping resistor rated power", 1, "W", num(1e-4, 1e6),
              "maker's rating, derated as your practice requires"),
    )),
)

FILTER_ROWS = (
    Row(("R_dcr", "R", "IN", "A", "=dcr_mohm*1E-3"), "inductor winding resistance (DCR)"),
    Row(("L_f", "L", "A", "OUT", "=l_uh*1E-6"),
        "filter inductor; its current is the supply-line current"),
    Row(("C_f", "C", "OUT", "B", "=c_uf*1E-6"), "filter capacitor"),
    Row(("R_esr", "R", "B", "GND", "=esr_mohm*1E-3"), "its ESR"),
)
PARTS = Table("parts_tbl", "Parts (values in Ω, H, F; the converter connects at OUT)",
              cm.PART_COLS, (
    *FILTER_ROWS,
    Row(("R_d", "R", "OUT", "D", "=rd_ohm"), "damping resistor"),
    Row(("C_b", "C", "D", "GND", "=cb_uf*1E-6"), "blocking capacitor of the damping leg"),
), si_col="value")
BARE = Table("parts_bare", "The same filter without its damping leg (for comparison)",
             cm.PART_COLS, FILTER_ROWS, excel=False, si_col="value")

# converter input current: a rectangular pulse train of height I_pulse and duty D,
# I_pulse·D + Σ (2·I_pulse/(nπ))·|sin(nπD)|·cos(nωt − nπD (+180° where sin < 0))
SIN = "SIN({n}*PI()*duty)"
SOURCES = Table("sources_tbl", "Sources (supply at IN; the converter's input current drawn "
                "from OUT: DC + harmonics, peak in V or A)", (
    Col("name"), Col("kind"), Col("from"), Col("to"), Col("freq_hz", "thou", 11),
    Col("peak", "sig", 11), Col("phase_deg", "deg", 10),
), (
    Row(("V_bus", "V", "IN", "GND", 0, "=v_in", None), "supply (DC); a short for every study"),
    Row(("I_conv", "I", "OUT", "GND", 0, "=i_in_dc", None), "converter input current, DC"),
    *(Row(("I_conv", "I", "OUT", "GND", f"={n}*f_sw_khz*1E3",
           f"=IF(ABS({SIN.format(n=n)})<{FLOOR},0,ABS(2*i_pulse/({n}*PI())*{SIN.format(n=n)}))",
           f"=IF(ABS({SIN.format(n=n)})<{FLOOR},0,"
           + wrap_deg(f"-{n}*180*duty+IF({SIN.format(n=n)}<0,180,0)") + ")"),
          f"harmonic {n} of the converter's input current")
      for n in range(1, N_HARM + 1)),
), si_col="freq_hz:Hz")

OPTIONS = Table("opts", "Options", (Col("key", width=15), Col("value")),
                (Row(("ground", "GND")),), excel=False)

GAIN_AT = 'CKT_GAIN_AT(' + ARGS + ',"I_conv","L_f",{@f}*1000,"{m}")'
MEETS = ('=IF(ISNUMBER({@att}),IF({@att}>=atten_req_db,"meets the requirement",'
         '"below the requirement"),"not computed")')
RIPPLE = Table("ripple", f"Ripple at the switching frequency and its multiples (harmonics "
               f"1–{N_HARM}): supply-line current per converter ripple current", (
    Col("harmonic", key="lab"), Col("freq (kHz)", "hz", 10, "f"),
    Col("converter ripple, A peak", "3", 12, "iconv"), Col("attenuation (dB)", "2", 12, "att"),
    Col("against the required attenuation", key="req"), Col("gain (dB)", "2", 10, "gdb"),
    Col("phase_deg", "deg", 10, "ph"), Col("supply-line ripple, mA peak", "3", 13, "iline"),
), tuple(
    Row(("f_sw" if n == 1 else f"{n} × f_sw", f"={n}*f_sw_khz",
         f"=INDEX({{sources_tbl:peak}},{n + 2})", "=-{@gdb}", MEETS,
         "=" + GAIN_AT.replace("{m}", "gain_db"), "=" + GAIN_AT.replace("{m}", "phase_deg"),
         "={@iconv}*10^({@gdb}/20)*1000"))
    for n in range(1, N_HARM + 1)
), excel=False)


def _all_numbers(col: str, expr: str) -> str:
    """``expr`` only when every row of the ripple table's column is a number."""
    return (f'=IF(COUNT({{ripple:{col}}})={N_HARM},{expr},'
            f'"not every harmonic computed (see the ripple table)")')


POLES = (Col("freq_hz", "hz", 12), Col("damping", "4"), Col("q", "2"),
         Col("time_constant_s", "sig", 15))
LEAST = 'MATCH(MIN({poles:damping}),{poles:damping},0)'
RESULTS = (
    Section("Key results", (
        Result("margin_db", "Middlebrook margin, smallest over the band (damped filter)",
               "=" + pick("margin", "margin_db", "value"), "dB", "2",
               "20·log10(|R_N| / |Z_out|) at the |Z_out| peak, found exactly"),
        Result("f_worst_khz", "Frequency of the smallest margin",
               "=" + pick("margin", "f_worst_hz", "value") + "/1000", "kHz", "3"),
        Result("zout_peak", "Largest |Z_out| of the damped filter",
               "=" + pick("margin", "zout_peak_ohm", "value"), "Ω", "4"),
        Result("margin_bare_db", "Margin of the same filter without damping",
               "=" + pick("margin_bare", "margin_db", "value"), "dB", "2",
               "why the damping leg is there"),
        Result("zpk_bare", "Largest |Z_out| without damping (solved)",
               "=" + pick("margin_bare", "zout_peak_ohm", "value"), "Ω", "3"),
        Result("att_min_db", f"Smallest ripple attenuation at f_sw … {N_HARM}·f_sw",
               _all_numbers("att", "MIN({ripple:att})"), "dB", "2", "ripple table below"),
        Result("i_line_ma", f"Supply-line ripple current, RMS (harmonics 1–{N_HARM})",
               _all_numbers("iline", "SQRT(SUMSQ({ripple:iline})/2)"), "mA", "2",
               "the rest falls roughly as 1/n³"),
        Result("i_cf_rms", "Filter capacitor ripple current, RMS (upper bound)",
               f'=SQRT(CKT_RMS({ARGS},"C_f","I")^2+i_tail_rms^2)', "A", "3",
               f"harmonics 1–{N_HARM} solved, all of the rest taken through C"),
        Result("rd_share", f"Damping leg's share of the converter ripple at {N_HARM + 1}·f_sw",
               f'=IF(rd_ohm*cb_uf>esr_mohm*1E-3*c_uf,CKT_GAIN_AT({ARGS},"I_conv","R_d",'
               f'{N_HARM + 1}*f_sw_khz*1E3),1)', "fraction", "4",
               "falls with frequency when R_d·C_b > ESR·C (else 1 is used)"),
        Result("p_rd_w", "Damping resistor dissipation (upper bound)",
               f'=rd_ohm*(CKT_RMS({ARGS},"R_d","I")^2+(rd_share*i_tail_rms)^2)', "W", "4",
               f"harmonics 1–{N_HARM} solved, the rest at the share above"),
        Result("pole_khz", "Least-damped natural frequency of the filter",
               "=" + spilled("poles", "freq_hz", f"INDEX({{poles:freq_hz}},{LEAST})/1000"),
               "kHz", "3", "poles table below"),
        Result("pole_zeta", "… its damping ratio ζ",
               "=" + spilled("poles", "freq_hz", "MIN({poles:damping})"), "", "4"),
        Result("pole_q", "… its Q = 1/(2ζ)",
               "=" + spilled("poles", "freq_hz", f"INDEX({{poles:q}},{LEAST})"), "", "2"),
    )),
    Section("Filter values (closed forms of an LC filter)", (
        Result("f0_khz", "Resonance of L and C, f₀ = 1/(2π√(LC))",
               "=1/(2*PI()*SQRT(l_uh*1E-6*c_uf*1E-6))/1000", "kHz", "3", "circuit theory"),
        Result("r0_ohm", "Characteristic impedance R₀ = √(L/C)", "=SQRT(l_uh/c_uf)", "Ω", "4",
               "circuit theory"),
        Result("q_bare", "Quality factor without damping, R₀ / (DCR + ESR)",
               "=r0_ohm/((dcr_mohm+esr_mohm)*1E-3)", "", "1", "series losses only"),
        Result("zpk_bare_cf", "Undamped |Z_out| peak ≈ R₀² / (DCR + ESR)",
               "=r0_ohm^2/((dcr_mohm+esr_mohm)*1E-3)", "Ω", "3",
               "high-Q approximation; solved: Key results"),
        Result("att_ideal_db", "Attenuation of an ideal LC at f_sw, 20·log10((f_sw/f₀)² − 1)",
               "=20*LOG10((f_sw_khz/f0_khz)^2-1)", "dB", "2",
               "second-order closed form, no losses or damping"),
    )),
    Section("Converter (buck, continuous conduction, ideal switch)", (
        Result("p_in", "Converter input power P = P_out / efficiency", "=p_out/eff", "W", "2"),
        Result("rn_ohm", "|R_N| = V²/P (its input resistance is −V²/P)", "=v_in^2/p_in", "Ω",
               "4", "Middlebrook 1976"),
        Result("duty", "Duty cycle D = V_out / V_in",
               '=IF(v_out<v_in,v_out/v_in,"expects V_out < V_in (a buck)")', "", "4"),
        Result("i_in_dc", "Converter input current, DC = P / V_in", "=p_in/v_in", "A", "3"),
        Result("i_pulse", "Input current pulse height I_in / D", "=i_in_dc/duty", "A", "3",
               "the output inductor's ripple is neglected"),
        Result("i_ac_rms", "Converter ripple current, RMS = I_pulse·√(D(1−D))",
               "=i_pulse*SQRT(duty*(1-duty))", "A", "3", "all harmonics (closed form)"),
        Result("i_tail_rms", f"… of which above harmonic {N_HARM}",
               _all_numbers("iconv", "SQRT(MAX(0,i_ac_rms^2-SUMSQ({ripple:iconv})/2))"), "A",
               "3", f"closed form less harmonics 1–{N_HARM}"),
    )),
    Section("Damping sizing that restores the required margin (CKT_DAMPING, for an ideal LC)", (
        Result("damp_n", "n = C_b / C", "=" + pick("damp", "n", "value"), "ratio", "4",
               "Erickson & Maksimović, 2nd ed., §10.4.1 (from memory; verified by the solve)"),
        Result("damp_cb_uf", "Blocking capacitance C_b, sized", "=" + pick("damp", "cb_f", "value")
               + "*1E6", "µF", "3", "the installed C_b should be at least this"),
        Result("damp_rd", "Damping resistance R_d, optimum for that n",
               "=" + pick("damp", "rf_ohm", "value"), "Ω", "4"),
        Result("damp_peak", "Peak |Z_out| of the sized ideal filter (solved)",
               "=" + pick("damp", "peak_solved_ohm", "value"), "Ω", "4",
               "formula: R₀·√(2(2+n))/n"),
        Result("damp_margin", "Margin of the sized ideal filter",
               "=" + pick("damp", "margin_db", "value"), "dB", "2",
               "DCR and ESR left out: conservative"),
    )),
    Block("poles", "Natural frequencies of the damped filter (supply shorted, converter open)",
          f"CKT_POLES({ARGS})", POLES, 4),
    Block("poles_bare", "Natural frequencies without the damping leg", "CKT_POLES(parts_bare,"
          "sources_tbl)", POLES, 3),
    RIPPLE,
)

CHECKS = (
    Check("Middlebrook margin, smallest over the band", "=margin_db", "=margin_req_db", "dB",
          'R. D. Middlebrook, "Input filter considerations in design and application of '
          'switching regulators", IEEE IAS Annual Meeting, 1976: |Z_out| well below V²/P; the '
          "required margin is an input (6 dB common practice)", rule=">="),
    Check(f"Smallest ripple attenuation, f_sw … {N_HARM}·f_sw", "=att_min_db",
          "=atten_req_db", "dB", "design requirement (input)", rule=">="),
    Check("Filter capacitor ripple current / rated", "=i_cf_rms/c_i_rated", "=1", "ratio",
          "capacitor maker's rated ripple current (input)", fmt="3"),
    Check("Damping resistor dissipation / rated", "=p_rd_w/rd_p_rated", "=1", "ratio",
          "resistor maker's rated power (input)", fmt="3"),
)

DATA = (
    Block("margin", "Middlebrook check, damped filter",
          f"CKT_FILTER_MARGIN(parts_tbl,{PORT},v_in,p_in,{BAND},margin_req_db,opts,sources_tbl)",
          (Col("item", width=14), Col("value", "sig", 12), Col("unit", width=40)), 9),
    Block("margin_bare", "Middlebrook check, without damping",
          f"CKT_FILTER_MARGIN(parts_bare,{PORT},v_in,p_in,{BAND},margin_req_db,opts,sources_tbl)",
          (Col("item", width=14), Col("value", "sig", 12), Col("unit", width=40)), 9),
    Block("damp", "Damping sizing", "CKT_DAMPING(l_uh*1E-6,c_uf*1E-6,v_in,p_in,margin_req_db)",
          (Col("item", width=16), Col("value", "sig", 12), Col("unit", width=36)), 15),
    Block("bode", "Ripple attenuation: supply-line current / converter current",
          f'CKT_GAIN({ARGS},"I_conv","L_f",{BAND},200)',
          (Col("freq_hz", "sig"), Col("gain", "sig"), Col("gain_db", "2"), Col("phase_deg", "2"),
           Col("group_delay_s", "sig", 13)), 201),
    Block("bode_khz", "freq (kHz)", "{bode:freq_hz}/1000", (Col("f", "sig"),), 201,
          headed=False),
    Block("zscan", "|Z_out| of the damped filter and |R_N|",
          f"CKT_MARGIN_SCAN(parts_tbl,{PORT},v_in,p_in,{BAND},200,opts,sources_tbl)",
          (Col("freq_hz", "sig"), Col("zout_ohm", "sig"), Col("zout_deg", "2"),
           Col("rn_ohm", "sig"), Col("margin_db", "2")), 201),
    Block("zscan_bare", "|Z_out| without damping",
          f"CKT_MARGIN_SCAN(parts_bare,{PORT},v_in,p_in,{BAND},200,opts,sources_tbl)",
          (Col("freq_hz", "sig"), Col("zout_ohm", "sig"), Col("zout_deg", "2"),
           Col("rn_ohm", "sig"), Col("margin_db", "2")), 201),
    Block("z_khz", "freq (kHz)", "{zscan:freq_hz}/1000", (Col("f", "sig"),), 201, headed=False),
    Block("z_allow", "allowed |Z_out| (Ω)", "{zscan:rn_ohm}*10^(-margin_req_db/20)",
          (Col("z", "sig"),), 201, headed=False),
    Block("worst_f", "smallest margin at (kHz)", "f_worst_khz", (Col("f", "3"),), 2,
          headed=False),
    Block("worst_z", "largest |Z_out| (Ω)", "zout_peak", (Col("z", "sig"),), 2, headed=False),
    Block("bare_f", "undamped peak at (kHz)",
          pick("margin_bare", "f_worst_hz", "value") + "/1000", (Col("f", "3"),), 2,
          headed=False),
    Block("bare_z", "undamped peak (Ω)", "zpk_bare", (Col("z", "sig"),), 2, headed=False),
    Block("req_line", "required gain (dB)", "{ripple:f}*0-atten_req_db", (Col("g", "2"),),
          N_HARM + 1, headed=False),
    Block("spec_khz", "harmonic (kHz)", "_xlfn._xlws.FILTER({ripple:f},{ripple:iconv}>0)",
          (Col("f", "hz"),), N_HARM + 1, headed=False),
    Block("spec_conv", "converter (A)", "_xlfn._xlws.FILTER({ripple:iconv},{ripple:iconv}>0)",
          (Col("i", "sig"),), N_HARM + 1, headed=False),
    Block("spec_line", "supply line (A)",
          "_xlfn._xlws.FILTER({ripple:iline}/1000,{ripple:iconv}>0)", (Col("i", "sig"),),
          N_HARM + 1, headed=False),
)

KHZ = Axis("frequency (kHz)", log=True)
CHARTS = (
    Chart("Ripple attenuation: supply-line current per converter input current",
          KHZ, Axis("gain (dB), 20·log10 of the current ratio", fmt="0"), (
              Series("gain I(L_f) / I_conv", "{bode_khz:f}", "{bode:gain_db}"),
              Series("f_sw and its multiples", "{ripple:f}", "{ripple:gdb}", "markers", RED),
              Series("required (at most)", "{ripple:f}", "{req_line:g}", color=ORANGE),
          )),
    Chart("Phase of the ripple attenuation (continuous over the band)", KHZ,
          Axis("phase (degrees, output leads +)", lo=-180, hi=0, fmt="0"), (
              Series("phase of I(L_f) / I_conv", "{bode_khz:f}", "{bode:phase_deg}", color=cm.TEAL),
          )),
    Chart("Filter output impedance |Z| against the converter's |R_N| = V²/P", KHZ,
          Axis("|Z| (Ω)", log=True), (
              Series("|Z_out| with damping", "{z_khz:f}", "{zscan:zout_ohm}"),
              Series("|Z_out| without damping", "{z_khz:f}", "{zscan_bare:zout_ohm}", color=GREY),
              Series("|R_N| = V²/P", "{z_khz:f}", "{zscan:rn_ohm}", color=RED),
              Series("|R_N| less the required margin", "{z_khz:f}", "{z_allow:z}", color=ORANGE),
              Series("smallest margin", "{worst_f:f}", "{worst_z:z}", "markers", RED),
              Series("peak without damping (exact)", "{bare_f:f}", "{bare_z:z}", "markers",
                     GREY),
          )),
    Chart("Ripple current spectrum, peak per harmonic (exact zeros left out)",
          Axis("frequency (kHz)", lo=0), Axis("current, A peak", log=True), (
              Series("converter input current", "{spec_khz:f}", "{spec_conv:i}", "markers",
                     GREY),
              Series("supply-line current", "{spec_khz:f}", "{spec_line:i}", "markers",
                     cm.TEAL),
          )),
)

NOTES = (
    ("Method", (
        "The input filter is a series inductor (with its winding resistance) and a shunt "
        "capacitor (with its ESR) at the converter's input terminals, damped by a resistor R_d "
        "in series with a blocking capacitor C_b across C. The supply is an ideal DC voltage "
        "source: a short for every small-signal study.",
        "Ripple attenuation: the converter's input ripple current drawn at OUT and the part of "
        "it that flows in the supply line (the inductor's current), as a ratio (CKT_GAIN over "
        "the band, CKT_GAIN_AT at f_sw and its multiples). For a passive filter this current "
        "ratio equals the voltage transfer from the supply to the converter's terminals "
        "(reciprocity).",
        "Middlebrook's criterion: a converter that regulates its output draws constant power, "
        "so its incremental input resistance is negative, R_N = −V²/P. The filter's output "
        "impedance Z_out (seen from the converter, supply shorted) must stay well below |R_N| "
        "at every frequency; the margin is 20·log10(|R_N| / |Z_out|), its smallest value is at "
        "the |Z_out| peak, found exactly from the network's natural frequencies "
        "(CKT_FILTER_MARGIN), not read from the chart's grid. Lowest input voltage and full "
        "power give the smallest |R_N| (Scenarios sheet).",
        "Damping sizing (CKT_DAMPING): for an ideal LC (no DCR, no ESR) with R₀ = √(L/C), "
        "n = C_b/C, the optimum R_d = R₀·√((2+n)(4+3n)/(2n²(4+n))) gives a peak |Z_out| = "
        "R₀·√(2(2+n))/n; n is the smallest that reaches the required margin (R. W. Erickson, "
        "D. Maksimović, Fundamentals of Power Electronics, 2nd ed., 2001, §10.4.1 — from "
        "memory; every sizing is verified by solving the damped filter). The installed R_d "
        "and C_b are inputs; the check on the Checks sheet uses the installed filter.",
        "Converter input current: a buck in continuous conduction draws a rectangular pulse "
        "train of height I_in/D and duty D = V_out/V_in (output inductor ripple and switching "
        f"edges neglected, common practice): its DC level and {N_HARM} harmonics are the "
        "sources at OUT. Capacitor and resistor ripple currents are solved per harmonic; the "
        f"converter's ripple above harmonic {N_HARM} (closed form I_pulse·√(D(1−D)) less the "
        "modelled harmonics) is added in full to the capacitor and at the damping leg's share "
        f"at {N_HARM + 1}·f_sw to the resistor, so both figures are upper bounds (the leg's "
        "share falls with frequency above the resonance when R_d·C_b > ESR·C; otherwise the "
        "whole tail is used).",
        "Natural frequencies (CKT_POLES): generalised eigenvalues of the network with the "
        "supply shorted and the converter open; ζ = −Re(s)/|s|, Q = 1/(2ζ). Without damping "
        "the filter is one series RLC loop: ω₀ = 1/√(LC), ζ = (R/2)·√(C/L) with R = DCR + ESR "
        "(circuit theory).",
    )),
    ("Conventions", (
        "dB: 20·log10 of a current ratio (supply-line current / converter ripple current); "
        "attenuation = −gain in dB. Phase in degrees, cosine reference, positive = the output "
        "leads the input; the table's phase is wrapped to (−180°, 180°], the chart's phase is "
        "continuous over the band (equal to the wrapped value at its first frequency). Group "
        "delay (Data sheet, group_delay_s) is −dφ/dω in seconds, positive for a lagging, "
        "low-pass-like response, from the exact derivative (not by differencing).",
        "Frequencies are shown in kHz on the charts and tables; the functions take Hz. Ripple "
        "currents are peak values per harmonic unless marked RMS; RMS figures combine the "
        "harmonics as √Σ(peak²/2).",
        *cm.SIGNS,
    )),
    ("Assumptions", (
        "|R_N| = V²/P is the converter's low-frequency input impedance; above its control "
        "bandwidth the converter's input impedance differs, so a margin over the whole band "
        "is the usual first check (conservative), not a proof of stability. Parts are ideal "
        "apart from DCR and ESR (no ESL, no core loss, no capacitance change with voltage or "
        "temperature, no tolerance: widen the margin for them). The supply's own impedance "
        "(cable, source) is not modelled: it adds to L.",
    )),
    ("Limits and their sources", (
        'R. D. Middlebrook, "Input filter considerations in design and application of '
        'switching regulators", IEEE IAS Annual Meeting, 1976 (the criterion); the 6 dB '
        "margin is common practice and an input. The attenuation requirement is a design "
        "requirement (an input, invented for the demo); ripple-current and power ratings "
        "come from the parts' makers (inputs).",
        "Which checks decide: all four apply, and each can fail the design. In the invented "
        "default scenario the closest to their limits are the ripple attenuation at f_sw and "
        "the filter capacitor's ripple current; the Middlebrook margin holds with several dB "
        "to spare at the lowest line and full load (the worst case of the Scenarios sheet), "
        "the damping resistor runs far below its rating. The same filter without its damping "
        "leg fails the margin (Key results), which is why the leg is there. The attenuation "
        "does not depend on the operating point (a linear filter), so every scenario shows "
        "the same value.",
    )),
    ("Verdicts", (
        "A check reads PASS or FAIL only from numbers; a check whose value or limit is not a "
        "number reads ERROR. The overall verdict is PASS only when every check passes and "
        "every input is accepted; otherwise FAIL, INCOMPLETE or INVALID INPUT.",
    )),
    ("Cautions", (
        "A screening calculation: confirm input-filter stability on the built equipment "
        "(measured filter output impedance and converter input impedance, loop gain, start-up "
        "at the lowest line and full load) and defer to the converter's maker.",
    )),
    ("Using the book", cm.LIVE),
)

TEMPLATE = Template(
    file="input_filter.xlsx",
    title="DC/DC converter input filter",
    subtitle="An LC input filter with a parallel R–C damping leg in front of a buck "
    "converter: Bode of the ripple attenuation, the filter's output impedance against the "
    "converter's negative input resistance −V²/P with the Middlebrook margin, the damping "
    "sizing that restores a chosen margin, the ripple at the switching frequency and its "
    "multiples, and the filter's natural frequencies.",
    scope=(
        "In scope: the filter's small-signal impedance and transfer over the study band, the "
        "converter as a constant-power load (−V²/P) and as a rectangular ripple-current "
        "source, capacitor and damping-resistor ripple duty, every combination of three input "
        "voltages and two loads (Scenarios sheet).",
        "Not in scope: the converter's own input impedance above its control bandwidth, "
        "start-up inrush, common-mode and EMI measurement bands, ESL and parasitic "
        "resonances, part tolerances, the supply's own impedance.",
        "This invented scenario PASSES its checks; without its damping leg the same filter "
        "would fail Middlebrook's criterion.",
        "A screening result: confirm stability and ripple on the built equipment and defer to "
        "the converter's maker.",
    ),
    inputs=INPUTS,
    network=(PARTS, BARE, OPTIONS, SOURCES),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("margin_db", "f_worst_khz", "margin_bare_db", "att_min_db", "i_line_ma",
                 "i_cf_rms", "p_rd_w", "pole_zeta", "damp_cb_uf"),
    scenarios=Scenarios((
        Sweep("v_in", "converter input voltage", (36, 48, 60)),
        Sweep("p_out", "converter output power", ("=p_out/2", "=p_out"), ("half", "full")),
    ), cm.SCENARIO_NOTE),
    notes=NOTES,
)
