"""The worksheet edge as Excel and the headless engine deliver arguments: error cells,
skipped optional arguments, the function dialog, refusals that are cached.

Both front ends are exercised: xlwings' own conversion code (``xlwings_harness``) and a
workbook recalculated headlessly (built with openpyxl, read back with ``data_only``).
"""

from __future__ import annotations

import math

import openpyxl
import pytest
from xlwings_harness import COM_ERRORS, MISSING, call, one, xlwings_udfs

from xlfuncs.functions import FUNCTIONS, cache_clear, cache_info

# resistive divider, V(out) = 0.75·Vs at every frequency (common practice)
PARTS = [
    ["Name", "Kind", "From", "To", "Value (Ω)"],
    ["R1", "R", "in", "out", "1k"],
    ["R2", "R", "out", "GND", "3k"],
]
SOURCES = [
    ["name", "kind", "from", "to", "freq_hz", "peak"],
    ["Vs", "V", "in", "GND", 50.0, 4.0],
    ["Vs", "V", "in", "GND", 250.0, 1.0],
]
OPTIONS = [["fundamental_hz", 50.0]]
RMS_OUT = 0.75 * math.sqrt((4.0**2 + 1.0**2) / 2)  # sqrt(Σ (peak/√2)²), IEEE Std 1459-2010
ERROR_CELL = "the cell holds an Excel error"


@pytest.fixture(scope="module")
def udf():
    with xlwings_udfs() as ns:
        yield ns


def _with(table, row, col, value):
    out = [list(r) for r in table]
    out[row - 1][col - 1] = value
    return out


# ----------------------------------------------------------------------- error cells
def test_every_argument_reads_error_cells_as_text(udf):
    for name in FUNCTIONS:
        for arg in getattr(udf.module, name).__xlfunc__["args"]:
            assert arg["options"].get("err_to_str") is True, (name, arg["name"])
            assert "columns" not in arg["options"], (name, arg["name"])  # ours, not xlwings'


def test_a_row_of_error_cells_is_refused_not_dropped(udf):
    # Without err_to_str, xlwings turns every error cell into None: this row would be a
    # blank row, skipped by the parser, and the divider would lose R2 (V(out) = Vs).
    broken = [*PARTS[:2], [COM_ERRORS["#REF!"]] * 5, PARTS[2]]
    from xlwings import conversion

    assert conversion.read(None, broken, {"ndim": 2})[2] == [None] * 5  # xlwings' default
    out = one(udf, "CKT_RMS", broken, SOURCES, "out")
    assert out == f"ERROR: parts row 3, column Name: '#REF!' — {ERROR_CELL}"


@pytest.mark.parametrize("error", sorted(COM_ERRORS))
def test_error_cells_name_table_row_column_and_error(udf, error):
    code = COM_ERRORS[error]  # as COM delivers it; xlwings maps 7 of these to text
    parts = _with(PARTS, 3, 5, code)
    assert one(udf, "CKT_RMS", parts, SOURCES, "out") == (
        f"ERROR: parts row 3, column Value (Ω): {error!r} — {ERROR_CELL}"
    )
    sources = _with(SOURCES, 2, 6, code)
    assert one(udf, "CKT_PEAK", PARTS, sources, "out") == (
        f"ERROR: sources row 2, column peak: {error!r} — {ERROR_CELL}"
    )
    opts = _with(OPTIONS, 1, 2, code)  # key | value, no header row
    assert one(udf, "CKT_THD", PARTS, SOURCES, "out", MISSING, opts) == (
        f"ERROR: options row 1, column value: {error!r} — {ERROR_CELL}"
    )
    assert one(udf, "CKT_RMS", PARTS, SOURCES, code) == (
        f"ERROR: argument target: {error!r} — {ERROR_CELL}"
    )
    freqs = [[50.0, code]]  # a range without a header: columns are numbered
    out = call(udf, "CKT_IMPEDANCE", PARTS, "out", freqs)
    assert out == [[f"ERROR: freqs row 1, column 2: {error!r} — {ERROR_CELL}"]]


def test_an_error_cell_in_a_scalar_argument_is_not_the_default(udf):
    # without err_to_str an error cell given as `quantity` arrived as None: the default
    out = one(udf, "CKT_RMS", PARTS, SOURCES, "R1", COM_ERRORS["#N/A"])
    assert out == f"ERROR: argument quantity: '#N/A' — {ERROR_CELL}"


def test_error_text_is_refused_the_same_way_from_any_front_end():
    # the headless engine delivers error cells as their text (CONTRACTS §4)
    fd = FUNCTIONS["CKT_RMS"]
    assert fd.call(_with(PARTS, 2, 3, "#DIV/0!"), SOURCES, "out") == (
        f"ERROR: parts row 2, column From: '#DIV/0!' — {ERROR_CELL}"
    )

    # and a formula engine's error objects with an Excel error code
    class EngineError:
        code = "#CALC!"

    assert fd.call(PARTS, _with(SOURCES, 3, 5, EngineError()), "out") == (
        f"ERROR: sources row 3, column freq_hz: '#CALC!' — {ERROR_CELL}"
    )


def _headless(tmp_path, formulas, cells=()):
    """Recalculate a book holding the divider tables and ``formulas`` ({cell: formula});
    return {cell: value} as openpyxl reads the result."""
    from xlfuncs.workbook import recalc

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Net"
    for i, row in enumerate(PARTS, start=1):
        for j, v in enumerate(row, start=1):
            ws.cell(i, j, v)
    for i, row in enumerate(SOURCES, start=10):
        for j, v in enumerate(row, start=1):
            ws.cell(i, j, v)
    ws["H1"], ws["I1"] = OPTIONS[0]
    for cell, value in cells:
        ws[cell] = value
    for cell, f in formulas.items():
        ws[cell] = f
    path = tmp_path / "edge.xlsx"
    wb.save(path)
    out = tmp_path / "edge.out.xlsx"
    recalc(path, out)
    got = openpyxl.load_workbook(out, data_only=True)["Net"]
    return {cell: got[cell].value for cell in formulas}


def test_headless_error_cell_gives_the_same_message(tmp_path, udf):
    got = _headless(tmp_path, {"M1": '=CKT_RMS(A1:E3,A10:F12,"out")'}, [("E3", "=1/0")])
    expected = one(udf, "CKT_RMS", _with(PARTS, 3, 5, COM_ERRORS["#DIV/0!"]), SOURCES, "out")
    assert expected == f"ERROR: parts row 3, column Value (Ω): '#DIV/0!' — {ERROR_CELL}"
    if got["M1"] == "#DIV/0!":
        pytest.xfail(
            "the engine adapter still returns the argument's error instead of delivering "
            "the error cell as text (CONTRACTS §4, workbooks stream)"
        )
    assert got["M1"] == expected


# ------------------------------------------------------------- skipped optional args
# (call with an argument skipped in the middle, call with that argument's default given)
SKIPPED = [
    (("CKT_RMS", PARTS, SOURCES, "out", None, OPTIONS), ("V",)),
    (("CKT_RMS", PARTS, SOURCES, "R1", None, OPTIONS), ("I",)),
    (("CKT_WAVE", PARTS, SOURCES, "out", None, None, OPTIONS), ("V", 200.0)),
    (("CKT_SCAN", PARTS, "out", 10.0, 1e4, None, OPTIONS, SOURCES), (200.0,)),
    (
        ("CKT_I519", PARTS, SOURCES, "R1", 7500.0, 125.0, 13.8, None, OPTIONS),
        (2014.0,),
    ),
    (("CKT_I519_LIMIT", 11.0, 75.0, None, None), (13.8, 2014.0)),
    (("CKT_DRIVE", "Id", "GND", "bus", 100.0, None, None, None, None), (6.0, 25.0, 0.0)),
    (("CKT_TOLERANCE", PARTS, SOURCES, "out", None, 64.0, None, OPTIONS), ("rms", "V")),
]


def _fill(args, defaults):
    it = iter(defaults)
    return tuple(next(it) if a is None and i < len(args) - 1 else a for i, a in enumerate(args))


@pytest.mark.parametrize(("call_args", "defaults"), SKIPPED, ids=lambda v: str(v[0])[:14])
def test_a_skipped_argument_is_its_default(udf, call_args, defaults):
    name, *args = call_args
    explicit = _fill(tuple(args), defaults)
    assert explicit != tuple(args)
    cache_clear()  # both calls run the function itself
    want = FUNCTIONS[name].call(*explicit)
    assert not (isinstance(want, str) and want.startswith("ERROR")), want
    cache_clear()
    assert FUNCTIONS[name].call(*args) == want
    cache_clear()
    # through xlwings: Excel passes a skipped argument as "missing" or as an empty cell
    xl_args = [MISSING if a is None else a for a in args]
    xl_explicit = [MISSING if a is None else a for a in explicit]
    assert call(udf, name, *xl_args) == call(udf, name, *xl_explicit)


def test_headless_skipped_argument_is_its_default(tmp_path):
    got = _headless(
        tmp_path,
        {
            "M1": '=CKT_RMS(A1:E3,A10:F12,"out",,H1:I1)',
            "M2": '=CKT_RMS(A1:E3,A10:F12,"out","V",H1:I1)',
        },
    )
    assert got["M2"] == pytest.approx(RMS_OUT, rel=1e-12)
    if got["M1"] == "ERROR: argument quantity: 0.0 — expected V or I":
        pytest.xfail(
            "the engine adapter still passes a skipped argument as 0.0, not None "
            "(CONTRACTS §4, workbooks stream)"
        )
    assert got["M1"] == pytest.approx(RMS_OUT, rel=1e-12)


def test_optional_arguments_default_to_none():
    for name, fd in FUNCTIONS.items():
        import inspect

        sig = inspect.signature(fd.call)
        for a, _doc, optional in fd.args:
            if optional:
                assert sig.parameters[a].default is None, (name, a)


# ------------------------------------------------------------------ function dialog
EXPENSIVE = {"CKT_TOLERANCE", "CKT_SCAN", "CKT_IMPEDANCE", "CKT_WAVE", "CKT_REPORT", "CKT_NODES"}


def test_expensive_functions_do_not_run_in_the_function_dialog(udf):
    import io
    import types

    buf = io.StringIO()
    udf.udfs.generate_vba_wrapper(
        "xlfuncs.worksheet", udf.module, buf, types.SimpleNamespace(Name="Calc.xlsm")
    )
    vba = buf.getvalue()
    for name in FUNCTIONS:
        body = vba.split(f"Function {name}(", 1)[1].split("End Function", 1)[0]
        skips = 'CommandBars("Standard").Controls(1).Enabled) Then Exit Function' in body
        assert skips == (not FUNCTIONS[name].call_in_wizard), name
    for name in EXPENSIVE:
        assert not FUNCTIONS[name].call_in_wizard, name


# ------------------------------------------------------------------ cached refusals
def test_a_table_that_fails_to_parse_is_parsed_once(monkeypatch):
    from xlfuncs import circuit as circuit_module

    calls = []
    real = circuit_module.Circuit.from_tables.__func__

    def counting(cls, *args, **kwargs):
        calls.append(1)
        return real(cls, *args, **kwargs)

    monkeypatch.setattr(circuit_module.Circuit, "from_tables", classmethod(counting))
    cache_clear()
    bad = _with(PARTS, 3, 5, "4.7q")
    outs = [
        FUNCTIONS["CKT_RMS"].call(bad, SOURCES, "out"),
        FUNCTIONS["CKT_PEAK"].call(bad, SOURCES, "in"),
        FUNCTIONS["CKT_SOLVE"].call(bad, SOURCES, "R1"),
        FUNCTIONS["CKT_REPORT"].call(bad, SOURCES),
        FUNCTIONS["CKT_RMS"].call(bad, SOURCES, "out"),
    ]
    assert len(calls) == 1
    assert set(outs) == {outs[0]}
    assert outs[0].startswith("ERROR: parts row 3, column value: '4.7q'")
    assert cache_info()["results"].hits == 1  # the repeated CKT_RMS
