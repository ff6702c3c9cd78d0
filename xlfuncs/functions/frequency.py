"""Frequency-domain worksheet functions: resonances seen at a node."""

from __future__ import annotations

from typing import Any

from .arguments import blank, freeze, name_arg, num_arg, points_arg
from .registry import sheet_function


@sheet_function(
    "Parallel (|Z| maximum) and series (|Z| minimum) resonances seen at a node (spills).",
    "Header kind | freq_hz | order | z_ohm; one row per resonance, ascending frequency, "
    "each refined to 1e-7 in frequency. order = f / fundamental_hz (empty without one). "
    "Sources are zeroed as in CKT_SCAN.",
)
def CKT_RESONANCES(parts, node, f_start, f_stop, points=None, options=None, sources=None):
    from ..studies.resonance import find_resonances

    n = points_arg(points) or 400
    res = find_resonances(
        freeze(parts),
        name_arg(node, "node"),
        num_arg(f_start, "f_start"),
        num_arg(f_stop, "f_stop"),
        points=n,
        options=freeze(options),
        sources=freeze(sources),
    )
    out: list[list[Any]] = [["kind", "freq_hz", "order", "z_ohm"]]
    out += [[r.kind, r.freq_hz, blank(r.order), r.z_ohm] for r in res]
    if not res:
        out.append(["none found", "", "", ""])
    return out
