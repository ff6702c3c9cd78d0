"""Noise rows of the sources table (``density``, ``corner_hz``) → NoiseRow records.

Prefix factors: BIPM, *The International System of Units*, 9th ed. (2019), Table 7
(n = 1e-9, p = 1e-12, k = 1e3).
"""

import numpy as np
import pytest
from helpers import parts

import xlfuncs
from xlfuncs import Circuit, InputError, TableError
from xlfuncs.tables import NoiseRow, read_source_table

P = parts(["R1", "R", "in", "out", "1k"], ["R2", "R", "out", "GND", "1k"])
HEAD = ["name", "kind", "from", "to", "freq_hz", "peak", "density", "corner_hz"]


def _src(*rows):
    return [HEAD, *[list(r) for r in rows]]


def test_noise_rows_are_parsed_with_prefixes_and_text_units():
    s = _src(
        ["Vs", "V", "in", "GND", 50.0, 1.0, None, None],
        ["en", "V", "in", "GND", None, None, "4n", None],  # 4 nV/√Hz
        ["in1", "I", "gnd", "out", None, None, "2 pA/√Hz", "1k"],
        ["en2", "V", "out", "GND", None, None, "3 nV/rtHz", 10.0],
    )
    c = Circuit.from_tables(P, s)
    assert c.noise_sources == (
        NoiseRow(3, "en", "V", "in", "GND", pytest.approx(4e-9, rel=1e-15), 0.0),
        NoiseRow(4, "in1", "I", "GND", "out", pytest.approx(2e-12, rel=1e-15), 1e3),
        NoiseRow(5, "en2", "V", "out", "GND", pytest.approx(3e-9, rel=1e-15), 10.0),
    )
    # noise rows are not tones
    assert [s_.name for s_ in c.sources] == ["Vs"]
    assert list(c.freqs_hz) == [50.0]


def test_the_phasor_solve_ignores_noise_rows():
    tone = ["Vs", "V", "in", "GND", 50.0, 1.0, None, None]
    with_noise = xlfuncs.solve(P, _src(tone, ["en", "V", "in", "GND", None, None, "4n", None]))
    without = xlfuncs.solve(P, _src(tone))
    assert np.array_equal(with_noise.x, without.x)
    # divider of two equal resistors: half the source (closed form)
    assert float(with_noise.voltage("out").peak[0]) == pytest.approx(0.5, rel=1e-12)


def test_a_table_of_noise_rows_only_needs_no_frequency_column():
    s = [
        ["name", "kind", "from", "to", "density"],
        ["en", "V", "in", "GND", "4n"],
    ]
    tones, noise = read_source_table(s)
    assert tones == () and len(noise) == 1
    c = Circuit.from_tables(P, s)
    assert c.sources == () and len(c.noise_sources) == 1


@pytest.mark.parametrize(
    ("row", "where", "fragment"),
    [
        (
            ["en", "V", "in", "GND", 50.0, None, "4n", None],
            "sources row 3, column freq_hz: 50.0",
            "a noise row (density filled) is not a tone",
        ),
        (
            ["en", "V", "in", "GND", None, 1.0, "4n", None],
            "sources row 3, column peak: 1.0",
            "leave peak empty",
        ),
        (["en", "V", "in", "GND", None, None, 0.0, None], "sources row 3, column density", "> 0"),
        (
            ["en", "I", "in", "GND", None, None, "4 nV/√Hz", None],
            "sources row 3, column density",
            "expected A/√Hz",
        ),
        (
            ["en", "V", "in", "GND", None, None, "4n", -1.0],
            "sources row 3, column corner_hz",
            "≥ 0 Hz",
        ),
        (
            ["Vt", "V", "in", "GND", 50.0, 1.0, None, 100.0],
            "sources row 3, column corner_hz",
            "belongs to a noise row",
        ),
        (
            ["R1", "V", "in", "GND", None, None, "4n", None],
            "sources row 3, column name: 'R1'",
            "already used by a part (parts row 2)",
        ),
        (
            ["vs", "V", "in", "GND", None, None, "4n", None],
            "sources row 3, column name: 'vs'",
            "already used by a tone",
        ),
        (
            ["en", "V", "nowhere", "GND", None, None, "4n", None],
            "sources row 3, column from: 'nowhere'",
            "no part or tone source touches this node",
        ),
    ],
)
def test_bad_noise_rows_name_the_place(row, where, fragment):
    s = _src(["Vs", "V", "in", "GND", 50.0, 1.0, None, None], row)
    with pytest.raises(InputError) as exc:
        Circuit.from_tables(P, s)
    msg = str(exc.value)
    assert msg.startswith(where), msg
    assert fragment in msg


def test_one_row_per_noise_source():
    s = _src(
        ["en", "V", "in", "GND", None, None, "4n", None],
        ["EN", "V", "in", "GND", None, None, "5n", None],
    )
    with pytest.raises(InputError, match=r"sources row 3, column name: 'EN'.*one row per noise"):
        Circuit.from_tables(P, s)


def test_tone_rows_still_need_their_columns():
    s = [["name", "kind", "from", "to", "density"], ["Vs", "V", "in", "GND", None]]
    with pytest.raises(TableError, match="missing a frequency column"):
        Circuit.from_tables(P, s)
