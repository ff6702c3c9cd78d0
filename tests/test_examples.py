"""The example scripts keep working (they are what a new user runs first)."""

from __future__ import annotations

import runpy
from pathlib import Path

EX = Path(__file__).parent.parent / "examples"


def test_api_example_runs_and_balances_power(capsys):
    runpy.run_path(str(EX / "api_example.py"), run_name="__main__")
    out = capsys.readouterr().out
    assert "parallel resonance at" in out and "rule of thumb" in out
    assert "Screening calculation" in out


def test_demo_script_recalculates_the_plant_template(tmp_path, capsys, monkeypatch):
    mod = runpy.run_path(str(EX / "demo.py"))
    monkeypatch.setitem(mod["main"].__globals__, "OUT", tmp_path / "demo.xlsx")
    monkeypatch.setitem(mod["main"].__globals__, "ROOT", tmp_path)
    assert mod["main"]() == 0
    out = capsys.readouterr().out
    assert "DEMO DATA" in out and "overall:" in out and (tmp_path / "demo.xlsx").exists()
    assert "Bus voltage THD" in out and "IEEE Std 519-2014 Table 1" in out
