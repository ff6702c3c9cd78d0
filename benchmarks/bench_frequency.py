"""Frequency-domain study benchmarks: figures, not tests.

Each study is timed (median of repeated runs on a parsed circuit) against a baseline
measured in the same run: one 400-point impedance scan (resonances, filter margin) or one
200-point transfer solve (Bode data, noise) of the same network through the solver's
many-frequency entry, so the ratio says how many plain scans a study costs. Networks are
invented demo data: a plant bus (utility, transformer, capacitor bank, load; the shape of
the plant template), a 4th-order Sallen–Key low-pass, an RC ladder.
"""

from __future__ import annotations

import math
import statistics
import time
from collections.abc import Callable

import numpy as np

from xlfuncs.circuit import Circuit
from xlfuncs.solver import build_system
from xlfuncs.studies import bode, find_resonances, input_filter_margin, noise_rms

HEAD = ["name", "kind", "from", "to", "value"]


def _median(fn: Callable[[], object], reps: int = 40) -> float:
    fn()
    times = []
    for _ in range(reps):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def _scan(circuit: Circuit, node: str, f: np.ndarray) -> None:
    system = build_system(circuit)
    b = np.zeros((f.size, system.n), dtype=complex)
    b[:, circuit.nodes.index(node)] = 1.0
    system.solve(f, rhs=b)


def plant() -> Circuit:
    """Demo data: a 480 V bus behind a utility source and a transformer, a capacitor bank
    with its tan δ resistance, a linear load (values of the plant template's shape)."""
    parts = [
        HEAD,
        ["R_util", "R", "SRC", "U1", 0.000458],
        ["L_util", "L", "U1", "PRI", 1.216e-5],
        ["R_tx", "R", "PRI", "T1", 0.001249],
        ["L_tx", "L", "T1", "BUS", 2.319e-5],
        ["C_bank", "C", "BUS", "CAP", 0.003454],
        ["R_cap", "R", "CAP", "GND", 0.000384],
        ["R_load", "R", "BUS", "GND", 0.4608],
        ["L_load", "L", "BUS", "GND", 0.001972],
    ]
    sources = [["name", "kind", "from", "to", "freq_hz", "rms"], ["V", "V", "SRC", "GND", 60, 277]]
    return Circuit.from_tables(parts, sources, [["fundamental_hz", 60]])


def sallen_key() -> Circuit:
    """Demo data: 4th-order Butterworth low-pass, 1 kHz, two unity-gain sections."""
    rows = [[*HEAD, "ctrl_from", "ctrl_to"]]
    node, r, wc = "in", 10e3, 2 * math.pi * 1000
    for k, q in enumerate((1.3066, 0.5412)):
        c2 = 1 / (2 * q * r * wc)
        rows += [
            [f"R1{k}", "R", node, f"a{k}", r, None, None],
            [f"R2{k}", "R", f"a{k}", f"b{k}", r, None, None],
            [f"C1{k}", "C", f"a{k}", f"o{k}", 4 * q * q * c2, None, None],
            [f"C2{k}", "C", f"b{k}", "GND", c2, None, None],
            [f"E{k}", "VCVS", f"o{k}", "GND", 1.0, f"b{k}", "GND"],
        ]
        node = f"o{k}"
    return Circuit.from_tables(
        rows, [["name", "kind", "from", "to", "freq_hz", "peak"], ["Vin", "V", "in", "GND", 0, 1]]
    )


def ladder(n: int = 20) -> Circuit:
    """Demo data: an RC ladder of n sections."""
    rows = [HEAD]
    prev = "in"
    for i in range(n):
        rows += [[f"R{i}", "R", prev, f"n{i}", 100.0], [f"C{i}", "C", f"n{i}", "GND", 1e-8]]
        prev = f"n{i}"
    return Circuit.from_tables(
        rows, [["name", "kind", "from", "to", "freq_hz", "peak"], ["Vin", "V", "in", "GND", 0, 1]]
    )


def main() -> None:
    print("xlfuncs frequency-domain benchmark (medians; figures, not tests)")
    c = plant()
    scan400 = _median(lambda: _scan(c, "BUS", np.geomspace(60, 2400, 400)))
    res = _median(lambda: find_resonances(c, "BUS", 60, 2400))
    n_found = len(find_resonances(c, "BUS", 60, 2400))
    print(
        f"  resonances at the plant bus, 60–2400 Hz ({n_found} found, complete): "
        f"{res * 1e3:.2f} ms; one 400-point scan {scan400 * 1e3:.2f} ms; ratio {res / scan400:.2f}"
    )
    filt = [
        HEAD,
        ["Rs", "R", "in", "a", 0.02],
        ["L", "L", "a", "out", 10e-6],
        ["C", "C", "out", "GND", 100e-6],
        ["Rf", "R", "out", "x", 0.6],
        ["Cb", "C", "x", "GND", 300e-6],
    ]
    fc = Circuit.from_tables(
        filt, [["name", "kind", "from", "to", "freq_hz", "peak"], ["V", "V", "in", "GND", 0, 48]]
    )
    scan_f = _median(lambda: _scan(fc, "out", np.geomspace(10, 1e6, 400)))
    marg = _median(lambda: input_filter_margin(fc, "out", 48, 200, 10, 1e6, points=2))
    print(
        f"  input-filter margin (exact peak of |Z_out|, 10 Hz–1 MHz): {marg * 1e3:.2f} ms; "
        f"one 400-point scan {scan_f * 1e3:.2f} ms; ratio {marg / scan_f:.2f}"
    )
    sk = sallen_key()
    f200 = np.geomspace(10, 1e5, 200)

    def solve200() -> None:
        system = build_system(sk)
        system.solve(f200, rhs=np.tile(system.src_incidence[0].astype(complex), (200, 1)))

    base = _median(solve200)
    b = _median(lambda: bode(sk, None, "Vin", "o1", 10, 1e5, 200))
    print(
        f"  Bode data, 4th-order low-pass, 200 points (gain, unwrapped phase, exact group "
        f"delay): {b * 1e3:.2f} ms; one 200-point solve {base * 1e3:.2f} ms; ratio {b / base:.2f}"
    )
    lad = ladder()

    def solve_lad() -> None:
        system = build_system(lad)
        system.solve(f200, rhs=np.tile(system.src_incidence[0].astype(complex), (200, 1)))

    base_l = _median(solve_lad, 20)
    nz = _median(lambda: noise_rms(lad, None, "n19", 0, math.inf, 25.0), 10)
    print(
        f"  RMS noise 0 Hz–∞ at the end of a 20-section RC ladder (20 resistors, rel. accuracy "
        f"1e-9): {nz * 1e3:.1f} ms; one 200-point solve {base_l * 1e3:.2f} ms; "
        f"ratio {nz / base_l:.1f}"
    )


if __name__ == "__main__":
    main()
