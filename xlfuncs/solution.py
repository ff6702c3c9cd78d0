"""Solved phasors and everything derived from them.

Axis order is fixed: **frequency first**. A :class:`Spectrum` holds complex peak
phasors of shape ``(F, ...)`` (cosine reference; DC is the 0 Hz entry, a signed real
value); its combined quantities reduce that first axis away.

Conventions (IEEE Std 1459-2010 for non-sinusoidal quantities):

* RMS of one tone: |X|/√2 for AC, |X| for DC; total RMS = √(Σ rms_k²).
* Average power: Σ over frequencies of V·I at DC and ½·Re(V·I*) for AC (products of
  different frequencies average to zero over a common period).
* THD (basis stated in :meth:`Spectrum.thd_result` and carried by it): √(Σ_{h=2..H}
  |X_h|²) / |X_1| over integer harmonics h of the fundamental, DC and interharmonics
  excluded, H = 50 by default (the range IEEE Std 519-2014 uses).
* True peak: sup |x(t)|, see :func:`true_peak` for the three methods and their accuracy.

No result leaves this module as NaN or infinity: undefined quantities (THD without a
fundamental, the crest factor of a zero signal) and overflowing ones are refused with a
one-line error.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np

from .circuit import Circuit
from .errors import InputError, NetworkError
from .solver import System

__all__ = [
    "PeakResult",
    "Solution",
    "Spectrum",
    "ThdResult",
    "common_period",
    "true_peak",
]

_HARMONIC_RTOL = 1e-6
_MAX_ORDER_EXACT = 1 << 16  # beyond this many harmonics of the common base, no common period
_MAX_DENOMINATOR = 1000
_COMMENSURATE_RTOL = 1e-9
_EXACT_RTOL = 1e-9  # accuracy promised by the "exact" and "supremum" methods
_POINTS_PER_PERIOD = 16  # samples per period of the highest tone on the exact path
_SAMPLE_BUDGET = 1 << 24  # samples of one call over all signals (exact path, ~0.3 s)
_CHUNK_SAMPLES = 1 << 21  # samples held in memory at once (16 MiB per float array)
_RELATION_SEARCH = 200_000  # coefficient vectors tried for an integer relation of 3+ bases
_TIE_RTOL = 1e-12
_REFINE_BATCH = 1 << 15  # candidate intervals refined at once


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
    if np.all(np.abs(ratio - np.rint(ratio)) <= _COMMENSURATE_RTOL * ratio):
        qbest = 1  # the common case: harmonics of the lowest tone
    else:
        q = np.arange(2, _MAX_DENOMINATOR + 1)[:, None]
        scaled = q * ratio[None, :]
        ok = np.all(np.abs(scaled - np.rint(scaled)) <= _COMMENSURATE_RTOL * scaled, axis=1)
        if not ok.any():
            return None
        qbest = int(q[np.argmax(ok), 0])
    base = fmin / qbest
    orders = np.rint(f / base).astype(np.int64)
    if orders.max() > _MAX_ORDER_EXACT:
        return None
    return base, orders


# ------------------------------------------------------------------------------ true peak
@dataclass(frozen=True)
class PeakResult:
    """Result of :func:`true_peak` (arrays shaped like the signals, or floats).

    Attributes
    ----------
    value : numpy.ndarray or float
        ``"exact"``: max |x(t)| over time; ``"supremum"``: the least upper bound of
        |x(t)| over all time; ``"bound"``: an upper bound of it.
    time_s : numpy.ndarray or float
        A time at which |x(t)| equals ``reached`` (within one common period when there
        is one).
    method : str
        ``"exact"``: the tones share a common period; the global maximum over it, to a
        relative 1e-9. ``"supremum"``: the tones form several commensurate families
        (within a family every frequency is a whole multiple of one base; see
        :func:`true_peak`) whose bases are rationally independent: over all time |x(t)|
        comes arbitrarily close to ``max(dc + Σ max g_k, −dc − Σ min g_k)`` over the
        families' waveforms g_k, and never exceeds it; that value is exact (1e-9), though
        perhaps never attained. ``"bound"``: an upper bound only; ``accuracy`` states how
        far above a value the waveform is known to reach it may be. The method is the
        weakest over all signals of one call.
    reached : numpy.ndarray or float
        A value |x(t)| is known to reach (at ``time_s``): ``value`` for ``"exact"``.
    accuracy : numpy.ndarray or float
        Relative accuracy of ``value``: 1e-9 for ``"exact"`` and ``"supremum"``; for
        ``"bound"``, (value − reached)/value (at least 1e-9).
    families : int
        Number of commensurate tone families (1 when the tones share a period).
    """

    value: Any
    time_s: Any
    method: str
    reached: Any = None
    accuracy: Any = _EXACT_RTOL
    families: int = 1

    def describe(self, index: int | None = None) -> str:
        """Short text of the basis of the value (for one signal with ``index``)."""
        if self.method == "exact":
            return "peak exact"
        if self.method == "supremum":
            return f"peak supremum ({self.families} independent tone families)"
        acc = np.asarray(self.accuracy, dtype=float)
        a = float(acc.reshape(-1)[index] if index is not None else acc.max())
        if a <= _EXACT_RTOL:
            return "peak upper bound (reached to 1e-9)"
        return f"peak upper bound (at most {_pct(a)} above a value reached)"


def _pct(a: float) -> str:
    pct = 100 * a
    return f"{pct:.2g} %" if pct >= 0.01 else f"{pct:.1e} %"


@dataclass
class _Extrema:
    """Per signal, for g and for −g: best value reached, its phase, an upper bound."""

    vmax: np.ndarray
    tmax: np.ndarray
    umax: np.ndarray
    vmin: np.ndarray  # max of −g
    tmin: np.ndarray
    umin: np.ndarray
    exact: bool


def true_peak(freqs_hz: np.ndarray, phasors: np.ndarray) -> PeakResult:
    """sup |x(t)| of x(t) = Σ Re(X_k e^{j2πf_k t}) for ``phasors`` shaped ``(F, ...)``.

    Method. The AC tones are grouped into commensurate families: within a family every
    frequency is a whole multiple (≤ 65536) of one base, found with a denominator ≤ 1000
    within a relative 1e-9 (:func:`common_period`). For each family and each signal the
    maximum and minimum of its waveform over one base period are found globally: samples
    at ≥ 16 points per period of the highest tone (one inverse FFT) locate every interval
    that can hold the extremum (a sample within half a step of it is within
    Σh²|X|·δ²/8 of it and has a small slope), and each such interval is searched by
    safeguarded Newton steps on the exact trigonometric sum. One family: the global
    maximum over the common period (``"exact"``, relative 1e-9). Several families whose
    bases admit no integer relation (pairwise: no ratio p/q with q ≤ 1000; for three or
    more, none with small coefficients either): by Kronecker's theorem the families'
    phases fill their torus densely, so the supremum is ``max(dc + Σ max g_k, −dc − Σ
    min g_k)`` (``"supremum"``). Otherwise (bases related, or more samples needed than
    the budget of 2**24 per call) the value is an upper bound (``"bound"``) from coarser
    direct sampling, |DC| + Σ|X| at worst, with its accuracy stated against a value the
    waveform reaches. Work and memory are bounded: signals are processed in chunks of
    at most 2**21 samples.
    """
    f = np.asarray(freqs_hz, dtype=float).reshape(-1)
    x = np.asarray(phasors, dtype=complex)
    tail = x.shape[1:]
    xf = x.reshape(f.size, -1)
    k = xf.shape[1]
    is_dc = f == 0
    dc = xf[is_dc].real.sum(axis=0) if is_dc.any() else np.zeros(k)
    ac = np.flatnonzero(f > 0)
    if ac.size == 0 or k == 0:
        val = np.abs(dc)
        return _shaped(val, np.zeros(k), "exact", val, np.full(k, _EXACT_RTOL), 1, tail)
    fams = _families(f[ac])
    budget = max(1, _SAMPLE_BUDGET // len(fams))
    ext = [_family_extrema(orders, xf[ac[idx]], budget) for _base, idx, orders in fams]
    pos = dc + sum(e.vmax for e in ext)
    neg = -dc + sum(e.vmin for e in ext)
    if len(fams) == 1:
        e, base = ext[0], fams[0][0]
        use_pos = pos >= neg
        reached = np.where(use_pos, pos, neg)
        theta = np.where(use_pos, e.tmax, e.tmin)
        t = np.mod(theta, 2 * np.pi) / (2 * np.pi * base)
        if e.exact:
            return _shaped(reached, t, "exact", reached, np.full(k, _EXACT_RTOL), 1, tail)
        upper = np.maximum(dc + e.umax, -dc + e.umin)
        return _bound(upper, reached, t, 1, tail)
    reached, t = _reached(f, xf, fams, ext)
    sup = np.maximum(pos, neg)
    exact = all(e.exact for e in ext)
    if exact and not _related([b for b, _i, _o in fams]):
        return _shaped(sup, t, "supremum", reached, np.full(k, _EXACT_RTOL), len(fams), tail)
    upper = np.maximum(dc + sum(e.umax for e in ext), -dc + sum(e.umin for e in ext))
    return _bound(upper, reached, t, len(fams), tail)


def _shaped(
    value: np.ndarray,
    t: np.ndarray,
    method: str,
    reached: np.ndarray,
    acc: np.ndarray,
    families: int,
    tail: tuple[int, ...],
) -> PeakResult:
    def sh(a: np.ndarray) -> Any:
        return np.asarray(a, dtype=float).reshape(tail)[()]

    return PeakResult(sh(value), sh(t), method, sh(reached), sh(acc), families)


def _bound(
    upper: np.ndarray, reached: np.ndarray, t: np.ndarray, families: int, tail: tuple[int, ...]
) -> PeakResult:
    upper = np.maximum(upper, reached)
    with np.errstate(invalid="ignore", divide="ignore"):
        acc = np.where(upper > 0, (upper - reached) / np.where(upper > 0, upper, 1.0), 0.0)
    return _shaped(upper, t, "bound", reached, np.maximum(acc, _EXACT_RTOL), families, tail)


def _families(f_ac: np.ndarray) -> list[tuple[float, np.ndarray, np.ndarray]]:
    """``(base_hz, indices into f_ac, integer orders)`` per commensurate family."""
    cp = common_period(f_ac)
    if cp is not None:
        return [(cp[0], np.arange(f_ac.size), cp[1])]
    groups: list[list[int]] = []
    for i in np.argsort(f_ac, kind="stable").tolist():
        for g in groups:
            if common_period(f_ac[[*g, i]]) is not None:
                g.append(i)
                break
        else:
            groups.append([i])
    merged = True
    while merged and len(groups) > 1:  # two families may share a base found later
        merged = False
        for a, b in itertools.combinations(range(len(groups)), 2):
            if common_period(f_ac[groups[a] + groups[b]]) is not None:
                groups[a] += groups.pop(b)
                merged = True
                break
    out = []
    for g in groups:
        idx = np.array(sorted(g), dtype=int)
        res = common_period(f_ac[idx])
        assert res is not None
        out.append((res[0], idx, res[1]))
    return out


def _related(bases: list[float]) -> bool:
    """True when the family bases admit an integer relation Σ n_k b_k = 0 that we can
    see: a ratio p/q with q ≤ 1000 (any p) for two bases; small coefficients (a search
    of 2e5 coefficient vectors) for three or more."""
    b = np.sort(np.asarray(bases, dtype=float))
    if b.size < 2:
        return False
    q = np.arange(1, _MAX_DENOMINATOR + 1)
    for i, j in itertools.combinations(range(b.size), 2):
        s = q * (b[j] / b[i])
        if np.any(np.abs(s - np.rint(s)) <= _COMMENSURATE_RTOL * s):
            return True
    if b.size == 2:
        return False
    kk = b.size - 1
    lim = max(1, int((_RELATION_SEARCH ** (1.0 / kk) - 1) // 2))
    coef = np.array(list(itertools.product(range(-lim, lim + 1), repeat=kk)), dtype=float)
    coef = coef[np.any(coef != 0, axis=1)]
    partial = coef @ b[:kk]
    last = -partial / b[kk]
    scale = np.abs(coef) @ b[:kk]
    near = np.abs(last - np.rint(last)) * b[kk] <= _COMMENSURATE_RTOL * scale
    return bool(np.any(near))


def _family_extrema(orders: np.ndarray, x: np.ndarray, budget: int) -> _Extrema:
    """Max and min over θ ∈ [0, 2π) of g(θ) = Re Σ X_h e^{jhθ} for each column of ``x``
    (``orders`` ≥ 1, shape (F,); ``x`` shape (F, K))."""
    h = orders.astype(float)
    k = x.shape[1]
    if orders.size == 1:  # one tone: |X| both ways, in closed form
        mag = np.abs(x[0])
        tmax = np.mod(-np.angle(x[0]), 2 * np.pi) / h[0]
        return _Extrema(mag, tmax, mag, mag, tmax + np.pi / h[0], mag, True)
    nmax = int(orders.max())
    m = 1 << max(6, math.ceil(math.log2(_POINTS_PER_PERIOD * (nmax + 1))))
    if m * k <= budget:
        return _extrema_fft(h, x, m)
    return _extrema_sampled(h, x, max(64, budget // max(k, 1)))


def _extrema_fft(h: np.ndarray, x: np.ndarray, m: int) -> _Extrema:
    """Global extrema on the exact path (samples by inverse FFT, then refinement)."""
    k = x.shape[1]
    vmax, tmax, vmin, tmin = np.empty(k), np.empty(k), np.empty(k), np.empty(k)
    d2 = (h[:, None] ** 2 * np.abs(x)).sum(axis=0)  # bound of |g''|
    delta = 2 * np.pi / m
    hi = h.astype(np.int64)
    unique = len(set(hi.tolist())) == hi.size
    ramp = 1j * np.arange(m // 2 + 1)
    # three spectra and three sample arrays at once: as much memory as four arrays of
    # _CHUNK_SAMPLES samples
    per = max(1, 2 * _CHUNK_SAMPLES // (3 * m))
    for c0 in range(0, k, per):
        c1 = min(k, c0 + per)
        xc = x[:, c0:c1]
        n = c1 - c0
        rows = np.arange(n)
        # spectra of g, g' and g'' side by side: one inverse FFT gives all three
        spec = np.zeros((3, n, m // 2 + 1), dtype=complex)
        if unique:
            spec[0][:, hi] = xc.T * (m / 2)
        else:  # two frequencies of one order (merged within the tolerance): they add
            for j, hj in enumerate(hi.tolist()):
                spec[0][:, hj] += xc[j] * (m / 2)
        np.multiply(spec[0], ramp, out=spec[1])
        np.multiply(spec[1], ramp, out=spec[2])
        y, dy, d2y = np.fft.irfft(spec, n=m, axis=-1)  # each (n, m): g, g', g'' at θ_i = iδ
        del spec
        i_hi, i_lo = y.argmax(axis=1), y.argmin(axis=1)
        top, bottom = y[rows, i_hi], -y[rows, i_lo]
        dd = d2[c0:c1]
        slack = dd * delta**2 / 8
        slope_ok = np.abs(dy) <= (dd * delta / 2)[:, None]
        ck_hi, ci_hi = np.nonzero((y >= (top - slack)[:, None]) & slope_ok)
        ck_lo, ci_lo = np.nonzero((y <= (slack - bottom)[:, None]) & slope_ok)
        ck = np.concatenate([ck_hi, ck_lo])
        ci = np.concatenate([ci_hi, ci_lo])
        sign = np.concatenate([np.ones(ck_hi.size), -np.ones(ck_lo.size)])
        # one Newton step on the samples: a start close to each candidate's extremum
        g1s, g2s = dy[ck, ci] * sign, d2y[ck, ci] * sign
        jump = np.where(g2s < 0, -g1s / np.where(g2s < 0, g2s, -1.0), 0.0)
        start = ci * delta + np.clip(jump, -delta / 2, delta / 2)
        del y, dy, d2y, slope_ok
        best = np.concatenate([top, bottom])  # per (sign, signal): max of ±g
        best_t = np.concatenate([i_hi, i_lo]) * delta
        slot = np.where(sign > 0, ck, ck + n)
        for b0 in range(0, ci.size, _REFINE_BATCH):
            sl = slice(b0, b0 + _REFINE_BATCH)
            val, th = _refine(h, xc[:, ck[sl]], ci[sl] * delta, delta / 2, sign[sl], start[sl])
            bs = slot[sl]
            order = np.lexsort((val, bs))  # by slot, then by value
            sel = order[_group_last(bs[order])]  # the best candidate of each slot
            tgt = bs[sel]
            upd = val[sel] > best[tgt]
            best[tgt[upd]] = val[sel][upd]
            best_t[tgt[upd]] = th[sel][upd]
        vmax[c0:c1], vmin[c0:c1] = best[:n], best[n:]
        tmax[c0:c1], tmin[c0:c1] = best_t[:n], best_t[n:]
    return _Extrema(vmax, tmax, vmax, vmin, tmin, vmin, True)


def _group_last(sorted_groups: np.ndarray) -> np.ndarray:
    """Mask of the last entry of each run in an array sorted by group."""
    last = np.ones(sorted_groups.size, dtype=bool)
    last[:-1] = sorted_groups[1:] != sorted_groups[:-1]
    return last


def _extrema_sampled(h: np.ndarray, x: np.ndarray, m: int) -> _Extrema:
    """Bounded-work fallback: ``m`` direct samples per signal, the best refined; the
    upper bound is min(Σ|X|, best sample + Σh²|X|·δ²/8)."""
    k = x.shape[1]
    delta = 2 * np.pi / m
    d2 = (h[:, None] ** 2 * np.abs(x)).sum(axis=0)
    total = np.abs(x).sum(axis=0)
    cols = np.arange(k)
    step = max(1, min(m, _CHUNK_SAMPLES // max(k, h.size)))
    top, t_top = np.full(k, -np.inf), np.zeros(k)
    bottom, t_bottom = np.full(k, -np.inf), np.zeros(k)
    xt = x.T
    for r0 in range(0, m, step):
        th = np.arange(r0, min(m, r0 + step)) * delta
        y = (xt @ np.exp(1j * h[:, None] * th[None, :])).real  # (K, rows)
        i, j = y.argmax(axis=1), y.argmin(axis=1)
        v, w = y[cols, i], -y[cols, j]
        up, dn = v > top, w > bottom
        top[up], t_top[up] = v[up], th[i[up]]
        bottom[dn], t_bottom[dn] = w[dn], th[j[dn]]
    res = []
    for sign, ms, t0 in ((1.0, top, t_top), (-1.0, bottom, t_bottom)):
        val, th = _refine(h, x, t0, delta, sign)
        better = val > ms
        upper = np.minimum(total, ms + d2 * delta**2 / 8)
        res.append((np.where(better, val, ms), np.where(better, th, t0), upper))
    (vmax, tmax, umax), (vmin, tmin, umin) = res
    return _Extrema(vmax, tmax, umax, vmin, tmin, umin, False)


def _refine(
    h: np.ndarray,
    x: np.ndarray,
    theta0: np.ndarray,
    half: float,
    sign: Any,
    start: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Maximise sign·g over [θ0 − half, θ0 + half] for each column of ``x`` (one per
    candidate; ``sign`` ±1, scalar or per candidate); returns (value, θ).

    Safeguarded Newton steps from ``start`` (default θ0). Where the result is not proven
    to be the interval's maximum — g'' + Σh³|X|·2·half < 0 there makes g concave on the
    whole interval — the search is repeated from three starts and the best kept."""
    if theta0.size == 0:
        return np.zeros(0), np.zeros(0)
    xs = x.T * np.reshape(sign, (-1, 1))  # (C, F): maximise Re Σ xs e^{jhθ}
    lo, hi = theta0 - half, theta0 + half
    th0 = theta0 if start is None else start
    val, th, g2 = _newton(h, xs, th0, lo, hi, half)
    d3 = (np.abs(xs) * h**3).sum(axis=1)
    doubt = np.flatnonzero(g2 + d3 * 2 * half >= 0)
    if doubt.size:
        c = doubt.size
        offs = np.array([0.0, -2.0 / 3.0, 2.0 / 3.0]) * half
        ths = (theta0[doubt][None, :] + offs[:, None]).reshape(-1)
        v3, t3, _g = _newton(
            h,
            np.tile(xs[doubt], (3, 1)),
            ths,
            np.tile(lo[doubt], 3),
            np.tile(hi[doubt], 3),
            half,
        )
        v3, t3 = v3.reshape(3, c), t3.reshape(3, c)
        pick = v3.argmax(axis=0)
        cols = np.arange(c)
        better = v3[pick, cols] > val[doubt]
        val[doubt[better]] = v3[pick, cols][better]
        th[doubt[better]] = t3[pick, cols][better]
    return val, th


def _newton(
    h: np.ndarray,
    xs: np.ndarray,
    th: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    half: float,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Safeguarded Newton ascent of g(θ) = Re Σ xs e^{jhθ} (rows of ``xs``) within
    [lo, hi]; an ascent step where g is not concave. Returns the best value met, its θ
    and g'' there."""
    # columns of Re(z @ w): g, −g' and g'' (one complex product per step)
    w = np.empty((h.size, 3), dtype=complex)
    w[:, 0] = 1.0
    w[:, 1] = -1j * h
    w[:, 2] = -h * h
    jh = 1j * h
    best_v = np.full(th.size, -np.inf)
    best_t = th.copy()
    best_g2 = np.zeros(th.size)
    quarter = half / 4
    for _ in range(12):
        g = ((xs * np.exp(np.multiply.outer(th, jh))) @ w).real
        g0, neg_g1, g2 = g[:, 0], g[:, 1], g[:, 2]
        upd = g0 > best_v
        best_v = np.where(upd, g0, best_v)
        best_t = np.where(upd, th, best_t)
        best_g2 = np.where(upd, g2, best_g2)
        concave = g2 < 0
        # Newton where concave, else an ascent step of a quarter of the half-width
        step = np.sign(neg_g1) * -quarter
        np.divide(neg_g1, g2, out=step, where=concave)
        new = np.minimum(np.maximum(th + step, lo), hi)
        # a step below 1e-10 rad changes g by ~g''·1e-20 at a maximum: converged
        if np.abs(new - th).max() <= 1e-10:
            break
        th = new
    return best_v, best_t, best_g2


def _reached(
    f: np.ndarray,
    xf: np.ndarray,
    fams: list[tuple[float, np.ndarray, np.ndarray]],
    ext: list[_Extrema],
) -> tuple[np.ndarray, np.ndarray]:
    """A value |x(t)| reaches and its time, for several families: the waveform at the
    families' extremum times and at each one shifted to the nearest extremum of every
    other family (exact evaluation)."""
    k = xf.shape[1]
    times = []
    for sign_key in ("max", "min"):
        own = [
            np.mod(getattr(e, "t" + sign_key), 2 * np.pi) / (2 * np.pi * b)
            for (b, _i, _o), e in zip(fams, ext, strict=True)
        ]
        times += own
        for j, tj in enumerate(own):
            for i2, (b, _i, _o) in enumerate(fams):
                if i2 != j:  # family i2 shifted by whole periods next to family j
                    ti = own[i2]
                    shifted = ti + np.rint((tj - ti) * b) / b
                    times.append(np.where(shifted < 0, shifted + 1 / b, shifted))
    t = np.stack(times)  # (T, K)
    ph = np.exp(2j * np.pi * t[:, :, None] * f[None, None, :])  # (T, K, F)
    vals = np.abs(np.einsum("tkf,fk->tk", ph, xf).real)
    best = vals.argmax(axis=0)
    cols = np.arange(k)
    return vals[best, cols], t[best, cols]


# ---------------------------------------------------------------------------------- THD
@dataclass(frozen=True)
class ThdResult:
    """Result of :meth:`Spectrum.thd_result`; converts to a float (``float(r)``) or an
    array.

    Attributes
    ----------
    value : numpy.ndarray or float
        THD (or TDD with a reference) as a fraction, 0.05 = 5 %.
    fundamental_hz : float
        The fundamental the harmonic orders count from.
    assumed : bool
        True when no ``fundamental_hz`` was given and the lowest source frequency was
        taken (only where that tone is also the signal's largest).
    max_order : int
        Highest harmonic counted.
    tdd : bool
        True when a demand reference replaced |X_1| (TDD).
    """

    value: Any
    fundamental_hz: float
    assumed: bool
    max_order: int
    tdd: bool = False

    @property
    def basis(self) -> str:
        """One line stating the basis, for display next to the value."""
        src = (
            "assumed: the lowest tone, also the largest" if self.assumed else "from fundamental_hz"
        )
        den = "the demand reference (TDD)" if self.tdd else "the fundamental"
        return (
            f"harmonics 2…{self.max_order} of {self.fundamental_hz:g} Hz ({src}) over {den}; "
            "DC and interharmonics excluded"
        )

    def __float__(self) -> float:
        return float(np.asarray(self.value))

    def __array__(self, dtype: Any = None, copy: Any = None) -> np.ndarray:
        return np.asarray(self.value, dtype=dtype)


# ------------------------------------------------------------------------------- spectrum
# relative size (against the largest tone of the same signal) at or below which a tone is
# zero to the accuracy of the solve (every answer's backward error is at most 1e-11, see
# xlfuncs.solver), so that its phase is not reported
PHASE_FLOOR = 1e-10


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
        self._peak: PeakResult | None = None

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
        """Phase of each tone in degrees, cosine reference; DC: 0 or 180.

        A tone that is zero to the solve's accuracy — at most ``PHASE_FLOOR`` (1e-10) times
        the largest tone of the same signal, as a tone cancelled between two sources is —
        has phase 0, as an exact zero has: its angle would be that of the rounding error.
        """
        ph = np.degrees(np.angle(self.phasors))
        mag = np.abs(self.phasors)
        top = mag.max(axis=0, keepdims=True) if mag.size else mag
        ph = np.where(mag <= PHASE_FLOOR * top, 0.0, ph)
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
        with np.errstate(over="ignore"):
            out = np.sqrt((self.rms**2).sum(axis=0))
        return self._finite(out, "RMS")[()]

    def true_peak(self) -> PeakResult:
        """sup |x(t)| with its method and accuracy (see :func:`true_peak`)."""
        if self._peak is None:
            self._peak = true_peak(self.freqs_hz, self.phasors)
            self._finite(self._peak.value, "peak")
        return self._peak

    @property
    def crest_factor(self) -> np.ndarray | float:
        """True peak / total RMS (a bound when the peak is one; see :meth:`true_peak`)."""
        rms = np.asarray(self.rms_total)
        if np.any(rms == 0):
            raise InputError(
                "argument",
                None,
                None,
                self.label,
                "the crest factor of a zero signal is undefined (its RMS is 0)",
            )
        return (np.asarray(self.true_peak().value) / rms)[()]

    def fundamental(self, fundamental_hz: float | None = None) -> tuple[float, bool]:
        """``(f1, assumed)``: the fundamental THD and harmonic orders count from.

        ``fundamental_hz`` (else the options') when given. Otherwise the documented
        rule: the lowest non-zero frequency, accepted only where that tone is at least
        as large as every other AC tone of each signal (else refused: a subharmonic, an
        interharmonic or a resonance would be taken for the fundamental).
        """
        f1 = fundamental_hz or self.fundamental_hz
        if f1 is not None:
            return float(f1), False
        ac = self.freqs_hz > 0
        if not ac.any():
            raise InputError(
                "argument", None, None, self.label, "THD needs an AC tone; the signal is DC only"
            )
        i1 = int(np.flatnonzero(ac)[np.argmin(self.freqs_hz[ac])])
        mag = np.abs(self.phasors[ac]).reshape(int(ac.sum()), -1)
        first = np.abs(self.phasors[i1]).reshape(-1)
        big = mag.max(axis=0)
        bad = np.flatnonzero(first < big * (1 - _TIE_RTOL))
        if bad.size:
            col = int(bad[0])
            fbig = float(self.freqs_hz[ac][int(mag[:, col].argmax())])
            raise InputError(
                "options",
                None,
                "fundamental_hz",
                expected=f"THD of {self.label or 'the signal'}: no fundamental_hz given, and "
                f"the lowest tone ({self.freqs_hz[i1]:g} Hz) is not the largest "
                f"({fbig:g} Hz is); give fundamental_hz in the options",
            )
        return float(self.freqs_hz[i1]), True

    def thd(
        self,
        fundamental_hz: float | None = None,
        max_order: int | None = None,
        reference: float | None = None,
    ) -> np.ndarray | float:
        """Total harmonic distortion as a fraction (0.05 = 5 %): the value of
        :meth:`thd_result`, which also says which fundamental was used."""
        value: np.ndarray | float = self.thd_result(fundamental_hz, max_order, reference).value
        return value

    def thd_result(
        self,
        fundamental_hz: float | None = None,
        max_order: int | None = None,
        reference: float | None = None,
    ) -> ThdResult:
        """Total harmonic distortion as a fraction (0.05 = 5 %), with its basis.

        Basis: √(Σ_{h=2..max_order} |X_h|²) / |X_1|, integer harmonics of the
        fundamental only; DC and interharmonics excluded (IEEE Std 519-2014 definition).
        ``reference`` replaces |X_1| (as an RMS value) to get TDD against a demand
        current I_L. The fundamental: ``fundamental_hz``, else the options', else the rule
        of :meth:`fundamental` (the result says which). Refused where undefined: no tone
        or a zero tone at the fundamental.
        """
        f1, assumed = self.fundamental(fundamental_hz)
        hmax = int(max_order or self.thd_max_order)
        order = self.freqs_hz / f1
        near = np.abs(order - np.rint(order)) <= _HARMONIC_RTOL * np.maximum(order, 1)
        h = np.rint(order)
        rms = self.rms
        fund = near & (h == 1)
        harm = near & (h >= 2) & (h <= hmax)
        num = np.sqrt((rms[harm] ** 2).sum(axis=0))
        if reference is not None:
            den = np.asarray(reference, dtype=float)
            if not (np.all(np.isfinite(den)) and np.all(den > 0)):
                raise InputError(
                    "argument", None, "reference", reference, "expected a demand value > 0"
                )
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
            if np.any(den == 0):
                raise InputError(
                    "argument",
                    None,
                    None,
                    self.label,
                    f"THD is undefined: the signal is zero at the fundamental ({f1:g} Hz)",
                )
        value = self._finite(num / den, "THD")[()]
        return ThdResult(value, f1, assumed, hmax, reference is not None)

    def waveform(self, times_s: np.ndarray) -> np.ndarray:
        """x(t) at ``times_s`` (shape ``(T,)``) → ``(T, ...)``; times must be finite."""
        t = np.asarray(times_s, dtype=float)
        if not np.all(np.isfinite(t)):
            bad = float(t.reshape(-1)[np.argmax(~np.isfinite(t.reshape(-1)))])
            raise InputError("argument", None, "times_s", bad, "expected finite times in s")
        fmax = float(np.max(self.freqs_hz)) if self.freqs_hz.size else 0.0
        if t.size and fmax * float(np.max(np.abs(t))) > 1e9:
            # beyond 1e9 periods the angle 2π·f·t keeps less than ~1e-6 rad of accuracy
            raise InputError(
                "argument", None, "times_s", float(np.max(np.abs(t))),
                "more than 1e9 periods of the highest tone from t = 0: the tones' phases "
                "are lost in double precision there; shift the time origin",
            )  # fmt: skip
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

    def _finite(self, value: Any, what: str) -> np.ndarray:
        arr = np.asarray(value, dtype=float)
        if not np.all(np.isfinite(arr)):
            raise NetworkError(
                f"the {what} of {self.label or 'a signal'} overflows double precision "
                "(values or gains far beyond physical ranges)"
            )
        return arr

    def __repr__(self) -> str:
        return f"Spectrum({self.label!r}, {self.freqs_hz.size} frequencies)"


# ------------------------------------------------------------------------------- solution
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
        Every two-terminal element: parts (couplings excluded), then sources. Computed
        on first use.
    """

    def __init__(self, system: System, freqs_hz: np.ndarray, x: np.ndarray) -> None:
        self.system = system
        self.circuit: Circuit = system.circuit
        self.freqs_hz = np.asarray(freqs_hz, dtype=float)
        self.x = x
        self.node_voltages = x[:, : system.n_nodes]
        self.element_names = system.elem_names
        self.element_kinds = system.elem_kinds

    @cached_property
    def element_voltages(self) -> np.ndarray:
        return self.system.element_voltages(self.x)

    @cached_property
    def element_currents(self) -> np.ndarray:
        return self.system.element_currents(self.x, self.freqs_hz)

    @cached_property
    def _elem_index(self) -> dict[str, int]:
        return {n.lower(): i for i, n in enumerate(self.element_names)}

    # ----------------------------------------------------------------------- signals
    def spectrum(self, ph: np.ndarray, label: str) -> Spectrum:
        """Wrap phasors shaped (F, ...) of this solution as a Spectrum."""
        o = self.circuit.options
        return Spectrum(self.freqs_hz, ph, label, o.fundamental_hz, o.thd_max_order)

    def _element(self, obj: Any, what: str) -> Spectrum:
        e = self._elem_index[obj.name.lower()]
        if what == "V":
            data = self.system.element_voltages(self.x, only=[e])[:, 0]
        else:
            data = self.system.element_currents(self.x, self.freqs_hz, only=[e])[:, 0]
        return self.spectrum(data, f"{what}({obj.name})")

    def voltage(self, target: str) -> Spectrum:
        """Voltage of a node (against the reference) or of a part/source (from − to)."""
        return self._voltage(*self._resolve(target))

    def current(self, target: str) -> Spectrum:
        """Current through a part or source, flowing from its ``from`` to its ``to``."""
        return self._current(target, *self._resolve(target))

    def signal(self, target: str, quantity: str | None = None) -> Spectrum:
        """``quantity`` ``"V"`` or ``"I"``; default: current for a part, voltage for a node."""
        what, obj = self._resolve(target)
        q = (quantity or ("V" if what == "node" else "I")).strip().upper()
        if q == "V":
            return self._voltage(what, obj)
        if q == "I":
            return self._current(target, what, obj)
        raise InputError("argument", None, "quantity", quantity, "expected V or I")

    def _voltage(self, what: str, obj: Any) -> Spectrum:
        if what == "node":
            if obj == self.circuit.ground:
                return self.spectrum(np.zeros(self.freqs_hz.size, complex), f"V({obj})")
            i = self.circuit.nodes.index(obj)
            return self.spectrum(self.node_voltages[:, i], f"V({obj})")
        return self._element(obj, "V")

    def _current(self, target: str, what: str, obj: Any) -> Spectrum:
        if what == "node":
            raise InputError(
                "argument",
                None,
                "quantity",
                "I",
                f"{target!r} is a node; a current needs a part or source name",
            )
        return self._element(obj, "I")

    def _resolve(self, target: str) -> tuple[str, Any]:
        if not isinstance(target, str) or not target.strip():
            raise InputError("argument", None, "target", target, "expected a part or node name")
        what, obj = self.circuit.find(target, "target")
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
    @cached_property
    def element_power(self) -> np.ndarray:
        """``(F, E)`` average power absorbed by each element at each frequency (W)."""
        p = self.system.element_power(
            self.x, self.freqs_hz, self.element_voltages, self.element_currents
        )
        if not np.all(np.isfinite(p)):
            raise NetworkError(
                "element powers overflow double precision (values or gains far beyond "
                "physical ranges)"
            )
        return p

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
