"""The fundamental solve: the linear network with constant-power devices.

A converter (and a motor with a running load) draws P + jQ whatever its bus voltage, so
the fundamental is nonlinear. Method (the Z-bus fixed-point iteration of load-flow
practice; common practice):

1. one batched core solve at f₁ of the network with every device open gives the bus
   voltages V⁰ from the supply EMFs, and with a unit current drawn by each device in turn
   the transfer impedances Z (K × K for K devices);
2. iterate I_k = conj(2·S_k / V_k) with S_k = (P + jQ)/3 per phase (peak phasors) and
   V = V⁰ − Z·I until no bus voltage moves by more than 1e-12 of the supply voltage
   (at most 500 iterations — otherwise refused: the load exceeds what the network can
   carry, or the fixed point does not contract);
3. a final core solve with the converged currents gives every fundamental quantity, and
   each device's power is recomputed from that solution: a mismatch above 1e-9 of its
   |S| is refused.

The contraction factor is about S_device/S_sc, so plant-sized drives converge in a few
iterations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..api import solve
from ..circuit import Circuit
from ..errors import NetworkError
from ..solution import Solution
from ..solver import build_system
from .expand import Network

__all__ = ["Fundamental", "solve_fundamental"]

TOL_V = 1e-12
TOL_S = 1e-9
MAX_ITER = 500


@dataclass(frozen=True)
class Fundamental:
    """Result of the fundamental solve (local-frame values; see :class:`HarmonicStudy`
    for physical ones).

    Attributes
    ----------
    solution : Solution
        The core's solution of the fundamental network (one frequency).
    currents : dict of device source name → complex peak phasor (local frame)
    iterations : int
    mismatch : float
        Largest |S_computed − S_specified| / |S_specified| over the devices.
    """

    solution: Solution
    currents: dict[str, complex]
    iterations: int
    mismatch: float
    sources: list[list[Any]]


def solve_fundamental(
    net: Network, parts: list[list[Any]], options: list[list[Any]], f1: float
) -> Fundamental:
    """Solve the fundamental network ``net`` (parts table ``parts``) with its devices."""
    devices = net.devices
    rows = [list(r) for r in net.sources]
    iterations = 0
    if devices:
        circuit = Circuit.from_tables(parts, net.sources_table(), options)
        system = build_system(circuit)
        src_pos = {n.lower(): i for i, n in enumerate(system.src_names)}
        node_pos = {n: i for i, n in enumerate(circuit.nodes)}
        dev_src = [src_pos[d.source.lower()] for d in devices]
        dev_node = np.array([node_pos[d.bus] for d in devices])
        b0 = system.rhs(np.array([f1]))  # devices carry 0 A here
        rhs = np.vstack([b0, system.src_incidence[dev_src].astype(complex)])
        x = system.solve(np.full(rhs.shape[0], f1), rhs=rhs)
        v0 = x[0, dev_node]
        z = x[1:, dev_node].T  # z[k, j]: voltage at device k per ampere drawn by device j
        s = np.array([(d.p_w + 1j * d.q_var) / 3 for d in devices])
        scale = max(float(np.abs(x[0, : system.n_nodes]).max()), 1e-300)
        v = v0.copy()
        change = math.inf
        for iterations in range(1, MAX_ITER + 1):  # noqa: B007
            if np.any(np.abs(v) < 1e-6 * scale):
                break
            i_dev = np.conj(2 * s / v)
            v_new = v0 + z @ i_dev
            change = float(np.abs(v_new - v).max()) / scale
            v = v_new
            if not math.isfinite(change) or change <= TOL_V:
                break
        if not (math.isfinite(change) and change <= TOL_V):
            names = ", ".join(repr(d.item.name) for d in devices[:6])
            raise NetworkError(
                f"the fundamental solve with constant-power devices ({names}) did not converge "
                f"in {iterations} iterations (last change {change:.3g} of the supply voltage)",
                freq_hz=f1,
                hint="their load exceeds what the supply and transformers can carry; check kw, "
                "pf and the supply/transformer ratings",
            )
        i_dev = np.conj(2 * s / v)
        values = {d.source.lower(): complex(i) for d, i in zip(devices, i_dev, strict=True)}
        for r in rows:
            key = str(r[0]).lower()
            if key in values:
                ph = values[key]
                r[5] = abs(ph)
                r[6] = math.degrees(math.atan2(ph.imag, ph.real))
    sources = [list(net.sources_table()[0]), *rows]
    sol = solve(parts, sources, options)
    currents: dict[str, complex] = {}
    mismatch = 0.0
    nodes = sol.circuit.nodes
    for d in devices:
        i = complex(sol.current(d.source).phasors[0])
        vb = complex(sol.node_voltages[0, nodes.index(d.bus)])
        currents[d.source.lower()] = i
        s_calc = 1.5 * vb * i.conjugate()
        s_spec = complex(d.p_w, d.q_var)
        mismatch = max(mismatch, abs(s_calc - s_spec) / abs(s_spec))
    if mismatch > TOL_S:
        raise NetworkError(
            f"the fundamental solve misses the devices' power by {mismatch:.3g} of |S|",
            freq_hz=f1,
            hint="the network is too close to voltage collapse for a reliable answer",
        )
    return Fundamental(sol, currents, iterations, mismatch, sources)
