"""Tolerance studies: Monte Carlo and worst-case corners, vectorised over samples.

Each part with a ``tolerance`` gets a value factor per sample: ``uniform`` on
[1 − tol, 1 + tol], or ``normal`` with σ = tol/3 (the tolerance band read as ±3σ, common
practice). Every matrix parameter is rebuilt from the factors (a coupling's mutual
inductance follows its two inductors), all samples × frequencies are stacked and solved
by batched LAPACK calls in chunks (threads share the chunks; numpy releases the GIL in
its linear-algebra loops), and the chosen result is evaluated for every sample at once.

Corners: with k ≤ 12 toleranced parts, all 2^k combinations of ±tol are evaluated
(``"exhaustive"``); above that, the two corners picked by the signs of the first-order
sensitivities (``"linearised"``), which are exact for monotone results only.
"""

from __future__ import annotations

import contextlib
import math
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..circuit import Circuit
from ..errors import InputError, NetworkError
from ..solution import Spectrum, true_peak
from ..solver import System, build_system, diagnose

__all__ = ["METRICS", "ToleranceResult", "tolerance_study"]

METRICS = ("rms", "peak", "peak_sum", "thd", "dc", "power", "var_sum", "resonance")
_MAX_EXHAUSTIVE = 12


@dataclass(frozen=True)
class ToleranceResult:
    """Outcome of :func:`tolerance_study`.

    Attributes
    ----------
    values : numpy.ndarray, shape (samples,)
        The result for every Monte Carlo sample.
    nominal : float
        The result with every part at its nominal value.
    corner_min, corner_max : float
        Extremes over the corners (NaN when no part has a tolerance).
    corner_method : str
        ``"exhaustive"``, ``"linearised"`` or ``"none"``.
    """

    metric: str
    label: str
    nominal: float
    values: np.ndarray
    corner_min: float
    corner_max: float
    corner_method: str
    toleranced: tuple[str, ...]

    def percentile(self, q: float) -> float:
        return float(np.percentile(self.values, q))

    def table(self, percentiles: tuple[float, ...] = (1, 5, 50, 95, 99)) -> list[list[Any]]:
        v = self.values
        rows: list[list[Any]] = [["statistic", "value"], ["nominal", self.nominal]]
        rows += [["mean", float(v.mean())], ["std", float(v.std(ddof=1)) if v.size > 1 else 0.0]]
        rows.append(["min", float(v.min())])
        rows += [[f"p{q:g}", self.percentile(q)] for q in percentiles]
        rows.append(["max", float(v.max())])
        rows.append([f"corner min ({self.corner_method})", self.corner_min])
        rows.append([f"corner max ({self.corner_method})", self.corner_max])
        rows.append(["samples", float(v.size)])
        return rows


class _Evaluator:
    """Evaluates one metric for stacks of parameter sets."""

    def __init__(
        self,
        system: System,
        target: str,
        quantity: str | None,
        metric: str,
        workers: int,
        chunk: int,
        resonance_span: float,
        blas_threads: int | None = 1,
    ) -> None:
        self.system = system
        self.blas_threads = blas_threads
        c = system.circuit
        self.metric = metric
        self.workers = workers
        self.chunk = chunk
        self.f = c.freqs_hz
        try:
            self.what, self.obj = c.find(target)
        except KeyError:
            raise InputError(
                "argument", None, "target", target, "no part, source or node of that name"
            ) from None
        q = (quantity or ("V" if self.what == "node" else "I")).upper()
        if q not in ("V", "I"):
            raise InputError("argument", None, "quantity", quantity, "expected V or I")
        if metric not in METRICS:
            raise InputError(
                "argument", None, "metric", metric, "expected one of " + ", ".join(METRICS)
            )
        if metric in ("power", "var_sum") and self.what == "node":
            raise InputError(
                "argument", None, "target", target, f"{metric} needs a part or source"
            )
        if metric == "resonance":
            if self.what != "node" or self.obj == c.ground:
                raise InputError(
                    "argument",
                    None,
                    "target",
                    target,
                    "a resonance needs a node other than the reference",
                )
            if c.options.fundamental_hz is None:
                raise InputError(
                    "argument",
                    None,
                    "metric",
                    metric,
                    "a resonance order needs fundamental_hz in the options",
                )
        if self.what == "node" and q == "I":
            raise InputError(
                "argument", None, "quantity", "I", f"{target!r} is a node; a current needs a part"
            )
        self.q = q
        self.label = f"{metric} of {q}({target})"
        self.span = resonance_span
        if metric != "resonance" and c.freqs_hz.size == 0:
            raise InputError("argument", None, "sources", None, "no source tones to evaluate")
        if self.what == "node":
            self.idx = c.nodes.index(self.obj) if self.obj != c.ground else -1
        else:
            self.e = system.elem_names.index(self.obj.name)

    # -------------------------------------------------------------------- solving
    def _solve(self, theta: np.ndarray, f: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """x of shape (S, F, n) for thetas (S, P) at f (F,) or (S, F); rhs (S|1, F, n).

        Chunks of samples go through :meth:`System.solve` (batched LU, every matrix's
        residual checked) on ``workers`` threads. Each chunk is a batch of small
        matrices, for which BLAS threads only compete with the worker threads: BLAS is
        held to one thread meanwhile (``make bench``: 10 000 samples × 10 frequencies ×
        20 nodes, see benchmarks/bench_studies.py for the figures with and without)."""
        s_ = theta.shape[0]
        out = np.empty((s_, *rhs.shape[1:]), dtype=complex)

        def work(lo: int) -> None:
            hi = min(lo + self.chunk, s_)
            ff = f[lo:hi] if f.ndim == 2 else f
            b = rhs if rhs.shape[0] == 1 else rhs[lo:hi]
            out[lo:hi] = self.system.solve(ff, rhs=b, theta=theta[lo:hi])

        starts = range(0, s_, self.chunk)
        try:
            with _blas_threads(self.blas_threads):
                if self.workers > 1 and s_ > self.chunk:
                    with ThreadPoolExecutor(self.workers) as pool:
                        list(pool.map(work, starts))
                else:
                    for lo in starts:
                        work(lo)
        except NetworkError as exc:
            raise InputError(
                "argument",
                None,
                "tolerance",
                None,
                f"a sample has no unique or accurate solution (the tolerances reach an "
                f"ideal resonance or a singular network): {exc}",
            ) from None
        return out

    def __call__(self, theta: np.ndarray) -> np.ndarray:
        if self.metric == "resonance":
            return self._resonance(theta)
        sysm = self.system
        rhs = sysm.rhs(self.f)[None]
        x = self._solve(theta, self.f, rhs)  # (S, F, n)
        if self.what == "node":
            sig = x[..., self.idx] if self.idx >= 0 else np.zeros(x.shape[:2], complex)
            v = sig
        else:
            v = sysm.element_voltages(x, only=[self.e])[..., 0]
            i = sysm.element_currents(x, self.f, theta, only=[self.e])[..., 0]
            sig = v if self.q == "V" else i
        spec = Spectrum(
            self.f,
            sig.T,
            fundamental_hz=sysm.circuit.options.fundamental_hz,
            thd_max_order=sysm.circuit.options.thd_max_order,
        )
        m = self.metric
        if m == "rms":
            return np.asarray(spec.rms_total)
        if m == "peak":
            return np.asarray(true_peak(self.f, sig.T).value)
        if m == "peak_sum":
            return np.abs(sig).sum(axis=1)
        if m == "thd":
            return np.asarray(spec.thd())
        if m == "dc":
            return np.asarray(spec.dc)
        w = np.where(self.f == 0, 1.0, 0.5)
        if m == "power":
            return (w * np.real(v * np.conj(i))).sum(axis=1)
        # var_sum: Σ V_rms·I_rms per tone (the kvar duty basis of IEEE Std 18)
        rms_w = np.where(self.f == 0, 1.0, 0.5)
        return (rms_w * np.abs(v) * np.abs(i)).sum(axis=1)

    def _resonance(self, theta: np.ndarray) -> np.ndarray:
        """Order of the parallel resonance nearest the nominal one, per sample."""
        sysm = self.system
        c = sysm.circuit
        f1 = c.options.fundamental_hz
        assert f1 is not None
        if not hasattr(self, "_f_nom"):
            from .resonance import find_resonances

            res = [
                r
                for r in find_resonances(c, self.obj, f1 * 0.5, f1 * 100, points=600)
                if r.kind == "parallel"
            ]
            if not res:
                raise InputError(
                    "argument",
                    None,
                    "target",
                    self.obj,
                    f"no parallel resonance between {0.5 * f1:g} and {100 * f1:g} Hz",
                )
            self._f_nom = max(res, key=lambda r: r.z_ohm).freq_hz
        grid = np.geomspace(self._f_nom / self.span, self._f_nom * self.span, 61)
        rhs = np.zeros((1, grid.size, sysm.n), complex)
        rhs[..., self.idx] = 1.0
        mag = np.abs(self._solve(theta, grid, rhs)[..., self.idx])  # (S, G)
        k = np.clip(mag.argmax(axis=1), 1, grid.size - 2)
        lo, hi = np.log(grid[k - 1]), np.log(grid[k + 1])
        g = (math.sqrt(5) - 1) / 2
        rhs1 = np.zeros((1, 1, sysm.n), complex)
        rhs1[..., self.idx] = 1.0

        def z(logf: np.ndarray) -> np.ndarray:
            return np.abs(self._solve(theta, np.exp(logf)[:, None], rhs1)[:, 0, self.idx])

        cpt, dpt = hi - g * (hi - lo), lo + g * (hi - lo)
        fc, fd = z(cpt), z(dpt)
        while np.max(hi - lo) > 1e-7:
            left = fc >= fd
            hi, lo = np.where(left, dpt, hi), np.where(left, lo, cpt)
            keep, fkeep = np.where(left, cpt, dpt), np.where(left, fc, fd)
            new = np.where(left, hi - g * (hi - lo), lo + g * (hi - lo))
            fnew = z(new)
            cpt, fc = np.where(left, new, keep), np.where(left, fnew, fkeep)
            dpt, fd = np.where(left, keep, new), np.where(left, fkeep, fnew)
        return np.exp(np.where(fc >= fd, cpt, dpt)) / f1


def _blas_threads(limit: int | None) -> Any:
    """Context that holds BLAS to ``limit`` threads (``None``: leave it as it is)."""
    if limit is None:
        return contextlib.nullcontext()
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=limit, user_api="blas")


def _theta(system: System, logfac: np.ndarray) -> np.ndarray:
    """Parameters for element value factors exp(logfac) of shape (S, E)."""
    d = np.zeros((len(system.elem_names), system.theta.size))
    for p, deps in enumerate(system.deps):
        for e, power in deps:
            d[e, p] += power
    return system.theta[None, :] * np.exp(logfac @ d)


def tolerance_study(
    parts: Any,
    sources: Any = None,
    options: Any = None,
    *,
    target: str,
    quantity: str | None = None,
    metric: str = "rms",
    samples: int = 10_000,
    seed: int = 0,
    corners: bool = True,
    workers: int = 2,
    chunk: int = 2048,
    resonance_span: float = 1.6,
    blas_threads: int | None = 1,
) -> ToleranceResult:
    """Spread of one result over the parts' tolerances.

    Parameters
    ----------
    target, quantity :
        As for :meth:`Solution.signal`; for ``metric="resonance"`` a node.
    metric : str
        ``rms``, ``peak`` (true peak), ``peak_sum`` (|DC| + Σ tone peaks, the IEEE Std 18
        peak-voltage basis), ``thd``, ``dc``, ``power`` (absorbed, W), ``var_sum``
        (Σ V_rms·I_rms per tone, the IEEE Std 18 kvar basis, in var) or ``resonance``
        (order of the parallel resonance at the node nearest the nominal one, searched
        within ``resonance_span`` × of it). Divide by a rating for a duty ratio.
    samples, seed :
        Monte Carlo size and random seed (results are reproducible for a given seed).
    workers, chunk, blas_threads :
        Worker threads, samples per batched solve, and BLAS threads while solving
        (default 1: each batch is many small matrices; ``None`` leaves BLAS alone).
    """
    circuit = parts if isinstance(parts, Circuit) else Circuit.from_tables(parts, sources, options)
    if not isinstance(samples, (int, np.integer)) or not 2 <= samples <= 1_000_000:
        raise InputError(
            "argument", None, "samples", samples, "expected a whole number 2 … 1000000"
        )
    system = build_system(circuit)
    diagnose(circuit, dc=bool(np.any(circuit.freqs_hz == 0)))
    ev = _Evaluator(system, target, quantity, metric, workers, chunk, resonance_span, blas_threads)
    parts_e = [p for p in circuit.parts if p.kind != "COUPLING"]
    n_e = len(system.elem_names)
    tol = np.zeros(n_e)
    normal = np.zeros(n_e, dtype=bool)
    for e, p in enumerate(parts_e):
        tol[e] = p.tolerance
        normal[e] = p.tol_dist == "normal"
    active = np.flatnonzero(tol > 0)

    nominal = float(ev(system.theta[None, :])[0])
    rng = np.random.default_rng(seed)
    fac = np.ones((samples, n_e))
    for e in active.tolist():
        if normal[e]:
            fac[:, e] = np.maximum(rng.normal(1.0, tol[e] / 3.0, samples), 1e-6)
        else:
            fac[:, e] = rng.uniform(1.0 - tol[e], 1.0 + tol[e], samples)
    values = ev(_theta(system, np.log(fac)))

    cmin = cmax = float("nan")
    method = "none"
    if corners and active.size:
        k = active.size
        if k <= _MAX_EXHAUSTIVE:
            signs = ((np.arange(2**k)[:, None] >> np.arange(k)[None, :]) & 1) * 2 - 1
            method = "exhaustive"
        else:
            # first-order sensitivities by forward differences, then the two extreme corners
            h = 1e-4
            probe = np.zeros((k + 1, n_e))
            probe[np.arange(1, k + 1), active] = math.log1p(h)
            r = ev(_theta(system, probe))
            sens = np.sign(r[1:] - r[0])
            sens[sens == 0] = 1
            signs = np.stack([sens, -sens])
            method = "linearised"
        lf = np.zeros((signs.shape[0], n_e))
        lf[:, active] = np.log1p(signs * tol[active][None, :])
        cv = ev(_theta(system, lf))
        cmin, cmax = float(cv.min()), float(cv.max())
    names = tuple(parts_e[e].name for e in active)
    return ToleranceResult(
        metric, ev.label, nominal, np.asarray(values), cmin, cmax, method, names
    )
