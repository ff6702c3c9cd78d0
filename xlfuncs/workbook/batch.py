"""Many cases through one template: ``xlfuncs batch``.

Each row of the cases file sets inputs (its column headers are defined names or
``Sheet!A1`` addresses; an optional ``case`` column labels it). The template is read and
loaded into the formula engine once per worker process, then evaluated per case. Results
are appended to ``DIR/summary.csv`` one flushed, fsynced line at a time, so an interrupted
run loses nothing already written; re-running the same command skips finished cases
(``--force`` redoes them; cases that failed are tried again). ``DIR/summary.xlsx`` is
rebuilt from the CSV at the end. Optionally one recalculated workbook per case goes to
``DIR/books/``.

Parallel work: ``-j N`` runs cases in N local processes; ``--cluster ADDRESS`` sends them
to an existing Dask distributed scheduler (same summary and resume behaviour).
"""

from __future__ import annotations

import csv
import hashlib
import json
import multiprocessing
import os
import re
import sys
import tempfile
import time
from collections.abc import Callable, Iterable, Iterator, Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..errors import WorkbookError, XlfuncsError
from .engine import CellError
from .recalc import PreparedBook, parse_value

__all__ = ["BatchReport", "Case", "read_cases", "run_batch", "sanitize_label"]

_RESERVED = {
    "con", "prn", "aux", "nul",
    *(f"com{i}" for i in range(1, 10)),
    *(f"lpt{i}" for i in range(1, 10)),
}  # fmt: skip
_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")


def sanitize_label(label: str, index: int) -> str:
    """A file-name-safe form of a case label: letters, digits, ``. _ -`` only, no path
    parts, no leading dot, no Windows device names, at most 80 characters."""
    s = _UNSAFE.sub("_", label.strip()).strip("._")[:80]
    if not s:
        s = f"case_{index}"
    if s.split(".")[0].lower() in _RESERVED:
        s = f"_{s}"
    return s


@dataclass(frozen=True)
class Case:
    index: int  # 1-based data row of the cases file
    label: str
    slug: str
    sets: tuple[tuple[str, Any], ...]


@dataclass
class BatchReport:
    total: int
    done: int
    skipped: int
    failed: int
    seconds: float
    summary_csv: str
    summary_xlsx: str
    rate: float = 0.0
    errors: list[str] = field(default_factory=list)


def read_cases(path: str | Path) -> tuple[list[str], list[Case]]:
    """Targets (column headers) and cases of a cases CSV (UTF-8)."""
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            rows = list(csv.reader(fh))
    except OSError as exc:
        raise WorkbookError(str(p), f"cannot read: {exc.strerror or exc}") from None
    except UnicodeDecodeError:
        raise WorkbookError(str(p), "not UTF-8 text (save the CSV as UTF-8)") from None
    if not rows or not any(c.strip() for c in rows[0]):
        raise WorkbookError(str(p), "empty cases file (expected a header row of names/addresses)")
    header = [h.strip() for h in rows[0]]
    label_col = next((i for i, h in enumerate(header) if h.lower() == "case"), None)
    targets = [(i, h) for i, h in enumerate(header) if i != label_col]
    for i, h in targets:
        if not h:
            raise WorkbookError(
                str(p), f"column {i + 1} has no header (expected a name or Sheet!A1)", "row 1"
            )
    cases: list[Case] = []
    slugs: set[str] = set()
    labels: set[str] = set()
    for k, row in enumerate(rows[1:], start=1):
        if not any(c.strip() for c in row):
            continue
        row = row + [""] * (len(header) - len(row))
        label = row[label_col].strip() if label_col is not None else ""
        label = label or f"case {k}"
        if label in labels:  # labels key the resume: keep them unique
            label = f"{label} (row {k + 1})"
        labels.add(label)
        slug = sanitize_label(label, k)
        if slug.lower() in slugs:
            slug = f"{slug}_{k}"
        slugs.add(slug.lower())
        sets = tuple((h, parse_value(row[i])) for i, h in targets if row[i].strip() != "")
        cases.append(Case(k, label, slug, sets))
    if not cases:
        raise WorkbookError(str(p), "no cases below the header")
    return [h for _i, h in targets], cases


# ------------------------------------------------------------------ worker side
_PREPARED: dict[str, PreparedBook] = {}


def _prepared(template: str, blob: bytes | None = None) -> PreparedBook:
    """The template loaded once per process (keyed by content when sent as bytes)."""
    if blob is not None:
        key = hashlib.sha256(blob).hexdigest()
        if key not in _PREPARED:
            tmp = (
                Path(tempfile.gettempdir()) / f"xlfuncs-template-{key[:16]}{Path(template).suffix}"
            )
            if not tmp.exists():
                tmp.write_bytes(blob)
            _PREPARED[key] = PreparedBook(tmp)
        return _PREPARED[key]
    if template not in _PREPARED:
        _PREPARED[template] = PreparedBook(template)
    return _PREPARED[template]


def _cell_text(v: Any) -> Any:
    if isinstance(v, CellError):
        return v.code
    if isinstance(v, list):
        return json.dumps([[_cell_text(c) for c in row] for row in v])
    return v


def _first_error(value: Any) -> str:
    cells = [c for row in value for c in row] if isinstance(value, list) else [value]
    for c in cells:
        if isinstance(c, CellError):
            return c.code
        if isinstance(c, str) and c.startswith("ERROR: "):
            return c
    return ""


def run_case(
    template: str,
    case: Case,
    collect: Sequence[str],
    books_dir: str | None,
    blob: bytes | None = None,
) -> dict[str, Any]:
    """Evaluate one case; never raises for the case's own problems (they are recorded)."""
    t0 = time.perf_counter()
    out: dict[str, Any] = {"case": case.label, "status": "ok", "error": ""}
    try:
        pb = _prepared(template, blob)
        set_cells = pb.evaluate(dict(case.sets))
        problems = []
        for name in collect:
            value = pb.read(name)
            out[name] = _cell_text(value)
            bad = _first_error(value)
            if bad:
                problems.append(f"{name}: {bad}")
        if problems:  # outputs holding Excel errors or our one-line errors fail the case
            out.update(status="error", error=" | ".join(problems))
        if books_dir:
            suffix = Path(template).suffix or ".xlsx"
            pb.write(Path(books_dir) / f"{case.slug}{suffix}", set_cells)
    except XlfuncsError as exc:
        out.update(status="error", error=" ".join(str(exc).split()))
    except Exception as exc:  # a bug: still recorded, the batch goes on
        out.update(status="error", error=f"internal error {type(exc).__name__}: {exc}")
    out["seconds"] = round(time.perf_counter() - t0, 6)
    return out


def _run_chunk(
    template: str,
    cases: list[Case],
    collect: Sequence[str],
    books_dir: str | None,
    blob: bytes | None,
) -> list[dict[str, Any]]:
    return [run_case(template, c, collect, books_dir, blob) for c in cases]


# ------------------------------------------------------------------ driver side
def _chunks(items: list[Case], size: int) -> Iterator[list[Case]]:
    for i in range(0, len(items), size):
        yield items[i : i + size]


def _finished(summary: Path) -> set[str]:
    if not summary.exists():
        return set()
    with summary.open(newline="", encoding="utf-8") as fh:
        return {row["case"] for row in csv.DictReader(fh) if row.get("status") == "ok"}


def _keep_only_finished(summary: Path, finished: set[str]) -> None:
    """Drop rows of cases that will run again (failed ones), atomically."""
    with summary.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    kept = [rows[0]] + [r for r in rows[1:] if r and r[0] in finished and r[1] == "ok"]
    if len(kept) == len(rows):
        return
    fd, tmp = tempfile.mkstemp(prefix=".summary.", suffix=".csv", dir=summary.parent)
    with os.fdopen(fd, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(kept)
        fh.flush()
        os.fsync(fh.fileno())
    os.replace(tmp, summary)


def _number_or_text(cell: str) -> Any:
    v = parse_value(cell)
    return v if isinstance(v, float) else cell


def _write_xlsx(csv_path: Path, xlsx_path: Path) -> None:
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "summary"
    with csv_path.open(newline="", encoding="utf-8") as fh:
        for k, row in enumerate(csv.reader(fh)):
            ws.append([_number_or_text(c) if k else c for c in row])
    ws.freeze_panes = "A2"
    fd, tmp = tempfile.mkstemp(prefix=".summary.", suffix=".xlsx", dir=xlsx_path.parent)
    os.close(fd)
    try:
        wb.save(tmp)
        os.replace(tmp, xlsx_path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def run_batch(
    template: str | Path,
    cases_csv: str | Path,
    out_dir: str | Path,
    *,
    jobs: int = 1,
    collect: Sequence[str] = (),
    books: bool = False,
    force: bool = False,
    cluster: str | None = None,
    progress: bool = True,
    chunk: int = 8,
) -> BatchReport:
    """Run every case of ``cases_csv`` through ``template``; see the module docstring."""
    t0 = time.perf_counter()
    template = str(template)
    targets, cases = read_cases(cases_csv)
    # validate targets and collected names once, against the template, before any work
    probe = _prepared(template)
    for name in targets:
        probe.input_cell(name)
    for name in collect:
        probe.resolve(name)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    summary = out / "summary.csv"
    books_dir = str(out / "books") if books else None
    if books_dir:
        Path(books_dir).mkdir(exist_ok=True)
    columns = ["case", "status", "error", "seconds", *collect]
    if force and summary.exists():
        summary.unlink()
    if summary.exists():
        with summary.open(newline="", encoding="utf-8") as fh:
            old_header = next(csv.reader(fh), [])
        if old_header != columns:
            raise WorkbookError(
                str(summary), "was written with other --collect names; use --force to start over"
            )
    done_before = _finished(summary)
    if summary.exists():
        _keep_only_finished(summary, done_before)
    todo = [c for c in cases if c.label not in done_before]
    new_file = not summary.exists()
    report = BatchReport(
        len(cases), 0, len(cases) - len(todo), 0, 0.0, str(summary), str(out / "summary.xlsx")
    )

    bar = _progress(len(todo), progress)
    with summary.open("a", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=columns, extrasaction="ignore")
        if new_file:
            writer.writeheader()
            fh.flush()

        def record(rows: Iterable[dict[str, Any]]) -> None:
            for row in rows:
                writer.writerow(row)
                report.done += 1
                if row["status"] != "ok":
                    report.failed += 1
                    report.errors.append(f"{row['case']}: {row['error']}")
                bar(1)
            fh.flush()
            os.fsync(fh.fileno())

        if cluster:
            _run_on_cluster(cluster, template, todo, collect, books_dir, chunk, record)
        elif jobs > 1 and len(todo) > 1:
            # "spawn": a forked child would inherit the engine's locks mid-state
            ctx = multiprocessing.get_context("spawn")
            with ProcessPoolExecutor(max_workers=jobs, mp_context=ctx) as pool:
                futs = [
                    pool.submit(_run_chunk, template, ch, list(collect), books_dir, None)
                    for ch in _chunks(todo, chunk)
                ]
                for fut in as_completed(futs):
                    record(fut.result())
        else:
            for case in todo:
                record([run_case(template, case, collect, books_dir)])
    bar(0, close=True)
    _write_xlsx(summary, out / "summary.xlsx")
    report.seconds = time.perf_counter() - t0
    report.rate = report.done / report.seconds if report.seconds > 0 else 0.0
    return report


def _run_on_cluster(
    address: str,
    template: str,
    todo: list[Case],
    collect: Sequence[str],
    books_dir: str | None,
    chunk: int,
    record: Callable[[Iterable[dict[str, Any]]], None],
) -> None:
    try:
        from distributed import Client
        from distributed import as_completed as dask_completed
    except ImportError:  # pragma: no cover - distributed is installed with xlfuncs[cluster]
        raise WorkbookError(
            address, "--cluster needs the 'distributed' package (pip install xlfuncs[cluster])"
        ) from None
    blob = Path(template).read_bytes()
    try:
        client = Client(address, timeout="10s")
    except Exception as exc:
        raise WorkbookError(address, f"cannot reach the Dask scheduler: {exc}") from None
    with client:
        blob_f = client.scatter(blob, broadcast=True)
        futs = [
            client.submit(_run_chunk, template, ch, list(collect), books_dir, blob_f, pure=False)
            for ch in _chunks(todo, chunk)
        ]
        for fut in dask_completed(futs):
            record(fut.result())


def _progress(total: int, enabled: bool) -> Callable[..., None]:
    """A progress bar (tqdm: count, rate and ETA) on stderr, or a no-op."""
    if not enabled or total == 0:
        return lambda n, close=False: None
    from tqdm import tqdm

    bar = tqdm(total=total, unit="case", file=sys.stderr, dynamic_ncols=True, smoothing=0.1)

    def step(n: int, close: bool = False) -> None:
        if n:
            bar.update(n)
        if close:
            bar.close()

    return step
