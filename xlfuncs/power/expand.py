"""Equipment items → per-phase parts of each sequence network, in ohms at each item's own
voltage (ideal transformers carry the ratios; no per-unit values are left to the user).

Networks: ``"1"`` the fundamental (supply EMFs; converters and loaded motors as
constant-power devices, solved in :mod:`.fundamental`), ``"+"``, ``"-"``, ``"0"`` the
positive-, negative- and zero-sequence networks of the harmonic orders. Every network is an
ordinary parts table (README "The tables") with three extra columns the core ignores:
``zone_shift_deg`` (the frame of the part's zone, see :mod:`.zones`), ``item`` and ``note``.

Models, one small function per kind in :data:`MODELS` (h = harmonic order, f₁ the
fundamental, X₁ a reactance at f₁):

* supply — an EMF at the fundamental (phase a at 0° in its zone's frame: the first
  supply's zone is the reference, a supply behind a transformer is taken as synchronised
  in phase with its zone's no-load voltage) behind R + jhX₁ from kV²/MVA_sc and X/R (Z = kV²/MVA_sc: the per-unit relation
  Z_base = kV²/MVA of any power-systems text); R constant (common practice). Zero sequence
  from the single-phase level: Z₀ = 3kV²/MVA_sc_1ph − 2Z₁ (single line-to-earth fault
  I_k1 = 3E/(2Z₁ + Z₀) with MVA_sc_1ph = √3·kV·I_k1, IEC 60909-0 — from memory), same X/R.
* transformer — leakage Z = (z_pct/100)·kV_lv²/MVA at the LV side behind an ideal ratio
  kV_hv/kV_lv; R ∝ √h (common practice for winding eddy and skin effect), X ∝ h;
  magnetising branch neglected. Zero sequence per the vector group (:mod:`.vector_group`)
  with Z₀ from ``z0_pct`` (default z_pct: Z₀ = Z₁ holds for banks of single-phase units
  and shell-type cores; three-limb core types are lower — common practice, give z0_pct
  from the test report).
* cable — pi model: R·√h (common practice for skin effect), jhX, C/2 at each end.
* capacitor — C = Q/(ω₁·kV²) of the steps in service (star equivalent for every connection).
* filter — single-tuned series R-L-C: X_C = kV²/Q, X_L = X_C/h_t² (h_t = tuned_order or
  1/√(p_pct/100)), R = X_n/q with X_n = X_C/h_t (the reactance of either element at the
  tuned order); R constant.
* motor — subtransient X'' = (x_pct/100)·kV²/MVA, jhX'' + R = X''/(X/R) constant (common
  practice); no zero-sequence path; at the fundamental a constant-power load of kw/pf when
  given, else absent.
* load — R = kV²/P and L = kV²/(ω₁Q) in parallel, or the series R + L drawing the same
  P + jQ at rated voltage; R constant, X ∝ h (the two usual linear-load forms: common
  practice).
* converter — an ideal current source (infinite Norton impedance): constant kW/pf at the
  fundamental, its spectrum at the harmonic orders.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from ..errors import InputError
from .tables import Equipment, Item, PowerOptions
from .zones import Zones

__all__ = [
    "MODELS",
    "NETWORKS",
    "PARTS_HEADER",
    "SOURCES_HEADER",
    "Device",
    "Network",
    "build_network",
    "core_options",
]

GND = "GND"
NETWORKS = ("1", "+", "-", "0")
PARTS_HEADER = [
    "name",
    "kind",
    "from",
    "to",
    "value",
    "sec_from",
    "sec_to",
    "r_exponent",
    "zone_shift_deg",
    "item",
    "note",
]
SOURCES_HEADER = [
    "name",
    "kind",
    "from",
    "to",
    "harmonic",
    "peak",
    "phase_deg",
    "zone_shift_deg",
    "item",
    "note",
]
SKIN = 0.5  # R ∝ √h: exponent of the core's resistance law (common practice)


@dataclass(frozen=True)
class Device:
    """A current-source element: a constant-power device at the fundamental (converter,
    loaded motor) or a converter's harmonic injection. Its source draws current from
    ``bus`` (flows bus → GND through the source)."""

    item: Item
    source: str
    bus: str
    p_w: float = 0.0
    q_var: float = 0.0


@dataclass
class Network:
    """One expanded network: rows without headers, and what the results need."""

    sequence: str
    parts: list[list[Any]] = field(default_factory=list)
    sources: list[list[Any]] = field(default_factory=list)
    # item (lowercase) → end ("bus"/"bus_to") → [(element name, sign)]: the line current
    # from that end's bus into the item is Σ sign · I(element)
    terminals: dict[str, dict[str, list[tuple[str, float]]]] = field(default_factory=dict)
    # item (lowercase) → element whose voltage is the capacitor's own (filters)
    cap_voltage: dict[str, str] = field(default_factory=dict)
    devices: list[Device] = field(default_factory=list)
    node_zone: dict[str, int] = field(default_factory=dict)
    internal: set[str] = field(default_factory=set)

    def parts_table(self) -> list[list[Any]]:
        return [list(PARTS_HEADER), *[list(r) for r in self.parts]]

    def sources_table(self) -> list[list[Any]]:
        return [list(SOURCES_HEADER), *[list(r) for r in self.sources]]


class _Ctx:
    """What a model function needs: the network being filled, zones, ω₁."""

    def __init__(self, net: Network, zones: Zones, options: PowerOptions) -> None:
        self.net = net
        self.zones = zones
        self.w1 = 2 * math.pi * options.fundamental_hz
        self.seq = net.sequence

    # zones and frames
    def shift(self, node: str) -> int | None:
        if node == GND:
            return None
        z = self.net.node_zone.get(node)
        if z is None:
            z = self.zones.zone_of_bus[node]
            self.net.node_zone[node] = z
        seq = "+" if self.seq == "1" else self.seq
        return self.zones.offsets[seq][z]

    def active(self, bus: str) -> bool:
        """Whether ``bus`` belongs to this network (zero sequence: to an island)."""
        return self.seq != "0" or self.zones.active_zero(bus)

    def inner(self, item: Item, suffix: str, like: str) -> str:
        node = f"{item.name}.{suffix}"
        self.net.node_zone[node] = self.zones.zone_of_bus[like]
        self.net.internal.add(node)
        return node

    def part(
        self,
        item: Item,
        suffix: str,
        kind: str,
        a: str,
        b: str,
        value: float,
        note: str,
        r_exponent: float | None = None,
        sec: tuple[str, str] | None = None,
    ) -> str:
        name = f"{item.name}.{suffix}"
        where = a if a != GND else b
        sh = self.shift(where)
        if sec is not None:
            self.shift(sec[0])
        self.net.parts.append(
            [
                name,
                kind,
                a,
                b,
                float(value),
                sec[0] if sec else None,
                sec[1] if sec else None,
                r_exponent,
                sh,
                item.name,
                note,
            ]
        )
        return name

    def terminal(self, item: Item, end: str, element: str, sign: float) -> None:
        ends = self.net.terminals.setdefault(item.name.lower(), {})
        ends.setdefault(end, []).append((element, sign))

    def touch(self, item: Item, *ends: str) -> None:
        """Register an item's ends even when it has no element in this network (its line
        current there is exactly zero)."""
        ref = self.net.terminals.setdefault(item.name.lower(), {})
        for e in ends:
            ref.setdefault(e, [])

    def series_rl(
        self,
        item: Item,
        a: str,
        b: str,
        r: float,
        x1: float,
        tag: str,
        note: str,
        r_exponent: float | None,
        like: str,
    ) -> tuple[str | None, str | None]:
        """R then L from ``a`` to ``b`` (either may be 0 and is then left out). Returns
        (element at ``a``, element at ``b``)."""
        first = last = None
        if r > 0 and x1 > 0:
            mid = self.inner(item, f"{tag}m", like)
            first = self.part(item, f"{tag}R", "R", a, mid, r, note + " resistance", r_exponent)
            last = self.part(item, f"{tag}L", "L", mid, b, x1 / self.w1, note + " inductance")
        elif r > 0:
            first = last = self.part(
                item, f"{tag}R", "R", a, b, r, note + " resistance", r_exponent
            )
        elif x1 > 0:
            first = last = self.part(
                item, f"{tag}L", "L", a, b, x1 / self.w1, note + " inductance"
            )
        return first, last


def _split(z: float, x_r: float) -> tuple[float, float]:
    """(R, X) of an impedance magnitude ``z`` with ratio X/R."""
    r = z / math.sqrt(1 + x_r * x_r)
    return r, r * x_r


# ----------------------------------------------------------------------------- models
def _supply(it: Item, c: _Ctx) -> None:
    v = it["kv"] * 1e3
    z1 = v * v / (it["mva_sc"] * 1e6)
    c.touch(it, "bus")
    if c.seq == "0":
        if not c.active(it.bus):
            return
        if "mva_sc_1ph" not in it.values:
            raise InputError(
                "equipment",
                it.row,
                "mva_sc_1ph",
                expected=f"missing: zero-sequence current from a YN converter reaches supply "
                f"{it.name!r} — give its single-phase short-circuit MVA",
            )
        z = 3 * v * v / (it["mva_sc_1ph"] * 1e6) - 2 * z1
        r, x = _split(z, it["x_r"])
        note = f"Z0 = 3kV²/MVA_1ph − 2Z1 = {z:.6g} Ω"
    else:
        r, x = _split(z1, it["x_r"])
        note = f"Z = kV²/MVA_sc = {z1:.6g} Ω, X/R {it['x_r']:g}"
    mid = c.inner(it, "m", it.bus)
    lname = c.part(it, "L", "L", it.bus, mid, x / c.w1, note)
    c.terminal(it, "bus", lname, 1.0)
    if c.seq == "1":
        emf = c.inner(it, "e", it.bus)
        c.part(it, "R", "R", mid, emf, r, "supply resistance")
        off = c.shift(it.bus) or 0
        c.net.sources.append(
            [
                f"{it.name}.E",
                "V",
                emf,
                GND,
                1.0,
                math.sqrt(2) * v / math.sqrt(3),
                0.0,
                off,
                it.name,
                "EMF (line-to-neutral peak) in phase with its zone's frame: physically at "
                f"{off:+d}° (phase a)",
            ]
        )
    else:
        c.part(it, "R", "R", mid, GND, r, "supply resistance (constant)")


def _transformer(it: Item, c: _Ctx) -> None:
    vg = it.group
    assert it.bus_to is not None
    s = it["kva"] * 1e3
    vh, vl = it["kv_hv"] * 1e3, it["kv_lv"] * 1e3
    c.touch(it, "bus", "bus_to")
    zero = c.seq == "0"
    z_pct = it.get("z0_pct", it["z_pct"]) if zero else it["z_pct"]
    if zero and vg.zero_to_ground is not None:
        side_bus, vside, end = (
            (it.bus, vh, "bus")
            if vg.zero_to_ground == "hv"
            else (
                it.bus_to,
                vl,
                "bus_to",
            )
        )
        if not c.active(side_bus):
            return
        z = z_pct / 100 * vside * vside / s
        r, x = _split(z, it["x_r"])
        src = "z0_pct" if "z0_pct" in it.values else "z_pct (Z0 = Z1 assumed)"
        first, _last = c.series_rl(
            it, side_bus, GND, r, x, "0", f"{vg.name} Z0 to ground, {src}", SKIN, side_bus
        )
        if first:
            c.terminal(it, end, first, 1.0)
        return
    if zero and not (vg.passes_zero and c.active(it.bus)):
        return  # delta or ungrounded star: open in the zero sequence
    z = z_pct / 100 * vl * vl / s
    r, x = _split(z, it["x_r"])
    lv = c.inner(it, "lv", it.bus_to)
    shift_hv, shift_lv = c.shift(it.bus), c.shift(it.bus_to)
    rel = (shift_lv or 0) - (shift_hv or 0)
    ratio = c.part(
        it,
        "ratio",
        "XFMR",
        it.bus,
        GND,
        vh / vl,
        f"ideal {it['kv_hv']:g}/{it['kv_lv']:g} kV; {vg.name}: LV frame {rel:+d}° from HV",
        sec=(lv, GND),
    )
    c.terminal(it, "bus", ratio, 1.0)
    label = f"leakage {'Z0' if zero else 'Z'} = {z:.6g} Ω at LV"
    _first, last = c.series_rl(it, lv, it.bus_to, r, x, "", label, SKIN, it.bus_to)
    if last:
        c.terminal(it, "bus_to", last, -1.0)


def _cable(it: Item, c: _Ctx) -> None:
    assert it.bus_to is not None
    c.touch(it, "bus", "bus_to")
    n = it["length_km"]
    if c.seq == "0":
        if not c.active(it.bus):
            return
        if "r0_ohm_km" not in it.values:
            raise InputError(
                "equipment",
                it.row,
                "r0_ohm_km",
                expected=f"missing: cable {it.name!r} carries zero-sequence current from a YN "
                "converter — give r0_ohm_km and x0_ohm_km (they depend on the return path)",
            )
        r, x = it["r0_ohm_km"] * n, it["x0_ohm_km"] * n
        cap = it.get("c0_uf_km", it.get("c_uf_km", 0.0)) * n * 1e-6
        tag = "zero-sequence "
    else:
        r, x = it["r_ohm_km"] * n, it["x_ohm_km"] * n
        cap = it.get("c_uf_km", 0.0) * n * 1e-6
        tag = ""
    first, last = c.series_rl(it, it.bus, it.bus_to, r, x, "", f"{tag}series", SKIN, it.bus)
    assert first is not None and last is not None
    c.terminal(it, "bus", first, 1.0)
    c.terminal(it, "bus_to", last, -1.0)
    if cap > 0:
        ca = c.part(it, "Ca", "C", it.bus, GND, cap / 2, f"{tag}pi-model half capacitance")
        cb = c.part(it, "Cb", "C", it.bus_to, GND, cap / 2, f"{tag}pi-model half capacitance")
        c.terminal(it, "bus", ca, 1.0)
        c.terminal(it, "bus_to", cb, 1.0)


def _grounded_path(it: Item, c: _Ctx) -> bool:
    """Shunt items: does this network hold the item? (zero sequence: YN only)."""
    c.touch(it, "bus")
    if c.seq == "0":
        return it.connection == "YN" and c.active(it.bus)
    return True


def capacitor_in_service(it: Item) -> float:
    """kvar in service of a capacitor row (steps_on of steps; all of it without steps)."""
    steps = it.get("steps", 1)
    on = it.get("steps_on", steps)
    return float(it["kvar"]) * on / steps


def _capacitor(it: Item, c: _Ctx) -> None:
    if not _grounded_path(it, c):
        return
    q = capacitor_in_service(it) * 1e3
    if q <= 0:
        return
    v = it["kv"] * 1e3
    cap = q / (c.w1 * v * v)
    name = c.part(
        it,
        "C",
        "C",
        it.bus,
        GND,
        cap,
        f"{q / 1e3:g} kvar in service at {it['kv']:g} kV, {it.connection} (star equivalent)",
    )
    c.terminal(it, "bus", name, 1.0)
    c.net.cap_voltage[it.name.lower()] = name


def tuned_order(it: Item) -> float:
    if "tuned_order" in it.values:
        return float(it["tuned_order"])
    return 1.0 / math.sqrt(it["p_pct"] / 100)


def _filter(it: Item, c: _Ctx) -> None:
    if not _grounded_path(it, c):
        return
    v = it["kv"] * 1e3
    xc = v * v / (it["kvar"] * 1e3)
    ht = tuned_order(it)
    xl = xc / ht**2
    r = xc / ht / it["q_factor"]
    n1, n2 = c.inner(it, "1", it.bus), c.inner(it, "2", it.bus)
    lname = c.part(it, "L", "L", it.bus, n1, xl / c.w1, f"reactor, tuned order {ht:.6g}")
    c.part(it, "R", "R", n1, n2, r, f"R = X_n/q, q {it['q_factor']:g}")
    cname = c.part(
        it, "C", "C", n2, GND, 1 / (c.w1 * xc), f"{it['kvar']:g} kvar at {it['kv']:g} kV"
    )
    c.terminal(it, "bus", lname, 1.0)
    c.net.cap_voltage[it.name.lower()] = cname


def _motor(it: Item, c: _Ctx) -> None:
    c.touch(it, "bus")
    if c.seq == "0":
        return
    if c.seq == "1":
        if "kw" in it.values:
            _device(it, c, it["kw"], it["pf"], "running load (constant power)")
        return
    v = it["kv"] * 1e3
    x = it["x_pct"] / 100 * v * v / (it["kva"] * 1e3)
    first, _last = c.series_rl(
        it, it.bus, GND, x / it["x_r"], x, "", f"subtransient X'' = {x:.6g} Ω", None, it.bus
    )
    assert first is not None
    c.terminal(it, "bus", first, 1.0)


def _load(it: Item, c: _Ctx) -> None:
    if not _grounded_path(it, c):
        return
    p = it["kw"] * 1e3
    q = it["kvar"] * 1e3 if "kvar" in it.values else p * math.tan(math.acos(it["pf"]))
    v2 = (it["kv"] * 1e3) ** 2
    if it["model"] == "parallel":
        if p > 0:
            c.terminal(
                it, "bus", c.part(it, "R", "R", it.bus, GND, v2 / p, "parallel R = kV²/P"), 1.0
            )
        if q > 0:
            lv = v2 / (q * c.w1)
            c.terminal(
                it, "bus", c.part(it, "L", "L", it.bus, GND, lv, "parallel L = kV²/(ω₁Q)"), 1.0
            )
        return
    s2 = p * p + q * q
    if s2 == 0:
        return
    first, _last = c.series_rl(
        it, it.bus, GND, v2 * p / s2, v2 * q / s2, "", "series form", None, it.bus
    )
    assert first is not None
    c.terminal(it, "bus", first, 1.0)


def _device(it: Item, c: _Ctx, kw: float, pf: float, note: str) -> None:
    name = f"{it.name}.I"
    p = kw * 1e3
    q = p * math.tan(math.acos(pf))
    c.shift(it.bus)
    c.net.devices.append(Device(it, name, it.bus, p, q))
    c.terminal(it, "bus", name, 1.0)
    c.net.sources.append([name, "I", it.bus, GND, 1.0, 0.0, 0.0, c.shift(it.bus), it.name, note])


def _converter(it: Item, c: _Ctx) -> None:
    if not _grounded_path(it, c):
        return
    if c.seq == "1":
        _device(it, c, it["kw"], it["pf"], "constant kW at displacement pf")
        return
    c.shift(it.bus)
    c.net.devices.append(Device(it, f"{it.name}.I", it.bus))
    c.terminal(it, "bus", f"{it.name}.I", 1.0)


MODELS: dict[str, Callable[[Item, _Ctx], None]] = {
    "supply": _supply,
    "transformer": _transformer,
    "cable": _cable,
    "capacitor": _capacitor,
    "filter": _filter,
    "motor": _motor,
    "load": _load,
    "converter": _converter,
}


def build_network(eq: Equipment, zones: Zones, options: PowerOptions, sequence: str) -> Network:
    """Parts (and, for ``"1"``, the supply EMFs and constant-power device rows) of one
    network. Harmonic injections are added by the study once the fundamental is known."""
    net = Network(sequence)
    ctx = _Ctx(net, zones, options)
    for it in eq.items:
        MODELS[it.kind](it, ctx)
    internal = {n.lower() for n in net.internal}
    internal |= {str(r[0]).lower() for r in net.parts} | {str(r[0]).lower() for r in net.sources}
    internal |= {d.source.lower() for d in net.devices}
    for b in eq.buses:
        if b.lower() in internal:
            row, col = eq.first_use[b]
            raise InputError(
                "equipment",
                row,
                col,
                b,
                "this bus name is taken by a part or internal node of the expansion (an "
                "item name, a dot and a suffix); rename the bus",
            )
    return net


def core_options(options: PowerOptions) -> list[list[Any]]:
    """The core's options table for the expanded networks."""
    return [
        ["key", "value"],
        ["fundamental_hz", options.fundamental_hz],
        ["ground", GND],
        ["thd_max_order", options.max_order],
    ]
