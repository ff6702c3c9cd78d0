"""Batch benchmark: cases per second through the flagship template, -j 1 and -j 2.

Figures only (target: >= 33 cases/s on 2 cores for a template of ~200 formulas). Peak
memory is the largest resident set of this process and of any worker process.
"""

from __future__ import annotations

import csv
import resource
import sys
import tempfile
import time
import zipfile
from pathlib import Path

from xlfuncs.workbook import run_batch

ROOT = Path(__file__).resolve().parent.parent
TEMPLATE = ROOT / "workbook_templates" / "plant_harmonics.xlsx"


def formula_count(path: Path) -> int:
    with zipfile.ZipFile(path) as z:
        return sum(z.read(n).count(b"<f") for n in z.namelist() if n.startswith("xl/worksheets/"))


def main() -> int:
    n_cases = 120
    with tempfile.TemporaryDirectory() as tmp:
        cases = Path(tmp) / "cases.csv"
        with cases.open("w", newline="") as fh:
            w = csv.writer(fh)
            w.writerow(["case", "cap_steps", "ssc_mva", "load_kw"])
            for k in range(n_cases):
                w.writerow([f"c{k}", 1 + k % 4, 20 + 5 * (k % 7), 300 + 10 * (k % 11)])
        collect = ["bus_thd_pct", "res_order", "cap_i_rms", "verdict"]
        print(
            f"xlfuncs batch benchmark: {TEMPLATE.name} ({formula_count(TEMPLATE)} formula cells), "
            f"{n_cases} cases, collecting {len(collect)} outputs"
        )
        for jobs in (1, 2):
            t0 = time.perf_counter()
            rep = run_batch(
                TEMPLATE, cases, Path(tmp) / f"j{jobs}", jobs=jobs, collect=collect, progress=False
            )
            dt = time.perf_counter() - t0
            print(
                f"  -j {jobs}: {rep.done} cases in {dt:.2f} s = {rep.done / dt:.1f} cases/s "
                f"(start-up and template loading included; target >= 33 cases/s on 2 cores)"
            )
    me = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    print(f"  peak resident memory: this process {me:.0f} MiB, largest worker {kids:.0f} MiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
