"""Modified nodal analysis over many frequencies, checked at every frequency.

Unknowns are the node voltages (reference excluded) followed by branch currents for
parts whose current cannot be written from node voltages: voltage sources, inductors,
VCVS, CCVS, ideal transformers (winding-1 current), and any part named as the control
of a current-controlled source. Every stamp is linear in one *parameter* θ times a
frequency factor φ(ω)::

    A(ω) = Σ_p θ_p · φ_p(ω) · P_p        φ ∈ {1, jω, 1/s(ω), s(ω)}

with P_p a pattern of ±1 entries and s(ω) = max(1, f/f₁)^x the optional resistance law
of a resistor. DC is therefore exact (inductors become zero-volt branches, capacitors
vanish). Each element kind's stamp is one small function registered in ``KINDS``; the
stamps are stored once as sparse ``(row, col, sign, param)`` entries and every solve
path assembles its matrices from them.

One entry, :meth:`System.solve`, serves every many-frequency caller. It streams the
frequencies in blocks (memory stays bounded for any number of frequencies) and picks
one of three paths from a measured cost model (see ``_choose_method``):

``"dense"``
    A(ω) assembled for a block of frequencies and solved by one batched LAPACK LU call.
``"pencil"``
    The pencil (A0, A1) of A(ω) = A0 + jω·A1 reduced once to generalised Schur form by
    QZ (cached on the System), then O(n²) work per frequency (A. J. Laub, IEEE Trans.
    Automatic Control 26(2), 1981).
``"sparse"``
    Compressed-column matrices per frequency factored by SuperLU
    (``scipy.sparse.linalg.splu``); the fill-reducing column ordering is computed once
    and re-used at every frequency (the pattern does not depend on ω).

Every answer is checked, whatever the path: rows and columns are first equilibrated
(powers of two, so the scaling is exact), and solvability and accuracy are judged on
the equilibrated system D_r·A·D_c. Per frequency the relative residual
η = ‖r‖∞ / (‖A‖∞‖x‖∞ + ‖b‖∞) of that system is computed (one sparse product); above
1e-12 the answer is improved by iterative refinement, and if that does not bring it
down, by an independent factorisation (a different LAPACK build or SuperLU) and
refinement again. What still misses 1e-11, or whose lower bound ‖A‖‖x‖/‖b‖ of the
condition number exceeds 1e13, is refused with an error naming the frequency — never
returned. Rigal–Gaches: η is the normwise backward error of the computed answer
(N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM 2002,
Thm 7.1); fixed-precision refinement is Higham ch. 12.

Why no kernel is trusted on its own: LU with partial pivoting is backward stable only
up to its pivot growth. MNA matrices ordered "node voltages, then branch currents"
are not banded, so on a long chain (a feeder of many sections) growth can in
principle build up from section to section as in the two-point boundary-value
matrices of S. J. Wright (SIAM J. Sci. Comput. 14(1), 1993). And the choice among
pivots is not unique: the ±1 incidence entries tie exactly, so the pivot sequence
depends on how a given LAPACK build searches the column (OpenBLAS replaces reference
LAPACK's getrf by its own recursive, threaded factorisation, and numpy and scipy
wheels each ship their own OpenBLAS build — here numpy's is a 0.3.31 development
snapshot, scipy's 0.3.30). A large residual from ``numpy.linalg.solve`` with a small
one from ``scipy.linalg.solve`` on the same matrix, as reported for a 2000-node feeder
at 300 Hz, is that difference; the cure is not to pick the "right" kernel but to
equilibrate (so that the pivot search compares like with like), measure the residual,
refine, and cross over to a second factorisation when needed.

Before any matrix is solved, the topology is checked (:mod:`xlfuncs.diagnosis`), so
that ill-posed networks produce a :class:`~xlfuncs.errors.NetworkError` naming nodes,
parts and frequency, never a bare ``LinAlgError``.
"""

from __future__ import annotations

import contextlib
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import Any, NoReturn

import numpy as np

from .circuit import FREQ_RTOL, Circuit
from .diagnosis import diagnose
from .errors import SingularNetworkError
from .tables import PartRow

__all__ = ["KINDS", "System", "build_system", "diagnose", "solve_stacked"]

# basis codes for φ(ω)
B_CONST, B_JW, B_INV_SCALE, B_SCALE = 0, 1, 2, 3

# --- accuracy policy (see the module docstring) ------------------------------------------
_REFINE_ABOVE = 1e-12  # relative residual above which an answer is refined
_REFUSE_ABOVE = 1e-11  # ... and above which, after refinement and a second kernel, refused
_NEAR_SINGULAR = 1e13  # ||A||·||x||/||b|| (a lower bound of cond) of the equilibrated system
_REFINE_TARGET = 1e-15  # once refining, go on while above this and still improving ×2
_MAX_REFINE = 5  # refinement steps per factorisation

# --- method choice: a cost model measured on random RLC ladders (the method of
# benchmarks/bench_solver.py, section (d), over n = 21 … 279 unknowns, two runs averaged),
# seconds on a 2-core machine (OpenBLAS). Measured per frequency, dense path (assembly,
# equilibration, batched LU, check): n = 21: 13–15 µs, 48: 50–104 µs, 100: 353–413 µs,
# 200: 1.54–1.72 ms, 279: 3.4–3.8 ms; QZ once: 0.5, 2.9, 18–22, 132–144, 395–470 ms; pencil
# path per frequency (back-substitution and check): 9, 20–22, 45–56, 96–126, 159–167 µs.
# This shared machine's timings vary up to 2× between runs; the fit is least squares
# relative to each measurement:
#   dense   per frequency  t = _LU_N3·n³ + _LU_N2·n² + _LU_N0
#   pencil  once           t = _QZ_N3·n³ + _QZ_N0
#           per frequency  t = _BS_N2·n² + _BS_N1·n + _BS_N0
# The pencil wins when F·(t_lu − t_bs) > t_qz: model break-even F ≈ 105 at n = 21, 50 at
# n = 48, 67 at n = 100, 99 at n = 200, 118 at n = 279 (measured 90–140, 34–105, 48–75,
# 83–100, 121–129). The old rule "F ≥ n/4" took the pencil at n = 200, F = 50, where
# batched LU is about twice as cheap.
_LU_N3, _LU_N2, _LU_N0 = 7.9e-11, 2.6e-8, 1.9e-6
_QZ_N3, _QZ_N0 = 1.93e-8, 3.2e-4
_BS_N2, _BS_N1, _BS_N0 = 6.3e-10, 4.0e-7, 6.5e-7
# sparse direct beats dense LU from a few hundred unknowns on (sparse) MNA matrices:
# measured on random RLC networks, per frequency: n = 100 sparse 495 µs vs dense 336 µs;
# n = 200: 995 µs vs 1.71 ms; n = 400: 3.7 ms vs 9.5 ms
_SPARSE_MIN_N = 200
_SPARSE_PIVOT = 1.0  # SuperLU diag_pivot_thresh on the sparse path: partial pivoting
# SuperLU's panel size and supernode relaxation on the sparse path (the same pivoting,
# smaller blocks): per factorisation, measured against SuperLU's defaults on the same
# matrices, interleaved, 0.43–0.47 of the time on the 5000-node feeder and 0.93–0.96 on
# the 5041-node grid (other pairs from 2 to 8 were no better)
_SPARSE_PANEL, _SPARSE_RELAX = 4, 4
# runs (rows or columns of A) up to this long are reduced entry index by entry index
# (see _Segments); MNA rows and columns mostly hold 2-5 entries
_SHORT_RUN = 8
_SCALE_EXP = 511  # equilibration scales stay within 2^±511 (see _pow2_inverse)
_SPARSE_MAX_DENSITY = 0.05  # a denser pattern stays on the dense path below _DENSE_MAX_N
_DENSE_MAX_N = 1500  # never allocate dense n×n matrices above this (memory)

_BLOCK_BYTES = 1 << 25  # 32 MiB of assembled dense matrices per block
_PENCIL_BLOCK = 2048  # frequencies per pencil block
_SPARSE_BLOCK = 32  # frequencies per block of assembled sparse values

# frequencies (Hz) at which a network found singular is probed again: singular at both
# (and at the frequency found) means singular at every frequency (the determinant, a
# polynomial in jω, vanishes identically); arbitrary values, away from round numbers
_PROBE_HZ = (17.320508075688775, 31622.776601683792)


@dataclass(frozen=True)
class _Pattern:
    """Structurally non-zero positions of A, in compressed-row order (row-wise sums
    are then contiguous segments), with the column-wise order for CSC."""

    urows: np.ndarray  # (U,) row of each position (non-decreasing)
    ucols: np.ndarray  # (U,) column of each position
    entry_order: np.ndarray  # (E,) entries sorted by position
    entry_starts: np.ndarray  # (U,) first entry of each position in entry_order
    row_starts: np.ndarray  # start of each non-empty row
    row_ids: np.ndarray  # the row of each of those runs
    col_order: np.ndarray  # (U,) positions in compressed-column order
    col_indptr: np.ndarray  # (n + 1,) column pointers into col_order
    col_starts: np.ndarray  # start of each non-empty column in col_order
    col_ids: np.ndarray  # the column of each of those runs
    dense_flat: np.ndarray  # (U,) index into a C-ordered n×n array


@dataclass(frozen=True)
class _Segments:
    """Reductions along axis 1 of ``(M, U)`` position values over runs of positions
    (the rows, or the columns, of A), into ``(M, n)`` (0 where a run is empty).

    ``ufunc.reduceat`` calls its inner loop once per run and matrix: on MNA rows of
    about three entries that was 5 ms for 25 matrices of the 5000-node feeder. Runs of
    at most ``_SHORT_RUN`` entries are reduced here, longest first, with one gather and
    one elementwise ufunc per entry index k over the runs that have a k-th entry (a
    leading slice, no fancy indexing; 1.7 ms there, line profile). A maximum is the
    same to the bit; a sum adds the same entries in another order (round-off of a few
    units in the last place). Longer runs (a node with many parts) go to reduceat."""

    n: int
    short_ids: np.ndarray  # output index of each short run
    # per entry index k: (how many short runs have a k-th entry: the first ones, as
    # they are ordered longest first; the position of that entry in each)
    steps: tuple[tuple[int, np.ndarray], ...]
    long_ids: np.ndarray  # output index of each long run
    long_pos: np.ndarray  # positions of the long runs, run after run
    long_starts: np.ndarray  # start of each long run in long_pos

    @classmethod
    def of(cls, pos: np.ndarray, starts: np.ndarray, ids: np.ndarray, n: int) -> _Segments:
        """Runs ``pos[starts[i]:starts[i + 1]]`` (the last to the end), reduced into
        output index ``ids[i]``."""
        lens = np.diff(np.append(starts, pos.size))
        short = np.flatnonzero(lens <= _SHORT_RUN)
        # longest first: the runs with a k-th entry are then the first ones (a slice)
        short = short[np.argsort(-lens[short], kind="stable")]
        s_starts, s_lens = starts[short], lens[short]
        steps = []
        for k in range(int(s_lens.max(initial=0))):
            count = int(np.count_nonzero(s_lens > k))
            steps.append((count, pos[s_starts[:count] + k]))
        long = lens > _SHORT_RUN
        l_starts, l_lens = starts[long], lens[long]
        offsets = (np.cumsum(l_lens) - l_lens).astype(np.int64)
        within = np.arange(int(l_lens.sum())) - np.repeat(offsets, l_lens)
        return cls(
            n=n,
            short_ids=ids[short],
            steps=tuple(steps),
            long_ids=ids[long],
            long_pos=pos[np.repeat(l_starts, l_lens) + within],
            long_starts=offsets,
        )

    def reduce(self, vals: np.ndarray, ufunc: Any) -> np.ndarray:
        out = np.zeros((vals.shape[0], self.n), dtype=vals.dtype)
        if self.steps:
            (_all, first), *rest = self.steps
            acc = np.take(vals, first, axis=1)
            for count, p in rest:
                head = acc[:, :count]
                ufunc(head, np.take(vals, p, axis=1), out=head)
            out[:, self.short_ids] = acc
        if self.long_pos.size:
            run = np.take(vals, self.long_pos, axis=1)
            out[:, self.long_ids] = ufunc.reduceat(run, self.long_starts, axis=1)
        return out


@dataclass(frozen=True)
class System:
    """The assembled MNA description of a circuit (frequency-independent parts).

    Attributes
    ----------
    n : int
        Number of unknowns.
    n_nodes : int
        The first ``n_nodes`` unknowns are node voltages, in ``circuit.nodes`` order.
    labels : tuple of str
        What each unknown is (a node name, then the part whose current it is).
    rows, cols, signs, param : numpy.ndarray
        Matrix entries: ``A[rows[e], cols[e]] += signs[e] * θ[param[e]] * φ[param[e]](ω)``.
    theta, basis, exponent : numpy.ndarray
        Per parameter: nominal value, basis code, resistance-law exponent.
    deps : tuple of tuple of (int, float)
        Per parameter, the element values it depends on as ``(element index, power)``:
        θ scales as Π factor**power when element values are varied (tolerance studies).
    src_incidence : numpy.ndarray
        ``(S, n)``: the right-hand side is ``tones (F, S) @ src_incidence``.
    elem_names, elem_kinds : tuple of str
        Two-terminal elements that carry a voltage and current: parts (couplings
        excluded) then independent sources.
    elem_plus, elem_minus : numpy.ndarray
        Unknown index of each element's ``from``/``to`` node (``n`` = reference).
    cur_elem, cur_index, cur_param, cur_sign, cur_src : numpy.ndarray
        Element currents: ``I_e = Σ sign·θφ·x[index]`` over terms ``t`` with
        ``cur_elem[t] == e``; ``cur_param == -1`` means a plain ``x[index]`` term;
        ``cur_src[e] >= 0`` marks an element whose current is that source's own tone.
    """

    circuit: Circuit
    n: int
    n_nodes: int
    labels: tuple[str, ...]
    rows: np.ndarray
    cols: np.ndarray
    signs: np.ndarray
    param: np.ndarray
    theta: np.ndarray
    basis: np.ndarray
    exponent: np.ndarray
    deps: tuple[tuple[tuple[int, float], ...], ...]
    param_elem: np.ndarray
    src_incidence: np.ndarray
    src_names: tuple[str, ...]
    elem_names: tuple[str, ...]
    elem_kinds: tuple[str, ...]
    elem_plus: np.ndarray
    elem_minus: np.ndarray
    cur_elem: np.ndarray
    cur_index: np.ndarray
    cur_param: np.ndarray
    cur_sign: np.ndarray
    cur_src: np.ndarray
    sec_plus: np.ndarray
    sec_minus: np.ndarray
    sec_ratio: np.ndarray

    # ------------------------------------------------------------------ frequency factors
    def phi(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F, P)`` complex frequency factor of every parameter."""
        f = np.asarray(freqs_hz, dtype=float).reshape(-1)
        out = np.ones((f.size, self.theta.size), dtype=complex)
        jw = 2j * np.pi * f
        out[:, self._is_jw] = jw[:, None]
        scaled = self._scaled
        if scaled.any():
            f1 = self.circuit.options.fundamental_hz
            if f1 is None:
                nz = self.circuit.freqs_hz[self.circuit.freqs_hz > 0]
                f1 = float(nz[0]) if nz.size else 1.0
            ratio = np.maximum(1.0, f / f1)
            s = ratio[:, None] ** self.exponent[None, scaled]
            out[:, scaled] = np.where(self.basis[scaled] == B_SCALE, s, 1.0 / s)
        return out

    @cached_property
    def _is_jw(self) -> np.ndarray:
        return self.basis == B_JW

    @cached_property
    def _scaled(self) -> np.ndarray:
        """Mask of the parameters that follow a resistance law."""
        return (self.basis == B_INV_SCALE) | (self.basis == B_SCALE)

    @property
    def has_frequency_law(self) -> bool:
        """True when some resistor follows R(f) = R·(f/f1)^x (A(ω) is then not affine)."""
        return bool(self._scaled.any())

    def _coef(self, f: np.ndarray, theta: np.ndarray | None) -> np.ndarray:
        """``(M, P)`` θ·φ for M matrices: ``f`` (M,), ``theta`` None, (P,) or (M, P)."""
        ph = self.phi(f)
        th = self.theta if theta is None else theta
        return ph * th

    # ---------------------------------------------------------------------- structure
    @cached_property
    def _pattern(self) -> _Pattern:
        n = self.n
        key = self.rows.astype(np.int64) * n + self.cols
        ukey, inv = np.unique(key, return_inverse=True)
        urows, ucols = ukey // n, ukey % n
        order = np.argsort(inv, kind="stable")
        si = inv[order]
        starts = np.flatnonzero(np.concatenate([[True], si[1:] != si[:-1]]))
        row_starts = np.flatnonzero(np.concatenate([[True], urows[1:] != urows[:-1]]))
        col_order = np.argsort(ucols, kind="stable")
        cs = ucols[col_order]
        col_starts = np.flatnonzero(np.concatenate([[True], cs[1:] != cs[:-1]]))
        return _Pattern(
            urows=urows,
            ucols=ucols,
            entry_order=order,
            entry_starts=starts,
            row_starts=row_starts,
            row_ids=urows[row_starts],
            col_order=col_order,
            col_indptr=np.searchsorted(cs, np.arange(n + 1)).astype(np.int64),
            col_starts=col_starts,
            col_ids=cs[col_starts],
            dense_flat=ukey,
        )

    @property
    def nnz(self) -> int:
        """Number of structurally non-zero entries of A(ω)."""
        return int(self._pattern.urows.size)

    def _values(self, coef: np.ndarray) -> np.ndarray:
        """``(M, U)`` values of A at its structural positions for coefficients (M, P)."""
        pats = self._dense_patterns
        if pats is not None and coef.shape[0] > 8:  # two real matrix products (BLAS)
            out = np.empty((coef.shape[0], pats.shape[1]), dtype=complex)
            out.real = coef.real @ pats
            out.imag = coef.imag @ pats
            return out
        pat = self._pattern
        eo = pat.entry_order
        ev = np.take(coef, self.param[eo], axis=1) * self.signs[eo]
        if ev.shape[1] == pat.entry_starts.size:  # no two entries share a position
            return ev
        return np.add.reduceat(ev, pat.entry_starts, axis=1)

    @cached_property
    def _dense_patterns(self) -> np.ndarray | None:
        """``(P, U)`` sign of each parameter at each position, when that is small."""
        pat = self._pattern
        if self.theta.size * pat.urows.size > 4_000_000:
            return None
        out = np.zeros((self.theta.size, pat.urows.size))
        pos = np.empty(self.param.size, dtype=np.int64)
        pos[pat.entry_order] = np.repeat(
            np.arange(pat.urows.size), np.diff(np.append(pat.entry_starts, self.param.size))
        )
        np.add.at(out, (self.param, pos), self.signs)
        return out

    def _row_reduce(self, vals: np.ndarray, ufunc: Any) -> np.ndarray:
        """``(M, n)`` reduction of position values (M, U) over each row (0 if empty)."""
        return self._row_runs.reduce(vals, ufunc)

    def _col_reduce(self, vals: np.ndarray, ufunc: Any) -> np.ndarray:
        """``(M, n)`` reduction of position values (M, U) over each column (0 if empty)."""
        return self._col_runs.reduce(vals, ufunc)

    @cached_property
    def _row_runs(self) -> _Segments:
        pat = self._pattern
        return _Segments.of(np.arange(pat.urows.size), pat.row_starts, pat.row_ids, self.n)

    @cached_property
    def _col_runs(self) -> _Segments:
        pat = self._pattern
        return _Segments.of(pat.col_order, pat.col_starts, pat.col_ids, self.n)

    def _matvec(self, vals: np.ndarray, x: np.ndarray) -> np.ndarray:
        """``(M, n)`` product A·x for position values (M, U) and vectors x (M, n)."""
        return self._row_reduce(vals * np.take(x, self._pattern.ucols, axis=1), np.add)

    def _dense(self, vals: np.ndarray) -> np.ndarray:
        """``(M, n, n)`` dense matrices from position values (M, U)."""
        out = np.zeros((vals.shape[0], self.n * self.n), dtype=complex)
        out[:, self._pattern.dense_flat] = vals
        return out.reshape(vals.shape[0], self.n, self.n)

    # --------------------------------------------------------------------------- matrix
    def matrices(self, freqs_hz: np.ndarray, theta: np.ndarray | None = None) -> np.ndarray:
        """Stacked dense MNA matrices ``(F, n, n)``; with ``theta`` of shape ``(S, P)``
        (one parameter set per sample) ``(S, F, n, n)``, and then ``freqs_hz`` may also be
        ``(S, F)`` (frequencies per sample). For small networks and tests: the solve
        paths never need this array."""
        f = np.asarray(freqs_hz, dtype=float)
        if theta is None:
            return self._dense(self._values(self._coef(f.reshape(-1), None)))
        th = np.asarray(theta, dtype=float)
        s_ = th.shape[0]
        ff = np.broadcast_to(f, (s_, f.shape[-1]))
        coef = self._coef(ff.reshape(-1), np.repeat(th, ff.shape[1], axis=0))
        return self._dense(self._values(coef)).reshape(s_, ff.shape[1], self.n, self.n)

    def sparse_matrix(self, freq_hz: float) -> Any:
        """A(ω) at one frequency as a ``scipy.sparse`` CSC matrix."""
        from scipy.sparse import csc_matrix

        v = self._values(self._coef(np.array([float(freq_hz)]), None))[0]
        pat = self._pattern
        co = pat.col_order
        return csc_matrix((v[co], pat.urows[co], pat.col_indptr), shape=(self.n, self.n))

    def rhs(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F, n)`` right-hand side from the sources' tones at ``freqs_hz``."""
        return self.tones(freqs_hz) @ self.src_incidence

    def tones(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F, S)`` complex peak phasor of each source at each frequency (0 if silent)."""
        f = np.asarray(freqs_hz, dtype=float).reshape(-1)
        own = self.circuit.freqs_hz
        if f is own or (f.shape == own.shape and np.array_equal(f, own)):
            return self._own_tones.copy()
        return self._tones(f)

    @cached_property
    def _own_tones(self) -> np.ndarray:
        """Tones at the circuit's own frequencies (sorted, distinct, and every tone's
        frequency is one of them; a source's tones are already merged per frequency, so
        each (frequency, source) pair occurs once)."""
        own = np.asarray(self.circuit.freqs_hz, dtype=float)
        src_idx, tone_f, tone_ph = self._tone_list
        pos = np.clip(np.searchsorted(own, tone_f), 0, max(own.size - 1, 0))
        if own.size == 0 or not np.array_equal(own[pos], tone_f):
            return self._tones(own)
        out = np.zeros((own.size, len(self.src_names)), dtype=complex)
        out[pos, src_idx] = tone_ph
        return out

    def _tones(self, f: np.ndarray) -> np.ndarray:
        out = np.zeros((f.size, len(self.src_names)), dtype=complex)
        src_idx, tone_f, tone_ph = self._tone_list
        if f.size == 0 or tone_f.size == 0:
            return out
        order = np.argsort(f, kind="stable")
        fs = f[order]
        tol = FREQ_RTOL * tone_f
        lo = np.searchsorted(fs, tone_f - tol, side="left")
        hi = np.searchsorted(fs, tone_f + tol, side="right")
        one = hi - lo == 1  # the usual case: each tone at exactly one listed frequency
        np.add.at(out, (order[lo[one]], src_idx[one]), tone_ph[one])
        for t in np.flatnonzero(hi - lo > 1):  # a frequency listed more than once
            out[order[lo[t] : hi[t]], src_idx[t]] += tone_ph[t]
        return out

    @cached_property
    def _tone_list(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        idx, fr, ph = [], [], []
        for s, src in enumerate(self.circuit.sources):
            for f, p in src.tones:
                idx.append(s)
                fr.append(f)
                ph.append(p)
        return np.array(idx, dtype=int), np.array(fr, dtype=float), np.array(ph, dtype=complex)

    @cached_property
    def _norm_parts(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Row sums of |entries| per basis, for a cheap bound of ||A(ω)||∞."""
        vals = np.abs(self.signs * self.theta[self.param])
        const = self.basis[self.param] == B_CONST
        jw = self.basis[self.param] == B_JW
        r0 = np.zeros(self.n)
        r1 = np.zeros(self.n)
        np.add.at(r0, self.rows[const], vals[const])
        np.add.at(r1, self.rows[jw], vals[jw])
        scaled = np.flatnonzero(self._scaled)
        rs = np.zeros((scaled.size, self.n))
        for k, p in enumerate(scaled):
            sel = self.param == p
            np.add.at(rs[k], self.rows[sel], vals[sel])
        return r0, r1, scaled, rs

    def norm_bound(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F,)`` upper bound of ||A(ω)||∞ (nominal values), O(F·n) work."""
        f = np.asarray(freqs_hz, dtype=float)
        r0, r1, scaled, rs = self._norm_parts
        rows = r0[None, :] + (2 * np.pi * f)[:, None] * r1[None, :]
        if scaled.size:
            rows = rows + np.abs(self.phi(f)[:, scaled]) @ rs
        return rows.max(axis=1)

    # ------------------------------------------------------------------------- extract
    def element_voltages(self, x: np.ndarray, only: Sequence[int] | None = None) -> np.ndarray:
        """``(..., E)`` voltage V(from) − V(to) of every element (or of the elements
        ``only``, in that order) from solutions x."""
        sel = np.arange(len(self.elem_names)) if only is None else np.asarray(only, dtype=int)
        xz = np.concatenate([x, np.zeros((*x.shape[:-1], 1), dtype=x.dtype)], axis=-1)
        return xz[..., self.elem_plus[sel]] - xz[..., self.elem_minus[sel]]

    def element_power(
        self, x: np.ndarray, freqs_hz: np.ndarray, v: np.ndarray, i: np.ndarray
    ) -> np.ndarray:
        """``(F, E)`` average power absorbed per element and frequency; an ideal
        transformer counts both windings (winding 2 carries −n·I1), so it absorbs 0."""
        f = np.asarray(freqs_hz, dtype=float)
        w = np.where(f == 0, 1.0, 0.5)[:, None]
        s = v * np.conj(i)
        if np.any(self.sec_ratio):
            xz = np.concatenate([x, np.zeros((*x.shape[:-1], 1), dtype=x.dtype)], axis=-1)
            v2 = xz[..., self.sec_plus] - xz[..., self.sec_minus]
            s = s + v2 * np.conj(-self.sec_ratio * i)
        return w * np.real(s)

    def element_currents(
        self,
        x: np.ndarray,
        freqs_hz: np.ndarray,
        theta: np.ndarray | None = None,
        only: Sequence[int] | None = None,
    ) -> np.ndarray:
        """``(..., F, E)`` current of every element (from → to through it), or of the
        elements ``only``, in that order. Work and memory are O(F·E): the terms are
        summed per element by a segmented sum, no element-by-unknown map is built."""
        sel = np.arange(len(self.elem_names)) if only is None else np.asarray(only, dtype=int)
        pos = np.full(len(self.elem_names), -1)
        pos[sel] = np.arange(sel.size)
        dest_all = pos[self.cur_elem]
        keep = np.flatnonzero(dest_all >= 0)
        keep = keep[np.argsort(dest_all[keep], kind="stable")]  # terms grouped by element
        dest = dest_all[keep]
        th = self.theta if theta is None else np.asarray(theta)
        ph = self.phi(freqs_hz)  # (F, P)
        cur_param = self.cur_param[keep]
        has_p = cur_param >= 0
        pidx = np.where(has_p, cur_param, 0)
        coef = np.where(has_p, th[..., pidx][..., None, :] * ph[:, pidx], 1.0)
        terms = self.cur_sign[keep] * coef * x[..., self.cur_index[keep]]  # (..., F, T)
        out = np.zeros((*terms.shape[:-1], sel.size), dtype=complex)
        if keep.size:
            starts = np.flatnonzero(np.concatenate([[True], dest[1:] != dest[:-1]]))
            out[..., dest[starts]] = np.add.reduceat(terms, starts, axis=-1)
        own = self.cur_src[sel] >= 0
        if own.any():
            tones = self.tones(freqs_hz)
            out[..., own] += tones[:, self.cur_src[sel][own]]
        return out

    # --------------------------------------------------------------------------- solve
    def solve(
        self,
        freqs_hz: Sequence[float] | np.ndarray,
        rhs: np.ndarray | None = None,
        method: str = "auto",
        *,
        theta: np.ndarray | None = None,
        columns: Sequence[int] | None = None,
    ) -> np.ndarray:
        """Solve at every frequency; returns ``x`` of shape ``(F, n)``.

        Parameters
        ----------
        freqs_hz : array_like, shape (F,)
            Frequencies in Hz (≥ 0, any order, repeats allowed).
        rhs : numpy.ndarray, optional
            ``(F, n)`` right-hand sides, or ``(n,)`` for the same one at every frequency
            (a test injection; no ``(F, n)`` array is then allocated). Default: the
            sources' tones at each frequency.
        method : str
            ``"auto"`` (from the cost model), ``"dense"`` (alias ``"direct"``),
            ``"pencil"`` or ``"sparse"``. A network with a resistance law has no affine
            pencil; ``"pencil"`` then uses the LU path.
        theta : numpy.ndarray, optional
            ``(S, P)`` parameter sets (tolerance studies): the result is ``(S, F, n)``,
            and ``freqs_hz`` may be ``(S, F)`` (frequencies per set); ``rhs`` may then be
            ``(S | 1, F, n)``.
        columns : sequence of int, optional
            Return only these unknowns: ``(F, len(columns))`` (memory O(F) for a scan).

        Raises
        ------
        NetworkError
            With a diagnosis for ill-posed networks, naming the frequency.
        SingularNetworkError
            When a frequency has no unique solution, or its solution cannot be computed
            to a relative residual of 1e-11 (named; nothing inaccurate is returned).
        """
        if method == "direct":
            method = "dense"
        if method not in ("auto", "dense", "pencil", "sparse"):
            raise ValueError(f"method {method!r}: expected auto, dense, pencil or sparse")
        f = np.asarray(freqs_hz, dtype=float)
        if theta is not None:
            return self._solve_sets(f, rhs, method, np.asarray(theta, dtype=float), columns)
        f = f.reshape(-1)
        self._diagnose(f)
        cols = None if columns is None else np.asarray(columns, dtype=int)
        width = self.n if cols is None else cols.size
        out = np.empty((f.size, width), dtype=complex)
        if f.size == 0:
            return out
        how = self._choose_method(f.size, method, sets=False)
        b_all = None if rhs is None else np.asarray(rhs, dtype=complex)
        for sl in self._blocks(f.size, how):
            fb = f[sl]
            if b_all is None:
                b = self.rhs(fb)
            elif b_all.ndim == 1:
                b = np.broadcast_to(b_all, (fb.size, self.n))
            else:
                b = b_all[sl]
            x = self._solve_block(fb, None, b, how)
            out[sl] = x if cols is None else x[:, cols]
        return out

    def _solve_sets(
        self,
        f: np.ndarray,
        rhs: np.ndarray | None,
        method: str,
        theta: np.ndarray,
        columns: Sequence[int] | None,
    ) -> np.ndarray:
        """Parameter sets (S, P) × frequencies (F,) or (S, F) → (S, F, n)."""
        s_ = theta.shape[0]
        ff = np.broadcast_to(f, (s_, f.shape[-1])) if f.ndim == 1 else f
        self._diagnose(ff.reshape(-1))
        g = ff.shape[1]
        if rhs is None:
            bb = np.broadcast_to(self.rhs(ff[0]), (s_, g, self.n)) if f.ndim == 1 else None
            if bb is None:
                bb = self.rhs(ff.reshape(-1)).reshape(s_, g, self.n)
        else:
            r = np.asarray(rhs, dtype=complex)
            bb = np.broadcast_to(r, (s_, g, self.n))
        how = self._choose_method(s_ * g, "dense" if method == "pencil" else method, sets=True)
        flat_f = ff.reshape(-1)
        cols = None if columns is None else np.asarray(columns, dtype=int)
        width = self.n if cols is None else cols.size
        out = np.empty((s_ * g, width), dtype=complex)
        for sl in self._blocks(s_ * g, how):
            idx = np.arange(s_ * g)[sl]
            b = bb[idx // g, idx % g]  # gathers the block only (bb may be a broadcast view)
            x = self._solve_block(flat_f[sl], theta[idx // g], b, how)
            out[sl] = x if cols is None else x[:, cols]
        return out.reshape(s_, g, width)

    def _diagnose(self, f: np.ndarray) -> None:
        """Structural diagnosis, once per System (and once more when DC first appears)."""
        dc = bool(np.any(f == 0))
        done = self._diagnosed
        if dc not in done:
            diagnose(self.circuit, dc=dc)
            done.add(dc)
            if dc:
                done.add(False)

    @cached_property
    def _diagnosed(self) -> set[bool]:
        return set()

    def _choose_method(self, n_freqs: int, method: str, sets: bool) -> str:
        """The solve path for ``n_freqs`` matrices of this network (see the cost model)."""
        n = self.n
        sparse_ok = n > _DENSE_MAX_N or (
            n >= _SPARSE_MIN_N and self.nnz <= _SPARSE_MAX_DENSITY * n * n
        )
        if method in ("dense", "sparse"):
            return method
        if method == "pencil":
            if not self.has_frequency_law and n <= _DENSE_MAX_N:
                return "pencil"
            return "sparse" if sparse_ok else "dense"
        if sparse_ok:
            return "sparse"
        if sets or self.has_frequency_law:
            return "dense"
        return "pencil" if _pencil_cost(n, n_freqs) < _dense_cost(n, n_freqs) else "dense"

    def _blocks(self, m: int, how: str) -> list[slice]:
        if how == "dense":
            size = max(1, min(m, _BLOCK_BYTES // (16 * self.n * self.n)))
        elif how == "pencil":
            size = _PENCIL_BLOCK
        else:
            size = _SPARSE_BLOCK
        return [slice(s, min(s + size, m)) for s in range(0, m, size)]

    # ---------------------------------------------------------------- one block, checked
    def _solve_block(
        self, f: np.ndarray, theta: np.ndarray | None, b: np.ndarray, how: str
    ) -> np.ndarray:
        """Solve M matrices at frequencies f (M,) with parameters ``theta`` (None for the
        nominal ones, or (M, P)) and right-hand sides b (M, n); checked, refined, and
        refused where no accurate answer exists."""
        if how == "dense":
            return self._solve_dense_block(f, theta, b)
        if theta is None and not self.has_frequency_law:
            v = self._pencil_values(f)
        else:
            v = self._values(self._coef(f, theta))
        absv = np.abs(v)
        r, c, scale = self._equilibration(absv)
        vs = v * scale
        bs = b * r
        absv *= scale  # |D_r·A·D_c| at the positions (powers of two: exact)
        chk = _Checker(self, bs, vs=vs, anorm=self._row_reduce(absv, np.add).max(axis=1))
        if how == "pencil":
            y, ok = self._pencil_scaled(f, bs, r, c)
            chk.accept(y, ok)
            chk.refine(lambda idx, res: self._pencil_scaled(f[idx], res, r[idx], c[idx])[0])
        else:
            chk.accept_measured(*self._sparse_scaled(vs, bs, chk))
        return self._finish(f, theta, chk) * c

    def _solve_dense_block(
        self, f: np.ndarray, theta: np.ndarray | None, b: np.ndarray
    ) -> np.ndarray:
        """The dense path: every step on the (M, n, n) stack (small n)."""
        if theta is None:  # nominal values: A0 + jω·A1 (+ resistance laws), cached pencil
            a0, a1, laws = self._dense_pencil
            a = np.empty((f.size, self.n, self.n), dtype=complex)
            a.real[...] = a0
            np.multiply((2 * np.pi * f)[:, None, None], a1, out=a.imag)
            if laws:
                ph = self.phi(f)
                for p, pat in laws:
                    a += (ph[:, p].real * self.theta[p])[:, None, None] * pat
        else:
            a = self._dense(self._values(self._coef(f, theta)))
        absa = np.abs(a)
        r = _pow2_inverse(absa.max(axis=2))
        absa *= r[:, :, None]
        c = _pow2_inverse(absa.max(axis=1))
        absa *= c[:, None, :]
        a *= r[:, :, None]
        a *= c[:, None, :]
        bs = b * r
        chk = _Checker(self, bs, dense=a, anorm=absa.sum(axis=2).max(axis=1))
        # batches of small LUs gain nothing from BLAS threads, and on a busy machine
        # they lose up to 35× (n = 200: 13 s against 0.37 s, bench (a))
        with _one_blas_thread() if self.n >= 64 else contextlib.nullcontext():
            y, ok = _dense_batched(a, bs)
        chk.accept(y, ok)
        return self._finish(f, theta, chk) * c

    def _finish(self, f: np.ndarray, theta: np.ndarray | None, chk: _Checker) -> np.ndarray:
        """Second, independent factorisation (and refinement) for what is still not
        right; then refuse what stays wrong. Returns the equilibrated answers y."""
        for m in chk.unresolved():
            chk.accept_one(m, *self._second_kernel(chk, m))
        for m in chk.failed():
            self._refuse(f[m], self.theta if theta is None else theta[m], chk, m)
        return chk.y

    @cached_property
    def _dense_pencil(self) -> tuple[np.ndarray, np.ndarray, list[tuple[int, np.ndarray]]]:
        a0, a1 = self.pencil()
        laws = []
        for p in np.flatnonzero(self._scaled):
            sel = self.param == p
            pat = np.zeros((self.n, self.n))
            np.add.at(pat, (self.rows[sel], self.cols[sel]), self.signs[sel])
            laws.append((int(p), pat))
        return a0, a1, laws

    def _equilibration(self, absv: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Row then column scaling by powers of two (exact) so that every row and column
        of D_r·|A|·D_c has its largest entry in [0.5, 1) (within the limits of
        _pow2_inverse); empty rows/columns keep 1.
        Returns (r, c, the factor r_i·c_j at each position (i, j))."""
        pat = self._pattern
        r = _pow2_inverse(self._row_reduce(absv, np.maximum))
        scale = np.take(r, pat.urows, axis=1)
        c = _pow2_inverse(self._col_reduce(absv * scale, np.maximum))
        scale *= np.take(c, pat.ucols, axis=1)
        return r, c, scale

    @cached_property
    def _pencil_parts(self) -> tuple[np.ndarray, np.ndarray]:
        """``(U,)`` real values of A0 and A1 at the structural positions (nominal values,
        no resistance law): A(ω) there is A0 + jω·A1."""
        const = np.where(self._is_jw, 0.0, self.theta)
        jw = np.where(self._is_jw, self.theta, 0.0)
        return self._values(const[None])[0], self._values(jw[None])[0]

    def _pencil_values(self, f: np.ndarray) -> np.ndarray:
        """``(M, U)`` values of A at frequencies ``f`` from the pencil parts (two passes
        over the output instead of a gather and a segmented sum per frequency)."""
        a0, a1 = self._pencil_parts
        out = np.empty((f.size, a0.size), dtype=complex)
        out.real[...] = a0
        np.multiply((2 * np.pi * f)[:, None], a1, out=out.imag)
        return out

    # ------------------------------------------------------------------------ pencil path
    @cached_property
    def _schur(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Generalised Schur form (AA, BB, Q, Z) of the pencil, computed once."""
        from scipy.linalg import qz

        a0, a1 = self.pencil()
        # QZ is mostly Givens and Householder updates: BLAS threads only compete (on 2
        # busy cores: n = 100 took 2.5 s with them against 62 ms with one)
        with _one_blas_thread():
            aa, bb, q, z = qz(a0.astype(complex), a1.astype(complex), output="complex")
        return aa, bb, q, z

    def _pencil_scaled(
        self, f: np.ndarray, bs: np.ndarray, r: np.ndarray, c: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Solve D_r·A·D_c y = bs with the Schur form: x = A⁻¹(bs / D_r), y = x / D_c.
        ``ok`` is False where a diagonal of AA + jω·BB is negligible (singular there)."""
        aa, bb, q, z = self._schur
        w = 2 * np.pi * f
        # unknowns × frequencies, so that each back-substitution step reads contiguous rows
        ct = np.ascontiguousarray(((bs / r) @ q.conj()).T)
        yt = np.zeros_like(ct)
        diag = aa.diagonal()[:, None] + 1j * bb.diagonal()[:, None] * w[None, :]
        scale = np.abs(aa).max() + w * np.abs(bb).max()
        ok = ~(np.abs(diag) <= 1e-14 * scale[None, :]).any(axis=0)
        diag = np.where(ok[None, :], diag, 1.0)
        jw = 1j * w
        # many tiny matrix-vector products: BLAS threads only add overhead (measured 2.2 s
        # against 0.06 s for 73 unknowns × 2048 frequencies on 2 busy cores)
        with _one_blas_thread() if ct.size >= 50_000 else contextlib.nullcontext():
            for i in range(self.n - 1, -1, -1):  # back substitution, vectorised over ω
                acc = ct[i] - aa[i, i + 1 :] @ yt[i + 1 :] - jw * (bb[i, i + 1 :] @ yt[i + 1 :])
                yt[i] = acc / diag[i]
            x = (z @ yt).T
        return x / c, ok

    def pencil(self, theta: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """``(A0, A1)``: the constant and the jω parts of A(ω), dense (for small n);
        resistors that follow a resistance law are left out of both (see
        :attr:`has_frequency_law`)."""
        th = self.theta if theta is None else theta
        n = self.n
        vals = self.signs * th[self.param]
        out = []
        for basis in (B_CONST, B_JW):
            sel = self.basis[self.param] == basis
            m = np.zeros((n, n))
            np.add.at(m, (self.rows[sel], self.cols[sel]), vals[sel])
            out.append(m)
        return out[0], out[1]

    def sparse_pencil(self) -> tuple[Any, Any]:
        """``(A0, A1)`` as ``scipy.sparse`` CSC matrices (any n); see :meth:`pencil`."""
        from scipy.sparse import csc_matrix

        vals = self.signs * self.theta[self.param]
        out = []
        for basis in (B_CONST, B_JW):
            sel = self.basis[self.param] == basis
            out.append(
                csc_matrix((vals[sel], (self.rows[sel], self.cols[sel])), shape=(self.n, self.n))
            )
        return out[0], out[1]

    # ------------------------------------------------------------------------ sparse path
    @cached_property
    def _column_order(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """One fill-reducing column ordering for every frequency (the pattern does not
        depend on ω), computed once: SuperLU's COLAMD (scipy's default, robust with
        partial pivoting; minimum degree on AᵀA + A halves the fill on feeders and grids
        but with partial pivoting it was unreliable on grids with inductive links, 100 s
        against 1 s for one factorisation). Returns
        ``(q, gather, indptr, indices)``: the matrix A[:, q] in CSC form takes its values
        as ``vals[gather]``."""
        from scipy.sparse import csc_matrix
        from scipy.sparse.linalg import splu

        pat = self._pattern
        co, ptr = pat.col_order, pat.col_indptr
        # the ordering depends on the pattern only: factor a generic matrix of that pattern
        rng = np.random.default_rng(12345)
        probe = csc_matrix((1.0 + rng.random(co.size), pat.urows[co], ptr), shape=(self.n, self.n))
        try:
            q = np.argsort(splu(probe, permc_spec="COLAMD").perm_c)
        except RuntimeError:  # structurally singular pattern: keep the natural order
            q = np.arange(self.n)
        counts = np.diff(ptr)[q]
        indptr = np.concatenate([[0], np.cumsum(counts)]).astype(np.int64)
        # positions of column q[0], then q[1], ...: one vectorised gather
        first = np.repeat(ptr[q] - indptr[:-1], counts)
        gather = co[first + np.arange(indptr[-1])]
        return q, gather, indptr, pat.urows[gather]

    def _sparse_scaled(
        self, vs: np.ndarray, bs: np.ndarray, chk: _Checker
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """SuperLU per matrix on D_r·A·D_c[:, q] with the shared ordering q and partial
        pivoting; each answer's residual is checked with the same CSC matrix and refined
        with the same factors (a second factorisation takes over if that is not enough)."""
        from scipy.sparse import csc_matrix
        from scipy.sparse.linalg import splu

        q, gather, indptr, indices = self._column_order
        n = self.n
        y = np.zeros_like(bs)
        ok = np.ones(bs.shape[0], dtype=bool)
        eta = np.full(bs.shape[0], np.inf)
        if bs.shape[0] == 0:
            return y, ok, eta
        # one matrix object, its values replaced per frequency: the pattern's checks
        # (index types, sorted and unique indices) are made once, not 0.4 ms per matrix;
        # SuperLU copies what it factors, so the values may then change
        a = csc_matrix((vs[0, gather], indices, indptr), shape=(n, n))
        for m in range(bs.shape[0]):
            a.data = vs[m, gather]
            try:
                lu = splu(
                    a,
                    permc_spec="NATURAL",
                    diag_pivot_thresh=_SPARSE_PIVOT,
                    panel_size=_SPARSE_PANEL,
                    relax=_SPARSE_RELAX,
                )
            except RuntimeError:  # exactly singular
                ok[m] = False
                continue
            # residual with the same CSC matrix (one sparse product): z = y[q]
            z = lu.solve(bs[m])
            e = chk.eta_value(m, z, bs[m] - a @ z)
            for _ in range(_MAX_REFINE if e > _REFINE_ABOVE else 0):
                z2 = z + lu.solve(bs[m] - a @ z)
                e2 = chk.eta_value(m, z2, bs[m] - a @ z2)
                if not e2 < e:
                    break
                going = e2 < 0.5 * e and e2 > _REFINE_TARGET
                z, e = z2, e2
                if not going:
                    break
            y[m, q] = z
            eta[m] = e
        return y, ok, eta

    def _second_kernel(self, chk: _Checker, m: int) -> tuple[np.ndarray, bool]:
        """An independent factorisation of one equilibrated matrix (values (U,)) with
        iterative refinement: scipy's LAPACK getrf for moderate n, else SuperLU with a
        different ordering (minimum degree on AᵀA) and partial pivoting."""
        n = self.n
        if n <= _DENSE_MAX_N:
            from scipy.linalg import get_lapack_funcs

            a = chk.dense_one(m)
            getrf, getrs = get_lapack_funcs(("getrf", "getrs"), (a,))
            lu, piv, info = getrf(a)
            if info > 0:
                return np.full(n, np.nan, dtype=complex), False

            def sol(rhs: np.ndarray) -> np.ndarray:
                out, _info = getrs(lu, piv, rhs)
                return np.asarray(out)

        else:
            from scipy.sparse import csc_matrix
            from scipy.sparse.linalg import splu

            pat = self._pattern
            co = pat.col_order
            assert chk.vs is not None
            vs = chk.vs[m]
            a = csc_matrix((vs[co], pat.urows[co], pat.col_indptr), shape=(n, n))
            try:
                flu = splu(a, permc_spec="MMD_ATA", diag_pivot_thresh=1.0)
            except RuntimeError:
                return np.full(n, np.nan, dtype=complex), False
            sol = flu.solve
        return chk.refine_one(m, sol(chk.bs[m]), sol), True

    # ------------------------------------------------------------------------ refusals
    def _refuse(self, f: float, theta: np.ndarray, chk: _Checker, m: int) -> NoReturn:
        if chk.singular[m]:
            _raise_singular(self, float(f), theta)
        raise SingularNetworkError(
            f"no accurate solution: relative residual {chk.eta[m]:.1e} after iterative "
            "refinement with two independent factorisations (needs ≤ 1e-11)",
            freq_hz=float(f),
            hint="part values spanning more than ~1e12 in one loop, or near-cancelling "
            "controlled sources; rescale or add realistic losses",
        )


_CONTROLLER: Any = None


def _one_blas_thread() -> Any:
    """Context holding BLAS to one thread (threadpoolctl; the controller is made once)."""
    global _CONTROLLER
    from threadpoolctl import ThreadpoolController

    if _CONTROLLER is None:
        _CONTROLLER = ThreadpoolController()
    return _CONTROLLER.limit(limits=1, user_api="blas")


def _pow2_inverse(x: np.ndarray) -> np.ndarray:
    """2^-e with x = m·2^e, 0.5 ≤ m < 1 (so x·result ∈ [0.5, 1)); 1 where x is 0.
    The exponent is held within ±511 (x beyond about 1e±154 is scaled only that far), so
    that a product of a row and a column scale never overflows: 0 or a subnormal entry
    times r_i·c_j stays finite."""
    _m, e = np.frexp(x)
    return np.ldexp(1.0, -np.minimum(np.maximum(e, -_SCALE_EXP), _SCALE_EXP))


def _dense_cost(n: int, m: int) -> float:
    return m * (_LU_N3 * n**3 + _LU_N2 * n**2 + _LU_N0)


def _pencil_cost(n: int, m: int) -> float:
    return _QZ_N3 * n**3 + _QZ_N0 + m * (_BS_N2 * n**2 + _BS_N1 * n + _BS_N0)


def _dense_batched(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Batched LU (numpy's LAPACK); one exactly singular matrix in the batch makes
    numpy refuse the whole batch, so then each matrix is solved on its own."""
    try:
        return np.linalg.solve(a, b[..., None])[..., 0], np.ones(a.shape[0], dtype=bool)
    except np.linalg.LinAlgError:
        y = np.zeros_like(b)
        ok = np.ones(a.shape[0], dtype=bool)
        for m in range(a.shape[0]):
            try:
                y[m] = np.linalg.solve(a[m], b[m])
            except np.linalg.LinAlgError:
                ok[m] = False
        return y, ok


class _Checker:
    """Residual bookkeeping for M equilibrated systems D_r·A·D_c y = bs.

    Per matrix: η (relative residual, see the module docstring) and the lower bound
    ‖A‖‖y‖/‖bs‖ of the condition number. A matrix is *resolved* when η ≤ 1e-12 and the
    bound is below 1e13; *unresolved* ones get a second kernel; *failed* ones (still
    above 1e-11, non-finite, or near-singular) are refused.
    """

    def __init__(
        self,
        system: System,
        bs: np.ndarray,
        vs: np.ndarray | None = None,
        dense: np.ndarray | None = None,
        anorm: np.ndarray | None = None,
    ) -> None:
        self.system = system
        self.vs = vs  # (M, U) values at the structural positions, or
        self.dense = dense  # (M, n, n) matrices
        self.bs = bs
        m = bs.shape[0]
        if anorm is not None:
            self.anorm = anorm
        elif dense is not None:
            self.anorm = np.abs(dense).sum(axis=2).max(axis=1)
        else:
            assert vs is not None
            self.anorm = system._row_reduce(np.abs(vs), np.add).max(axis=1)
        self.bnorm = np.abs(bs).max(axis=1) if bs.size else np.zeros(m)
        self.y = np.zeros(bs.shape, dtype=complex)
        self.eta = np.full(m, np.inf)
        self.singular = np.zeros(m, dtype=bool)
        self.tried_second = np.zeros(m, dtype=bool)

    def _matvec(self, idx: np.ndarray | slice, y: np.ndarray) -> np.ndarray:
        if self.dense is not None:
            return (self.dense[idx] @ y[..., None])[..., 0]
        assert self.vs is not None
        return self.system._matvec(self.vs[idx], y)

    def dense_one(self, m: int) -> np.ndarray:
        if self.dense is not None:
            return self.dense[m]
        assert self.vs is not None
        return self.system._dense(self.vs[m : m + 1])[0]

    def _measure(self, idx: np.ndarray | slice, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(η, near-singular) of answers ``y`` of the matrices ``idx``. The max of |y|
        carries any NaN or inf of y, so one reduction tells finite answers apart."""
        res = self.bs[idx] - self._matvec(idx, y)
        an, bn = self.anorm[idx], self.bnorm[idx]
        with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
            yn = np.abs(y).max(axis=1)
            an_yn = an * yn
            eta = np.abs(res).max(axis=1) / (an_yn + bn)
            kappa = an_yn / bn
        finite = np.isfinite(yn)
        if not bn.all():  # b = 0: only y = 0 is right, and no bound of cond is known
            zero_b = bn == 0
            eta = np.where(zero_b, np.where(yn > 0, np.inf, 0.0), eta)
            kappa = np.where(zero_b, 0.0, kappa)
        eta = np.where(finite, eta, np.inf)
        near = ~finite | ~(kappa <= _NEAR_SINGULAR)
        return eta, near

    def accept(self, y: np.ndarray, ok: np.ndarray) -> None:
        self.y = y
        eta, near = self._measure(slice(None), y)
        self.eta = eta
        self.singular = near | ~ok

    def accept_measured(self, y: np.ndarray, ok: np.ndarray, eta: np.ndarray) -> None:
        """Answers whose η the path measured itself (the sparse path, per matrix)."""
        self.y = y
        self.eta = np.where(ok, eta, np.inf)
        with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
            yn = np.abs(y).max(axis=1)
            kappa = np.where(self.bnorm > 0, self.anorm * yn / self.bnorm, 0.0)
        self.singular = ~ok | ~np.isfinite(y).all(axis=1) | ~(kappa <= _NEAR_SINGULAR)

    def accept_one(self, m: int, y: np.ndarray, ok: bool) -> None:
        self.tried_second[m] = True
        eta, near = self._measure(np.array([m]), y[None])
        self.y[m] = y
        self.eta[m] = eta[0]
        self.singular[m] = bool(near[0]) or not ok

    def refine(self, solve: Callable[[np.ndarray, np.ndarray], np.ndarray]) -> None:
        """Iterative refinement with the path's own factorisation (cheap for the pencil)
        of every answer above 1e-12, on while it improves and is above 1e-15."""
        idx = np.flatnonzero((self.eta > _REFINE_ABOVE) & ~self.singular)
        for _ in range(_MAX_REFINE):
            if idx.size == 0:
                return
            res = self.bs[idx] - self._matvec(idx, self.y[idx])
            y = self.y[idx] + solve(idx, res)
            eta, near = self._measure(idx, y)
            better = eta < self.eta[idx]
            going = better & (eta < 0.5 * self.eta[idx]) & (eta > _REFINE_TARGET)
            self.y[idx[better]] = y[better]
            self.eta[idx[better]] = eta[better]
            self.singular[idx] |= near & better
            idx = idx[going]

    def refine_one(
        self, m: int, y: np.ndarray, solve: Callable[[np.ndarray], np.ndarray]
    ) -> np.ndarray:
        """The same for one matrix, with its own factors in ``solve``."""
        res = self.residual_one(m, y)
        eta = self.eta_one(m, y, res)
        if not eta > _REFINE_ABOVE:
            return y
        for _ in range(_MAX_REFINE):
            y2 = y + solve(res)
            res2 = self.residual_one(m, y2)
            eta2 = self.eta_one(m, y2, res2)
            if not eta2 < eta:
                break
            going = eta2 < 0.5 * eta and eta2 > _REFINE_TARGET
            y, res, eta = y2, res2, eta2
            if not going:
                break
        return y

    def unresolved(self) -> list[int]:
        """Matrices to try again with an independent kernel (not the near-singular ones:
        a second factorisation of a singular matrix would only confirm it)."""
        need = (self.eta > _REFINE_ABOVE) & ~self.singular
        # the pencil flags frequencies it cannot handle as singular: re-try those with LU
        return np.flatnonzero(need | (self.singular & ~self.tried_second)).tolist()

    def failed(self) -> list[int]:
        return np.flatnonzero(self.singular | (self.eta > _REFUSE_ABOVE)).tolist()

    # one matrix (used inside factorisation loops)
    def residual_one(self, m: int, y: np.ndarray) -> np.ndarray:
        return self.bs[m] - self._matvec(np.array([m]), y[None])[0]

    def eta_value(self, m: int, y: np.ndarray, res: np.ndarray) -> float:
        """η of matrix m for an answer y (in any order of its entries) and residual res."""
        return self.eta_one(m, y, res)

    def eta_one(self, m: int, y: np.ndarray, res: np.ndarray) -> float:
        yn = float(np.abs(y).max()) if y.size else 0.0
        den = self.anorm[m] * yn + self.bnorm[m]
        if not np.isfinite(yn):
            return float("inf")
        return float(np.abs(res).max() / den) if den > 0 else 0.0


def solve_stacked(
    system: System,
    a: np.ndarray,
    b: np.ndarray,
    f: np.ndarray,
    anorm: np.ndarray | None = None,
) -> np.ndarray:
    """Solve ``(F, n)`` right-hand sides at frequencies ``f`` (checked, refined, refused
    like :meth:`System.solve`). ``a`` and ``anorm`` are ignored: the matrices are
    assembled from the system's stamps. Kept for callers of the earlier interface; new
    code calls ``system.solve(f, rhs=b)``."""
    return system.solve(np.asarray(f, dtype=float), rhs=np.asarray(b, dtype=complex))


def _generic_singular(system: System, theta: np.ndarray) -> bool:
    """True when A is also singular at the probe frequencies (see ``_PROBE_HZ``)."""
    for fp in _PROBE_HZ:
        coef = system._coef(np.array([fp]), theta)[0]
        if _smallest_singular_ratio(system, coef) > 1e-13:
            return False
    return True


def _scaled_matrix(system: System, coef: np.ndarray) -> np.ndarray:
    v = system._values(coef[None])
    return v * system._equilibration(np.abs(v))[2]


def _smallest_singular_ratio(system: System, coef: np.ndarray) -> float:
    vs = _scaled_matrix(system, coef)
    if system.n <= _DENSE_MAX_N:
        s = np.linalg.svd(system._dense(vs)[0], compute_uv=False)
        return float(s[-1] / s[0]) if s[0] > 0 else 0.0
    return 0.0 if _null_vector(system, vs[0]) is not None else 1.0


def _null_vector(system: System, vs: np.ndarray) -> np.ndarray | None:
    """Approximate null vector of a large equilibrated matrix by inverse iteration with
    a slightly shifted sparse LU; None when the matrix is clearly non-singular."""
    from scipy.sparse import csc_matrix, identity
    from scipy.sparse.linalg import splu

    pat = system._pattern
    n = system.n
    co = pat.col_order
    a = csc_matrix((vs[co], pat.urows[co], pat.col_indptr), shape=(n, n))
    shift = 1e-10 * float(np.abs(vs).max())
    try:
        lu = splu((a + shift * identity(n, format="csc")).tocsc())
    except RuntimeError:
        return None
    v = np.random.default_rng(7).standard_normal(n).astype(complex)
    for _ in range(4):
        v = lu.solve(v)
        v /= np.abs(v).max()
    res = np.abs(a @ v).max()
    return v if res <= 1e-8 * np.abs(vs).max() else None


def _raise_singular(system: System, f: float, theta: np.ndarray) -> NoReturn:
    """Name the unknowns in the null space at frequency f, and say whether the network
    is singular at every frequency."""
    vs = _scaled_matrix(system, system._coef(np.array([f]), theta)[0])
    if system.n <= _DENSE_MAX_N:
        _u, _s, vh = np.linalg.svd(system._dense(vs)[0])
        null: np.ndarray | None = np.abs(vh[-1].conj())
    else:
        nv = _null_vector(system, vs[0])
        null = None if nv is None else np.abs(nv)
    nodes: list[str] = []
    parts: list[str] = []
    if null is not None and null.max() > 0:
        involved = np.flatnonzero(null > 0.1 * null.max())
        nodes = [system.labels[j] for j in involved if j < system.n_nodes]
        parts = [system.labels[j] for j in involved if j >= system.n_nodes]
    every = _generic_singular(system, theta)
    raise SingularNetworkError(
        "the equations have no unique solution (an exact resonance of ideal parts, "
        "or controlled sources that cancel)",
        nodes=nodes,
        parts=parts,
        freq_hz=None if every else float(f),
        hint="add realistic losses (series/parallel resistance) or check the gains",
    )


# ------------------------------------------------------------------------------ building
class _Builder:
    """Collects the stamps' entries, parameters and element-current terms."""

    def __init__(self, circuit: Circuit) -> None:
        self.c = circuit
        self.idx = {name: i for i, name in enumerate(circuit.nodes)}
        self.idx[circuit.ground] = -1
        self.rows: list[int] = []
        self.cols: list[int] = []
        self.signs: list[float] = []
        self.param: list[int] = []
        self.theta: list[float] = []
        self.basis: list[int] = []
        self.exponent: list[float] = []
        self.deps: list[tuple[tuple[int, float], ...]] = []
        self.param_elem: list[int] = []
        self.labels = list(circuit.nodes)
        self.n = len(circuit.nodes)
        self.branch: dict[str, int] = {}
        self.part_pos: dict[str, int] = {}
        # element current terms: (elem, unknown index, param or -1, sign)
        self.cur: list[tuple[int, int, int, float]] = []
        self.cur_src: list[int] = []
        self.inc_rows: list[dict[int, float]] = []
        self.one = self.new_param(1.0, B_CONST)

    def node(self, name: str | None) -> int:
        return self.idx[name or ""]

    def new_param(
        self,
        theta: float,
        basis: int,
        deps: tuple[tuple[int, float], ...] = (),
        x: float = 0.0,
        elem: int = -1,
    ) -> int:
        self.theta.append(theta)
        self.basis.append(basis)
        self.exponent.append(x)
        self.deps.append(deps)
        self.param_elem.append(elem)
        return len(self.theta) - 1

    def entry(self, r: int, c: int, sign: float, p: int) -> None:
        if r < 0 or c < 0:
            return
        self.rows.append(r)
        self.cols.append(c)
        self.signs.append(sign)
        self.param.append(p)

    def admittance(self, a: int, c: int, p: int) -> None:
        """Two-terminal admittance θ_p·φ_p between unknowns a and c."""
        rows, cols, signs, param = self.rows, self.cols, self.signs, self.param
        if a >= 0:
            rows.append(a)
            cols.append(a)
            signs.append(1.0)
            param.append(p)
        if c >= 0:
            rows.append(c)
            cols.append(c)
            signs.append(1.0)
            param.append(p)
            if a >= 0:
                rows += (a, c)
                cols += (c, a)
                signs += (-1.0, -1.0)
                param += (p, p)

    def kcl(self, a: int, c: int, k: int) -> None:
        """Branch current k leaves node a and enters node c."""
        self._unit_pair(k, a, c, in_column=True)

    def kvl(self, k: int, a: int, c: int) -> None:
        """Row k gets + V(a) − V(c)."""
        self._unit_pair(k, a, c, in_column=False)

    def _unit_pair(self, k: int, a: int, c: int, in_column: bool) -> None:
        """+1 for unknown a and −1 for unknown c in column (KCL) or row (KVL) k, with the
        constant parameter; the reference (−1) gets none. ``entry`` twice, inlined: the
        hot path of every branch."""
        if k < 0:
            return
        rows, cols, signs, param, one = self.rows, self.cols, self.signs, self.param, self.one
        for node, sign in ((a, 1.0), (c, -1.0)):
            if node >= 0:
                rows.append(node if in_column else k)
                cols.append(k if in_column else node)
                signs.append(sign)
                param.append(one)

    def new_branch(self, label: str) -> int:
        self.labels.append(label)
        self.n += 1
        return self.n - 1


@dataclass(frozen=True)
class Kind:
    """How one kind of part is stamped.

    ``branch``: whether the part always needs its own current as an unknown (a part named
    as the control of a current-controlled source gets one whatever its kind; its stamp
    then receives ``k`` ≥ 0). ``element``: whether it is a two-terminal element with a
    voltage and current of its own (couplings are not). ``stamp(b, e, p, k)`` adds the
    part's entries, parameters and current terms for element index ``e``.
    """

    branch: bool
    stamp: Callable[[_Builder, int, Any, int], None]
    element: bool = True


def _stamp_r(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    if k < 0:
        basis = B_INV_SCALE if p.r_exponent else B_CONST
        g = b.new_param(1.0 / p.value, basis, ((e, -1.0),), p.r_exponent, e)
        b.admittance(a, c, g)
        b.cur += [(e, a, g, 1.0), (e, c, g, -1.0)]
    else:
        basis = B_SCALE if p.r_exponent else B_CONST
        r = b.new_param(p.value, basis, ((e, 1.0),), p.r_exponent, e)
        b.kcl(a, c, k)
        b.kvl(k, a, c)
        b.entry(k, k, -1.0, r)
        b.cur.append((e, k, -1, 1.0))


def _stamp_c(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    cp = b.new_param(p.value, B_JW, ((e, 1.0),), elem=e)
    if k < 0:
        b.admittance(a, c, cp)
        b.cur += [(e, a, cp, 1.0), (e, c, cp, -1.0)]
    else:
        b.kcl(a, c, k)
        b.entry(k, k, 1.0, b.one)
        b.entry(k, a, -1.0, cp)
        b.entry(k, c, 1.0, cp)
        b.cur.append((e, k, -1, 1.0))


def _stamp_l(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    lp = b.new_param(p.value, B_JW, ((e, 1.0),), elem=e)
    b.kcl(a, c, k)
    b.kvl(k, a, c)
    b.entry(k, k, -1.0, lp)
    b.cur.append((e, k, -1, 1.0))


def _stamp_xfmr(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    d1, d2 = b.node(p.sec_from), b.node(p.sec_to)
    npar = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
    b.kcl(a, c, k)
    b.entry(d1, k, -1.0, npar)  # winding-2 current = −n·I1 flows sec_from → sec_to
    b.entry(d2, k, 1.0, npar)
    b.kvl(k, a, c)
    b.entry(k, d1, -1.0, npar)
    b.entry(k, d2, 1.0, npar)
    b.cur.append((e, k, -1, 1.0))


def _stamp_vcvs(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    cf, ct = b.node(p.ctrl_from), b.node(p.ctrl_to)
    gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
    b.kcl(a, c, k)
    b.kvl(k, a, c)
    b.entry(k, cf, -1.0, gp)
    b.entry(k, ct, 1.0, gp)
    b.cur.append((e, k, -1, 1.0))


def _stamp_vccs(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    cf, ct = b.node(p.ctrl_from), b.node(p.ctrl_to)
    gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
    if k < 0:
        for r_, c_, s_ in ((a, cf, 1.0), (a, ct, -1.0), (c, cf, -1.0), (c, ct, 1.0)):
            b.entry(r_, c_, s_, gp)
        b.cur += [(e, cf, gp, 1.0), (e, ct, gp, -1.0)]
    else:
        b.kcl(a, c, k)
        b.entry(k, k, 1.0, b.one)
        b.entry(k, cf, -1.0, gp)
        b.entry(k, ct, 1.0, gp)
        b.cur.append((e, k, -1, 1.0))


def _stamp_ccvs(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    kc = b.branch[(p.ctrl_part or "").lower()]
    gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
    b.kcl(a, c, k)
    b.kvl(k, a, c)
    b.entry(k, kc, -1.0, gp)
    b.cur.append((e, k, -1, 1.0))


def _stamp_cccs(b: _Builder, e: int, p: PartRow, k: int) -> None:
    a, c = b.node(p.from_node), b.node(p.to_node)
    kc = b.branch[(p.ctrl_part or "").lower()]
    gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
    if k < 0:
        b.entry(a, kc, 1.0, gp)
        b.entry(c, kc, -1.0, gp)
        b.cur.append((e, kc, gp, 1.0))
    else:
        b.kcl(a, c, k)
        b.entry(k, k, 1.0, b.one)
        b.entry(k, kc, -1.0, gp)
        b.cur.append((e, k, -1, 1.0))


def _stamp_coupling(b: _Builder, e: int, p: PartRow, k: int) -> None:
    """Mutual inductance M = k·sqrt(L1·L2) between the two inductor branches."""
    la, lb = b.c.part(p.coil_a or ""), b.c.part(p.coil_b or "")
    ea, eb = b.part_pos[la.name.lower()], b.part_pos[lb.name.lower()]
    m = p.value * np.sqrt(la.value * lb.value)
    ka, kb = b.branch[la.name.lower()], b.branch[lb.name.lower()]
    # the coupling's own value (k) has no element index; tolerance applies to L's only
    mp = b.new_param(float(m), B_JW, ((ea, 0.5), (eb, 0.5)))
    b.entry(ka, kb, -1.0, mp)
    b.entry(kb, ka, -1.0, mp)


def _stamp_vsource(b: _Builder, e: int, s: Any, k: int) -> None:
    a, c = b.node(s.from_node), b.node(s.to_node)
    b.kcl(a, c, k)
    b.kvl(k, a, c)
    b.inc_rows.append({k: 1.0})
    b.cur.append((e, k, -1, 1.0))


def _stamp_isource(b: _Builder, e: int, s: Any, k: int) -> None:
    a, c = b.node(s.from_node), b.node(s.to_node)
    if k < 0:  # the current leaves `from` and enters `to` (through the source)
        col: dict[int, float] = {}
        if a >= 0:
            col[a] = -1.0
        if c >= 0:
            col[c] = col.get(c, 0.0) + 1.0
        b.inc_rows.append(col)
        b.cur_src[e] = len(b.inc_rows) - 1
    else:  # its current is needed as an unknown (it controls a CCVS/CCCS)
        b.kcl(a, c, k)
        b.entry(k, k, 1.0, b.one)
        b.inc_rows.append({k: 1.0})
        b.cur.append((e, k, -1, 1.0))


#: The stamp of every kind of part and source, in one table: a new kind is one entry.
KINDS: dict[str, Kind] = {
    "R": Kind(False, _stamp_r),
    "C": Kind(False, _stamp_c),
    "L": Kind(True, _stamp_l),
    "XFMR": Kind(True, _stamp_xfmr),
    "VCVS": Kind(True, _stamp_vcvs),
    "VCCS": Kind(False, _stamp_vccs),
    "CCVS": Kind(True, _stamp_ccvs),
    "CCCS": Kind(False, _stamp_cccs),
    "COUPLING": Kind(False, _stamp_coupling, element=False),
    # independent sources (the sources table)
    "V": Kind(True, _stamp_vsource),
    "I": Kind(False, _stamp_isource),
}


def build_system(circuit: Circuit) -> System:
    """Assemble the frequency-independent MNA description of ``circuit``."""
    b = _Builder(circuit)
    parts = [p for p in circuit.parts if KINDS[p.kind].element]
    b.part_pos = {p.name.lower(): i for i, p in enumerate(parts)}
    n_parts = len(parts)
    controllers = {
        p.ctrl_part.lower() for p in parts if p.kind in ("CCVS", "CCCS") and p.ctrl_part
    }
    # branch currents first, so that controlled sources can refer to them
    elements: list[Any] = [*parts, *circuit.sources]
    for obj in elements:
        if KINDS[obj.kind].branch or obj.name.lower() in controllers:
            b.branch[obj.name.lower()] = b.new_branch(obj.name)
    b.cur_src = [-1] * (n_parts + len(circuit.sources))
    for e, p in enumerate(parts):
        KINDS[p.kind].stamp(b, e, p, b.branch.get(p.name.lower(), -1))
    for p in circuit.parts:
        if not KINDS[p.kind].element:
            KINDS[p.kind].stamp(b, -1, p, -1)
    for i, s in enumerate(circuit.sources):
        KINDS[s.kind].stamp(b, n_parts + i, s, b.branch.get(s.name.lower(), -1))
    # independent sources: incidence of the right-hand side
    inc = np.zeros((len(circuit.sources), b.n))
    for i, col in enumerate(b.inc_rows):
        for r_, v in col.items():
            inc[i, r_] = v
    # a current source's own current is its tone: cur_src holds its source index
    cur_src = b.cur_src

    node = b.idx
    names = tuple([p.name for p in parts] + [s.name for s in circuit.sources])
    kinds = tuple([p.kind for p in parts] + [s.kind for s in circuit.sources])
    plus = np.array(
        [node[p.from_node or ""] for p in parts] + [node[s.from_node] for s in circuit.sources]
    )
    minus = np.array(
        [node[p.to_node or ""] for p in parts] + [node[s.to_node] for s in circuit.sources]
    )
    plus = np.where(plus < 0, b.n, plus)
    minus = np.where(minus < 0, b.n, minus)
    # current terms referring to the reference node (index -1) vanish
    cur = [t for t in b.cur if t[1] >= 0]
    n_src = len(circuit.sources)
    return System(
        circuit=circuit,
        n=b.n,
        n_nodes=len(circuit.nodes),
        labels=tuple(b.labels),
        rows=np.array(b.rows, dtype=np.int64),
        cols=np.array(b.cols, dtype=np.int64),
        signs=np.array(b.signs, dtype=float),
        param=np.array(b.param, dtype=np.int64),
        theta=np.array(b.theta, dtype=float),
        basis=np.array(b.basis, dtype=int),
        exponent=np.array(b.exponent, dtype=float),
        deps=tuple(b.deps),
        param_elem=np.array(b.param_elem, dtype=int),
        src_incidence=inc,
        src_names=tuple(s.name for s in circuit.sources),
        elem_names=names,
        elem_kinds=kinds,
        elem_plus=plus,
        elem_minus=minus,
        cur_elem=np.array([t[0] for t in cur], dtype=np.int64),
        cur_index=np.array([t[1] for t in cur], dtype=np.int64),
        cur_param=np.array([t[2] for t in cur], dtype=np.int64),
        cur_sign=np.array([t[3] for t in cur], dtype=float),
        cur_src=np.array(cur_src, dtype=np.int64),
        sec_plus=np.array([node[p.sec_from] if p.sec_from else -1 for p in parts] + [-1] * n_src)
        % (b.n + 1),
        sec_minus=np.array([node[p.sec_to] if p.sec_to else -1 for p in parts] + [-1] * n_src)
        % (b.n + 1),
        sec_ratio=np.array([p.value if p.kind == "XFMR" else 0.0 for p in parts] + [0.0] * n_src),
    )
