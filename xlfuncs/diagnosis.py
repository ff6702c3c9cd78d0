"""Structural diagnosis of ill-posed networks, before any matrix is solved.

Finds what a user can fix by looking at the schematic: nodes with no path to the
reference, nodes that float at DC (only capacitors and current sources link them to the
rest), loops of voltage sources (at every frequency) or of voltage sources and inductors
(at DC). Each finding is a :class:`~xlfuncs.errors.NetworkError` naming nodes, parts and
frequency.
"""

from __future__ import annotations

from collections.abc import Iterable

from .circuit import Circuit
from .errors import NetworkError

__all__ = ["diagnose"]


class _DSU:
    def __init__(self) -> None:
        self.parent: dict[str, str] = {}
        self.adj: dict[str, list[tuple[str, str]]] = {}

    def find(self, x: str) -> str:
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def union(self, a: str, b: str) -> bool:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        self.parent[ra] = rb
        return True

    def tree_edge(self, a: str, b: str, label: str) -> None:
        self.adj.setdefault(a, []).append((b, label))
        self.adj.setdefault(b, []).append((a, label))

    def path(self, a: str, b: str) -> list[str]:
        """Edge labels on the tree path a → b (breadth-first)."""
        prev: dict[str, tuple[str, str] | None] = {a: None}
        queue = [a]
        while queue:
            u = queue.pop(0)
            if u == b:
                break
            for v, lab in self.adj.get(u, []):
                if v not in prev:
                    prev[v] = (u, lab)
                    queue.append(v)
        out: list[str] = []
        u = b
        while prev.get(u) is not None:
            pu, lab = prev[u]  # type: ignore[misc]
            out.append(lab)
            u = pu
        return out[::-1]


def _edges(circuit: Circuit) -> Iterable[tuple[str, str, str, str]]:
    """(node a, node b, part name, role) for every two-terminal element."""
    for p in circuit.parts:
        if p.kind == "COUPLING":
            continue
        role = {
            "R": "conductor",
            "L": "inductor",
            "C": "capacitor",
            "XFMR": "conductor",
            "VCVS": "vsource",
            "CCVS": "vsource",
            "VCCS": "isource",
            "CCCS": "isource",
        }[p.kind]
        yield p.from_node or "", p.to_node or "", p.name, role
        if p.kind == "XFMR":
            yield p.sec_from or "", p.sec_to or "", p.name, "conductor"
    for s in circuit.sources:
        yield s.from_node, s.to_node, s.name, "vsource" if s.kind == "V" else "isource"


def diagnose(circuit: Circuit, *, dc: bool) -> None:
    """Raise :class:`NetworkError` for structurally ill-posed networks.

    Checks, in order: nodes with no path to the reference at all; at DC (when ``dc``),
    nodes whose only links to the rest are capacitors and current sources (a cut-set);
    loops made only of voltage sources (at every frequency) or of voltage sources and
    inductors (at DC).
    """
    g = circuit.ground
    edges = list(_edges(circuit))

    def floating(allowed: set[str]) -> list[str]:
        dsu = _DSU()
        dsu.find(g)
        for a, c, _n, role in edges:
            if role in allowed:
                dsu.union(a, c)
        root = dsu.find(g)
        return [n for n in circuit.nodes if dsu.find(n) != root]

    def cut(nodes: list[str], roles: set[str]) -> list[str]:
        inside = set(nodes)
        return [n for a, c, n, r in edges if r in roles and ((a in inside) != (c in inside))]

    always = {"conductor", "inductor", "capacitor", "vsource"}
    lost = floating(always)
    if lost:
        raise NetworkError(
            "no path to the reference through any part",
            nodes=lost,
            parts=cut(lost, {"isource"}),
            hint=f"connect them to {g} (a resistor, or the missing part)",
        )
    if dc:
        lost = floating(always - {"capacitor"})
        if lost:
            raise NetworkError(
                "no DC path to the reference: only capacitors and current sources (a cut-set) "
                "link these nodes to the rest",
                nodes=lost,
                parts=cut(lost, {"capacitor", "isource"}),
                freq_hz=0.0,
                hint="add a DC path (e.g. a high-value resistor across the capacitor) "
                "or remove the DC tone",
            )
    for roles, freq in (({"vsource"}, None), ({"vsource", "inductor"}, 0.0)):
        if freq == 0.0 and not dc:
            continue
        dsu = _DSU()
        for a, c, n, r in edges:
            if r not in roles:
                continue
            if dsu.union(a, c):
                dsu.tree_edge(a, c, n)
            else:
                loop = [*dsu.path(a, c), n]
                what = "voltage sources" if freq is None else "voltage sources and inductors"
                raise NetworkError(
                    f"a loop made only of {what} (their voltages cannot all hold)",
                    parts=loop,
                    freq_hz=freq,
                    hint="add series resistance to one of them, or remove one"
                    if freq is None
                    else "at DC inductors are shorts: add series resistance in the loop",
                )
