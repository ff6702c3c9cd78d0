"""The three-phase worksheet functions through xlwings' own conversion path: ranges as COM
delivers them, Excel error cells refused (never read as blank), omitted optionals."""

from __future__ import annotations

import plants
import pytest
from plants import HEADER, converter, row, supply, table, transformer
from xlwings_harness import COM_ERRORS, MISSING, call, xlwings_udfs

OPTS = (("key", "value"), ("fundamental_hz", 60.0))


@pytest.fixture(scope="module")
def udf():
    with xlwings_udfs() as ns:
        yield ns


def excel(t):
    """A table as Excel hands a range over: tuples of rows, blanks as None."""
    return tuple(tuple(c for c in r) for r in t)


def eq():
    return table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=300, connection="D"),
        converter("D1", "LV", pulses=6),
    )


def test_bus_harmonics_through_xlwings(udf):
    out = call(udf, "CKT_BUS_HARMONICS", excel(eq()), None, "LV", excel(OPTS))
    assert out[0] == ["order", "freq_hz", "sequence", "v_rms", "v_pct", "angle_deg"]
    assert out[-1][0] == "total" and out[1][4] == 100.0
    same = call(udf, "CKT_BUS_HARMONICS", excel(eq()), MISSING, "LV", excel(OPTS))
    assert same == out


def test_an_error_cell_in_an_optional_column_is_refused(udf):
    bad = eq()
    bad[2][HEADER.index("z0_pct")] = COM_ERRORS["#N/A"]  # an optional column: must not vanish
    out = call(udf, "CKT_BUS_HARMONICS", excel(bad), None, "LV", excel(OPTS))
    text = out[0][0] if isinstance(out, list) else out
    assert text.startswith("ERROR: equipment row 3, column z0_pct: '#N/A'"), text


def test_an_error_cell_as_a_name_argument_is_refused(udf):
    out = call(udf, "CKT_BRANCH_HARMONICS", excel(eq()), None, COM_ERRORS["#REF!"], excel(OPTS))
    text = out[0][0] if isinstance(out, list) else out
    assert text == "ERROR: argument item: '#REF!' — the cell holds an Excel error"


def test_expand_through_xlwings_has_no_empty_cells(udf):
    out = call(udf, "CKT_EXPAND", excel(eq()), "-", excel(OPTS))
    assert out[0][8] == "zone_shift_deg"
    assert {r[0] for r in out[1:]} >= {"T1.ratio", "C1.C"}
    assert all(c is not None for r in out for c in r)
    assert plants.OPTIONS["fundamental_hz"] == 60.0
