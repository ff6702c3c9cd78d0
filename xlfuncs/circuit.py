"""The validated, immutable circuit: parts, nodes, sources and their tones.

Build one with :meth:`Circuit.from_tables` (2-D lists as a worksheet delivers them) or
:meth:`Circuit.from_records` (already-parsed rows). Construction checks every
cross-reference (control parts, coupled inductors, control nodes) and names the row and
column of anything that does not resolve.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from .errors import InputError, TableError
from .tables import (
    NoiseRow,
    Options,
    PartRow,
    SourceRow,
    read_options,
    read_parts,
    read_source_table,
)

__all__ = ["Circuit", "Source", "group_frequencies", "merge_frequencies"]

# relative tolerance under which two tone frequencies are the same frequency
FREQ_RTOL = 1e-9


@dataclass(frozen=True)
class Source:
    """An independent source with one or more tones (frequency, complex peak phasor)."""

    name: str
    kind: str  # "V" or "I"
    from_node: str
    to_node: str
    row: int  # first row in the sources table
    tones: tuple[tuple[float, complex], ...]


def group_frequencies(freqs: Sequence[float]) -> tuple[np.ndarray, np.ndarray]:
    """``(unique, group)``: sorted distinct frequencies, and for each input the index of
    its frequency in ``unique``. Neighbours (in sorted order) within a relative 1e-9 are
    one frequency; the group takes its lowest member's value."""
    arr = np.asarray(freqs, dtype=float).reshape(-1)
    if arr.size == 0:
        return arr, np.zeros(0, dtype=int)
    order = np.argsort(arr, kind="stable")
    s = arr[order]
    scale = np.maximum(np.maximum(np.abs(s[1:]), np.abs(s[:-1])), 1e-300)
    starts = np.concatenate([[True], np.abs(np.diff(s)) > FREQ_RTOL * scale])
    gid_sorted = np.cumsum(starts) - 1
    group = np.empty(arr.size, dtype=int)
    group[order] = gid_sorted
    return s[starts], group


def merge_frequencies(freqs: Sequence[float]) -> np.ndarray:
    """Sorted unique frequencies; values within a relative 1e-9 count as one."""
    return group_frequencies(freqs)[0]


@dataclass(frozen=True)
class Circuit:
    """A linear network ready to solve.

    Attributes
    ----------
    parts : tuple of PartRow
    sources : tuple of Source
    nodes : tuple of str
        Every node but the reference, in order of first appearance.
    ground : str
        The reference node's name as the options give it.
    freqs_hz : numpy.ndarray
        Every frequency at which some source has a tone, ascending (DC = 0 first).
    options : Options
    noise_sources : tuple of NoiseRow
        Noise rows of the sources table (``density`` filled), node names as in
        ``nodes``; the phasor solve ignores them.
    """

    parts: tuple[PartRow, ...]
    sources: tuple[Source, ...]
    nodes: tuple[str, ...]
    ground: str
    freqs_hz: np.ndarray
    options: Options
    noise_sources: tuple[NoiseRow, ...] = ()

    # ----------------------------------------------------------------------- builders
    @classmethod
    def from_tables(cls, parts: Any, sources: Any = None, options: Any = None) -> Circuit:
        """Parse worksheet-shaped tables (header row first) and validate the network.

        ``sources`` may be None for impedance scans, which need no sources.
        """
        opts = options if isinstance(options, Options) else read_options(options)
        prows = read_parts(parts)
        srows, nrows = read_source_table(sources, opts) if sources is not None else ((), ())
        return cls.from_records(prows, srows, opts, noise=nrows)

    @classmethod
    def from_records(
        cls,
        parts: Sequence[PartRow],
        sources: Sequence[SourceRow] = (),
        options: Options | None = None,
        noise: Sequence[NoiseRow] = (),
    ) -> Circuit:
        opts = options or Options()
        gkey = opts.ground.lower()

        def node(n: str | None) -> str | None:
            if n is None:
                return None
            return opts.ground if n.lower() == gkey else n

        parts = tuple(_replace_nodes(p, node) for p in parts)
        # group tones into sources
        grouped: dict[str, list[SourceRow]] = {}
        for s in sources:
            grouped.setdefault(s.name.lower(), []).append(s)
        srcs: list[Source] = []
        for rows in grouped.values():
            r0 = rows[0]
            # tones of one source at one frequency add as phasors
            uniq, group = group_frequencies([r.freq_hz for r in rows])
            sums = np.zeros(uniq.size, dtype=complex)
            np.add.at(sums, group, [r.phasor for r in rows])
            srcs.append(
                Source(
                    name=r0.name,
                    kind=r0.kind,
                    from_node=node(r0.from_node) or "",
                    to_node=node(r0.to_node) or "",
                    row=r0.row,
                    tones=tuple(zip(uniq.tolist(), sums.tolist(), strict=True)),
                )
            )
        # names: parts and sources share one namespace
        part_by_name = {p.name.lower(): p for p in parts}
        for src in srcs:
            if src.name.lower() in part_by_name:
                other = part_by_name[src.name.lower()]
                raise InputError(
                    "sources",
                    src.row,
                    "name",
                    src.name,
                    f"name already used by a part (parts row {other.row})",
                )
        # nodes in order of first appearance (terminals only)
        seen: dict[str, None] = {}
        for p in parts:
            for n in (p.from_node, p.to_node, p.sec_from, p.sec_to):
                if n is not None and n != opts.ground:
                    seen.setdefault(n, None)
        for src in srcs:
            for n in (src.from_node, src.to_node):
                if n != opts.ground:
                    seen.setdefault(n, None)
        nodes = tuple(seen)
        if not nodes:
            raise TableError("parts", f"every part connects only to the reference {opts.ground!r}")
        node_set = set(nodes) | {opts.ground}
        src_by_name = {src.name.lower(): src for src in srcs}
        coupled: dict[tuple[str, str], int] = {}
        for p in parts:
            if p.kind in ("VCVS", "VCCS"):
                for col, n in (("ctrl_from", p.ctrl_from), ("ctrl_to", p.ctrl_to)):
                    if n not in node_set:
                        raise InputError(
                            "parts",
                            p.row,
                            col,
                            n,
                            "no part or source connects to this node (check the spelling)",
                        )
            if p.kind in ("CCVS", "CCCS"):
                key = (p.ctrl_part or "").lower()
                target = part_by_name.get(key)
                if target is None and key not in src_by_name:
                    raise InputError(
                        "parts",
                        p.row,
                        "ctrl_part",
                        p.ctrl_part,
                        "no part or source of that name",
                    )
                if target is not None and target.kind == "COUPLING":
                    raise InputError(
                        "parts",
                        p.row,
                        "ctrl_part",
                        p.ctrl_part,
                        "a coupling carries no current; name a two-terminal part",
                    )
                if target is p:
                    raise InputError(
                        "parts", p.row, "ctrl_part", p.ctrl_part, "a source cannot control itself"
                    )
            if p.kind == "COUPLING":
                pair: list[str] = []
                for col, coil in (("coil_a", p.coil_a), ("coil_b", p.coil_b)):
                    target = part_by_name.get((coil or "").lower())
                    if target is None or target.kind != "L":
                        raise InputError(
                            "parts", p.row, col, coil, "expected the name of an inductor (kind L)"
                        )
                    pair.append(target.name)
                key2 = (min(pair), max(pair))  # order-free pair of inductor names
                if key2 in coupled:
                    raise InputError(
                        "parts",
                        p.row,
                        "coil_b",
                        p.coil_b,
                        f"these inductors are already coupled in row {coupled[key2]}",
                    )
                coupled[key2] = p.row
        noise_rows = _check_noise(noise, node, node_set, part_by_name, src_by_name)
        freqs = merge_frequencies([f for s in srcs for f, _ in s.tones])
        freqs.setflags(write=False)
        return cls(
            parts=parts,
            sources=tuple(srcs),
            nodes=nodes,
            ground=opts.ground,
            freqs_hz=freqs,
            options=opts,
            noise_sources=noise_rows,
        )

    # ------------------------------------------------------------------------ lookups
    def part(self, name: str) -> PartRow:
        """The part called ``name`` (case-insensitive)."""
        key = name.lower()
        for p in self.parts:
            if p.name.lower() == key:
                return p
        raise KeyError(name)

    def find(self, name: str) -> tuple[str, Any]:
        """Resolve a target name: ``("part", PartRow)``, ``("source", Source)`` or
        ``("node", str)``. Raises KeyError when nothing has that name."""
        key = name.strip().lower()
        for p in self.parts:
            if p.name.lower() == key:
                return "part", p
        for s in self.sources:
            if s.name.lower() == key:
                return "source", s
        if key == self.ground.lower():
            return "node", self.ground
        for n in self.nodes:
            if n.lower() == key:
                return "node", n
        raise KeyError(name)

    def __hash__(self) -> int:  # numpy arrays are unhashable; identity is enough
        return id(self)


def _check_noise(
    noise: Sequence[NoiseRow],
    node: Any,
    node_set: set[str],
    part_by_name: dict[str, PartRow],
    src_by_name: dict[str, Source],
) -> tuple[NoiseRow, ...]:
    """Noise rows with their node names resolved; names share the namespace of parts and
    sources, and both nodes must be nodes of the network (noise rows add no node)."""
    out: list[NoiseRow] = []
    seen: dict[str, int] = {}
    for nz in noise:
        key = nz.name.lower()
        if key in part_by_name:
            raise InputError(
                "sources",
                nz.row,
                "name",
                nz.name,
                f"name already used by a part (parts row {part_by_name[key].row})",
            )
        if key in src_by_name:
            raise InputError(
                "sources",
                nz.row,
                "name",
                nz.name,
                f"name already used by a source (sources row {src_by_name[key].row})",
            )
        if key in seen:
            raise InputError(
                "sources",
                nz.row,
                "name",
                nz.name,
                f"noise source {nz.name!r} already has a row ({seen[key]})",
            )
        seen[key] = nz.row
        ends = []
        for col, n in (("from", nz.from_node), ("to", nz.to_node)):
            resolved = node(n)
            if resolved not in node_set:
                raise InputError(
                    "sources",
                    nz.row,
                    col,
                    n,
                    "a noise source connects to nodes of the network; no part or tone "
                    "source touches this node (check the spelling)",
                )
            ends.append(resolved)
        out.append(replace(nz, from_node=ends[0], to_node=ends[1]))
    return tuple(out)


def _replace_nodes(p: PartRow, node: Any) -> PartRow:
    return replace(
        p,
        from_node=node(p.from_node),
        to_node=node(p.to_node),
        ctrl_from=node(p.ctrl_from),
        ctrl_to=node(p.ctrl_to),
        sec_from=node(p.sec_from),
        sec_to=node(p.sec_to),
    )
