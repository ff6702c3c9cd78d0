"""Modified nodal analysis over many frequencies in one batched solve.

Unknowns are the node voltages (reference excluded) followed by branch currents for
parts whose current cannot be written from node voltages: voltage sources, inductors,
VCVS, CCVS, ideal transformers (winding-1 current), and any part named as the control
of a current-controlled source. Every stamp is linear in one *parameter* θ times a
frequency factor φ(ω)::

    A(ω) = Σ_p θ_p · φ_p(ω) · P_p        φ ∈ {1, jω, 1/s(ω), s(ω)}

with P_p a pattern of ±1 entries and s(ω) = max(1, f/f₁)^x the optional resistance law
of a resistor. DC is therefore exact (inductors become zero-volt branches, capacitors
vanish), and all frequencies stack into one ``(F, N, N)`` array solved by LAPACK through
``numpy.linalg.solve`` with no Python loop over frequencies.

Before solving, the topology is checked so that ill-posed networks produce a
:class:`~xlfuncs.errors.NetworkError` naming nodes, parts and frequency, never a bare
``LinAlgError``.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import NoReturn

import numpy as np

from .circuit import FREQ_RTOL, Circuit
from .diagnosis import diagnose
from .errors import SingularNetworkError

__all__ = ["System", "build_system", "diagnose"]

# basis codes for φ(ω)
B_CONST, B_JW, B_INV_SCALE, B_SCALE = 0, 1, 2, 3
_BRANCH_KINDS = frozenset({"L", "VCVS", "CCVS", "XFMR"})
# ||A||·||x||/||b|| beyond this means the answer has lost all significant digits
_NEAR_SINGULAR = 1e13
_BLOCK = 128  # frequencies per assembled block
_PENCIL_MIN_FREQS = 32  # below this many frequencies one batched LU is cheaper than QZ


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
        Unknown index of each element's ``from``/``to`` node (-1 = reference).
    cur_index, cur_param, cur_sign, cur_src : numpy.ndarray
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
        f = np.asarray(freqs_hz, dtype=float)
        out = np.ones((f.size, self.theta.size), dtype=complex)
        jw = 2j * np.pi * f
        is_jw = self.basis == B_JW
        out[:, is_jw] = jw[:, None]
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

    # --------------------------------------------------------------------------- matrix
    def matrices(self, freqs_hz: np.ndarray, theta: np.ndarray | None = None) -> np.ndarray:
        """Stacked MNA matrices ``(F, n, n)``; with ``theta`` of shape ``(S, P)`` (one
        parameter set per sample) ``(S, F, n, n)``, and then ``freqs_hz`` may also be
        ``(S, F)`` (frequencies per sample)."""
        f = np.asarray(freqs_hz, dtype=float)
        th = self.theta if theta is None else np.asarray(theta, dtype=float)
        n = self.n
        w = 2 * np.pi * f
        if th.ndim == 1:
            a0, a1 = self.pencil(th)
            out = np.empty((f.size, n, n), dtype=complex)
            out.real[...] = a0
            np.multiply(w[:, None, None], a1, out=out.imag)
            scaled = self._scaled
            if scaled.any():
                ph = self.phi(f)
                for p in np.flatnonzero(scaled):
                    sel = self.param == p
                    pat = np.zeros((n, n))
                    np.add.at(pat, (self.rows[sel], self.cols[sel]), self.signs[sel] * th[p])
                    out += ph[:, p, None, None].real * pat[None]
            return out
        # batched parameters: (S, P) -> (S, F, n, n); only the structurally non-zero
        # entries are computed, with two real matrix products
        nz, pats = self._nz_patterns  # (U,), (P, U)
        if f.ndim == 2:  # a frequency list per sample: (S, G)
            coef = th[:, None, :] * self.phi(f.ravel()).reshape((*f.shape, th.shape[1]))
        else:
            coef = th[:, None, :] * self.phi(f)[None, :, :]  # (S, F, P)
        s_, f_, p_ = coef.shape
        flat = coef.reshape(-1, p_)
        vals = np.empty((flat.shape[0], nz.size), dtype=complex)
        vals.real = flat.real @ pats
        vals.imag = flat.imag @ pats
        out = np.zeros((flat.shape[0], n * n), dtype=complex)
        out[:, nz] = vals
        return out.reshape(s_, f_, n, n)

    @cached_property
    def _nz_patterns(self) -> tuple[np.ndarray, np.ndarray]:
        flat = self.rows * self.n + self.cols
        nz, pos = np.unique(flat, return_inverse=True)
        pats = np.zeros((self.theta.size, nz.size))
        np.add.at(pats, (self.param, pos), self.signs)
        return nz, pats

    def rhs(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F, n)`` right-hand side from the sources' tones at ``freqs_hz``."""
        return self.tones(freqs_hz) @ self.src_incidence

    def tones(self, freqs_hz: np.ndarray) -> np.ndarray:
        """``(F, S)`` complex peak phasor of each source at each frequency (0 if silent)."""
        f = np.asarray(freqs_hz, dtype=float)
        out = np.zeros((f.size, len(self.src_names)), dtype=complex)
        src_idx, tone_f, tone_ph = self._tone_list
        if f.size == 0 or tone_f.size == 0:
            return out
        order = np.argsort(f)
        fs = f[order]
        pos = np.clip(np.searchsorted(fs, tone_f), 0, fs.size - 1)
        best = pos.copy()
        left = np.clip(pos - 1, 0, fs.size - 1)
        closer = np.abs(fs[left] - tone_f) < np.abs(fs[pos] - tone_f)
        best[closer] = left[closer]
        near = np.abs(fs[best] - tone_f) <= FREQ_RTOL * np.maximum(np.abs(fs[best]), tone_f)
        np.add.at(out, (order[best[near]], src_idx[near]), tone_ph[near])
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
        elements ``only``, in that order."""
        sel = np.arange(len(self.elem_names)) if only is None else np.asarray(only, dtype=int)
        pos = np.full(len(self.elem_names), -1)
        pos[sel] = np.arange(sel.size)
        keep = pos[self.cur_elem] >= 0
        th = self.theta if theta is None else np.asarray(theta)
        ph = self.phi(freqs_hz)  # (F, P)
        xs = x[..., self.cur_index[keep]]  # (..., F, T)
        cur_param = self.cur_param[keep]
        has_p = cur_param >= 0
        pidx = np.where(has_p, cur_param, 0)
        coef = np.where(has_p, th[..., pidx][..., None, :] * ph[:, pidx], 1.0)
        terms = self.cur_sign[keep] * coef * xs
        # scatter-add terms into elements: one matmul with a 0/1 map
        emap = np.zeros((int(keep.sum()), sel.size))
        emap[np.arange(emap.shape[0]), pos[self.cur_elem[keep]]] = 1.0
        out = (terms @ emap).astype(complex, copy=False)
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
    ) -> np.ndarray:
        """Solve at every frequency at once; returns ``x`` of shape ``(F, n)``.

        ``method``: ``"direct"`` assembles A(ω) for blocks of frequencies and calls one
        batched LAPACK LU solve per block; ``"pencil"`` reduces the pencil (A0, A1) of
        A(ω) = A0 + jω·A1 once to generalised Schur form with QZ (scipy) and then needs
        only O(n²) work per frequency (the Hessenberg/Schur approach to frequency
        responses of A. J. Laub, IEEE Trans. Automatic Control 26(2), 1981); ``"auto"``
        takes the pencil for many frequencies when no resistor follows a frequency law.
        Raises :class:`NetworkError` with a diagnosis for ill-posed networks.
        """
        f = np.asarray(freqs_hz, dtype=float)
        diagnose(self.circuit, dc=bool(np.any(f == 0)))
        b = self.rhs(f) if rhs is None else np.asarray(rhs, dtype=complex)
        use_pencil = method == "pencil" or (
            method == "auto" and f.size >= _PENCIL_MIN_FREQS and f.size * 4 >= self.n
        )
        if use_pencil and not self.has_frequency_law:
            return self._solve_pencil(f, b)
        x = np.empty(b.shape, dtype=complex)
        # blocks of frequencies keep each assembled stack in cache; within a block the
        # solve is one batched LAPACK call
        for start in range(0, f.size, _BLOCK):
            sl = slice(start, start + _BLOCK)
            x[sl] = solve_stacked(self, self.matrices(f[sl]), b[sl], f[sl], self.norm_bound(f[sl]))
        return x

    @property
    def has_frequency_law(self) -> bool:
        """True when some resistor follows R(f) = R·(f/f1)^x (A(ω) is then not affine)."""
        return bool(self._scaled.any())

    @cached_property
    def _scaled(self) -> np.ndarray:
        """Mask of the parameters that follow a resistance law."""
        return (self.basis == B_INV_SCALE) | (self.basis == B_SCALE)

    def pencil(self, theta: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """``(A0, A1)``: the constant and the jω parts of A(ω); resistors that follow a
        resistance law are left out of both (see :attr:`has_frequency_law`)."""
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

    @cached_property
    def _schur(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        from scipy.linalg import qz

        a0, a1 = self.pencil()
        aa, bb, q, z = qz(a0.astype(complex), a1.astype(complex), output="complex")
        return aa, bb, q, z

    def _solve_pencil(self, f: np.ndarray, b: np.ndarray) -> np.ndarray:
        aa, bb, q, z = self._schur
        w = 2 * np.pi * f
        c = b @ q.conj()
        y = np.zeros_like(c)
        diag = aa.diagonal()[None, :] + 1j * w[:, None] * bb.diagonal()[None, :]
        scale = np.abs(aa).max() + w * np.abs(bb).max()
        tiny = np.abs(diag) <= 1e-14 * scale[:, None]
        if tiny.any():
            bad = np.flatnonzero(tiny.any(axis=1))
            _raise_singular(self, self.matrices(f[bad]), f[bad], hint_bad=np.ones(bad.size, bool))
        for i in range(self.n - 1, -1, -1):  # back substitution, vectorised over frequency
            acc = (
                c[:, i]
                - y[:, i + 1 :] @ aa[i, i + 1 :]
                - 1j * w * (y[:, i + 1 :] @ bb[i, i + 1 :])
            )
            y[:, i] = acc / diag[:, i]
        x = y @ z.T
        _check_accuracy(self, x, b, f, self.norm_bound(f))
        return x


def solve_stacked(
    system: System,
    a: np.ndarray,
    b: np.ndarray,
    f: np.ndarray,
    anorm: np.ndarray | None = None,
) -> np.ndarray:
    """``numpy.linalg.solve`` on stacked systems, with singular cases diagnosed.

    ``anorm`` (optional, shape ``a.shape[:-2]``) is ||A||∞ or an upper bound of it.
    """
    try:
        x = np.linalg.solve(a, b[..., None])[..., 0]
    except np.linalg.LinAlgError:
        _raise_singular(system, a, f)
    an = np.abs(a).sum(axis=-1).max(axis=-1) if anorm is None else anorm
    _check_accuracy(system, x, b, f, an, a)
    return x


def _check_accuracy(
    system: System,
    x: np.ndarray,
    b: np.ndarray,
    f: np.ndarray,
    anorm: np.ndarray,
    a: np.ndarray | None = None,
) -> None:
    """Cheap loss-of-accuracy check: ||A||·||x|| / ||b|| is a lower bound of cond(A);
    beyond 1e13 the answer has no trustworthy digits and is reported, not returned."""
    bn = np.abs(b).max(axis=-1)
    xn = np.abs(x).max(axis=-1)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ratio = np.where(bn > 0, anorm * xn / np.where(bn > 0, bn, 1.0), 0.0)
    bad = ~np.isfinite(x).all(axis=-1) | (ratio > _NEAR_SINGULAR)
    if bad.any():
        if a is None:
            idx = np.flatnonzero(bad.reshape(-1))
            ff = np.broadcast_to(f, bad.shape).reshape(-1)[idx]
            _raise_singular(system, system.matrices(ff), ff, hint_bad=np.ones(idx.size, bool))
        else:
            _raise_singular(system, a, f, hint_bad=bad)


def _raise_singular(
    system: System, a: np.ndarray, f: np.ndarray, hint_bad: np.ndarray | None = None
) -> NoReturn:
    """Find the first singular frequency and name the unknowns in its null space."""
    flat_a = a.reshape(-1, system.n, system.n)
    flat_f = np.broadcast_to(f, a.shape[:-2]).reshape(-1)
    order: list[int] = list(range(flat_a.shape[0]))
    if hint_bad is not None:
        order = np.flatnonzero(np.asarray(hint_bad).reshape(-1)).tolist()
    for i in order:
        _u, s, vh = np.linalg.svd(flat_a[i])
        if s[-1] <= s[0] * 1e-13 or hint_bad is not None:
            null = np.abs(vh[-1].conj())
            involved = np.flatnonzero(null > 0.1 * null.max())
            nodes = [system.labels[j] for j in involved if j < system.n_nodes]
            parts = [system.labels[j] for j in involved if j >= system.n_nodes]
            raise SingularNetworkError(
                "the equations have no unique solution (an exact resonance of ideal parts, "
                "or controlled sources that cancel)",
                nodes=nodes,
                parts=parts,
                freq_hz=float(flat_f[i]),
                hint="add realistic losses (series/parallel resistance) or check the gains",
            )
    raise SingularNetworkError("the equations have no unique solution")  # pragma: no cover


# ------------------------------------------------------------------------------ building
class _Builder:
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

    def new_branch(self, label: str) -> int:
        self.labels.append(label)
        self.n += 1
        return self.n - 1


def build_system(circuit: Circuit) -> System:
    """Assemble the frequency-independent MNA description of ``circuit``."""
    b = _Builder(circuit)
    one = b.new_param(1.0, B_CONST)
    node = b.idx
    parts = [p for p in circuit.parts if p.kind != "COUPLING"]
    part_pos = {p.name.lower(): i for i, p in enumerate(parts)}
    n_parts = len(parts)
    {s.name.lower(): n_parts + i for i, s in enumerate(circuit.sources)}
    controllers = {
        p.ctrl_part.lower() for p in parts if p.kind in ("CCVS", "CCCS") and p.ctrl_part
    }
    # branch currents first, so that controlled sources can refer to them
    branch: dict[str, int] = {}
    for p in parts:
        if p.kind in _BRANCH_KINDS or p.name.lower() in controllers:
            branch[p.name.lower()] = b.new_branch(p.name)
    for s in circuit.sources:
        if s.kind == "V" or s.name.lower() in controllers:
            branch[s.name.lower()] = b.new_branch(s.name)

    # element current terms: (elem, unknown index, param or -1, sign)
    cur: list[tuple[int, int, int, float]] = []
    cur_src = [-1] * (n_parts + len(circuit.sources))

    def kcl(a: int, c: int, k: int) -> None:
        b.entry(a, k, +1.0, one)
        b.entry(c, k, -1.0, one)

    for e, p in enumerate(parts):
        a, c = node[p.from_node or ""], node[p.to_node or ""]
        k = branch.get(p.name.lower())
        if p.kind == "R":
            if k is None:
                basis = B_INV_SCALE if p.r_exponent else B_CONST
                g = b.new_param(1.0 / p.value, basis, ((e, -1.0),), p.r_exponent, e)
                for r_, c_, s_ in ((a, a, 1), (c, c, 1), (a, c, -1), (c, a, -1)):
                    b.entry(r_, c_, s_, g)
                cur += [(e, a, g, 1.0), (e, c, g, -1.0)]
            else:
                basis = B_SCALE if p.r_exponent else B_CONST
                r = b.new_param(p.value, basis, ((e, 1.0),), p.r_exponent, e)
                kcl(a, c, k)
                b.entry(k, a, 1.0, one)
                b.entry(k, c, -1.0, one)
                b.entry(k, k, -1.0, r)
                cur.append((e, k, -1, 1.0))
        elif p.kind == "C":
            cp = b.new_param(p.value, B_JW, ((e, 1.0),), elem=e)
            if k is None:
                for r_, c_, s_ in ((a, a, 1), (c, c, 1), (a, c, -1), (c, a, -1)):
                    b.entry(r_, c_, s_, cp)
                cur += [(e, a, cp, 1.0), (e, c, cp, -1.0)]
            else:
                kcl(a, c, k)
                b.entry(k, k, 1.0, one)
                b.entry(k, a, -1.0, cp)
                b.entry(k, c, 1.0, cp)
                cur.append((e, k, -1, 1.0))
        elif p.kind == "L":
            assert k is not None
            lp = b.new_param(p.value, B_JW, ((e, 1.0),), elem=e)
            kcl(a, c, k)
            b.entry(k, a, 1.0, one)
            b.entry(k, c, -1.0, one)
            b.entry(k, k, -1.0, lp)
            cur.append((e, k, -1, 1.0))
        elif p.kind == "XFMR":
            assert k is not None
            d1, d2 = node[p.sec_from or ""], node[p.sec_to or ""]
            npar = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
            kcl(a, c, k)
            b.entry(d1, k, -1.0, npar)  # winding-2 current = −n·I1 flows sec_from → sec_to
            b.entry(d2, k, 1.0, npar)
            b.entry(k, a, 1.0, one)
            b.entry(k, c, -1.0, one)
            b.entry(k, d1, -1.0, npar)
            b.entry(k, d2, 1.0, npar)
            cur.append((e, k, -1, 1.0))
        elif p.kind in ("VCVS", "VCCS"):
            cf, ct = node[p.ctrl_from or ""], node[p.ctrl_to or ""]
            gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
            if p.kind == "VCVS":
                assert k is not None
                kcl(a, c, k)
                b.entry(k, a, 1.0, one)
                b.entry(k, c, -1.0, one)
                b.entry(k, cf, -1.0, gp)
                b.entry(k, ct, 1.0, gp)
                cur.append((e, k, -1, 1.0))
            elif k is None:
                for r_, c_, s_ in ((a, cf, 1), (a, ct, -1), (c, cf, -1), (c, ct, 1)):
                    b.entry(r_, c_, s_, gp)
                cur += [(e, cf, gp, 1.0), (e, ct, gp, -1.0)]
            else:
                kcl(a, c, k)
                b.entry(k, k, 1.0, one)
                b.entry(k, cf, -1.0, gp)
                b.entry(k, ct, 1.0, gp)
                cur.append((e, k, -1, 1.0))
        elif p.kind in ("CCVS", "CCCS"):
            kc = branch[(p.ctrl_part or "").lower()]
            gp = b.new_param(p.value, B_CONST, ((e, 1.0),), elem=e)
            if p.kind == "CCVS":
                assert k is not None
                kcl(a, c, k)
                b.entry(k, a, 1.0, one)
                b.entry(k, c, -1.0, one)
                b.entry(k, kc, -1.0, gp)
                cur.append((e, k, -1, 1.0))
            elif k is None:
                b.entry(a, kc, 1.0, gp)
                b.entry(c, kc, -1.0, gp)
                cur.append((e, kc, gp, 1.0))
            else:
                kcl(a, c, k)
                b.entry(k, k, 1.0, one)
                b.entry(k, kc, -1.0, gp)
                cur.append((e, k, -1, 1.0))

    # couplings: M = k·sqrt(L1·L2) between the two inductor branches
    for p in circuit.parts:
        if p.kind != "COUPLING":
            continue
        la = circuit.part(p.coil_a or "")
        lb = circuit.part(p.coil_b or "")
        ea, eb = part_pos[la.name.lower()], part_pos[lb.name.lower()]
        m = p.value * np.sqrt(la.value * lb.value)
        ka, kb = branch[la.name.lower()], branch[lb.name.lower()]
        # the coupling's own value (k) has no element index; tolerance applies to L's only
        mp = b.new_param(float(m), B_JW, ((ea, 0.5), (eb, 0.5)))
        b.entry(ka, kb, -1.0, mp)
        b.entry(kb, ka, -1.0, mp)

    # independent sources: incidence of the right-hand side
    inc = np.zeros((len(circuit.sources), 1))
    inc_rows: list[dict[int, float]] = []
    for i, s in enumerate(circuit.sources):
        e = n_parts + i
        a, c = node[s.from_node], node[s.to_node]
        k = branch.get(s.name.lower())
        col: dict[int, float] = {}
        if s.kind == "V":
            assert k is not None
            kcl(a, c, k)
            b.entry(k, a, 1.0, one)
            b.entry(k, c, -1.0, one)
            col[k] = 1.0
            cur.append((e, k, -1, 1.0))
        elif k is None:
            if a >= 0:
                col[a] = -1.0
            if c >= 0:
                col[c] = col.get(c, 0.0) + 1.0
            cur_src[e] = i
        else:
            kcl(a, c, k)
            b.entry(k, k, 1.0, one)
            col[k] = 1.0
            cur.append((e, k, -1, 1.0))
        inc_rows.append(col)
    inc = np.zeros((len(circuit.sources), b.n))
    for i, col in enumerate(inc_rows):
        for r_, v in col.items():
            inc[i, r_] = v

    elems = parts
    names = tuple([p.name for p in elems] + [s.name for s in circuit.sources])
    kinds = tuple([p.kind for p in elems] + [s.kind for s in circuit.sources])
    plus = np.array(
        [node[p.from_node or ""] for p in elems] + [node[s.from_node] for s in circuit.sources]
    )
    minus = np.array(
        [node[p.to_node or ""] for p in elems] + [node[s.to_node] for s in circuit.sources]
    )
    plus = np.where(plus < 0, b.n, plus)
    minus = np.where(minus < 0, b.n, minus)
    # current terms referring to the reference node (index -1) vanish
    cur = [t for t in cur if t[1] >= 0]
    return System(
        circuit=circuit,
        n=b.n,
        n_nodes=len(circuit.nodes),
        labels=tuple(b.labels),
        rows=np.array(b.rows, dtype=int),
        cols=np.array(b.cols, dtype=int),
        signs=np.array(b.signs, dtype=float),
        param=np.array(b.param, dtype=int),
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
        cur_elem=np.array([t[0] for t in cur], dtype=int),
        cur_index=np.array([t[1] for t in cur], dtype=int),
        cur_param=np.array([t[2] for t in cur], dtype=int),
        cur_sign=np.array([t[3] for t in cur], dtype=float),
        cur_src=np.array(cur_src, dtype=int),
        sec_plus=np.array(
            [node[p.sec_from] if p.sec_from else -1 for p in elems] + [-1] * len(circuit.sources)
        )
        % (b.n + 1),
        sec_minus=np.array(
            [node[p.sec_to] if p.sec_to else -1 for p in elems] + [-1] * len(circuit.sources)
        )
        % (b.n + 1),
        sec_ratio=np.array(
            [p.value if p.kind == "XFMR" else 0.0 for p in elems] + [0.0] * len(circuit.sources)
        ),
    )
