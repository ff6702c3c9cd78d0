"""Equipment-duty worksheet functions: IEEE 1459 powers, transformer derating, filter
design and rating, capacitor steps, cable losses at harmonics — for a part of the core
tables, for plain spectra and ratings, and for an item of the equipment-table study."""

from __future__ import annotations

import math
from typing import Any

from ..errors import EXCEL_ERRORS, InputError
from . import studies as _studies  # noqa: F401  (describes the shared `spectrum` argument)
from .arguments import freeze, name_arg, num_arg, points_arg
from .cache import solution
from .power import study_of  # (also describes equipment, spectra, item, options, branch_end)
from .registry import register_args, sheet_function

CAUTION = "Screening calculation: the makers, the utility and a licensed engineer decide."

# every argument is read with err_to_str: an Excel error cell reaches us as its text
# ("#N/A") and is refused, instead of arriving as None and reading as a blank cell
CELL: dict[str, Any] = {"err_to_str": True}
RANGE: dict[str, Any] = {"ndim": 2, "err_to_str": True}
register_args(
    {
        "wiring": (
            "Optional: 1ph (default, a one-phase port), or 3ph4w / 3ph3w for the part of a "
            "per-phase model of a balanced three-phase four-/three-wire item (x3, effective "
            "V and I of IEEE 1459).",
            CELL,
        ),
        "p_ec_pu": (
            "Rated winding eddy-current loss in per unit of the rated I²R loss, e.g. 0.08 "
            "(maker or test report; at the hot spot for the hot-spot limit).",
            CELL,
        ),
        "p_osl_pu": (
            "Optional rated other stray loss in per unit of the rated I²R loss, e.g. 0.2; "
            "adds the load-loss rows.",
            CELL,
        ),
        "filter_kvar": (
            "Reactive power the filter delivers at the fundamental at bus_v, kvar (three-phase "
            "total when phases = 3), e.g. 300.",
            CELL,
        ),
        "bus_v": (
            "Bus voltage at the fundamental, V rms (line-to-line when phases = 3), e.g. 480.",
            CELL,
        ),
        "phases": (
            "1: single-phase values; 3: three-phase kvar, line-to-line volts and three-phase "
            "short-circuit MVA (C, L, R per phase of the star equivalent).",
            CELL,
        ),
        "tuned_order": (
            "Tuned order of the filter, h > 1, e.g. 4.7 (a few percent below the harmonic it "
            "serves); for a high-pass filter its corner order.",
            CELL,
        ),
        "q_factor": (
            "Quality factor: single-tuned X_n/R (typically 20-100), high-pass R/X_n "
            "(typically 0.5-2), X_n = sqrt(L/C).",
            CELL,
        ),
        "filter_type": (
            "tuned (single-tuned), highpass, or capacitor (no reactor).",
            CELL,
        ),
        "ssc_mva": (
            "Short-circuit power at the bus, MVA (three-phase when phases = 3), e.g. 30.",
            CELL,
        ),
        "xr_ratio": ("Supply X/R ratio at the fundamental, e.g. 10.", CELL),
        "harmonics": (
            "Range order | amps with its header row: RMS (line) current the filter absorbs at "
            "each harmonic order > 1, e.g. 5 | 120.",
            RANGE,
        ),
        "cap_kvar": (
            "Capacitor nameplate kvar (three-phase when phases = 3), e.g. 400.",
            CELL,
        ),
        "cap_v": (
            "Capacitor rated voltage, V rms (line-to-line when phases = 3), e.g. 600.",
            CELL,
        ),
        "c_tol_minus": (
            "Capacitance tolerance below nominal, fraction >= 0, e.g. 0.",
            CELL,
        ),
        "c_tol_plus": (
            "Capacitance tolerance above nominal, fraction >= 0, e.g. 0.10.",
            CELL,
        ),
        "l_tol": ("Reactor inductance tolerance, +/- fraction, e.g. 0.03.", CELL),
        "c_tempco_ppm": (
            "Optional capacitance temperature coefficient, ppm/K (maker's data), e.g. -300.",
            CELL,
        ),
        "dt_k": (
            "Optional +/- temperature excursion from the rating temperature of C, K, e.g. 30.",
            CELL,
        ),
        "step_kvar": (
            "kvar of one capacitor step (three-phase when phases = 3), e.g. 50.",
            CELL,
        ),
        "max_steps": ("Number of steps to try, 1 to 100, e.g. 8.", CELL),
        "injected": (
            "Injected harmonic orders (a range or one cell), e.g. 5, 7, 11, 13.",
            RANGE,
        ),
        "margin": (
            "Least distance of the parallel resonance from every injected order: orders "
            "(e.g. 0.3) or relative with % (e.g. 10%). Common practice, no standard fixes it.",
            CELL,
        ),
        "r_dc_ohm_km": (
            "Conductor DC resistance at the operating temperature, ohm/km, e.g. 0.0967.",
            CELL,
        ),
        "orders": (
            "Harmonic orders (a range or one cell), each >= 0 (0 = DC).",
            RANGE,
        ),
        "k_s": (
            "Skin-effect coefficient k_s of the conductor construction (IEC 60287-1-1 table; "
            "1 for round stranded).",
            CELL,
        ),
        "k_p": (
            "Proximity-effect coefficient k_p (IEC 60287-1-1 table; e.g. 1 with extruded "
            "insulation, 0.8 dried and impregnated).",
            CELL,
        ),
        "arrangement": (
            "Proximity: none, 2core (two-core or two single-core), 3core (three-core or three "
            "single-core) or 3sector (three-core, sector-shaped conductors).",
            CELL,
        ),
        "d_c_mm": (
            "Optional conductor diameter, mm (d_x for sector conductors); needed unless "
            "arrangement is none.",
            CELL,
        ),
        "s_mm": (
            "Optional distance between conductor axes, mm (d_x + t for sector conductors); "
            "needed unless arrangement is none.",
            CELL,
        ),
        "item_wiring": (
            "Optional: 3ph4w or 3ph3w. Default from the item: 3ph4w where it offers a "
            "zero-sequence path at that end (a grounded star; a cable carrying zero-sequence "
            "current), else 3ph3w; the two agree without zero-sequence components.",
            CELL,
        ),
        "winding_end": (
            "Optional: bus (HV) or bus_to (LV), the end whose line current is taken as the "
            "winding current; default the star winding's end (bus_to unless the LV winding is "
            "a delta facing a star).",
            CELL,
        ),
        "extrapolate": (
            "Optional TRUE: continue the proximity factor beyond x_p = 2.8 with the skin-effect "
            "branches (an approximation, stated); FALSE (default) refuses there.",
            CELL,
        ),
    }
)


# ------------------------------------------------------------------------------ helpers
def _blank(v: Any) -> bool:
    return v is None or (isinstance(v, str) and not v.strip())


def _numbers(data: Any, table: str) -> list[float]:
    """Every non-empty cell of a range (or one value) as a number."""
    if data is None:
        raise InputError("argument", None, table, expected="missing: at least one number")
    rows = data if isinstance(data, (list, tuple)) else [[data]]
    out = []
    for r, row in enumerate(rows, start=1):
        cells = row if isinstance(row, (list, tuple)) else [row]
        for c, v in enumerate(cells, start=1):
            if _blank(v):
                continue
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise InputError(table, r, f"{c}", v, "expected a number")
            out.append(float(v))
    if not out:
        raise InputError("argument", None, table, expected="at least one number")
    return out


def _flag(value: Any, column: str) -> bool:
    if _blank(value):
        return False
    if isinstance(value, bool):
        return value
    if isinstance(value, (int, float)) and value in (0, 1):
        return bool(value)
    if isinstance(value, str) and value.strip().upper() in ("TRUE", "FALSE"):
        return value.strip().upper() == "TRUE"
    raise InputError("argument", None, column, value, "expected TRUE or FALSE")


def _phases(value: Any) -> int:
    p = num_arg(value, "phases")
    if p not in (1.0, 3.0):
        raise InputError("argument", None, "phases", value, "expected 1 or 3")
    return int(p)


def _filter_type(value: Any, allowed: tuple[str, ...]) -> str:
    key = "" if value is None else str(value).strip().lower().replace("-", "").replace(" ", "")
    aliases = {
        "tuned": "tuned",
        "singletuned": "tuned",
        "highpass": "highpass",
        "capacitor": "capacitor",
    }
    t = aliases.get(key)
    if t is None or t not in allowed:
        raise InputError("argument", None, "filter_type", value, "expected " + ", ".join(allowed))
    return t


def _design(ftype: str, kvar: Any, bus_v: Any, f1: Any, phases: Any, order: Any, q: Any) -> Any:
    from ..studies.filters import capacitor_bank, highpass_filter, tuned_filter

    args = (num_arg(kvar, "filter_kvar"), num_arg(bus_v, "bus_v"), num_arg(f1, "fundamental_hz"))
    ph = _phases(phases)
    if ftype == "capacitor":
        return capacitor_bank(*args, ph)
    sizer = tuned_filter if ftype == "tuned" else highpass_filter
    return sizer(*args, num_arg(order, "tuned_order"), num_arg(q, "q_factor"), ph)


# ------------------------------------------------------------------------------ §1
@sheet_function(
    "IEEE 1459-2010 powers of a part under non-sinusoidal conditions: P, P1, Q1, S, S_N, "
    "distortion powers, PF, THD (spills).",
    "Header quantity | value | unit; rows P, P1, Q1, S1, S, SN, DI, DV, SH, PF, PF1, THD_V, "
    "THD_I (W, var, VA, fractions), then V, I (rms), f1_hz and the basis. V_H, I_H hold every "
    "non-fundamental component, DC and interharmonics included (IEEE 1459; CKT_THD is the "
    "IEEE 519 basis). Absorbed powers; Q1 > 0 lagging.",
    call_in_wizard=False,
)
def CKT_POWERS(parts, sources, part, options=None, wiring=None):
    from ..studies.powers import parse_wiring, port_powers

    sol = solution(parts, sources, options)
    return port_powers(sol, part=name_arg(part, "part"), wiring=parse_wiring(wiring)).rows()


# ------------------------------------------------------------------------------ §2
@sheet_function(
    "Transformer derating for harmonic load current (IEEE C57.110): F_HL, F_HL-STR, "
    "K-factor, maximum per-unit current (spills).",
    "Header quantity | value; rows F_HL, F_HL_STR, K_factor (UL 1561/1562), I_max_pu "
    "(winding hot spot: I²R + eddy loss only), P_LL_pu, P_LL_R_pu, I_equal_load_loss_pu "
    "(need p_osl_pu), Irms_over_I1, basis. Formulas from memory. " + CAUTION,
)
def CKT_XFMR_DERATE(spectrum, p_ec_pu, p_osl_pu=None):
    from ..studies.transformer import read_harmonic_spectrum, transformer_derating

    orders, pct = read_harmonic_spectrum(spectrum, "spectrum", 1.0)
    posl = None if _blank(p_osl_pu) else num_arg(p_osl_pu, "p_osl_pu")
    return transformer_derating(orders, pct, num_arg(p_ec_pu, "p_ec_pu"), posl).rows()


# ------------------------------------------------------------------------------ §3
def _sizing_function(name: str, ftype: str, summary: str, returns: str) -> Any:
    """The worksheet sizing function of one filter type (one signature for every type)."""

    def f(filter_kvar, bus_v, fundamental_hz, phases, tuned_order, q_factor):
        return _design(
            ftype, filter_kvar, bus_v, fundamental_hz, phases, tuned_order, q_factor
        ).rows()

    f.__name__ = f.__qualname__ = name
    return sheet_function(summary, returns)(f)


CKT_TUNED_FILTER = _sizing_function(
    "CKT_TUNED_FILTER",
    "tuned",
    "Single-tuned harmonic filter sized from its kvar at the fundamental, tuned order and "
    "quality factor: C, L, R and duty at f1 (spills).",
    "Header quantity | value | unit: tuned order and Hz, Q, X_C, X_L, R, X_n (ohm), C (F), "
    "L (H), fundamental current, capacitor voltage and voltage rise, kvar of the capacitor "
    "and delivered, loss at f1, basis. Exact at f1 with R included. " + CAUTION,
)
CKT_HIGHPASS_FILTER = _sizing_function(
    "CKT_HIGHPASS_FILTER",
    "highpass",
    "Second-order high-pass (damped) filter, C in series with L parallel R, sized from its "
    "kvar, corner order and Q = R/X_n (spills).",
    "Header quantity | value | unit, as CKT_TUNED_FILTER; q_factor = R/sqrt(L/C) and the "
    "tuned order is the corner where X_L = X_C. " + CAUTION,
)


@sheet_function(
    "Tuned order of a filter shifted by capacitor tolerance and temperature and reactor "
    "tolerance: nominal, lowest, highest (spills).",
    "Header quantity | value | unit: order and Hz nominal, low (largest C and L) and high "
    "(smallest C and L), and the factor ranges of C and L. Order = h_n/sqrt(c·l).",
)
def CKT_FILTER_DRIFT(
    tuned_order, fundamental_hz, c_tol_minus, c_tol_plus, l_tol, c_tempco_ppm=None, dt_k=None
):
    from ..studies.filters import tuning_drift

    return tuning_drift(
        num_arg(tuned_order, "tuned_order"),
        num_arg(fundamental_hz, "fundamental_hz"),
        num_arg(c_tol_minus, "c_tol_minus"),
        num_arg(c_tol_plus, "c_tol_plus"),
        num_arg(l_tol, "l_tol"),
        num_arg(c_tempco_ppm, "c_tempco_ppm", 0.0),
        num_arg(dt_k, "dt_k", 0.0),
    ).rows()


@sheet_function(
    "Parallel resonance of a filter or capacitor with the supply, seen at the bus: order, Hz "
    "and |Z| from the core solver (spills).",
    "Header quantity | value | unit: parallel order and Hz, |Z| at it (ohm per phase), the "
    "lossless check value sqrt(X_C/(X_s+X_L)), supply X_s and R_s (ohm per phase; R_s "
    "constant with frequency).",
    call_in_wizard=False,
)
def CKT_FILTER_RESONANCE(
    filter_type,
    filter_kvar,
    bus_v,
    fundamental_hz,
    phases,
    ssc_mva,
    xr_ratio,
    tuned_order=None,
    q_factor=None,
):
    from ..studies.filters import filter_resonance

    t = _filter_type(filter_type, ("tuned", "highpass", "capacitor"))
    d = _design(t, filter_kvar, bus_v, fundamental_hz, phases, tuned_order, q_factor)
    return filter_resonance(d, num_arg(ssc_mva, "ssc_mva"), num_arg(xr_ratio, "xr_ratio")).rows()


@sheet_function(
    "Filter rating: capacitor duty against IEEE 18 limits with the harmonic currents the "
    "filter absorbs, reactor current and voltage, losses (spills).",
    "Header quantity | value | rated | ratio | limit | result: capacitor rms and peak voltage, "
    "rms current and kvar (PASS/FAIL, IEEE Std 18 limits), verdict, reactor rms, peak and "
    "fundamental current, reactor rms voltage, losses in R, basis. " + CAUTION,
)
def CKT_FILTER_RATING(
    filter_type,
    filter_kvar,
    bus_v,
    fundamental_hz,
    phases,
    tuned_order,
    q_factor,
    harmonics,
    cap_kvar,
    cap_v,
):
    from ..studies.filters import filter_rating, read_order_amps

    t = _filter_type(filter_type, ("tuned", "highpass"))
    d = _design(t, filter_kvar, bus_v, fundamental_hz, phases, tuned_order, q_factor)
    orders, amps = read_order_amps(harmonics)
    return filter_rating(
        d, orders, amps, num_arg(cap_kvar, "cap_kvar"), num_arg(cap_v, "cap_v")
    ).rows()


@sheet_function(
    "Smallest capacitor (or detuned) bank size k x step whose parallel resonance keeps a "
    "stated distance from every injected order (spills).",
    "Header kvar | resonance_order | nearest_order | distance | result, one row per size "
    "k x step_kvar (k = 1..max_steps), then smallest (empty: none passes) and the basis. "
    "Resonance from the core solver. " + CAUTION,
    call_in_wizard=False,
)
def CKT_CAP_STEP(
    step_kvar,
    max_steps,
    bus_v,
    fundamental_hz,
    phases,
    ssc_mva,
    xr_ratio,
    injected,
    margin,
    tuned_order=None,
    q_factor=None,
):
    from ..studies.filters import capacitor_steps

    relative = isinstance(margin, str) and margin.strip().endswith("%")
    if relative:
        try:
            mg = float(margin.strip()[:-1]) / 100
        except ValueError:
            raise InputError(
                "argument", None, "margin", margin, "expected e.g. 0.3 or 10%"
            ) from None
    else:
        mg = num_arg(margin, "margin")
    n = points_arg(max_steps, "max_steps")
    if n is None:
        raise InputError("argument", None, "max_steps", expected="missing whole number")
    tuned = not _blank(tuned_order)
    return capacitor_steps(
        num_arg(step_kvar, "step_kvar"),
        n,
        num_arg(bus_v, "bus_v"),
        num_arg(fundamental_hz, "fundamental_hz"),
        _phases(phases),
        num_arg(ssc_mva, "ssc_mva"),
        num_arg(xr_ratio, "xr_ratio"),
        _numbers(freeze(injected), "injected"),
        mg,
        num_arg(tuned_order, "tuned_order") if tuned else None,
        None if _blank(q_factor) else num_arg(q_factor, "q_factor"),
        relative=relative,
    ).rows()


# ------------------------------------------------------------------------------ §4
def _conductor(
    r_dc_ohm_km: Any,
    k_s: Any,
    k_p: Any,
    arrangement: Any,
    d_c_mm: Any,
    s_mm: Any,
    extrapolate: Any,
) -> Any:
    from ..studies.cables import Conductor

    return Conductor(
        num_arg(r_dc_ohm_km, "r_dc_ohm_km"),
        num_arg(k_s, "k_s"),
        num_arg(k_p, "k_p"),
        arrangement,
        None if _blank(d_c_mm) else num_arg(d_c_mm, "d_c_mm"),
        None if _blank(s_mm) else num_arg(s_mm, "s_mm"),
        _flag(extrapolate, "extrapolate"),
    )


@sheet_function(
    "Conductor AC resistance at harmonic orders by the IEC 60287-1-1 skin and proximity "
    "formulas (spills one row per order).",
    "Header order | freq_hz | x_s | y_s | x_p | y_p | rac_ohm_km | rac_over_rdc | note; note "
    "says where the proximity factor is extrapolated beyond x_p = 2.8. Formulas from memory: "
    "confirm against the standard.",
)
def CKT_CABLE_RAC(
    r_dc_ohm_km,
    fundamental_hz,
    orders,
    k_s,
    k_p,
    arrangement,
    d_c_mm=None,
    s_mm=None,
    extrapolate=None,
):
    from ..studies.cables import cable_ac_resistance

    h = _numbers(freeze(orders), "orders")
    for k, v in enumerate(h, start=1):
        if v < 0:
            raise InputError("orders", k, None, v, "expected an order ≥ 0")
    f1 = num_arg(fundamental_hz, "fundamental_hz")
    conductor = _conductor(r_dc_ohm_km, k_s, k_p, arrangement, d_c_mm, s_mm, extrapolate)
    res = cable_ac_resistance(conductor, [v * f1 for v in h])
    out: list[list[Any]] = [
        ["order", "freq_hz", "x_s", "y_s", "x_p", "y_p", "rac_ohm_km", "rac_over_rdc", "note"]
    ]
    for k in range(len(h)):
        note = "proximity extrapolated (x_p > 2.8)" if res.extrapolated[k] else ""
        out.append(
            [
                h[k],
                float(res.freqs_hz[k]),
                float(res.x_s[k]),
                float(res.y_s[k]),
                float(res.x_p[k]),
                float(res.y_p[k]),
                float(res.r_ac_ohm_km[k]),
                float(res.ratio[k]),
                note,
            ]
        )
    return out


@sheet_function(
    "Harmonic loss ratio of a cable conductor, sum(I_h² R_ac(h))/(I_rms² R_ac(1)), and the "
    "current derating it implies (spills).",
    "Header quantity | value: loss_ratio and derating (IEC 60287-1-1 R_ac), I1_max_pu, the "
    "same by the sqrt(h) law, R_ac at f1 and basis. Conductor loss only. " + CAUTION,
)
def CKT_CABLE_LOSS(
    spectrum,
    r_dc_ohm_km,
    fundamental_hz,
    k_s,
    k_p,
    arrangement,
    d_c_mm=None,
    s_mm=None,
    extrapolate=None,
):
    from ..studies.cables import cable_harmonic_loss
    from ..studies.transformer import read_harmonic_spectrum

    orders, pct = read_harmonic_spectrum(spectrum, "spectrum", 0.0)
    conductor = _conductor(r_dc_ohm_km, k_s, k_p, arrangement, d_c_mm, s_mm, extrapolate)
    return cable_harmonic_loss(
        conductor, orders, pct, num_arg(fundamental_hz, "fundamental_hz")
    ).rows()


# ------------------------------------------------------------------ items of a study
def _text(value: Any, column: str) -> str:
    text = name_arg(value, column)
    if text.upper() in EXCEL_ERRORS:
        raise InputError("argument", None, column, value, "the cell holds an Excel error")
    return text


def _item(value: Any) -> str:
    return _text(value, "item")


def _optional_text(value: Any, column: str) -> str | None:
    return None if _blank(value) else _text(value, column)


@sheet_function(
    "IEEE 1459-2010 powers of a balanced three-phase item of the equipment-table study, at "
    "one of its ends (spills).",
    "Header quantity | value | unit; the rows of CKT_POWERS (P, P1, Q1, S1, S, SN, DI, DV, SH, "
    "PF, PF1, THD_V, THD_I; three-phase totals, effective V and I), then V, I, f1_hz, basis. "
    "Bus voltage and line current into the item over every studied order; absorbed powers.",
    call_in_wizard=False,
)
def CKT_ITEM_POWERS(equipment, spectra, item, options=None, branch_end=None, item_wiring=None):
    from ..studies.powers import item_powers

    st = study_of(equipment, spectra, options)
    return item_powers(
        st,
        _item(item),
        _optional_text(branch_end, "branch_end"),
        _optional_text(item_wiring, "item_wiring"),
    ).rows()


@sheet_function(
    "Transformer derating (IEEE C57.110) for the harmonic current the equipment-table study "
    "puts through a transformer, with its load against the permissible current (spills).",
    "Header quantity | value: the rows of CKT_XFMR_DERATE (F_HL, F_HL_STR, K_factor, I_max_pu, "
    "…), then I_rms_a, I_rated_a, load_pu = I_rms/I_rated and load_over_I_max (at most 1 "
    "passes), basis. Formulas from memory. " + CAUTION,
    call_in_wizard=False,
)
def CKT_ITEM_XFMR_DERATE(
    equipment, spectra, item, p_ec_pu, options=None, p_osl_pu=None, winding_end=None
):
    from ..studies.transformer import item_derating

    st = study_of(equipment, spectra, options)
    posl = None if _blank(p_osl_pu) else num_arg(p_osl_pu, "p_osl_pu")
    return item_derating(
        st,
        _item(item),
        num_arg(p_ec_pu, "p_ec_pu"),
        posl,
        _optional_text(winding_end, "winding_end"),
    ).rows()


@sheet_function(
    "Rating of a filter item of the equipment-table study: capacitor duty against IEEE 18, "
    "reactor current and voltage, losses, with the study's currents (spills).",
    "Header quantity | value | rated | ratio | limit | result: one phase unit's capacitor rms "
    "and peak voltage, rms current and kvar against its own rating (PASS/FAIL, IEEE Std 18 "
    "limits), verdict, reactor rms, peak and fundamental current and rms voltage of one phase "
    "unit, losses in R (three phases), basis. " + CAUTION,
    call_in_wizard=False,
)
def CKT_ITEM_FILTER_RATING(equipment, spectra, item, options=None):
    from ..studies.filters import item_filter_rating

    st = study_of(equipment, spectra, options)
    return item_filter_rating(st, _item(item)).rows()


@sheet_function(
    "Harmonic conductor loss of a cable item of the equipment-table study by the IEC 60287-1-1 "
    "AC resistance, with the study's current (spills).",
    "Header quantity | value: the rows of CKT_CABLE_LOSS (loss_ratio, derating, I1_max_pu, √h "
    "law, R_ac at f1), then I_rms_a, I1_a (series current), loss_w and loss_fundamental_w "
    "(three conductors over length_km), basis. Formulas from memory. " + CAUTION,
    call_in_wizard=False,
)
def CKT_ITEM_CABLE_LOSS(
    equipment,
    spectra,
    item,
    r_dc_ohm_km,
    k_s,
    k_p,
    arrangement,
    options=None,
    d_c_mm=None,
    s_mm=None,
    extrapolate=None,
):
    from ..studies.cables import item_cable_loss

    st = study_of(equipment, spectra, options)
    conductor = _conductor(r_dc_ohm_km, k_s, k_p, arrangement, d_c_mm, s_mm, extrapolate)
    return item_cable_loss(st, _item(item), conductor).rows()
