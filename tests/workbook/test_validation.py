"""Data validation of input cells, applied headlessly as Excel applies it at entry.

The rules' meaning is Excel's (ECMA-376 Part 1, the ``dataValidation`` element: ``type``,
``operator`` with ``formula1``/``formula2``, ``allowBlank``, ``errorStyle``, ``error``;
operator semantics common practice). Books are written with XlsxWriter's data_validation,
as a template generator writes them.
"""

from __future__ import annotations

import math

import pytest
from books import add_validation, clean_divider_book

from xlfuncs.cli import main
from xlfuncs.workbook.recalc import PreparedBook, recalc
from xlfuncs.workbook.validation import InputValueError, parse_rules, violation


@pytest.fixture(scope="module")
def book(tmp_path_factory):
    return clean_divider_book(tmp_path_factory.mktemp("dv") / "dv.xlsx")


@pytest.fixture(scope="module")
def pb(book):
    return PreparedBook(book)


def _rms(r1: float, vdc: float) -> float:
    # divider R2/(R1+R2), R2 = 1 kΩ: DC vdc and a 2 V-peak 50 Hz tone (closed form)
    k = 1000 / (r1 + 1000)
    return math.sqrt((k * vdc) ** 2 + (k * 2) ** 2 / 2)


@pytest.mark.parametrize(
    ("sets", "message"),
    [
        ({"steps": "two"}, "steps (Net!H1) expects a whole number ≥ 0, got 'two'"),
        ({"steps": -1.0}, "steps (Net!H1) expects a whole number ≥ 0, got -1"),
        ({"steps": 2.5}, "steps (Net!H1) expects a whole number ≥ 0, got 2.5"),
        ({"Net!H1": "80 MVA"}, "steps (Net!H1) expects a whole number ≥ 0, got '80 MVA'"),
        ({"steps": None}, "steps (Net!H1) expects a value (it may not be blank)"),
        (
            {"R1_value": 0.0},
            'R1_value (Net!E2) expects a number > 0, got 0 (the book says: "R1 must be a '
            'positive resistance in ohms")',
        ),
        ({"Vdc": 150.0}, "Vdc (Net!F11) expects a number between -100 and 100, got 150"),
        ({"Vdc": True}, "Vdc (Net!F11) expects a number between -100 and 100, got True"),
        ({"Vdc": "1k"}, "Vdc (Net!F11) expects a number between -100 and 100, got '1k' (= 1000)"),
        ({"mode": "medium"}, "mode (Net!H2) expects one of 'fast', 'slow', got 'medium'"),
    ],
)
def test_values_the_input_cannot_take_are_refused(pb, sets, message):
    with pytest.raises(InputValueError) as exc:
        pb.evaluate(sets)
    assert str(exc.value) == message


@pytest.mark.parametrize(
    ("sets", "r1", "vdc"),
    [
        ({"steps": 0.0, "mode": "slow"}, 1000.0, 10.0),
        ({"R1_value": "3k"}, 3000.0, 10.0),  # SI text in a number cell is the number
        ({"R1_value": 4700.0, "Vdc": -100.0}, 4700.0, -100.0),  # bounds are inclusive
        ({"Vdc": "2.5"}, 1000.0, 2.5),
    ],
)
def test_values_the_input_can_take_pass(pb, sets, r1, vdc):
    pb.evaluate(sets)
    assert pb.read("Vout_rms") == pytest.approx(_rms(r1, vdc), rel=1e-12)


def test_blank_allowed_where_the_rule_allows_it(pb):
    pb.evaluate({"mode": None})  # list rule with blanks allowed (XlsxWriter's default)


def test_recalc_refuses_and_writes_nothing(book, tmp_path, capsys):
    out = tmp_path / "o.xlsx"
    assert main(["recalc", str(book), "-o", str(out), "--set", "steps=two"]) == 2
    err = capsys.readouterr().err
    assert err == "xlfuncs: error: steps (Net!H1) expects a whole number ≥ 0, got 'two'\n"
    assert not out.exists()


def test_bound_from_a_cell_and_warning_style(tmp_path):
    src = clean_divider_book(tmp_path / "b.xlsx", validate=False)
    rules = (
        '<dataValidation type="whole" operator="lessThanOrEqual" allowBlank="1" sqref="H1">'
        "<formula1>$F$12</formula1></dataValidation>"  # at most the 50 Hz peak (2)
        '<dataValidation type="decimal" operator="greaterThan" errorStyle="warning" '
        'sqref="F11"><formula1>0</formula1></dataValidation>'
        '<dataValidation type="custom" sqref="H2"><formula1>LEN(H2)&lt;9</formula1>'
        "</dataValidation>"
    )
    book = add_validation(src, tmp_path / "b2.xlsx", "xl/worksheets/sheet1.xml", rules)
    pb = PreparedBook(book)
    with pytest.raises(InputValueError, match=r"expects a whole number ≤ 2, got 3"):
        pb.evaluate({"steps": 3.0})
    pb.evaluate({"Vdc": -5.0})  # the book only warns: the value is taken, the note says so
    assert pb.notes == ["Vdc (Net!F11) expects a number > 0, got -5 (the book only warns)"]
    with pytest.raises(InputValueError, match=r"custom validation formula \(=LEN\(H2\)<9\)"):
        pb.evaluate({"mode": "x"})
    rep = recalc(book, tmp_path / "w.xlsx", {"Vdc": -5.0})
    assert rep.notes and rep.errors == []


def test_x14_extension_form_is_read():
    xml = (
        '<worksheet><extLst><ext uri="{CCE6A557-97BC-4b89-ADB6-D9C93CAAB3DF}">'
        '<x14:dataValidations count="1"><x14:dataValidation type="list" allowBlank="1">'
        "<x14:formula1><xm:f>Lists!$A$1:$A$3</xm:f></x14:formula1><xm:sqref>B2 D4:D6</xm:sqref>"
        "</x14:dataValidation></x14:dataValidations></ext></extLst></worksheet>"
    )
    (rule,) = parse_rules(xml)
    assert rule.kind == "list" and rule.formula1 == "Lists!$A$1:$A$3"
    assert rule.covers(2, 2) and rule.covers(5, 4) and not rule.covers(3, 4)
    assert violation(rule, "b", lambda t: 0.0, lambda t: ["a", "b"]) is None
    assert violation(rule, "c", lambda t: 0.0, lambda t: ["a", "b"]) == (
        "expects one of 'a', 'b', got 'c'"
    )


@pytest.mark.parametrize(
    ("op", "bounds", "inside", "outside"),
    [
        ("between", ("1", "3"), [1, 2, 3], [0, 4]),
        ("notBetween", ("1", "3"), [0, 4], [1, 2, 3]),
        ("equal", ("2",), [2], [1, 3]),
        ("notEqual", ("2",), [1, 3], [2]),
        ("greaterThan", ("2",), [3], [2, 1]),
        ("lessThan", ("2",), [1], [2, 3]),
        ("greaterThanOrEqual", ("2",), [2, 3], [1]),
        ("lessThanOrEqual", ("2",), [1, 2], [3]),
    ],
)
def test_operators(op, bounds, inside, outside):
    f = "".join(f"<formula{k + 1}>{b}</formula{k + 1}>" for k, b in enumerate(bounds))
    (rule,) = parse_rules(f'<dataValidation type="whole" operator="{op}" sqref="A1">{f}'
                          "</dataValidation>")  # fmt: skip
    for x in inside:
        assert violation(rule, float(x), float, list) is None, (op, x)
    for x in outside:
        assert violation(rule, float(x), float, list) is not None, (op, x)


def test_every_case_of_a_batch_meets_the_rules(book, tmp_path):
    import csv

    from xlfuncs.workbook.batch import run_batch

    cases = tmp_path / "c.csv"
    with cases.open("w", newline="") as fh:
        csv.writer(fh).writerows(
            [["case", "steps", "R1_value"], ["a", "2", "1k"], ["b", "two", ""]]
        )
    rep = run_batch(book, cases, tmp_path / "o", collect=["Vout_rms"], progress=False)
    assert (rep.done, rep.failed) == (2, 1)
    assert rep.errors == ["b: steps (Net!H1) expects a whole number ≥ 0, got 'two'"]
