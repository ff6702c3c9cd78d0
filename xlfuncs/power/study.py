"""A three-phase harmonic study: equipment ratings → sequence networks → results.

Steps (docs/THREE_PHASE.md has the full method):

1. read the equipment, spectra and options tables; place the zones and their offsets;
2. expand every item into the fundamental, positive-, negative- and zero-sequence
   networks (ordinary parts tables);
3. solve the fundamental with the converters as constant-power devices; each converter's
   fundamental current angle θ₁ (physical frame, phase a) follows;
4. inject each converter's h-th current, |I_h| = pct/100·|I₁| at angle h·θ₁ + phase_deg(h),
   into the network of its sequence (h ≡ 1 mod 3: positive, 2: negative, 0: zero), rotated
   into the zone's frame; solve each network once for all its orders;
5. rotate the results back to the physical frame and assemble per-order spectra.

Balanced operation throughout: every order is one sequence, phases b and c follow from
phase a (b lags a by h·120°, c leads by h·120°). Not modelled: unbalance, single-phase
loads on one phase, interharmonics, background distortion of the supply, converter
Norton impedances (ideal current sources), transformer magnetising branches.
"""

from __future__ import annotations

import cmath
import functools
import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np

from ..api import impedance_scan as _scan
from ..api import solve
from ..circuit import Circuit
from ..errors import InputError
from ..solution import Solution, Spectrum
from ..studies import (
    CapacitorDuty,
    CurrentCheck,
    Resonance,
    VoltageCheck,
    capacitor_duty,
    check_current,
    check_voltage,
    find_resonances,
)
from .expand import (
    GND,
    NETWORKS,
    Network,
    build_network,
    capacitor_in_service,
    core_options,
)
from .fundamental import Fundamental, solve_fundamental
from .tables import (
    Equipment,
    Item,
    PowerOptions,
    Spectra,
    SpectrumLine,
    read_equipment,
    read_power_options,
    read_spectra,
)
from .vector_group import sequence_of
from .zones import Zones, find_zones

__all__ = [
    "CAUTION",
    "NOT_MODELLED",
    "ExpandedNetwork",
    "FundamentalResults",
    "HarmonicStudy",
    "expand_network",
    "harmonic_study",
    "ideal_spectrum",
    "parse_sequence",
    "sequence_impedance",
    "sequence_resonances",
]

CAUTION = (
    "Screening calculation (balanced three-phase model): check results that feed equipment "
    "ratings against measurements, and defer to the utility, local codes, the equipment makers "
    "and a licensed engineer."
)
NOT_MODELLED = (
    "Not modelled: unbalance, single-phase loads on one phase, interharmonics, background "
    "distortion of the supply, converter Norton impedances, transformer magnetising branches."
)

_SEQ_WORDS = {
    "+": "+",
    "pos": "+",
    "positive": "+",
    "-": "-",
    "−": "-",
    "neg": "-",
    "negative": "-",
    "0": "0",
    "zero": "0",
    "1": "1",
    "f1": "1",
    "fundamental": "1",
}


def parse_sequence(value: Any) -> str:
    """``+``, ``-``, ``0`` (also ``positive``, ``negative``, ``zero``) or ``fundamental``."""
    if isinstance(value, (int, float)) and not isinstance(value, bool) and value == 0:
        return "0"
    key = str(value).strip().lower() if value is not None else ""
    seq = _SEQ_WORDS.get(key)
    if seq is None or (isinstance(value, (int, float)) and not isinstance(value, bool)):
        raise InputError(
            "argument",
            None,
            "sequence",
            value,
            "expected +, - or 0 (positive, negative, zero sequence) or fundamental",
        )
    return seq


def ideal_spectrum(pulses: int, max_order: int) -> list[tuple[int, float, float]]:
    """(order, pct of I₁, phase_deg) of an ideal p-pulse converter: orders k·p ± 1 up to
    ``max_order``, |I_h| = I₁/h, phase 180° for k·p − 1 and 0° for k·p + 1 — the Fourier
    series of the ideal 120° rectangular line current of a six-pulse bridge (a 12-pulse
    pair keeps the six-pulse signs of its surviving orders), with the fundamental at 0°."""
    out: list[tuple[int, float, float]] = []
    k = 1
    while k * pulses - 1 <= max_order:
        for h, ph in ((k * pulses - 1, 180.0), (k * pulses + 1, 0.0)):
            if h <= max_order:
                out.append((h, 100.0 / h, ph))
        k += 1
    return out


@dataclass(frozen=True)
class ExpandedNetwork:
    """One expanded network as our ordinary tables.

    ``parts`` and ``sources`` (header row first) can be passed to :func:`xlfuncs.solve`
    with ``options``; the results are then in the zones' local frames (column
    ``zone_shift_deg``: physical = local · e^(j·zone_shift_deg)). ``sources`` is None for
    a network nothing drives (no order of its sequence is injected).
    """

    sequence: str
    parts: list[list[Any]]
    sources: list[list[Any]] | None
    options: list[list[Any]]
    orders: tuple[int, ...]


@dataclass(frozen=True)
class FundamentalResults:
    """Fundamental results in the physical frame (phase a; supply EMFs at 0°).

    Attributes
    ----------
    bus_voltage : mapping bus → complex
        Line-to-neutral peak phasor.
    device_current : mapping item → complex
        Peak phasor of the current each converter (or loaded motor) draws from its bus.
    theta1_deg : mapping item → float
        Angle of that current (θ₁), degrees.
    iterations : int
        Fixed-point iterations of the constant-power solve (0 without devices).
    mismatch : float
        Largest relative power mismatch of a device after the final solve (≤ 1e-9).
    """

    bus_voltage: Mapping[str, complex]
    device_current: Mapping[str, complex]
    theta1_deg: Mapping[str, float]
    iterations: int
    mismatch: float


def _rot(deg: int | None) -> complex:
    if deg is None:
        return 0j
    return cmath.exp(1j * math.radians(deg))


class HarmonicStudy:
    """Results of :func:`harmonic_study`. Every spectrum is over :attr:`orders`
    (the fundamental and every injected order, ascending), physical frame, phase a."""

    def __init__(self, equipment: Equipment, spectra: Spectra, options: PowerOptions) -> None:
        self.equipment = equipment
        self.spectra = spectra
        self.options = options
        self.zones: Zones = find_zones(equipment)
        self.f1 = options.fundamental_hz
        self._core_opts = core_options(options)
        self._nets: dict[str, Network] = {
            s: build_network(equipment, self.zones, options, s) for s in NETWORKS
        }
        fnet = self._nets["1"]
        self._fund: Fundamental = solve_fundamental(
            fnet, fnet.parts_table(), self._core_opts, self.f1
        )
        self.assumptions: list[str] = []
        self._seq_orders: dict[str, list[int]] = {"+": [], "-": [], "0": []}
        self._inject()
        self._solutions: dict[str, Solution | None] = {"1": self._fund.solution}
        for s in ("+", "-", "0"):
            net = self._nets[s]
            if not net.sources:
                self._solutions[s] = None
                continue
            if s == "0":
                self._check_return_paths(net)
            self._solutions[s] = solve(net.parts_table(), net.sources_table(), self._core_opts)
        harm = sorted({h for v in self._seq_orders.values() for h in v})
        self.orders = np.array([1, *harm], dtype=int)
        self.orders.setflags(write=False)
        self.freqs_hz = self.orders * self.f1
        self._index: dict[str, dict[int, int]] = {}
        self._elem: dict[str, dict[str, int]] = {}
        for s, sol in self._solutions.items():
            if sol is not None:
                hs = np.rint(sol.freqs_hz / self.f1).astype(int)
                self._index[s] = {int(h): k for k, h in enumerate(hs)}
                self._elem[s] = {n.lower(): i for i, n in enumerate(sol.element_names)}
        self._notes()

    # ------------------------------------------------------------------ construction
    def _lines(self, conv: Item) -> list[tuple[int, float, float, int | None]]:
        name = conv.get("spectrum")
        if name is None:
            return [
                (h, p, ph, None)
                for h, p, ph in ideal_spectrum(conv["pulses"], self.options.max_order)
            ]
        found = self.spectra.get(name)
        if found is None:
            raise InputError(
                "equipment",
                conv.row,
                "spectrum",
                name,
                "no spectrum of that name in the spectra table"
                + ("" if self.spectra.table else " (no spectra table was given)"),
            )
        lines: tuple[SpectrumLine, ...] = found[1]
        return [(ln.order, ln.pct, ln.phase_deg, ln.row) for ln in lines]

    def _inject(self) -> None:
        for conv in self.equipment.of_kind("converter"):
            src = f"{conv.name}.I"
            i1 = self._fund.currents[src.lower()]
            off1 = self.zones.offset("+", conv.bus) or 0
            theta1 = cmath.phase(i1) + math.radians(off1)
            mag1 = abs(i1)
            for h, pct, phase, row in self._lines(conv):
                seq = sequence_of(h)
                if seq == "0" and conv.connection != "YN":
                    if pct == 0:
                        continue
                    where = f"spectra row {row}" if row else "its spectrum"
                    raise InputError(
                        "equipment",
                        conv.row,
                        "connection",
                        conv.get("connection"),
                        f"converter {conv.name!r} is three-wire (no connection YN) but its "
                        f"spectrum has zero-sequence order {h} at {pct:g} % ({where}); balanced "
                        "triplen currents need a neutral — set connection YN or drop the row",
                    )
                off = self.zones.offset(seq, conv.bus)
                phys = pct / 100 * mag1 * cmath.exp(1j * (h * theta1 + math.radians(phase)))
                loc = phys * _rot(-(off or 0))
                note = f"{pct:g} % of I1 at {phase:g}° + h·θ1 (θ1 = {math.degrees(theta1):.6g}°)"
                self._nets[seq].sources.append(
                    [
                        src,
                        "I",
                        conv.bus,
                        GND,
                        float(h),
                        abs(loc),
                        math.degrees(cmath.phase(loc)),
                        off,
                        conv.name,
                        note,
                    ]
                )
                if h not in self._seq_orders[seq]:
                    self._seq_orders[seq].append(h)

    def _check_return_paths(self, net: Network) -> None:
        """Every zero-sequence injection needs a path to the neutral (GND)."""
        adj: dict[str, set[str]] = {}

        def link(a: str | None, b: str | None) -> None:
            if a and b:
                adj.setdefault(a, set()).add(b)
                adj.setdefault(b, set()).add(a)

        for r in net.parts:
            if r[1] == "XFMR":
                link(r[2], r[5])
            else:
                link(r[2], r[3])
        seen = {GND}
        stack = [GND]
        while stack:
            n = stack.pop()
            for m in adj.get(n, ()):
                if m not in seen:
                    seen.add(m)
                    stack.append(m)
        for r in net.sources:
            if r[2] not in seen:
                it = self.equipment.item(r[8])
                raise InputError(
                    "equipment",
                    it.row,
                    "connection",
                    it.get("connection"),
                    f"converter {it.name!r} injects zero-sequence (triplen) current at bus "
                    f"{it.bus!r}, but nothing on its side of the deltas returns it to the "
                    "neutral (a grounded-star winding facing a delta, a YNyn transformer to "
                    "such a winding, or a YN capacitor, filter, load or supply)",
                )

    def _notes(self) -> None:
        eq = self.equipment
        if self._seq_orders["0"]:
            for t in eq.of_kind("transformer"):
                z_side = t.group.zero_to_ground
                if "z0_pct" not in t.values and (z_side or t.group.passes_zero):
                    bus = t.bus if z_side == "hv" or t.group.passes_zero else str(t.bus_to)
                    if self.zones.active_zero(bus):
                        self.assumptions.append(
                            f"transformer {t.name!r}: zero-sequence impedance = z_pct "
                            "(no z0_pct given)"
                        )
            for it in eq.items:
                if (
                    it.kind in ("load", "converter")
                    and "connection" not in it.values
                    and self.zones.active_zero(it.bus)
                ):
                    self.assumptions.append(
                        f"{it.kind} {it.name!r}: three-wire (no connection given): no "
                        "zero-sequence path"
                    )
        for m in eq.of_kind("motor"):
            if "kw" not in m.values:
                self.assumptions.append(
                    f"motor {m.name!r}: no running load at the fundamental (no kw/pf given)"
                )

    # ------------------------------------------------------------------ accessors
    def sequence(self, order: int) -> str:
        """``+``, ``-`` or ``0`` for harmonic ``order`` (the fundamental is ``+``)."""
        return sequence_of(order)

    def _net_of(self, h: int) -> str:
        return "1" if h == 1 else sequence_of(h)

    def bus_kv(self, bus: str) -> float:
        """Nominal line-to-line kV of a bus (its supply or the transformer winding facing
        its zone)."""
        return self.zones.kv(self.equipment.bus(bus))

    def _spectrum(self, phasors: np.ndarray, label: str) -> Spectrum:
        return Spectrum(self.freqs_hz, phasors, label, self.f1, self.options.max_order)

    def _slots(self, s: str) -> tuple[np.ndarray, np.ndarray] | None:
        """Positions in :attr:`orders` of network ``s``'s orders, and their rows in its
        solution; None when the network was not solved."""
        if self._solutions.get(s) is None:
            return None
        pos = np.flatnonzero([self._net_of(int(h)) == s for h in self.orders])
        rows = np.array([self._index[s][int(h)] for h in self.orders[pos]], dtype=int)
        return pos, rows

    def bus_voltage(self, bus: str) -> Spectrum:
        """Line-to-neutral voltage of ``bus`` (phase a), a :class:`Spectrum` over
        :attr:`orders`."""
        b = self.equipment.bus(bus)
        out = np.zeros(self.orders.size, dtype=complex)
        for s, sol in self._solutions.items():
            slots = self._slots(s)
            if sol is None or slots is None or b not in sol.circuit.nodes:
                continue
            pos, rows = slots
            idx = sol.circuit.nodes.index(b)
            out[pos] = sol.node_voltages[rows, idx] * _rot(self.zones.offset(s, b))
        return self._spectrum(out, f"V({b})")

    def _end(self, it: Item, end: str | None) -> tuple[str, str]:
        e = "bus" if end is None else str(end).strip().lower()
        if e not in ("bus", "bus_to") or (e == "bus_to" and it.bus_to is None):
            raise InputError(
                "argument",
                None,
                "end",
                end,
                "expected bus or bus_to (bus_to only for transformers and cables)",
            )
        return e, it.bus if e == "bus" else str(it.bus_to)

    def _terminal_current(self, it: Item, end: str, bus: str, seqs: tuple[str, ...]) -> np.ndarray:
        """Line current (physical frame) from ``bus`` into ``it`` at ``end`` over
        :attr:`orders`, from the networks ``seqs`` (zero elsewhere)."""
        out = np.zeros(self.orders.size, dtype=complex)
        for s in seqs:
            sol = self._solutions.get(s)
            slots = self._slots(s)
            terms = self._nets[s].terminals.get(it.name.lower(), {}).get(end, [])
            if sol is None or slots is None or not terms:
                continue
            pos, rows = slots
            cols = np.array([self._elem[s][n.lower()] for n, _sign in terms], dtype=int)
            signs = np.array([sign for _n, sign in terms])
            total = sol.element_currents[np.ix_(rows, cols)] @ signs
            out[pos] = total * _rot(self.zones.offset(s, bus))
        return out

    def branch_current(
        self, name: str, end: str = "bus", harmonics_only: bool = False
    ) -> Spectrum:
        """Line current (phase a) flowing from the item's ``end`` bus (``bus`` or, for
        transformers and cables, ``bus_to``) into the item; for a supply that is minus the
        current it delivers. A motor without kw/pf has no modelled fundamental current:
        ask for ``harmonics_only=True`` to get its harmonic orders alone."""
        it = self.equipment.item(name)
        e, bus = self._end(it, end)
        seqs = ("1", "+", "-", "0")
        if it.kind == "motor" and "kw" not in it.values and not harmonics_only:
            raise InputError(
                "equipment",
                it.row,
                "kw",
                expected=f"motor {it.name!r}: its running current at the fundamental is not "
                "modelled without kw and pf; give them, or ask for its harmonic currents only",
            )
        cur = self._terminal_current(it, e, bus, seqs)
        label = f"I({it.name}, {e})"
        if harmonics_only:
            keep = self.orders >= 2
            return Spectrum(
                self.freqs_hz[keep],
                cur[keep],
                label + " harmonics",
                self.f1,
                self.options.max_order,
            )
        return self._spectrum(cur, label)

    def neutral_end(self, name: str, end: str | None = None) -> str:
        """The end (``bus``/``bus_to``) of the grounded star of ``name`` (``end`` picks the
        winding of a ``YNyn`` transformer)."""
        it = self.equipment.item(name)
        grounded: list[str] = []
        if it.kind == "supply":
            grounded = ["bus"]
        elif it.kind == "transformer":
            grounded = [
                e for e, side in (("bus", "hv"), ("bus_to", "lv")) if it.group.grounded(side)
            ]
        elif it.kind in ("capacitor", "filter", "load", "converter") and it.connection == "YN":
            grounded = ["bus"]
        if not grounded:
            what = (
                it.group.name if it.kind == "transformer" else it.get("connection", "three-wire")
            )
            raise InputError(
                "argument",
                None,
                "item",
                name,
                f"{it.kind} {it.name!r} ({what}) has no grounded star point",
            )
        if end is None or (isinstance(end, str) and not end.strip()):
            if len(grounded) > 1:
                raise InputError(
                    "argument",
                    None,
                    "end",
                    end,
                    f"{it.name!r} has two grounded windings: give end bus (HV) or bus_to (LV)",
                )
            return grounded[0]
        e, _b = self._end(it, end)
        if e not in grounded:
            raise InputError(
                "argument", None, "end", end, f"that winding of {it.name!r} is not a grounded star"
            )
        return e

    def neutral_current(self, name: str, end: str | None = None) -> Spectrum:
        """Current from a grounded star point into the neutral/earth: 3 × the
        zero-sequence line current (zero at positive- and negative-sequence orders).
        ``end`` picks the winding of a ``YNyn`` transformer."""
        it = self.equipment.item(name)
        e = self.neutral_end(name, end)
        bus = it.bus if e == "bus" else str(it.bus_to)
        cur = 3 * self._terminal_current(it, e, bus, ("0",))
        return self._spectrum(cur, f"I_N({it.name}, {e})")

    def network(self, sequence: str) -> ExpandedNetwork:
        """The expanded network ``"+"``, ``"-"``, ``"0"`` or ``"1"`` (fundamental) as solved,
        with its sources (the converged fundamental currents, or the injections)."""
        s = parse_sequence(sequence)
        net = self._nets[s]
        sources: list[list[Any]] | None
        if s == "1":
            sources = [list(r) for r in self._fund.sources]
            orders: tuple[int, ...] = (1,)
        else:
            sources = net.sources_table() if net.sources else None
            orders = tuple(sorted(self._seq_orders[s]))
        return ExpandedNetwork(
            s, net.parts_table(), sources, [list(r) for r in self._core_opts], orders
        )

    @functools.cached_property
    def fundamental(self) -> FundamentalResults:
        """The fundamental solve's results (physical frame)."""
        sol = self._fund.solution
        volts = {}
        for b in self.equipment.buses:
            v = complex(sol.node_voltages[0, sol.circuit.nodes.index(b)])
            volts[b] = v * _rot(self.zones.offset("+", b))
        cur: dict[str, complex] = {}
        theta: dict[str, float] = {}
        for d in self._nets["1"].devices:
            i = self._fund.currents[d.source.lower()] * _rot(self.zones.offset("+", d.bus))
            cur[d.item.name] = i
            theta[d.item.name] = math.degrees(cmath.phase(i))
        return FundamentalResults(
            MappingProxyType(volts),
            MappingProxyType(cur),
            MappingProxyType(theta),
            self._fund.iterations,
            self._fund.mismatch,
        )

    # ------------------------------------------------------------------ studies
    def check_voltage(self, bus: str, bus_kv: float | None = None) -> VoltageCheck:
        """IEEE Std 519-2014 Table 1 check of a bus voltage; kV from the equipment unless
        given."""
        sp = self.bus_voltage(bus)
        kv = self.bus_kv(bus) if bus_kv is None else bus_kv
        return check_voltage(sp.freqs_hz, sp.rms, self.f1, kv)

    def check_current(
        self,
        name: str,
        i_l: float,
        i_sc: float,
        end: str = "bus",
        bus_kv: float | None = None,
        edition: int = 2014,
    ) -> CurrentCheck:
        """IEEE Std 519 Tables 2–4 check of an item's line current (e.g. the supply at the
        PCC) against the demand current ``i_l`` and the short-circuit current ``i_sc``
        (A RMS); kV from the equipment unless given."""
        it = self.equipment.item(name)
        e, bus = self._end(it, end)
        sp = self.branch_current(
            name, e, harmonics_only=(it.kind == "motor" and "kw" not in it.values)
        )
        for label, v in (("i_l", i_l), ("i_sc", i_sc)):
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError("argument", None, label, v, "expected a current > 0 A")
        kv = self.zones.kv(bus) if bus_kv is None else bus_kv
        return check_current(sp.freqs_hz, sp.rms, self.f1, i_l, i_sc / i_l, kv, edition)

    def capacitor_duty(self, name: str) -> CapacitorDuty:
        """IEEE Std 18 duty of one capacitor unit (phase leg) of a capacitor or filter
        item, against its own rating (kvar/3 of the in-service steps at kv/√3 for a star,
        at kv for a delta)."""
        it = self.equipment.item(name)
        if it.kind not in ("capacitor", "filter"):
            raise InputError(
                "argument",
                None,
                "item",
                name,
                f"{it.name!r} is a {it.kind}; expected a capacitor or filter",
            )
        kvar = capacitor_in_service(it) if it.kind == "capacitor" else float(it["kvar"])
        if kvar <= 0:
            raise InputError(
                "equipment", it.row, "steps_on", it.get("steps_on"), "no steps in service"
            )
        seq = np.array([self._net_of(int(h)) for h in self.orders])
        zero = seq == "0"
        i_line = np.abs(self.branch_current(name).phasors)
        if it.kind == "capacitor":
            v_ln = np.abs(self.bus_voltage(it.bus).phasors)
        else:
            v_ln = np.abs(self._element_voltage(it))
        conn = it.connection
        if conn == "YN":
            v_unit, i_unit, rated_v = v_ln, i_line, it["kv"] * 1e3 / math.sqrt(3)
        elif conn == "Y":
            v_unit = np.where(zero, 0.0, v_ln)
            i_unit, rated_v = i_line, it["kv"] * 1e3 / math.sqrt(3)
        else:
            v_unit = np.where(zero, 0.0, math.sqrt(3) * v_ln)
            i_unit, rated_v = i_line / math.sqrt(3), it["kv"] * 1e3
        f = self.freqs_hz
        return capacitor_duty(f, v_unit / math.sqrt(2), i_unit / math.sqrt(2), kvar / 3, rated_v)

    def _element_voltage(self, it: Item) -> np.ndarray:
        """Voltage of a filter's capacitor (star equivalent) per order, magnitude basis."""
        out = np.zeros(self.orders.size, dtype=complex)
        for s, sol in self._solutions.items():
            slots = self._slots(s)
            elem = self._nets[s].cap_voltage.get(it.name.lower())
            if sol is None or slots is None or elem is None:
                continue
            pos, rows = slots
            out[pos] = sol.element_voltages[rows, self._elem[s][elem.lower()]]
        return out

    def impedance_scan(
        self, bus: str, freqs_hz: Any, sequence: str = "+"
    ) -> tuple[np.ndarray, np.ndarray]:
        """Driving-point impedance (Ω, line-to-neutral) of ``bus`` in a sequence network,
        converters open, supplies as their impedance."""
        circuit, node = _sequence_circuit(
            self._nets, self.equipment, bus, sequence, self._core_opts
        )
        return _scan(circuit, node, freqs_hz)

    def resonances(
        self,
        bus: str,
        f_start: float | None = None,
        f_stop: float | None = None,
        sequence: str = "+",
        points: int = 400,
    ) -> list[Resonance]:
        """Parallel and series resonances seen at ``bus`` in a sequence network, between
        ``f_start`` (default the fundamental) and ``f_stop`` (default max_order × f₁)."""
        circuit, node = _sequence_circuit(
            self._nets, self.equipment, bus, sequence, self._core_opts
        )
        return _resonances(circuit, node, self.options, f_start, f_stop, points)

    def __repr__(self) -> str:
        return (
            f"HarmonicStudy({len(self.equipment.items)} items, {len(self.equipment.buses)} buses, "
            f"orders {self.orders.tolist()})"
        )


def harmonic_study(equipment: Any, spectra: Any = None, options: Any = None) -> HarmonicStudy:
    """Run a balanced three-phase harmonic study from an equipment table.

    Parameters
    ----------
    equipment : 2-D list (header row first) or :class:`Equipment`
        One row per item (supply, transformer, cable, capacitor, filter, motor, load,
        converter); see docs/THREE_PHASE.md.
    spectra : 2-D list, optional
        ``spectrum | order | pct | phase_deg``; converters without a spectrum use the ideal
        k·p ± 1 spectrum with I₁/h.
    options : 2-D list ``key | value``, mapping or :class:`PowerOptions`
        ``fundamental_hz`` (required), ``max_order`` (default 50).

    Returns
    -------
    HarmonicStudy
    """
    opts = read_power_options(options)
    eq = equipment if isinstance(equipment, Equipment) else read_equipment(equipment)
    sp = spectra if isinstance(spectra, Spectra) else read_spectra(spectra, opts.max_order)
    return HarmonicStudy(eq, sp, opts)


def _sequence_circuit(
    nets: Mapping[str, Network],
    eq: Equipment,
    bus: str,
    sequence: str,
    core_opts: list[list[Any]],
) -> tuple[Circuit, str]:
    s = parse_sequence(sequence)
    if s == "1":
        raise InputError(
            "argument", None, "sequence", sequence, "scans use the harmonic networks: +, - or 0"
        )
    b = eq.bus(bus)
    net = nets[s]
    if not any(b in (r[2], r[3], r[5]) for r in net.parts):
        raise InputError(
            "argument",
            None,
            "bus",
            bus,
            "this bus is not in the zero-sequence network (no converter with connection YN "
            "reaches it, so no zero-sequence current flows there)",
        )
    return Circuit.from_tables(net.parts_table(), None, core_opts), b


def _resonances(
    circuit: Circuit,
    node: str,
    options: PowerOptions,
    f_start: float | None,
    f_stop: float | None,
    points: int,
) -> list[Resonance]:
    lo = options.fundamental_hz if f_start is None else f_start
    hi = options.max_order * options.fundamental_hz if f_stop is None else f_stop
    return find_resonances(
        circuit, node, lo, hi, points=points, fundamental_hz=options.fundamental_hz
    )


def _networks(
    equipment: Any, options: Any, sequences: tuple[str, ...]
) -> tuple[Equipment, PowerOptions, dict[str, Network]]:
    opts = read_power_options(options)
    eq = equipment if isinstance(equipment, Equipment) else read_equipment(equipment)
    zones = find_zones(eq)
    return eq, opts, {s: build_network(eq, zones, opts, s) for s in sequences}


def sequence_impedance(
    equipment: Any, bus: str, freqs_hz: Any, sequence: str = "+", options: Any = None
) -> tuple[np.ndarray, np.ndarray]:
    """Driving-point impedance of ``bus`` in a sequence network, straight from the
    equipment table (no fundamental solve)."""
    seq = parse_sequence(sequence)
    eq, opts, nets = _networks(equipment, options, (seq,))
    circuit, node = _sequence_circuit(nets, eq, bus, seq, core_options(opts))
    return _scan(circuit, node, freqs_hz)


def sequence_resonances(
    equipment: Any,
    bus: str,
    f_start: float | None = None,
    f_stop: float | None = None,
    sequence: str = "+",
    points: int = 400,
    options: Any = None,
) -> list[Resonance]:
    """Resonances seen at ``bus`` in a sequence network, straight from the equipment
    table (defaults: the fundamental to max_order × f₁)."""
    seq = parse_sequence(sequence)
    eq, opts, nets = _networks(equipment, options, (seq,))
    circuit, node = _sequence_circuit(nets, eq, bus, seq, core_options(opts))
    return _resonances(circuit, node, opts, f_start, f_stop, points)


def expand_network(equipment: Any, sequence: Any, options: Any = None) -> list[list[Any]]:
    """The expanded parts table of one network (``+``, ``-``, ``0`` or ``fundamental``),
    header row first, without solving anything."""
    seq = parse_sequence(sequence)
    _eq, _opts, nets = _networks(equipment, options, (seq,))
    return nets[seq].parts_table()
