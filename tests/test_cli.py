"""The command line as a user runs it."""

import subprocess
import sys
from pathlib import Path

import pytest

from xlfuncs.cli import main

EX = Path(__file__).parent.parent / "examples"


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
    freqs = [float(r.split()[0]) for r in lines[3:8]]
    assert freqs == [50.0, 250.0, 350.0, 550.0, 650.0]
    assert lines[8].split()[0] == "total"
    assert "THD" in out and "true peak" in out


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
    assert abs(float(bal.split()[-1])) < 1e-6


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
        == "xlfuncs: error: parts row 2, column value: '4.7q' — unknown unit prefix 'q' (use f p n u µ m k M G T)\n"
    )


def test_missing_file_is_one_line(capsys):
    assert main(["report", "nope.csv", "nope2.csv"]) == 2
    assert capsys.readouterr().err.startswith("xlfuncs: error: cannot read 'nope.csv'")


@pytest.mark.parametrize("args", [["--version"]])
def test_entry_point_runs_as_module(args):
    r = subprocess.run([sys.executable, "-m", "xlfuncs", *args], capture_output=True, text=True)
    assert r.returncode == 0 and r.stdout.startswith("xlfuncs ")


def test_scan_finds_the_demo_resonance(capsys):
    assert (
        main(
            [
                "scan",
                str(EX / "demo_parts.csv"),
                "--node",
                "bus",
                "--sources",
                str(EX / "demo_sources.csv"),
                "--f-start",
                "50",
                "--f-stop",
                "2000",
                "--points",
                "400",
                "--options",
                str(EX / "demo_options.csv"),
            ]
        )
        == 0
    )
    rows = [r.split() for r in capsys.readouterr().out.splitlines()[2:]]
    f = [float(r[0]) for r in rows]
    z = [float(r[1]) for r in rows]
    # the demo's parallel resonance sits near h = √(S_sc/Q_cap) = √(20 MVA/0.2 Mvar) = 10
    # (rule of thumb, common practice); the load resistance damps and shifts it slightly
    f_peak = f[z.index(max(z))]
    assert 400 < f_peak < 600
