"""Study benchmarks: figures, not tests.

Tolerance Monte Carlo: 10 000 samples × 10 frequencies × 20 nodes (target: under 1 s on
2 cores), with the tracemalloc peak of the run; the same study with BLAS held to one
thread during the batched solves (the default) against BLAS left at its own thread
count, measured in the same run.
"""

from __future__ import annotations

import statistics
import time
import tracemalloc

import numpy as np

from xlfuncs.studies import find_resonances, tolerance_study


def network(n_nodes: int = 20) -> tuple[list[list[object]], list[list[object]]]:
    rng = np.random.default_rng(5)
    parts: list[list[object]] = [["name", "kind", "from", "to", "value", "tolerance"]]
    nodes = [f"n{i}" for i in range(n_nodes)]
    for i, nd in enumerate(nodes):
        prev = "in" if i == 0 else nodes[i - 1]
        parts.append([f"R{i}", "R", prev, nd, float(rng.uniform(0.5, 5)), "5%"])
        parts.append([f"C{i}", "C", nd, "GND", float(rng.uniform(1e-6, 1e-4)), "10%"])
    parts.append(["Rload", "R", nodes[-1], "GND", 10.0, "1%"])
    sources: list[list[object]] = [["name", "kind", "from", "to", "harmonic", "rms"]]
    for h in (1, 3, 5, 7, 9, 11, 13, 15, 17):
        sources.append(["Vs", "V", "in", "GND", float(h), 230.0 / h])
    sources.append(["Vs", "V", "in", "GND", 0.0, 5.0])
    return parts, sources


def main() -> None:
    parts, sources = network()
    opts = [["fundamental_hz", 50]]
    print("xlfuncs studies benchmark (medians; figures, not tests)")
    tolerance_study(parts, sources, opts, target="Rload", samples=500, corners=False)  # warm-up
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        tolerance_study(parts, sources, opts, target="Rload", samples=10_000, corners=False)
        times.append(time.perf_counter() - t0)
    default_blas = []
    for _ in range(3):
        t0 = time.perf_counter()
        tolerance_study(
            parts, sources, opts, target="Rload", samples=10_000, corners=False, blas_threads=None
        )
        default_blas.append(time.perf_counter() - t0)
    t1, tn = statistics.median(times), statistics.median(default_blas)
    print(
        f"tolerance, 2 worker threads: BLAS held to 1 thread {t1:.3f} s | BLAS threads left "
        f"as they are {tn:.3f} s | ratio {t1 / tn:.2f}"
    )
    tracemalloc.start()
    t0 = time.perf_counter()
    r = tolerance_study(parts, sources, opts, target="Rload", samples=10_000, corners=True)
    t_corners = time.perf_counter() - t0
    _cur, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    print(
        f"tolerance Monte Carlo, 10000 samples x 10 frequencies x 20 nodes ({len(parts) - 1} parts "
        f"with tolerances): median {statistics.median(times):.3f} s over 5 runs (target < 1 s); "
        f"with linearised corners {t_corners:.3f} s; traced peak memory {peak / 2**20:.0f} MiB; "
        f"p5/p50/p95 of I_rms(Rload) = {r.percentile(5):.4g}/{r.percentile(50):.4g}/{r.percentile(95):.4g} A"
    )
    t0 = time.perf_counter()
    res = find_resonances(parts, "n10", 10, 1e5, fundamental_hz=50, options=opts, sources=sources)
    print(
        f"resonance search at n10, 10 Hz-100 kHz: {len(res)} found (an RC ladder has real poles "
        f"only) in {time.perf_counter() - t0:.3f} s"
    )


if __name__ == "__main__":
    main()
