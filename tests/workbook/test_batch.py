"""Batch runs: summary, failures recorded, resume, labels, processes, a Dask cluster — and
the record under faults: torn and damaged lines, a killed run, a second batch, Ctrl-C."""

from __future__ import annotations

import csv
import json
import math
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import openpyxl
import pytest
from books import clean_divider_book, divider_book, rewrite_zip
from hypothesis import given, settings
from hypothesis import strategies as st

from xlfuncs.cli import main
from xlfuncs.errors import WorkbookError
from xlfuncs.workbook import batch as batch_mod
from xlfuncs.workbook.batch import BatchInterrupted, run_batch, sanitize_label


def _cases(path: Path, rows: list[list[str]]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows)
    return path


def _summary(d: Path) -> list[dict[str, str]]:
    with (d / "summary.csv").open(newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def _expected(r1: float, vdc: float) -> float:
    # divider R2/(R1+R2) with R2 = 1 kΩ: DC vdc and a 2 V-peak 50 Hz tone (closed form)
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


@pytest.fixture(scope="module")
def clean_tpl(tmp_path_factory):
    return clean_divider_book(tmp_path_factory.mktemp("tpl") / "t.xlsx", validate=False)


@pytest.fixture
def setup(tmp_path, clean_tpl):
    return clean_tpl, _cases(tmp_path / "cases.csv", CASES), tmp_path / "out"


def test_summary_values_and_recorded_failure(setup):
    tpl, cases, out = setup
    rep = run_batch(tpl, cases, out, collect=["Vout_rms", "Net!M1"], books=True, progress=False)
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
    assert "2 formula cells hold errors: Net!M1: ERROR: parts row 2" in rows["bad value"]["error"]
    x = openpyxl.load_workbook(out / "summary.xlsx")["summary"]
    assert [c.value for c in x[1]][:4] == ["case", "status", "error", "seconds"]
    assert x.max_row == 7
    assert [r["case"] for r in _summary(out)] == [
        "base", "high", "bad value", "case 4", "../../etc/passwd", "CON"
    ]  # fmt: skip


def test_spilled_output_is_a_json_table(tmp_path):
    tpl = divider_book(tmp_path / "d.xlsx")
    cases = _cases(tmp_path / "c.csv", [["case", "R1_value"], ["a", "1k"]])
    run_batch(tpl, cases, tmp_path / "o", collect=["Spectrum"], progress=False)
    (row,) = _summary(tmp_path / "o")
    spec = json.loads(row["Spectrum"])
    assert spec[0] == ["freq_hz", "peak", "rms", "phase_deg"] and spec[-1][0] == "total"


def test_a_case_is_ok_only_when_no_formula_cell_holds_an_error(tmp_path):
    # the divider book holds deliberate errors (1/0, a blocked spill, an unknown node):
    # without --collect every case still fails, naming the count and the first cells
    tpl = divider_book(tmp_path / "d.xlsx")
    cases = _cases(tmp_path / "c.csv", [["case", "R1_value"], ["a", "1k"]])
    rep = run_batch(tpl, cases, tmp_path / "o", progress=False)
    assert (rep.done, rep.failed) == (1, 1)
    (row,) = _summary(tmp_path / "o")
    assert row["status"] == "error"
    assert row["error"] == (
        "4 formula cells hold errors: Net!P1: #SPILL!, Net!M5: #DIV/0!, Net!M6: #DIV/0!, …"
    )


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


def test_control_characters_in_labels(tmp_path, clean_tpl):
    cases = tmp_path / "c.csv"
    cases.write_bytes(b"case,R1_value\nnul\x00label,1k\nbell\x07tab\t,2k\n")
    rep = run_batch(clean_tpl, cases, tmp_path / "o", books=True, progress=False)
    assert (rep.done, rep.failed) == (2, 0)
    x = openpyxl.load_workbook(tmp_path / "o" / "summary.xlsx")["summary"]
    assert [x.cell(row=r, column=1).value for r in (2, 3)] == ["nul_label", "bell_tab"]


def test_each_case_starts_from_the_template(tmp_path, clean_tpl):
    # a blank cell is the template's value, whatever ran before (Vdc 10 V in the template)
    rows = [["case", "R1_value", "Vdc"], ["A", "3k", "20"], ["B", "", "20"], ["C", "", ""]]
    cases = _cases(tmp_path / "c.csv", rows)
    for jobs in (1, 2):
        out = tmp_path / f"j{jobs}"
        run_batch(clean_tpl, cases, out, jobs=jobs, chunk=2, collect=["Vout_rms"], progress=False)
        got = {r["case"]: float(r["Vout_rms"]) for r in _summary(out)}
        assert got["B"] == pytest.approx(_expected(1000, 20), rel=1e-12), jobs
        assert got["C"] == pytest.approx(_expected(1000, 10), rel=1e-12), jobs


@settings(max_examples=25, deadline=None)
@given(
    st.lists(
        st.tuples(st.sampled_from([None, "1k", "3k", "470"]), st.sampled_from([None, "5", "-2"])),
        min_size=1,
        max_size=5,
    )
)
def test_any_order_of_cases_gives_each_its_own_result(clean_tpl, seq):
    pb = batch_mod._prepared(str(clean_tpl))
    for r1, vdc in seq:
        sets = {k: v for k, v in (("R1_value", r1), ("Vdc", vdc)) if v is not None}
        pb.evaluate({k: batch_mod.parse_value(v) for k, v in sets.items()})
        ohms = {"1k": 1000.0, "3k": 3000.0, "470": 470.0}[r1 or "1k"]
        assert pb.read("Vout_rms") == pytest.approx(_expected(ohms, float(vdc or 10)), rel=1e-12)


def test_resume_skips_finished_cases_and_force_redoes_them(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    again = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert (again.done, again.skipped) == (1, 5)  # the failed case is tried again
    assert len(_summary(out)) == 6  # …and replaces its old line
    forced = run_batch(tpl, cases, out, collect=["Vout_rms"], force=True, progress=False)
    assert (forced.done, forced.skipped) == (6, 0) and len(_summary(out)) == 6


def test_an_edited_case_or_template_runs_again(setup, tmp_path):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    edited = [r[:] for r in CASES]
    edited[2][1] = "2k"  # "high" now has R1 = 2 kΩ
    _cases(cases, edited)
    rep = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert rep.done == 2  # "high" (changed) and "bad value" (failed before)
    rows = {r["case"]: r for r in _summary(out)}
    assert float(rows["high"]["Vout_rms"]) == pytest.approx(_expected(2000, 10), rel=1e-12)
    same = tmp_path / "t2.xlsx"
    same.write_bytes(Path(tpl).read_bytes())  # the same template elsewhere: results hold
    assert run_batch(same, cases, out, collect=["Vout_rms"], progress=False).done == 1
    changed = rewrite_zip(tpl, tmp_path / "t3.xlsx", {"docProps/app.xml": "<Properties/>"})
    assert run_batch(changed, cases, out, collect=["Vout_rms"], progress=False).done == 6


def _results(d: Path) -> list[tuple[str, ...]]:
    """The summary without its timings: what must come out the same."""
    return [(r["case"], r["status"], r["error"], r["Vout_rms"]) for r in _summary(d)]


def _clean_rows(tpl: Path, cases: Path, d: Path) -> list[tuple[str, ...]]:
    run_batch(tpl, cases, d, collect=["Vout_rms"], progress=False)
    return _results(d)


@pytest.fixture(scope="module")
def torn_setup(tmp_path_factory, clean_tpl):
    d = tmp_path_factory.mktemp("torn")
    rows = [["case", "R1_value"]] + [[f"c{k}", f"{k}00"] for k in range(1, 13)]
    cases = _cases(d / "c.csv", rows)
    clean = _clean_rows(clean_tpl, cases, d / "clean")
    return clean_tpl, cases, clean, (d / "clean" / "summary.journal").read_bytes()


@settings(max_examples=30, deadline=None)
@given(cut=st.floats(0.0, 1.0), extra=st.binary(max_size=12))
def test_a_torn_or_damaged_tail_is_detected_and_redone(torn_setup, tmp_path_factory, cut, extra):
    # a full disk or a power cut leaves any prefix of the journal, maybe with garbage
    tpl, cases, clean, journal = torn_setup
    d = tmp_path_factory.mktemp("cut")
    (d / "summary.journal").write_bytes(journal[: int(cut * len(journal))] + extra)
    run_batch(tpl, cases, d, collect=["Vout_rms"], progress=False)
    assert _results(d) == clean  # every case once, every value to the last digit
    # and what was appended after the torn tail is all complete lines now
    lines = (d / "summary.journal").read_bytes().splitlines(keepends=True)
    assert all(batch_mod._decode(line) is not None for line in lines)


def test_torn_label_that_prefixes_another(torn_setup, tmp_path):
    # the record of c10 cut right after its label "c1": c10 runs again, c1 keeps its row
    tpl, cases, clean, journal = torn_setup
    at = journal.index(b'{"case":"c10"') + len(b'{"case":"c1')
    (tmp_path / "summary.journal").write_bytes(journal[:at])
    rep = run_batch(tpl, cases, tmp_path, collect=["Vout_rms"], progress=False)
    assert rep.dropped == 1 and rep.done == 3  # c10, c11, c12
    assert _results(tmp_path) == clean


def test_a_damaged_line_mid_file_reruns_that_case_only(torn_setup, tmp_path):
    tpl, cases, clean, journal = torn_setup
    lines = journal.splitlines(keepends=True)
    line = bytearray(lines[4])
    i = line.index(b'"Vout_rms":') + 12
    line[i] = ord("7") if line[i] != ord("7") else ord("3")  # one digit of a value changed
    lines[4] = bytes(line)
    (tmp_path / "summary.journal").write_bytes(b"".join(lines))
    rep = run_batch(tpl, cases, tmp_path, collect=["Vout_rms"], progress=False)
    assert (rep.dropped, rep.done, rep.skipped) == (1, 1, 11)
    assert _results(tmp_path) == clean


def test_changed_collect_list_needs_force(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    with pytest.raises(WorkbookError, match="other --collect names; use --force"):
        run_batch(tpl, cases, out, collect=["Net!M2"], progress=False)


def test_a_summary_without_its_journal_is_not_overwritten(setup):
    tpl, cases, out = setup
    out.mkdir()
    (out / "summary.csv").write_text("case,status\nmine,ok\n")
    with pytest.raises(WorkbookError, match=r"without its summary\.journal"):
        run_batch(tpl, cases, out, progress=False)
    assert (out / "summary.csv").read_text() == "case,status\nmine,ok\n"


def test_a_second_batch_on_the_same_directory_is_refused(setup):
    tpl, cases, out = setup
    out.mkdir()
    busy = pytest.raises(WorkbookError, match="another batch is writing to this directory")
    with batch_mod._locked(out), busy:  # as another process holding the directory
        run_batch(tpl, cases, out, progress=False)
    assert run_batch(tpl, cases, out, progress=False).done == 6  # free again


def test_resume_de_duplicates(setup):
    tpl, cases, out = setup
    run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    journal = (out / "summary.journal").read_bytes()
    head, *records = journal.splitlines(keepends=True)
    (out / "summary.journal").write_bytes(head + b"".join(records) * 2)  # every case twice
    rep = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert [r["case"] for r in _summary(out)] == [c[0] or "case 4" for c in CASES[1:]]
    assert rep.skipped == 5


def test_interrupted_run_keeps_every_finished_case(setup, monkeypatch):
    tpl, cases, out = setup
    real = batch_mod.run_case
    calls = []

    def interrupted_after_two(*a, **k):
        calls.append(1)
        if len(calls) == 3:
            raise KeyboardInterrupt
        return real(*a, **k)

    monkeypatch.setattr(batch_mod, "run_case", interrupted_after_two)
    with pytest.raises(BatchInterrupted) as exc:
        run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert exc.value.report.done == 2
    assert [r["case"] for r in _summary(out)] == ["base", "high"]  # consistent, complete
    monkeypatch.setattr(batch_mod, "run_case", real)
    rep = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert (rep.done, rep.skipped) == (4, 2) and len(_summary(out)) == 6


def test_bad_case_columns_are_named_before_any_work(tmp_path, clean_tpl):
    cases = _cases(tmp_path / "c.csv", [["case", "Net!M1"], ["a", "1"]])
    with pytest.raises(WorkbookError, match="holds a formula; set input cells only"):
        run_batch(clean_tpl, cases, tmp_path / "o", progress=False)
    cases = _cases(tmp_path / "c.csv", [["case", "R1_valu", "Vd", "stepz"], ["a", "1", "2", "3"]])
    with pytest.raises(WorkbookError) as exc:
        run_batch(clean_tpl, cases, tmp_path / "o", progress=False)
    assert str(exc.value) == (
        f"{cases} (row 1): 3 columns match no input of {clean_tpl}: 'R1_valu' (did you mean "
        "'R1_value'?), 'Vd' (did you mean 'Vdc'?), 'stepz' (did you mean 'steps'?); inputs: "
        "mode, R1_value, steps, Vdc"
    )
    assert not (tmp_path / "o").exists()


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("case;R1_value\na;1k\n", "semicolon-separated? the header 'case;R1_value' is one column"),
        ("case,R1_value\na," + "9" * 131_073 + "\n", "(row 2): unreadable CSV (field larger"),
        ("case,R1_value\na,1,2\n", "row 2): 3 cells but 2 headers"),
        ("case,R1_value,r1_value\na,1,2\n", "columns 2 and 3 both set 'r1_value'"),
    ],
)
def test_cases_file_problems_are_one_line(tmp_path, clean_tpl, content, message):
    p = tmp_path / "c.csv"
    p.write_text(content, encoding="utf-8")
    with pytest.raises(WorkbookError) as exc:
        run_batch(clean_tpl, p, tmp_path / "o", progress=False)
    assert message in str(exc.value) and "\n" not in str(exc.value)


def test_engine_panic_address_is_refused_before_any_work(tmp_path, clean_tpl, capsys):
    cases = _cases(tmp_path / "c.csv", [["case", "Net!A99999999"], ["a", "1"]])
    assert main(["batch", str(clean_tpl), str(cases), "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "outside the sheet (rows 1…1048576" in err


def test_output_directory_problems(tmp_path, clean_tpl, capsys):
    cases = _cases(tmp_path / "c.csv", CASES)
    (tmp_path / "f").write_text("x")
    for out, message in (
        (tmp_path / "f", "exists and is a file; -o needs a directory"),
        (tmp_path / "f" / "sub", "is a file, not a directory"),
    ):
        assert main(["batch", str(clean_tpl), str(cases), "-o", str(out)]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and message in err, err


def test_unwritable_output_directory(tmp_path, clean_tpl, capsys, monkeypatch):
    cases = _cases(tmp_path / "c.csv", CASES)
    if os.geteuid() == 0:  # permissions do not stop root: fail the directory creation itself
        real_mkdir = Path.mkdir

        def refuse(self, *a, **k):
            if self.name == "out":
                raise PermissionError(13, "Permission denied", str(self))
            return real_mkdir(self, *a, **k)

        monkeypatch.setattr(Path, "mkdir", refuse)
        parent = tmp_path
    else:
        parent = tmp_path / "ro"
        parent.mkdir()
        parent.chmod(0o555)
    assert main(["batch", str(clean_tpl), str(cases), "-o", str(parent / "out")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Permission denied (no permission to write there" in err


ENV = dict(os.environ, PYTHONWARNINGS="ignore", RUST_BACKTRACE="0")


def _cli(args: list[str], **kw) -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-m", "xlfuncs", *args],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        env=ENV,
        **kw,
    )


def _wait_for_records(journal: Path, n: int, proc: subprocess.Popen, timeout: float = 60) -> None:
    t0 = time.monotonic()
    while time.monotonic() - t0 < timeout and proc.poll() is None:
        if journal.exists() and journal.read_bytes().count(b"\n") > n:
            return
        time.sleep(0.02)


def test_full_disk_during_a_batch_loses_nothing(tmp_path, clean_tpl):
    # RLIMIT_FSIZE: the journal cannot grow beyond 700 bytes, as on a full disk
    rows = [["case", "R1_value"]] + [[f"c{k}", f"{k}00"] for k in range(1, 13)]
    cases = _cases(tmp_path / "c.csv", rows)
    out = tmp_path / "o"
    code = (
        "import resource, sys; resource.setrlimit(resource.RLIMIT_FSIZE, (700, 700)); "
        "from xlfuncs.cli import main; sys.exit(main(sys.argv[1:]))"
    )
    args = ["batch", str(clean_tpl), str(cases), "-o", str(out), "--collect", "Vout_rms"]
    r = subprocess.run(
        [sys.executable, "-c", code, *args, "--no-progress"],
        capture_output=True,
        text=True,
        env=ENV,
    )
    assert r.returncode == 2 and r.stderr.count("\n") == 1, r.stderr
    assert "File too large (the disk is full or a file-size limit was reached" in r.stderr
    recorded = len(_summary(out)) if (out / "summary.csv").exists() else 0
    rep = run_batch(clean_tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert rep.skipped == recorded and rep.done == 12 - recorded
    clean = _clean_rows(clean_tpl, cases, tmp_path / "clean")
    assert _results(out) == clean


def test_killed_batch_resumes_to_the_same_summary(tmp_path, clean_tpl):
    rows = [["case", "R1_value"]] + [[f"c{k}", f"{k}00"] for k in range(1, 201)]
    cases = _cases(tmp_path / "c.csv", rows)
    out = tmp_path / "o"
    p = _cli(["batch", str(clean_tpl), str(cases), "-o", str(out), "--collect", "Vout_rms",
              "--no-progress"])  # fmt: skip
    _wait_for_records(out / "summary.journal", 3, p)
    p.kill()
    p.communicate()
    rep = run_batch(clean_tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert rep.skipped >= 3 and rep.done + rep.skipped == 200
    assert _results(out) == _clean_rows(clean_tpl, cases, tmp_path / "clean")


def test_ctrl_c_with_two_workers(tmp_path, clean_tpl):
    rows = [["case", "R1_value"]] + [[f"c{k}", f"{k}00"] for k in range(1, 401)]
    cases = _cases(tmp_path / "c.csv", rows)
    out = tmp_path / "o"
    args = ["batch", str(clean_tpl), str(cases), "-o", str(out), "-j", "2", "--no-progress"]
    # A terminal's foreground job gets Ctrl-C with SIGINT at its default disposition; a
    # suite started in the background (CI, `cmd &`) inherits SIGINT ignored, and Python
    # then keeps it ignored, so the child is given the foreground disposition explicitly.
    p = _cli(
        [*args, "--collect", "Vout_rms"],
        start_new_session=True,
        preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL),
    )
    _wait_for_records(out / "summary.journal", 2, p)
    os.killpg(p.pid, signal.SIGINT)  # as a terminal's Ctrl-C: the whole process group
    _out, err = p.communicate(timeout=120)
    text = err.decode()
    assert p.returncode == 130, text
    assert text.count("\n") == 1 and "Traceback" not in text
    assert text.startswith("xlfuncs: interrupted: ") and "run the same command again" in text
    rows_kept = _summary(out)
    assert rows_kept and all(r["status"] == "ok" and r["Vout_rms"] for r in rows_kept)
    rep = run_batch(clean_tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert rep.skipped == len(rows_kept) and len(_summary(out)) == 400


def test_a_dead_worker_is_one_line_and_loses_nothing(setup, monkeypatch):
    from concurrent.futures import Future
    from concurrent.futures.process import BrokenProcessPool

    tpl, cases, out = setup
    real = batch_mod.ProcessPoolExecutor

    class DyingPool(real):  # the worker dies as the OOM killer would end it
        def submit(self, *a, **k):
            f: Future = Future()
            f.set_exception(BrokenProcessPool("A process in the process pool was terminated"))
            return f

    monkeypatch.setattr(batch_mod, "ProcessPoolExecutor", DyingPool)
    with pytest.raises(WorkbookError, match="a worker process died") as exc:
        run_batch(tpl, cases, out, jobs=2, chunk=1, collect=["Vout_rms"], progress=False)
    assert "\n" not in str(exc.value)
    kept = len(_summary(out))  # what this process ran meanwhile is recorded
    monkeypatch.setattr(batch_mod, "ProcessPoolExecutor", real)
    rep = run_batch(tpl, cases, out, collect=["Vout_rms"], progress=False)
    assert rep.skipped == kept and len(_summary(out)) == 6


def test_dask_cluster(setup):
    distributed = pytest.importorskip("distributed")
    tpl, cases, out = setup
    # ":0": any free port for the dashboard (None still binds the default 8787, and a busy
    # 8787 then fails the start-up through a warning)
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=1, processes=True, dashboard_address=":0"
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
    args = ["batch", str(tpl), str(cases), "-o", str(out), "--collect", "Vout_rms"]
    assert main([*args, "--no-progress"]) == 1  # one case failed
    text = capsys.readouterr().out
    assert "6 cases run (1 failed), 0 already finished" in text and "cases/s" in text
    assert "  failed: bad value: Vout_rms: ERROR: parts row 2, column value: '4.7q'" in text
