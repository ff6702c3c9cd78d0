"""Every kind of bad input gives one line naming table, row (header = row 1), column
and what was expected."""

import pytest
from helpers import parts, sources

import xlfuncs
from xlfuncs import InputError, TableError, XlfuncsError

GOOD_PARTS = parts(["R1", "R", "a", "GND", 10.0], ["C1", "C", "a", "GND", "1u"])
GOOD_SOURCES = sources(["Vs", "V", "a", "GND", 50.0, 1.0, 0.0])


def _err(p=GOOD_PARTS, s=GOOD_SOURCES, o=None):
    with pytest.raises(XlfuncsError) as exc:
        xlfuncs.solve(p, s, o)
    msg = str(exc.value)
    assert "\n" not in msg and "Traceback" not in msg
    return exc.value, msg


@pytest.mark.parametrize(
    ("p", "where", "fragment"),
    [
        (
            parts(["R1", "R", "a", "GND", 1], ["r1", "C", "a", "GND", 1]),
            "parts row 3, column name: 'r1'",
            "duplicate name (already used in row 2)",
        ),
        (
            parts(["R1", "Q", "a", "GND", 1]),
            "parts row 2, column kind: 'Q'",
            "expected one of R, L, C",
        ),
        (parts(["R1", "R", None, "GND", 1]), "parts row 2, column from", "missing a node name"),
        (parts(["R1", "R", "a", "a", 1]), "parts row 2, column to: 'a'", "both ends on node 'a'"),
        (parts(["R1", "R", "a", "GND", 0]), "parts row 2, column value: 0", "must be > 0"),
        (
            parts(["R1", "R", "a", "GND", 1], ["L1", "L", "a", "GND", -1e-3]),
            "parts row 3, column value: -0.001",
            "must be > 0",
        ),
        (
            parts(["C1", "C", "a", "GND", "big"]),
            "parts row 2, column value: 'big'",
            "expected a number",
        ),
        (
            parts(["C1", "C", "a", "GND", "4.7q"]),
            "parts row 2, column value: '4.7q'",
            "unknown unit prefix 'q'",
        ),
        (
            parts(["C1", "C", "a", "GND", "10 mH"]),
            "parts row 2, column value: '10 mH'",
            "expected F",
        ),
        (parts(["R1", "R", "a", "GND", float("nan")]), "parts row 2, column value: nan", "finite"),
        (parts(["R1", "R", "a", "GND", float("inf")]), "parts row 2, column value: inf", "finite"),
    ],
)
def test_parts_table_errors(p, where, fragment):
    err, msg = _err(p=p)
    assert isinstance(err, InputError) and isinstance(err, ValueError)
    assert msg.startswith(where)
    assert fragment in msg


def test_blank_rows_keep_the_users_row_numbers():
    p = parts(["R1", "R", "a", "GND", 1], [None] * 5, ["R2", "R", "a", "GND", "x"])
    _e, msg = _err(p=p)
    assert msg.startswith("parts row 4, column value: 'x'")


@pytest.mark.parametrize(
    ("s", "o", "where", "fragment"),
    [
        (
            sources(["Vs", "V", "a", "GND", -50.0, 1.0, 0]),
            None,
            "sources row 2, column freq_hz: -50.0",
            "expected a frequency ≥ 0",
        ),
        (
            sources(["Vs", "V", "a", "GND", float("nan"), 1.0, 0]),
            None,
            "sources row 2, column freq_hz: nan",
            "finite",
        ),
        (
            sources(["Vs", "X", "a", "GND", 50.0, 1.0, 0]),
            None,
            "sources row 2, column kind: 'X'",
            "expected V (voltage source) or I",
        ),
        (
            sources(["Vs", "V", "a", "GND", 50, 1.0, 0], ["Vs", "I", "a", "GND", 150, 1.0, 0]),
            None,
            "sources row 3, column kind: 'I'",
            "tones of source 'Vs' must share one kind (V in row 2)",
        ),
        (
            sources(["Vs", "V", "a", "GND", 50, 1.0, 0], ["Vs", "V", "b", "GND", 150, 1.0, 0]),
            None,
            "sources row 3, column from: 'b'",
            "must share nodes (a→GND in row 2)",
        ),
        (
            [["name", "kind", "from", "to", "harmonic", "rms"], ["Vs", "V", "a", "GND", 5, 1.0]],
            None,
            "sources row 2, column harmonic: 5",
            "needs fundamental_hz in the options table",
        ),
        (
            sources(["Vs", "V", "a", "GND", "fifty", 1.0, 0]),
            None,
            "sources row 2, column freq_hz: 'fifty'",
            "expected a number",
        ),
        (
            sources(["Vs", "V", "a", "GND", 0, 1.0, 45]),
            None,
            "sources row 2, column phase_deg: 45",
            "a DC tone (0 Hz) takes no phase",
        ),
        (
            [
                ["name", "kind", "from", "to", "freq_hz", "peak", "rms"],
                ["Vs", "V", "a", "GND", 50, 1, 1],
            ],
            None,
            "sources row 2, column rms",
            "fill exactly one of peak, rms",
        ),
        (
            sources(["Vs", "V", "a", "GND", 50.0, "2 A", 0]),
            None,
            "sources row 2, column peak: '2 A'",
            "expected V (volts)",
        ),
    ],
)
def test_sources_table_errors(s, o, where, fragment):
    err, msg = _err(s=s, o=o)
    assert isinstance(err, InputError)
    assert msg.startswith(where)
    assert fragment in msg


@pytest.mark.parametrize(
    ("p", "s", "o", "message"),
    [
        (
            [],
            GOOD_SOURCES,
            None,
            "parts table: empty range (expected a header row and at least one row)",
        ),
        (parts(), GOOD_SOURCES, None, "parts table: no rows below the header"),
        (
            GOOD_PARTS,
            [["name", "kind", "from", "to", "freq_hz", "peak"]],
            None,
            "sources table: no rows below the header",
        ),
        (
            [["name", "kind", "from", "to"], ["R1", "R", "a", "GND"]],
            GOOD_SOURCES,
            None,
            "parts table: missing column value (columns found: name, kind, from, to)",
        ),
        (
            GOOD_PARTS,
            [["name", "kind", "from", "to", "peak"], ["Vs", "V", "a", "GND", 1]],
            None,
            "sources table: missing a frequency column (freq_hz, omega_rad_s or harmonic) "
            "(columns found: name, kind, from, to, peak)",
        ),
        (
            GOOD_PARTS,
            5.0,
            None,
            "sources table: expected a range with a header row (a list of rows), got a single value 5.0",
        ),
    ],
)
def test_whole_table_errors(p, s, o, message):
    err, msg = _err(p=p, s=s, o=o)
    assert isinstance(err, TableError)
    assert msg == message


@pytest.mark.parametrize(
    ("o", "where", "fragment"),
    [
        (
            [["key", "value"], ["fundamentl_hz", 50]],
            "options row 2, column key: 'fundamentl_hz'",
            "expected one of fundamental_hz, ground, thd_max_order",
        ),
        ([["fundamental_hz", -50]], "options row 1, column value: -50", "must be > 0"),
        (
            [["ground", "0"], ["ground", "GND"]],
            "options row 2, column key: 'ground'",
            "given twice",
        ),
    ],
)
def test_options_table_errors(o, where, fragment):
    _e, msg = _err(o=o)
    assert msg.startswith(where)
    assert fragment in msg


def test_references_that_do_not_resolve():
    head = [
        "name",
        "kind",
        "from",
        "to",
        "value",
        "ctrl_part",
        "coil_a",
        "coil_b",
        "ctrl_from",
        "ctrl_to",
    ]
    cases = [
        (
            [["F1", "CCCS", "a", "GND", 2, "Rx", None, None, None, None]],
            "parts row 3, column ctrl_part: 'Rx' — no part or source of that name",
        ),
        (
            [["K1", "COUPLING", None, None, 0.5, None, "R1", "L9", None, None]],
            "parts row 3, column coil_a: 'R1' — expected the name of an inductor (kind L)",
        ),
        (
            [["K1", "COUPLING", None, None, 1.5, None, "R1", "L9", None, None]],
            "parts row 3, column value: 1.5 — coupling k must satisfy 0 < k ≤ 1",
        ),
        (
            [["E1", "VCVS", "b", "GND", 2, None, None, None, "zz", "GND"]],
            "parts row 3, column ctrl_from: 'zz' — no part or source connects to this node (check the spelling)",
        ),
    ]
    for extra, message in cases:
        p = [head, ["R1", "R", "a", "GND", 1.0, None, None, None, None, None], *extra]
        _e, msg = _err(p=p)
        assert msg == message


def test_source_name_clashing_with_part():
    s = sources(["R1", "V", "a", "GND", 50.0, 1.0, 0.0])
    _e, msg = _err(s=s)
    assert msg == "sources row 2, column name: 'R1' — name already used by a part (parts row 2)"


def test_unknown_target_is_named():
    sol = xlfuncs.solve(GOOD_PARTS, GOOD_SOURCES)
    with pytest.raises(InputError) as exc:
        sol.signal("nope")
    assert str(exc.value) == (
        "argument target: 'nope' — no part, source or node of that name; "
        "nodes: a, GND; parts: R1, C1; sources: Vs"
    )


def test_tables_given_as_other_python_objects():
    import numpy as np

    parts = [["name", "kind", "from", "to", "value"], ["R1", "R", "in", "out", "1k"],
             ["C1", "C", "out", "GND", "1u"]]  # fmt: skip
    src = [["name", "kind", "from", "to", "freq_hz", "rms"], ["Vs", "V", "in", "GND", 50, 1]]
    as_list = xlfuncs.solve(parts, src).voltage("out").rms_total
    as_array = xlfuncs.solve(np.array(parts, dtype=object), src).voltage("out").rms_total
    assert as_array == pytest.approx(as_list, rel=1e-14)  # a 2-D array is the same range
    for bad, what in (({"a": 1}, "got a dict"), (np.array([1, 2]), "got a ndarray")):
        with pytest.raises(TableError) as exc:
            xlfuncs.solve(bad, src)
        assert "\n" not in str(exc.value) and what in str(exc.value)
    with pytest.raises(InputError, match=r"argument freqs_hz: -150.0 — frequency 2 of 2"):
        xlfuncs.impedance_scan(parts, "out", [50, -150])


def test_parsed_part_rows_are_ordinary_frozen_records():
    """The parser fills its records without the generated __init__: each must still be
    equal to, hash like and stay as frozen as one made by PartRow(...)."""
    import dataclasses

    from xlfuncs.tables import PartRow, read_parts

    rows = read_parts(
        [
            ["name", "kind", "from", "to", "value", "tolerance", "r_exponent"],
            ["R1", "R", "a", "GND", "4k7", "5%", 0.5],
            ["C1", "C", "a", "b", "1u", None, None],
        ]
    )
    # 4k7 = 4.7 kΩ (IEC 60062 letter-and-digit code), 5% = 0.05: common practice
    made = (
        PartRow(2, "R1", "R", "a", "GND", 4700.0, r_exponent=0.5, tolerance=0.05),
        PartRow(3, "C1", "C", "a", "b", 1e-6),
    )
    assert rows == made
    assert [hash(r) for r in rows] == [hash(r) for r in made]
    assert [dataclasses.asdict(r) for r in rows] == [dataclasses.asdict(r) for r in made]
    with pytest.raises(dataclasses.FrozenInstanceError):
        rows[0].value = 1.0  # type: ignore[misc]
