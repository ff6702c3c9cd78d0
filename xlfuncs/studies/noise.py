"""Noise: thermal noise of every resistor and user noise sources, as uncorrelated
contributions at a node.

Sources of noise
    * every resistor R at temperature T: the Johnson–Nyquist density 4kT·R (V²/Hz) in
      series, or 4kT/R (A²/Hz) in parallel (J. B. Johnson, Phys. Rev. 32, 97, 1928;
      H. Nyquist, Phys. Rev. 32, 110, 1928); k = 1.380649e-23 J/K (exact, SI 2019);
      T = temperature_c + 273.15 K. A resistor that follows a resistance law contributes
      4kT·R(f).
    * noise rows of the sources table (:class:`~xlfuncs.tables.NoiseRow`: ``density`` in
      V/√Hz or A/√Hz, optional ``corner_hz``): density²·(1 + corner_hz/f). A current noise
      row is a current source (an open for everything else); a voltage noise row is an
      ideal voltage source between its nodes in the noise network, i.e. a short for every
      other contribution — place it where a 0 V source belongs (in series, between a
      signal node and the input it drives).
    * tone sources are zeroed (voltage sources short, current sources open).

Combination: the contributions are uncorrelated, so the output density is
S(f) = Σ_i |H_i(f)|²·S_i(f) (V²/Hz), H_i the transfer from source i to the node's
voltage; the RMS over a band is √∫S df.

Integration: adaptive Gauss–Legendre on log-frequency panels whose edges include every
natural frequency of the network (and ±|Re s| around sharp ones), the 1/f corners and the
law's f₁; to relative accuracy ``rtol`` (estimated from nested panel halving). An
infinite ``f_stop`` is exact, not truncated: above f_hi = 10⁴ × the highest natural
frequency or transfer zero of any contribution, S(f) is a power law, and the tail is
integrated in t = 1/f (a smooth integrand for a density falling at least as 1/f²). A
contribution that does not fall off (as many zeros as poles) is refused for an infinite
band, and one that grows toward 0 Hz for a band from 0.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Protocol

import numpy as np

from ..circuit import Circuit
from ..errors import InputError, NetworkError
from ..solver import System, build_system, diagnose
from ..tables import SourceRow
from ._network import (
    adaptive_integral,
    as_circuit,
    cancel_common,
    check_band,
    finite_eigenvalues,
    frozen_pencil,
    law_fundamental,
    port_functional,
    rebuild,
    resolve_port,
    zeros_of,
)

__all__ = [
    "BOLTZMANN",
    "NoiseContribution",
    "NoiseResult",
    "NoiseSpectrum",
    "noise_density",
    "noise_rms",
]

BOLTZMANN = 1.380649e-23  # J/K, exact in the SI since 2019 (BIPM SI Brochure, 9th ed.)
ZERO_CELSIUS = 273.15  # K


class NoiseRowLike(Protocol):
    """What a noise row of the sources table carries (see ``xlfuncs.tables.NoiseRow``)."""

    row: int
    name: str
    kind: str
    from_node: str
    to_node: str
    density: float
    corner_hz: float


@dataclass(frozen=True)
class _Source:
    name: str
    kind: str  # "R" (thermal), "V" or "I" (noise row)
    b: np.ndarray  # incidence of a unit noise value
    level: float  # 4kT (thermal) or density²
    value: float = 0.0  # R (thermal)
    series: bool = False  # thermal: a voltage in the branch (True) or a parallel current
    law_param: int = -1  # thermal with a resistance law: its parameter
    corner_hz: float = 0.0

    def density2(self, system: System, f: np.ndarray) -> np.ndarray:
        """S_i(f): V²/Hz or A²/Hz."""
        if self.kind == "R":
            r = np.full(f.size, self.value)
            if self.law_param >= 0:
                ph = system.phi(f)[:, self.law_param].real
                r = r * ph if self.series else r / ph
            return self.level * r if self.series else self.level / r
        if self.corner_hz:
            with np.errstate(divide="ignore"):
                return self.level * (1.0 + self.corner_hz / f)
        return np.full(f.size, self.level)


@dataclass(frozen=True)
class NoiseSpectrum:
    """Output noise density at a node, axis (frequency,).

    Attributes
    ----------
    freqs_hz : numpy.ndarray (F,)
    density : numpy.ndarray (F,)
        √S(f), V/√Hz.
    contributions : numpy.ndarray (F, K)
        Each source's part of S(f), V²/Hz (they add).
    names, kinds : tuple of str
        Per contribution: the part or noise row, and ``"R"`` (thermal), ``"V"`` or ``"I"``.
    """

    freqs_hz: np.ndarray
    density: np.ndarray
    contributions: np.ndarray
    names: tuple[str, ...]
    kinds: tuple[str, ...]


@dataclass(frozen=True)
class NoiseContribution:
    """One source's share of the band's output noise: ``rms_v`` alone, ``share`` of the
    total noise power (fraction)."""

    name: str
    kind: str
    rms_v: float
    share: float


@dataclass(frozen=True)
class NoiseResult:
    """Integrated output noise over a band.

    Attributes
    ----------
    rms_v : float
        √∫S df, V rms.
    contributions : tuple of NoiseContribution
        Ranked, largest first.
    rel_error : float
        Estimated relative error of the quadrature (of the noise power).
    """

    rms_v: float
    f_start: float
    f_stop: float
    temperature_c: float
    contributions: tuple[NoiseContribution, ...]
    rel_error: float


def _kelvin(temperature_c: Any) -> float:
    if (
        isinstance(temperature_c, bool)
        or not isinstance(temperature_c, (int, float))
        or not math.isfinite(temperature_c)
        or temperature_c <= -ZERO_CELSIUS
        or temperature_c > 1e4
    ):
        raise InputError(
            "argument",
            None,
            "temperature_c",
            temperature_c,
            "expected a temperature in °C above −273.15 (absolute zero)",
        )
    return float(temperature_c) + ZERO_CELSIUS


class _Setup:
    """The noise network, its sources and the output."""

    def __init__(
        self,
        circuit: Circuit,
        node: Any,
        temperature_c: Any,
        noise_sources: Sequence[NoiseRowLike] | None,
    ) -> None:
        t_k = _kelvin(temperature_c)
        noise = tuple(
            noise_sources if noise_sources is not None else getattr(circuit, "noise_sources", ())
        )
        for nz in noise:
            if nz.kind not in ("V", "I") or not (nz.density > 0 and math.isfinite(nz.density)):
                raise InputError(
                    "sources", nz.row, "density", nz.density, "expected a density > 0"
                )
        extra = [
            SourceRow(nz.row, nz.name, "V", nz.from_node, nz.to_node, 0.0, 0j)
            for nz in noise
            if nz.kind == "V"
        ]
        net = rebuild(circuit, (), extra) if extra else circuit
        diagnose(net, dc=False)  # e.g. a voltage noise row across a voltage source
        self.circuit = net
        self.system = system = build_system(net)
        plus, _minus, label = resolve_port(net, node, "node")
        self.output = port_functional(plus, -1, f"V({label})")
        branch = {lab.lower(): i for i, lab in enumerate(system.labels) if i >= system.n_nodes}
        node_pos = {nd: i for i, nd in enumerate(net.nodes)}
        srcs: list[_Source] = []
        four_kt = 4.0 * BOLTZMANN * t_k
        for p in net.parts:
            if p.kind != "R":
                continue
            e = [k.lower() for k in system.elem_names].index(p.name.lower())
            law = -1
            if p.r_exponent:
                law = int(np.flatnonzero(system.param_elem == e)[0])
            b = np.zeros(system.n)
            k = branch.get(p.name.lower())
            if k is not None:  # the resistor has a branch current: a series noise voltage
                b[k] = 1.0
                srcs.append(_Source(p.name, "R", b, four_kt, p.value, True, law))
            else:  # a parallel noise current from `from` to `to`
                a, c = node_pos.get(p.from_node or ""), node_pos.get(p.to_node or "")
                if a is not None:
                    b[a] -= 1.0
                if c is not None:
                    b[c] += 1.0
                srcs.append(_Source(p.name, "R", b, four_kt, p.value, False, law))
        names = [s.lower() for s in system.src_names]
        for nz in noise:
            b = np.zeros(system.n)
            if nz.kind == "V":
                b = system.src_incidence[names.index(nz.name.lower())].copy()
            else:
                a, c = node_pos.get(nz.from_node), node_pos.get(nz.to_node)
                if a is not None:
                    b[a] -= 1.0
                if c is not None:
                    b[c] += 1.0
            srcs.append(_Source(nz.name, nz.kind, b, nz.density**2, corner_hz=float(nz.corner_hz)))
        if not srcs:
            raise InputError(
                "parts", None, None, expected="no resistor and no noise row: nothing makes noise"
            )
        self.sources = srcs
        self.basis = np.array([s.b for s in srcs])  # (K, n)

    def transfer2(self, f: np.ndarray) -> np.ndarray:
        """``(F, K)`` |H_i(f)|² from every source to the output."""
        system = self.system
        cols = np.flatnonzero(np.any(self.basis != 0, axis=0))
        unit = cols.size < self.basis.shape[0]
        rhs_set = np.eye(system.n)[cols] if unit else self.basis  # (M, n)
        m = rhs_set.shape[0]
        out = np.empty((f.size, self.basis.shape[0]))
        chunk = max(1, 2_000_000 // max(1, m * system.n))
        for s0 in range(0, f.size, chunk):
            ff = f[s0 : s0 + chunk]
            x = system.solve(np.repeat(ff, m), rhs=np.tile(rhs_set, (ff.size, 1)).astype(complex))
            y = self.output.value(system, np.repeat(ff, m), x).reshape(ff.size, m)
            h = y @ self.basis[:, cols].T if unit else y
            out[s0 : s0 + chunk] = np.abs(h) ** 2
        return out

    def density2(self, f: np.ndarray) -> np.ndarray:
        """``(F, K)`` contributions to S(f), V²/Hz."""
        s_i = np.stack([s.density2(self.system, f) for s in self.sources], axis=1)
        return self.transfer2(f) * s_i


def noise_density(
    parts: Any,
    sources: Any,
    node: str,
    freqs_hz: Any,
    temperature_c: float,
    options: Any = None,
    noise_sources: Sequence[NoiseRowLike] | None = None,
) -> NoiseSpectrum:
    """Output noise density (V/√Hz) at ``node`` and each source's part of it.

    ``noise_sources`` (records with ``row, name, kind, from_node, to_node, density,
    corner_hz``) default to the sources table's noise rows (``Circuit.noise_sources``).

    Examples
    --------
    A divider of two 1 kΩ resistors across a voltage source (shorted for noise) at 300 K:
    the density at the midpoint is √(4kT·(R1‖R2)) = √(4k·300·500) ≈ 2.8782 nV/√Hz
    (closed form).

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R1", "R", "in", "mid", 1e3], ["R2", "R", "mid", "GND", 1e3]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["V", "V", "in", "GND", 0, 5.0]]
    >>> s = noise_density(parts, sources, "mid", [1e3], 300 - 273.15)
    >>> round(float(s.density[0]) * 1e9, 6)
    2.878175
    """
    circuit = as_circuit(parts, sources, options)
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    if f.size == 0 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise InputError("argument", None, "freqs_hz", None, "expected frequencies > 0 Hz")
    st = _Setup(circuit, node, temperature_c, noise_sources)
    contrib = st.density2(f)
    return NoiseSpectrum(
        f,
        np.sqrt(contrib.sum(axis=1)),
        contrib,
        tuple(s.name for s in st.sources),
        tuple(s.kind for s in st.sources),
    )


def _features(st: _Setup, lo: float, hi: float) -> tuple[np.ndarray, float]:
    """Natural frequencies (rad/s) of the noise network and the reference ω_ref of their
    eigenvalue problem; for a network with a resistance law, the natural frequencies of the
    network frozen at each decade of [lo, hi] Hz."""
    system = st.system
    if law_fundamental(system) is None:
        a0, a1 = system.pencil()
        return finite_eigenvalues(a0, a1)
    n_dec = max(2, math.ceil(math.log10(hi / lo)) + 1)
    decades = np.exp(np.linspace(math.log(lo), math.log(hi), n_dec))
    lam = [finite_eigenvalues(*frozen_pencil(system, float(fc)))[0] for fc in decades]
    return np.concatenate(lam), 1.0


def _degrees(st: _Setup, poles: np.ndarray, w_ref: float) -> tuple[np.ndarray, np.ndarray, float]:
    """Per source: (order at infinity: #poles − #zeros, order at 0: #zeros − #poles at
    s = 0), and the largest |s| of any pole or zero (rad/s). Sources the output does not
    see get order 10⁹ (no contribution)."""
    system = st.system
    a0, a1 = system.pencil()
    c0, c1 = st.output.affine(system)
    inf_order = np.empty(len(st.sources))
    zero_order = np.empty(len(st.sources))
    top = float(np.abs(poles).max()) if poles.size else 0.0
    tiny = 1e-9 * w_ref
    for i, s in enumerate(st.sources):
        try:
            z = zeros_of(a0, a1, s.b, c0, c1, 0.0, w_ref)
        except NetworkError:  # H ≡ 0: this source does not reach the output
            inf_order[i] = zero_order[i] = 1e9
            continue
        p, z = cancel_common(poles, z, w_ref)
        inf_order[i] = p.size - z.size
        zero_order[i] = np.sum(np.abs(z) <= tiny) - np.sum(np.abs(p) <= tiny)
        if z.size:
            top = max(top, float(np.abs(z).max()))
    return inf_order, zero_order, top


def noise_rms(
    parts: Any,
    sources: Any,
    node: str,
    f_start: float,
    f_stop: float,
    temperature_c: float,
    options: Any = None,
    noise_sources: Sequence[NoiseRowLike] | None = None,
    rtol: float = 1e-9,
) -> NoiseResult:
    """RMS output noise at ``node`` over [f_start, f_stop] (V rms) and each source's
    contribution, ranked. ``f_start`` may be 0 and ``f_stop`` ``math.inf`` (see the module
    text for how the ends are integrated exactly).

    Examples
    --------
    RC low-pass over all frequencies: √(kT/C), whatever R (any circuits text). For
    C = 1 nF at 300 K: √(1.380649e-23·300/1e-9) ≈ 2.0352 µV (2.035177 µV).

    >>> import math
    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-9]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["V", "V", "in", "GND", 0, 1.0]]
    >>> r = noise_rms(parts, sources, "out", 0, math.inf, 300 - 273.15)
    >>> round(r.rms_v * 1e6, 6), round(math.sqrt(1.380649e-23 * 300 / 1e-9) * 1e6, 6)
    (2.035177, 2.035177)
    """
    circuit = as_circuit(parts, sources, options)
    lo, hi = check_band(f_start, f_stop, allow_zero=True)
    if not (isinstance(rtol, float) and 1e-13 <= rtol <= 1e-2):
        raise InputError("argument", None, "rtol", rtol, "expected 1e-13 … 1e-2")
    st = _Setup(circuit, node, temperature_c, noise_sources)
    system = st.system
    corners = np.array([s.corner_hz for s in st.sources if s.corner_hz > 0])
    if lo == 0:
        if corners.size:
            name = next(s.name for s in st.sources if s.corner_hz > 0)
            raise InputError(
                "argument",
                None,
                "f_start",
                f_start,
                f"1/f noise ({name}) integrates to infinity from 0 Hz: give f_start > 0",
            )
        diagnose(st.circuit, dc=True)
    infinite = not math.isfinite(hi)
    law = law_fundamental(system)
    if infinite and law is not None:
        raise InputError(
            "argument",
            None,
            "f_stop",
            f_stop,
            "a resistance law has no high-frequency limit: give a finite f_stop",
        )
    poles, w_ref = _features(st, max(lo, 1e-3), hi if not infinite else 1e12)
    f_hi = math.inf
    if law is None and (infinite or lo == 0):
        inf_order, zero_order, top = _degrees(st, poles, w_ref)
        if infinite:
            bad = np.flatnonzero(inf_order < 1)
            if bad.size:
                s = st.sources[int(bad[0])]
                raise InputError(
                    "argument",
                    None,
                    "f_stop",
                    f_stop,
                    f"the noise of {s.name} reaches node {node!r} without roll-off (its density does "
                    "not fall as f → ∞): the RMS over all frequencies is infinite; give a "
                    "finite f_stop",
                )
            f_hi = 1e4 * max(top, w_ref) / (2 * math.pi)
        if lo == 0:
            bad = np.flatnonzero(zero_order < 0)
            if bad.size:
                s = st.sources[int(bad[0])]
                raise InputError(
                    "argument",
                    None,
                    "f_start",
                    f_start,
                    f"the noise of {s.name} grows without bound toward 0 Hz: give f_start > 0",
                )
    # breakpoints (Hz)
    lam = poles[poles.imag >= 0]
    feat = [np.abs(lam) / (2 * math.pi)]
    sharp = lam[(lam.imag > 0) & (np.abs(lam.real) < 0.25 * np.abs(lam))]
    for k in (1.0, 4.0, 16.0):
        feat.append((sharp.imag + k * np.abs(sharp.real)) / (2 * math.pi))
        feat.append((sharp.imag - k * np.abs(sharp.real)) / (2 * math.pi))
    feat.append(corners)
    if law is not None:
        feat.append(np.array([law]))
    bp = np.concatenate(feat)
    bp = bp[np.isfinite(bp) & (bp > 0)]
    top_log = min(hi, f_hi)
    start_log = lo

    def fun_log(u: np.ndarray) -> np.ndarray:
        f = np.exp(u)
        return st.density2(f) * f[:, None]

    totals = np.zeros(len(st.sources))
    err = 0.0
    if lo == 0:
        low = bp[bp > 0]
        f_a = min(top_log, 1e-4 * float(low.min()) if low.size else top_log)
        val, e = adaptive_integral(lambda f: st.density2(f), np.array([0.0, f_a]), rtol)
        totals += val.sum(axis=0)
        err += e
        start_log = f_a
    if top_log > start_log:
        inner = bp[(bp > start_log) & (bp < top_log)]
        n_dec = max(1, math.ceil(2 * math.log10(top_log / start_log)))
        edges = np.unique(
            np.concatenate(
                [
                    np.log([start_log, top_log]),
                    np.log(inner),
                    np.linspace(math.log(start_log), math.log(top_log), n_dec + 1),
                ]
            )
        )
        val, e = adaptive_integral(fun_log, edges, rtol)
        totals += val.sum(axis=0)
        err += e
    if infinite:

        def fun_tail(t: np.ndarray) -> np.ndarray:
            f = 1.0 / t
            return st.density2(f) * (f * f)[:, None]

        val, e = adaptive_integral(fun_tail, np.linspace(0.0, 1.0 / f_hi, 5), rtol)
        totals += val.sum(axis=0)
        err += e
    total = float(totals.sum())
    if not (total > 0 and math.isfinite(total)):
        raise NetworkError(f"no noise reaches node {node!r} in the band (total {total!r} V²)")
    order = np.argsort(-totals, kind="stable")
    contrib = tuple(
        NoiseContribution(
            st.sources[i].name,
            st.sources[i].kind,
            float(math.sqrt(max(totals[i], 0.0))),
            float(totals[i] / total),
        )
        for i in order
    )
    return NoiseResult(math.sqrt(total), lo, hi, float(temperature_c), contrib, float(err / total))
