"""Equipment, spectra and options tables: what is accepted, and one-line refusals that name
table, row (header = row 1), column and what was expected."""

from __future__ import annotations

import copy
import math

import plants
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from plants import HEADER, converter, row, supply, table, transformer

from xlfuncs import InputError, TableError
from xlfuncs.power import (
    harmonic_study,
    parse_vector_group,
    read_equipment,
    read_power_options,
    read_spectra,
)


def base():
    return table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=300, connection="D"),
        converter("D1", "LV", pulses=6),
    )


def edit(eq, rownum, column, value):
    out = copy.deepcopy(eq)
    out[rownum - 1][HEADER.index(column)] = value
    return out


def message(exc_info):
    text = str(exc_info.value)
    assert "\n" not in text
    return text


# ------------------------------------------------------------------ accepted forms
def test_units_in_text_and_percent_signs_are_read():
    eq = edit(base(), 2, "kv", "13.8 kV")
    eq = edit(eq, 3, "kv_lv", "480 V")
    eq = edit(eq, 3, "kva", "2 MVA")
    eq = edit(eq, 3, "z_pct", "5.75%")
    eq = edit(eq, 4, "kvar", "0.3 Mvar")
    items = {i.name: i for i in read_equipment(eq).items}
    assert items["U1"]["kv"] == pytest.approx(13.8)
    assert items["T1"]["kv_lv"] == pytest.approx(0.48)
    assert items["T1"]["kva"] == pytest.approx(2000)
    assert items["T1"]["z_pct"] == 5.75
    assert items["C1"]["kvar"] == pytest.approx(300)


def test_headers_are_case_insensitive_with_notes_and_units_ignored():
    eq = base()
    eq[0] = [h.upper() if h != "kv" else "kV (line-line)" for h in HEADER]
    eq[0].append("Note")
    for r in eq[1:]:
        r.append("anything")
    assert len(read_equipment(eq).items) == 4


def test_bus_names_match_case_insensitively():
    eq = edit(base(), 4, "bus", "lv")
    parsed = read_equipment(eq)
    assert parsed.buses == ("PCC", "LV")


@pytest.mark.parametrize(
    "text, group",
    [
        ("Dyn11", ("D", "yn", 11)),
        ("YNd1", ("YN", "d", 1)),
        ("yyn0", ("Y", "yn", 0)),
        ("YNyn6", ("YN", "yn", 6)),
        ("Dd 0", ("D", "d", 0)),
        ("dyn1", ("D", "yn", 1)),
    ],
)
def test_vector_groups_parse(text, group):
    vg = parse_vector_group(text)
    assert (vg.hv, vg.lv, vg.clock) == group


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("Dyn0", "odd clock number"),
        ("Yyn11", "even clock number"),
        ("Dzn0", "zigzag"),
        ("Dyn13", "clock number is 0 to 11"),
        ("Delta", "IEC 60076-1 vector group"),
        ("YNynd0", "IEC 60076-1 vector group"),
    ],
)
def test_bad_vector_groups_name_the_accepted_form(text, fragment):
    with pytest.raises(InputError) as exc:
        read_equipment(edit(base(), 3, "connection", text))
    assert message(exc).startswith("equipment row 3, column connection:")
    assert fragment in str(exc.value)


# ------------------------------------------------------------------ refusals
BAD = [
    (2, "kind", "utility", "equipment row 2, column kind: 'utility' — expected one of supply"),
    (2, "kv", "13.8k", "ambiguous"),
    (2, "kv", "13.8 kA", "unit 'A' does not fit here"),
    (2, "kv", "#N/A", "Excel error"),
    (2, "mva_sc", -5, "expected three-phase short-circuit MVA > 0"),
    (2, "mva_sc_1ph", 400, "below 1.5 × mva_sc"),
    (3, "z_pct", 0.0575, "in percent: 5.75 for 5.75 %"),
    (3, "bus_to", "PCC", "both ends on bus 'PCC'"),
    (3, "bus_to", None, "missing the far-end bus"),
    (4, "bus_to", "PCC", "a capacitor connects to one bus"),
    (4, "connection", "delta", "expected YN (grounded star), Y"),
    (4, "x_r", 7, "a capacitor takes no x_r"),
    (4, "steps", 4, "missing steps_on"),
    (4, "kvar", 0, "expected the rating in kvar > 0"),
    (5, "pf", 95, "expected a power factor ≤ 1"),
    (5, "pulses", 8, "expected a pulse number"),
    (5, "pulses", None, "give pulses (6, 12, …) or a spectrum name"),
    (5, "name", "t1", "duplicate name (already used in row 3)"),
    (5, "bus", "GND", "the reference"),
    (5, "kv", 480, "differs from the nominal 0.48 kV of bus 'LV'"),
    (5, "spectrum", "S9", "no spectrum of that name in the spectra table (no spectra table"),
]


@pytest.mark.parametrize("rownum, column, value, fragment", BAD)
def test_bad_cells_are_refused_naming_row_and_column(rownum, column, value, fragment):
    with pytest.raises((InputError, TableError)) as exc:
        harmonic_study(edit(base(), rownum, column, value), options=plants.OPTIONS)
    text = message(exc)
    assert text.startswith(f"equipment row {rownum}, column {column}"), text
    assert fragment in text, text


def test_table_level_problems():
    with pytest.raises(TableError, match="no supply row"):
        read_equipment(table(converter("D1", "LV", pulses=6)))
    with pytest.raises(TableError, match="did you mean 'steps_on'"):
        eq = base()
        eq[0][HEADER.index("steps_on")] = "steps_in"
        read_equipment(eq)
    with pytest.raises(TableError, match="missing column kind"):
        read_equipment([["name", "bus"], ["U1", "B"]])
    with pytest.raises(TableError, match="no range given"):
        read_equipment(None)


def test_unreachable_bus_and_loops_that_do_not_close():
    island = table(
        supply(), row(name="C9", kind="capacitor", bus="X", kv=0.48, kvar=10, connection="D")
    )
    with pytest.raises(InputError) as exc:
        harmonic_study(island, options=plants.OPTIONS)
    assert message(exc) == (
        "equipment row 3, column bus: 'X' — this bus has no path to any supply through "
        "cables and transformers"
    )
    loop = table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        transformer("T2", "PCC", "LV", "Yyn0"),
    )
    with pytest.raises(InputError) as exc:
        harmonic_study(loop, options=plants.OPTIONS)
    text = message(exc)
    assert text.startswith(
        "equipment row 4, column connection: 'Yyn0' — phase shifts do not close"
    )
    assert "transformer 'T1' (row 3)" in text
    same = table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        transformer("T2", "PCC", "LV", "Dyn11", kva=1000),
    )
    assert harmonic_study(same, options=plants.OPTIONS).bus_kv("LV") == 0.48


def test_zero_sequence_data_is_required_only_where_triplens_flow():
    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S", 3, 50, 0]]
    eq = table(
        supply(),
        row(
            name="K1", kind="cable", bus="PCC", bus_to="B", length_km=1, r_ohm_km=0.1, x_ohm_km=0.1
        ),
        transformer("T1", "B", "LV", "YNyn0"),
        converter("D1", "LV", connection="YN", spectrum="S"),
    )
    with pytest.raises(InputError) as exc:
        harmonic_study(eq, spectra, plants.OPTIONS)
    assert message(exc).startswith("equipment row 2, column mva_sc_1ph — missing")
    eq = edit(eq, 2, "mva_sc_1ph", 200)
    with pytest.raises(InputError) as exc:
        harmonic_study(eq, spectra, plants.OPTIONS)
    assert message(exc).startswith("equipment row 3, column r0_ohm_km — missing: cable 'K1'")
    eq = edit(eq, 3, "r0_ohm_km", 0.3)
    eq = edit(eq, 3, "x0_ohm_km", 0.3)
    assert abs(harmonic_study(eq, spectra, plants.OPTIONS).branch_current("U1").phasors[1]) > 0
    # behind a delta the same converter needs neither
    behind_delta = table(
        supply(),
        row(
            name="K1", kind="cable", bus="PCC", bus_to="B", length_km=1, r_ohm_km=0.1, x_ohm_km=0.1
        ),
        transformer("T1", "B", "LV", "Dyn11"),
        converter("D1", "LV", connection="YN", spectrum="S"),
    )
    st_ = harmonic_study(behind_delta, spectra, plants.OPTIONS)
    assert abs(st_.neutral_current("T1").phasors[1]) > 0


def test_triplens_need_a_neutral_and_a_return_path():
    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S", 3, 50, 0], ["S", 5, 20, 0]]
    eq = table(
        supply(), transformer("T1", "PCC", "LV", "Dyn11"), converter("D1", "LV", spectrum="S")
    )
    with pytest.raises(InputError) as exc:
        harmonic_study(eq, spectra, plants.OPTIONS)
    assert "three-wire (no connection YN)" in message(exc)
    assert "spectra row 2" in str(exc.value)
    eq = table(
        supply(),
        transformer("T1", "PCC", "LV", "Dd0"),
        converter("D1", "LV", spectrum="S", connection="YN"),
    )
    with pytest.raises(InputError) as exc:
        harmonic_study(eq, spectra, plants.OPTIONS)
    assert message(exc).startswith("equipment row 4, column connection: 'YN' — converter 'D1'")
    assert "returns it to the neutral" in str(exc.value)


SPECTRA_BAD = [
    ([["spectrum", "order", "pct"], ["S", 5, 20]], TableError, "missing column phase_deg"),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 5, 20, None]],
        InputError,
        "spectra row 2, column phase_deg — missing phase_deg",
    ),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 5.5, 20, 0]],
        InputError,
        "interharmonics are not modelled",
    ),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 1, 100, 0]],
        InputError,
        "the fundamental comes from the converter's kw and pf",
    ),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 51, 1, 0]],
        InputError,
        "above max_order 50",
    ),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 5, 20, 0], ["s", 5, 10, 0]],
        InputError,
        "spectra row 3, column order: 5 — order 5 of spectrum 's' is already given in row 2",
    ),
    (
        [["spectrum", "order", "pct", "phase_deg"], ["S", 5, -1, 0]],
        InputError,
        "spectra row 2, column pct",
    ),
]


@pytest.mark.parametrize("data, error, fragment", SPECTRA_BAD)
def test_bad_spectra(data, error, fragment):
    with pytest.raises(error) as exc:
        read_spectra(data)
    assert fragment in message(exc)


def test_options():
    assert read_power_options([["fundamental_hz", 50]]).max_order == 50
    assert (
        read_power_options(
            [["key", "value"], ["fundamental_hz", "60 Hz"], ["max_order", 25]]
        ).max_order
        == 25
    )
    with pytest.raises(TableError, match="fundamental_hz is required"):
        read_power_options(None)
    with pytest.raises(InputError, match="options row 2, column key: 'ground'"):
        read_power_options([["fundamental_hz", 50], ["ground", "N"]])
    with pytest.raises(InputError, match="options row 1, column value"):
        read_power_options([["max_order", 2.5], ["fundamental_hz", 50]])


# ------------------------------------------------------------------ properties
@settings(max_examples=60, deadline=None)
@given(
    rownum=st.sampled_from([2, 3, 4, 5]),
    junk=st.one_of(
        st.text(alphabet="xyzq!?@ ", min_size=1, max_size=6),
        st.sampled_from(["#VALUE!", "#DIV/0!", "nan", "inf", True]),
    ),
)
def test_any_junk_in_a_rating_cell_is_refused_at_that_cell(rownum, junk):
    assume(not (isinstance(junk, str) and not junk.strip()))  # blank = missing: tested above
    column = {2: "mva_sc", 3: "kva", 4: "kvar", 5: "kw"}[rownum]
    eq = edit(base(), rownum, column, junk)
    with pytest.raises(InputError) as exc:
        read_equipment(eq)
    assert message(exc).startswith(f"equipment row {rownum}, column {column}")


@settings(max_examples=40, deadline=None)
@given(kv=st.floats(0.2, 0.7), kvar=st.floats(1, 2000), steps=st.integers(1, 8), data=st.data())
def test_capacitor_ratings_round_trip(kv, kvar, steps, data):
    on = data.draw(st.integers(0, steps))
    eq = table(
        supply(kv=kv, mva_sc=50),
        row(
            name="C1",
            kind="capacitor",
            bus="PCC",
            kv=kv,
            kvar=kvar,
            steps=steps,
            steps_on=on,
            connection="Y",
        ),
    )
    it = read_equipment(eq).item("c1")
    assert (it["kv"], it["kvar"], it["steps"], it["steps_on"]) == (kv, kvar, steps, on)
    assert isinstance(it["steps"], int) and math.isfinite(it["kvar"])


@settings(max_examples=30, deadline=None)
@given(order=st.permutations(range(4)))
def test_row_order_does_not_change_the_results(order):
    eq = base()
    shuffled = [eq[0]] + [eq[1 + i] for i in order]
    a = harmonic_study(eq, options=plants.OPTIONS).bus_voltage("LV")
    b = harmonic_study(shuffled, options=plants.OPTIONS).bus_voltage("LV")
    assert a.phasors == pytest.approx(b.phasors, rel=1e-12, abs=1e-12 * abs(a.phasors[0]))


def test_a_bus_named_like_a_part_of_the_expansion_is_refused():
    eq = edit(base(), 3, "bus_to", "T1.lv")
    eq = edit(eq, 4, "bus", "T1.lv")
    eq = edit(eq, 5, "bus", "T1.lv")
    with pytest.raises(InputError) as exc:
        harmonic_study(eq, options=plants.OPTIONS)
    assert "taken by a part or internal node" in message(exc)
