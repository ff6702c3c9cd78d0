"""The engine adapter's contract (CONTRACTS §4): what our functions receive from a workbook.

Checked against Excel's documented behaviour (common practice of worksheet functions):
a skipped optional argument is "missing", not 0; a cell holding an error inside a range
argument is that error value; a scalar error argument propagates.
"""

from __future__ import annotations

import pytest
import xlsxwriter
from hypothesis import given, settings
from hypothesis import strategies as st

from xlfuncs.errors import WorkbookError
from xlfuncs.workbook import engine as engine_mod
from xlfuncs.workbook.engine import FormualizerEngine, engine_formula
from xlfuncs.workbook.recalc import PreparedBook, recalc
from xlfuncs.workbook.safety import Limits

SIZES = {"A1:J100001": 1_000_010, "B1:C2": 4, "Net!A1:E3": 15}


def _size(ref: str) -> int | None:
    return SIZES.get(ref)


@pytest.mark.parametrize(
    ("formula", "expected"),
    [
        ("CKT_X(A1,,2)", "CKT_X(A1,_XLFUNCS_OMITTED(),2)"),
        ("CKT_X(A1,)", "CKT_X(A1,_XLFUNCS_OMITTED())"),
        ("CKT_X(,A1)", "CKT_X(_XLFUNCS_OMITTED(),A1)"),
        ("CKT_X()", None),  # no arguments at all is not a skipped argument
        ("_xludf.CKT_X(A1, ,2)", "_xludf.CKT_X(A1,_XLFUNCS_OMITTED(),2)"),
        ('CKT_X(B1:C2,,"a,,b",{1,2;3,4},SUM(1,,2))',
         'CKT_X(B1:C2,_XLFUNCS_OMITTED(),"a,,b",{1,2;3,4},SUM(1,,2))'),
        ("IF(A1,CKT_X(A1,,CKT_Y(,1)),0)",
         "IF(A1,CKT_X(A1,_XLFUNCS_OMITTED(),CKT_Y(_XLFUNCS_OMITTED(),1)),0)"),
        ("SUM(1,,2)", None),  # Excel's own functions keep their own rules
        ('CKT_RMS(A1:J100001,A10:F12,"out")',
         'CKT_RMS(_XLFUNCS_REFUSED("covers 1000010 cells (limit 1000000)"),A10:F12,"out")'),
        ("CKT_X((A1:J100001))", None),  # not a plain reference: checked when it arrives
        ("CKT_X(A1#,)", "CKT_X(A1#,_XLFUNCS_OMITTED())"),
    ],
)  # fmt: skip
def test_engine_formula_rewrites(formula, expected):
    assert engine_formula(formula, _size) == expected


_ARG = st.one_of(
    st.just(""),
    st.sampled_from(["A1", "B1:C2", "Net!A1:E3", "parts_tbl", "1", "-2.5", "TRUE"]),
    st.text(alphabet="ab,;()", max_size=6).map(lambda t: '"' + t + '"'),
    st.sampled_from(["SUM(1,,2)", "{1,2;3,4}", "IF(A1,,1)", "(A1)"]),
)


@settings(max_examples=150, deadline=None)
@given(st.lists(_ARG, min_size=1, max_size=6), st.sampled_from(["CKT_X", "_xludf.CKT_X"]))
def test_every_skipped_argument_and_only_those_is_marked(args, name):
    # the expected text is built independently, from the arguments themselves
    formula = f"{name}({','.join(args)})"
    if args == [""]:
        expected = None  # CKT_X() has no arguments
    else:
        marked = [a if a else "_XLFUNCS_OMITTED()" for a in args]
        expected = f"{name}({','.join(marked)})" if "" in args else None
    assert engine_formula(formula, lambda _r: 1) == expected


def _probe_book(path):
    wb = xlsxwriter.Workbook(str(path))
    ws = wb.add_worksheet("S")
    ws.write("A1", 1.0)
    ws.write_formula("A2", "=1/0")
    ws.write("A3", "text")
    ws.write_formula("A4", "=NA()")
    ws.write_formula("B1", "=CKT_PROBE(A1,,3)")
    ws.write_formula("B2", "=CKT_PROBE(A1,0,3)")
    ws.write_formula("B3", "=CKT_PROBE(A1:A4)")
    ws.write_formula("B4", "=CKT_PROBE(A2)")  # a scalar argument holding an error
    ws.write_formula("B5", "=CKT_PROBE(A1,)")
    wb.close()
    return path


@pytest.fixture
def probe(monkeypatch):
    calls: list[tuple] = []

    def fn(*args):
        calls.append(args)
        return len(calls)

    real = engine_mod.worksheet_functions

    def with_probe():
        return {**real(), "CKT_PROBE": (fn, 1, 3, (True, False, False), ("a", "b", "c"))}

    monkeypatch.setattr(engine_mod, "worksheet_functions", with_probe)
    return calls


def test_what_our_functions_receive(tmp_path, probe):
    pb = PreparedBook(_probe_book(tmp_path / "p.xlsx"))
    pb.evaluate()
    assert ([[1.0]], None, 3.0) in probe  # skipped → None (a range argument is 2-D)
    assert ([[1.0]], 0.0, 3.0) in probe  # a real 0 stays 0
    assert ([[1.0]], None) in probe
    # errors inside a range arrive as their text, for the table readers to refuse
    assert ([[1.0], ["#DIV/0!"], ["text"], ["#N/A"]],) in probe
    assert ([["#DIV/0!"]],) in probe  # a one-cell range argument is a range too


def test_scalar_error_argument_propagates(tmp_path, monkeypatch):
    calls = []
    real = engine_mod.worksheet_functions

    def fn(*args):
        calls.append(args)
        return 1.0

    monkeypatch.setattr(
        engine_mod,
        "worksheet_functions",
        lambda: {**real(), "CKT_PROBE": (fn, 1, 1, (False,), ("x",))},
    )
    wb = xlsxwriter.Workbook(str(tmp_path / "s.xlsx"))
    ws = wb.add_worksheet("S")
    ws.write_formula("A1", "=1/0")
    ws.write_formula("B1", "=CKT_PROBE(A1)")
    wb.close()
    pb = PreparedBook(tmp_path / "s.xlsx")
    pb.evaluate()
    assert calls == [] and str(pb.read("S!B1")) == "#DIV/0!"


def test_skipped_optional_argument_takes_the_documented_default(tmp_path):
    # CKT_SCAN's points default is 200 (README, "a 200-point impedance scan"); a skipped
    # points argument used to arrive as 0 and fail
    from books import PARTS

    wb = xlsxwriter.Workbook(str(tmp_path / "scan.xlsx"))
    ws = wb.add_worksheet("Net")
    for i, r in enumerate(PARTS):
        ws.write_row(i, 0, r)
    ws.write_dynamic_array_formula("H1:H1", '=CKT_SCAN(A1:E3,"out",10,1000,,)')
    wb.close()
    pb = PreparedBook(tmp_path / "scan.xlsx")
    pb.evaluate()
    table = pb.read("Net!H1")
    assert table[0] == ["freq_hz", "z_ohm", "angle_deg"] and len(table) == 201
    # R1 (in-out) with 'in' left open: |Z(out)| = R2 = 1 kΩ at every frequency (closed form)
    assert all(row[1] == pytest.approx(1000.0, rel=1e-9) for row in table[1:])


def test_written_book_keeps_the_users_formula(tmp_path, probe):
    src = _probe_book(tmp_path / "p.xlsx")
    recalc(src, tmp_path / "o.xlsx")
    import zipfile

    sheet = zipfile.ZipFile(tmp_path / "o.xlsx").read("xl/worksheets/sheet1.xml").decode()
    assert "CKT_PROBE(A1,,3)" in sheet and "OMITTED" not in sheet


def test_engine_panic_becomes_one_line(tmp_path):
    from books import divider_book

    pb = PreparedBook(divider_book(tmp_path / "d.xlsx"))
    eng = pb.engine
    assert isinstance(eng, FormualizerEngine)
    with pytest.raises(WorkbookError, match="outside the grid"):
        eng.set_value("Net", 99_999_999, 1, 1.0)  # checked before the engine sees it
    with pytest.raises(WorkbookError, match=r"formula engine failed setting .*PanicException"):
        eng._call("setting Net!R99999999C1", eng._book.set_value, "Net", 99_999_999, 1, 1.0)


def test_ctrl_c_inside_a_function_is_not_swallowed(tmp_path, monkeypatch):
    real = engine_mod.worksheet_functions

    def interrupted(*_a):
        raise KeyboardInterrupt

    monkeypatch.setattr(
        engine_mod,
        "worksheet_functions",
        lambda: {**real(), "CKT_PROBE": (interrupted, 0, 1, (False,), ("x",))},
    )
    wb = xlsxwriter.Workbook(str(tmp_path / "k.xlsx"))
    wb.add_worksheet("S").write_formula("A1", "=CKT_PROBE(1)")
    wb.close()
    pb = PreparedBook(tmp_path / "k.xlsx")
    with pytest.raises(KeyboardInterrupt):
        pb.evaluate()


def test_oversized_reference_is_refused_from_its_size(tmp_path, monkeypatch):
    from books import divider_book

    seen = []
    real_rows = engine_mod._range_rows
    monkeypatch.setattr(engine_mod, "_range_rows", lambda a: seen.append(len(a)) or real_rows(a))
    pb = PreparedBook(divider_book(tmp_path / "d.xlsx"), Limits(max_range_cells=14))
    pb.evaluate()
    assert pb.read("Vout_rms") == "ERROR: argument 1 (parts) covers 15 cells (limit 14)"
    assert 3 not in seen  # the 3-row parts range never reached the adapter


def test_whole_column_reference_is_sized_by_the_used_rows(tmp_path):
    from books import PARTS, SOURCES

    wb = xlsxwriter.Workbook(str(tmp_path / "c.xlsx"))
    ws = wb.add_worksheet("Net")
    for i, r in enumerate(PARTS):
        ws.write_row(i, 0, r)
    src = wb.add_worksheet("Src")
    for i, r in enumerate(SOURCES):
        src.write_row(i, 0, r)
    ws.write_formula("M1", '=CKT_RMS(A:E,Src!A:F,"out")')
    wb.close()
    pb = PreparedBook(tmp_path / "c.xlsx", Limits(max_range_cells=18))
    pb.evaluate()
    # 3 used rows × 5 (6) columns = 15 (18) cells ≤ 18: evaluated (divider: 5 V DC, 1 V peak at 50 Hz)
    assert pb.read("Net!M1") == pytest.approx((5.0**2 + 0.5) ** 0.5, rel=1e-12)
    pb = PreparedBook(tmp_path / "c.xlsx", Limits(max_range_cells=14))
    pb.evaluate()
    assert pb.read("Net!M1").startswith("ERROR: argument 1 (parts) covers 15 cells")
