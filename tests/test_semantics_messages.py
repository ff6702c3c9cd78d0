"""Messages a newcomer can act on: the likely typo, the ground written as 0, the decimal
comma, the columns found, the empty amplitude, spreadsheet error cells, and a DC
diagnosis that says what floats, what isolates it and what to add."""

import pytest
from helpers import parts, sources

import xlfuncs
from xlfuncs import InputError, NetworkError, TableError
from xlfuncs.diagnosis import dangling_nodes

VS = sources(["Vs", "V", "in", "GND", 50.0, 1.0, 0.0])


def _solve_error(p, s=VS, o=None):
    with pytest.raises((InputError, NetworkError, TableError)) as exc:
        xlfuncs.solve(p, s, o)
    msg = str(exc.value)
    assert "\n" not in msg
    return exc.value, msg


def test_a_node_touched_by_one_part_is_named_with_the_closest_node():
    p = parts(
        ["R1", "R", "in", "out", 1e3],
        ["R2", "R", "out", "GND", 1e3],
        ["R3", "R", "ot", "GND", 1e3],
    )
    err, msg = _solve_error(p)
    assert isinstance(err, NetworkError)
    assert msg == (
        "network at every frequency: node 'ot' is touched only by R3, whose other end then "
        "carries no current (a likely typo); nodes ot; parts R3 — did you mean 'out'? "
        "connect R3 to an existing node, or remove it"
    )


def test_numbered_nodes_are_not_taken_for_typos():
    # n10 touched once next to n1: a numbering scheme, not a typo (no refusal)
    p = parts(
        ["R1", "R", "in", "n1", 1.0], ["R2", "R", "n1", "GND", 1.0], ["R3", "R", "n1", "n10", 1.0]
    )
    sol = xlfuncs.solve(p, VS)
    assert dangling_nodes(sol.circuit) == [("n10", "R3", None)]
    assert float(sol.voltage("n10").peak[0]) == pytest.approx(0.5, rel=1e-12)


def test_ground_written_as_zero():
    p = parts(["R1", "R", "in", "out", 1.0], ["R2", "R", "out", "0", 1.0])
    _err, msg = _solve_error(p)
    assert msg.startswith("network at every frequency: node '0' is not the reference")
    assert "the reference is 'GND', so '0' is an ordinary node here: write GND for ground, " in msg
    assert "or set ground = 0 in the options" in msg
    # with ground = 0 the same table solves: a 1:1 divider
    sol = xlfuncs.solve(p, sources(["Vs", "V", "in", "0", 50.0, 1.0, 0.0]), [["ground", 0]])
    assert float(sol.voltage("out").peak[0]) == pytest.approx(0.5, rel=1e-12)


def test_a_ground_like_name_in_a_floating_group_gets_the_hint():
    p = parts(
        ["R1", "R", "in", "GND", 1.0],
        ["R2", "R", "x", "earth", 1.0],
        ["R3", "R", "x", "earth", 2.0],
    )
    _err, msg = _solve_error(
        p, sources(["Vs", "V", "in", "GND", 50, 1, 0], ["Is", "I", "in", "x", 50, 1, 0])
    )
    assert "cut off from the reference GND" in msg
    assert "the reference is 'GND', so 'earth' is an ordinary node here" in msg


@pytest.mark.parametrize(
    ("value", "hint"),
    [
        ("4,7k", "decimal comma? write 4.7k or 4k7"),
        ("2,2", "decimal comma? write 2.2"),
        ("4,7 kΩ", "decimal comma? write 4.7kΩ"),
        ("1,000", "a comma in a number: write 1.000 (decimal point) or 1000 (no separator)"),
    ],
)
def test_decimal_comma(value, hint):
    _err, msg = _solve_error(parts(["R1", "R", "in", "GND", value]))
    assert msg == f"parts row 2, column value: {value!r} — {hint}"


def test_a_missing_frequency_column_lists_the_columns_found():
    s = [["name", "kind", "from", "to", "frequency", "peak"], ["Vs", "V", "in", "GND", 50, 1]]
    _err, msg = _solve_error(parts(["R1", "R", "in", "GND", 1.0]), s)
    assert msg == (
        "sources table: missing a frequency column (freq_hz, omega_rad_s or harmonic) "
        "(columns found: name, kind, from, to, frequency, peak)"
    )


def test_an_empty_amplitude_says_so():
    _err, msg = _solve_error(
        parts(["R1", "R", "in", "GND", 1.0]), sources(["Vs", "V", "in", "GND", 50.0, None, 0.0])
    )
    assert msg == "sources row 2, column peak — empty amplitude: fill one of peak"
    s = [
        ["name", "kind", "from", "to", "freq_hz", "peak", "rms"],
        ["Vs", "V", "in", "GND", 50, None, " "],
    ]
    _err, msg = _solve_error(parts(["R1", "R", "in", "GND", 1.0]), s)
    assert msg == "sources row 2, column peak — empty amplitude: fill one of peak, rms"


@pytest.mark.parametrize(
    "error_text", ["#N/A", "#VALUE!", "#DIV/0!", "#REF!", "#NAME?", "#SPILL!"]
)
def test_spreadsheet_error_cells_are_refused_where_they_are(error_text):
    p = parts(["R1", "R", "in", "GND", 1.0], [error_text, "R", "in", "GND", 2.0])
    _err, msg = _solve_error(p)
    assert msg == (
        f"parts row 3, column name: {error_text!r} — the cell holds a spreadsheet error; "
        "fix the formula or value that feeds it"
    )


def test_the_dc_diagnosis_says_what_floats_what_isolates_it_and_what_to_add():
    p = parts(
        ["R1", "R", "in", "GND", 1.0],
        ["C1", "C", "in", "b", 1e-6],
        ["R2", "R", "b", "c", 5.0],
        ["C2", "C", "c", "GND", 1e-6],
    )
    s = sources(["Vs", "V", "in", "GND", 0, 1, 0], ["Vs", "V", "in", "GND", 50, 1, 0])
    err, msg = _solve_error(p, s)
    assert err.freq_hz == 0.0
    assert "no DC path" not in msg
    assert msg == (
        "network at 0 Hz (DC): these nodes float at DC: capacitors and current sources are "
        "their only links to GND, and neither settles a steady voltage; nodes b, c; "
        "parts C1, C2 — give them a steady path to GND (e.g. a high-value resistor across a "
        "capacitor named here) or remove the 0 Hz tone"
    )
