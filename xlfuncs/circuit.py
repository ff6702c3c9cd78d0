"""The validated, immutable circuit: parts, nodes, sources and their tones.

Build one with :meth:`Circuit.from_tables` (2-D lists as a worksheet delivers them) or
:meth:`Circuit.from_records` (already-parsed rows). Construction checks every
cross-reference (control parts, coupled inductors, control nodes) and names the row and
column of anything that does not resolve.

Names of nodes, parts and sources are case-insensitive: every reference to a node is
rewritten to the spelling met first (parts in table order, then sources), so ``Bus`` and
``bus`` are one node shown as ``Bus``; references to parts take the part's own spelling.

Looking a name up (:meth:`Circuit.find`): a name that is both a part (or source) and a
node is refused as ambiguous; write ``part:NAME``, ``source:NAME`` or ``node:NAME`` to
choose. An unknown name gets the closest existing name and the list of what exists.
"""

from __future__ import annotations

import difflib
import re
from collections.abc import Sequence
from dataclasses import dataclass, replace
from functools import cached_property
from typing import Any

import numpy as np

from .errors import InputError, TableError, UnknownNameError
from .tables import (
    NoiseRow,
    Options,
    PartRow,
    SourceRow,
    name_key,
    read_options,
    read_parts,
    read_source_table,
)

__all__ = ["Circuit", "Source", "closest_name", "group_frequencies", "merge_frequencies"]

# relative tolerance under which two tone frequencies are the same frequency
FREQ_RTOL = 1e-9
_SMALL = 64  # below this many frequencies, grouping runs in plain Python
_PREFIXED = re.compile(r"\s*(part|source|node)\s*:\s*(.+?)\s*$", re.IGNORECASE)
_LIST_CHARS = 48  # characters of names listed per kind in a "did you mean" message


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
    if isinstance(freqs, (list, tuple)) and len(freqs) <= _SMALL:
        return _group_small([float(f) for f in freqs])
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


def _group_small(vals: list[float]) -> tuple[np.ndarray, np.ndarray]:
    """:func:`group_frequencies` for a short list, without numpy's per-call overhead."""
    order = sorted(range(len(vals)), key=vals.__getitem__)
    uniq: list[float] = []
    group = [0] * len(vals)
    prev = 0.0
    for i in order:
        v = vals[i]
        if not uniq or abs(v - prev) > FREQ_RTOL * max(abs(v), abs(prev), 1e-300):
            uniq.append(v)
        group[i] = len(uniq) - 1
        prev = v
    return np.array(uniq, dtype=float), np.array(group, dtype=int)


def merge_frequencies(freqs: Sequence[float]) -> np.ndarray:
    """Sorted unique frequencies; values within a relative 1e-9 count as one."""
    return group_frequencies(freqs)[0]


def closest_name(name: str, candidates: Sequence[str]) -> str | None:
    """The candidate most like ``name`` (difflib ratio ≥ 0.6, letter case ignored)."""
    keys = {name_key(c): c for c in candidates}
    hit = difflib.get_close_matches(name_key(name), list(keys), n=1, cutoff=0.6)
    return keys[hit[0]] if hit else None


def _listing(what: str, names: Sequence[str]) -> str:
    shown: list[str] = []
    used = 0
    for n in names:
        if shown and used + len(n) > _LIST_CHARS:
            break
        shown.append(n)
        used += len(n) + 2
    more = f" … (+{len(names) - len(shown)} more)" if len(shown) < len(names) else ""
    return f"{what}: {', '.join(shown)}{more}"


@dataclass(frozen=True)
class Circuit:
    """A linear network ready to solve.

    Attributes
    ----------
    parts : tuple of PartRow
        Node and part references spelled as in ``nodes`` and as the parts' own names.
    sources : tuple of Source
    nodes : tuple of str
        Every node but the reference, in order of first appearance, first spelling.
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
        spell = _Spelling(opts.ground)
        # terminals first: they define the nodes (first spelling kept)
        for p in parts:
            for n in (p.from_node, p.to_node, p.sec_from, p.sec_to):
                if n is not None:
                    spell.add(n)
        for s in sources:
            spell.add(s.from_node)
            spell.add(s.to_node)
        nodes = spell.nodes()
        if not nodes:
            raise TableError("parts", f"every part connects only to the reference {opts.ground!r}")
        part_by_key = {name_key(p.name): p for p in parts}
        srcs = _group_sources(sources, spell, part_by_key)
        src_by_key = {name_key(s.name): s for s in srcs}
        parts_out = tuple(_resolve_part(p, spell, part_by_key, src_by_key, opts) for p in parts)
        _check_couplings(parts_out)
        noise_rows = _check_noise(noise, spell, part_by_key, src_by_key)
        freqs = merge_frequencies([f for s in srcs for f, _ in s.tones])
        freqs.setflags(write=False)
        return cls(
            parts=parts_out,
            sources=srcs,
            nodes=nodes,
            ground=opts.ground,
            freqs_hz=freqs,
            options=opts,
            noise_sources=noise_rows,
        )

    # ------------------------------------------------------------------------ lookups
    @cached_property
    def _names(self) -> dict[str, dict[str, Any]]:
        """Per kind, name key → object (nodes: key → display name, reference included)."""
        nodes = {name_key(n): n for n in self.nodes}
        nodes[name_key(self.ground)] = self.ground
        return {
            "part": {name_key(p.name): p for p in self.parts},
            "source": {name_key(s.name): s for s in self.sources},
            "node": nodes,
        }

    def part(self, name: str) -> PartRow:
        """The part called ``name`` (case-insensitive); KeyError when there is none."""
        return self._names["part"][name_key(name.strip())]

    def find(self, name: str, column: str = "target") -> tuple[str, Any]:
        """Resolve a target name: ``("part", PartRow)``, ``("source", Source)`` or
        ``("node", str)`` (the node's display name; the reference included).

        Letter case is ignored. A name that is both a part or source and a node is
        refused; ``part:NAME``, ``source:NAME`` or ``node:NAME`` chooses. Raises
        :class:`~xlfuncs.errors.UnknownNameError` (also a ``KeyError``) naming the
        closest match and what exists, and :class:`~xlfuncs.errors.InputError` for an
        ambiguous name; ``column`` is the argument named in those messages.
        """
        text = str(name).strip()
        key = name_key(text)
        names = self._names
        hits = [
            (kind, names[kind][key]) for kind in ("part", "source", "node") if key in names[kind]
        ]
        if len(hits) == 1:
            return hits[0]
        if len(hits) > 1:
            (k1, o1), (k2, _o2) = hits[0], hits[1]
            row = f" ({k1}s row {o1.row})" if k1 != "node" else ""
            raise InputError(
                "argument",
                None,
                column,
                name,
                f"{text!r} names both a {k1}{row} and a {k2}; write '{k1}:{text}' or "
                f"'{k2}:{text}' to choose",
            )
        m = _PREFIXED.match(text)
        if m:
            kind, rest = m.group(1).lower(), m.group(2)
            obj = names[kind].get(name_key(rest))
            if obj is not None:
                return kind, obj
            raise self._unknown(rest, column, kinds=(kind,), original=name)
        raise self._unknown(text, column)

    def node_name(self, name: str, column: str = "node") -> str:
        """Display name of the node called ``name`` (the reference included); a
        ``node:`` prefix is accepted. Parts and sources are not looked at, so a name that
        is both a part and a node is not ambiguous here."""
        text = str(name).strip()
        nodes = self._names["node"]
        hit = nodes.get(name_key(text))
        if hit is None:
            m = _PREFIXED.match(text)
            if m and m.group(1).lower() == "node":
                hit = nodes.get(name_key(m.group(2)))
        if hit is None:
            raise self._unknown(text, column, kinds=("node",), original=name)
        return str(hit)

    def node_index(self, name: str, column: str = "node") -> int:
        """Index in ``nodes`` (and in the solver's unknowns) of a node other than the
        reference."""
        n = self.node_name(name, column)
        if n == self.ground:
            raise InputError(
                "argument",
                None,
                column,
                name,
                f"expected a node other than the reference {self.ground!r}",
            )
        return self._node_pos[n]

    @cached_property
    def _node_pos(self) -> dict[str, int]:
        return {n: i for i, n in enumerate(self.nodes)}

    def _unknown(
        self,
        text: str,
        column: str,
        kinds: Sequence[str] = ("part", "source", "node"),
        original: Any = None,
    ) -> UnknownNameError:
        listing = {
            "node": [*self.nodes, self.ground],
            "part": [p.name for p in self.parts],
            "source": [s.name for s in self.sources],
        }
        what = "part, source or node" if len(kinds) == 3 else " or ".join(kinds)
        parts_msg = [f"no {what} of that name"]
        for k in ("node", "part", "source"):
            if k in kinds and listing[k]:
                parts_msg.append(_listing(f"{k}s", listing[k]))
        pool = [n for k in kinds for n in listing[k]]
        near = closest_name(text, pool)
        if near is not None:
            parts_msg.append(f"did you mean {near!r}?")
        return UnknownNameError(
            "argument", None, column, text if original is None else original, "; ".join(parts_msg)
        )

    def __hash__(self) -> int:  # numpy arrays are unhashable; identity is enough
        return id(self)


# ---------------------------------------------------------------------------------- building
class _Spelling:
    """Node names by key, first spelling kept; the reference keeps the options' spelling."""

    def __init__(self, ground: str) -> None:
        self.ground = ground
        self.gkey = name_key(ground)
        self.display: dict[str, str] = {self.gkey: ground}

    def add(self, name: str) -> None:
        self.display.setdefault(name.casefold(), name)  # name_key, inlined (hot path)

    def get(self, name: str | None) -> str | None:
        """Display spelling of a node that exists, else None."""
        if name is None:
            return None
        return self.display.get(name.casefold())

    def nodes(self) -> tuple[str, ...]:
        return tuple(v for k, v in self.display.items() if k != self.gkey)


def _group_sources(
    sources: Sequence[SourceRow], spell: _Spelling, part_by_key: dict[str, PartRow]
) -> tuple[Source, ...]:
    grouped: dict[str, list[SourceRow]] = {}
    for s in sources:
        grouped.setdefault(name_key(s.name), []).append(s)
    out: list[Source] = []
    for key, rows in grouped.items():
        r0 = rows[0]
        other = part_by_key.get(key)
        if other is not None:  # parts and sources share one namespace
            raise InputError(
                "sources",
                r0.row,
                "name",
                r0.name,
                f"name already used by a part (parts row {other.row})",
            )
        if len(rows) == 1:
            tones: tuple[tuple[float, complex], ...] = ((r0.freq_hz, r0.phasor),)
        else:  # tones of one source at one frequency add as phasors
            uniq, group = group_frequencies([r.freq_hz for r in rows])
            sums = [0j] * uniq.size
            for g, r in zip(group.tolist(), rows, strict=True):
                sums[g] += r.phasor
            tones = tuple(zip(uniq.tolist(), sums, strict=True))
        out.append(
            Source(
                name=r0.name,
                kind=r0.kind,
                from_node=spell.get(r0.from_node) or r0.from_node,
                to_node=spell.get(r0.to_node) or r0.to_node,
                row=r0.row,
                tones=tones,
            )
        )
    return tuple(out)


def _resolve_part(
    p: PartRow,
    spell: _Spelling,
    part_by_key: dict[str, PartRow],
    src_by_key: dict[str, Source],
    opts: Options,
) -> PartRow:
    """``p`` with every reference resolved and respelled; errors name its row."""
    changes: dict[str, Any] = {}
    display = spell.display
    for field, end in (("from_node", p.from_node), ("to_node", p.to_node)):
        if end is not None:
            shown = display[end.casefold()]
            if shown != end:
                changes[field] = shown
    if p.kind == "XFMR":
        for field in ("sec_from", "sec_to"):
            winding = getattr(p, field)
            shown_w = spell.get(winding)
            if shown_w != winding:
                changes[field] = shown_w
    if p.kind in ("VCVS", "VCCS"):
        for field, col in (("ctrl_from", "ctrl_from"), ("ctrl_to", "ctrl_to")):
            n = getattr(p, field)
            d = spell.get(n)
            if d is None:
                raise InputError(
                    "parts",
                    p.row,
                    col,
                    n,
                    "no part or source connects to this node (check the spelling)",
                )
            if d != n:
                changes[field] = d
    if p.kind in ("CCVS", "CCCS"):
        key = name_key(p.ctrl_part or "")
        target = part_by_key.get(key)
        src = src_by_key.get(key)
        if target is None and src is None:
            raise InputError(
                "parts", p.row, "ctrl_part", p.ctrl_part, "no part or source of that name"
            )
        if target is not None and target.kind == "COUPLING":
            raise InputError(
                "parts",
                p.row,
                "ctrl_part",
                p.ctrl_part,
                "a coupling carries no current; name a two-terminal part",
            )
        if target is not None and target.row == p.row:
            raise InputError(
                "parts", p.row, "ctrl_part", p.ctrl_part, "a source cannot control itself"
            )
        own = target.name if target is not None else src.name  # type: ignore[union-attr]
        if own != p.ctrl_part:
            changes["ctrl_part"] = own
    if p.kind == "COUPLING":
        for field in ("coil_a", "coil_b"):
            coil = getattr(p, field)
            target = part_by_key.get(name_key(coil or ""))
            if target is None or target.kind != "L":
                raise InputError(
                    "parts", p.row, field, coil, "expected the name of an inductor (kind L)"
                )
            if target.name != coil:
                changes[field] = target.name
    if p.r_exponent and opts.fundamental_hz is None:
        raise InputError(
            "parts",
            p.row,
            "r_exponent",
            p.r_exponent,
            "a resistance law R(f) = R·(f/f₁)^x needs f₁: give fundamental_hz in the "
            "options table",
        )
    return replace(p, **changes) if changes else p


def _check_couplings(parts: Sequence[PartRow]) -> None:
    coupled: dict[tuple[str, str], int] = {}
    for p in parts:
        if p.kind != "COUPLING":
            continue
        a, b = name_key(p.coil_a or ""), name_key(p.coil_b or "")
        pair = (min(a, b), max(a, b))  # order-free pair of inductor names
        if pair in coupled:
            raise InputError(
                "parts",
                p.row,
                "coil_b",
                p.coil_b,
                f"these inductors are already coupled in row {coupled[pair]}",
            )
        coupled[pair] = p.row


def _check_noise(
    noise: Sequence[NoiseRow],
    spell: _Spelling,
    part_by_key: dict[str, PartRow],
    src_by_key: dict[str, Source],
) -> tuple[NoiseRow, ...]:
    """Noise rows with their node names resolved; names share the namespace of parts and
    sources, and both nodes must be nodes of the network (noise rows add no node)."""
    out: list[NoiseRow] = []
    seen: dict[str, int] = {}
    for nz in noise:
        key = name_key(nz.name)
        if key in part_by_key:
            raise InputError(
                "sources",
                nz.row,
                "name",
                nz.name,
                f"name already used by a part (parts row {part_by_key[key].row})",
            )
        if key in src_by_key:
            raise InputError(
                "sources",
                nz.row,
                "name",
                nz.name,
                f"name already used by a source (sources row {src_by_key[key].row})",
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
            resolved = spell.get(n)
            if resolved is None:
                raise InputError(
                    "sources",
                    nz.row,
                    col,
                    n,
                    "a noise source connects to nodes of the network; no part or tone "
                    "source touches this node (check the spelling)",
                )
            ends.append(resolved)
        if (ends[0], ends[1]) != (nz.from_node, nz.to_node):
            nz = replace(nz, from_node=ends[0], to_node=ends[1])
        out.append(nz)
    return tuple(out)
