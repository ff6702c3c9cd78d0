"""Shared machinery of the frequency-domain studies (private).

* **Outputs and inputs as vectors.** A response y = c(ω)·x (+ a direct term) of a node
  voltage, a part's voltage or current, or a source's voltage or current, where
  A(ω)·x = b and b is the incidence of one source's own value (or of a test current).
* **Exact derivatives.** dx/dω = −A⁻¹·(dA/dω)·x, with dA/dω = j·A1 plus the derivative of
  any resistance law, so group delay and stationarity tests need no differencing.
* **Natural frequencies.** Finite generalised eigenvalues of the pencil (A0, A1) of
  A(s) = A0 + s·A1 and of bordered pencils (zeros of one transfer function), after an
  exact power-of-two equilibration and a frequency scaling; infinite eigenvalues are
  filtered by the rule stated in :func:`finite_eigenvalues`.
* **Extrema of |H(jω)|, complete by construction.** With H = K·Π(s − z)/Π(s − p), the
  derivative of ln|H(jω)| is an explicit sum over the zeros and poles; its roots in a band
  are isolated rigorously by bisection with a second-order Taylor bound
  (:func:`stationary_points`), so no extremum is missed between grid points.

Every many-frequency evaluation goes through ``System.solve`` (no Python loop over
frequencies).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..circuit import Circuit
from ..errors import InputError, NetworkError, SingularNetworkError
from ..solver import B_CONST, B_INV_SCALE, B_JW, B_SCALE, System
from ..tables import SourceRow, name_key

__all__ = [
    "AXIS_RTOL",
    "CANCEL_RTOL",
    "INFINITE_RATIO",
    "MAX_EIG_UNKNOWNS",
    "Functional",
    "adaptive_integral",
    "as_circuit",
    "cancel_common",
    "check_band",
    "continuous_phase",
    "d_matrix_times",
    "finite_eigenvalues",
    "frozen_pencil",
    "law_fundamental",
    "log_model",
    "node_pair",
    "output_functional",
    "port_functional",
    "port_vector",
    "rebuild",
    "resolve_port",
    "source_vector",
    "stationary_points",
    "zeros_of",
]

# |s| beyond INFINITE_RATIO·ω_ref: an infinite eigenvalue (an algebraic constraint)
INFINITE_RATIO = 1e10
# |s| at or below ZERO_RATIO·ω_ref: s = 0, a DC mode (the charge of a node that floats at
# DC, a current circulating in a loop of inductors). The QZ reduction resolves an eigenvalue
# at the origin only to about this much of the network's middle frequency, so the sign of a
# smaller one is rounding noise: reporting it as a growing mode would be a false alarm.
# A genuine mode this slow (28 h time constant against a 1 kHz network) is shown as s = 0.
ZERO_RATIO = 1e-8
# |Re s| ≤ AXIS_RTOL·|s|: on the jω axis (lossless), beyond what the eigenvalues resolve
AXIS_RTOL = 1e-9
# a pole and a zero closer than CANCEL_RTOL·|s| cancel (a mode the output does not see)
CANCEL_RTOL = 1e-8
# largest dense eigenvalue problem we attempt (O(n³) work, O(n²) memory)
MAX_EIG_UNKNOWNS = 3000


def as_circuit(parts: Any, sources: Any = None, options: Any = None) -> Circuit:
    """A :class:`Circuit` from tables (or the circuit itself)."""
    if isinstance(parts, Circuit):
        return parts
    return Circuit.from_tables(parts, sources, options)


def check_band(f_start: Any, f_stop: Any, *, allow_zero: bool = False) -> tuple[float, float]:
    """Validated band edges in Hz (``f_start`` > 0 unless ``allow_zero``)."""
    for name, v in (("f_start", f_start), ("f_stop", f_stop)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or math.isnan(v):
            raise InputError("argument", None, name, v, "expected a frequency in Hz")
    lo, hi = float(f_start), float(f_stop)
    if not math.isfinite(lo) or lo < 0 or (lo == 0 and not allow_zero):
        raise InputError(
            "argument",
            None,
            "f_start",
            f_start,
            "expected a frequency ≥ 0 Hz" if allow_zero else "expected a frequency > 0 Hz",
        )
    if not hi > lo or (not math.isfinite(hi) and not allow_zero):
        raise InputError("argument", None, "f_stop", f_stop, "expected a frequency > f_start")
    if lo > 0 and lo < 1e-6:
        raise InputError("argument", None, "f_start", f_start, "expected 1e-6 Hz or more")
    if math.isfinite(hi) and hi > 1e12:
        raise InputError("argument", None, "f_stop", f_stop, "expected at most 1e12 Hz")
    if math.isfinite(hi) and lo > 0 and hi / lo > 1e12:
        raise InputError(
            "argument", None, "f_stop", f_stop, "expected a band of at most 12 decades"
        )
    return lo, hi


# ------------------------------------------------------------------------- the network
def law_fundamental(system: System) -> float | None:
    """f₁ of the resistance law (None when no resistor follows one). A law without
    ``fundamental_hz`` is refused, naming the first such part."""
    scaled = (system.basis == B_SCALE) | (system.basis == B_INV_SCALE)
    if not scaled.any():
        return None
    f1 = system.circuit.options.fundamental_hz
    if f1 is None:
        p = next(p for p in system.circuit.parts if p.r_exponent)
        raise InputError(
            "parts",
            p.row,
            "r_exponent",
            p.r_exponent,
            "a resistance law needs fundamental_hz in the options (R(f) = R·(f/f₁)^x)",
        )
    return float(f1)


def _dphi(system: System, f: np.ndarray) -> np.ndarray:
    """``(F, P)`` derivative dφ/dω of every parameter's frequency factor. At f = f₁,
    where a resistance law has its kink, the derivative from above is used."""
    w = 2 * np.pi * f
    out = np.zeros((f.size, system.theta.size), dtype=complex)
    out[:, system.basis == B_JW] = 1j
    scaled = np.flatnonzero((system.basis == B_SCALE) | (system.basis == B_INV_SCALE))
    if scaled.size:
        f1 = law_fundamental(system)
        assert f1 is not None
        above = (f >= f1)[:, None]
        x = system.exponent[scaled][None, :]
        sign = np.where(system.basis[scaled] == B_SCALE, 1.0, -1.0)[None, :]
        with np.errstate(divide="ignore", invalid="ignore"):
            val = sign * x / w[:, None] * (np.maximum(f, f1) / f1)[:, None] ** (sign * x)
        out[:, scaled] = np.where(above, val, 0.0)
    return out


def d_matrix_times(system: System, f: np.ndarray, x: np.ndarray) -> np.ndarray:
    """``(F, n)``: (dA/dω)·x at each frequency, for solutions ``x`` of shape (F, n)."""
    _a0, a1 = system.pencil()
    out = 1j * (x @ a1.T)
    scaled = np.flatnonzero((system.basis == B_SCALE) | (system.basis == B_INV_SCALE))
    if scaled.size:
        dph = _dphi(system, f)
        for p in scaled:
            sel = system.param == p
            pat = np.zeros((system.n, system.n))
            np.add.at(pat, (system.rows[sel], system.cols[sel]), system.signs[sel])
            out += (system.theta[p] * dph[:, p])[:, None] * (x @ pat.T)
    return out


def frozen_pencil(system: System, f_hz: float) -> tuple[np.ndarray, np.ndarray]:
    """(A0, A1) with every resistance-law resistor frozen at its value at ``f_hz``."""
    a = system.matrices(np.array([f_hz]))[0]
    _a0, a1 = system.pencil()
    return a.real.copy(), a1


def rebuild(
    circuit: Circuit, drop: Sequence[str] = (), extra: Sequence[SourceRow] = ()
) -> Circuit:
    """The circuit without the parts ``drop`` (names) and with the source rows ``extra``."""
    keys = {d.lower() for d in drop}
    for p in circuit.parts:
        if p.name.lower() in keys:
            continue
        for col, ref in (
            ("ctrl_part", p.ctrl_part),
            ("coil_a", p.coil_a),
            ("coil_b", p.coil_b),
        ):
            if ref is not None and ref.lower() in keys:
                raise InputError(
                    "argument",
                    None,
                    "load",
                    ref,
                    f"part {p.name!r} (parts row {p.row}, column {col}) refers to it; a part "
                    "another part depends on cannot be taken out",
                )
    parts = [p for p in circuit.parts if p.name.lower() not in keys]
    rows = [
        SourceRow(s.row, s.name, s.kind, s.from_node, s.to_node, f, complex(ph))
        for s in circuit.sources
        for f, ph in s.tones
    ]
    return Circuit.from_records(parts, [*rows, *extra], circuit.options)


# ------------------------------------------------------------------ inputs and outputs
def _node_pos(circuit: Circuit, name: Any, column: str, *, ground_ok: bool) -> int:
    """Unknown index of a node (-1: the reference)."""
    text = "" if name is None else str(name).strip()
    if not text:
        raise InputError("argument", None, column, expected="missing node name")
    if ground_ok and circuit.node_name(text, column) == circuit.ground:
        return -1
    # the core's lookup: letter case ignored, a node: prefix taken, an unknown name
    # answered with the closest node and the list of nodes
    return circuit.node_index(text, column)


def resolve_port(circuit: Circuit, port: Any, column: str) -> tuple[int, int, str]:
    """A port given as one node (against the reference) or a pair ``(from, to)``:
    ``(plus index, minus index, label)``; -1 is the reference."""
    cells: list[Any]
    if isinstance(port, (list, tuple)):
        cells = [c for row in port for c in (row if isinstance(row, (list, tuple)) else [row])]
        cells = [c for c in cells if not (c is None or (isinstance(c, str) and not c.strip()))]
    else:
        cells = [port]
    if len(cells) == 1:
        plus = _node_pos(circuit, cells[0], column, ground_ok=False)
        return plus, -1, f"{cells[0]}"
    if len(cells) != 2:
        raise InputError(
            "argument",
            None,
            column,
            expected=f"one node or two nodes (from, to), got {len(cells)} cells",
        )
    plus = _node_pos(circuit, cells[0], column, ground_ok=True)
    minus = _node_pos(circuit, cells[1], column, ground_ok=True)
    if plus == minus:
        raise InputError(
            "argument", None, column, cells[1], "expected two different nodes for a port"
        )
    return plus, minus, f"{cells[0]}–{cells[1]}"


def node_pair(
    circuit: Circuit, node_a: Any, node_b: Any, columns: tuple[str, str] = ("node_a", "node_b")
) -> tuple[int, int, str]:
    """A port between two named nodes (either may be the reference), each looked up and
    named in messages as its own argument: ``(plus index, minus index, label)``."""
    plus = _node_pos(circuit, node_a, columns[0], ground_ok=True)
    minus = _node_pos(circuit, node_b, columns[1], ground_ok=True)
    if plus == minus:
        raise InputError(
            "argument", None, columns[1], node_b, f"expected a node other than {columns[0]}"
        )
    return plus, minus, f"{node_a}–{node_b}"


def port_vector(system: System, plus: int, minus: int) -> np.ndarray:
    """Incidence of a 1 A test current entering node ``plus`` and leaving ``minus``."""
    b = np.zeros(system.n)
    if plus >= 0:
        b[plus] += 1.0
    if minus >= 0:
        b[minus] -= 1.0
    return b


@dataclass(frozen=True)
class Functional:
    """A response ``y(ω) = Σ_t sign_t·θφ_t(ω)·x[idx_t] + direct·u`` (u: the input's own
    value); ``param == -1`` marks a plain ``x[idx]`` term."""

    label: str
    unit: str
    idx: np.ndarray
    sign: np.ndarray
    param: np.ndarray
    direct: float = 0.0

    def _coef(self, system: System, f: np.ndarray, deriv: bool) -> np.ndarray:
        has_p = self.param >= 0
        pidx = np.where(has_p, self.param, 0)
        if deriv:
            ph = _dphi(system, f)[:, pidx]
            return np.where(has_p, system.theta[pidx] * ph, 0.0) * self.sign
        ph = system.phi(f)[:, pidx]
        return np.where(has_p, system.theta[pidx] * ph, 1.0) * self.sign

    def value(self, system: System, f: np.ndarray, x: np.ndarray) -> np.ndarray:
        """``(F,)`` response for solutions x (F, n) of a unit input."""
        return (self._coef(system, f, False) * x[:, self.idx]).sum(axis=1) + self.direct

    def derivative(
        self, system: System, f: np.ndarray, x: np.ndarray, dx: np.ndarray
    ) -> np.ndarray:
        """``(F,)`` dy/dω from x and dx/dω."""
        c = self._coef(system, f, False)
        dc = self._coef(system, f, True)
        return (dc * x[:, self.idx]).sum(axis=1) + (c * dx[:, self.idx]).sum(axis=1)

    def affine(self, system: System) -> tuple[np.ndarray, np.ndarray]:
        """``(c0, c1)`` with c(s) = c0 + s·c1 (a network without resistance law)."""
        c0 = np.zeros(system.n)
        c1 = np.zeros(system.n)
        for i, s, p in zip(self.idx, self.sign, self.param, strict=True):
            if p < 0 or system.basis[p] == B_CONST:
                c0[i] += s * (1.0 if p < 0 else system.theta[p])
            elif system.basis[p] == B_JW:
                c1[i] += s * system.theta[p]
            else:  # pragma: no cover - callers refuse resistance laws first
                raise AssertionError("resistance law in an affine output")
        return c0, c1


def port_functional(plus: int, minus: int, label: str) -> Functional:
    """V(plus) − V(minus)."""
    idx = [i for i in (plus, minus) if i >= 0]
    sign = [s for i, s in ((plus, 1.0), (minus, -1.0)) if i >= 0]
    return Functional(
        label, "V", np.array(idx, dtype=int), np.array(sign), np.full(len(idx), -1, dtype=int)
    )


def source_vector(system: System, circuit: Circuit, name: Any, column: str) -> tuple[int, str]:
    """Index (in ``system.src_names``) of the source called ``name``."""
    text = "" if name is None else str(name).strip()
    if not text:
        raise InputError("argument", None, column, expected="missing source name")
    keys = [name_key(s) for s in system.src_names]
    if name_key(text) in keys:  # a source, even where a node has the same name
        i = keys.index(name_key(text))
        return i, system.src_names[i]
    kind, obj = circuit.find(text, column)  # the core's message for an unknown name
    if kind != "source":
        what = "node" if kind == "node" else f"part (parts row {obj.row})"
        sources = ", ".join(system.src_names) or "none"
        raise InputError(
            "argument",
            None,
            column,
            name,
            f"expected a source; {text!r} is a {what} (sources: {sources})",
        )
    return system.src_names.index(obj.name), obj.name


def output_functional(
    system: System, circuit: Circuit, name: Any, quantity: str | None, input_src: int
) -> Functional:
    """The response called ``name``: a node's voltage, or a part's / source's voltage or
    current (``quantity`` V or I; default I for a part or source, V for a node)."""
    text = "" if name is None else str(name).strip()
    if not text:
        raise InputError("argument", None, "output", expected="missing output name")
    kind, obj = circuit.find(text, "output")
    if kind == "node":
        if quantity == "I":
            raise InputError(
                "argument", None, "quantity", quantity, "a node has a voltage only (use V)"
            )
        if obj == circuit.ground:
            raise InputError(
                "argument",
                None,
                "output",
                name,
                f"the reference node {circuit.ground!r} is at 0 V by definition",
            )
        i = circuit.nodes.index(obj)
        return port_functional(i, -1, f"V({obj})")
    if kind == "part" and obj.kind == "COUPLING":
        raise InputError(
            "argument", None, "output", name, "a coupling carries no voltage or current"
        )
    e = [k.lower() for k in system.elem_names].index(obj.name.lower())
    q = quantity or "I"
    if q == "V":
        n = system.n
        plus, minus = int(system.elem_plus[e]), int(system.elem_minus[e])
        return port_functional(
            plus if plus < n else -1, minus if minus < n else -1, f"V({obj.name})"
        )
    sel = system.cur_elem == e
    direct = 0.0
    if system.cur_src[e] >= 0:
        direct = 1.0 if int(system.cur_src[e]) == input_src else 0.0
    return Functional(
        f"I({obj.name})",
        "A",
        system.cur_index[sel].astype(int),
        system.cur_sign[sel].astype(float),
        system.cur_param[sel].astype(int),
        direct,
    )


# --------------------------------------------------------------- natural frequencies
def _equilibrate(m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Power-of-two row and column scales that bring every row and column maximum of the
    non-negative matrix ``m`` near 1 (exact in floating point; eigenvalues unchanged)."""
    n = m.shape[0]
    r = np.ones(n)
    c = np.ones(n)
    for _ in range(4):
        rm = (m * c[None, :]).max(axis=1) * r
        r = r * np.ldexp(1.0, -np.frexp(np.where(rm > 0, rm, 1.0))[1])
        cm = (m * r[:, None]).max(axis=0) * c
        c = c * np.ldexp(1.0, -np.frexp(np.where(cm > 0, cm, 1.0))[1])
    return r, c


def _eig_scaled(a0: np.ndarray, a1: np.ndarray, w_ref: float) -> tuple[np.ndarray, np.ndarray]:
    """Homogeneous eigenvalues (α, β) of the equilibrated pencil (A0, −ω_ref·A1):
    s = ω_ref·α/β; also checks the pencil is regular."""
    from scipy.linalg import eigvals

    b = w_ref * a1
    r, c = _equilibrate(np.abs(a0) + np.abs(b))
    sa = r[:, None] * a0 * c[None, :]
    sb = r[:, None] * b * c[None, :]
    if not (np.isfinite(sa).all() and np.isfinite(sb).all()):
        raise NetworkError("the network's matrices are not finite after scaling")
    ab = eigvals(sa, -sb, homogeneous_eigvals=True)
    alpha, beta = ab[0], ab[1]
    na = max(float(np.linalg.norm(sa)), 1e-300)
    nb = max(float(np.linalg.norm(sb)), 1e-300)
    tol = 1e-12 * max(1, sa.shape[0])
    singular = (np.abs(alpha) <= tol * na) & (np.abs(beta) <= tol * nb)
    if singular.any():
        raise SingularNetworkError(
            "the equations have no unique solution at any frequency (the pencil A0 + s·A1 "
            "is singular: controlled sources that cancel, or parts that leave a node "
            "undetermined)",
            hint="check the gains and the connections of the controlled sources",
        )
    return alpha, beta


def finite_eigenvalues(
    a0: np.ndarray, a1: np.ndarray, w_ref: float | None = None
) -> tuple[np.ndarray, float]:
    """Finite generalised eigenvalues s of A0 + s·A1 (rad/s, conjugates included) and
    the reference ω_ref used.

    Rule for infinite eigenvalues: the pencil is equilibrated (power-of-two row and column
    scaling of |A0| + ω_ref·|A1|) and reduced by QZ; an eigenvalue (α, β) is infinite when
    |s| = ω_ref·|α/β| > 1e10·ω_ref (β = 0 exactly for the structural constraints: nodes
    without capacitance, voltage-defined branches). One at |s| ≤ 1e-8·ω_ref is s = 0 (a DC
    mode; see ``ZERO_RATIO``). Without a given ω_ref (a band centre),
    ω_ref is the geometric mean of |s| over a first pass's eigenvalues that are neither
    zero nor at the rounding level of β, i.e. the middle of the network's own spectrum.
    """
    n = a0.shape[0]
    if n == 0:
        return np.zeros(0, dtype=complex), 1.0
    if n > MAX_EIG_UNKNOWNS:
        raise NetworkError(
            f"{n} unknowns: too large for the dense eigenvalue solve of natural frequencies "
            f"(at most {MAX_EIG_UNKNOWNS})"
        )
    if w_ref is None:
        n0 = float(np.linalg.norm(a0))
        n1 = float(np.linalg.norm(a1))
        w0 = n0 / n1 if n0 > 0 and n1 > 0 else 1.0
        alpha, beta = _eig_scaled(a0, a1, w0)
        keep = (np.abs(beta) > 1e-13 * np.abs(alpha)) & (np.abs(alpha) > 0)
        mags = np.abs(alpha[keep] / beta[keep])
        mags = mags[(mags > 1e-13) & np.isfinite(mags)]
        w_ref = w0 * float(np.exp(np.mean(np.log(mags)))) if mags.size else w0
    alpha, beta = _eig_scaled(a0, a1, w_ref)
    finite = np.abs(beta) * INFINITE_RATIO >= np.abs(alpha)
    with np.errstate(divide="ignore", invalid="ignore"):
        s = w_ref * alpha[finite] / beta[finite]
    # a real pencil: keep conjugate pairs exact
    s = np.where(np.abs(s.imag) <= 1e-14 * np.abs(s), s.real + 0j, s)
    s = np.where(np.abs(s) <= ZERO_RATIO * w_ref, 0j, s)
    return s, float(w_ref)


def zeros_of(
    a0: np.ndarray,
    a1: np.ndarray,
    b: np.ndarray,
    c0: np.ndarray,
    c1: np.ndarray,
    direct: float,
    w_ref: float,
) -> np.ndarray:
    """Finite zeros of H(s) = c(s)ᵀA(s)⁻¹b + direct, c(s) = c0 + s·c1: eigenvalues of the
    bordered pencil [[A0, b], [c0ᵀ, −direct]] + s·[[A1, 0], [c1ᵀ, 0]], whose determinant is
    −det A(s)·H(s). Same infinite-eigenvalue rule as :func:`finite_eigenvalues`."""
    n = a0.shape[0]
    b0 = np.zeros((n + 1, n + 1))
    b1 = np.zeros((n + 1, n + 1))
    b0[:n, :n] = a0
    b0[:n, n] = b
    b0[n, :n] = c0
    b0[n, n] = -direct
    b1[:n, :n] = a1
    b1[n, :n] = c1
    try:
        return finite_eigenvalues(b0, b1, w_ref)[0]
    except SingularNetworkError:
        # H(s) ≡ 0: the output does not depend on the input at all
        raise NetworkError(
            "the output does not respond to the input at any frequency (transfer function "
            "identically 0)"
        ) from None


def cancel_common(
    poles: np.ndarray, zeros: np.ndarray, w_ref: float, rtol: float = CANCEL_RTOL
) -> tuple[np.ndarray, np.ndarray]:
    """Remove pole–zero pairs closer than ``rtol``·max(|s|, ω_ref·1e-6): modes the output
    does not see (uncontrollable or unobservable from the chosen input and output)."""
    p = list(poles)
    z = list(zeros)
    if not p or not z:
        return np.array(p, dtype=complex), np.array(z, dtype=complex)
    pa = np.array(p)
    za = np.array(z)
    d = np.abs(za[:, None] - pa[None, :])
    scale = np.maximum(np.maximum(np.abs(za)[:, None], np.abs(pa)[None, :]), 1e-6 * w_ref)
    cand = np.argwhere(d <= rtol * scale)
    order = np.argsort(d[cand[:, 0], cand[:, 1]]) if cand.size else np.array([], dtype=int)
    used_z: set[int] = set()
    used_p: set[int] = set()
    for k in order:
        i, j = int(cand[k, 0]), int(cand[k, 1])
        if i in used_z or j in used_p:
            continue
        used_z.add(i)
        used_p.add(j)
    keep_p = np.array([x for j, x in enumerate(p) if j not in used_p], dtype=complex)
    keep_z = np.array([x for i, x in enumerate(z) if i not in used_z], dtype=complex)
    return keep_p, keep_z


def log_model(w: np.ndarray, zeros: np.ndarray, poles: np.ndarray) -> np.ndarray:
    """ln of Π(jω − z)/Π(jω − p) (complex; the gain K is fitted by the caller)."""
    s = 1j * np.asarray(w, dtype=float)[:, None]
    out = np.zeros(s.shape[0], dtype=complex)
    if zeros.size:
        out += np.log(s - zeros[None, :]).sum(axis=1)
    if poles.size:
        out -= np.log(s - poles[None, :]).sum(axis=1)
    return out


def _factor_phase(w: np.ndarray, lam: np.ndarray) -> np.ndarray:
    """``(W, N)`` continuous arg(jω − λ) along ω > 0: atan2(ω − Im λ, −Re λ) for λ in the
    closed left half plane, π − atan2(ω − Im λ, Re λ) in the right half plane (no branch
    cut crosses the jω axis; on the axis the jump of π at ω = Im λ is the left-half-plane
    limit)."""
    t = w[:, None] - lam.imag[None, :]
    re = np.where(np.abs(lam.real) <= AXIS_RTOL * np.abs(lam), 0.0, lam.real)[None, :]
    return np.where(re <= 0, np.arctan2(t, -re), np.pi - np.arctan2(t, re))


def continuous_phase(w: np.ndarray, zeros: np.ndarray, poles: np.ndarray) -> np.ndarray:
    """Phase (rad) of Π(jω − z)/Π(jω − p), continuous in ω (see :func:`_factor_phase`)."""
    out = np.zeros(w.size)
    if zeros.size:
        out += _factor_phase(w, zeros).sum(axis=1)
    if poles.size:
        out -= _factor_phase(w, poles).sum(axis=1)
    return out


# ------------------------------------------------------------- extrema of |H(jω)|
def _terms(zeros: np.ndarray, poles: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    lam = np.concatenate([zeros, poles])
    wt = np.concatenate([np.ones(zeros.size), -np.ones(poles.size)])
    return np.abs(lam.real), lam.imag, wt


def _g_dg(
    w: np.ndarray, a: np.ndarray, b: np.ndarray, wt: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """g = d ln|H(jω)|/dω = Σ ± (ω − b)/(a² + (ω − b)²) (+ for zeros, − for poles) and
    dg/dω."""
    t = w[:, None] - b[None, :]
    a2 = a * a
    inv = 1.0 / (a2 + t * t)
    g = (wt * t * inv).sum(axis=1)
    dg = (wt * (a2 - t * t) * inv * inv).sum(axis=1)
    return g, dg


def stationary_points(
    zeros: np.ndarray, poles: np.ndarray, w_lo: float, w_hi: float
) -> tuple[np.ndarray, np.ndarray]:
    """Every stationary point of |H(jω)| = |K|·Π|jω − z|/Π|jω − p| strictly inside
    (w_lo, w_hi): ``(ω, kind)`` with kind +1 for a maximum, −1 for a minimum.

    g(ω) = d ln|H|/dω = Σ_z h(ω; z) − Σ_p h(ω; p), h = (ω − Im λ)/(Re λ² + (ω − Im λ)²) =
    Re 1/(t + j·|Re λ|), so |h''| ≤ 2/ρ³ with ρ the distance from jω to λ. On a cell of
    half-width r around m: g = g(m) + g'(m)(ω − m) + R with |R| ≤ M₂r²/2, M₂ = Σ 2/ρ_min³.
    A cell is discarded when |g(m)| − |g'(m)|·r > M₂r²/2 (no root), kept as one root when
    |g'(m)| > M₂·r (g monotone) and g changes sign, and split otherwise; cells narrower
    than 1e-13 relative count a root where g changes sign (a tangency there is not an
    extremum). Zeros on the jω axis inside the band are exact minima (|H| = 0) and are
    returned as such; poles on the axis inside the band must be refused by the caller.
    """
    a, b, wt = _terms(zeros, poles)
    on_axis = a <= AXIS_RTOL * np.abs(b + 1j * a)
    axis_zero = np.flatnonzero(on_axis & (wt > 0) & (b > w_lo) & (b < w_hi))
    if np.any(on_axis & (wt < 0) & (b > w_lo) & (b < w_hi)):  # pragma: no cover
        raise AssertionError("a lossless pole inside the band reached stationary_points")
    a = np.where(on_axis, 0.0, a)
    # segments of the band, with a certified gap around each lossless zero
    cuts: list[tuple[float, float]] = []
    for k in axis_zero:
        bk = b[k]
        others = np.delete(np.arange(b.size), k)
        dist = np.abs(1j * bk - (b[others] * 1j + a[others])) if others.size else np.array([])
        dmin = float(dist.min()) if dist.size else bk
        s0 = float((2.0 / dist).sum()) if dist.size else 0.0
        delta = 0.25 * min(dmin, 1.0 / s0 if s0 > 0 else dmin, bk)
        cuts.append((bk - delta, bk + delta))
    segments: list[tuple[float, float]] = []
    start = w_lo
    for lo, hi in sorted(cuts):
        if lo > start:
            segments.append((start, lo))
        start = max(start, hi)
    if start < w_hi:
        segments.append((start, w_hi))

    # initial cells: segment ends, the features' own frequencies and widths, 4 per decade
    feat = np.concatenate([b, b - a, b + a])
    edges: list[np.ndarray] = []
    for lo, hi in segments:
        dec = max(1, math.ceil(4 * math.log10(hi / lo)))
        grid = np.exp(np.linspace(math.log(lo), math.log(hi), dec + 1))
        inner = np.unique(np.concatenate([[lo, hi], feat[(feat > lo) & (feat < hi)], grid]))
        inner = inner[(inner >= lo) & (inner <= hi)]
        edges.append(np.c_[inner[:-1], inner[1:]])
    cells = np.concatenate(edges) if edges else np.zeros((0, 2))
    cells = cells[cells[:, 1] > cells[:, 0]]
    roots_u: list[np.ndarray] = []
    roots_v: list[np.ndarray] = []
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(200):
            if cells.size == 0:
                break
            if cells.shape[0] > 100_000:  # pragma: no cover - a safeguard on the work
                raise NetworkError(
                    "the extrema of |H| could not be isolated (more than 100000 candidate "
                    "intervals): natural frequencies too many or too close to separate"
                )
            u, v = cells[:, 0], cells[:, 1]
            m = 0.5 * (u + v)
            r = 0.5 * (v - u)
            nc = u.size
            gg, dd = _g_dg(np.concatenate([m, u, v]), a, b, wt)
            gm, dgm = gg[:nc], dd[:nc]
            gu, gv = gg[nc : 2 * nc], gg[2 * nc :]
            dist = np.maximum(0.0, np.maximum(u[:, None] - b[None, :], b[None, :] - v[:, None]))
            rho2 = a[None, :] ** 2 + dist * dist
            m2 = (2.0 / (rho2 * np.sqrt(rho2))).sum(axis=1)
            none = np.abs(gm) - np.abs(dgm) * r > 0.5 * m2 * r * r
            change = np.sign(gu) != np.sign(gv)
            mono = np.abs(dgm) > m2 * r
            tiny = r <= 1e-13 * m
            root = ~none & change & (mono | tiny)
            drop = none | (~change & (mono | tiny))
            roots_u.append(u[root])
            roots_v.append(v[root])
            split = ~(root | drop)
            us, vs = u[split], v[split]
            mid = np.where(vs > 4 * us, np.sqrt(us * vs), 0.5 * (us + vs))
            cells = np.stack([np.concatenate([us, mid]), np.concatenate([mid, vs])], axis=1)
        else:  # pragma: no cover - depth is logarithmic in the feature widths
            raise NetworkError("the search for extrema of |H| did not terminate")
    ru = np.concatenate(roots_u) if roots_u else np.zeros(0)
    rv = np.concatenate(roots_v) if roots_v else np.zeros(0)
    # refine each isolated root: safeguarded Newton on the explicit g
    blo, bhi = ru.copy(), rv.copy()
    x = 0.5 * (blo + bhi)
    glo = _g_dg(blo, a, b, wt)[0]
    kind = np.where(glo > 0, 1, -1)
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(100):
            if x.size == 0:
                break
            gx, dgx = _g_dg(x, a, b, wt)
            same = np.sign(gx) == np.sign(glo)
            blo = np.where(same, x, blo)
            glo = np.where(same, gx, glo)
            bhi = np.where(same, bhi, x)
            newton = x - gx / dgx
            ok = (newton >= blo) & (newton <= bhi) & np.isfinite(newton)
            x_new = np.where(ok, newton, 0.5 * (blo + bhi))
            done = (np.abs(x_new - x) <= 1e-13 * x) | (bhi - blo <= 1e-13 * x) | (gx == 0)
            x = np.where(gx == 0, x, x_new)
            if np.all(done):
                break
    w_out = np.concatenate([x, b[axis_zero]])
    k_out = np.concatenate([kind, -np.ones(axis_zero.size, dtype=int)])
    order = np.argsort(w_out)
    return w_out[order], k_out[order]


# --------------------------------------------------------------------- quadrature
_GL_X, _GL_W = np.polynomial.legendre.leggauss(16)


def adaptive_integral(
    fun: Any,
    edges: np.ndarray,
    rtol: float,
    max_rounds: int = 40,
    max_panels: int = 20_000,
) -> tuple[np.ndarray, float]:
    """∫ ``fun`` over each interval [edges[i], edges[i+1]], ``fun`` mapping points (M,)
    to values (M, K).

    Adaptive Gauss–Legendre: each panel's 16-node estimate is compared with the sum of
    16-node estimates on its two halves; a panel is accepted when the difference of the
    summed (over K) integrals is within its share ``rtol``·|total|·width/span (at least
    1e-3·rtol·|total|), otherwise its halves become panels. Every round is one call of
    ``fun``. Returns ``(integrals (intervals, K), estimated absolute error of the grand
    total)``; raises when the panels do not converge.
    """
    edges = np.asarray(edges, dtype=float)
    span = float(edges[-1] - edges[0])

    def evaluate(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """(P, K): 16-node integral over each [a, b]."""
        pts = 0.5 * (a + b)[:, None] + 0.5 * (b - a)[:, None] * _GL_X[None, :]
        vals = np.asarray(fun(pts.reshape(-1)), dtype=float)
        vals = vals.reshape(*pts.shape, -1)
        return (0.5 * (b - a))[:, None] * np.einsum("pnk,n->pk", vals, _GL_W)

    a = edges[:-1].copy()
    b = edges[1:].copy()
    origin = np.arange(a.size)
    whole = evaluate(a, b)
    out = np.zeros((a.size, whole.shape[1]))
    done_err = 0.0
    for _ in range(max_rounds):
        if a.size == 0:
            return out, done_err
        if a.size > max_panels:
            break
        mid = 0.5 * (a + b)
        both = evaluate(np.concatenate([a, mid]), np.concatenate([mid, b]))
        left, right = both[: a.size], both[a.size :]
        fine = left + right
        err = np.abs(fine.sum(axis=1) - whole.sum(axis=1))
        total = abs(out.sum() + fine.sum())
        budget = rtol * total * np.maximum((b - a) / span, 1e-3)
        ok = err <= budget
        np.add.at(out, origin[ok], fine[ok])
        done_err += float(err[ok].sum())
        keep = ~ok
        a, b = np.concatenate([a[keep], mid[keep]]), np.concatenate([mid[keep], b[keep]])
        origin = np.concatenate([origin[keep], origin[keep]])
        whole = np.concatenate([left[keep], right[keep]])
    raise NetworkError(
        "the frequency integral did not converge to its accuracy (a resonance too sharp for "
        "the quadrature, or a density that does not fall off)"
    )
