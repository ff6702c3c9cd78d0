"""The scripting front door: solve tables, scan impedances.

>>> import xlfuncs
>>> parts = [["name", "kind", "from", "to", "value"],
...          ["R1", "R", "in", "out", "1k"],
...          ["R2", "R", "out", "GND", "1k"]]
>>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
...            ["Vs", "V", "in", "GND", 0, 10.0],
...            ["Vs", "V", "in", "GND", 50, 2.0]]
>>> sol = xlfuncs.solve(parts, sources)
>>> round(float(sol.voltage("out").dc), 9), round(float(sol.voltage("out").peak[1]), 9)
(5.0, 1.0)
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .circuit import Circuit
from .errors import InputError, TableError
from .solution import Solution
from .solver import System, build_system
from .tables import frequencies_arg

__all__ = ["impedance_scan", "solve", "system_of", "transfer_impedance"]


def system_of(circuit: Circuit) -> System:
    """The assembled MNA description of ``circuit``."""
    return build_system(circuit)


def solve(parts: Any, sources: Any = None, options: Any = None) -> Solution:
    """Solve a network at every frequency of its sources (superposition by frequency).

    Parameters
    ----------
    parts, sources, options :
        Tables as 2-D lists (header row first), or a ready :class:`Circuit` as ``parts``.

    Returns
    -------
    Solution
        Phasors with axis order (frequency, ...), plus derived quantities.
    """
    circuit = parts if isinstance(parts, Circuit) else Circuit.from_tables(parts, sources, options)
    if not circuit.sources:
        raise TableError("sources", "no sources: nothing drives the network")
    system = build_system(circuit)
    x = system.solve(circuit.freqs_hz)
    return Solution(system, circuit.freqs_hz, x)


def impedance_scan(
    parts: Any, node: str, freqs_hz: Any, options: Any = None, sources: Any = None
) -> tuple[np.ndarray, np.ndarray]:
    """Driving-point impedance between ``node`` and the reference, sources zeroed.

    Voltage sources become shorts and current sources opens (give ``sources`` so that a
    supply modelled as a voltage source behind its impedance is part of the network); a
    1 A test current is injected into ``node`` at each frequency and Z = V(node) / 1 A.

    Returns
    -------
    freqs_hz : numpy.ndarray, shape (F,)
    z_ohm : numpy.ndarray, shape (F,), complex
    """
    return transfer_impedance(parts, node, node, freqs_hz, options, sources)


def transfer_impedance(
    parts: Any,
    inject_node: str,
    measure_node: str,
    freqs_hz: Any,
    options: Any = None,
    sources: Any = None,
) -> tuple[np.ndarray, np.ndarray]:
    """V(measure_node) per ampere injected into ``inject_node`` (from the reference),
    with every independent source zeroed. Equal nodes give the driving-point impedance.

    Solved through :meth:`System.solve` (pencil, dense or sparse path from the cost
    model, frequencies streamed in blocks, every frequency checked).
    """
    circuit = parts if isinstance(parts, Circuit) else Circuit.from_tables(parts, sources, options)
    f = frequencies_arg(freqs_hz)
    idx = [
        _node_index(circuit, n, col) for n, col in ((inject_node, "node"), (measure_node, "node"))
    ]
    system = build_system(circuit)
    # one injection at every frequency, one unknown kept: memory O(F), whatever F is
    e = np.zeros(system.n, dtype=complex)
    e[idx[0]] = 1.0
    return f, system.solve(f, rhs=e, columns=[idx[1]])[:, 0]


def _node_index(circuit: Circuit, node: Any, column: str) -> int:
    try:
        kind, obj = circuit.find(str(node))
    except KeyError:
        raise InputError("argument", None, column, node, "no node of that name") from None
    if kind != "node" or obj == circuit.ground:
        raise InputError(
            "argument",
            None,
            column,
            node,
            f"expected a node other than the reference {circuit.ground!r}",
        )
    return circuit.nodes.index(obj)
