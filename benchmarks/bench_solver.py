"""Solver benchmarks: figures and ratios, never pass/fail.

(a) our full solve (topology check + assembly + batched LAPACK solve + accuracy check)
    against bare ``numpy.linalg.solve`` on the same stacked matrices;
(b) median latency of parse + solve + totals for a 30-part, 10-tone network.

Run: ``make bench``. Medians of repeated runs in one process; the machine is shared, so
compare ratios rather than absolute times.
"""

from __future__ import annotations

import statistics
import time

import numpy as np

import xlfuncs
from xlfuncs.api import system_of


def ladder(n_nodes: int, rng: np.random.Generator) -> list[list[object]]:
    """A random RLC ladder with cross links: n_nodes nodes, about 3 parts per node."""
    rows: list[list[object]] = [["name", "kind", "from", "to", "value"]]
    nodes = [f"n{i}" for i in range(n_nodes)]
    for i, nd in enumerate(nodes):
        prev = "GND" if i == 0 else nodes[i - 1]
        rows.append([f"R{i}", "R", prev, nd, float(rng.uniform(0.1, 10))])
        rows.append([f"C{i}", "C", nd, "GND", float(rng.uniform(1e-6, 1e-4))])
        j = int(rng.integers(0, n_nodes))
        if j != i:
            rows.append([f"L{i}", "L", nd, nodes[j], float(rng.uniform(1e-4, 1e-2))])
    return rows


def timeit(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def bench_ratio(n_nodes: int, n_freqs: int, repeat: int) -> None:
    rng = np.random.default_rng(1)
    parts = ladder(n_nodes, rng)
    freqs = np.linspace(10.0, 20e3, n_freqs)
    sources = [["name", "kind", "from", "to", "freq_hz", "peak"]]
    sources += [["Is", "I", "GND", "n0", float(f), 1.0] for f in freqs]
    circuit = xlfuncs.Circuit.from_tables(parts, sources)
    system = system_of(circuit)
    f = circuit.freqs_hz
    a = system.matrices(f)
    b = system.rhs(f)[..., None]
    bare = timeit(lambda: np.linalg.solve(a, b), repeat)
    # a fresh System each run: MNA assembly and the one-off QZ reduction are timed too
    ours = {
        m: timeit(lambda m=m: system_of(circuit).solve(f, method=m), repeat)
        for m in ("auto", "direct")
    }
    x_auto = system_of(circuit).solve(f, method="pencil")
    x_bare = np.linalg.solve(a, b)[..., 0]
    agree = float(np.max(np.abs(x_auto - x_bare)) / np.max(np.abs(x_bare)))
    print(
        f"(a) n={system.n:4d} unknowns ({n_nodes} nodes) x {n_freqs:5d} frequencies: "
        f"bare numpy.linalg.solve {bare * 1e3:8.2f} ms | ours auto {ours['auto'] * 1e3:8.2f} ms "
        f"(ratio {ours['auto'] / bare:5.2f}), ours direct {ours['direct'] * 1e3:8.2f} ms "
        f"(ratio {ours['direct'] / bare:5.2f}); target <= 1.3; pencil vs bare max rel diff {agree:.1e}"
    )


def bench_latency(repeat: int) -> None:
    rng = np.random.default_rng(2)
    parts = ladder(12, rng)[:31]  # header + 30 parts
    sources = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    sources.append(["Vs", "V", "n0", "GND", 1, 230.0, 0.0])
    for h in (5, 7, 11, 13, 17, 19, 23, 25, 29):
        sources.append(["Ih", "I", "GND", "n5", h, 100.0 / h, 0.0])
    options = [["fundamental_hz", 50]]
    n_parts = len(parts) - 1

    def job() -> None:
        sol = xlfuncs.solve(parts, sources, options)
        sp = sol.current("R3")
        float(sp.rms_total)
        sp.true_peak()
        sp.thd()

    job()
    t = timeit(job, repeat)
    print(
        f"(b) parse + solve + totals (RMS, true peak, THD), {n_parts} parts, "
        f"{len(sources) - 1} tones: median {t * 1e3:.3f} ms over {repeat} runs (target <= 2 ms)"
    )


def main() -> None:
    print("xlfuncs solver benchmark (medians; figures, not tests)")
    bench_ratio(30, 2000, repeat=15)
    bench_ratio(100, 200, repeat=15)
    bench_latency(repeat=300)


if __name__ == "__main__":
    main()
