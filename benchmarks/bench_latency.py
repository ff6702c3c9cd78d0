"""Latency where the user waits: figures and ratios, never pass/fail.

(a) every worksheet function, called as both front ends call it (the registered callable):
    median of uncached calls (every cache cleared before each call) and of cache hits
    (identical arguments again), with the ratio hit / uncached; targets: uncached
    ``CKT_SOLVE`` <= 1 ms, every cache hit <= 0.1 ms. The case is a 30-part, 10-tone
    network (demo data). Baselines for the uncached solve, timed interleaved with it: bare
    ``numpy.linalg.solve`` on the same stacked (F, n, n) matrices, and the same work through
    the core alone (``xlfuncs.solve`` + the table), which shows what the worksheet layer adds.
(b) import time in a fresh interpreter (median of several runs, interleaved, bytecode
    compiled as for an installed package): ``import xlfuncs.worksheet`` against
    ``import numpy`` (target ratio <= 1.3); what xlwings itself takes; what ours adds
    when numpy and xlwings are already loaded (as in the add-in's UDF server); and the
    import plus a first uncached ``CKT_SOLVE``, since the calculation modules load on
    first use.

Run: ``make bench`` or ``python benchmarks/bench_latency.py``. The machine is shared, so
compare ratios rather than absolute times.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from typing import Any

import numpy as np

from xlfuncs.functions import FUNCTIONS, cache_clear


def network() -> tuple[list[list[Any]], list[list[Any]], list[list[Any]]]:
    """30 parts (an R-C ladder with inductive cross links, 5 % tolerances on the
    resistors), a 50 Hz supply and nine harmonic current tones: demo data."""
    rng = np.random.default_rng(2)
    parts: list[list[Any]] = [["name", "kind", "from", "to", "value", "tolerance"]]
    nodes = [f"n{i}" for i in range(12)]
    for i, nd in enumerate(nodes):
        prev = "GND" if i == 0 else nodes[i - 1]
        parts.append([f"R{i}", "R", prev, nd, float(rng.uniform(0.1, 10)), "5%"])
        parts.append([f"C{i}", "C", nd, "GND", float(rng.uniform(1e-6, 1e-4)), None])
        j = int(rng.integers(0, 12))
        if j != i:
            parts.append([f"L{i}", "L", nd, nodes[j], float(rng.uniform(1e-4, 1e-2)), None])
    parts = parts[:31]  # header + 30 parts
    sources: list[list[Any]] = [["name", "kind", "from", "to", "harmonic", "rms", "phase_deg"]]
    sources.append(["Vs", "V", "n0", "GND", 1.0, 230.0, 0.0])
    for h in (5, 7, 11, 13, 17, 19, 23, 25, 29):
        sources.append(["Ih", "I", "GND", "n5", float(h), 100.0 / h, 0.0])
    options: list[list[Any]] = [["fundamental_hz", 50.0]]
    return parts, sources, options


def plant() -> tuple[list[list[Any]], list[list[Any]], list[list[Any]]]:
    """Equipment, spectra and study options of a small three-phase plant (demo data): a
    13.8 kV supply, a Dyn11 transformer to 480 V, a capacitor bank and two converters."""
    head = ["name", "kind", "bus", "bus_to", "kv", "mva_sc", "x_r", "kva", "kv_hv", "kv_lv"]
    head += ["z_pct", "connection", "kvar", "kw", "pf", "pulses", "spectrum"]

    def row(**kw: Any) -> list[Any]:
        return [kw.get(h) for h in head]

    equipment = [
        head,
        row(name="U1", kind="supply", bus="PCC", kv=13.8, mva_sc=200.0, x_r=10.0),
        row(
            name="T1",
            kind="transformer",
            bus="PCC",
            bus_to="LV",
            kva=1500.0,
            kv_hv=13.8,
            kv_lv=0.48,
            z_pct=6.0,
            x_r=7.0,
            connection="Dyn11",
        ),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=300.0, connection="YN"),
        row(name="D1", kind="converter", bus="LV", kv=0.48, kw=500.0, pf=0.93, spectrum="S"),
        row(name="D2", kind="converter", bus="LV", kv=0.48, kw=300.0, pf=0.95, pulses=6.0),
    ]
    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S", 5.0, 25.0, 0.0]]
    spectra.append(["S", 7.0, 12.0, 180.0])
    options = [["key", "value"], ["fundamental_hz", 60.0], ["max_order", 25.0]]
    return equipment, spectra, options


def cases() -> dict[str, tuple[Any, ...]]:
    p, s, o = network()
    eq, sp, so = plant()
    spectrum = [["order", "pct"], [1.0, 100.0], [5.0, 20.0], [7.0, 14.0]]
    return {
        "CKT_SOLVE": (p, s, "n5", None, o),
        "CKT_RMS": (p, s, "n5", None, o),
        "CKT_PEAK": (p, s, "n5", None, o),
        "CKT_THD": (p, s, "n5", None, o),
        "CKT_DC": (p, s, "n5", None, o),
        "CKT_CREST": (p, s, "n5", None, o),
        "CKT_POWER": (p, s, "R3", o),
        "CKT_REPORT": (p, s, o),
        "CKT_NODES": (p, s, o),
        "CKT_WAVE": (p, s, "n5", None, None, o),
        "CKT_SCAN": (p, "n5", 10.0, 5000.0, None, o, s),
        "CKT_IMPEDANCE": (p, "n5", [[250.0, 350.0, 550.0]], o, s),
        "CKT_RESONANCES": (p, "n5", 10.0, 5000.0, None, o, s),
        "CKT_V519": (p, s, "n5", 0.48, o),
        "CKT_I519": (p, s, "R3", 10000.0, 100.0, 0.48, None, o),
        "CKT_V519_LIMITS": (0.48,),
        "CKT_I519_LIMIT": (11.0, 75.0),
        "CKT_CAPDUTY": (p, s, "C3", 50.0, 400.0, o),
        "CKT_DETUNE": (80.0, 525.0, 50.0, 0.07),
        "CKT_DRIVE": ("Id", "GND", "n5", 100.0),
        "CKT_TOLERANCE": (p, s, "n5", "rms", 2000.0, None, o),
        "CKT_VERSION": (),
        # equipment duty
        "CKT_POWERS": (p, s, "R3", o),
        "CKT_XFMR_DERATE": (spectrum, 0.1),
        "CKT_TUNED_FILTER": (300.0, 480.0, 60.0, 3.0, 4.7, 50.0),
        "CKT_HIGHPASS_FILTER": (300.0, 480.0, 60.0, 3.0, 4.7, 2.0),
        "CKT_FILTER_DRIFT": (4.7, 60.0, 0.0, 0.1, 0.03),
        "CKT_FILTER_RESONANCE": ("capacitor", 300.0, 480.0, 60.0, 3.0, 30.0, 10.0),
        "CKT_FILTER_RATING": (
            "tuned",
            300.0,
            480.0,
            60.0,
            3.0,
            4.7,
            50.0,
            [["order", "amps"], [5.0, 100.0], [7.0, 20.0]],
            400.0,
            600.0,
        ),
        "CKT_CAP_STEP": (50.0, 8.0, 480.0, 60.0, 3.0, 30.0, 10.0, [[5.0, 100.0]], 0.3),
        "CKT_CABLE_RAC": (0.0967, 50.0, [[1.0], [3.0], [5.0]], 1.0, 1.0, "3core", 18.0, 24.0),
        "CKT_CABLE_LOSS": (spectrum, 0.0967, 50.0, 1.0, 1.0, "none"),
        # three-phase studies from equipment ratings
        "CKT_BUS_HARMONICS": (eq, sp, "LV", so),
        "CKT_BRANCH_HARMONICS": (eq, sp, "T1", so),
        "CKT_NEUTRAL_HARMONICS": (eq, sp, "T1", so),
        "CKT_EXPAND": (eq, "+", so),
        "CKT_BUS_V519": (eq, sp, "PCC", so),
        "CKT_BRANCH_I519": (eq, sp, "U1", 8000.0, 50.0, so),
        "CKT_ITEM_CAPDUTY": (eq, sp, "C1", so),
        "CKT_BUS_SCAN": (eq, "LV", 60.0, 3000.0, 20.0, "+", so),
        "CKT_BUS_RESONANCES": (eq, "LV", 60.0, 3000.0, None, None, so),
        # frequency-domain studies
        "CKT_GAIN": (p, s, "Vs", "n5", 10.0, 5000.0, None, None, o),
        "CKT_GAIN_AT": (p, s, "Vs", "n5", 250.0, None, None, o),
        "CKT_PORT_Z": (p, "n5", "GND", 10.0, 5000.0, None, o, s),
        "CKT_TWOPORT_Z": (p, "n0", "n5", "C5", 10.0, 5000.0, None, o, s),
        "CKT_POLES": (p, s, o),
        "CKT_ZEROS": (p, s, "Vs", "n5", None, o),
        "CKT_FILTER_MARGIN": (p, "n5", 48.0, 200.0, 10.0, 1e5, None, o, s),
        "CKT_MARGIN_SCAN": (p, "n5", 48.0, 200.0, 10.0, 1e5, 20.0, o, s),
        "CKT_DAMPING": (10e-6, 100e-6, 12.0, 100.0, None),
        "CKT_NOISE": (p, s, "n5", 10.0, 1e5, 26.85, 20.0, o),
        "CKT_NOISE_RMS": (p, s, "n5", 10.0, 1e5, 26.85, o),
        "CKT_NOISE_PARTS": (p, s, "n5", 10.0, 1e5, 26.85, o),
    }


def median_time(fn: Callable[[], Any], before: Callable[[], Any] | None, budget_s: float) -> float:
    """Median duration of ``fn`` (``before`` runs untimed ahead of each call), repeated
    until ``budget_s`` is spent (at least 5, at most 2000 runs)."""
    times: list[float] = []
    spent = 0.0
    while len(times) < 5 or (spent < budget_s and len(times) < 2000):
        if before is not None:
            before()
        t0 = time.perf_counter()
        fn()
        dt = time.perf_counter() - t0
        times.append(dt)
        spent += dt
    return statistics.median(times)


def bench_functions() -> None:
    table = cases()
    print("(a) worksheet functions: uncached and cache-hit medians (ms); ratio hit/uncached")
    print(f"    {'function':22s} {'uncached':>10s} {'hit':>10s} {'ratio':>8s}")
    slow_hits = []
    for name in sorted(FUNCTIONS):
        fd = FUNCTIONS[name]
        if name not in table:
            print(f"    {name:22s} (no latency case defined in this benchmark)")
            continue
        args = table[name]
        cache_clear()
        first = fd.call(*args)
        if isinstance(first, str) and first.startswith("ERROR"):
            print(f"    {name:22s} case refused: {first}")
            continue
        unc = median_time(lambda fd=fd, args=args: fd.call(*args), cache_clear, 0.5)
        fd.call(*args)
        hit = median_time(lambda fd=fd, args=args: fd.call(*args), None, 0.2)
        if hit > 1e-4:
            slow_hits.append(name)
        print(f"    {name:22s} {unc * 1e3:10.3f} {hit * 1e3:10.4f} {hit / unc:8.4f}")
    print(
        "    cache hits above the 0.1 ms target: "
        + (", ".join(slow_hits) if slow_hits else "none")
    )


def bench_solve_baseline(runs: int = 200) -> None:
    import xlfuncs
    from xlfuncs.api import system_of
    from xlfuncs.views import solve_table

    p, s, o = network()
    circuit = xlfuncs.Circuit.from_tables(p, s, o)
    system = system_of(circuit)
    f = circuit.freqs_hz
    a = system.matrices(f)
    b = np.zeros((f.size, system.n, 1), dtype=complex)
    b[:, 0, 0] = 1.0
    fd = FUNCTIONS["CKT_SOLVE"]
    args = cases()["CKT_SOLVE"]
    jobs = {
        "ours": (lambda: fd.call(*args), cache_clear),
        "core": (lambda: solve_table(xlfuncs.solve(p, s, o), "n5"), None),
        "bare": (lambda: np.linalg.solve(a, b), None),
    }
    times: dict[str, list[float]] = {k: [] for k in jobs}
    for _ in range(runs // 4):  # warm-up, not counted
        for fn, before in jobs.values():
            if before is not None:
                before()
            fn()
    for _ in range(runs):  # interleaved, so that load on the machine hits every figure
        for k, (fn, before) in jobs.items():
            if before is not None:
                before()
            t0 = time.perf_counter()
            fn()
            times[k].append(time.perf_counter() - t0)
    m = {k: statistics.median(v) for k, v in times.items()}
    print(
        f"(a) uncached CKT_SOLVE {m['ours'] * 1e3:.3f} ms vs bare numpy.linalg.solve of the "
        f"{f.size} stacked {system.n}x{system.n} systems {m['bare'] * 1e3:.3f} ms: ratio "
        f"{m['ours'] / m['bare']:.1f} (target: uncached <= 1 ms)"
    )
    print(
        f"    the same through the core alone (parse, solve, Solution, table) "
        f"{m['core'] * 1e3:.3f} ms: the worksheet layer adds {(m['ours'] - m['core']) * 1e3:.3f}"
        f" ms (ratio {m['ours'] / m['core']:.2f})"
    )


_TIMED = "import time; t = time.perf_counter(); {stmt}; print(time.perf_counter() - t)"
_FIRST_CALL = (
    "import xlfuncs.worksheet; from xlfuncs.functions import FUNCTIONS; "
    "FUNCTIONS['CKT_SOLVE'].call({args})"
)


def _timed(stmt: str, env: dict[str, str], preload: str = "") -> float:
    code = (preload + "; " if preload else "") + _TIMED.format(stmt=stmt)
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, env=env
    ).stdout
    return float(out.split()[-1])


def bench_import(runs: int = 9) -> None:
    import os
    import tempfile

    # Installed packages carry compiled bytecode; so must ours (a source tree run with
    # PYTHONDONTWRITEBYTECODE would compile every module on every start).
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    p, s, o = network()
    first = _FIRST_CALL.format(args=repr((p, s, "n5", None, o))[1:-1])
    stmts = {
        "numpy": ("import numpy", ""),
        "worksheet": ("import xlfuncs.worksheet", ""),
        "ours": ("import xlfuncs.worksheet", "import numpy, xlwings"),
        "xlwings": ("import xlwings", "import numpy"),
        "first": (first, ""),
    }
    with tempfile.TemporaryDirectory() as cache_dir:
        env["PYTHONPYCACHEPREFIX"] = cache_dir
        for stmt, pre in stmts.values():  # compile once
            _timed(stmt, env, pre)
        rows: dict[str, list[float]] = {k: [] for k in stmts}
        for _ in range(runs):  # interleaved, so that load on the machine hits every figure
            for k, (stmt, pre) in stmts.items():
                rows[k].append(_timed(stmt, env, pre))
    m = {k: statistics.median(v) for k, v in rows.items()}
    print(
        f"(b) import in a fresh interpreter, median of {runs}: numpy {m['numpy'] * 1e3:.1f} ms | "
        f"xlfuncs.worksheet {m['worksheet'] * 1e3:.1f} ms: ratio {m['worksheet'] / m['numpy']:.2f} "
        "(target <= 1.3)"
    )
    print(
        f"    of which xlwings alone (numpy loaded) {m['xlwings'] * 1e3:.1f} ms = "
        f"{m['xlwings'] / m['numpy']:.2f} x numpy; xlfuncs.worksheet with numpy and xlwings "
        f"loaded (as in the add-in's UDF server) {m['ours'] * 1e3:.1f} ms = "
        f"{m['ours'] / m['numpy']:.2f} x numpy"
    )
    print(
        f"    import + first uncached CKT_SOLVE (the first number a user sees) "
        f"{m['first'] * 1e3:.1f} ms = {m['first'] / m['numpy']:.2f} x numpy"
    )


def main() -> None:
    print("xlfuncs latency benchmark (medians; figures, not tests)")
    bench_functions()
    bench_solve_baseline()
    bench_import()


if __name__ == "__main__":
    main()
