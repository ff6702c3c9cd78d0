"""Solver benchmarks: figures and ratios against baselines measured in the same run,
never pass/fail.

(a) dense path: our checked solve against bare ``numpy.linalg.solve`` on the same
    stacked matrices;
(b) sparse path: feeders and a grid × 50 harmonics against bare SuperLU
    (``scipy.sparse.linalg.splu`` + solve per frequency on ready CSC matrices), the
    re-used column ordering against a fresh one per frequency, and the peak memory of a
    20 000-node feeder (solve + Solution) in a fresh process;
(c) scans: 10 000 points of a 73-unknown network against the bare QZ pencil
    back-substitution and against the stacked dense solve; peak memory of a
    100 000-point scan;
(d) the cost model behind ``method="auto"``: measured LU/QZ/back-substitution times and
    the break-even number of frequencies;
(e) small-network latency: the solve part of an uncached 30-part, 10-tone solve, and
    the whole parse + solve + totals;
(f) repeated small solves (the resonance refinement pattern).

Run: ``make bench``. Medians of repeated runs in one process; the machine may be shared,
so compare the ratios rather than absolute times.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
import tracemalloc
from collections.abc import Callable

import numpy as np

import xlfuncs
from xlfuncs.api import system_of
from xlfuncs.solver import _SPARSE_PANEL, _SPARSE_RELAX


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


def feeder(n_nodes: int) -> tuple[list[list[object]], str]:
    """Demo data: a radial feeder of n_nodes/2 sections (series R, series L through an
    intermediate node, shunt C), 0.01 Ω, 50 µH, 1 µF per section."""
    p: list[list[object]] = [["name", "kind", "from", "to", "value"]]
    prev = "GND"
    for k in range(1, n_nodes // 2 + 1):
        p += [
            [f"R{k}", "R", prev, f"m{k}", 0.01],
            [f"L{k}", "L", f"m{k}", f"n{k}", 50e-6],
            [f"C{k}", "C", f"n{k}", "GND", 1e-6],
        ]
        prev = f"n{k}"
    return p, prev


def grid(side: int) -> tuple[list[list[object]], str]:
    """Demo data: a side × side meshed grid; every fourth row of horizontal links is
    inductive (100 µH), the rest resistive (0.05 Ω); 1 µF to the reference at each
    node; fed through 0.01 Ω at one corner."""
    p: list[list[object]] = [["name", "kind", "from", "to", "value"]]

    def nm(i: int, j: int) -> str:
        return f"g{i}_{j}"

    p.append(["Rs", "R", "GND", nm(0, 0), 0.01])
    for i in range(side):
        for j in range(side):
            if j + 1 < side:
                ind = i % 4 == 0
                p.append([f"H{i}_{j}", "L" if ind else "R", nm(i, j), nm(i, j + 1),
                          1e-4 if ind else 0.05])  # fmt: skip
            if i + 1 < side:
                p.append([f"V{i}_{j}", "R", nm(i, j), nm(i + 1, j), 0.05])
            p.append([f"C{i}_{j}", "C", nm(i, j), "GND", 1e-6])
    return p, nm(side - 1, side - 1)


def timeit(fn: Callable[[], object], repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def paired(fns: dict[str, Callable[[], object]], repeat: int) -> dict[str, float]:
    """Median time of each function, the runs interleaved (a, b, a, b, ...) so that a
    busy spell of the machine falls on every figure alike and the ratios stay fair."""
    times: dict[str, list[float]] = {k: [] for k in fns}
    for _ in range(repeat):
        for k, fn in fns.items():
            t0 = time.perf_counter()
            fn()
            times[k].append(time.perf_counter() - t0)
    return {k: statistics.median(v) for k, v in times.items()}


def traced_peak(fn: Callable[[], object]) -> tuple[float, object]:
    tracemalloc.start()
    out = fn()
    _cur, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20, out


def harmonic_sources(node: str, n: int = 50) -> list[list[object]]:
    """Demo data: 1/h A into ``node`` at the harmonics 1 … n of 50 Hz."""
    s: list[list[object]] = [["name", "kind", "from", "to", "freq_hz", "peak"]]
    return s + [["Is", "I", "GND", node, 50.0 * h, 1.0 / h] for h in range(1, n + 1)]


# ---------------------------------------------------------------------------- (a) dense
def bench_dense(n_nodes: int, n_freqs: int, repeat: int) -> None:
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
    from xlfuncs.solver import _one_blas_thread

    bare_mt = timeit(lambda: np.linalg.solve(a, b), 1 if system.n > 100 else repeat)
    with _one_blas_thread():
        bare_1 = timeit(lambda: np.linalg.solve(a, b), repeat)
    bare = min(bare_mt, bare_1)
    ours = timeit(lambda: system_of(circuit).solve(f, method="dense"), repeat)
    auto_m = system._choose_method(f.size, "auto", sets=False)
    auto = timeit(lambda: system_of(circuit).solve(f), repeat)
    print(
        f"(a) dense, n={system.n} unknowns x {n_freqs} frequencies: bare numpy.linalg.solve "
        f"{bare_mt * 1e3:.2f} ms (default BLAS threads) / {bare_1 * 1e3:.2f} ms (1 thread), "
        f"baseline the faster {bare * 1e3:.2f} ms | ours (assembly, equilibration, residual check) "
        f"{ours * 1e3:.2f} ms, ratio {ours / bare:.2f} | auto -> {auto_m} "
        f"{auto * 1e3:.2f} ms, ratio {auto / bare:.2f}"
    )


# --------------------------------------------------------------------------- (b) sparse
def bench_sparse(
    name: str, parts: list[list[object]], node: str, repeat: int, harmonics: int = 50
) -> None:
    from scipy.sparse.linalg import splu

    circuit = xlfuncs.Circuit.from_tables(parts, harmonic_sources(node, harmonics))
    f = circuit.freqs_hz
    system = system_of(circuit)
    mats = [system.sparse_matrix(x) for x in f]
    rhs = system.rhs(f)

    def bare() -> None:
        for a, b in zip(mats, rhs, strict=True):
            splu(a).solve(b)  # scipy's defaults: COLAMD ordering, partial pivoting

    def bare_blocks() -> None:  # the same with the panel and relaxation ours uses
        for a, b in zip(mats, rhs, strict=True):
            splu(a, panel_size=_SPARSE_PANEL, relax=_SPARSE_RELAX).solve(b)

    def ours() -> None:
        system_of(circuit).solve(f)  # fresh System: ordering and checks included

    t = paired({"bare": bare, "blocks": bare_blocks, "ours": ours}, repeat)
    t_bare, t_ours = t["bare"], t["ours"]
    # re-used ordering against a fresh one per frequency, same options otherwise
    a0 = mats[0]
    q = np.argsort(splu(a0, permc_spec="COLAMD").perm_c)
    permuted = [a[:, q].tocsc() for a in mats]
    t_fresh = timeit(
        lambda: [splu(a, permc_spec="COLAMD") for a in mats],
        1,
    )
    t_reuse = timeit(
        lambda: [splu(a, permc_spec="NATURAL") for a in permuted],
        1,
    )
    print(
        f"(b) sparse, {name} (n={system.n}, nnz={system.nnz}) x {f.size} harmonics: bare splu "
        f"per frequency {t_bare:.3f} s | ours {t_ours:.3f} s, ratio {t_ours / t_bare:.2f} "
        f"(target <= 1.5) | bare splu with ours' panel {_SPARSE_PANEL} and relaxation "
        f"{_SPARSE_RELAX} {t['blocks']:.3f} s (ours / that {t_ours / t['blocks']:.2f}) | "
        f"factorisations with the ordering re-used {t_reuse:.3f} s vs ordered afresh "
        f"{t_fresh:.3f} s (ratio {t_reuse / t_fresh:.2f})"
    )


_MEMORY_CHILD = """
import resource, sys, time
sys.path.insert(0, {bench_dir!r})
from bench_solver import feeder, harmonic_sources
import xlfuncs
p, far = feeder({n})
t0 = time.perf_counter()
sol = xlfuncs.solve(p, harmonic_sources(far))
dt = time.perf_counter() - t0
print(dt, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, sol.x.shape[1])
"""


def bench_memory(n_nodes: int) -> None:
    import os

    code = _MEMORY_CHILD.format(bench_dir=os.path.dirname(os.path.abspath(__file__)), n=n_nodes)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    dt, rss_mib, n = out.stdout.split()
    dense_gib = 50 * 16 * int(n) ** 2 / 2**30
    print(
        f"(b) {n_nodes}-node feeder x 50 harmonics (n={n}), parse + solve + Solution in a "
        f"fresh process: {float(dt):.2f} s, peak RSS {float(rss_mib):.0f} MiB (target <= 4096 "
        f"MiB; stacked dense matrices alone would need {dense_gib:.0f} GiB)"
    )


# ---------------------------------------------------------------------------- (c) scans
def _bare_pencil(system: xlfuncs.System, f: np.ndarray, idx: int) -> np.ndarray:
    """The QZ pencil back-substitution alone (no checks): the baseline of a scan."""
    aa, bb, q, z = system._schur
    w = 2 * np.pi * f
    b = np.zeros((f.size, system.n), complex)
    b[:, idx] = 1.0
    ct = np.ascontiguousarray((b @ q.conj()).T)
    yt = np.zeros_like(ct)
    diag = aa.diagonal()[:, None] + 1j * bb.diagonal()[:, None] * w[None, :]
    for i in range(system.n - 1, -1, -1):
        acc = ct[i] - aa[i, i + 1 :] @ yt[i + 1 :] - 1j * w * (bb[i, i + 1 :] @ yt[i + 1 :])
        yt[i] = acc / diag[i]
    return (z @ yt).T[:, idx]


def bench_scan(repeat: int) -> None:
    from xlfuncs.solver import _one_blas_thread

    rng = np.random.default_rng(4)
    parts = ladder(37, rng)
    circuit = xlfuncs.Circuit.from_tables(parts, None)
    system = system_of(circuit)
    f = np.geomspace(10.0, 1e5, 10_000)
    idx = circuit.nodes.index("n20")
    _ = system._schur  # the QZ form is computed once per network, outside both timings

    def bare() -> None:
        with _one_blas_thread():
            _bare_pencil(system, f, idx)

    t_bare = timeit(bare, repeat)
    t_ours = timeit(lambda: xlfuncs.impedance_scan(circuit, "n20", f), repeat)
    mem, (_f, z) = traced_peak(lambda: xlfuncs.impedance_scan(circuit, "n20", f))
    z_bare = _bare_pencil(system, f, idx)
    agree = float(np.max(np.abs(z - z_bare) / np.abs(z_bare)))
    a = system.matrices(f[:1000])
    e = np.zeros((1000, system.n, 1), complex)
    e[:, idx] = 1.0
    t_dense = timeit(lambda: np.linalg.solve(a, e), 3) * 10  # 10 blocks of 1000
    print(
        f"(c) scan, {system.n} unknowns x 10000 points: bare QZ back-substitution "
        f"{t_bare * 1e3:.1f} ms | ours (impedance_scan, checked) {t_ours * 1e3:.1f} ms, ratio "
        f"{t_ours / t_bare:.2f}; traced peak {mem:.0f} MiB | stacked dense LU (old scan path) "
        f"~{t_dense * 1e3:.0f} ms, 10000 matrices would hold "
        f"{10_000 * 16 * system.n**2 / 2**20:.0f} MiB; ours vs pencil max rel diff {agree:.1e}"
    )
    f5 = np.geomspace(10.0, 1e5, 100_000)
    t0 = time.perf_counter()
    mem5, _ = traced_peak(lambda: xlfuncs.impedance_scan(circuit, "n20", f5))
    print(
        f"(c) scan, {system.n} unknowns x 100000 points: traced peak {mem5:.0f} MiB (target "
        f"<= 500 MB), {time.perf_counter() - t0:.2f} s with tracing"
    )


# ----------------------------------------------------------------------- (d) cost model
def bench_cost_model() -> None:
    from xlfuncs.solver import _dense_cost, _pencil_cost

    print("(d) cost model (seconds per frequency; QZ once per network):")
    for n_nodes in (25, 50, 100):
        rng = np.random.default_rng(1)
        circuit = xlfuncs.Circuit.from_tables(ladder(n_nodes, rng), None)
        system = system_of(circuit)
        n = system.n
        m = 64
        f = np.geomspace(10, 2e4, m)
        e = np.zeros(n)
        e[0] = 1.0
        system.solve(f[:2], rhs=e, method="dense")
        t_lu = timeit(lambda: system.solve(f, rhs=e, method="dense"), 5) / m  # noqa: B023
        t_qz = timeit(lambda: system_of(circuit)._schur, 3)  # noqa: B023
        fp = np.geomspace(10, 2e4, 2048)
        t_bs = timeit(lambda: system.solve(fp, rhs=e, method="pencil"), 3) / fp.size  # noqa: B023
        be = t_qz / max(t_lu - t_bs, 1e-12)
        model_be = next(
            (k for k in range(1, 100_000) if _pencil_cost(n, k) < _dense_cost(n, k)), None
        )
        print(
            f"    n={n:4d}: dense {t_lu * 1e6:8.1f} us/f (model {_dense_cost(n, 1) * 1e6:8.1f}) | "
            f"QZ {t_qz * 1e3:8.2f} ms (model {_pencil_cost(n, 0) * 1e3:8.2f}) | pencil "
            f"{t_bs * 1e6:6.1f} us/f | measured break-even F = {be:7.0f} (model {model_be})"
        )
    # the old rule "F >= n/4" took QZ at n = 200, F = 50
    circuit = xlfuncs.Circuit.from_tables(ladder(100, np.random.default_rng(1)), None)
    f = np.geomspace(10, 2e4, 50)
    e = np.zeros(system_of(circuit).n)
    e[0] = 1.0
    t_p = timeit(lambda: system_of(circuit).solve(f, rhs=e, method="pencil"), 3)
    t_d = timeit(lambda: system_of(circuit).solve(f, rhs=e, method="dense"), 3)
    pick = system_of(circuit)._choose_method(50, "auto", sets=False)
    print(
        f"    n={e.size}, F=50 (fresh network each time): pencil {t_p * 1e3:.1f} ms, dense "
        f"{t_d * 1e3:.1f} ms (pencil/dense {t_p / t_d:.2f}); auto picks {pick}"
    )


# --------------------------------------------------------------------------- (e) latency
def latency_case() -> tuple[list[list[object]], list[list[object]], list[list[object]]]:
    rng = np.random.default_rng(2)
    parts = ladder(12, rng)[:31]  # header + 30 parts
    sources: list[list[object]] = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    sources.append(["Vs", "V", "n0", "GND", 1, 230.0, 0.0])
    for h in (5, 7, 11, 13, 17, 19, 23, 25, 29):
        sources.append(["Ih", "I", "GND", "n5", h, 100.0 / h, 0.0])
    return parts, sources, [["fundamental_hz", 50]]


def bench_latency(repeat: int) -> None:
    from xlfuncs.solution import Solution

    parts, sources, options = latency_case()
    circuit = xlfuncs.Circuit.from_tables(parts, sources, options)
    f = circuit.freqs_hz
    sysm = system_of(circuit)
    a = sysm.matrices(f)
    b = sysm.rhs(f)[..., None]

    def solve_part() -> None:
        system = system_of(circuit)
        Solution(system, f, system.solve(f))

    def job() -> None:
        sol = xlfuncs.solve(parts, sources, options)
        sp = sol.current("R3")
        float(sp.rms_total)
        sp.true_peak()
        sp.thd()

    solve_part()
    job()
    t_bare = timeit(lambda: np.linalg.solve(a, b), repeat)
    t_solve = timeit(solve_part, repeat)
    t_job = timeit(job, repeat)
    print(
        f"(e) latency, 30 parts x {f.size} tones (n={sysm.n}): bare stacked numpy.linalg.solve "
        f"{t_bare * 1e3:.3f} ms | solve part (build_system + System.solve + Solution arrays) "
        f"{t_solve * 1e3:.3f} ms, ratio {t_solve / t_bare:.1f} | parse + solve + totals (RMS, "
        f"true peak, THD) {t_job * 1e3:.3f} ms"
    )


def bench_repeated(repeat: int) -> None:
    circuit = xlfuncs.Circuit.from_tables(ladder(20, np.random.default_rng(3)), None)
    system = system_of(circuit)
    e = np.zeros((8, system.n), complex)
    e[:, 5] = 1.0
    f = np.geomspace(100, 200, 8)
    system.solve(f, rhs=e)
    a = system.matrices(f)

    def ours() -> None:
        for _ in range(35):
            system.solve(f, rhs=e)

    def bare() -> None:
        for _ in range(35):
            np.linalg.solve(a, e[..., None])

    t_o, t_b = timeit(ours, repeat), timeit(bare, repeat)
    print(
        f"(f) 35 solves of 8 frequencies on one System (n={system.n}, the resonance refinement "
        f"pattern): ours {t_o * 1e3:.2f} ms, bare numpy.linalg.solve {t_b * 1e3:.2f} ms, "
        f"ratio {t_o / t_b:.1f}"
    )


def main() -> None:
    t0 = time.perf_counter()
    print("xlfuncs solver benchmark (medians; figures, not tests)")
    bench_dense(30, 2000, repeat=5)
    bench_dense(100, 200, repeat=3)
    p, far = feeder(5000)
    bench_sparse("5000-node feeder", p, far, repeat=7)
    p, far = grid(71)
    bench_sparse("5041-node grid", p, far, repeat=3)
    bench_memory(20_000)
    bench_scan(repeat=3)
    bench_cost_model()
    bench_latency(repeat=200)
    bench_repeated(repeat=20)
    print(f"solver benchmark total {time.perf_counter() - t0:.0f} s")


if __name__ == "__main__":
    main()
