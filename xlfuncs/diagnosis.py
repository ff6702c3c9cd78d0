"""Structural diagnosis of ill-posed networks, before any matrix is solved.

Finds what a user can fix by looking at the schematic, in this order:

* a node named ``0`` while the reference has another name (``0`` is the reference in
  many conventions);
* a node touched by one part only whose name is close to an existing node (a likely
  typo, ``ot`` for ``out``), or that looks like a ground (``gnd``, ``earth``) while the
  reference has another name;
* nodes cut off from the reference (only current sources, or nothing, join them to it);
* at DC, nodes that float because capacitors and current sources are their only links;
* loops of voltage sources (at every frequency) or of voltage sources and inductors (DC).

Each finding is a :class:`~xlfuncs.errors.NetworkError` naming nodes, parts and the
frequency, with what to change.
"""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Iterable, Sequence
from operator import itemgetter

from .circuit import Circuit, closest_name
from .errors import NetworkError
from .tables import name_key

__all__ = ["dangling_nodes", "diagnose"]

# names people give the reference node; met as an ordinary node, they are likely a slip
_GROUND_LIKE = frozenset({"0", "gnd", "ground", "earth", "ref", "com", "common", "0v"})
_DIGITS = re.compile(r"\d+")


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


# the role of each kind's (first) branch in the structural checks
_ROLE = {
    "R": "conductor",
    "L": "inductor",
    "C": "capacitor",
    "XFMR": "conductor",
    "VCVS": "vsource",
    "CCVS": "vsource",
    "VCCS": "isource",
    "CCCS": "isource",
}


def _edges(circuit: Circuit) -> Iterable[tuple[str, str, str, str]]:
    """(node a, node b, part name, role) for every two-terminal element."""
    for p in circuit.parts:
        if p.kind == "COUPLING":
            continue
        yield p.from_node or "", p.to_node or "", p.name, _ROLE[p.kind]
        if p.kind == "XFMR":
            yield p.sec_from or "", p.sec_to or "", p.name, "conductor"
    for s in circuit.sources:
        yield s.from_node, s.to_node, s.name, "vsource" if s.kind == "V" else "isource"


def dangling_nodes(
    circuit: Circuit, edges: Sequence[tuple[str, str, str, str]] | None = None
) -> list[tuple[str, str, str | None]]:
    """``(node, part, closest)`` for every node touched by exactly one terminal (and used
    by no control): ``part`` is the one element touching it, ``closest`` the most similar
    other node (names differing only in their digits, ``n1``/``n10``, do not count) or
    None. Such a part has an open end and carries no current."""
    edges = list(_edges(circuit) if edges is None else edges)  # read twice below
    # terminals per node, counted in C (a node used as a control counts twice more)
    touches = Counter(map(itemgetter(0), edges))
    touches.update(map(itemgetter(1), edges))
    controls = [n for p in circuit.parts for n in (p.ctrl_from, p.ctrl_to) if n is not None]
    touches.update(controls + controls)
    single = {n for n in circuit.nodes if touches[n] == 1}
    if not single:
        return []
    part: dict[str, str] = {}  # the one element touching each of them
    for a, c, name, _role in edges:
        for n in (a, c):
            if n in single:
                part[n] = name
    everyone = [*circuit.nodes, circuit.ground]
    out: list[tuple[str, str, str | None]] = []
    for n in circuit.nodes:
        if n not in single:
            continue
        bare = _DIGITS.sub("", name_key(n))
        others = [m for m in everyone if m != n and _DIGITS.sub("", name_key(m)) != bare]
        out.append((n, part[n], closest_name(n, others)))
    return out


def _ground_hint(circuit: Circuit, nodes: Sequence[str]) -> str:
    g = circuit.ground
    like = [n for n in nodes if name_key(n) in _GROUND_LIKE and name_key(n) != name_key(g)]
    if not like:
        return ""
    n = like[0]
    return (
        f"the reference is {g!r}, so {n!r} is an ordinary node here: write {g} for ground, "
        f"or set ground = {n} in the options"
    )


def _with_hints(circuit: Circuit, nodes: Sequence[str], hint: str) -> str:
    """``hint`` plus what the named nodes suggest (a ground-like name, open ends)."""
    extra = [_ground_hint(circuit, nodes)]
    inside = set(nodes)
    for n, part, near in dangling_nodes(circuit):
        if n in inside:
            extra.append(
                f"{n!r} is touched only by {part}" + (f" (did you mean {near!r}?)" if near else "")
            )
    return "; ".join([hint, *[e for e in extra if e]])


def diagnose(circuit: Circuit, *, dc: bool) -> None:
    """Raise :class:`NetworkError` for structurally ill-posed networks.

    Checks, in order: a node named ``0`` that is not the reference; a node touched by one
    part only that is a likely typo (its name close to another node's) or a ground-like
    name that is not the reference; nodes cut
    off from the reference; at DC (when ``dc``), nodes whose only links to the rest are
    capacitors and current sources (a cut-set); loops made only of voltage sources (at
    every frequency) or of voltage sources and inductors (at DC).
    """
    g = circuit.ground
    edges = list(_edges(circuit))
    zero = [n for n in circuit.nodes if n.strip() == "0"]
    if zero:  # "0" is the reference in many conventions; here it would be an ordinary node
        parts = [name for a, c, name, _r in edges if zero[0] in (a, c)]
        raise NetworkError(
            f"node '0' is not the reference (the reference is {g!r}), so the parts on it "
            "do not reach ground",
            nodes=zero,
            parts=parts,
            hint=_ground_hint(circuit, zero),
        )
    for n, part, near in dangling_nodes(circuit, edges):
        ground_hint = _ground_hint(circuit, [n])
        if near is None and not ground_hint:
            continue
        raise NetworkError(
            f"node {n!r} is touched only by {part}, whose other end then carries no "
            "current (a likely typo)",
            nodes=[n],
            parts=[part],
            hint=ground_hint
            or f"did you mean {near!r}? connect {part} to an existing node, or remove it",
        )

    def floating(allowed: set[str]) -> list[str]:
        """Nodes that no path of ``allowed`` branches joins to the reference."""
        adj: dict[str, list[str]] = {}
        for a, c, _n, role in edges:
            if role in allowed:
                adj.setdefault(a, []).append(c)
                adj.setdefault(c, []).append(a)
        reached = {g}
        todo = [g]
        while todo:
            for v in adj.get(todo.pop(), ()):
                if v not in reached:
                    reached.add(v)
                    todo.append(v)
        return [n for n in circuit.nodes if n not in reached]

    def cut(nodes: list[str], roles: set[str]) -> list[str]:
        inside = set(nodes)
        return [n for a, c, n, r in edges if r in roles and ((a in inside) != (c in inside))]

    always = {"conductor", "inductor", "capacitor", "vsource"}
    lost = floating(always)
    if lost:
        raise NetworkError(
            f"these nodes are cut off from the reference {g}: no part joins them to it "
            "(current sources, if any, fix no voltage)",
            nodes=lost,
            parts=cut(lost, {"isource"}),
            hint=_with_hints(
                circuit, lost, f"join them to {g} through a part (a resistor, or the one missing)"
            ),
        )
    if dc:
        lost = floating(always - {"capacitor"})
        if lost:
            raise NetworkError(
                "these nodes float at DC: capacitors and current sources are their only "
                f"links to {g}, and neither settles a steady voltage",
                nodes=lost,
                parts=cut(lost, {"capacitor", "isource"}),
                freq_hz=0.0,
                hint=_with_hints(
                    circuit,
                    lost,
                    f"give them a steady path to {g} (e.g. a high-value resistor across a "
                    "capacitor named here) or remove the 0 Hz tone",
                ),
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
