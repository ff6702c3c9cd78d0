"""Study results as rectangular tables (header row first), for worksheets and the command
line. Cells are floats or short strings, never None and never non-finite."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..solution import Spectrum
from .study import HarmonicStudy

__all__ = [
    "BRANCH_HEADER",
    "BUS_HEADER",
    "branch_table",
    "bus_table",
    "fundamental_table",
    "neutral_table",
    "thd_basis",
]

BUS_HEADER = ["order", "freq_hz", "sequence", "v_rms", "v_pct", "angle_deg"]
BRANCH_HEADER = ["order", "freq_hz", "sequence", "i_rms", "i_pct", "angle_deg"]

Table = list[list[Any]]


def _cell(x: float) -> Any:
    return float(x) if math.isfinite(x) else ""


def _rows(st: HarmonicStudy, sp: Spectrum, ref_rms: float, header: list[str]) -> Table:
    orders = np.rint(sp.freqs_hz / st.f1).astype(int)
    out: Table = [list(header)]
    rms = sp.rms
    ang = sp.phase_deg
    for h, f, r, a in zip(orders, sp.freqs_hz, rms, ang, strict=True):
        pct = 100 * r / ref_rms if ref_rms > 0 else math.nan
        angle = float(a) if r > 0 else 0.0
        out.append([float(h), float(f), st.sequence(int(h)), float(r), _cell(pct), angle])
    harm = (orders >= 2) & (orders <= st.options.max_order)
    thd = 100 * math.sqrt(float((rms[harm] ** 2).sum())) / ref_rms if ref_rms > 0 else math.nan
    out.append(["total", "", "", float(sp.rms_total), _cell(thd), ""])
    return out


def bus_table(st: HarmonicStudy, bus: str) -> Table:
    """``order | freq_hz | sequence | v_rms | v_pct | angle_deg`` (line-to-neutral RMS,
    % of the fundamental, degrees against the supply EMF of phase a), then ``total``:
    total RMS in ``v_rms`` and THD (%) in ``v_pct``."""
    sp = st.bus_voltage(bus)
    return _rows(st, sp, float(sp.rms[0]), BUS_HEADER)


def branch_table(st: HarmonicStudy, item: str, end: str = "bus") -> Table:
    """``order | freq_hz | sequence | i_rms | i_pct | angle_deg`` of an item's line current
    (from its ``end`` bus into it), then ``total`` (RMS, THD % of its fundamental).
    ``i_pct``/THD are empty where the item carries no fundamental current."""
    sp = st.branch_current(item, end)
    return _rows(st, sp, float(sp.rms[0]), BRANCH_HEADER)


def neutral_table(st: HarmonicStudy, item: str, end: str | None = None) -> Table:
    """The neutral current of a grounded star, same columns; ``i_pct`` is in % of the
    item's fundamental line current at that winding, the total row's ``i_pct`` the total
    RMS in that percentage."""
    e = st.neutral_end(item, end)
    sp = st.neutral_current(item, e)
    line = st.branch_current(item, e)
    ref = float(line.rms[0])
    out = _rows(st, sp, ref, BRANCH_HEADER)
    out[-1][4] = _cell(100 * float(sp.rms_total) / ref if ref > 0 else math.nan)
    return out


def fundamental_table(st: HarmonicStudy) -> Table:
    """``bus | kv_nominal | v_ln_rms | v_pu | angle_deg`` of the fundamental solve."""
    fr = st.fundamental
    out: Table = [["bus", "kv_nominal", "v_ln_rms", "v_pu", "angle_deg"]]
    for b, v in fr.bus_voltage.items():
        kv = st.bus_kv(b)
        rms = abs(v) / math.sqrt(2)
        out.append(
            [b, kv, rms, rms / (kv * 1e3 / math.sqrt(3)), math.degrees(math.atan2(v.imag, v.real))]
        )
    return out


def thd_basis(st: HarmonicStudy) -> str:
    return (
        f"THD: √(Σ_h=2..{st.options.max_order} X_h²) / X_1 over the orders studied "
        f"(integer harmonics of {st.f1:g} Hz; interharmonics not modelled)"
    )
