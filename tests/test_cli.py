"""The command line as a user runs it: tables, engineering notation, SI-prefixed arguments,
help texts, and one line (never a traceback) for every mistake."""

import math
import subprocess
import sys
from pathlib import Path

import pytest

from xlfuncs.cli import eng, main
from xlfuncs.cli.common import read_csv_table
from xlfuncs.units import parse_number

EX = Path(__file__).parent.parent / "examples"


def _num(text: str) -> float:
    return parse_number(text, unit=None, table="cli", row=None, column="out")


def test_solve_prints_per_frequency_table_and_totals(capsys):
    code = main(
        [
            "solve",
            str(EX / "demo_parts.csv"),
            str(EX / "demo_sources.csv"),
            "--options",
            str(EX / "demo_options.csv"),
            "--target",
            "C_bank",
        ]
    )
    out = capsys.readouterr().out
    assert code == 0
    lines = out.splitlines()
    assert lines[1].split() == ["freq_hz", "peak", "rms", "phase_deg"]
    assert lines[2].split() == ["Hz", "A", "A", "°"]  # units under the header
    freqs = [_num(r.split()[0]) for r in lines[4:9]]
    assert freqs == [50.0, 250.0, 350.0, 550.0, 650.0]
    assert lines[9].split()[0] == "total"
    assert "THD" in out and "true peak" in out
    rms = next(r for r in lines if r.startswith("total RMS"))
    assert rms.split()[-1].endswith("A")  # engineering notation with the unit


def test_report_power_balance_closes(capsys):
    assert (
        main(
            [
                "report",
                str(EX / "demo_parts.csv"),
                str(EX / "demo_sources.csv"),
                "--options",
                str(EX / "demo_options.csv"),
            ]
        )
        == 0
    )
    out = capsys.readouterr().out
    bal = next(r for r in out.splitlines() if r.startswith("balance"))
    assert abs(_num(bal.split()[-1])) < 1e-6


@pytest.mark.parametrize(
    ("value", "unit", "text"),
    [
        (20620.0, "A", "20.62 kA"),
        (1.2e-6, "F", "1.2 µF"),
        (0.5, "", "500m"),
        (999.96, "V", "1 kV"),  # rounds up to the next prefix
        (-3.3e-9, "s", "-3.3 ns"),
        (0.0, "W", "0 W"),
        (1.0e-18, "A", "1.000e-18 A"),  # beyond the prefixes: exponent form
        (2.062e4, "", "20.62k"),
        (123456.0, "Hz", "123.5 kHz"),
    ],
)
def test_engineering_notation(value, unit, text):
    assert eng(value, unit) == text


def test_engineering_notation_round_trips_through_the_tables_parser():
    # what the CLI prints, the tables read back (4 significant digits)
    for k in range(-40, 40):
        x = 1.2345678 * 10 ** (k / 3)
        assert _num(eng(x)) == pytest.approx(x, rel=5e-4)


def test_bad_input_is_one_line_on_stderr(tmp_path, capsys):
    bad = tmp_path / "parts.csv"
    bad.write_text("name,kind,from,to,value\nR1,R,a,GND,4.7q\n", encoding="utf-8")
    code = main(
        [
            "solve",
            str(bad),
            str(EX / "demo_sources.csv"),
            "--options",
            str(EX / "demo_options.csv"),
            "--target",
            "R1",
        ]
    )
    err = capsys.readouterr().err
    assert code == 2
    assert (
        err
        == f"xlfuncs: error: {bad}: parts row 2, column value: '4.7q' — unknown unit prefix 'q' "
        "(use f p n u µ m k M G T)\n"
    )


def test_missing_file_is_one_line(capsys):
    assert main(["report", "nope.csv", "nope2.csv"]) == 2
    assert capsys.readouterr().err.startswith("xlfuncs: error: cannot read 'nope.csv'")


@pytest.mark.parametrize("args", [["--version"]])
def test_entry_point_runs_as_module(args):
    r = subprocess.run([sys.executable, "-m", "xlfuncs", *args], capture_output=True, text=True)
    assert r.returncode == 0 and r.stdout.startswith("xlfuncs ")


SCAN = [
    "scan",
    str(EX / "demo_parts.csv"),
    "--node",
    "bus",
    "--sources",
    str(EX / "demo_sources.csv"),
    "--options",
    str(EX / "demo_options.csv"),
]


def test_scan_finds_the_demo_resonance(capsys):
    assert main([*SCAN, "--f-start", "50", "--f-stop", "2k", "--points", "400"]) == 0
    rows = [r.split() for r in capsys.readouterr().out.splitlines()[3:]]
    f = [_num(r[0]) for r in rows]
    z = [_num(r[1]) for r in rows]
    # the demo's parallel resonance sits near h = √(S_sc/Q_cap) = √(20 MVA/0.2 Mvar) = 10
    # (rule of thumb, common practice); the load resistance damps and shifts it slightly
    f_peak = f[z.index(max(z))]
    assert 400 < f_peak < 600
    assert len(rows) == 400 and f[0] == 50 and f[-1] == 2000  # --f-stop 2k = 2000 Hz


def test_scan_points_default_matches_the_worksheet_function(capsys):
    # CKT_SCAN spills 200 points by default (README); the command line does the same
    assert main([*SCAN, "--f-start", "10", "--f-stop", "5 kHz"]) == 0
    assert len(capsys.readouterr().out.splitlines()) == 3 + 200


def test_scan_without_sources_warns(capsys):
    parts = str(EX / "demo_parts.csv")
    args = ["scan", parts, "--node", "bus", "--f-start", "50", "--f-stop", "1k", "--points", "3"]
    assert main([*args, "--options", str(EX / "demo_options.csv")]) == 0
    err = capsys.readouterr().err
    assert err.startswith("xlfuncs: warning: scan without --sources:") and err.count("\n") == 1


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--f-start", "5q", "--f-stop", "1k"], "argument --f-start: unknown unit prefix 'q'"),
        (["--f-start", "5 kV", "--f-stop", "1k"], "unit 'V' does not fit here; expected Hz"),
        (["--f-start", "5", "--f-stop", "1k", "--points", "2.5"], "expected a whole number"),
        (["--f-start", "5"], "the following arguments are required: --f-stop"),
    ],
)
def test_usage_errors_are_one_line(capsys, args, message):
    with pytest.raises(SystemExit) as exc:
        main(["scan", str(EX / "demo_parts.csv"), "--node", "bus", *args])
    assert exc.value.code == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("xlfuncs: error: ") and message in err, err


def test_every_argument_has_a_help_text_with_an_example():
    from xlfuncs.cli import _parser

    ap = _parser()
    sub = next(a for a in ap._actions if a.__class__.__name__ == "_SubParsersAction")
    parsers = dict(sub.choices)
    for name, parser in sub.choices.items():  # subcommands of subcommands (duty …)
        for a in parser._actions:
            if a.__class__.__name__ == "_SubParsersAction":
                parsers.update({f"{name} {k}": v for k, v in a.choices.items()})
    for name, parser in parsers.items():
        for action in parser._actions:
            if action.__class__.__name__ == "_SubParsersAction":
                continue
            if action.dest == "help":
                continue
            text = action.help or ""
            assert text, f"{name} {action.dest}: no help text"
            flag = action.option_strings and action.nargs != 0
            if flag or not action.option_strings:
                assert "e.g." in text, f"{name} {action.dest}: no example in {text!r}"


def test_a_huge_tone_is_one_line(tmp_path, capsys):
    parts = tmp_path / "p.csv"
    parts.write_text("name,kind,from,to,value\nR1,R,in,out,1k\nC1,C,out,GND,1u\n")
    src = tmp_path / "s.csv"
    src.write_text("name,kind,from,to,freq_hz,peak\nVs,V,in,GND,1e308,1\n")
    assert main(["solve", str(parts), str(src), "--target", "out"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("xlfuncs: error: ")
    # the core refuses the tone itself (row, column), and the CLI names the file holding it
    assert str(src) in err and "sources row 2, column freq_hz" in err


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("name;kind;from;to;value\nR1;R;a;GND;1k\n", "semicolon-separated? the header"),
        ("name,kind\n" + "x" * 131_073 + ",R\n", "row 2: unreadable CSV (field larger than"),
    ],
)
def test_table_files_with_the_wrong_shape(tmp_path, capsys, content, message):
    p = tmp_path / "parts.csv"
    p.write_text(content)
    assert main(["report", str(p), str(EX / "demo_sources.csv")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and message in err, err


def test_csv_table_as_a_worksheet_delivers_it(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text('a,b\n1,\n2.5e3,"x,y"\n')
    assert read_csv_table(p) == [["a", "b"], [1.0, None], [2500.0, "x,y"]]
    assert math.isclose(read_csv_table(p)[2][0], 2500.0)


def test_plain_tables_keep_six_significant_digits():
    # commands that parse their own output keep the %.6g layout unless they ask for units
    from xlfuncs.cli import format_table

    assert (
        format_table([["a", "bb"], [1.23456789, 2e4]])
        == "a        bb   \n-------  -----\n1.23457  20000"
    )


def test_frequency_and_duty_commands_take_si_prefixes(capsys):
    # the same numbers written with SI prefixes give the same output as written plainly
    base = [str(EX / "readme_parts.csv"), str(EX / "readme_sources.csv"), "--source", "Vs"]
    outs = []
    for stop in ("1000", "1k", "1 kHz"):
        assert main(["gain", *base, "--output", "out", "--f-start", "10", "--f-stop", stop]) == 0
        outs.append(capsys.readouterr().out)
    assert outs[0] == outs[1] == outs[2]
    for l_h, c_f in (("0.00001", "0.0001"), ("10u", "100u"), ("10 µH", "100 µF")):
        args = ["damping", "--l-h", l_h, "--c-f", c_f, "--v-in", "48", "--p-in", "200"]
        assert main(args) == 0
        outs.append(capsys.readouterr().out)
    assert outs[3] == outs[4] == outs[5]
    # RC low-pass noise over all frequencies is √(kT/C) (any circuits text; k exact, SI 2019)
    args = ["noise", *base[:2], "--node", "out", "--f-start", "0", "--f-stop", "inf"]
    assert main([*args, "--temperature-c", "25"]) == 0
    total = next(ln for ln in capsys.readouterr().out.splitlines() if ln.startswith("total"))
    assert float(total.split()[1]) == pytest.approx(
        math.sqrt(1.380649e-23 * 298.15 / 1e-6), rel=1e-6
    )


def test_a_closed_pipe_ends_the_command_quietly():
    # `xlfuncs … | head -1`: the reader goes away; no error line, the shell's status 141
    cmd = [sys.executable, "-m", "xlfuncs", "scan", str(EX / "readme_parts.csv"), "--node",
           "out", "--sources", str(EX / "readme_sources.csv"), "--f-start", "1", "--f-stop",
           "1e6", "--points", "100000"]  # fmt: skip
    p = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    assert p.stdout is not None and p.stderr is not None
    p.stdout.readline()
    p.stdout.close()
    err = p.stderr.read().decode()
    p.stderr.close()
    assert p.wait(timeout=120) == 141, err
    assert err == ""


def test_an_unquoted_decimal_comma_is_refused_not_dropped(tmp_path, capsys):
    # `1,5k` unquoted splits into two cells; the 5k must not vanish (R1 would read 1 Ω)
    parts = tmp_path / "p.csv"
    parts.write_text("name,kind,from,to,value\nR1,R,in,out,1,5k\nC1,C,out,GND,1u\n")
    assert main(["solve", str(parts), str(EX / "readme_sources.csv"), "--target", "out"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "row 2: 6 cells but the header has 5" in err
    # trailing empty cells (a spreadsheet's export) are fine
    parts.write_text("name,kind,from,to,value,,\nR1,R,in,out,1k,,\nC1,C,out,GND,1u\n")
    assert main(["solve", str(parts), str(EX / "readme_sources.csv"), "--target", "out"]) == 0


def test_a_zero_signal_keeps_its_table_and_says_what_is_undefined(capsys):
    args = ["solve", str(EX / "readme_parts.csv"), str(EX / "readme_sources.csv")]
    assert main([*args, "--target", "GND"]) == 0
    out = capsys.readouterr().out
    assert "crest factor  n/a" in out and "THD           n/a" in out
    assert main([*args, "--target", "out"]) == 0  # THD names the fundamental it used
    assert "of the fundamental 50 Hz (the lowest tone" in capsys.readouterr().out


def test_studies_that_zero_the_sources_warn_without_them(capsys):
    parts = str(EX / "readme_parts.csv")
    assert main(["poles", parts]) == 0
    err = capsys.readouterr().err
    assert err.startswith("xlfuncs: warning: poles without --sources")


def test_a_spectrum_beyond_the_tables_range_is_refused(tmp_path, capsys):
    sp = tmp_path / "s.csv"
    sp.write_text("order,pct\n1,100\n5,1e300\n")
    assert main(["duty", "xfmr", str(sp), "--p-ec", "0.08"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "spectrum row 3, column pct" in err
    sp.write_text("Order,PCT (%)\n1,100\n5,20\n")  # headers as every table reads them
    assert main(["duty", "xfmr", str(sp), "--p-ec", "0.08"]) == 0


def test_study_resolves_every_name_before_printing(capsys):
    pw = EX / "power"
    args = ["study", str(pw / "equipment.csv"), "--spectra", str(pw / "spectra.csv"),
            "--options", str(pw / "options.csv"), "--bus", "PCC"]  # fmt: skip
    for extra, where in ((["--neutral", "T9"], "argument --neutral: 'T9'"),
                         (["--item", "T9"], "argument --item: 'T9'")):  # fmt: skip
        assert main([*args, *extra]) == 2
        cap = capsys.readouterr()
        assert cap.out == "" and cap.err.count("\n") == 1 and where in cap.err
    assert main([*args[:-1], "PCX"]) == 2
    cap = capsys.readouterr()
    assert cap.out == "" and "argument bus: 'PCX'" in cap.err
