"""Ill-posed networks get a diagnosis naming nodes/parts and the frequency, never a
LinAlgError. Which networks are singular is a fact of circuit theory (common practice):
a node set joined to the rest only by current sources and/or capacitors has no DC
solution; a loop of ideal voltage sources (plus inductors at DC) over-determines KVL."""

import math

import numpy as np
import pytest
from helpers import parts, sources
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs
from xlfuncs import NetworkError, SingularNetworkError


def _diag(p, s):
    with pytest.raises(NetworkError) as exc:
        xlfuncs.solve(p, s)
    assert not isinstance(exc.value, np.linalg.LinAlgError)
    assert "\n" not in str(exc.value)
    return exc.value, str(exc.value)


def test_island_with_no_path_to_reference():
    err, msg = _diag(
        parts(["R1", "R", "a", "GND", 1.0], ["R2", "R", "x", "y", 1.0]),
        sources(["Vs", "V", "a", "GND", 50, 1, 0], ["Is", "I", "a", "x", 50, 1, 0]),
    )
    assert err.freq_hz is None and set(err.nodes) == {"x", "y"}
    assert msg.startswith(
        "network at every frequency: these nodes are cut off from the reference GND"
    )
    assert "parts Is" in msg


def test_capacitor_cut_set_at_dc():
    err, msg = _diag(
        parts(
            ["R1", "R", "a", "GND", 1.0],
            ["C1", "C", "a", "b", 1e-6],
            ["R2", "R", "b", "c", 5.0],
            ["C2", "C", "c", "GND", 1e-6],
        ),
        sources(["Vs", "V", "a", "GND", 0, 1, 0], ["Vs", "V", "a", "GND", 50, 1, 0]),
    )
    assert err.freq_hz == 0.0
    assert set(err.nodes) == {"b", "c"}
    assert set(err.parts) == {"C1", "C2"}
    assert msg.startswith("network at 0 Hz (DC): these nodes float at DC")
    assert "give them a steady path to GND" in msg


def test_capacitor_cut_set_is_fine_without_dc():
    sol = xlfuncs.solve(
        parts(
            ["R1", "R", "a", "GND", 1.0], ["C1", "C", "a", "b", 1e-6], ["R2", "R", "b", "GND", 5.0]
        ),
        sources(["Vs", "V", "a", "GND", 50, 1, 0]),
    )
    assert np.isfinite(sol.voltage("b").phasors).all()


def test_current_source_into_capacitor_only_at_dc():
    err, _msg = _diag(
        parts(["R1", "R", "a", "GND", 1.0], ["C1", "C", "b", "GND", 1e-6]),
        sources(["Vs", "V", "a", "GND", 50, 1, 0], ["Is", "I", "GND", "b", 0, 1, 0]),
    )
    assert err.freq_hz == 0.0 and err.nodes == ("b",) and set(err.parts) == {"C1", "Is"}


def test_loop_of_voltage_sources():
    err, msg = _diag(
        parts(["R1", "R", "a", "GND", 1.0]),
        sources(["V1", "V", "a", "GND", 50, 1, 0], ["V2", "V", "a", "GND", 150, 1, 0]),
    )
    assert err.freq_hz is None and set(err.parts) == {"V1", "V2"}
    assert "a loop made only of voltage sources" in msg


def test_inductor_loop_with_voltage_source_at_dc():
    err, msg = _diag(
        parts(
            ["L1", "L", "a", "b", 1e-3],
            ["L2", "L", "b", "GND", 1e-3],
            ["R1", "R", "a", "GND", 1.0],
        ),
        sources(["V1", "V", "a", "GND", 0, 1, 0]),
    )
    assert err.freq_hz == 0.0 and set(err.parts) == {"L1", "L2", "V1"}
    assert msg.startswith(
        "network at 0 Hz (DC): a loop made only of voltage sources and inductors"
    )


def test_exact_ideal_resonance_is_reported_not_returned():
    ind, cap = 1e-3, 1e-6
    f0 = 1 / (2 * math.pi * math.sqrt(ind * cap))
    with pytest.raises(SingularNetworkError) as exc:
        xlfuncs.solve(
            parts(["L1", "L", "n", "GND", ind], ["C1", "C", "n", "GND", cap]),
            sources(["Is", "I", "GND", "n", f0, 1.0, 0]),
        )
    assert exc.value.freq_hz == pytest.approx(f0)
    assert "n" in exc.value.nodes


def test_controlled_sources_that_cancel():
    # VCVS with gain 1 across its own controlling pair: V(a) = V(a) — no unique solution
    head = ["name", "kind", "from", "to", "value", "ctrl_from", "ctrl_to"]
    p = [head, ["R1", "R", "a", "b", 1.0, None, None], ["E1", "VCVS", "b", "GND", 1.0, "a", "GND"]]
    with pytest.raises(SingularNetworkError) as exc:
        xlfuncs.solve(p, sources(["Is", "I", "GND", "a", 50, 1.0, 0]))
    # singular whatever the frequency (no part depends on ω): said so, not "at 50 Hz"
    assert exc.value.freq_hz is None and "at every frequency" in str(exc.value)


@pytest.mark.parametrize("method", ["direct", "pencil"])
def test_exact_resonance_inside_a_long_frequency_list(method):
    ind, cap = 1e-3, 1e-6
    f0 = 1 / (2 * math.pi * math.sqrt(ind * cap))
    freqs = sorted([*np.geomspace(10, 1e5, 60).tolist(), f0])
    circuit = xlfuncs.Circuit.from_tables(
        parts(["L1", "L", "n", "GND", ind], ["C1", "C", "n", "GND", cap]),
        sources(*[["Is", "I", "GND", "n", f, 1.0, 0] for f in freqs]),
    )
    with pytest.raises(SingularNetworkError) as exc:
        xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method=method)
    assert exc.value.freq_hz == pytest.approx(f0)
    assert exc.value.nodes == ("n",)


# An independent reference for the reachability check: scipy's connected components of
# the graph of parts (current sources fix no voltage, so they are left out).
@settings(max_examples=60, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(0, 7), st.integers(0, 7)).filter(lambda e: e[0] != e[1]),
        min_size=1,
        max_size=12,
    ),
    st.sampled_from(["R", "L", "C"]),
)
def test_cut_off_nodes_are_those_scipy_finds_outside_the_references_component(edges, kind):
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    name = ["GND", *[f"n{i}" for i in range(1, 8)]]
    rows = [[f"P{j}", kind, name[a], name[b], 1.0] for j, (a, b) in enumerate(edges)]
    used = sorted({i for e in edges for i in e} - {0})
    src = sources(["Is", "I", "GND", name[used[0]], 50, 1, 0])
    a = np.array([e[0] for e in edges])
    b = np.array([e[1] for e in edges])
    g = coo_matrix((np.ones(a.size), (a, b)), shape=(8, 8))
    _n, label = connected_components(g, directed=False)
    expected = {name[i] for i in used if label[i] != label[0]}
    if expected:
        err, msg = _diag(parts(*rows), src)
        assert "cut off from the reference" in msg
        assert set(err.nodes) == expected
    else:
        xlfuncs.solve(parts(*rows), src)  # connected: solves (R, L or C at 50 Hz)
