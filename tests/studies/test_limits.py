"""IEEE Std 519 limit tables, cell by cell, against the standard.

Source of every value: IEEE Std 519-2014, "IEEE Recommended Practice and Requirements for
Harmonic Control in Electric Power Systems", §5, Tables 1-4 (read in a transcription of
§5); the 2022 even-harmonic rule from secondary summaries of IEEE Std 519-2022.
"""

import numpy as np
import pytest

from xlfuncs.studies import (
    check_current,
    check_voltage,
    current_limit_pct,
    tdd_limit_pct,
    voltage_limits_pct,
)

# IEEE Std 519-2014 Table 1 — (bus kV, individual %, THD %)
TABLE1 = [
    (0.48, 5.0, 8.0),  # Table 1 row "V ≤ 1.0 kV"
    (1.0, 5.0, 8.0),  # Table 1 row "V ≤ 1.0 kV" (boundary)
    (13.8, 3.0, 5.0),  # Table 1 row "1 kV < V ≤ 69 kV"
    (69.0, 3.0, 5.0),  # Table 1 row "1 kV < V ≤ 69 kV" (boundary)
    (115.0, 1.5, 2.5),  # Table 1 row "69 kV < V ≤ 161 kV"
    (230.0, 1.0, 1.5),  # Table 1 row "161 kV < V"
]


@pytest.mark.parametrize(("kv", "ind", "thd"), TABLE1)
def test_table1(kv, ind, thd):
    assert voltage_limits_pct(kv) == (ind, thd)


# IEEE Std 519-2014 Table 2 (120 V – 69 kV), odd harmonics, % of I_L:
# (Isc/IL, [3≤h<11, 11≤h<17, 17≤h<23, 23≤h<35, 35≤h≤50], TDD)
TABLE2 = [
    (10, [4.0, 2.0, 1.5, 0.6, 0.3], 5.0),  # Table 2 row "< 20"
    (20, [7.0, 3.5, 2.5, 1.0, 0.5], 8.0),  # Table 2 row "20 < 50"
    (75, [10.0, 4.5, 4.0, 1.5, 0.7], 12.0),  # Table 2 row "50 < 100"
    (500, [12.0, 5.5, 5.0, 2.0, 1.0], 15.0),  # Table 2 row "100 < 1000"
    (2000, [15.0, 7.0, 6.0, 2.5, 1.4], 20.0),  # Table 2 row "> 1000"
]
BAND_ORDERS = [(3, 5, 7, 9), (11, 13, 15), (17, 19, 21), (23, 25, 29, 33), (35, 37, 49)]


@pytest.mark.parametrize(("ratio", "bands", "tdd"), TABLE2)
def test_table2_every_cell(ratio, bands, tdd):
    for lim, orders in zip(bands, BAND_ORDERS, strict=True):
        for h in orders:
            assert current_limit_pct(h, ratio, 13.8) == lim
    assert tdd_limit_pct(ratio, 13.8) == tdd


def test_table3_halves_table2():
    # IEEE Std 519-2014 Table 3 (69–161 kV), row "< 20": 2.0 / 1.0 / 0.75 / 0.3 / 0.15, TDD 2.5
    assert [current_limit_pct(h, 10, 115.0) for h in (5, 11, 17, 23, 35)] == [
        2.0,
        1.0,
        0.75,
        0.3,
        0.15,
    ]
    assert tdd_limit_pct(10, 115.0) == 2.5


def test_table4_first_row():
    # IEEE Std 519-2014 Table 4 (> 161 kV), row "< 25": 1.0 / 0.5 / 0.38 / 0.15 / 0.1, TDD 1.5
    assert [current_limit_pct(h, 10, 230.0) for h in (5, 11, 17, 23, 35)] == [
        1.0,
        0.5,
        0.38,
        0.15,
        0.1,
    ]
    assert tdd_limit_pct(10, 230.0) == 1.5


@pytest.mark.parametrize(
    ("h", "edition", "expected"),
    [
        (4, 2014, 0.25 * 7.0),  # 2014: even harmonics 25 % of the odd limit (Table 2 note)
        (12, 2014, 0.25 * 3.5),
        (2, 2014, 0.25 * 7.0),  # order 2 read with the first band (our stated convention)
        (4, 2022, 0.5 * 7.0),  # 2022: h ≤ 6 → 50 % (secondary summaries of IEEE 519-2022)
        (6, 2022, 0.5 * 7.0),
        (8, 2022, 7.0),  # 2022: h > 6 → 100 %
    ],
)
def test_even_harmonic_rules(h, edition, expected):
    assert current_limit_pct(h, 30, 13.8, edition) == pytest.approx(expected, rel=1e-15)


def test_orders_above_50_are_not_limited():
    # IEEE Std 519-2014 Table 2 stops at h = 50: no limit (None, never an infinity)
    assert current_limit_pct(51, 30, 13.8) is None


def test_voltage_check_pass_fail_and_thd():
    # 480 V bus: 5th at 4 % passes 5 %, 7th at 6 % fails; THD √(16+36) = 7.21 % < 8 %
    f = np.array([60.0, 300.0, 420.0])
    rms = np.array([277.0, 0.04 * 277, 0.06 * 277])
    chk = check_voltage(f, rms, 60.0, 0.48)
    rows = {r[0]: r for r in chk.rows}
    assert rows["h5"][3] and not rows["h7"][3]
    assert rows["THD"][1] == pytest.approx(np.sqrt(0.04**2 + 0.06**2) * 100, rel=1e-12)
    assert not chk.passed


def test_current_check_uses_i_l_and_flags_dc():
    f = np.array([0.0, 60.0, 300.0])
    rms = np.array([1.0, 100.0, 5.0])
    chk = check_current(f, rms, 60.0, i_l=125.0, isc_il=30, bus_kv=13.8)
    rows = {r[0]: r for r in chk.rows}
    assert rows["h5"][1] == pytest.approx(4.0) and rows["h5"][2] == 7.0 and rows["h5"][3]
    assert rows["TDD"][1] == pytest.approx(4.0)  # TDD divides by I_L, not by I_1
    assert not rows["DC"][3] and not chk.passed  # DC offset is not allowed


@pytest.mark.parametrize(
    ("isc_il", "shown", "limit_h5"),
    [
        (14.4475, "Isc/IL 14.4:", 4.0),  # IEEE Std 519-2014 Table 2, row < 20: h < 11 limit 4.0 %
        (19.996, "Isc/IL 19.996:", 4.0),  # still row < 20: not shown as 20
        (20.0004, "Isc/IL 20:", 7.0),  # row 20 < 50: h < 11 limit 7.0 %
        (87.1604, "Isc/IL 87.2:", 10.0),  # row 50 < 100: h < 11 limit 10.0 %
    ],
)
def test_the_basis_shows_isc_il_in_the_row_it_selects(isc_il, shown, limit_h5):
    f = np.array([60.0, 300.0])
    rms = np.array([100.0, 1.0])
    chk = check_current(f, rms, 60.0, i_l=100.0, isc_il=isc_il, bus_kv=13.8)
    assert shown in chk.basis
    assert dict((r[0], r[2]) for r in chk.rows)["h5"] == limit_h5
