"""No non-finite number leaves the package: inputs that would overflow are refused with
their row and column, results that would overflow are refused, and text is parsed in
time linear in its length.

Prefix factors: BIPM, *The International System of Units*, 9th ed. (2019), Table 7.
IEEE 754 binary64: the largest finite double is about 1.798e308 (common practice).
"""

import math

import numpy as np
import pytest
from helpers import parts, sources
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs
from xlfuncs import InputError, NetworkError, Spectrum, XlfuncsError, parse_number
from xlfuncs.tables import parse_cell
from xlfuncs.views import element_table, node_table, solve_table


def _parse(value, unit="Ω"):
    return parse_number(value, unit=unit, table="parts", row=5, column="value")


@pytest.mark.parametrize(
    ("value", "fragment"),
    [
        ("1e308k", "expected a finite number"),  # 1e311 overflows binary64
        ("1e306T", "expected a finite number"),
        ("1" * 400, "expected a finite number"),
        ("1" * 400 + "k7", "expected a finite number"),  # IEC 60062 letter code
        (10**400, "expected a finite number"),  # a Python int too large for a float
        ("1e23k", "beyond 1e+24"),  # finite, but far beyond any physical value
        (1e300, "beyond 1e+24"),
    ],
)
def test_overflowing_values_are_refused_with_their_place(value, fragment):
    with pytest.raises(InputError) as exc:
        _parse(value)
    msg = str(exc.value)
    assert msg.startswith("parts row 5, column value: ")
    assert fragment in msg and "\n" not in msg and len(msg) < 200


@pytest.mark.parametrize(
    ("p", "where"),
    [
        (parts(["R1", "R", "a", "GND", "1e308k"]), "parts row 2, column value: '1e308k'"),
        (parts(["R1", "R", "a", "GND", 1e-30]), "parts row 2, column value: 1e-30"),
        (parts(["C1", "C", "a", "GND", "1" * 400]), "parts row 2, column value: '111"),
    ],
)
def test_part_values_that_would_be_infinite_or_vanish(p, where):
    with pytest.raises(InputError) as exc:
        xlfuncs.solve(p, sources(["Vs", "V", "a", "GND", 50.0, 1.0, 0.0]))
    assert str(exc.value).startswith(where)


@pytest.mark.parametrize(
    ("row", "where", "fragment"),
    [
        (["Vs", "V", "a", "GND", 50.0, 1e308, 0.0], "column peak", "beyond 1e+24"),
        (["Vs", "V", "a", "GND", 5e-324, 1.0, 0.0], "column freq_hz", "outside 1 µHz … 1 THz"),
        (["Vs", "V", "a", "GND", 1e308, 1.0, 0.0], "column freq_hz", "beyond 1e+24"),
        (["Vs", "V", "a", "GND", 2e12, 1.0, 0.0], "column freq_hz", "lumped parts do not apply"),
    ],
)
def test_source_values_out_of_range(row, where, fragment):
    with pytest.raises(InputError) as exc:
        xlfuncs.solve(parts(["R1", "R", "a", "GND", 1.0]), sources(row))
    msg = str(exc.value)
    assert msg.startswith(f"sources row 2, {where}")
    assert fragment in msg


def test_a_harmonic_order_beyond_the_frequency_range():
    s = [["name", "kind", "from", "to", "harmonic", "rms"], ["Vs", "V", "a", "GND", 1e11, 1.0]]
    with pytest.raises(InputError, match=r"sources row 2, column harmonic: 1000.*outside 1 µHz"):
        xlfuncs.solve(parts(["R1", "R", "a", "GND", 1.0]), s, [["fundamental_hz", 50]])


def test_overflowing_results_are_refused():
    sp = Spectrum(np.array([50.0, 150.0]), np.array([1e200, 1e200]), "V(x)")
    with pytest.raises(NetworkError, match=r"RMS of V\(x\) overflows double precision"):
        _ = sp.rms_total


# any cell a spreadsheet or CSV can deliver: a finite float in range, or a one-line error
_cells = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**500), max_value=10**500),
    st.text(alphabet="0123456789.,eE+-kMmunpµfGTRΩVHzF #/A ", max_size=30),
    st.builds(
        lambda a, b, c: f"{a}{b}{c}",
        st.floats(allow_nan=False, allow_infinity=False).map(repr),
        st.sampled_from(["", "k", "M", "T", "G", "m", "u", "p", "f", " kΩ", " F", "e300"]),
        st.sampled_from(["", " ", "Ω", "x"]),
    ),
)


@settings(max_examples=400, deadline=None)
@given(_cells)
def test_parse_number_returns_a_finite_value_in_range_or_one_line(cell):
    try:
        v = _parse(cell)
    except InputError as exc:
        assert "\n" not in str(exc)
        return
    assert math.isfinite(v) and abs(v) <= 1e24


@settings(max_examples=150, deadline=None)
@given(st.lists(_cells, min_size=5, max_size=5))
def test_a_solved_table_never_spills_a_non_finite_number(row):
    p = parts(["R1", "R", "a", "b", row[0]], ["C1", "C", "b", "GND", row[1]])
    s = sources(["Vs", "V", "a", "GND", row[2], row[3], row[4]])
    try:
        sol = xlfuncs.solve(p, s)
        tables = [
            solve_table(sol, "b"),
            element_table(sol),
            node_table(sol),
        ]
    except XlfuncsError as exc:
        assert "\n" not in str(exc)
        return
    for t in tables:
        for r in t:
            for c in r:
                assert isinstance(c, str) or math.isfinite(c)


def test_parsing_is_linear_in_the_length_of_the_text():
    # "1a", five million spaces, "b": a backtracking pattern would need ~1e13 steps on
    # this input (it never finishes); a linear scan reads it in milliseconds
    text = "1a" + " " * 5_000_000 + "b"
    with pytest.raises(InputError) as exc:
        _parse(text)
    msg = str(exc.value)
    assert "unknown unit prefix 'a'" in msg
    assert "5,000,003 characters" in msg and len(msg) < 200  # the value is shortened


def test_a_csv_number_that_overflows_keeps_its_text():
    assert parse_cell("1e400") == "1e400"
    with pytest.raises(InputError, match=r"'1e400' — expected a finite number"):
        _parse(parse_cell("1e400"))


@pytest.mark.parametrize(
    ("r", "c", "f", "amp"),
    [
        (1e-24, 1e-24, 1e12, 1e24),
        (1e24, 1e24, 1e-6, 1e24),
        (1e-24, 1e24, 1e12, 1e-24),
        (1e24, 1e-24, 1e-6, 1e-24),
        (1e-24, 1e24, 0.0, 1e24),
    ],
)
def test_extremes_of_the_accepted_ranges_give_finite_tables_or_an_error(r, c, f, amp):
    p = parts(["R1", "R", "a", "b", r], ["C1", "C", "b", "GND", c], ["R2", "R", "b", "GND", r])
    s = sources(["Vs", "V", "a", "GND", f, amp, 0.0])
    try:
        sol = xlfuncs.solve(p, s)
        tables = [solve_table(sol, "b"), element_table(sol), node_table(sol)]
    except XlfuncsError as exc:
        assert "\n" not in str(exc)
        return
    for t in tables:
        assert all(isinstance(c, str) or math.isfinite(c) for r_ in t for c in r_)
