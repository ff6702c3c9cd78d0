"""Zones of a plant and the phase offset of each zone in each sequence network.

The core's ideal transformer has a real ratio, so a vector group's phase shift cannot be a
part. It is exact to move it into the frame of reference instead: buses joined by cables
form a *zone*; transformers join zones. Every zone gets an offset per sequence — the
supply's zone 0°, the LV zone of a transformer its HV zone's offset plus the group's shift
for that sequence (see :mod:`.vector_group`). Each sequence network is then solved with real
ratios in zone-local frames (a quantity x of zone z is stored as x·e^(−j·offset)) and its
results are rotated back. This is exact whenever the shifts close around every loop of
zones; a loop whose shifts do not close (parallel transformers of different phase shift)
is refused.

In the zero sequence only ``YNyn`` transformers join zones. Zero-sequence current can come
only from a converter with a grounded-star connection (``YN``); the zero-sequence network
is built for the zones such a converter can reach (its *island*) — everywhere else every
zero-sequence quantity is exactly zero.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from ..errors import InputError
from .tables import Equipment, Item
from .vector_group import wrap_deg

__all__ = ["KV_FACTOR", "Zones", "find_zones"]

KV_FACTOR = 1.5  # an item's kV this far from its bus's nominal is taken for a units slip


@dataclass(frozen=True)
class Zones:
    """Zones, their nominal voltages and offsets.

    Attributes
    ----------
    zone_of_bus : mapping bus → zone index
    buses : tuple of tuple of str
        The buses of each zone.
    offsets : mapping sequence → tuple of int or None
        Offset (whole degrees) of each zone in the ``"+"``, ``"-"`` and ``"0"`` networks;
        None in ``"0"`` for zones outside every zero-sequence island.
    nominal_kv : tuple of float
        Nominal line-to-line kV of each zone, from its supply or the transformer winding
        facing it (``nominal_from`` says which).
    """

    zone_of_bus: Mapping[str, int]
    buses: tuple[tuple[str, ...], ...]
    offsets: Mapping[str, tuple[int | None, ...]] = field(compare=False)
    nominal_kv: tuple[float, ...]
    nominal_from: tuple[str, ...]

    def offset(self, sequence: str, bus: str) -> int | None:
        seq = "+" if sequence == "1" else sequence
        return self.offsets[seq][self.zone_of_bus[bus]]

    def kv(self, bus: str) -> float:
        return self.nominal_kv[self.zone_of_bus[bus]]

    def active_zero(self, bus: str) -> bool:
        return self.offsets["0"][self.zone_of_bus[bus]] is not None


def find_zones(eq: Equipment) -> Zones:
    """Partition the buses into zones, check the loops and voltage levels, place offsets."""
    parent = {b: b for b in eq.buses}

    def root(b: str) -> str:
        while parent[b] != b:
            parent[b] = parent[parent[b]]
            b = parent[b]
        return b

    for it in eq.of_kind("cable"):
        assert it.bus_to is not None
        ra, rb = root(it.bus), root(it.bus_to)
        if ra != rb:
            parent[rb] = ra
    zone_ids: dict[str, int] = {}
    zone_of_bus: dict[str, int] = {}
    members: list[list[str]] = []
    for b in eq.buses:
        r = root(b)
        if r not in zone_ids:
            zone_ids[r] = len(members)
            members.append([])
        zone_of_bus[b] = zone_ids[r]
        members[zone_ids[r]].append(b)
    nz = len(members)
    trafos = eq.of_kind("transformer")

    def place(seq: str, starts: list[tuple[int, Item]], edges: list[Item]) -> list[int | None]:
        off: list[int | None] = [None] * nz
        via: list[Item | None] = [None] * nz
        for z0, by in starts:
            if off[z0] is not None:
                continue
            off[z0], via[z0] = 0, by
            queue = deque([z0])
            while queue:
                z = queue.popleft()
                for t in edges:
                    assert t.bus_to is not None
                    zh, zl = zone_of_bus[t.bus], zone_of_bus[t.bus_to]
                    if z not in (zh, zl):
                        continue
                    shift = t.group.shift_deg(seq)
                    assert shift is not None
                    if zh == zl:
                        if shift % 360:
                            raise InputError(
                                "equipment",
                                t.row,
                                "connection",
                                t.group.name,
                                f"buses {t.bus!r} and {t.bus_to!r} are also joined by cables: a "
                                f"loop whose phase shift ({shift:+d}°) does not close",
                            )
                        continue
                    here, there = (zh, zl) if z == zh else (zl, zh)
                    want = wrap_deg((off[here] or 0) + (shift if z == zh else -shift))
                    if off[there] is None:
                        off[there], via[there] = want, t
                        queue.append(there)
                    elif off[there] != want:
                        other = via[there]
                        assert other is not None
                        bus = t.bus_to if there == zl else t.bus
                        raise InputError(
                            "equipment",
                            t.row,
                            "connection",
                            t.group.name,
                            f"phase shifts do not close around a loop ({_SEQ_NAME[seq]} "
                            f"sequence): through this transformer bus {bus!r} would be at "
                            f"{want:+d}° but {other.kind} {other.name!r} (row {other.row}) puts it at "
                            f"{off[there]:+d}°; parallel "
                            "paths need transformers of the same phase shift",
                        )
        return off

    supplies = [(zone_of_bus[s.bus], s) for s in eq.of_kind("supply")]
    pos = place("+", supplies, list(trafos))
    for z, o in enumerate(pos):
        if o is None:
            b = members[z][0]
            row, col = eq.first_use[b]
            raise InputError(
                "equipment",
                row,
                col,
                b,
                "this bus has no path to any supply through cables and transformers",
            )
    neg = [wrap_deg(-o) if o is not None else None for o in pos]
    yn_conv = [(zone_of_bus[c.bus], c) for c in eq.of_kind("converter") if c.connection == "YN"]
    zero = place("0", yn_conv, [t for t in trafos if t.group.passes_zero])
    kv, src = _nominal(eq, zone_of_bus, nz)
    return Zones(
        MappingProxyType(zone_of_bus),
        tuple(tuple(m) for m in members),
        MappingProxyType({"+": tuple(pos), "-": tuple(neg), "0": tuple(zero)}),
        tuple(kv),
        tuple(src),
    )


_SEQ_NAME = {"+": "positive", "-": "negative", "0": "zero"}


def _nominal(
    eq: Equipment, zone_of_bus: Mapping[str, int], nz: int
) -> tuple[list[float], list[str]]:
    """Nominal kV per zone (a supply first, else the transformer winding facing the zone,
    in row order) and the check that every rating sits near it."""
    cand: list[list[tuple[float, Item, str]]] = [[] for _ in range(nz)]
    for s in eq.of_kind("supply"):
        cand[zone_of_bus[s.bus]].append((s["kv"], s, "kv"))
    for t in eq.of_kind("transformer"):
        assert t.bus_to is not None
        cand[zone_of_bus[t.bus]].append((t["kv_hv"], t, "kv_hv"))
        cand[zone_of_bus[t.bus_to]].append((t["kv_lv"], t, "kv_lv"))
    kv: list[float] = []
    src: list[str] = []
    for z in range(nz):
        # every zone reached from a supply has a supply or a transformer winding
        value, it, col = cand[z][0]
        kv.append(value)
        src.append(f"{it.kind} {it.name!r} {col}, row {it.row}")
    checks = [
        (v, it, col, zone_of_bus[it.bus if col != "kv_lv" else str(it.bus_to)])
        for z in range(nz)
        for v, it, col in cand[z][1:]
    ]
    checks += [
        (it["kv"], it, "kv", zone_of_bus[it.bus])
        for it in eq.items
        if it.kind not in ("supply", "transformer", "cable")
    ]
    for value, it, col, z in checks:
        ratio = value / kv[z]
        if not 1 / KV_FACTOR <= ratio <= KV_FACTOR:
            bus = it.bus_to if col == "kv_lv" else it.bus
            raise InputError(
                "equipment",
                it.row,
                col,
                value,
                f"differs from the nominal {kv[z]:g} kV of bus {bus!r} (from {src[z]}) by more "
                f"than a factor {KV_FACTOR:g}; give kV line-to-line",
            )
    return kv, src
