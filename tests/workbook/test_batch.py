"""Batch runs: summary, failures recorded, resume, labels, processes, a Dask cluster."""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import openpyxl
import pytest
from books import divider_book

from xlfuncs.cli import main
from xlfuncs.errors import WorkbookError
from xlfuncs.workbook.batch import run_batch, sanitize_label


def _cases(path: Path, rows: list[list[str]]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows)
    return path


def _summary(d: Path) -> list[dict[str, str]]:
    with (d / "summary.csv").open(newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def _expected(r1: float, vdc: float) -> float:
    # divider R2/(R1+R2) with R2 = 1 kΩ on 10 V... DC vdc and a 2 V-peak 50 Hz tone
    k = 1000 / (r1 + 1000)
    return math.sqrt((k * vdc) ** 2 + (k * 2) ** 2 / 2)


CASES = [
    ["case", "R1_value", "Vdc"],
    ["base", "1k", "10"],
    ["high", "3k", "10"],
    ["bad value", "4.7q", "10"],
    ["", "2k", "5"],
    ["../../etc/passwd", "1k", "1"],
    ["CON", "1k", "2"],
]


@pytest.fixture
def setup(tmp_path):
    return (
        divider_book(tmp_path / "t.xlsx"),
        _cases(tmp_path / "cases.csv", CASES),
        tmp_path / "out",
    )


def test_summary_values_and_recorded_failure(setup):
    tpl, cases, out = setup
    rep = run_batch(tpl, cases, out, collect=["Vout_rms", "Spectrum"], books=True, progress=False)
    assert (rep.total, rep.done, rep.failed, rep.skipped) == (6, 6, 1, 0)
    rows = {r["case"]: r for r in _summary(out)}
    assert float(rows["base"]["Vout_rms"]) == pytest.approx(_expected(1000, 10), rel=1e-12)
    assert float(rows["high"]["Vout_rms"]) == pytest.approx(_expected(3000, 10), rel=1e-12)
    assert float(rows["case 4"]["Vout_rms"]) == pytest.approx(_expected(2000, 5), rel=1e-12)
    # a failing case: the error its outputs show goes into the summary; the batch goes on
    assert rows["bad value"]["status"] == "error"
    assert rows["bad value"]["error"].startswith(
        "Vout_rms: ERROR: parts row 2, column value: '4.7q'"
    )
    assert rows["bad value"]["Vout_rms"].startswith("ERROR: parts row 2")
    spec = json.loads(rows["base"]["Spectrum"])
    assert spec[0] == ["freq_hz", "peak", "rms", "phase_deg"] and spec[-1][0] == "total"
    x = openpyxl.load_workbook(out / "summary.xlsx")["summary"]
    assert [c.value for c in x[1]][:4] == ["case", "status", "error", "seconds"]
    assert x.max_row == 7


def test_case_labels_become_safe_file_names(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, books=True, progress=False)
    names = sorted(p.name for p in (out / "books").iterdir())
    assert names == sorted(
        ["base.xlsx", "high.xlsx", "bad_value.xlsx", "case_4.xlsx", "etc_passwd.xlsx", "_CON.xlsx"]
    )
    assert all(p.resolve().parent == (out / "books").resolve() for p in (out / "books").iterdir())
    ws = openpyxl.load_workbook(out / "books" / "high.xlsx", data_only=True)["Net"]
    assert ws["M1"].value == pytest.approx(_expected(3000, 10), rel=1e-12)


@pytest.mark.parametrize(
    ("label", "slug"),
    [
        ("a/b\\c", "a_b_c"),
        ("..", "case_3"),
        ("nul.txt", "_nul.txt"),
        ("LPT1", "_LPT1"),
        ("ok-name_1.2", "ok-name_1.2"),
        ("x" * 200, "x" * 80),
    ],
)
def test_sanitize_label(label, slug):
    assert sanitize_label(label, 3) == slug


def test_resume_skips_finished_cases_and_force_redoes_them(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    again = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert (again.done, again.skipped) == (1, 5)  # the failed case is tried again
    assert len(_summary(out)) == 6  # …and replaces its old line
    forced = run_batch(tpl, cases, out, collect=["Vout_rms"], force=True, progress=False)
    assert (forced.done, forced.skipped) == (6, 0) and len(_summary(out)) == 6


def test_interrupted_run_resumes_where_it_stopped(setup):
    tpl, cases, out = setup
    out.mkdir()
    # what an interrupted run leaves: the header and the lines already flushed
    with (out / "summary.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["case", "status", "error", "seconds", "Vout_rms"])
        w.writerow(["base", "ok", "", "0.01", "3.3"])
        w.writerow(["high", "ok", "", "0.01", "1.2"])
    rep = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert (rep.done, rep.skipped) == (4, 2)
    rows = _summary(out)
    assert [r["case"] for r in rows[:2]] == ["base", "high"] and rows[0]["Vout_rms"] == "3.3"


def test_changed_collect_list_needs_force(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    with pytest.raises(WorkbookError, match="other --collect names; use --force"):
        run_batch(tpl, cases, out, collect=["Spectrum"], progress=False)


def test_bad_case_column_is_named_before_any_work(tmp_path):
    tpl = divider_book(tmp_path / "t.xlsx")
    cases = _cases(tmp_path / "c.csv", [["case", "Net!M1"], ["a", "1"]])
    with pytest.raises(WorkbookError, match="holds a formula; set input cells only"):
        run_batch(tpl, cases, tmp_path / "o", progress=False)


def test_two_processes_give_the_same_summary(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out / "j1", collect=["Vout_rms"], progress=False)
    run_batch(tpl, cases, out / "j2", collect=["Vout_rms"], jobs=2, progress=False)

    def key(rows):
        return sorted((r["case"], r["status"], r["Vout_rms"]) for r in rows)

    assert key(_summary(out / "j1")) == key(_summary(out / "j2"))


def test_dask_cluster(setup):
    distributed = pytest.importorskip("distributed")
    tpl, cases, out = setup
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None
    ) as cluster:
        rep = run_batch(
            tpl,
            cases,
            out,
            collect=["Vout_rms"],
            cluster=cluster.scheduler_address,
            progress=False,
        )
    assert (rep.done, rep.failed) == (6, 1)
    rows = {r["case"]: r for r in _summary(out)}
    assert float(rows["high"]["Vout_rms"]) == pytest.approx(_expected(3000, 10), rel=1e-12)


def test_cli_batch(setup, capsys):
    tpl, cases, out = setup
    assert (
        main(
            [
                "batch",
                str(tpl),
                str(cases),
                "-o",
                str(out),
                "--collect",
                "Vout_rms",
                "--no-progress",
            ]
        )
        == 1
    )  # one case failed
    text = capsys.readouterr().out
    assert "6 cases run (1 failed), 0 already finished" in text and "cases/s" in text
