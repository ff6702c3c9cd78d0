"""Transfer functions, Bode data and port impedances.

Conventions (the same in the Python functions, the worksheet functions and the CLI):

* **Gain** H(jω) = output / input, where the input is the named source's own value (a
  voltage source's V(from) − V(to), a current source's current from → to) and every other
  independent source is zeroed (voltage sources short, current sources open). The output
  is a node voltage (against the reference), or a part's or a source's voltage V(from) −
  V(to) or current from → to through it.
* **dB**: 20·log10|H| — a voltage or current ratio (or, when output and input differ in
  kind, 20·log10 of the ratio in Ω or S: dB re 1 Ω / 1 S).
* **Phase**: arg H in degrees, cosine reference (a positive phase leads the input).
  ``phase_deg`` is wrapped to (−180°, 180°]; ``phase_unwrapped_deg`` is continuous in
  frequency and equals the wrapped value at the first frequency. For networks without a
  resistance law it is exact: the sum of the continuous phases of the factors (jω − z) and
  (jω − p) over the zeros and poles (no grid unwrapping); with a resistance law it is the
  integral of the exact group delay between the points (adaptive quadrature; also used
  above 3000 unknowns).
* **Group delay** τ = −dφ/dω in seconds (positive for a lagging, low-pass-like response),
  from the exact derivative dx/dω = −A⁻¹(dA/dω)x with dA/dω = j·A1 (plus the derivative
  of any resistance law, taken from above at its kink f = f₁) — not by differencing.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..circuit import Circuit
from ..errors import InputError, NetworkError
from ..solver import System, build_system
from ..tables import frequencies_arg
from ._network import (
    MAX_EIG_UNKNOWNS,
    Functional,
    adaptive_integral,
    as_circuit,
    cancel_common,
    continuous_phase,
    d_matrix_times,
    finite_eigenvalues,
    law_fundamental,
    node_pair,
    output_functional,
    port_functional,
    port_vector,
    rebuild,
    resolve_port,
    source_vector,
    zeros_of,
)

__all__ = [
    "FrequencyResponse",
    "TwoPortImpedance",
    "bode",
    "frequency_response",
    "log_frequencies",
    "port_impedance",
    "two_port_impedances",
]


@dataclass(frozen=True)
class FrequencyResponse:
    """H(jω) at given frequencies, axis (frequency,).

    Attributes
    ----------
    freqs_hz : numpy.ndarray (F,)
    h : numpy.ndarray (F,), complex
        Output per unit of input (V/V, A/A, Ω or S).
    group_delay_s : numpy.ndarray (F,)
        −dφ/dω, s.
    phase_unwrapped_deg : numpy.ndarray (F,)
        Continuous phase, equal to ``phase_deg`` at the first frequency.
    output, source : str
        What was measured, and the input.
    """

    freqs_hz: np.ndarray
    h: np.ndarray
    group_delay_s: np.ndarray
    phase_unwrapped_deg: np.ndarray
    output: str = ""
    source: str = ""
    unit: str = field(default="")

    @property
    def gain(self) -> np.ndarray:
        """|H|."""
        return np.abs(self.h)

    @property
    def gain_db(self) -> np.ndarray:
        """20·log10|H| (voltage/current ratio basis)."""
        return 20 * np.log10(np.abs(self.h))

    @property
    def phase_deg(self) -> np.ndarray:
        """arg H in (−180°, 180°]."""
        ph = np.degrees(np.angle(self.h))
        return np.where(ph <= -180.0, ph + 360.0, ph)


def log_frequencies(
    f_start: Any, f_stop: Any, points: Any = None, default: int = 200
) -> np.ndarray:
    """``points`` log-spaced frequencies from ``f_start`` to ``f_stop`` (both included)."""
    from ._network import check_band

    lo, hi = check_band(f_start, f_stop)
    n = default if points is None else points
    if isinstance(n, bool) or not isinstance(n, (int, float)) or not float(n).is_integer():
        raise InputError("argument", None, "points", points, "expected a whole number")
    if not 2 <= n <= 100_000:
        raise InputError("argument", None, "points", points, "expected 2 … 100000 points")
    return np.geomspace(lo, hi, int(n))


def _freqs(freqs_hz: Any) -> np.ndarray:
    f = frequencies_arg(freqs_hz)
    return f


def solve_response(
    system: System, b: np.ndarray, fn: Functional, f: np.ndarray, derivative: bool = True
) -> tuple[np.ndarray, np.ndarray | None]:
    """``(y, dy/dω)`` of the response ``fn`` to a unit input with incidence ``b``."""
    rhs = np.broadcast_to(b.astype(complex), (f.size, system.n)).copy()
    x = system.solve(f, rhs=rhs)
    y = fn.value(system, f, x)
    if not derivative:
        return y, None
    dx = -system.solve(f, rhs=d_matrix_times(system, f, x))
    return y, fn.derivative(system, f, x, dx)


def _check_nonzero(h: np.ndarray, f: np.ndarray, what: str) -> None:
    zero = np.abs(h) == 0
    if zero.any():
        raise NetworkError(
            f"{what} is exactly 0 (the output does not see the input there): no dB, phase "
            "or group delay",
            freq_hz=float(f[np.flatnonzero(zero)[0]]),
        )


def _unwrapped(
    system: System,
    b: np.ndarray,
    fn: Functional,
    f: np.ndarray,
    h: np.ndarray,
) -> np.ndarray:
    """Continuous phase (rad) at ``f`` (ascending), equal to arg h at f[0]."""
    w = 2 * np.pi * f
    if law_fundamental(system) is None and system.n <= MAX_EIG_UNKNOWNS:
        a0, a1 = system.pencil()
        poles, w_ref = finite_eigenvalues(a0, a1)
        c0, c1 = fn.affine(system)
        zeros = zeros_of(a0, a1, b, c0, c1, fn.direct, w_ref)
        p, z = cancel_common(poles, zeros, w_ref)
        model = continuous_phase(w, z, p)
        offset = np.angle(h) - model
        # the model and the solver must agree modulo 2π wherever |h| is well resolved
        good = np.abs(h) >= 1e-6 * np.abs(h).max()
        dev = np.angle(np.exp(1j * (offset - offset[0])))
        if np.any(np.abs(dev[good]) > 1e-6):
            k = int(np.flatnonzero(good & (np.abs(dev) > 1e-6))[0])
            raise NetworkError(
                "the phase from the natural frequencies does not match the solver (an "
                "ill-conditioned eigenvalue problem); the unwrapped phase cannot be trusted",
                freq_hz=float(f[k]),
            )
        return model + offset[0]
    # resistance law (or too many unknowns for the eigenvalues): integrate the exact group
    # delay between consecutive points
    out = np.empty(f.size)
    out[0] = float(np.angle(h[0]))
    if f.size == 1:
        return out
    u = np.log(w)

    def integrand(uu: np.ndarray) -> np.ndarray:
        ww = np.exp(uu)
        y, dy = solve_response(system, b, fn, ww / (2 * np.pi), True)
        assert dy is not None
        return (np.imag(dy / y) * ww)[:, None]  # dφ/du = ω·dφ/dω

    steps = adaptive_integral(integrand, u, 1e-10)[0][:, 0]
    wrapped = np.angle(h[1:] / h[:-1])
    turns = np.round((steps - wrapped) / (2 * np.pi))
    resid = np.abs(wrapped + 2 * np.pi * turns - steps)
    if np.any(resid > 1e-3):
        k = int(np.argmax(resid))
        raise NetworkError(
            "the integrated group delay does not match the phase step (phase unwrap failed)",
            freq_hz=float(f[k + 1]),
        )
    out[1:] = out[0] + np.cumsum(wrapped + 2 * np.pi * turns)
    return out


def frequency_response(
    parts: Any,
    sources: Any,
    source: str,
    output: str,
    freqs_hz: Any,
    quantity: str | None = None,
    options: Any = None,
    unwrap: bool = True,
) -> FrequencyResponse:
    """H(jω) = output / (the named source's own value) at ``freqs_hz``.

    Parameters
    ----------
    parts, sources, options :
        Tables (header row first) or a :class:`Circuit` as ``parts``.
    source : str
        The input: a source of the sources table. Every other source is zeroed.
    output : str
        A node (its voltage) or a part or source (its current, or its voltage with
        ``quantity="V"``).
    freqs_hz : array_like
        Frequencies ≥ 0; the unwrapped phase follows them in ascending order.
    unwrap : bool
        False skips the unwrapped phase (then equal to the wrapped one).

    Examples
    --------
    RC low-pass, H = 1/(1 + jωRC): at f = 1/(2πRC), |H| = 1/√2, φ = −45°,
    τ = RC/(1 + (ωRC)²) = RC/2 (closed form).

    >>> import math
    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-6]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["Vin", "V", "in", "GND", 50, 1.0]]
    >>> fc = 1 / (2 * math.pi * 1e-3)
    >>> r = frequency_response(parts, sources, "Vin", "out", [fc])
    >>> round(float(r.gain_db[0]), 6), round(float(r.phase_deg[0]), 9), round(float(r.group_delay_s[0]), 12)
    (-3.0103, -45.0, 0.0005)
    """
    circuit = as_circuit(parts, sources, options)
    f = _freqs(freqs_hz)
    system = build_system(circuit)
    k, src_name = source_vector(system, circuit, source, "source")
    fn = output_functional(system, circuit, output, quantity, k)
    b = system.src_incidence[k]
    h, dh = solve_response(system, b, fn, f)
    assert dh is not None
    _check_nonzero(h, f, f"{fn.label} per unit of {src_name}")
    tau = -np.imag(dh / h)
    if unwrap:
        order = np.argsort(f, kind="stable")
        unwrapped = np.empty(f.size)
        unwrapped[order] = _unwrapped(system, b, fn, f[order], h[order])
    else:
        unwrapped = np.angle(h)
    in_unit = "V" if circuit.sources[k].kind == "V" else "A"
    return FrequencyResponse(
        f,
        h,
        tau,
        np.degrees(unwrapped),
        fn.label,
        src_name,
        f"{fn.unit}/{in_unit}",
    )


def bode(
    parts: Any,
    sources: Any,
    source: str,
    output: str,
    f_start: float,
    f_stop: float,
    points: int = 200,
    quantity: str | None = None,
    options: Any = None,
) -> FrequencyResponse:
    """:func:`frequency_response` on ``points`` log-spaced frequencies (both ends
    included), for Bode charts.

    Examples
    --------
    RC low-pass (RC = 1 ms): the gain is −10·log10(1 + (2πf·RC)²) dB (closed form) at
    1, 10, 100, 1000 and 10000 Hz.

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-6]]
    >>> sources = [["name", "kind", "from", "to", "freq_hz", "peak"],
    ...            ["Vin", "V", "in", "GND", 50, 1.0]]
    >>> r = bode(parts, sources, "Vin", "out", 1.0, 1e4, 5)
    >>> [round(float(x), 2) for x in r.gain_db]
    [-0.0, -0.02, -1.45, -16.07, -35.96]
    """
    f = log_frequencies(f_start, f_stop, points)
    return frequency_response(parts, sources, source, output, f, quantity, options)


def _impedance(circuit: Circuit, plus: int, minus: int, f: np.ndarray) -> np.ndarray:
    system = build_system(circuit)
    b = port_vector(system, plus, minus)
    fn = port_functional(plus, minus, "")
    z, _ = solve_response(system, b, fn, f, derivative=False)
    return z


def port_impedance(
    parts: Any,
    node_a: Any,
    node_b: Any,
    freqs_hz: Any,
    options: Any = None,
    sources: Any = None,
    remove: tuple[str, ...] = (),
) -> tuple[np.ndarray, np.ndarray]:
    """Impedance between two nodes (a port), every independent source zeroed.

    A 1 A test current enters ``node_a`` and leaves ``node_b`` (either may be the
    reference); Z = (V(a) − V(b)) / 1 A. Parts named in ``remove`` are taken out first.

    Returns
    -------
    freqs_hz : numpy.ndarray (F,)
    z_ohm : numpy.ndarray (F,), complex

    Examples
    --------
    Two 1 kΩ resistors in series between a and b, b to the reference through 1 Ω:

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["R1", "R", "a", "m", 1e3], ["R2", "R", "m", "b", 1e3],
    ...          ["R3", "R", "b", "GND", 1.0]]
    >>> f, z = port_impedance(parts, "a", "b", [50.0])
    >>> round(float(z[0].real), 9)
    2000.0
    """
    circuit = as_circuit(parts, sources, options)
    if remove:
        circuit = rebuild(circuit, remove)
    f = _freqs(freqs_hz)
    plus, minus, _label = node_pair(circuit, node_a, node_b)
    return f, _impedance(circuit, plus, minus, f)


@dataclass(frozen=True)
class TwoPortImpedance:
    """Input impedance (load connected) and output impedance (load removed) of a
    two-port, axis (frequency,), complex Ω."""

    freqs_hz: np.ndarray
    z_in: np.ndarray
    z_out: np.ndarray
    load: str


def two_port_impedances(
    parts: Any,
    port_in: Any,
    port_out: Any,
    load: str,
    freqs_hz: Any,
    options: Any = None,
    sources: Any = None,
) -> TwoPortImpedance:
    """Input impedance with the named load across the output port, and output
    impedance with that load removed; every independent source zeroed (a supply modelled
    as a voltage source shorts the input side when ``sources`` is given).

    ``port_in``, ``port_out``: a node (against the reference) or a pair ``(from, to)``.
    ``load``: a part connected across ``port_out``.

    Give the supply's own impedance as parts. With ``sources`` given, a zeroed voltage
    source stays in the network as a short for both figures (one across ``port_in``
    makes Z_in = 0).

    Examples
    --------
    An L-section (series 10 Ω, shunt 10 Ω) loaded by 10 Ω, its input open:
    Z_in = 10 + 10‖10 = 15 Ω; Z_out (load removed) = 10 Ω.

    >>> parts = [["name", "kind", "from", "to", "value"],
    ...          ["Rs", "R", "in", "out", 10.0], ["Rp", "R", "out", "GND", 10.0],
    ...          ["RL", "R", "out", "GND", 10.0]]
    >>> r = two_port_impedances(parts, "in", "out", "RL", [50.0])
    >>> round(float(r.z_in[0].real), 9), round(float(r.z_out[0].real), 9)
    (15.0, 10.0)
    """
    circuit = as_circuit(parts, sources, options)
    f = _freqs(freqs_hz)
    pi_, mi, _ = resolve_port(circuit, port_in, "port_in")
    po, mo, lab_out = resolve_port(circuit, port_out, "port_out")
    name = "" if load is None else str(load).strip()
    if not name:
        raise InputError("argument", None, "load", expected="missing part name")
    try:
        kind, obj = "part", circuit.part(name)  # a part, even where a node has its name
    except KeyError:  # not a plain part name: the core's lookup and its message
        kind, obj = circuit.find(name, "load")
    if kind != "part" or obj.kind == "COUPLING":
        raise InputError("argument", None, "load", load, "expected a two-terminal part")
    ends = {(obj.from_node or "").lower(), (obj.to_node or "").lower()}
    port_nodes = {(circuit.nodes[i] if i >= 0 else circuit.ground).lower() for i in (po, mo)}
    if ends != port_nodes:
        raise InputError(
            "argument",
            None,
            "load",
            load,
            f"the load must connect across the output port {lab_out} (parts row {obj.row} "
            f"joins {obj.from_node} and {obj.to_node})",
        )
    z_in = _impedance(circuit, pi_, mi, f)
    without = rebuild(circuit, [obj.name])
    po2, mo2, _ = resolve_port(without, port_out, "port_out")
    z_out = _impedance(without, po2, mo2, f)
    return TwoPortImpedance(f, z_in, z_out, obj.name)
