"""Fault campaign: the command line under faults, damaged files and interruptions.

Runs ``python -m xlfuncs`` as a user would (a fresh process per trial) and checks what a user
must be able to rely on: a refusal is one line on stderr with exit status 2 and no traceback,
nothing already recorded is lost, nothing stale or doubled is reported, and a killed or cut
run leaves either the old file or a complete new one. Every trial prints PASS or FAIL with
what was seen; the last line gives the totals.

    python tests/workbook/fault_campaign.py              # the package importable here
    PYTHONPATH=/path/to/other/checkout python tests/workbook/fault_campaign.py

It builds its own books (with XlsxWriter, and byte by byte for the damaged ones) in a
temporary directory and uses the plant template of the repository it sits in
(``--template`` to choose another). Takes about two minutes on two cores.
"""

from __future__ import annotations

import argparse
import contextlib
import csv
import os
import random
import resource
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
import books

REPO = Path(__file__).resolve().parents[2]
ROWS_LIMIT = 1_048_576


@dataclass
class Run:
    rc: int
    out: str
    err: str
    seconds: float
    maxrss_mib: float


def run(
    args: list[str],
    cwd: Path,
    *,
    fsize: int | None = None,
    timeout: float = 180,
    interrupt_after: float | None = None,
    kill_after: float | None = None,
) -> Run:
    """One command line; RLIMIT_FSIZE (bytes) when given; SIGINT to its process group (as a
    terminal's Ctrl-C does) or SIGKILL after the given seconds."""

    def limit() -> None:
        # as a terminal's foreground job: SIGINT at its default disposition even when this
        # campaign itself was started in the background with SIGINT ignored
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        if fsize is not None:
            resource.setrlimit(resource.RLIMIT_FSIZE, (fsize, fsize))

    env = dict(os.environ, RUST_BACKTRACE="0", PYTHONWARNINGS="ignore")
    t0 = time.perf_counter()
    p = subprocess.Popen(
        [sys.executable, "-m", "xlfuncs", *args],
        cwd=cwd,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        preexec_fn=limit,
        start_new_session=True,
        env=env,
    )
    signalled = False
    deadline = t0 + timeout
    out_chunks: list[bytes] = []
    err_chunks: list[bytes] = []
    import threading

    def drain(stream, sink):  # type: ignore[no-untyped-def]
        for chunk in iter(lambda: stream.read(4096), b""):
            sink.append(chunk)

    threads = [
        threading.Thread(target=drain, args=(p.stdout, out_chunks), daemon=True),
        threading.Thread(target=drain, args=(p.stderr, err_chunks), daemon=True),
    ]
    for t in threads:
        t.start()
    while True:
        pid, status, usage = os.wait4(p.pid, os.WNOHANG)
        if pid:
            break
        now = time.perf_counter()
        if not signalled and interrupt_after is not None and now - t0 > interrupt_after:
            os.killpg(p.pid, signal.SIGINT)
            signalled = True
        if not signalled and kill_after is not None and now - t0 > kill_after:
            os.killpg(p.pid, signal.SIGKILL)
            signalled = True
        if now > deadline:
            os.killpg(p.pid, signal.SIGKILL)
            pid, status, usage = os.wait4(p.pid, 0)
            break
        time.sleep(0.01)
    for t in threads:
        t.join(timeout=5)
    p.returncode = os.waitstatus_to_exitcode(status)
    # workers of a killed run may still be finishing: make sure none outlives the trial
    with contextlib.suppress(ProcessLookupError, PermissionError):
        os.killpg(p.pid, signal.SIGKILL)
    return Run(
        p.returncode,
        b"".join(out_chunks).decode("utf-8", "replace"),
        b"".join(err_chunks).decode("utf-8", "replace"),
        time.perf_counter() - t0,
        usage.ru_maxrss / 1024,
    )


def one_line_refusal(r: Run, code: int = 2, must: tuple[str, ...] = ()) -> tuple[bool, str]:
    err = r.err.strip()
    ok = (
        r.rc == code
        and err.count("\n") == 0
        and err.startswith("xlfuncs: error:")
        and "Traceback" not in r.err
        and "panicked" not in r.err
        and all(m.lower() in err.lower() for m in must)
    )
    first = err.splitlines()[-1] if err else ""
    return ok, f"exit {r.rc}, {err.count(chr(10)) + 1 if err else 0} stderr line(s): {first[:150]}"


def read_summary(d: Path) -> list[dict[str, str]] | None:
    p = d / "summary.csv"
    if not p.exists():
        return None
    with p.open(newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


class Campaign:
    def __init__(self, tmp: Path, template: Path) -> None:
        self.tmp = tmp
        self.template = template
        self.results: list[tuple[str, bool, str]] = []
        self._clean: dict[str, dict[str, str]] | None = None

    def trial(self, name: str, fn: Callable[[], tuple[bool, str]]) -> None:
        try:
            ok, detail = fn()
        except Exception as exc:  # the campaign itself must go on
            ok, detail = False, f"campaign error {type(exc).__name__}: {exc}"
        self.results.append((name, ok, detail))
        print(f"{'PASS' if ok else 'FAIL'}  {name}: {detail}", flush=True)

    def path(self, name: str) -> Path:
        return self.tmp / name

    # ------------------------------------------------------------------ fixtures
    def cases(self, name: str, n: int, labels: str = "c{k}") -> Path:
        p = self.path(name)
        with p.open("w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh)
            w.writerow(["case", "cap_steps", "ssc_mva"])
            for k in range(1, n + 1):
                w.writerow([labels.format(k=k), 1 + k % 4, 20 + 5 * (k % 7)])
        return p

    def clean_batch(self) -> dict[str, dict[str, str]]:
        """The reference: 12 cases run once, uninterrupted."""
        if self._clean is None:
            cases = self.cases("c12.csv", 12)
            out = self.path("clean12")
            r = run(
                [
                    "batch",
                    str(self.template),
                    str(cases),
                    "-o",
                    str(out),
                    "--collect",
                    "bus_thd_pct",
                    "--no-progress",
                ],
                self.tmp,
            )
            rows = read_summary(out) or []
            if r.rc != 0 or len(rows) != 12:
                raise RuntimeError(f"clean batch failed: exit {r.rc} {r.err[-300:]}")
            self._clean = {row["case"]: row for row in rows}
        return self._clean

    def same_as_clean(self, out: Path) -> tuple[bool, str]:
        clean = self.clean_batch()
        rows = read_summary(out)
        if rows is None:
            return False, "no summary.csv"
        labels = [r.get("case") for r in rows]
        if sorted(labels) != sorted(clean):  # type: ignore[type-var]
            missing = sorted(set(clean) - set(labels))  # type: ignore[arg-type]
            extra = len(labels) - len(set(labels))
            return False, f"{len(rows)} rows; missing {missing[:4]}, {extra} doubled"
        for row in rows:
            ref = clean[row["case"]]
            if row.get("status") != "ok" or row.get("bus_thd_pct") != ref["bus_thd_pct"]:
                return False, (
                    f"case {row['case']}: {row.get('status')} {row.get('bus_thd_pct')!r} "
                    f"instead of {ref['bus_thd_pct']!r}"
                )
        return True, "12 cases, each once, values identical to an uninterrupted run"


def defined_cell(book: Path, name: str) -> tuple[str, str, str]:
    """(sheet, sheet part, cell) a defined name of the book points at."""
    import re

    z = zipfile.ZipFile(book)
    wb = z.read("xl/workbook.xml").decode()
    ref = re.search(rf'<definedName name="{name}"[^>]*>([^<]+)</definedName>', wb).group(1)
    sheet, cell = ref.replace("$", "").replace("'", "").split("!")
    rid = re.search(rf'<sheet name="{sheet}"[^>]*r:id="([^"]+)"', wb).group(1)
    rels = z.read("xl/_rels/workbook.xml.rels").decode()
    target = re.search(rf'Id="{rid}"[^>]*Target="([^"]+)"', rels) or re.search(
        rf'Target="([^"]+)"[^>]*Id="{rid}"', rels
    )
    part = target.group(1).lstrip("/")
    return sheet, part if part.startswith("xl/") else f"xl/{part}", cell


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument(
        "--template", type=Path, default=REPO / "workbook_templates" / "plant_harmonics.xlsx"
    )
    ap.add_argument("--seed", type=int, default=10)
    ap.add_argument("--keep", action="store_true", help="keep the temporary directory")
    a = ap.parse_args()
    rnd = random.Random(a.seed)
    tmp = Path(tempfile.mkdtemp(prefix="xlfuncs-faults-"))
    import xlfuncs

    print(f"fault campaign: xlfuncs from {Path(xlfuncs.__file__).parent}, template {a.template}")
    c = Campaign(tmp, a.template)
    tpl = str(a.template)
    divider = books.divider_book(tmp / "divider.xlsx")
    rw = ["recalc", str(divider)]

    # ---------------------------------------------------------------- command line
    (tmp / "existing_dir").mkdir()
    c.trial(
        "recalc -o an existing directory",
        lambda: one_line_refusal(run([*rw, "-o", str(tmp / "existing_dir")], tmp)),
    )
    (tmp / "a_file").write_text("x")
    c.trial(
        "recalc -o a path under a file",
        lambda: one_line_refusal(run([*rw, "-o", str(tmp / "a_file" / "o.xlsx")], tmp)),
    )
    if os.geteuid() == 0:  # permissions do not stop root; sysfs refuses new files to anyone
        unwritable = Path("/sys")
    else:
        unwritable = tmp / "read_only"
        unwritable.mkdir()
        unwritable.chmod(0o555)
    c.trial(
        "recalc -o into an unwritable directory",
        lambda: one_line_refusal(run([*rw, "-o", str(unwritable / "o.xlsx")], tmp)),
    )

    def full_disk_recalc() -> tuple[bool, str]:
        out = tmp / "full" / "o.xlsx"
        out.parent.mkdir()
        r = run([*rw, "-o", str(out)], tmp, fsize=4096)
        ok, detail = one_line_refusal(r)
        left = [p.name for p in out.parent.iterdir()]
        return ok and not left, f"{detail}; left behind: {left}"

    c.trial("recalc on a full disk (RLIMIT_FSIZE 4 KiB)", full_disk_recalc)
    c.trial(
        "batch -o an existing file",
        lambda: one_line_refusal(
            run(["batch", tpl, str(c.cases("c2.csv", 2)), "-o", str(tmp / "a_file")], tmp)
        ),
    )

    def huge_field() -> tuple[bool, str]:
        p = tmp / "huge.csv"
        p.write_text("case,cap_steps\n" + "a,1\n" + "b," + "9" * 131_073 + "\n")
        return one_line_refusal(run(["batch", tpl, str(p), "-o", str(tmp / "huge")], tmp))

    c.trial("batch cases CSV with a field over 131,072 characters", huge_field)
    c.trial(
        "recalc --set Inputs!A0",
        lambda: one_line_refusal(run(["recalc", tpl, "--set", "Inputs!A0=1"], tmp)),
    )
    c.trial(
        "recalc --set Inputs!A99999999 (beyond the last row)",
        lambda: one_line_refusal(run(["recalc", tpl, "--set", "Inputs!A99999999=1"], tmp)),
    )

    def huge_tone() -> tuple[bool, str]:
        parts = tmp / "p.csv"
        parts.write_text("name,kind,from,to,value\nR1,R,in,out,1k\nC1,C,out,GND,1u\n")
        src = tmp / "s.csv"
        src.write_text("name,kind,from,to,freq_hz,peak\nVs,V,in,GND,1e308,1\n")
        return one_line_refusal(run(["solve", str(parts), str(src), "--target", "out"], tmp))

    c.trial("solve with a 1e308 Hz tone", huge_tone)

    def truncated_book() -> tuple[bool, str]:
        p = tmp / "truncated.xlsx"
        data = divider.read_bytes()
        p.write_bytes(data[: len(data) // 2])
        return one_line_refusal(run(["recalc", str(p), "-o", str(tmp / "t.xlsx")], tmp))

    c.trial("recalc of a truncated workbook", truncated_book)

    def killed_recalc() -> tuple[bool, str]:
        seen = []
        for k in range(4):
            out = tmp / f"killed{k}" / "o.xlsx"
            out.parent.mkdir()
            run(["recalc", tpl, "-o", str(out)], tmp, kill_after=0.6 + 0.35 * k + rnd.random() / 5)
            files = list(out.parent.iterdir())
            if out.exists():
                try:
                    zipfile.ZipFile(out).testzip()
                    state = "complete"
                except zipfile.BadZipFile:
                    return False, f"kill {k}: a damaged output was left"
            else:
                state = "absent"
            seen.append(f"{state}+{len(files) - out.exists()} tmp")
        return True, "outputs: " + ", ".join(seen)

    c.trial("recalc killed (SIGKILL) at 4 moments", killed_recalc)

    # ----------------------------------------------------------- inputs and verdicts
    sheet, part, cell = defined_cell(a.template, "cap_steps")
    dv_book = a.template
    if "dataValidation" not in zipfile.ZipFile(a.template).read(part).decode():
        dv_book = books.add_validation(
            a.template,
            tmp / "plant_dv.xlsx",
            part,
            '<dataValidation type="whole" operator="greaterThanOrEqual" allowBlank="1" '
            f'showErrorMessage="1" sqref="{cell}"><formula1>0</formula1></dataValidation>',
        )
    c.trial(
        "recalc --set cap_steps=two on a book whose input is validated (whole ≥ 0)",
        lambda: one_line_refusal(
            run(["recalc", str(dv_book), "--set", "cap_steps=two"], tmp),
            must=("cap_steps", f"{sheet}!{cell}", "whole"),
        ),
    )

    def garbage_exit() -> tuple[bool, str]:
        # a book whose formulas end in errors (1/0, a blocked spill, an unknown node)
        r = run(["recalc", str(divider), "-o", str(tmp / "g.xlsx")], tmp)
        return r.rc != 0 and "Traceback" not in r.err, f"exit {r.rc}: {r.out.strip()[-120:]}"

    c.trial("recalc whose formulas end in errors exits non-zero", garbage_exit)

    def no_forced_recalc() -> tuple[bool, str]:
        seen = []
        for src in (tpl, str(divider)):  # the template, and a book as a user's tool wrote it
            out = tmp / "cached.xlsx"
            run(["recalc", src, "-o", str(out)], tmp)
            wb = zipfile.ZipFile(out).read("xl/workbook.xml").decode()
            seen.append(wb[wb.find("<calcPr") :].split(">")[0] + ">")
        return all('fullCalcOnLoad="1"' not in x for x in seen), " and ".join(seen)

    c.trial("recalc output does not force a full recalculation on load", no_forced_recalc)

    # ----------------------------------------------------------------------- batch
    def pristine(jobs: int, order: list[str]) -> tuple[bool, str]:
        rows = {"A": ["A", "4", "25"], "B": ["B", "", "25"]}
        p = tmp / f"pristine{jobs}{''.join(order)}.csv"
        with p.open("w", newline="") as fh:
            csv.writer(fh).writerows([["case", "cap_steps", "ssc_mva"], *[rows[k] for k in order]])
        alone = tmp / "aloneB.csv"
        with alone.open("w", newline="") as fh:
            csv.writer(fh).writerows([["case", "cap_steps", "ssc_mva"], rows["B"]])
        res = {}
        for name, cases in (("both", p), ("alone", alone)):
            out = tmp / f"out_{p.stem}_{name}"
            args = ["batch", tpl, str(cases), "-o", str(out), "--collect", "bus_thd_pct"]
            run([*args, "-j", str(jobs), "--no-progress"], tmp)
            res[name] = {r["case"]: r["bus_thd_pct"] for r in read_summary(out) or []}
        b, b_alone = res["both"].get("B"), res["alone"].get("B")
        return b is not None and b == b_alone, f"B after A: {b}, B alone: {b_alone}"

    c.trial(
        "batch: a blank cell takes the template's value (-j 1)", lambda: pristine(1, ["A", "B"])
    )
    c.trial("batch: the same with -j 2 and 3 copies", lambda: pristine(2, ["A", "B", "A", "B"]))

    def torn(k: int, cut: Callable[[bytes], int]) -> Callable[[], tuple[bool, str]]:
        def trial() -> tuple[bool, str]:
            cases = c.cases("c12.csv", 12)
            clean = c.clean_batch()
            # where to cut: positions in an uninterrupted run's record
            ref = (tmp / "clean12" / "summary.csv").read_bytes()
            limit = cut(ref)
            out = tmp / f"torn{k}"
            args = ["batch", tpl, str(cases), "-o", str(out), "--collect", "bus_thd_pct"]
            first = run([*args, "--no-progress"], tmp, fsize=limit)
            second = run([*args, "--no-progress"], tmp)
            ok, detail = c.same_as_clean(out)
            if "Traceback" in second.err:
                return False, f"rerun crashed: {second.err.strip().splitlines()[-1][:120]}"
            del clean
            return ok, f"cut at {limit} B (exit {first.rc}, rerun exit {second.rc}): {detail}"

        return trial

    def line_start(label: str, plus: int) -> Callable[[bytes], int]:
        return lambda ref: ref.index(f"\n{label},".encode()) + 1 + plus

    cuts = [
        ("in the middle of a value", lambda ref: ref.index(b"\nc3,") + 30),
        ("just before a line's terminator", lambda ref: ref.index(b"\nc5,") - 1),
        ("a torn label that prefixes another (c1 of c10)", line_start("c10", 2)),
        ("after the header only", lambda ref: ref.index(b"\n") + 1),
        ("two thirds in", lambda ref: len(ref) * 2 // 3 + 7),
    ]
    for k, (what, cut) in enumerate(cuts):
        c.trial(f"batch cut by a full disk {what}, then rerun", torn(k, cut))

    def killed_batch(k: int) -> tuple[bool, str]:
        cases = c.cases("c12.csv", 12)
        c.clean_batch()
        out = tmp / f"killed_batch{k}"
        args = ["batch", tpl, str(cases), "-o", str(out), "--collect", "bus_thd_pct"]
        run([*args, "--no-progress"], tmp, kill_after=1.2 + 0.5 * k + rnd.random() / 3)
        second = run([*args, "--no-progress"], tmp)
        ok, detail = c.same_as_clean(out)
        return ok and "Traceback" not in second.err, detail

    for k in range(3):
        c.trial(
            f"batch killed (SIGKILL) mid-run #{k + 1}, then rerun", lambda k=k: killed_batch(k)
        )

    def two_at_once() -> tuple[bool, str]:
        cases = c.cases("c24.csv", 24)
        out = tmp / "twice"
        args = [sys.executable, "-m", "xlfuncs", "batch", tpl, str(cases), "-o", str(out)]
        env = dict(os.environ, PYTHONWARNINGS="ignore")
        procs = [
            subprocess.Popen(
                [*args, "--no-progress"],
                cwd=tmp,
                env=env,
                stdout=subprocess.PIPE,
                stderr=subprocess.PIPE,
            )
            for _ in range(2)
        ]
        outs = [p.communicate(timeout=300) for p in procs]
        rows = read_summary(out) or []
        labels = [r["case"] for r in rows]
        tb = any(b"Traceback" in e for _o, e in outs)
        ok = len(labels) == 24 and len(set(labels)) == 24 and not tb
        return ok, f"{len(rows)} rows for 24 cases, exits {[p.returncode for p in procs]}"

    c.trial("two batches on the same output directory", two_at_once)

    def errors_without_collect() -> tuple[bool, str]:
        # an input without validation, and a value its formulas cannot use
        book = books.clean_divider_book(tmp / "clean.xlsx", validate=False)
        p = tmp / "garbage.csv"
        p.write_text("case,R1_value\ngood,2k\nbad,4.7q\n")
        out = tmp / "nocollect"
        r = run(["batch", str(book), str(p), "-o", str(out), "--no-progress"], tmp)
        rows = {row["case"]: row["status"] for row in read_summary(out) or []}
        return rows.get("bad") not in (None, "ok") and rows.get("good") == "ok", (
            f"exit {r.rc}, statuses {rows}"
        )

    c.trial("batch without --collect: a case whose formulas end in errors", errors_without_collect)

    def control_chars() -> tuple[bool, str]:
        p = tmp / "ctrl.csv"
        p.write_bytes(b"case,cap_steps\nnul\x00label,2\nbell\x07tab\t,3\n")
        out = tmp / "ctrl"
        r = run(["batch", tpl, str(p), "-o", str(out), "--no-progress"], tmp)
        xlsx = out / "summary.xlsx"
        good = False
        if xlsx.exists():
            import openpyxl

            good = openpyxl.load_workbook(xlsx)["summary"].max_row == 3
        return good and "Traceback" not in r.err, f"exit {r.rc}, summary.xlsx readable: {good}"

    c.trial("batch with NUL and control characters in labels", control_chars)

    def ctrl_c() -> tuple[bool, str]:
        cases = c.cases("c40.csv", 40)
        out = tmp / "ctrlc"
        args = ["batch", tpl, str(cases), "-o", str(out), "-j", "2", "--no-progress"]
        r = run([*args, "--collect", "bus_thd_pct"], tmp, interrupt_after=4.0)
        err = r.err.strip()
        rows = read_summary(out)
        complete = rows is not None and all(
            row.get("status") in ("ok", "error") and row.get("bus_thd_pct") is not None
            for row in rows
        )
        again = run([*args, "--collect", "bus_thd_pct"], tmp)
        final = read_summary(out) or []
        labels = [row["case"] for row in final]
        ok = (
            r.rc == 130
            and "Traceback" not in err
            and err.count("\n") == 0
            and complete
            and len(labels) == 40 == len(set(labels))
            and again.rc == 0
        )
        return ok, (
            f"exit {r.rc}, {err.count(chr(10)) + 1 if err else 0} stderr line(s), "
            f"{len(rows or [])} rows kept, after rerun {len(labels)} rows"
        )

    c.trial("Ctrl-C during batch -j 2", ctrl_c)

    def worker_killed() -> tuple[bool, str]:
        cases = c.cases("c60.csv", 60)
        out = tmp / "workerkill"
        args = ["batch", tpl, str(cases), "-o", str(out), "-j", "2", "--no-progress"]
        env = dict(os.environ, PYTHONWARNINGS="ignore")
        p = subprocess.Popen(
            [sys.executable, "-m", "xlfuncs", *args], cwd=tmp, env=env,
            stdout=subprocess.PIPE, stderr=subprocess.PIPE,
        )  # fmt: skip
        records = (out / "summary.journal", out / "summary.csv")  # whichever grows per case
        t0 = time.monotonic()
        while time.monotonic() - t0 < 120 and p.poll() is None:
            if any(f.exists() and f.read_bytes().count(b"\n") > 2 for f in records):
                break
            time.sleep(0.02)
        killed = 0
        children = Path(f"/proc/{p.pid}/task/{p.pid}/children")
        for child in children.read_text().split() if children.exists() else []:
            cmd = Path(f"/proc/{child}/cmdline").read_bytes()
            if b"spawn_main" in cmd and b"resource_tracker" not in cmd:
                os.kill(int(child), signal.SIGKILL)
                killed += 1
        _o, err = p.communicate(timeout=300)
        text = err.decode().strip()
        again = run(args, tmp)
        rows = read_summary(out) or []
        ok = (
            killed == 1
            and "Traceback" not in text
            and text.count("\n") == 0
            and p.returncode in (0, 2)
            and again.rc == 0
            and len(rows) == 60 == len({r["case"] for r in rows})
        )
        return ok, f"exit {p.returncode}: {text[-120:]}; rerun exit {again.rc}, {len(rows)} rows"

    c.trial("batch -j 2 whose worker process is killed", worker_killed)

    def panic_case() -> tuple[bool, str]:
        p = tmp / "panic.csv"
        p.write_text("case,Inputs!A99999999\nx,1\n")
        r = run(["batch", tpl, str(p), "-o", str(tmp / "panic"), "--no-progress"], tmp)
        rows = read_summary(tmp / "panic") or []
        one_case = len(rows) == 1 and rows[0]["status"] == "error" and r.rc in (1, 2)
        clean = "panicked" not in r.err and "Traceback" not in r.err
        refused, detail = one_line_refusal(r)
        return clean and (one_case or refused), detail

    c.trial("batch case setting Inputs!A99999999 (engine panic)", panic_case)

    # ------------------------------------------------------------ hostile workbooks
    for how in ("crc", "size", "encrypted"):
        c.trial(
            f"workbook with a damaged binary member ({how})",
            lambda how=how: one_line_refusal(
                run(
                    ["recalc", str(books.damage_member(divider, tmp / f"dmg_{how}.xlsx", how))],
                    tmp,
                )
            ),
        )
    c.trial(
        "workbook with duplicate member names",
        lambda: one_line_refusal(
            run(["recalc", str(books.duplicate_member(divider, tmp / "dup.xlsx"))], tmp)
        ),
    )

    def near_threshold() -> tuple[bool, str]:
        p = books.near_threshold_book(tmp / "near.xlsx")
        size_mib = p.stat().st_size / 2**20
        (tmp / "not_zip.xlsx").write_text("plain text")
        base = run(["recalc", str(tmp / "not_zip.xlsx")], tmp)
        r = run(["recalc", str(p)], tmp, timeout=200)
        work = max(r.seconds - base.seconds, 0.0)
        return work < 0.5 * max(size_mib, 1.0) and "Traceback" not in r.err, (
            f"{size_mib * 1024:.0f} KiB decided in {work:.2f} s beyond start-up (exit {r.rc})"
        )

    c.trial("480 members just under the ratio threshold", near_threshold)
    for k, (what, build, must) in enumerate(
        (
            (
                "password-protected workbook",
                lambda p: books.compound_file(p, ["EncryptionInfo", "EncryptedPackage"]),
                ("password",),
            ),
            (
                "legacy .xls renamed .xlsx",
                lambda p: books.compound_file(p, ["Workbook"]),
                ("legacy",),
            ),
            (".ods renamed .xlsx", books.ods_renamed, ("OpenDocument",)),
        )
    ):
        c.trial(
            what,
            lambda build=build, must=must, k=k: one_line_refusal(
                run(["recalc", str(build(tmp / f"hostile{k}.xlsx"))], tmp), must=must
            ),
        )

    def big_argument(last_row: int) -> tuple[bool, str]:
        import xlsxwriter

        p = tmp / f"bigarg{last_row}.xlsx"
        wb = xlsxwriter.Workbook(str(p))
        ws = wb.add_worksheet("Net")
        for i, row in enumerate(books.PARTS):
            ws.write_row(i, 0, row)
        for i, row in enumerate(books.SOURCES):
            ws.write_row(9 + i, 0, row)
        ws.write_formula("M1", f'=CKT_RMS(A1:J{last_row},A10:F12,"out")')
        wb.close()
        base = run(["recalc", str(divider), "-o", str(tmp / "base.xlsx")], tmp)
        r = run(["recalc", str(p), "-o", str(tmp / "bigarg_out.xlsx")], tmp)
        extra_s = r.seconds - base.seconds
        extra_mib = r.maxrss_mib - base.maxrss_mib
        ok = extra_s < 2.0 and extra_mib < 100 and "Traceback" not in r.err
        return ok, f"+{extra_s:.2f} s and +{extra_mib:.0f} MiB over a small book (exit {r.rc})"

    c.trial("CKT_ argument of 1,000,010 cells (beyond the cap)", lambda: big_argument(100_001))

    def semicolons() -> tuple[bool, str]:
        p = tmp / "semi.csv"
        p.write_text("case;cap_steps\na;2\n")
        return one_line_refusal(
            run(["batch", tpl, str(p), "-o", str(tmp / "semi")], tmp), must=("semicolon",)
        )

    c.trial("semicolon-separated cases file", semicolons)

    def unwritable_batch() -> tuple[bool, str]:
        return one_line_refusal(
            run(["batch", tpl, str(c.cases("c2.csv", 2)), "-o", str(unwritable / "out")], tmp)
        )

    c.trial("batch -o under an unwritable directory", unwritable_batch)

    def full_disk_batch() -> tuple[bool, str]:
        out = tmp / "fullbatch"
        r = run(
            [
                "batch",
                tpl,
                str(c.cases("c12.csv", 12)),
                "-o",
                str(out),
                "--collect",
                "bus_thd_pct",
            ],
            tmp,
            fsize=700,
        )
        return one_line_refusal(r)

    c.trial("batch on a full disk (RLIMIT_FSIZE 700 B)", full_disk_batch)

    failed = sum(not ok for _n, ok, _d in c.results)
    print(f"\n{len(c.results)} trials, {failed} failures")
    if a.keep:
        print(f"files kept in {tmp}")
    else:
        shutil.rmtree(tmp, ignore_errors=True)
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
