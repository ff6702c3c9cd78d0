"""Resonances seen at a node: parallel (|Z| maxima) and series (|Z| minima).

Method (networks without a resistance law, complete by construction): the driving-point
impedance is rational, Z(s) = K·Π(s − z)/Π(s − p). Its poles p are the natural
frequencies of the network (finite generalised eigenvalues of the MNA pencil (A0, A1));
its zeros z are the eigenvalues of the pencil bordered by the node's test port; pole–zero
pairs closer than 1e-8·|s| cancel (modes the node does not see). Every extremum of |Z(jω)|
in the band is then a root of the explicit d ln|Z|/dω = Σ_z h − Σ_p h, isolated rigorously
(interval bisection with a second-order Taylor bound, see
:func:`xlfuncs.studies._network.stationary_points`) and refined to 1e-13 — no grid, so the
result does not depend on ``points``. The solver then confirms each one: d|Z|/dω from the
exact derivative of the solution changes sign across it, and the eigenvalue model agrees
with the solved |Z| at the band ends, 4 points per decade and every natural frequency in
the band (to 1e-6, plus the effect a relative error of 1e-10 in the natural frequencies has
near each of them); otherwise the study is refused, never returned unconfirmed.

Each resonance carries the damping ζ and Q = 1/(2ζ) of the natural frequency behind it:
the pole (parallel) or zero (series) nearest to jω in the complex plane, when it lies
within |s| of it (otherwise the extremum has no single natural frequency and both stay
empty).

Networks with a resistance law (R ∝ f^x) are not rational in s, so no finite set of
natural frequencies proves completeness. There the extrema are found by a scan of
200 points per decade, densified around the natural frequencies of the network with its
law resistors frozen at each decade of the band, and refined by bisection of the exact
d|Z|/dω; damping/Q come from the network frozen at each resonance's own frequency. The
result says so (:attr:`Resonances.complete` is False and :attr:`Resonances.note` states
the method); the worksheet function adds the note as its last row.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, NetworkError
from ..solver import System, build_system, diagnose
from ._network import (
    AXIS_RTOL,
    as_circuit,
    cancel_common,
    check_band,
    finite_eigenvalues,
    frozen_pencil,
    law_fundamental,
    log_model,
    port_functional,
    port_vector,
    resolve_port,
    stationary_points,
    zeros_of,
)
from .poles import NaturalFrequency
from .transfer import solve_response

__all__ = ["Resonance", "Resonances", "find_resonances", "port_extrema", "resonance_order_rule"]

# agreement required between the eigenvalue model of |Z| and the solver, beyond the
# effect of a relative error _EIG_RTOL in the natural frequencies
_MODEL_RTOL = 1e-6
_EIG_RTOL = 1e-10


@dataclass(frozen=True)
class Resonance:
    """One resonance: ``kind`` is ``"parallel"`` (|Z| maximum) or ``"series"`` (minimum).

    Attributes
    ----------
    freq_hz : float
        Frequency of the |Z| extremum.
    order : float or None
        freq_hz / fundamental (None without a fundamental).
    z_ohm : float
        |Z| at the extremum (the solver's value).
    damping, q : float or None
        ζ and Q = 1/(2ζ) of the natural frequency behind it (a pole for a parallel, a zero
        for a series resonance); ζ = 0 with Q None for a lossless zero; None when no
        single natural frequency lies within |s| of jω.
    natural_hz : float or None
        |s|/2π of that natural frequency.
    """

    kind: str
    freq_hz: float
    order: float | None
    z_ohm: float
    damping: float | None = None
    q: float | None = None
    natural_hz: float | None = None


class Resonances(list[Resonance]):
    """The resonances found (a list, ascending frequency) and how they were found.

    Attributes
    ----------
    complete : bool
        True when the list is complete by construction (rational Z(s)).
    note : str
        The method, stated where completeness is not proven (else empty).
    """

    def __init__(self, items: list[Resonance], complete: bool, note: str = "") -> None:
        super().__init__(items)
        self.complete = complete
        self.note = note


def resonance_order_rule(s_sc_mva: float, q_cap_mvar: float) -> float:
    """Rule of thumb h_r ≈ √(S_sc / Q_cap) for a bank on a bus of short-circuit power
    S_sc (common practice; assumes X/R large and the bank's own reactance dominant)."""
    if not (s_sc_mva > 0 and q_cap_mvar > 0):
        raise InputError("argument", None, "s_sc_mva", s_sc_mva, "expected positive MVA and Mvar")
    return math.sqrt(s_sc_mva / q_cap_mvar)


def _attribute(w: float, lam: np.ndarray) -> NaturalFrequency | None:
    """The natural frequency nearest to jω (upper half plane), if within |s| of it."""
    up = lam[lam.imag >= 0]
    if up.size == 0:
        return None
    d = np.abs(1j * w - up)
    k = int(np.argmin(d))
    if d[k] > abs(up[k]):
        return None
    return NaturalFrequency.of(complex(up[k]))


def _z_and_slope(
    system: System, plus: int, minus: int, f: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Z at the port and g = d ln|Z|/dω (exact derivative), at ``f``."""
    b = port_vector(system, plus, minus)
    z, dz = solve_response(system, b, port_functional(plus, minus, ""), f)
    assert dz is not None
    with np.errstate(divide="ignore", invalid="ignore"):  # Z = 0 exactly at a lossless zero
        return z, np.real(dz / z)


Row = tuple[str, float, float, NaturalFrequency | None]


def _exact(system: System, plus: int, minus: int, node: str, lo: float, hi: float) -> list[Row]:
    w_lo, w_hi = 2 * math.pi * lo, 2 * math.pi * hi
    w_ref = math.sqrt(w_lo * w_hi)
    a0, a1 = system.pencil()
    poles, _ = finite_eigenvalues(a0, a1, w_ref)
    e = port_vector(system, plus, minus)
    zeros = zeros_of(a0, a1, e, e, np.zeros(system.n), 0.0, w_ref)
    p, z = cancel_common(poles, zeros, w_ref)
    lossless = (np.abs(p.real) <= AXIS_RTOL * np.abs(p)) & (p.imag > w_lo) & (p.imag < w_hi)
    if lossless.any():
        raise NetworkError(
            f"a lossless resonance seen at {node} (a natural frequency on the jω "
            "axis): |Z| is unbounded there",
            freq_hz=float(p.imag[lossless][0] / (2 * math.pi)),
            hint="add the parts' losses (winding resistance, ESR, damping resistors)",
        )
    w_ext, kind = stationary_points(z, p, w_lo, w_hi)
    # the solver confirms: the slope of |Z| changes sign across every extremum, and the
    # eigenvalue model matches |Z| at the band ends, 4 points per decade and the features
    gaps = np.diff(np.concatenate([[w_lo], w_ext, [w_hi]]))
    gap = np.minimum(gaps[:-1], gaps[1:]) if w_ext.size else np.zeros(0)
    delta = np.clip(0.25 * gap / np.maximum(w_ext, 1e-300), 1e-10, 1e-6)
    feats = np.concatenate([p.imag, z.imag])
    feats = feats[(feats > w_lo) & (feats < w_hi)]
    n_dec = max(1, math.ceil(4 * math.log10(hi / lo)))
    check_w = np.concatenate(
        [np.exp(np.linspace(math.log(w_lo), math.log(w_hi), n_dec + 1)), feats]
    )
    axis_z = z[(np.abs(z.real) <= AXIS_RTOL * np.abs(z)) & (z.imag > w_lo) & (z.imag < w_hi)]
    if axis_z.size:  # |Z| = 0 there: keep the model check away from those points
        near = np.abs(check_w[:, None] - axis_z.imag[None, :]) <= 1e-6 * check_w[:, None]
        check_w = check_w[~near.any(axis=1)]
    probe = np.concatenate([w_ext * (1 - delta), w_ext, w_ext * (1 + delta), check_w])
    zz, g = _z_and_slope(system, plus, minus, probe / (2 * math.pi))
    m = w_ext.size
    if np.any(np.abs(zz[m : 2 * m]) == 0) and not axis_z.size:  # pragma: no cover
        raise NetworkError(f"the impedance at {node} is 0 at an extremum")
    zc = zz[3 * m :]
    if np.any(zc == 0):
        raise NetworkError(
            f"the impedance at {node} is exactly 0 (a voltage source holds the node)",
        )
    k_all = zc / np.exp(log_model(check_w, z, p))
    k_ref = k_all[np.argsort(np.abs(k_all))[k_all.size // 2]]
    # allowed: 1e-6, plus what a relative error of 1e-10 in each natural frequency makes
    # of the model near it (|δZ/Z| ≈ |δs|/|jω − s|)
    lam = np.concatenate([p, z])
    near = (
        _EIG_RTOL
        * (np.abs(lam)[None, :] / np.abs(1j * check_w[:, None] - lam[None, :])).sum(axis=1)
        if lam.size
        else 0.0
    )
    bad = np.abs(k_all / k_ref - 1) > _MODEL_RTOL + near
    if bad.any():
        raise NetworkError(
            f"the natural frequencies do not reproduce |Z| at {node} (an "
            "ill-conditioned eigenvalue problem); resonances cannot be certified",
            freq_hz=float(check_w[np.flatnonzero(bad)[0]] / (2 * math.pi)),
        )
    g_left, g_right = g[:m], g[2 * m : 3 * m]
    is_axis = np.isin(w_ext, axis_z.imag)
    ok = np.where(kind > 0, (g_left > 0) & (g_right < 0), (g_left < 0) & (g_right > 0))
    if np.any(~ok & ~is_axis):
        k = int(np.flatnonzero(~ok & ~is_axis)[0])
        raise NetworkError(
            f"the solver does not confirm the extremum of |Z| at {node} found from the "
            "natural frequencies (an ill-conditioned eigenvalue problem)",
            freq_hz=float(w_ext[k] / (2 * math.pi)),
        )
    rows = []
    for k in range(m):
        w = float(w_ext[k])
        nat = _attribute(w, p if kind[k] > 0 else z)
        rows.append(
            (
                "parallel" if kind[k] > 0 else "series",
                w / (2 * math.pi),
                float(abs(zz[m + k])),
                nat,
            )
        )
    return rows


def _scan(system: System, plus: int, minus: int, lo: float, hi: float, rtol: float) -> list[Row]:
    n_dec = math.log10(hi / lo)
    pts = [np.geomspace(lo, hi, max(3, math.ceil(200 * n_dec) + 1))]
    centres = np.geomspace(lo, hi, max(2, math.ceil(n_dec) + 1))
    e = port_vector(system, plus, minus)
    t = np.array([-8, -4, -2, -1, -0.5, 0, 0.5, 1, 2, 4, 8], dtype=float)
    for fc in centres:
        a0, a1 = frozen_pencil(system, float(fc))
        w_ref = 2 * math.pi * float(fc)
        lam = np.concatenate(
            [
                finite_eigenvalues(a0, a1, w_ref)[0],
                zeros_of(a0, a1, e, e, np.zeros(system.n), 0.0, w_ref),
            ]
        )
        lam = lam[lam.imag > 0]
        f_pts = (lam.imag[:, None] + np.abs(lam.real)[:, None] * t[None, :]) / (2 * math.pi)
        pts.append(f_pts[(f_pts > lo) & (f_pts < hi)])
    f = np.unique(np.concatenate(pts))
    _z, g = _z_and_slope(system, plus, minus, f)
    s = np.sign(g)
    at = np.flatnonzero((s[:-1] != s[1:]) & (s[:-1] != 0))
    a, b = f[at], f[at + 1]
    kind = np.where(s[at] > 0, 1, -1)  # |Z| rising then falling: a maximum
    for _ in range(80):
        if a.size == 0 or np.all(b - a <= rtol * a):
            break
        mid = np.sqrt(a * b)
        _zm, gm = _z_and_slope(system, plus, minus, mid)
        left = np.sign(gm) == kind  # still rising (max) / falling (min): root to the right
        a = np.where(left, mid, a)
        b = np.where(left, b, mid)
    fr = np.sqrt(a * b)
    zr = np.abs(_z_and_slope(system, plus, minus, fr)[0]) if fr.size else np.zeros(0)
    rows = []
    for k in range(fr.size):
        a0, a1 = frozen_pencil(system, float(fr[k]))
        w = 2 * math.pi * float(fr[k])
        if kind[k] > 0:
            lam = finite_eigenvalues(a0, a1, w)[0]
        else:
            lam = zeros_of(a0, a1, e, e, np.zeros(system.n), 0.0, w)
        rows.append(
            (
                "parallel" if kind[k] > 0 else "series",
                float(fr[k]),
                float(zr[k]),
                _attribute(w, lam),
            )
        )
    return rows


def port_extrema(
    system: System, plus: int, minus: int, label: str, lo: float, hi: float, rtol: float = 1e-7
) -> tuple[list[Row], bool, str]:
    """Extrema of |Z| at a port over (lo, hi) Hz: ``(rows, complete, note)``, rows of
    ``(kind, freq_hz, |Z|, natural frequency or None)`` ascending."""
    if law_fundamental(system) is None:
        return _exact(system, plus, minus, label, lo, hi), True, ""
    return _scan(system, plus, minus, lo, hi, rtol), False, _SCAN_NOTE


_SCAN_NOTE = (
    "resistance law present: Z(s) is not rational, so completeness is not proven; found by a "
    "200-per-decade scan densified at the natural frequencies of the network frozen at each "
    "decade, refined by bisection of the exact d|Z|/df; damping and q from the network "
    "frozen at each resonance's frequency"
)


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
) -> Resonances:
    """Parallel and series resonances at ``node`` between ``f_start`` and ``f_stop``.

    Independent sources are zeroed (pass ``sources`` to keep a supply modelled as a
    source behind its impedance). ``order`` is f / fundamental. ``points`` is checked
    (8 … 100000) but no longer changes the result: the extrema come from the natural
    frequencies (see the module text); ``rtol`` is the bisection tolerance of the scan
    used for networks with a resistance law.

    Examples
    --------
    Three parallel tanks in series (1 mH; 1000, 1002, 1004 Hz; Q = 10⁴): three maxima
    and the two minima between them.

    >>> import math
    >>> parts = [["name", "kind", "from", "to", "value"]]
    >>> for i, f0 in enumerate([1000, 1002, 1004]):
    ...     w = 2 * math.pi * f0
    ...     a, b = ("n0", "n1", "n2")[i], ("n1", "n2", "GND")[i]
    ...     parts += [[f"R{i}", "R", a, b, 1e4 * w * 1e-3], [f"L{i}", "L", a, b, 1e-3],
    ...               [f"C{i}", "C", a, b, 1 / (w * w * 1e-3)]]
    >>> [r.kind for r in find_resonances(parts, "n0", 900, 1100)]
    ['parallel', 'series', 'parallel', 'series', 'parallel']
    """
    circuit = as_circuit(parts, sources, options)
    lo, hi = check_band(f_start, f_stop)
    if isinstance(points, bool) or not isinstance(points, int) or not 8 <= points <= 100_000:
        raise InputError("argument", None, "points", points, "expected 8 … 100000 points")
    if not (isinstance(rtol, float) and 1e-14 <= rtol <= 1e-3):
        raise InputError("argument", None, "rtol", rtol, "expected 1e-14 … 1e-3")
    idx, _minus, _label = resolve_port(circuit, node, "node")
    diagnose(circuit, dc=False)
    system = build_system(circuit)
    f1 = fundamental_hz or circuit.options.fundamental_hz
    rows, complete, note = port_extrema(system, idx, -1, f"node {node!r}", lo, hi, rtol)
    out = []
    for kind, f, zmag, nat in rows:
        out.append(
            Resonance(
                kind,
                f,
                f / f1 if f1 else None,
                zmag,
                None if nat is None else nat.damping,
                None if nat is None else nat.q,
                None if nat is None else nat.freq_hz,
            )
        )
    return Resonances(out, complete, note)
