"""Solved phasors and everything derived from them.

Axis order is fixed: **frequency first**. A :class:`Spectrum` holds complex peak
phasors of shape ``(F, ...)`` (cosine reference; DC is the 0 Hz entry, a signed real
value); its combined quantities reduce that first axis away.

Conventions (IEEE Std 1459-2010 for non-sinusoidal quantities):

* RMS of one tone: |X|/√2 for AC, |X| for DC; total RMS = √(Σ rms_k²).
* Average power: Σ over frequencies of V·I at DC and ½·Re(V·I*) for AC (products of
  different frequencies average to zero over a common period).
* THD (basis stated in :meth:`Spectrum.thd`): √(Σ_{h=2..H} |X_h|²) / |X_1| over integer
  harmonics h of the fundamental, DC and interharmonics excluded, H = 50 by default
  (the range IEEE Std 519-2014 uses).
* True peak: max |x(t)|, see :func:`true_peak`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from .circuit import Circuit
from .errors import InputError
from .solver import System

__all__ = ["PeakResult", "Solution", "Spectrum", "common_period", "true_peak"]

_HARMONIC_RTOL = 1e-6
_MAX_ORDER_EXACT = 1 << 16  # beyond this many harmonics of the common base, use the bound
_MAX_DENOMINATOR = 1000


def common_period(freqs_hz: np.ndarray) -> tuple[float, np.ndarray] | None:
    """Common base frequency of the non-zero ``freqs_hz`` and their integer orders.

    Returns ``(base_hz, orders)`` with ``freqs ≈ orders · base`` (relative 1e-9), or None
    when no base with ≤ 65536 harmonics and a denominator ≤ 1000 exists (the tones are
    then treated as incommensurate). DC has order 0.
    """
    f = np.asarray(freqs_hz, dtype=float)
    nz = f[f > 0]
    if nz.size == 0:
        return 1.0, np.zeros(f.shape, dtype=int)
    fmin = nz.min()
    ratio = nz / fmin
    q = np.arange(1, _MAX_DENOMINATOR + 1)[:, None]
    scaled = q * ratio[None, :]
    ok = np.all(np.abs(scaled - np.rint(scaled)) <= 1e-9 * scaled, axis=1)
    if not ok.any():
        return None
    qbest = int(q[np.argmax(ok), 0])
    base = fmin / qbest
    orders = np.rint(f / base).astype(np.int64)
    if orders.max() > _MAX_ORDER_EXACT:
        return None
    return base, orders


@dataclass(frozen=True)
class PeakResult:
    """Result of :func:`true_peak`.

    Attributes
    ----------
    value : numpy.ndarray or float
        max |x(t)| (for ``method == "exact"``) or the upper bound Σ|X_k|.
    time_s : numpy.ndarray or float
        A time at which the maximum occurs (NaN for the bound).
    method : str
        ``"exact"``: maximised over one common period (sampled with ≥ 16 points per
        period of the highest tone, then refined by Newton steps on the exact
        trigonometric sum); ``"bound"``: tones without a common period, the value is
        |DC| + Σ|X_k|, which max|x(t)| approaches arbitrarily closely over time when the
        frequencies are rationally independent and never exceeds.
    """

    value: Any
    time_s: Any
    method: str


def true_peak(freqs_hz: np.ndarray, phasors: np.ndarray) -> PeakResult:
    """max |x(t)| of x(t) = Σ Re(X_k e^{j2πf_k t}) for ``phasors`` shaped ``(F, ...)``."""
    f = np.asarray(freqs_hz, dtype=float)
    x = np.asarray(phasors, dtype=complex)
    tail = x.shape[1:]
    xf = x.reshape(f.size, -1)
    cp = common_period(f)
    if cp is None:
        bound = np.abs(xf).sum(axis=0)
        return PeakResult(bound.reshape(tail), np.full(tail, np.nan), "bound")
    base, orders = cp
    nmax = int(orders.max()) if orders.size else 0
    m = 1 << max(6, math.ceil(math.log2(16 * (nmax + 1))))
    spec = np.zeros((m // 2 + 1, xf.shape[1]), dtype=complex)
    weight = np.where(orders == 0, m, m / 2)[:, None]
    np.add.at(spec, orders, xf * weight)
    y = np.fft.irfft(spec, n=m, axis=0)  # (m, K) samples over one period
    ay = np.abs(y)
    # candidates: the top few samples per signal, refined by Newton on dx/dθ = 0
    top = min(8, m)
    cand = np.argpartition(-ay, top - 1, axis=0)[:top]  # (top, K)
    theta = 2 * np.pi * cand / m
    h = orders.astype(float)
    dth = 2 * np.pi / m
    th0 = theta.copy()
    for _ in range(8):
        e = np.exp(1j * h[:, None, None] * theta[None])  # (F, top, K)
        xs = xf[:, None, :] * e
        d1 = np.real(1j * h[:, None, None] * xs).sum(axis=0)
        d2 = np.real(-(h[:, None, None] ** 2) * xs).sum(axis=0)
        step = np.where(d2 != 0, -d1 / np.where(d2 != 0, d2, 1.0), 0.0)
        theta = np.clip(theta + step, th0 - dth, th0 + dth)
    e = np.exp(1j * h[:, None, None] * theta[None])
    vals = np.abs(np.real(xf[:, None, :] * e).sum(axis=0))  # (top, K)
    best = np.argmax(vals, axis=0)
    kk = np.arange(xf.shape[1])
    refined = vals[best, kk]
    sampled = ay.max(axis=0)
    value = np.maximum(refined, sampled)
    t_best = np.where(refined >= sampled, theta[best, kk], 2 * np.pi * ay.argmax(axis=0) / m)
    t_best = np.mod(t_best, 2 * np.pi) / (2 * np.pi * base)
    return PeakResult(value.reshape(tail), t_best.reshape(tail), "exact")


class Spectrum:
    """Complex peak phasors of one or many signals over frequency.

    Parameters
    ----------
    freqs_hz : array, shape (F,)
    phasors : array, shape (F, ...)
        Cosine-reference peak phasors; the 0 Hz entry is the signed DC value.
    label : str
        What the signal is (``"V(N1)"``, ``"I(C_bank)"``), for messages.
    fundamental_hz : float or None
        Default fundamental for :meth:`thd`.
    """

    def __init__(
        self,
        freqs_hz: np.ndarray,
        phasors: np.ndarray,
        label: str = "",
        fundamental_hz: float | None = None,
        thd_max_order: int = 50,
    ) -> None:
        self.freqs_hz = np.asarray(freqs_hz, dtype=float)
        self.phasors = np.asarray(phasors, dtype=complex)
        self.label = label
        self.fundamental_hz = fundamental_hz
        self.thd_max_order = thd_max_order
        self._is_dc = (self.freqs_hz == 0).reshape((-1,) + (1,) * (self.phasors.ndim - 1))

    # ------------------------------------------------------------- per-frequency values
    @property
    def peak(self) -> np.ndarray:
        """Peak magnitude of each tone ``(F, ...)``; for DC, |value|."""
        return np.abs(self.phasors)

    @property
    def rms(self) -> np.ndarray:
        """RMS of each tone ``(F, ...)``: |X|/√2 for AC, |X| for DC."""
        return np.where(self._is_dc, 1.0, 1.0 / math.sqrt(2.0)) * np.abs(self.phasors)

    @property
    def phase_deg(self) -> np.ndarray:
        """Phase of each tone in degrees, cosine reference; DC: 0 or 180."""
        ph = np.degrees(np.angle(self.phasors))
        return np.where(self._is_dc, np.where(self.phasors.real < 0, 180.0, 0.0), ph)

    # ----------------------------------------------------------------- combined values
    @property
    def dc(self) -> np.ndarray | float:
        """Signed DC value (0 when there is no 0 Hz tone)."""
        sel = self.freqs_hz == 0
        if not sel.any():
            return np.zeros(self.phasors.shape[1:])[()]
        return self.phasors[sel][0].real[()]

    @property
    def rms_total(self) -> np.ndarray | float:
        """√(Σ rms_k²) over all tones (IEEE Std 1459-2010 RMS of a non-sinusoidal
        quantity)."""
        return np.sqrt((self.rms**2).sum(axis=0))[()]

    def true_peak(self) -> PeakResult:
        """max |x(t)| (see :func:`true_peak` for the method and its bound)."""
        return true_peak(self.freqs_hz, self.phasors)

    @property
    def crest_factor(self) -> np.ndarray | float:
        """True peak / total RMS."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return (np.asarray(self.true_peak().value) / self.rms_total)[()]

    def thd(
        self,
        fundamental_hz: float | None = None,
        max_order: int | None = None,
        reference: float | None = None,
    ) -> np.ndarray | float:
        """Total harmonic distortion as a fraction (0.05 = 5 %).

        Basis: √(Σ_{h=2..max_order} |X_h|²) / |X_1|, integer harmonics of the
        fundamental only; DC and interharmonics excluded (IEEE Std 519-2014 definition).
        ``reference`` replaces |X_1| (as an RMS value) to get TDD against a demand
        current I_L. The fundamental defaults to the options' ``fundamental_hz``, else
        the lowest non-zero frequency present.
        """
        f1 = fundamental_hz or self.fundamental_hz
        nz = self.freqs_hz[self.freqs_hz > 0]
        if f1 is None:
            if nz.size == 0:
                raise InputError(
                    "argument",
                    None,
                    None,
                    self.label,
                    "THD needs an AC tone; the signal is DC only",
                )
            f1 = float(nz.min())
        hmax = max_order or self.thd_max_order
        order = self.freqs_hz / f1
        near = np.abs(order - np.rint(order)) <= _HARMONIC_RTOL * np.maximum(order, 1)
        h = np.rint(order)
        rms = self.rms
        fund = near & (h == 1)
        harm = near & (h >= 2) & (h <= hmax)
        num = np.sqrt((rms[harm] ** 2).sum(axis=0))
        if reference is not None:
            den = np.asarray(reference, dtype=float)
        else:
            if not fund.any():
                raise InputError(
                    "argument",
                    None,
                    None,
                    self.label,
                    f"THD needs a tone at the fundamental ({f1:g} Hz); none is present",
                )
            den = rms[fund].sum(axis=0)
        with np.errstate(divide="ignore", invalid="ignore"):
            return (num / den)[()]

    def waveform(self, times_s: np.ndarray) -> np.ndarray:
        """x(t) at ``times_s`` (shape ``(T,)``) → ``(T, ...)``."""
        t = np.asarray(times_s, dtype=float)
        e = np.exp(2j * np.pi * np.outer(t, self.freqs_hz))  # (T, F)
        flat = self.phasors.reshape(self.freqs_hz.size, -1)
        return np.real(e @ flat).reshape(t.shape + self.phasors.shape[1:])

    def window(self, points: int | None = None) -> tuple[np.ndarray, str]:
        """Times covering one common period (``"common period"``), or, when the tones
        have none, one period of the lowest tone (``"lowest-tone period"``)."""
        cp = common_period(self.freqs_hz)
        if cp is not None:
            base, orders = cp
            span, note = 1.0 / base, "common period"
            nmax = int(orders.max())
        else:
            nz = self.freqs_hz[self.freqs_hz > 0]
            span, note = 1.0 / nz.min(), "lowest-tone period"
            nmax = int(np.ceil(nz.max() / nz.min()))
        n = points or int(min(10_000, max(200, 20 * nmax + 1)))
        return np.linspace(0.0, span, n, endpoint=False), note

    def __repr__(self) -> str:
        return f"Spectrum({self.label!r}, {self.freqs_hz.size} frequencies)"


class Solution:
    """Phasors of every unknown at every frequency of a circuit, with derived values.

    Attributes
    ----------
    circuit : Circuit
    freqs_hz : numpy.ndarray, shape (F,)
    x : numpy.ndarray, shape (F, n)
        Raw MNA unknowns (node voltages, then branch currents).
    node_voltages : numpy.ndarray, shape (F, nodes)
    element_voltages, element_currents : numpy.ndarray, shape (F, E)
        Every two-terminal element: parts (couplings excluded), then sources.
    """

    def __init__(self, system: System, freqs_hz: np.ndarray, x: np.ndarray) -> None:
        self.system = system
        self.circuit: Circuit = system.circuit
        self.freqs_hz = np.asarray(freqs_hz, dtype=float)
        self.x = x
        self.node_voltages = x[:, : system.n_nodes]
        self.element_voltages = system.element_voltages(x)
        self.element_currents = system.element_currents(x, self.freqs_hz)
        self.element_names = system.elem_names
        self.element_kinds = system.elem_kinds
        self._elem_index = {n.lower(): i for i, n in enumerate(system.elem_names)}

    # ----------------------------------------------------------------------- signals
    def spectrum(self, ph: np.ndarray, label: str) -> Spectrum:
        """Wrap phasors shaped (F, ...) of this solution as a Spectrum."""
        o = self.circuit.options
        return Spectrum(self.freqs_hz, ph, label, o.fundamental_hz, o.thd_max_order)

    def voltage(self, target: str) -> Spectrum:
        """Voltage of a node (against the reference) or of a part/source (from − to)."""
        what, obj = self._resolve(target)
        if what == "node":
            if obj == self.circuit.ground:
                return self.spectrum(np.zeros(self.freqs_hz.size, complex), f"V({obj})")
            i = self.circuit.nodes.index(obj)
            return self.spectrum(self.node_voltages[:, i], f"V({obj})")
        e = self._elem_index[obj.name.lower()]
        return self.spectrum(self.element_voltages[:, e], f"V({obj.name})")

    def current(self, target: str) -> Spectrum:
        """Current through a part or source, flowing from its ``from`` to its ``to``."""
        what, obj = self._resolve(target)
        if what == "node":
            raise InputError(
                "argument",
                None,
                "quantity",
                "I",
                f"{target!r} is a node; a current needs a part or source name",
            )
        e = self._elem_index[obj.name.lower()]
        return self.spectrum(self.element_currents[:, e], f"I({obj.name})")

    def signal(self, target: str, quantity: str | None = None) -> Spectrum:
        """``quantity`` ``"V"`` or ``"I"``; default: current for a part, voltage for a node."""
        what, _obj = self._resolve(target)
        q = (quantity or ("V" if what == "node" else "I")).strip().upper()
        if q == "V":
            return self.voltage(target)
        if q == "I":
            return self.current(target)
        raise InputError("argument", None, "quantity", quantity, "expected V or I")

    def _resolve(self, target: str) -> tuple[str, Any]:
        if not isinstance(target, str) or not target.strip():
            raise InputError("argument", None, "target", target, "expected a part or node name")
        try:
            what, obj = self.circuit.find(target)
        except KeyError:
            raise InputError(
                "argument", None, "target", target, "no part, source or node of that name"
            ) from None
        if what == "part" and obj.kind == "COUPLING":
            raise InputError(
                "argument",
                None,
                "target",
                target,
                "a coupling has no voltage or current; name one of its inductors",
            )
        return what, obj

    # ------------------------------------------------------------------------- power
    @property
    def element_power(self) -> np.ndarray:
        """``(F, E)`` average power absorbed by each element at each frequency (W)."""
        return self.system.element_power(
            self.x, self.freqs_hz, self.element_voltages, self.element_currents
        )

    def power(self, name: str) -> float:
        """Average power absorbed by a part or source over all frequencies (W)."""
        what, obj = self._resolve(name)
        if what == "node":
            raise InputError("argument", None, "part", name, "power needs a part or source name")
        return float(self.element_power[:, self._elem_index[obj.name.lower()]].sum())

    def power_balance(self) -> tuple[float, float, float]:
        """``(delivered, absorbed, residual)`` in W: delivered is minus the sum of the
        negative element powers, absorbed the sum of the positive ones (summed per
        element over frequency); the residual, absorbed − delivered, is round-off for a
        correct solution."""
        per = self.element_power.sum(axis=0)
        delivered = float(-per[per < 0].sum())
        absorbed = float(per[per > 0].sum())
        return delivered, absorbed, absorbed - delivered
