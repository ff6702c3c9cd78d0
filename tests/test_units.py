"""SI-prefixed values. Prefix factors: BIPM, *The International System of Units*,
9th ed. (2019), Table 7; letter codes: IEC 60062 (R/k/M as decimal marker)."""

import pytest

from xlfuncs import InputError, UnitError, parse_number


@pytest.mark.parametrize(
    ("text", "unit", "expected"),
    [
        ("4.7u", "F", 4.7e-6),  # micro = 1e-6 (SI Brochure Table 7)
        ("4.7 µF", "F", 4.7e-6),  # MICRO SIGN
        ("4.7 μF", "F", 4.7e-6),  # GREEK MU
        ("4.7uF", "F", 4.7e-6),
        ("10k", "Ω", 10e3),  # kilo = 1e3
        ("10 kΩ", "Ω", 10e3),
        ("10 kohm", "Ω", 10e3),
        ("2.2 mH", "H", 2.2e-3),  # milli = 1e-3
        ("1e-6", "F", 1e-6),
        ("1M", "Ω", 1e6),  # mega = 1e6 (M is mega, m is milli)
        ("1m", "Ω", 1e-3),
        ("100p", "F", 100e-12),  # pico = 1e-12
        ("3n3", "F", 3.3e-9),  # IEC 60062 letter code
        ("4k7", "Ω", 4700.0),  # IEC 60062
        ("2R2", "Ω", 2.2),  # IEC 60062: R marks the decimal point
        ("1 F", "F", 1.0),  # F alone is the farad, not femto
        ("1f", "F", 1e-15),  # femto = 1e-15
        ("-3.3", None, -3.3),
        (47.0, "H", 47.0),
        ("50 Hz", "Hz", 50.0),
        ("1.5 kV", "V", 1500.0),
    ],
)
def test_accepted_forms(text, unit, expected):
    assert parse_number(text, unit=unit, table="parts", row=2, column="value") == pytest.approx(
        expected, rel=1e-15
    )


@pytest.mark.parametrize(
    ("text", "unit", "error", "fragment"),
    [
        ("10 mH", "F", UnitError, "unit 'H' does not fit here; expected F (farads)"),
        ("4.7q", "F", UnitError, "unknown unit prefix 'q'"),
        ("4.7 kX", "Ω", UnitError, "unknown unit 'X'"),
        ("abc", "Ω", InputError, "expected a number"),
        (float("nan"), "Ω", InputError, "finite"),
        (float("inf"), "Ω", InputError, "finite"),
        ("inf", "Ω", InputError, "expected a number"),
        (True, "Ω", InputError, "TRUE/FALSE"),
        ("5 V", None, UnitError, "expected no unit"),
    ],
)
def test_rejected_forms_name_the_place(text, unit, error, fragment):
    with pytest.raises(error) as exc:
        parse_number(text, unit=unit, table="parts", row=7, column="value")
    msg = str(exc.value)
    assert msg.startswith("parts row 7, column value: ")
    assert fragment in msg
    assert "\n" not in msg
