"""Names of nodes, parts and sources are case-insensitive everywhere (first spelling kept
for display); a target that is both a part and a node is refused unless a prefix chooses;
an unknown name gets the closest existing one.

Check values are closed forms of resistive dividers (Ohm's law, common practice).
"""

import math

import pytest
from helpers import parts, sources

import xlfuncs
from xlfuncs import Circuit, InputError
from xlfuncs.errors import UnknownNameError
from xlfuncs.functions import FUNCTIONS, cache_clear


def test_bus_and_bus_are_one_node():
    # R1 in→Bus 10 Ω, R2 bus→GND 10 Ω, 10 V peak at in: V(bus) = 5 V peak (divider)
    p = parts(["R1", "R", "in", "Bus", 10.0], ["R2", "R", "bus", "GND", 10.0])
    s = sources(["Vs", "V", "in", "GND", 50.0, 10.0, 0.0])
    sol = xlfuncs.solve(p, s)
    assert sol.circuit.nodes == ("in", "Bus")  # first spelling kept
    assert float(sol.voltage("bus").rms_total) == pytest.approx(5 / math.sqrt(2), rel=1e-12)
    assert float(sol.voltage("BUS").rms_total) == pytest.approx(3.5355339059327378, rel=1e-12)
    # P(R2) = V_peak² / (2R) = 25 / 20 W
    assert sol.power("r2") == pytest.approx(1.25, rel=1e-12)


def test_worksheet_functions_see_one_node():
    p = parts(["R1", "R", "in", "Bus", 10.0], ["R2", "R", "bus", "GND", 10.0])
    s = sources(["Vs", "V", "in", "GND", 50.0, 10.0, 0.0])
    cache_clear()
    assert FUNCTIONS["CKT_RMS"].call(p, s, "bus") == pytest.approx(5 / math.sqrt(2), rel=1e-12)
    assert FUNCTIONS["CKT_POWER"].call(p, s, "R2") == pytest.approx(1.25, rel=1e-12)


def test_every_reference_ignores_case():
    head = ["name", "kind", "from", "to", "value", "ctrl_from", "ctrl_to", "coil_a", "coil_b"]
    exact = [
        head,
        ["R1", "R", "in", "mid", 1.0, None, None, None, None],
        ["L1", "L", "mid", "GND", 1e-3, None, None, None, None],
        ["L2", "L", "sec", "GND", 1e-3, None, None, None, None],
        ["R2", "R", "sec", "GND", 5.0, None, None, None, None],
        ["K1", "COUPLING", None, None, 0.5, None, None, "L1", "L2"],
        ["G1", "VCCS", "GND", "out", 0.1, "sec", "GND", None, None],
        ["R3", "R", "out", "GND", 2.0, None, None, None, None],
    ]
    mixed = [list(r) for r in exact]
    mixed[2][2] = "MID"
    mixed[5][7], mixed[5][8] = "l1", "l2"
    mixed[6][5], mixed[6][6] = "SEC", "gnd"
    s = sources(["Vs", "V", "IN", "gnd", 50.0, 1.0, 0.0])
    a = xlfuncs.solve(exact, s)
    b = xlfuncs.solve(mixed, s)
    assert b.circuit.nodes == a.circuit.nodes == ("in", "mid", "sec", "out")
    assert abs(complex(b.voltage("out").phasors[0]) - complex(a.voltage("out").phasors[0])) < 1e-15


def test_tones_of_one_source_may_spell_nodes_differently():
    p = parts(["R1", "R", "a", "GND", 2.0])
    s = sources(["Vs", "V", "a", "GND", 50.0, 1.0, 0.0], ["vs", "V", "A", "gnd", 150.0, 1.0, 0.0])
    sol = xlfuncs.solve(p, s)
    assert [src.name for src in sol.circuit.sources] == ["Vs"]
    # two 1 V tones across 2 Ω: I_rms = √(2·(0.5/√2)²) = 0.5 A
    assert float(sol.current("R1").rms_total) == pytest.approx(0.5, rel=1e-12)


@pytest.mark.parametrize(
    ("p", "s", "where"),
    [
        (parts(["R1", "R", "GND", "gnd", 1.0]), None, "parts row 2, column to: 'gnd'"),
        (
            parts(["R1", "R", "a", "GND", 1.0]),
            sources(["Vs", "V", "a", "A", 50.0, 1.0, 0.0]),
            "sources row 2, column to: 'A'",
        ),
    ],
)
def test_a_part_between_two_spellings_of_one_node_is_refused(p, s, where):
    with pytest.raises(InputError) as exc:
        Circuit.from_tables(p, s or sources(["Vs", "V", "a", "GND", 50.0, 1.0, 0.0]))
    assert str(exc.value).startswith(where)
    assert "both ends on node" in str(exc.value) and "ignore letter case" in str(exc.value)


def _src_network():
    # part "src" (100 Ω) from node "src" to out, R2 100 Ω out→GND, 2 V peak source at src
    p = parts(["src", "R", "src", "out", 100.0], ["R2", "R", "out", "GND", 100.0])
    s = sources(["Vs", "V", "src", "GND", 50.0, 2.0, 0.0])
    return xlfuncs.solve(p, s)


def test_a_target_that_is_both_a_part_and_a_node_is_refused():
    sol = _src_network()
    with pytest.raises(InputError) as exc:
        sol.signal("SRC")
    msg = str(exc.value)
    assert msg.startswith("argument target: 'SRC'")
    assert "names both a part (parts row 2) and a node" in msg
    assert "'part:SRC'" in msg and "'node:SRC'" in msg


def test_a_prefix_chooses():
    sol = _src_network()
    # node src sits at the source: 2 V peak; the part src carries 2 V / 200 Ω = 10 mA peak
    assert float(sol.signal("node:src").peak[0]) == pytest.approx(2.0, rel=1e-12)
    assert float(sol.signal("part:src").peak[0]) == pytest.approx(0.01, rel=1e-12)
    assert float(sol.signal("Part: SRC", "V").peak[0]) == pytest.approx(1.0, rel=1e-12)
    assert float(sol.signal("source:vs", "I").peak[0]) == pytest.approx(0.01, rel=1e-12)
    cache_clear()
    p = parts(["src", "R", "src", "out", 100.0], ["R2", "R", "out", "GND", 100.0])
    s = sources(["Vs", "V", "src", "GND", 50.0, 2.0, 0.0])
    out = FUNCTIONS["CKT_PEAK"].call(p, s, "node:src")
    assert out == pytest.approx(2.0, rel=1e-12)


def test_node_lookups_ignore_parts_of_the_same_name():
    sol = _src_network()
    c = sol.circuit
    assert c.node_name("SRC") == "src" and c.node_index("node:src") == 0
    _f, z = xlfuncs.impedance_scan(c, "out", [50.0])
    assert abs(z[0]) == pytest.approx(50.0, rel=1e-12)  # 100 Ω ‖ 100 Ω (source a short)


def test_unknown_names_suggest_the_closest():
    sol = _src_network()
    with pytest.raises(UnknownNameError) as exc:
        sol.signal("outt")
    msg = str(exc.value)
    assert msg == (
        "argument target: 'outt' — no part, source or node of that name; "
        "nodes: src, out, GND; parts: src, R2; sources: Vs; did you mean 'out'?"
    )
    assert isinstance(exc.value, KeyError)  # also a KeyError, for older callers
    with pytest.raises(UnknownNameError, match=r"no node of that name; nodes: src, out, GND"):
        sol.circuit.node_name("x9")


def test_long_listings_stay_short():
    rows = [[f"R{i}", "R", f"n{i}", "GND", 1.0] for i in range(60)]
    sol = xlfuncs.solve(parts(*rows), sources(["Vs", "V", "n0", "GND", 50.0, 1.0, 0.0]))
    with pytest.raises(UnknownNameError) as exc:
        sol.signal("zz")
    msg = str(exc.value)
    assert "n11 … (+49 more)" in msg and len(msg) < 255
