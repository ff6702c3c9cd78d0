"""LC output filter after a switching stage: ripple current and voltage by superposition.

Invented demo data; this scenario passes its checks.
"""

from __future__ import annotations

from . import common as cm
from .formulas import spilled, wrap_deg
from .model import (
    Axis,
    Block,
    Chart,
    Check,
    Col,
    Input,
    Result,
    Row,
    Section,
    Series,
    Table,
    Template,
    num,
)

# fmt: off
ARGS = "parts_tbl,sources_tbl"
N_HARM = 15
FLOOR = "1E-12"  # relative noise floor: tones below it are shown as 0 and not charted

INPUTS = (
    Section("Switching stage", (
        Input("v_in", "Input DC voltage", 48, "V", num(0.1, 1e4), "switch-node high level"),
        Input("duty", "Duty cycle D", 0.25, "", num(0.01, 0.99), "switch-node low level is 0 V"),
        Input("f_sw_khz", "Switching frequency", 100, "kHz", num(0.01, 1e4)),
    )),
    Section("Filter and load", (
        Input("l_f_uh", "Filter inductance", 22, "µH", num(0.001, 1e6)),
        Input("c_f_uf", "Filter capacitance", 100, "µF", num(0.001, 1e6)),
        Input("esr_mohm", "Capacitor ESR", 5, "mΩ", num(0.001, 1e6)),
        Input("r_load", "Load resistance", 2.4, "Ω", num(1e-3, 1e6)),
    )),
    Section("Limits", (
        Input("cap_i_rated", "Capacitor rated ripple current", 3.0, "A", num(1e-3, 1e4),
              "from the capacitor maker's data sheet"),
        Input("ripple_allow_pct", "Allowed output ripple, peak-to-peak", 1.0, "%",
              num(0.001, 100), "of the DC output"),
    )),
)

PARTS = Table("parts_tbl", "Parts (values in Ω, H, F)", cm.PART_COLS, (
    Row(("L_f", "L", "SW", "OUT", "=l_f_uh*1E-6"), "filter inductor"),
    Row(("C_f", "C", "OUT", "X", "=c_f_uf*1E-6"), "filter capacitor"),
    Row(("R_esr", "R", "X", "GND", "=esr_mohm*1E-3"), "capacitor ESR"),
    Row(("R_load", "R", "OUT", "GND", "=r_load"), "load"),
), si_col="value")

# switch node: D·Vin + Σ (2·Vin/(nπ))·|sin(nπD)|·cos(nωt − nπD (+180° where sin < 0))
SIN = "SIN({n}*PI()*duty)"
SOURCES = Table("sources_tbl", "Sources (switch-node voltage: DC + harmonics; peak in V)", (
    Col("name"), Col("kind"), Col("from"), Col("to"), Col("freq_hz", "thou", 11),
    Col("peak", "sig", 11), Col("phase_deg", "deg", 10),
), (
    Row(("V_sw", "V", "SW", "GND", 0, "=v_in*duty", None), "DC level D·Vin"),
    *(Row(("V_sw", "V", "SW", "GND", f"={n}*f_sw_khz*1E3",
           f"=IF(ABS({SIN.format(n=n)})<{FLOOR},0,ABS(2*v_in/({n}*PI())*{SIN.format(n=n)}))",
           # a harmonic of zero amplitude (n·D whole) has no phase: 0, as the solver shows it
           f"=IF(ABS({SIN.format(n=n)})<{FLOOR},0,"
           + wrap_deg(f"-{n}*180*duty+IF({SIN.format(n=n)}<0,180,0)") + ")"),
          f"harmonic {n} of the rectangular switch-node voltage")
      for n in range(1, N_HARM + 1)),
), si_col="freq_hz:Hz")

WAVE = "{wave_v:value}"
RESULTS = (
    Section("Key results", (
        Result("v_out_dc", "Output DC voltage", f'=CKT_DC({ARGS},"OUT","V")', "V", "3"),
        Result("v_ripple_pp", "Output ripple, peak-to-peak", "=" + spilled("wave_v", "time_s", f"MAX({WAVE})-MIN({WAVE})"), "V",
               "4", "from the waveform"),
        Result("ripple_pct", "Output ripple / DC", "=100*v_ripple_pp/v_out_dc", "%", "3"),
        Result("cap_i_rms", "Capacitor ripple current, RMS", f'=CKT_RMS({ARGS},"C_f","I")', "A",
               "3", "the capacitor carries no DC"),
        Result("il_dc", "Inductor current, DC", f'=CKT_DC({ARGS},"L_f","I")', "A", "3"),
        Result("il_ripple_pp", "Inductor ripple current, peak-to-peak",
               "=" + spilled("wave_i", "time_s", "MAX({wave_i:value})-MIN({wave_i:value})"), "A", "3"),
        Result("il_ripple_cf", "Inductor ripple, closed form (Vin−Vout)·D/(L·f)",
               "=(v_in-v_out_dc)*duty/(l_f_uh*1E-6*f_sw_khz*1E3)", "A", "3",
               "common practice (ideal switch)"),
    )),
    Block("vout", "Output voltage per frequency (V)", f'CKT_SOLVE({ARGS},"OUT","V")',
          (Col("freq_hz", "thou"), Col("peak", "sig"), Col("rms", "sig"), Col("phase_deg", "deg")),
          N_HARM + 4),
)

CHECKS = (
    Check("Capacitor ripple current / rated", "=cap_i_rms/cap_i_rated", "=1", "ratio",
          "capacitor maker's rated ripple current (input)", fmt="3"),
    Check("Output ripple, peak-to-peak", "=ripple_pct", "=ripple_allow_pct", "%",
          "design requirement (input)", fmt="3"),
    Check("Inductor ripple vs closed form", "=ABS(il_ripple_pp/il_ripple_cf-1)*100", "=5", "%",
          "consistency with ΔI = (Vin−Vout)·D/(L·f), common practice; differs by the "
          "15-harmonic truncation and the load's share of the ripple", fmt="2"),
)

TONE = (f"({{vout:freq_hz}}>0)*({{vout:freq_hz}}<1E+300)*({{vout:peak}}>={FLOOR}"
        f'*_xlfn.MAXIFS({{vout:peak}},{{vout:freq_hz}},">0"))')
DATA = (
    Block("wave_v", "Output voltage over one switching period",
          f'CKT_WAVE({ARGS},"OUT","V",400)', (Col("time_s", "sig"), Col("value", "sig")), 401),
    Block("wave_i", "Inductor current over one period", f'CKT_WAVE({ARGS},"L_f","I",400)',
          (Col("time_s", "sig"), Col("value", "sig")), 401),
    Block("t_us", "time (µs)", "{wave_v:time_s}*1E6", (Col("t", "3"),), 401, headed=False),
    Block("spec_khz", "AC tone (kHz)", f"_xlfn._xlws.FILTER({{vout:freq_hz}}/1000,{TONE})",
          (Col("f", "1"),), N_HARM + 1, headed=False),
    Block("spec_v", "peak above the noise floor (V)", f"_xlfn._xlws.FILTER({{vout:peak}},{TONE})",
          (Col("v", "sig"),), N_HARM + 1, headed=False),
)

CHARTS = (
    Chart("Output voltage over one switching period", Axis("time (µs)", lo=0),
          Axis("output voltage (V)", fmt="0.000"),
          (Series("output voltage", "{t_us:t}", "{wave_v:value}"),)),
    Chart("Inductor current over one switching period", Axis("time (µs)", lo=0),
          Axis("inductor current (A)", fmt="0.0"),
          (Series("inductor current", "{t_us:t}", "{wave_i:value}", color=cm.TEAL),)),
    Chart("Output ripple spectrum (AC tones above 1e-12 of the largest)",
          Axis("frequency (kHz)", lo=0), Axis("peak voltage (V)", log=True),
          (Series("output voltage, peak per tone", "{spec_khz:f}", "{spec_v:v}", "markers", cm.TEAL),)),
)

TEMPLATE = Template(
    file="dc_link_ripple.xlsx",
    title="DC link / LC output ripple",
    subtitle="An LC filter after a switching stage: the rectangular switch-node voltage as its "
    "DC level plus 15 harmonics of the switching frequency, solved through the filter by "
    "phasors; capacitor RMS ripple current, output ripple peak-to-peak, waveforms and the "
    "output spectrum.",
    scope=(
        "In scope: continuous conduction, an ideal switch, the filter and a resistive load.",
        "Not in scope: switching edges (rise time), discontinuous conduction, the control loop, "
        "capacitor ESR variation with frequency and temperature, EMI.",
        "This invented scenario PASSES its checks.",
    ),
    inputs=INPUTS,
    network=(PARTS, SOURCES),
    results=RESULTS,
    checks=CHECKS,
    charts=CHARTS,
    data=DATA,
    key_results=("v_out_dc", "v_ripple_pp", "ripple_pct", "cap_i_rms", "il_ripple_pp"),
    notes=(
        ("Method", (
            "The switch-node voltage is a rectangular wave: its DC level D·Vin plus 15 "
            "harmonics of the switching frequency (Fourier series, common practice). Each tone "
            "is solved through the LC filter by phasors and the results combined: RMS ripple "
            "current, waveforms over one switching period, spectra.",
            f"Tones whose amplitude is below {FLOOR} of the largest (the even harmonics at "
            "D = 0.25, which vanish exactly) are written as 0 and left out of the log chart.",
        )),
        ("Assumptions", (
            "Ideal switch (zero rise time), continuous conduction; capacitor ESR constant with "
            "frequency; the 15 harmonics truncate the switch-node edges (ripple figures "
            "converge as 1/n²).",
        )),
        ("Sign conventions", cm.SIGNS),
        ("Verdicts", (
            "A check reads PASS or FAIL only from numbers, ERROR otherwise. The overall verdict "
            "is PASS only when every check passes and every input is accepted.",
        )),
        ("Using the book", cm.LIVE),
    ),
)
