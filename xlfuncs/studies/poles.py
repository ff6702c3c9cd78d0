"""Natural frequencies of a network (poles) and zeros of one transfer function.

Poles are the finite generalised eigenvalues s of the MNA pencil A(s) = A0 + s·A1 with
every independent source zeroed (voltage sources short, current sources open): exact,
not read from a frequency grid. Zeros of a transfer function H = output / input are the
finite eigenvalues of the pencil bordered by the input and output vectors, less the
pole–zero pairs that cancel (modes the output does not see from that input).

Each natural frequency is reported once per conjugate pair, as ``freq_hz`` = |s|/2π,
damping ζ = −Re(s)/|s| (1 for a decaying real pole, negative for a growing one),
Q = 1/(2ζ) and the envelope's time constant −1/Re(s) (negative: growth). Infinite
eigenvalues (the algebraic constraints of the network) are filtered by the rule of
:func:`xlfuncs.studies._network.finite_eigenvalues`: |s| > 1e10·ω_ref.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..circuit import Circuit
from ..errors import InputError
from ..solver import System, build_system, diagnose
from ._network import (
    AXIS_RTOL,
    as_circuit,
    cancel_common,
    finite_eigenvalues,
    output_functional,
    source_vector,
    zeros_of,
)

__all__ = ["NaturalFrequency", "network_poles", "transfer_poles_zeros", "transfer_zeros"]


@dataclass(frozen=True)
class NaturalFrequency:
    """One natural frequency s (rad/s; the member with Im s ≥ 0 of a conjugate pair).

    Attributes
    ----------
    s : complex
        The eigenvalue, rad/s.
    freq_hz : float
        |s|/2π, the undamped natural frequency.
    damping : float or None
        ζ = −Re(s)/|s|: 1 for a decaying real pole, 0 for a lossless pair (|Re s| below
        1e-9·|s|, beyond what the eigenvalues resolve), negative when it grows. None for
        s = 0.
    q : float or None
        1/(2ζ) (0.5 for a decaying real pole); None where ζ is 0 (lossless) or None.
    time_constant_s : float or None
        −1/Re(s), the envelope's time constant (negative: growth); None where Re s = 0.
    """

    s: complex
    freq_hz: float
    damping: float | None
    q: float | None
    time_constant_s: float | None

    @classmethod
    def of(cls, s: complex) -> NaturalFrequency:
        mag = abs(s)
        if mag == 0:
            return cls(0j, 0.0, None, None, None)
        lossless = abs(s.real) <= AXIS_RTOL * mag
        zeta = 0.0 if lossless else -s.real / mag
        q = None if lossless else 1.0 / (2.0 * zeta)
        tau = None if lossless else -1.0 / s.real
        return cls(complex(s), mag / (2 * math.pi), zeta, q, tau)

    @property
    def is_real(self) -> bool:
        return self.s.imag == 0


def _refuse_law(circuit: Circuit, what: str) -> None:
    for p in circuit.parts:
        if p.r_exponent:
            raise InputError(
                "parts",
                p.row,
                "r_exponent",
                p.r_exponent,
                f"a resistance law R·(f/f₁)^x makes the network irrational in s: it has no "
                f"{what}; leave r_exponent empty for this study",
            )


def _naturals(s: np.ndarray) -> tuple[NaturalFrequency, ...]:
    keep = s[s.imag >= 0]
    out = [NaturalFrequency.of(complex(v)) for v in keep]
    out.sort(key=lambda r: (r.freq_hz, r.s.real))
    return tuple(out)


def _poles(system: System) -> tuple[np.ndarray, float]:
    a0, a1 = system.pencil()
    return finite_eigenvalues(a0, a1)


def network_poles(
    parts: Any, sources: Any = None, options: Any = None
) -> tuple[NaturalFrequency, ...]:
    """Natural frequencies of the network, every independent source zeroed.

    Parameters
    ----------
    parts, sources, options :
        Tables (header row first) or a :class:`Circuit` as ``parts``. Give ``sources``
        when a supply modelled as a source belongs to the network (a voltage source then
        acts as a short, a current source as an open).

    Returns
    -------
    tuple of NaturalFrequency
        One entry per real pole and per conjugate pair, ascending ``freq_hz``.

    Examples
    --------
    Series RLC: ω₀ = 1/√(LC), ζ = (R/2)·√(C/L) (closed form).

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "GND", "b", 10.0], ["L", "L", "b", "c", 1e-3],
    ...          ["C", "C", "c", "GND", 1e-6]]
    >>> (p,) = network_poles(parts)
    >>> round(p.freq_hz, 4), round(p.damping, 9), round(p.q, 6)
    (5032.9212, 0.158113883, 3.162278)
    """
    circuit = as_circuit(parts, sources, options)
    _refuse_law(circuit, "poles")
    diagnose(circuit, dc=False)
    system = build_system(circuit)
    return _naturals(_poles(system)[0])


def transfer_poles_zeros(
    parts: Any,
    sources: Any,
    source: str,
    output: str,
    quantity: str | None = None,
    options: Any = None,
) -> tuple[tuple[NaturalFrequency, ...], tuple[NaturalFrequency, ...]]:
    """Poles and zeros of H = output / (the named source's own value), every other
    source zeroed; pole–zero pairs within 1e-8·|s| of each other cancel (modes the output
    does not see from this input). Returns ``(poles, zeros)``.

    Examples
    --------
    Series R with a shunt R_L–L–C notch: zeros where s²LC + sR_L·C + 1 = 0 (closed form).

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "in", "out", 100.0], ["RL", "R", "out", "x", 0.5],
    ...          ["L", "L", "x", "y", 1e-3], ["C", "C", "y", "GND", 1e-6]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["V", "V", "in", "GND", 50, 1.0]]
    >>> poles, zeros = transfer_poles_zeros(parts, sources, "V", "out")
    >>> round(zeros[0].freq_hz, 4), round(zeros[0].q, 4)
    (5032.9212, 63.2456)
    """
    circuit = as_circuit(parts, sources, options)
    _refuse_law(circuit, "poles or zeros")
    diagnose(circuit, dc=False)
    system = build_system(circuit)
    k, _name = source_vector(system, circuit, source, "source")
    fn = output_functional(system, circuit, output, quantity, k)
    a0, a1 = system.pencil()
    poles, w_ref = finite_eigenvalues(a0, a1)
    c0, c1 = fn.affine(system)
    zeros = zeros_of(a0, a1, system.src_incidence[k], c0, c1, fn.direct, w_ref)
    p, z = cancel_common(poles, zeros, w_ref)
    return _naturals(p), _naturals(z)


def transfer_zeros(
    parts: Any,
    sources: Any,
    source: str,
    output: str,
    quantity: str | None = None,
    options: Any = None,
) -> tuple[NaturalFrequency, ...]:
    """Zeros of H = output / (the named source's own value); see
    :func:`transfer_poles_zeros`.

    Examples
    --------
    A series R–C driven by a voltage source, output the capacitor's current: one zero
    at s = 0 (no DC current) and the pole at −1/(RC).

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "in", "m", 1e3], ["C", "C", "m", "GND", 1e-6]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["V", "V", "in", "GND", 50, 1.0]]
    >>> [z.freq_hz for z in transfer_zeros(parts, sources, "V", "C", "I")]
    [0.0]
    """
    return transfer_poles_zeros(parts, sources, source, output, quantity, options)[1]
