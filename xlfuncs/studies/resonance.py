"""Resonances seen at a node: parallel (|Z| maxima) and series (|Z| minima).

Method: a log-spaced scan finds the extrema of |Z| on a grid; the network's natural
frequencies add candidates a grid would miss (poles of Z(s) = generalised eigenvalues of
the MNA pencil (A0, A1); zeros = eigenvalues of the pencil bordered by the node's test
port). Every candidate is then refined by golden-section search on log f, all candidates
at once (one stacked solve per step), until its bracket is narrower than ``rtol``
(default 1e-7, far inside the 0.1 % a study needs). Only true local extrema are kept.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..api import _node_index
from ..circuit import Circuit
from ..errors import InputError
from ..solver import System, build_system

__all__ = ["Resonance", "find_resonances", "resonance_order_rule"]

_GOLD = (math.sqrt(5) - 1) / 2


@dataclass(frozen=True)
class Resonance:
    """One resonance: ``kind`` is ``"parallel"`` (|Z| maximum) or ``"series"`` (minimum)."""

    kind: str
    freq_hz: float
    order: float
    z_ohm: float


def resonance_order_rule(s_sc_mva: float, q_cap_mvar: float) -> float:
    """Rule of thumb h_r ≈ √(S_sc / Q_cap) for a bank on a bus of short-circuit power
    S_sc (common practice; assumes X/R large and the bank's own reactance dominant)."""
    if not (s_sc_mva > 0 and q_cap_mvar > 0):
        raise InputError("argument", None, "s_sc_mva", s_sc_mva, "expected positive MVA and Mvar")
    return math.sqrt(s_sc_mva / q_cap_mvar)


def _z(system: System, idx: int, f: np.ndarray) -> np.ndarray:
    b = np.zeros((f.size, system.n), dtype=complex)
    b[:, idx] = 1.0
    return system.solve(f, rhs=b)[:, idx]


def _pencil_seeds(system: System, idx: int, lo: float, hi: float) -> tuple[np.ndarray, np.ndarray]:
    """Natural frequencies (Hz) of poles and zeros of Z(s) at the node, within [lo, hi]."""
    if system.has_frequency_law:
        return np.array([]), np.array([])
    from scipy.linalg import eigvals

    n = system.n
    a0, a1 = system.pencil()
    # A(s) = A0 + s·A1 is singular where s is an eigenvalue of the pencil (A0, −A1)
    with np.errstate(all="ignore"):
        poles = eigvals(a0, -a1)
        # zeros of Z(s) = e'A(s)⁻¹e: the bordered matrix [[A, e], [e', 0]] is singular
        e = np.zeros((n, 1))
        e[idx] = 1.0
        b0 = np.block([[a0, e], [e.T, np.zeros((1, 1))]])
        b1 = np.block([[a1, np.zeros((n, 1))], [np.zeros((1, n + 1))]])
        zeros = eigvals(b0, -b1)

    def hz(ev: np.ndarray) -> np.ndarray:
        ev = ev[np.isfinite(ev) & (ev.imag > 0)]
        f = np.abs(ev) / (2 * np.pi)
        return f[(f >= lo) & (f <= hi)]

    return hz(poles), hz(zeros)


def find_resonances(
    parts: Any,
    node: str,
    f_start: float,
    f_stop: float,
    points: int = 400,
    fundamental_hz: float | None = None,
    options: Any = None,
    sources: Any = None,
    rtol: float = 1e-7,
) -> list[Resonance]:
    """Parallel and series resonances at ``node`` between ``f_start`` and ``f_stop``.

    Independent sources are zeroed (pass ``sources`` to keep a supply modelled as a
    source behind its impedance). ``order`` is f / fundamental (NaN without one).
    """
    circuit = parts if isinstance(parts, Circuit) else Circuit.from_tables(parts, sources, options)
    if not (np.isfinite(f_start) and f_start > 0):
        raise InputError("argument", None, "f_start", f_start, "expected a frequency > 0 Hz")
    if not (np.isfinite(f_stop) and f_stop > f_start):
        raise InputError("argument", None, "f_stop", f_stop, "expected a frequency > f_start")
    if not 8 <= points <= 100_000:
        raise InputError("argument", None, "points", points, "expected 8 … 100000 points")
    idx = _node_index(circuit, node, "node")
    system = build_system(circuit)
    f1 = fundamental_hz or circuit.options.fundamental_hz

    grid = np.geomspace(f_start, f_stop, points)
    mag = np.abs(_z(system, idx, grid))
    step = grid[1] / grid[0]
    mid, left, right = mag[1:-1], mag[:-2], mag[2:]
    ext = np.where(
        (mid > left) & (mid >= right), 1, np.where((mid < left) & (mid <= right), -1, 0)
    )
    at = np.flatnonzero(ext) + 1
    brackets: list[tuple[float, float, int]] = [  # (lo, hi, +1 max / -1 min)
        (grid[i - 1], grid[i + 1], int(ext[i - 1])) for i in at
    ]
    pole_f, zero_f = _pencil_seeds(system, idx, f_start, f_stop)
    for fs, sgn in [(f, 1) for f in pole_f] + [(f, -1) for f in zero_f]:
        brackets.append((max(f_start, fs / step), min(f_stop, fs * step), sgn))
    if not brackets:
        return []
    lo = np.log([b[0] for b in brackets])
    hi = np.log([b[1] for b in brackets])
    sign = np.array([b[2] for b in brackets], dtype=float)

    def score(logf: np.ndarray) -> np.ndarray:  # larger is better for both kinds
        zz = np.abs(_z(system, idx, np.exp(logf)))
        return sign * np.log(np.maximum(zz, 1e-300))

    # vectorised golden-section search over every bracket at once
    c = hi - _GOLD * (hi - lo)
    d = lo + _GOLD * (hi - lo)
    fc, fd = score(c), score(d)
    tol = math.log1p(rtol)
    for _ in range(200):
        if np.all(hi - lo <= tol):
            break
        left = fc >= fd  # the maximum lies in [lo, d]
        hi = np.where(left, d, hi)
        lo = np.where(left, lo, c)
        c_new = hi - _GOLD * (hi - lo)
        d_new = lo + _GOLD * (hi - lo)
        # reuse the interior point that survives, evaluate the other
        keep_c = np.where(left, c, d)
        keep_fc = np.where(left, fc, fd)
        new_pt = np.where(left, c_new, d_new)
        fnew = score(new_pt)
        c = np.where(left, new_pt, keep_c)
        fc = np.where(left, fnew, keep_fc)
        d = np.where(left, keep_c, new_pt)
        fd = np.where(left, keep_fc, fnew)
    best = np.where(fc >= fd, c, d)
    fbest = np.exp(best)
    # keep true local extrema inside the range, not ends of a monotone stretch
    probe = np.concatenate([fbest * (1 - 1e-4), fbest, fbest * (1 + 1e-4)])
    zp = np.abs(_z(system, idx, np.clip(probe, f_start, f_stop))).reshape(3, -1)
    is_ext = np.where(
        sign > 0, (zp[1] >= zp[0]) & (zp[1] >= zp[2]), (zp[1] <= zp[0]) & (zp[1] <= zp[2])
    )
    inside = (fbest > f_start * (1 + 1e-9)) & (fbest < f_stop * (1 - 1e-9))
    found: list[Resonance] = []
    for k in np.argsort(fbest):
        if not (is_ext[k] and inside[k]):
            continue
        kind = "parallel" if sign[k] > 0 else "series"
        f = float(fbest[k])
        if any(r.kind == kind and abs(r.freq_hz - f) <= 1e-3 * f for r in found):
            continue
        found.append(Resonance(kind, f, f / f1 if f1 else float("nan"), float(zp[1, k])))
    return found
