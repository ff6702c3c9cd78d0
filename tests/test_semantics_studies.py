"""Study functions: a measured drive spectrum, current amplitudes with units, and range
checks of every scalar argument (a one-line error, never an internal error or a
non-finite result).

Check values: Ohm's law; I_h = I1·percent/100 (the definition of a spectrum in percent
of the fundamental, common practice); X_C = V²/Q (common practice).
"""

import math

import pytest
from helpers import parts, sources
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs
from xlfuncs import InputError, UnitError
from xlfuncs.studies import (
    capacitor_duty,
    characteristic_orders,
    check_current,
    check_voltage,
    current_limit_pct,
    detuning,
    drive_sources,
    tdd_limit_pct,
    voltage_limits_pct,
)


def test_a_measured_drive_spectrum_gives_source_rows():
    rows = drive_sources("Id", "GND", "bus", 100.0, spectrum=[(5.0, 20.0), (7.0, 14.0)])
    assert rows[0] == ["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]
    assert rows[1:] == [
        ["Id", "I", "GND", "bus", 5.0, 20.0, 0.0],
        ["Id", "I", "GND", "bus", 7.0, 14.0, 0.0],
    ]
    # the rows feed a solve: 20 A and 14 A rms into 2 Ω give 40 V and 28 V rms
    sol = xlfuncs.solve(parts(["R1", "R", "bus", "GND", 2.0]), rows, [["fundamental_hz", 50]])
    v = sol.voltage("bus")
    assert list(v.freqs_hz) == [250.0, 350.0]
    assert list(v.rms) == pytest.approx([40.0, 28.0], rel=1e-12)


@pytest.mark.parametrize(
    ("spectrum", "where", "fragment"),
    [
        ([(1.0, 5.0)], "spectrum row 2, column order: 1.0", "a harmonic order above 1"),
        ([(5.0, -1.0)], "spectrum row 2, column percent: -1.0", "a percentage of I1"),
        ([(5.0, 2.0), (5.0, 1.0)], "spectrum row 3, column order: 5.0", "given twice (row 2)"),
        ([(math.nan, 2.0)], "spectrum row 2, column order: nan", "a harmonic order"),
        ([(5.0, 2.0, 9.0)], "spectrum row 2: (5.0, 2.0, 9.0)", "expected order | percent"),
        ([], "spectrum", "no rows"),
    ],
)
def test_bad_spectrum_rows_name_the_row(spectrum, where, fragment):
    with pytest.raises(InputError) as exc:
        drive_sources("Id", "GND", "bus", 100.0, spectrum=spectrum)
    assert str(exc.value).startswith(where) and fragment in str(exc.value)


@pytest.mark.parametrize(
    ("amp", "peak_a"),
    [("500m", 0.5), ("2 A", 2.0), ("2A", 2.0), ("1.5 mA", 1.5e-3), (0.25, 0.25)],
)
def test_a_current_source_amplitude_takes_amperes_with_prefixes(amp, peak_a):
    s = sources(["Is", "I", "GND", "a", 50.0, amp, 0.0])
    sol = xlfuncs.solve(parts(["R1", "R", "a", "GND", 2.0]), s)
    assert float(sol.voltage("a").peak[0]) == pytest.approx(2.0 * peak_a, rel=1e-12)


def test_volts_on_a_current_source_are_refused():
    s = sources(["Is", "I", "GND", "a", 50.0, "2 V", 0.0])
    with pytest.raises(UnitError, match=r"sources row 2, column peak: '2 V' — .*expected A"):
        xlfuncs.solve(parts(["R1", "R", "a", "GND", 2.0]), s)


@pytest.mark.parametrize("volts", [1e308, 1e-308, math.inf, math.nan, -525.0, 0.0, "525"])
def test_detuning_refuses_voltages_out_of_range(volts):
    with pytest.raises(InputError) as exc:
        detuning(80, volts, 50, p=0.07)
    assert str(exc.value).startswith("argument volts")


def test_detuning_inside_its_ranges():
    d = detuning(80, 525, 50, p=0.07)
    assert d.x_c_ohm == pytest.approx(525**2 / 80e3, rel=1e-12)  # 3.445 Ω
    d2 = detuning(80, 525, 50, order=1 / math.sqrt(0.07))
    assert d2.p == pytest.approx(0.07, rel=1e-12)
    for kwargs, col in (({"p": 1.0}, "p"), ({"p": 1e-9}, "p"), ({"order": 1.0}, "order")):
        with pytest.raises(InputError, match=f"argument {col}"):
            detuning(80, 525, 50, **kwargs)


_wild = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0.0, -1.0, 1e-308, 5e-324, 1e308, 1e24, 1e-24]),
    st.integers(-(10**30), 10**30),
    st.none(),
    st.booleans(),
    st.text(max_size=3),
)


def _finite_everywhere(obj):
    if isinstance(obj, float):
        assert math.isfinite(obj)
    elif isinstance(obj, (list, tuple)):
        for o in obj:
            _finite_everywhere(o)


@settings(max_examples=120, deadline=None)
@given(_wild, _wild, _wild, _wild)
def test_study_functions_refuse_or_answer_finitely(a, b, c, d):
    calls = [
        lambda: detuning(a, b, c, p=d),
        lambda: detuning(a, b, c, order=d),
        lambda: drive_sources("Id", "GND", "bus", a, 6, 25, b),
        lambda: drive_sources("Id", "GND", "bus", 10.0, spectrum=[(a, b), (c, d)]),
        lambda: characteristic_orders(a, b),
        lambda: capacitor_duty([50.0, 250.0], [230.0, 10.0], [5.0, 1.0], a, b),
        lambda: voltage_limits_pct(a),
        lambda: current_limit_pct(a, b, c),
        lambda: tdd_limit_pct(a, b),
        lambda: check_voltage([50.0, 250.0], [230.0, 10.0], a, b),
        lambda: check_current([50.0, 250.0], [100.0, 4.0], a, b, c, d),
    ]
    for call in calls:
        try:
            out = call()
        except InputError as exc:
            assert "\n" not in str(exc)
            continue
        if hasattr(out, "rows"):
            out = out.rows() if callable(out.rows) else out.rows
        if hasattr(out, "__dataclass_fields__"):
            out = [getattr(out, k) for k in out.__dataclass_fields__]
        _finite_everywhere(out)
