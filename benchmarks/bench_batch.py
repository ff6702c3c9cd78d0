"""Workbook benchmark: fixed costs of `xlfuncs recalc` and `xlfuncs batch`, cases per second
with -j 1 and -j 2, and a Dask LocalCluster against -j 2.

Figures only, each next to a baseline measured in the same run (medians of repeated runs;
the machine's other load shows in the spread, so compare ratios, not absolute times):

* recalc fixed cost: a fresh `xlfuncs recalc` of the plant template, against starting the
  interpreter and against `import numpy`; then where it goes, measured in one process
  (imports, reading and loading the template, the first evaluation, writing);
* batch fixed cost: `xlfuncs batch` of 1 case and of 41 cases; the fixed cost is the 1-case
  time less one case's share of the 41-case run (for -j 1 and -j 2, where it includes
  starting the worker processes);
* throughput: 120 cases through the template with -j 1 and -j 2 (target >= 33 cases/s on
  2 cores for a template of ~200 formulas); peak memory;
* a Dask LocalCluster (2 worker processes, 1 thread each, started and stopped in the run)
  against -j 2 over the same 1000 cases: cases/s and the ratio.
"""

from __future__ import annotations

import csv
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TEMPLATE = ROOT / "workbook_templates" / "plant_harmonics.xlsx"
COLLECT = ["bus_thd_pct", "res_order", "cap_i_rms", "verdict"]
ENV = dict(os.environ, PYTHONWARNINGS="ignore")


def formula_count(path: Path) -> int:
    with zipfile.ZipFile(path) as z:
        return sum(z.read(n).count(b"<f") for n in z.namelist() if n.startswith("xl/worksheets/"))


def write_cases(path: Path, n: int) -> Path:
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["case", "cap_steps", "ssc_mva", "load_kw"])
        for k in range(n):
            w.writerow([f"c{k}", 1 + k % 4, 20 + 5 * (k % 7), 300 + 10 * (k % 11)])
    return path


def wall(args: list[str], repeat: int = 5) -> float:
    """Median wall time of a fresh process that succeeds (a failed run is not a timing)."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        run = subprocess.run(args, check=False, capture_output=True, env=ENV)
        times.append(time.perf_counter() - t0)
        if run.returncode != 0:
            raise SystemExit(
                f"benchmark run failed (exit {run.returncode}): {' '.join(args[2:])}: "
                + run.stderr.decode(errors="replace").strip()[-500:]
            )
    return statistics.median(times)


def cli(*args: str) -> list[str]:
    return [sys.executable, "-m", "xlfuncs", *args]


def recalc_costs(tmp: Path) -> None:
    out = str(tmp / "r.xlsx")
    base = wall([sys.executable, "-c", "pass"])
    numpy = wall([sys.executable, "-c", "import numpy"])
    version = wall(cli("--version"))
    full = wall(cli("recalc", str(TEMPLATE), "-o", out))
    print("recalc fixed cost (fresh process, median of 5)")
    print(f"  interpreter start            {base * 1e3:7.0f} ms  (baseline)")
    print(f"  import numpy                 {numpy * 1e3:7.0f} ms  (baseline)")
    print(
        f"  xlfuncs --version            {version * 1e3:7.0f} ms  = {version / numpy:.2f}x numpy"
    )
    print(f"  xlfuncs recalc TEMPLATE      {full * 1e3:7.0f} ms  = {full / numpy:.2f}x numpy")
    code = (
        "import time, sys; t0 = time.perf_counter()\n"
        "import xlfuncs.cli\n"
        "from xlfuncs.workbook.recalc import PreparedBook\n"
        "t1 = time.perf_counter(); pb = PreparedBook(sys.argv[1]); t2 = time.perf_counter()\n"
        "pb.evaluate(); t3 = time.perf_counter()\n"
        "done = pb.evaluate({'cap_steps': 2.0}); t4 = time.perf_counter()\n"
        "pb.write(sys.argv[2], done); t5 = time.perf_counter()\n"
        "print(t1 - t0, t2 - t1, t3 - t2, t4 - t3, t5 - t4)\n"
    )
    rows = []
    for _ in range(5):
        r = subprocess.run(
            [sys.executable, "-c", code, str(TEMPLATE), out],
            capture_output=True,
            text=True,
            env=ENV,
            check=True,
        )
        rows.append([float(x) for x in r.stdout.split()])
    med = [statistics.median(col) for col in zip(*rows, strict=True)]
    names = ["imports", "read + load template", "first evaluation", "next (one input)", "write"]
    print("  where it goes (one process, median of 5):")
    for name, v in zip(names, med, strict=True):
        print(f"    {name:<26} {v * 1e3:7.0f} ms")


def batch_costs(tmp: Path) -> None:
    one = write_cases(tmp / "one.csv", 1)
    many = write_cases(tmp / "many.csv", 41)
    print("batch fixed cost (fresh process, median of 3)")
    for jobs in (1, 2):
        t1 = wall(cli("batch", str(TEMPLATE), str(one), "-o", str(tmp / f"o1_{jobs}"),
                      "-j", str(jobs), "--force", "--no-progress"), repeat=3)  # fmt: skip
        t41 = wall(cli("batch", str(TEMPLATE), str(many), "-o", str(tmp / f"o41_{jobs}"),
                       "-j", str(jobs), "--force", "--no-progress"), repeat=3)  # fmt: skip
        per_case = (t41 - t1) / 40
        fixed = t1 - per_case
        print(
            f"  -j {jobs}: 1 case {t1 * 1e3:6.0f} ms, 41 cases {t41 * 1e3:6.0f} ms -> fixed "
            f"{fixed * 1e3:6.0f} ms + {per_case * 1e3:5.1f} ms per case"
        )


def throughput(tmp: Path) -> None:
    from xlfuncs.workbook import run_batch

    n_cases = 120
    cases = write_cases(tmp / "cases.csv", n_cases)
    print(
        f"throughput: {TEMPLATE.name} ({formula_count(TEMPLATE)} formula cells), {n_cases} "
        f"cases, collecting {len(COLLECT)} outputs"
    )
    rates = {}
    for jobs in (1, 2):
        t0 = time.perf_counter()
        rep = run_batch(
            TEMPLATE, cases, tmp / f"j{jobs}", jobs=jobs, collect=COLLECT, progress=False
        )
        dt = time.perf_counter() - t0
        rates[jobs] = rep.done / dt
        print(
            f"  -j {jobs}: {rep.done} cases in {dt:.2f} s = {rates[jobs]:.1f} cases/s "
            f"(start-up and template loading included; target >= 33 cases/s on 2 cores)"
        )
    print(f"  -j 2 / -j 1 = {rates[2] / rates[1]:.2f}")


def cluster(tmp: Path) -> None:
    try:
        import distributed
    except ImportError:
        print("dask: skipped (install xlfuncs[cluster])")
        return
    from xlfuncs.workbook import run_batch

    n = 1000
    cases = write_cases(tmp / "k.csv", n)
    t0 = time.perf_counter()
    local = run_batch(TEMPLATE, cases, tmp / "k_j2", jobs=2, collect=COLLECT, progress=False)
    t_local = time.perf_counter() - t0
    t0 = time.perf_counter()
    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None
    ) as lc:
        t_up = time.perf_counter() - t0
        t1 = time.perf_counter()
        rep = run_batch(
            TEMPLATE,
            cases,
            tmp / "k_dask",
            collect=COLLECT,
            cluster=lc.scheduler_address,
            progress=False,
        )
        t_run = time.perf_counter() - t1
    t_all = time.perf_counter() - t0
    r_local, r_dask, r_all = local.done / t_local, rep.done / t_run, rep.done / t_all
    print(f"dask LocalCluster (2 workers x 1 thread) vs -j 2, {n} cases")
    print(f"  -j 2:                 {t_local:6.2f} s = {r_local:6.1f} cases/s (baseline)")
    print(f"  cluster start:        {t_up:6.2f} s")
    print(
        f"  dask, cluster up:     {t_run:6.2f} s = {r_dask:6.1f} cases/s = "
        f"{r_dask / r_local:.2f}x -j 2"
    )
    print(
        f"  dask, start included: {t_all:6.2f} s = {r_all:6.1f} cases/s = "
        f"{r_all / r_local:.2f}x -j 2"
    )


def main() -> int:
    with tempfile.TemporaryDirectory() as tmpdir:
        tmp = Path(tmpdir)
        recalc_costs(tmp)
        batch_costs(tmp)
        throughput(tmp)
        cluster(tmp)
    me = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    print(f"peak resident memory: this process {me:.0f} MiB, largest child {kids:.0f} MiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
