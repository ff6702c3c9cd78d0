"""Three-phase study worksheet functions: harmonics of buses and items from an equipment
table, the expanded sequence networks, and the existing studies on the study's buses and
items. One study per distinct (equipment, spectra, options) content is computed and kept
(content-keyed, so an edited cell can never return a stale result).

The study modules (:mod:`xlfuncs.power`, and with it :mod:`xlfuncs.studies`) are imported
inside the functions, on first use, so that importing the worksheet functions stays quick.
"""

from __future__ import annotations

import functools
from typing import TYPE_CHECKING, Any

from ..errors import InputError
from . import core as _core  # noqa: F401  (describes f_start, f_stop, points)
from .arguments import freeze, name_arg, num_arg, points_arg
from .frequency import resonance_table
from .registry import excel_error, register_args, sheet_function
from .studies import check_rows, currents_arg, edition_arg  # (also describes i_sc, i_l)

if TYPE_CHECKING:
    from ..power import HarmonicStudy

# every argument of ours is read with err_to_str: an Excel error cell reaches us as its text
# ("#N/A") and is refused, instead of arriving as None and reading as a blank cell
register_args(
    {
        "equipment": (
            "Equipment table with its header row: name, kind, bus, bus_to and the rating "
            "columns each kind needs (kv, mva_sc, x_r, kva, kv_hv, kv_lv, z_pct, connection, "
            "kvar, kw, pf, …).",
            {"ndim": 2, "err_to_str": True},
        ),
        "spectra": (
            "Spectra table with its header row: spectrum, order, pct (of I1), phase_deg "
            "(relative to the fundamental). Leave empty when every converter uses its ideal "
            "spectrum.",
            {"ndim": 2, "err_to_str": True},
        ),
        "bus": ("Name of a bus of the equipment table.", {"err_to_str": True}),
        "item": ("Name of an item (a row) of the equipment table.", {"err_to_str": True}),
        "sequence": (
            "Sequence network: + (positive), - (negative), 0 (zero), or fundamental.",
            {"err_to_str": True},
        ),
        "branch_end": (
            "Optional: bus (default) or bus_to, the end of a transformer or cable; for a "
            "neutral current the winding of a YNyn transformer.",
            {"err_to_str": True},
        ),
        "scan_sequence": ("Optional sequence network: + (default), - or 0.", {"err_to_str": True}),
    }
)

CACHE_SIZE = 32


@functools.lru_cache(maxsize=CACHE_SIZE)
def _study_cached(equipment: Any, spectra: Any, options: Any) -> HarmonicStudy:
    from ..power import harmonic_study

    return harmonic_study(equipment, spectra, options)


def study_of(equipment: Any, spectra: Any, options: Any) -> HarmonicStudy:
    """The study of these tables (cached by content)."""
    try:
        return _study_cached(freeze(equipment), _spectra(spectra), freeze(options))
    except TypeError:  # something unhashable slipped in: run without the cache
        from ..power import harmonic_study

        return harmonic_study(equipment, _spectra(spectra), options)


def _spectra(value: Any) -> Any:
    """A skipped or empty spectra argument means no spectra table."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        raise InputError("argument", None, "spectra", value, "expected a range or an empty cell")
    if isinstance(value, (list, tuple)) and all(
        c is None or (isinstance(c, str) and not c.strip())
        for r in value
        for c in (r if isinstance(r, (list, tuple)) else [r])
    ):
        return None  # an empty range: no spectra table
    return freeze(value)


def _name(value: Any, column: str) -> str:
    text = name_arg(value, column)
    if excel_error(text) is not None:
        raise InputError("argument", None, column, value, "the cell holds an Excel error")
    return text


def _end(value: Any) -> str | None:
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    return _name(value, "branch_end")


@sheet_function(
    "Harmonic voltages of a bus from the equipment table: every studied order (spills).",
    "Header order | freq_hz | sequence | v_rms | v_pct | angle_deg: line-to-neutral RMS (V), % of "
    "the fundamental, degrees against the first supply's EMF (phase a); last row total: total RMS "
    "in v_rms, THD (%) in v_pct over orders 2..max_order. Balanced screening model.",
    call_in_wizard=False,
)
def CKT_BUS_HARMONICS(equipment, spectra, bus, options=None):
    st = study_of(equipment, spectra, options)
    from ..power.views import bus_table

    return bus_table(st, _name(bus, "bus"))


@sheet_function(
    "Harmonic line currents of an item from the equipment table (spills).",
    "Header order | freq_hz | sequence | i_rms | i_pct | angle_deg: line current (A RMS) from "
    "the end's bus into the item, % of its fundamental, degrees; last row total: RMS in "
    "i_rms, THD (%) in i_pct (empty without a fundamental current).",
    call_in_wizard=False,
)
def CKT_BRANCH_HARMONICS(equipment, spectra, item, options=None, branch_end=None):
    st = study_of(equipment, spectra, options)
    from ..power.views import branch_table

    return branch_table(st, _name(item, "item"), _end(branch_end) or "bus")


@sheet_function(
    "Neutral current of a grounded star (transformer winding, YN capacitor, load, supply) (spills).",
    "Header order | freq_hz | sequence | i_rms | i_pct | angle_deg: current from the star point "
    "into the neutral (3 × the zero-sequence line current), % of the item's fundamental line "
    "current; last row total RMS.",
    call_in_wizard=False,
)
def CKT_NEUTRAL_HARMONICS(equipment, spectra, item, options=None, branch_end=None):
    st = study_of(equipment, spectra, options)
    from ..power.views import neutral_table

    return neutral_table(st, _name(item, "item"), _end(branch_end))


@sheet_function(
    "The expanded per-phase parts table of one sequence network of the equipment (spills).",
    "Our parts table (name | kind | from | to | value | sec_from | sec_to | r_exponent) plus "
    "zone_shift_deg (frame of the part's zone), item and note, in ohms, henries, farads at "
    "each item's own voltage; ground node GND.",
)
def CKT_EXPAND(equipment, sequence, options=None):
    from ..power import expand_network, parse_sequence

    seq = parse_sequence(_name(sequence, "sequence") if isinstance(sequence, str) else sequence)
    table = expand_network(equipment, seq, options)
    if len(table) == 1:
        return [
            table[0],
            [
                "(empty)",
                "",
                "",
                "",
                "",
                "",
                "",
                "",
                "",
                "",
                "no converter has connection YN: no zero-sequence current flows anywhere",
            ],
        ]
    return [["" if c is None else c for c in r] for r in table]


def _check_rows(check: Any, st: HarmonicStudy) -> list[list[Any]]:
    return check_rows(check, f"fundamental {st.f1:g} Hz (from fundamental_hz)")


@sheet_function(
    "IEEE 519-2014 Table 1 check of a bus's harmonic voltage, kV from the equipment (spills).",
    "Header item | percent | limit_percent | result: each harmonic (% of the fundamental), THD, "
    "verdict, basis. Screening check; the utility and local rules decide.",
    call_in_wizard=False,
)
def CKT_BUS_V519(equipment, spectra, bus, options=None):
    st = study_of(equipment, spectra, options)
    return _check_rows(st.check_voltage(_name(bus, "bus")), st)


@sheet_function(
    "IEEE 519 Tables 2-4 check of an item's line current (e.g. the supply at the PCC) (spills).",
    "Header item | percent | limit_percent | result: harmonics in % of I_L, TDD, verdict, basis; "
    "Isc/IL = i_sc / i_l, kV from the equipment.",
    call_in_wizard=False,
)
def CKT_BRANCH_I519(equipment, spectra, item, i_sc, i_l, options=None, edition=None):
    isc, il = currents_arg(i_sc, i_l)
    ed = edition_arg(edition)
    st = study_of(equipment, spectra, options)
    return _check_rows(st.check_current(_name(item, "item"), il, isc, edition=ed), st)


@sheet_function(
    "IEEE 18 duty of one unit of a capacitor or filter item, against its own rating (spills).",
    "Header quantity | value | rated | ratio | limit | pass: rms and peak voltage of one phase "
    "unit (V), rms current (A), kvar; rating kvar/3 of the steps in service at kv/√3 (star) or "
    "kv (delta); limits 1.10, 1.20, 1.35, 1.35 (IEEE Std 18-2002).",
    call_in_wizard=False,
)
def CKT_ITEM_CAPDUTY(equipment, spectra, item, options=None):
    st = study_of(equipment, spectra, options)
    return st.capacitor_duty(_name(item, "item")).table()


def _seq(value: Any) -> str:
    if value is None or (isinstance(value, str) and not value.strip()):
        return "+"
    from ..power import parse_sequence

    return parse_sequence(_name(value, "sequence") if isinstance(value, str) else value)


@sheet_function(
    "Impedance of a bus in a sequence network of the equipment, log-spaced (spills).",
    "Header freq_hz | z_ohm | angle_deg (line-to-neutral Ω), `points` rows (default 200), "
    "converters open, supplies as their impedance.",
    call_in_wizard=False,
)
def CKT_BUS_SCAN(equipment, bus, f_start, f_stop, points=None, scan_sequence=None, options=None):
    from ..power import sequence_impedance
    from ..views import scan_freqs, scan_table

    f = scan_freqs(f_start, f_stop, points_arg(points))
    freqs, z = sequence_impedance(
        freeze(equipment), _name(bus, "bus"), f, _seq(scan_sequence), freeze(options)
    )
    return scan_table(freqs, z)


@sheet_function(
    "Parallel and series resonances seen at a bus in a sequence network of the equipment (spills).",
    "Header kind | freq_hz | order | z_ohm | damping | q (line-to-neutral Ω), as CKT_RESONANCES: "
    "one row per resonance, ascending; order = f / fundamental_hz; damping ζ and q = 1/(2ζ) of "
    "the natural frequency behind it (empty when none lies near). Where a resistance law is "
    "present (transformer and cable resistances, R ∝ √h) a scan is used and a last "
    "`note` row says so.",
    call_in_wizard=False,
)
def CKT_BUS_RESONANCES(
    equipment, bus, f_start, f_stop, points=None, scan_sequence=None, options=None
):
    from ..power import sequence_resonances

    n = points_arg(points)
    res = sequence_resonances(
        freeze(equipment),
        _name(bus, "bus"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        _seq(scan_sequence),
        400 if n is None else n,
        freeze(options),
    )
    return resonance_table(res)


def cache_clear() -> None:
    """Forget every cached study (never needed for correctness)."""
    _study_cached.cache_clear()
