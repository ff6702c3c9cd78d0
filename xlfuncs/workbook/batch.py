"""Many cases through one template: ``xlfuncs batch``.

Each row of the cases file sets inputs (its column headers are defined names or
``Sheet!A1`` addresses; an optional ``case`` column labels it; a blank cell leaves the
template's value). Every case starts from the template as it was loaded, whatever ran before
it in the same process. The template is read and loaded into the formula engine once per
worker process. A case is ``ok`` only when no formula cell of the recalculated book holds an
error (an Excel error or one of our ``ERROR:`` lines) and its collected outputs show none;
otherwise it is recorded as failed with the count and the first cells, and the batch goes on.

The record (``DIR/summary.journal``) is crash-consistent: one line per finished case, each
line a JSON object followed by its CRC-32 and a newline, flushed and fsynced (file, and the
directory when the journal is created) before the case counts as finished. A torn or
damaged line — a full disk, a power cut — fails its check and that case runs again; the
journal is rewritten without such lines (atomically) before anything is appended. A record
counts as finished only for the same template (SHA-256) and the same inputs, so an edited
cases file or template re-runs what changed. ``DIR/summary.csv`` and ``DIR/summary.xlsx`` —
one row per case, in the cases file's order, the latest record of each — are rebuilt from the
journal atomically at the end of every run, also an interrupted or refused one. An exclusive
lock on ``DIR/.lock`` keeps a second batch out of the same directory.

Re-running the same command resumes: finished cases are skipped, failed ones tried again
(``--force`` starts over). Optionally one recalculated workbook per case goes to
``DIR/books/``.

Parallel work: ``-j N`` runs cases in N local processes (this one, whose template is loaded
already, and N - 1 workers); ``--cluster ADDRESS`` sends them
to an existing Dask distributed scheduler (same record and resume behaviour). Ctrl-C stops
the run cleanly: workers ignore the interrupt, cases already finished stay recorded, the
summary is rebuilt, and :class:`BatchInterrupted` (a ``KeyboardInterrupt``) carries the
report.
"""

from __future__ import annotations

import atexit
import csv
import hashlib
import json
import math
import multiprocessing
import os
import re
import signal
import sys
import tempfile
import threading
import time
import zlib
from collections import deque
from collections.abc import Callable, Iterable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from contextlib import contextmanager, suppress
from dataclasses import dataclass, field
from pathlib import Path
from typing import IO, Any

from ..errors import WorkbookError, XlfuncsError
from .engine import CellError
from .package import fsync_dir, output_error, write_file_atomic
from .recalc import PreparedBook, cell_error, parse_value

__all__ = [
    "BatchInterrupted",
    "BatchReport",
    "Case",
    "read_cases",
    "run_batch",
    "sanitize_label",
]

_RESERVED = {
    "con", "prn", "aux", "nul",
    *(f"com{i}" for i in range(1, 10)),
    *(f"lpt{i}" for i in range(1, 10)),
}  # fmt: skip
_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f]")
_JOURNAL = "summary.journal"
_FIXED = ["case", "status", "error", "seconds"]


def sanitize_label(label: str, index: int) -> str:
    """A file-name-safe form of a case label: letters, digits, ``. _ -`` only, no path
    parts, no leading dot, no Windows device names, at most 80 characters."""
    s = _UNSAFE.sub("_", label.strip()).strip("._")[:80]
    if not s:
        s = f"case_{index}"
    if s.split(".")[0].lower() in _RESERVED:
        s = f"_{s}"
    return s


def _printable(text: str) -> str:
    """Text without control characters (a workbook cannot hold them; neither can a
    one-line record): each becomes ``_``."""
    return _CONTROL.sub("_", text)


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
    dropped: int = 0  # damaged journal lines found (their cases ran again)


class BatchInterrupted(KeyboardInterrupt):
    """Ctrl-C during a batch; ``report`` says what was recorded."""

    def __init__(self, report: BatchReport) -> None:
        super().__init__("interrupted")
        self.report = report


# ------------------------------------------------------------------ cases file
def _csv_rows(p: Path) -> list[list[str]]:
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            reader = csv.reader(fh)
            rows = []
            try:
                for row in reader:
                    rows.append(row)
            except csv.Error as exc:
                raise WorkbookError(
                    str(p),
                    f"unreadable CSV ({exc}); cases hold short values — is this the right file?",
                    f"row {reader.line_num}",
                ) from None
    except OSError as exc:
        raise output_error(p, exc, "cannot read") from None
    except UnicodeDecodeError:
        raise WorkbookError(str(p), "not UTF-8 text (save the CSV as UTF-8)") from None
    return rows


def read_cases(path: str | Path) -> tuple[list[str], list[Case]]:
    """Targets (column headers) and cases of a cases CSV (UTF-8)."""
    p = Path(path)
    rows = _csv_rows(p)
    if not rows or not any(c.strip() for c in rows[0]):
        raise WorkbookError(str(p), "empty cases file (expected a header row of names/addresses)")
    header = [h.strip() for h in rows[0]]
    if len(header) == 1:
        for sep, name in ((";", "semicolon"), ("\t", "tab")):
            if sep in header[0]:
                raise WorkbookError(
                    str(p),
                    f"{name}-separated? the header {rows[0][0]!r} is one column; save the "
                    "cases file as comma-separated CSV",
                    "row 1",
                )
    label_col = next((i for i, h in enumerate(header) if h.lower() == "case"), None)
    targets = [(i, h) for i, h in enumerate(header) if i != label_col]
    for i, h in targets:
        if not h:
            raise WorkbookError(
                str(p), f"column {i + 1} has no header (expected a name or Sheet!A1)", "row 1"
            )
    seen_targets: dict[str, int] = {}
    for i, h in targets:
        if h.lower() in seen_targets:
            raise WorkbookError(
                str(p),
                f"columns {seen_targets[h.lower()] + 1} and {i + 1} both set {h!r}",
                "row 1",
            )
        seen_targets[h.lower()] = i
    cases: list[Case] = []
    slugs: set[str] = set()
    labels: set[str] = set()
    for k, row in enumerate(rows[1:], start=1):
        if not any(c.strip() for c in row):
            continue
        if len(row) > len(header) and any(c.strip() for c in row[len(header) :]):
            raise WorkbookError(
                str(p),
                f"{len(row)} cells but {len(header)} headers (a value with an unquoted comma?)",
                f"row {k + 1}",
            )
        row = row + [""] * (len(header) - len(row))
        label = _printable(row[label_col].strip()) if label_col is not None else ""
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


def _check_columns(pb: PreparedBook, cases_csv: str, targets: list[str]) -> None:
    """Every column header must be an input of the template: all mismatches in one line."""
    bad = []
    for k, name in enumerate(targets):
        try:
            pb.input_cell(name)
        except WorkbookError as exc:
            bad.append((k, name, exc.problem))
    if not bad:
        return
    if len(bad) == 1:
        raise WorkbookError(cases_csv, f"column {bad[0][1]!r}: {bad[0][2]}", "row 1")
    inputs = pb.input_names()
    import difflib

    parts = []
    for _k, name, _problem in bad:
        near = difflib.get_close_matches(name, inputs, n=1, cutoff=0.6)
        parts.append(f"{name!r}" + (f" (did you mean {near[0]!r}?)" if near else ""))
    raise WorkbookError(
        cases_csv,
        f"{len(bad)} columns match no input of {pb.path}: {', '.join(parts)}; "
        f"inputs: {', '.join(inputs)}",
        "row 1",
    )


# ------------------------------------------------------------------ worker side
_PREPARED: dict[str, PreparedBook] = {}


def _prepared(template: str, blob: bytes | None = None) -> PreparedBook:
    """The template loaded once per process, keyed by its content (a file changed on disk
    is loaded again; a template sent as bytes is written to a temporary file once)."""
    if blob is None:
        try:
            blob = Path(template).read_bytes()
        except OSError as exc:
            raise output_error(template, exc, "cannot read") from None
        key = hashlib.sha256(blob).hexdigest()
        if key not in _PREPARED:
            _PREPARED[key] = PreparedBook(template)
        return _PREPARED[key]
    key = hashlib.sha256(blob).hexdigest()
    if key not in _PREPARED:
        # a private file of this process (mkstemp: created exclusively, mode 0600), never a
        # predictable shared name another user could plant or leave unreadable
        fd, tmp = tempfile.mkstemp(prefix="xlfuncs-template-", suffix=Path(template).suffix)
        with os.fdopen(fd, "wb") as fh:
            fh.write(blob)
        atexit.register(Path(tmp).unlink, missing_ok=True)
        _PREPARED[key] = PreparedBook(tmp)
    return _PREPARED[key]


def _cell_text(v: Any) -> Any:
    if isinstance(v, CellError):
        return v.code
    if isinstance(v, float) and not math.isfinite(v):
        return "#NUM!"
    if isinstance(v, list):
        return json.dumps([[_cell_text(c) for c in row] for row in v], allow_nan=False)
    return v


def _first_error(value: Any) -> str:
    cells = [c for row in value for c in row] if isinstance(value, list) else [value]
    for c in cells:
        bad = cell_error(c)
        if bad:
            return bad
    return ""


def _errors_text(errors: list[str]) -> str:
    shown = ", ".join(errors[:3]) + (", …" if len(errors) > 3 else "")
    return f"{len(errors)} formula cell{'s' if len(errors) != 1 else ''} hold errors: {shown}"


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
        errors = pb.formula_errors()
        if errors:
            problems.append(_errors_text(errors))
        if problems:
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


def _ignore_interrupts() -> None:
    """Worker processes leave Ctrl-C to the driver (which stops them cleanly)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _run_chunk(
    template: str,
    cases: list[Case],
    collect: Sequence[str],
    books_dir: str | None,
    blob: bytes | None,
) -> list[dict[str, Any]]:
    return [run_case(template, c, collect, books_dir, blob) for c in cases]


# ------------------------------------------------------------------ the journal
def _encode(record: dict[str, Any]) -> bytes:
    body = json.dumps(record, ensure_ascii=False, separators=(",", ":"), allow_nan=False)
    raw = body.encode("utf-8")
    return raw + b"\t" + f"{zlib.crc32(raw):08x}".encode() + b"\n"


def _decode(line: bytes) -> dict[str, Any] | None:
    """A journal line's record, or None when the line is torn or damaged."""
    if not line.endswith(b"\n"):
        return None
    body, tab, crc = line[:-1].rpartition(b"\t")
    if not tab or len(crc) != 8:
        return None
    try:
        if int(crc, 16) != zlib.crc32(body):
            return None
        rec = json.loads(body.decode("utf-8"))
    except (ValueError, UnicodeDecodeError):
        return None
    return rec if isinstance(rec, dict) else None


def _case_key(template_sha: str, case: Case) -> str:
    """What a record must match to count for a case: the template and the inputs."""
    raw = json.dumps([template_sha, [[t, v] for t, v in case.sets]], default=str)
    return hashlib.sha256(raw.encode()).hexdigest()[:32]


class _Journal:
    """The append-only record of finished cases (see the module docstring)."""

    def __init__(self, path: Path, columns: list[str]) -> None:
        self.path = path
        self.columns = columns
        self.records: list[dict[str, Any]] = []
        self.dropped = 0
        self._fh: IO[bytes] | None = None

    def load(self) -> None:
        if not self.path.exists():
            return
        try:
            raw = self.path.read_bytes()
        except OSError as exc:
            raise output_error(self.path, exc, "cannot read") from None
        lines = raw.splitlines(keepends=True)
        good: list[bytes] = []
        header: dict[str, Any] | None = None
        for line in lines:
            rec = _decode(line)
            if rec is None or ("journal" in rec and header is not None):
                self.dropped += 1  # torn or damaged: its case runs again
                continue
            if "journal" in rec:
                header = rec
                continue
            self.records.append(rec)
            good.append(line)
        collected = self.columns[len(_FIXED) :]
        if header is not None:
            same = header.get("columns") == self.columns
        else:  # the header line itself was torn: judge by the records
            same = all(list(r.get("values", {})) == collected for r in self.records)
        if not same:
            raise WorkbookError(
                str(self.path.parent),
                "was written with other --collect names; use --force to start over",
            )
        if self.dropped or header is None:  # rewrite, complete lines only, before appending
            head = _encode({"journal": 1, "columns": self.columns})
            _write_atomic_bytes(self.path, head + b"".join(good))

    def open(self) -> None:
        new = not self.path.exists()
        try:
            self._fh = self.path.open("ab")
            if new:
                self._fh.write(_encode({"journal": 1, "columns": self.columns}))
                self._fh.flush()
                os.fsync(self._fh.fileno())
                fsync_dir(self.path.parent)
        except OSError as exc:
            raise output_error(self.path, exc) from None

    def append(self, records: list[dict[str, Any]]) -> None:
        """Write, flush and fsync; only then do the cases count as finished."""
        assert self._fh is not None
        try:
            for rec in records:
                self._fh.write(_encode(rec))
            self._fh.flush()
            os.fsync(self._fh.fileno())
        except OSError as exc:
            raise output_error(self.path, exc) from None
        self.records.extend(records)

    def close(self) -> None:
        if self._fh is not None:
            with suppress(OSError):
                self._fh.close()
            self._fh = None


def _write_atomic_bytes(path: Path, data: bytes) -> None:
    def write(fh: IO[bytes]) -> None:
        fh.write(data)

    write_file_atomic(path, write)


# ------------------------------------------------------------------ summaries
def _number_or_text(cell: Any) -> Any:
    if isinstance(cell, (int, float)) and not isinstance(cell, bool):
        return cell
    if isinstance(cell, str):
        v = parse_value(cell)
        return v if isinstance(v, float) else _printable(cell)
    return cell


def _summary_rows(
    cases: list[Case], records: list[dict[str, Any]], keys: dict[str, str], columns: list[str]
) -> list[list[Any]]:
    latest: dict[str, dict[str, Any]] = {}
    for rec in records:
        if keys.get(rec.get("case", "")) == rec.get("key"):
            latest[rec["case"]] = rec
    out = []
    for case in cases:
        found = latest.get(case.label)
        if found is not None:
            values = found.get("values", {})
            out.append(
                [found["case"], found["status"], found["error"], found["seconds"]]
                + [values.get(c, "") for c in columns[len(_FIXED) :]]
            )
    return out


def _write_summaries(out: Path, columns: list[str], rows: list[list[Any]]) -> None:
    import io

    import openpyxl

    buf = io.StringIO(newline="")
    w = csv.writer(buf)
    w.writerow(columns)
    w.writerows(rows)
    _write_atomic_bytes(out / "summary.csv", buf.getvalue().encode("utf-8"))

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "summary"
    ws.append(columns)
    for row in rows:
        ws.append([_number_or_text(c) for c in row])
    ws.freeze_panes = "A2"
    xbuf = io.BytesIO()
    wb.save(xbuf)
    _write_atomic_bytes(out / "summary.xlsx", xbuf.getvalue())


# ------------------------------------------------------------------ the lock
@contextmanager
def _locked(out: Path) -> Iterator[None]:
    """An exclusive lock on the output directory, refused (one line) when held."""
    path = out / ".lock"
    try:
        fh = path.open("a+")
    except OSError as exc:
        raise output_error(out, exc) from None
    try:
        try:
            if sys.platform == "win32":  # pragma: no cover - exercised on Windows only
                import msvcrt

                fh.seek(0)  # every process locks the same byte, the first one
                msvcrt.locking(fh.fileno(), msvcrt.LK_NBLCK, 1)
            else:
                import fcntl

                fcntl.flock(fh.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            try:
                fh.seek(0)
                holder = fh.read().strip()[:40]
            except OSError:  # Windows: the locked byte cannot be read
                holder = ""
            raise WorkbookError(
                str(out),
                "another batch is writing to this directory"
                + (f" (process {holder})" if holder else "")
                + "; wait for it to finish or choose another -o",
            ) from None
        try:
            fh.seek(0)
            fh.truncate()
            fh.write(str(os.getpid()))
            fh.flush()
        except OSError:
            pass
        yield
    finally:
        fh.close()  # closing releases the lock


# ------------------------------------------------------------------ driver side
def _chunks(items: list[Case], size: int) -> Iterator[list[Case]]:
    for i in range(0, len(items), size):
        yield items[i : i + size]


def _prepare_output(out: Path) -> None:
    if out.exists() and not out.is_dir():
        raise WorkbookError(str(out), "exists and is a file; -o needs a directory")
    for parent in out.parents:
        if parent.exists():
            if not parent.is_dir():
                raise WorkbookError(str(out), f"{str(parent)!r} is a file, not a directory")
            break
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise output_error(out, exc, "cannot create the output directory") from None


@contextmanager
def _deferred_interrupts() -> Iterator[None]:
    """A Ctrl-C that arrives while a record is being written takes effect right after it
    (so the journal and what the run reports agree)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    pending: list[int] = []
    old = signal.signal(signal.SIGINT, lambda signum, _frame: pending.append(signum))
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)
    if pending:
        raise KeyboardInterrupt


@contextmanager
def _no_interrupts() -> Iterator[None]:
    """Ctrl-C ignored for a moment (while worker processes start, so that they inherit
    the ignoring, and while an interrupted run is tidied up)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)


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
    cases_csv = str(cases_csv)
    if jobs < 1:
        raise WorkbookError(cases_csv, f"-j {jobs}: expected 1 or more worker processes")
    targets, cases = read_cases(cases_csv)
    out = Path(out_dir)
    if out.exists() and not out.is_dir():  # before any work
        raise WorkbookError(str(out), "exists and is a file; -o needs a directory")
    # validate targets and collected names once, against the template, before any work
    probe = _prepared(template)
    _check_columns(probe, cases_csv, targets)
    for name in collect:
        probe.resolve(name)
    template_sha = hashlib.sha256(Path(template).read_bytes()).hexdigest()
    keys = {c.label: _case_key(template_sha, c) for c in cases}
    _prepare_output(out)
    columns = [*_FIXED, *collect]
    journal_path = out / _JOURNAL
    report = BatchReport(
        len(cases), 0, 0, 0, 0.0, str(out / "summary.csv"), str(out / "summary.xlsx")
    )
    with _locked(out):
        if force:
            for name in (_JOURNAL, "summary.csv", "summary.xlsx"):
                try:
                    (out / name).unlink(missing_ok=True)
                except OSError as exc:
                    raise output_error(out / name, exc, "cannot remove") from None
        elif not journal_path.exists() and (out / "summary.csv").exists():
            raise WorkbookError(
                str(out),
                "holds a summary.csv without its summary.journal (another program's, or an "
                "earlier version's); use --force to start over or choose another -o",
            )
        journal = _Journal(journal_path, columns)
        journal.load()
        report.dropped = journal.dropped
        finished = {
            r["case"]
            for r in journal.records
            if r.get("status") == "ok" and keys.get(r.get("case", "")) == r.get("key")
        }
        todo = [c for c in cases if c.label not in finished]
        report.skipped = len(cases) - len(todo)
        books_dir = str(out / "books") if books else None
        if books_dir:
            try:
                Path(books_dir).mkdir(exist_ok=True)
            except OSError as exc:
                raise output_error(books_dir, exc, "cannot create") from None
        journal.open()
        bar = _progress(len(todo), progress)

        def record(rows: Iterable[dict[str, Any]]) -> None:
            recs = []
            for row in rows:
                recs.append(
                    {
                        "case": row["case"],
                        "key": keys[row["case"]],
                        "status": row["status"],
                        "error": row["error"],
                        "seconds": row["seconds"],
                        "values": {c: row.get(c, "") for c in collect},
                    }
                )
            with _deferred_interrupts():
                journal.append(recs)  # fsynced: from here on the cases count as finished
                for row in recs:
                    report.done += 1
                    if row["status"] != "ok":
                        report.failed += 1
                        report.errors.append(f"{row['case']}: {row['error']}")
                    bar(1)

        interrupted = False
        failure: BaseException | None = None
        try:
            if cluster:
                _run_on_cluster(cluster, template, todo, collect, books_dir, chunk, record)
            elif jobs > 1 and len(todo) > 1:
                _run_in_processes(template, todo, collect, books_dir, chunk, jobs, record)
            else:
                for case in todo:
                    record([run_case(template, case, collect, books_dir)])
        except KeyboardInterrupt:
            interrupted = True
        except BaseException as exc:
            failure = exc
            raise
        finally:
            bar(0, close=True)
            journal.close()
            with _no_interrupts():
                try:
                    rows = _summary_rows(cases, journal.records, keys, columns)
                    _write_summaries(out, columns, rows)
                except (XlfuncsError, OSError):
                    if failure is None:
                        raise
    report.seconds = time.perf_counter() - t0
    report.rate = report.done / report.seconds if report.seconds > 0 else 0.0
    if interrupted:
        raise BatchInterrupted(report)
    return report


def _run_in_processes(
    template: str,
    todo: list[Case],
    collect: Sequence[str],
    books_dir: str | None,
    chunk: int,
    jobs: int,
    record: Callable[[Iterable[dict[str, Any]]], None],
) -> None:
    """``jobs`` processes work through the cases: this one (whose template is already
    loaded, so it starts at once) and ``jobs - 1`` workers, which start meanwhile."""
    # "spawn": a forked child would inherit the engine's locks mid-state
    ctx = multiprocessing.get_context("spawn")
    workers = jobs - 1
    pool = ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_ignore_interrupts)
    pending = deque(_chunks(todo, chunk))
    futs: set[Future[list[dict[str, Any]]]] = set()

    def submit() -> None:
        while pending and len(futs) < 2 * workers:
            futs.add(pool.submit(_run_chunk, template, pending.popleft(), list(collect),
                                 books_dir, None))  # fmt: skip

    def collect_done() -> None:
        for f in [f for f in futs if f.done()]:
            futs.discard(f)
            record(f.result())

    try:
        with _no_interrupts():  # workers start with Ctrl-C ignored
            submit()
        while pending or futs:
            collect_done()
            submit()
            if pending:
                record(_run_chunk(template, pending.popleft(), collect, books_dir, None))
            elif futs:
                wait(futs, return_when=FIRST_COMPLETED)
    except BrokenProcessPool:
        raise WorkbookError(
            template,
            "a worker process died (out of memory, or killed); the cases finished so far "
            "are recorded: run the same command again to go on",
        ) from None
    except KeyboardInterrupt:
        with _no_interrupts():
            for f in futs:
                f.cancel()
            pool.shutdown(wait=True, cancel_futures=True)
            for f in futs:  # chunks that finished meanwhile are kept
                if f.done() and not f.cancelled() and f.exception() is None:
                    record(f.result())
        raise
    finally:
        pool.shutdown(wait=True, cancel_futures=True)


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
        try:
            for fut in dask_completed(futs):
                record(fut.result())
        except KeyboardInterrupt:
            client.cancel(futs)
            raise
        except XlfuncsError:
            raise
        except Exception as exc:  # a lost worker, a scheduler gone away
            text = " ".join(str(exc).split())[:200]
            raise WorkbookError(
                address,
                f"the cluster failed ({type(exc).__name__}: {text}); the cases finished so "
                "far are recorded: run the same command again to go on",
            ) from None


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
