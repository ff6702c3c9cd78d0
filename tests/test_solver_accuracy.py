"""Every solve is checked: long feeders against the ladder's exact recursion, badly
scaled but well-posed networks, and fault injection into the factorisations (a kernel
that returns a wrong answer is caught by the residual check, repaired by refinement or
a second factorisation, or refused — never returned)."""

import mpmath
import numpy as np
import pytest
from helpers import parts, sources
from hypothesis import given, settings
from hypothesis import strategies as st

import xlfuncs
from xlfuncs import SingularNetworkError
from xlfuncs import solver as solver_mod

R_SEC, L_SEC, C_SEC = 0.01, 50e-6, 1e-6  # per section (the case of the scale issue)


def feeder(sections: int) -> tuple[list[list[object]], str]:
    """Sections in a chain from the reference: series R then L to node n_k, shunt C."""
    p: list[list[object]] = [["name", "kind", "from", "to", "value"]]
    prev = "GND"
    for k in range(1, sections + 1):
        p += [
            [f"R{k}", "R", prev, f"m{k}", R_SEC],
            [f"L{k}", "L", f"m{k}", f"n{k}", L_SEC],
            [f"C{k}", "C", f"n{k}", "GND", C_SEC],
        ]
        prev = f"n{k}"
    return p, prev


def ladder_recursion(sections: int, freqs: np.ndarray, mp: bool = False) -> np.ndarray:
    """Node voltages V(n_1..n_N) for 1 A into n_N, from the ladder's recursion:
    Z_k = 1 / (jωC + 1/(R + jωL + Z_{k-1})), Z_0 = 0 (the reference), V_N = Z_N·1 A,
    V_{k-1} = V_k·Z_{k-1}/(R + jωL + Z_{k-1}) — the voltage divider of each section
    (common practice, circuit theory). Vectorised over frequency in numpy's extended
    precision (``clongdouble``; plain double where a platform has no wider type, still
    far inside the tolerances: the recursion of a passive ladder does not amplify
    round-off), or with ``mp`` in 40-digit arithmetic (mpmath), one frequency at a time.
    """
    if mp:
        out = np.zeros((freqs.size, sections), dtype=complex)
        with mpmath.workdps(40):
            for i, f in enumerate(freqs):
                w = 2 * mpmath.pi * mpmath.mpf(float(f))
                zs = mpmath.mpc(R_SEC, 0) + mpmath.mpc(0, 1) * w * L_SEC
                yc = mpmath.mpc(0, 1) * w * C_SEC
                z = [mpmath.mpc(0)]
                for _ in range(sections):
                    z.append(1 / (yc + 1 / (zs + z[-1])))
                v = z[sections]
                for k in range(sections, 0, -1):
                    out[i, k - 1] = complex(v)
                    v = v * z[k - 1] / (zs + z[k - 1])
        return out
    w = 2 * np.pi * freqs.astype(np.longdouble)
    zs = R_SEC + 1j * w * np.longdouble(L_SEC)
    yc = 1j * w * np.longdouble(C_SEC)
    z = [np.zeros(freqs.size, dtype=np.clongdouble)]
    for _ in range(sections):
        z.append(1 / (yc + 1 / (zs + z[-1])))
    v = z[sections]
    out = np.zeros((freqs.size, sections), dtype=np.clongdouble)
    for k in range(sections, 0, -1):
        out[:, k - 1] = v
        v = v * z[k - 1] / (zs + z[k - 1])
    return out.astype(complex)


def ladder_exact(sections: int, freqs: np.ndarray) -> np.ndarray:
    return ladder_recursion(sections, freqs)


def test_ladder_recursion_matches_40_digit_arithmetic():
    # the fast reference against the same recursion in mpmath (independent arithmetic)
    f = np.array([50.0, 300.0, 2500.0])
    a, b = ladder_recursion(2000, f), ladder_recursion(2000, f, mp=True)
    assert np.abs(a - b).max() <= 1e-12 * np.abs(b).max()


def test_2000_section_feeder_matches_the_exact_ladder_at_every_frequency():
    n_sec = 2000
    p, far = feeder(n_sec)
    freqs = np.arange(1, 51) * 50.0  # 50 … 2500 Hz
    s = [["name", "kind", "from", "to", "freq_hz", "peak"]]
    s += [["Is", "I", "GND", far, float(f), 1.0] for f in freqs]
    sol = xlfuncs.solve(p, s)
    idx = [sol.circuit.nodes.index(f"n{k}") for k in range(1, n_sec + 1)]
    got = sol.node_voltages[:, idx]
    ref = ladder_exact(n_sec, freqs)
    err = np.abs(got - ref).max(axis=1) / np.abs(ref).max(axis=1)
    assert err.max() <= 1e-9, (freqs[err.argmax()], err.max())


def test_feeder_sparse_and_dense_paths_agree():
    p, far = feeder(100)  # 300 unknowns: small enough for the dense path in a test
    freqs = np.arange(1, 51, 3) * 50.0
    s = [["name", "kind", "from", "to", "freq_hz", "peak"]]
    s += [["Is", "I", "GND", far, float(f), 1.0] for f in freqs]
    circuit = xlfuncs.Circuit.from_tables(p, s)
    system = xlfuncs.system_of(circuit)
    xs = system.solve(freqs, method="sparse")
    xd = system.solve(freqs, method="dense")
    scale = np.abs(xd).max(axis=1, keepdims=True)
    assert (np.abs(xs - xd) <= 1e-10 * scale).all()
    ref = ladder_exact(100, freqs)
    idx = [circuit.nodes.index(f"n{k}") for k in range(1, 101)]
    assert np.abs(xs[:, idx] - ref).max() <= 1e-10 * np.abs(ref).max()


def test_sparse_path_builds_no_dense_matrix(monkeypatch):
    # no (n, n) array anywhere on the sparse path, Solution included
    def refuse(*_a, **_k):
        raise AssertionError("dense n×n array built on the sparse path")

    monkeypatch.setattr(solver_mod.System, "_dense", refuse)
    monkeypatch.setattr(solver_mod.System, "matrices", refuse)
    monkeypatch.setattr(solver_mod.System, "pencil", refuse)
    p, far = feeder(400)
    s = [["name", "kind", "from", "to", "freq_hz", "peak"], ["Is", "I", "GND", far, 300, 1.0]]
    sol = xlfuncs.solve(p, s)
    # KCL at the far node: the source's 1 A leaves through C and the last series branch
    i = sol.element_currents[0]
    names = sol.element_names
    assert abs(i[names.index("C400")] - i[names.index("L400")] - 1.0) < 1e-12


def test_badly_scaled_but_well_posed_network_solves():
    # mΩ next to GΩ: 1 nA DC into 10 GΩ is 10 V (Ohm's law, common practice); the 1 V
    # 50 Hz source sits across 1 mΩ
    p = parts(["Rg", "R", "g", "GND", 1e-3], ["Rins", "R", "x", "GND", 1e10])
    s = sources(["Vg", "V", "g", "GND", 50, 1.0, 0], ["Ix", "I", "GND", "x", 0, 1e-9, 0])
    sol = xlfuncs.solve(p, s)
    assert sol.voltage("x").dc == pytest.approx(10.0, rel=1e-12)
    assert abs(sol.voltage("g").peak[1] - 1.0) < 1e-12
    assert sol.current("Rg").peak[1] == pytest.approx(1e3, rel=1e-12)


def test_badly_scaled_front_end_beside_power_wiring():
    # a 1 GΩ/1 kΩ divider (instrument input) fed from a 230 V bus through 1 mΩ:
    # V(out) = 230 · 1e3 / (1e9 + 1e3) (voltage divider, common practice)
    p = parts(
        ["Rw", "R", "src", "bus", 1e-3],
        ["Rload", "R", "bus", "GND", 10.0],
        ["Rhi", "R", "bus", "out", 1e9],
        ["Rlo", "R", "out", "GND", 1e3],
    )
    s = sources(["V1", "V", "src", "GND", 50, 230.0, 0])
    sol = xlfuncs.solve(p, s)
    vbus = 230.0 * 10.0 / (10.0 + 1e-3 + 10.0 * 1e-3 / (1e9 + 1e3))
    expect = vbus * 1e3 / (1e9 + 1e3)
    assert sol.voltage("out").peak[0] == pytest.approx(expect, rel=1e-10)


def _rc_ladder_circuit():
    p = parts(
        ["R1", "R", "a", "b", 10.0],
        ["C1", "C", "b", "GND", 1e-6],
        ["R2", "R", "b", "c", 5.0],
        ["L1", "L", "c", "GND", 1e-3],
    )
    s = sources(*[["Vs", "V", "a", "GND", f, 1.0, 0] for f in (50, 150, 250, 350)])
    return xlfuncs.Circuit.from_tables(p, s)


def test_wrong_first_kernel_is_caught_and_repaired(monkeypatch):
    circuit = _rc_ladder_circuit()
    good = xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method="dense")
    real = solver_mod._dense_batched

    def corrupt(a, b):  # a kernel that returns 5 % wrong answers at one frequency
        y, ok = real(a, b)
        y = y.copy()
        y[2] *= 1.05
        return y, ok

    monkeypatch.setattr(solver_mod, "_dense_batched", corrupt)
    x = xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method="dense")
    np.testing.assert_allclose(x, good, rtol=1e-12, atol=1e-15)


def test_wrong_answer_that_cannot_be_repaired_is_refused(monkeypatch):
    circuit = _rc_ladder_circuit()
    real = solver_mod._dense_batched

    def corrupt(a, b):
        y, ok = real(a, b)
        y = y.copy()
        y[1] *= 1.05
        return y, ok

    def bad_second(self, chk, m):
        return chk.y[m], True  # hands back the same wrong answer

    monkeypatch.setattr(solver_mod, "_dense_batched", corrupt)
    monkeypatch.setattr(solver_mod.System, "_second_kernel", bad_second)
    with pytest.raises(SingularNetworkError) as exc:
        xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method="dense")
    msg = str(exc.value)
    assert exc.value.freq_hz == 150.0 and "150 Hz" in msg and "relative residual" in msg
    assert "\n" not in msg


def test_wrong_pencil_answer_falls_back_to_lu(monkeypatch):
    circuit = _rc_ladder_circuit()
    system = xlfuncs.system_of(circuit)
    good = system.solve(circuit.freqs_hz, method="dense")
    real = solver_mod.System._pencil_scaled

    def corrupt(self, f, bs, r, c):
        y, ok = real(self, f, bs, r, c)
        return y * 1.01, ok  # never converges under refinement with itself

    monkeypatch.setattr(solver_mod.System, "_pencil_scaled", corrupt)
    x = xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method="pencil")
    np.testing.assert_allclose(x, good, rtol=1e-12, atol=1e-15)


def test_wrong_sparse_factor_is_refined(monkeypatch):
    # SuperLU factors of a slightly wrong matrix: refinement with them converges to the
    # right answer (the residual is always computed with the true matrix)
    import scipy.sparse.linalg as spla

    p, far = feeder(100)
    s = [["name", "kind", "from", "to", "freq_hz", "peak"], ["Is", "I", "GND", far, 300, 1.0]]
    circuit = xlfuncs.Circuit.from_tables(p, s)
    ref = ladder_exact(100, np.array([300.0]))
    idx = [circuit.nodes.index(f"n{k}") for k in range(1, 101)]
    real = spla.splu

    def perturbed(a, *args, **kw):
        return real(a * (1 + 1e-6), *args, **kw)

    monkeypatch.setattr(spla, "splu", perturbed)
    x = xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method="sparse")
    # cond(A) ≈ 5e5 here, so round-off alone allows ~1e-10 relative
    assert np.abs(x[:, idx] - ref).max() <= 1e-9 * np.abs(ref).max()


def test_scan_entry_streams_and_keeps_columns():
    circuit = _rc_ladder_circuit()
    system = xlfuncs.system_of(circuit)
    f = np.geomspace(1.0, 1e5, 5000)
    e = np.zeros(system.n)
    k = circuit.nodes.index("b")
    e[k] = 1.0
    z = system.solve(f, rhs=e, columns=[k])
    assert z.shape == (f.size, 1)
    # the same through the full right-hand side and every unknown
    full = system.solve(f[:300], rhs=np.tile(e, (300, 1)), method="dense")
    np.testing.assert_allclose(z[:300, 0], full[:, k], rtol=1e-12)


def test_singular_at_one_frequency_still_names_that_frequency():
    # an ideal L‖C at its resonance is singular there only: the message names it
    import math

    ind, cap = 1e-3, 1e-6
    f0 = 1 / (2 * math.pi * math.sqrt(ind * cap))
    for method in ("dense", "pencil", "sparse"):
        circuit = xlfuncs.Circuit.from_tables(
            parts(["L1", "L", "n", "GND", ind], ["C1", "C", "n", "GND", cap]),
            sources(["Is", "I", "GND", "n", 50, 1.0, 0], ["Is", "I", "GND", "n", f0, 1.0, 0]),
        )
        with pytest.raises(SingularNetworkError) as exc:
            xlfuncs.system_of(circuit).solve(circuit.freqs_hz, method=method)
        assert exc.value.freq_hz == pytest.approx(f0), method


@st.composite
def checked_answers(draw):
    """Stacked complex systems, right-hand sides (some all zero) and answers near, at or
    far from the solution, some with a NaN or an infinity in them."""
    m, n = draw(st.integers(1, 4)), draw(st.integers(1, 5))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    a = rng.normal(size=(m, n, n)) + 1j * rng.normal(size=(m, n, n)) + 3 * np.eye(n)
    b = rng.normal(size=(m, n)) + 1j * rng.normal(size=(m, n))
    zero = np.array(draw(st.lists(st.booleans(), min_size=m, max_size=m)))
    b[zero] = 0
    y = np.linalg.solve(a, b[..., None])[..., 0]
    y += draw(st.sampled_from([0.0, 1e-14, 1e-6, 1.0])) * rng.normal(size=(m, n))
    for row in np.flatnonzero(rng.random(m) < draw(st.sampled_from([0.0, 0.3]))):
        y[row, rng.integers(n)] = draw(st.sampled_from([np.nan, np.inf, -np.inf]))
    return a, b, y


def _eta_reference(a: np.ndarray, b: np.ndarray, y: np.ndarray) -> tuple[list, list]:
    """The definition, one matrix at a time: the normwise backward error
    η = ‖b − Ay‖∞ / (‖A‖∞‖y‖∞ + ‖b‖∞) (Rigal and Gaches 1967; N. J. Higham, Accuracy
    and Stability of Numerical Algorithms, 2nd ed., SIAM 2002, Theorem 7.1), with the
    module's conventions: for b = 0 only y = 0 is right (η 0, else ∞); an answer that is
    not finite has η = ∞ and is near-singular; otherwise near-singular when the lower
    bound ‖A‖∞‖y‖∞/‖b‖∞ of cond∞(A) exceeds 1e13."""
    etas, nears = [], []
    for am, bm, ym in zip(a, b, y, strict=True):
        an = np.abs(am).sum(axis=1).max()
        yn, bn = np.abs(ym).max(), np.abs(bm).max()
        if not np.isfinite(ym).all():
            etas.append(np.inf)
            nears.append(True)
        elif bn == 0:
            etas.append(0.0 if yn == 0 else np.inf)
            nears.append(False)
        else:
            etas.append(np.abs(bm - am @ ym).max() / (an * yn + bn))
            nears.append(not an * yn / bn <= 1e13)
    return etas, nears


@settings(max_examples=150, deadline=None)
@given(checked_answers())
def test_residual_check_follows_its_definition(case):
    a, b, y = case
    chk = solver_mod._Checker(
        xlfuncs.system_of(_rc_ladder_circuit()),  # the dense path reads only the stack
        b,
        dense=a,
        anorm=np.abs(a).sum(axis=2).max(axis=1),
    )
    with np.errstate(invalid="ignore"):  # the product with a NaN or ∞ answer
        chk.accept(y, np.ones(a.shape[0], dtype=bool))
    eta, near = _eta_reference(a, b, y)
    # the same operations in the same order: equal but for the summation order of A·y
    np.testing.assert_allclose(chk.eta, eta, rtol=1e-12, atol=0)
    assert chk.singular.tolist() == near


def test_equilibration_scales_stay_finite_at_the_ends_of_the_float_range():
    # the scale of x is 2^-e for x = m·2^e, 0.5 <= m < 1 (the definition of frexp in
    # the C standard, C99 7.12.6.4), held within 2^±511 so that a row scale times a
    # column scale, multiplied by a zero or subnormal entry, never gives inf or NaN
    from xlfuncs.solver import _pow2_inverse

    x = np.array([0.0, 5e-324, 1e-310, 1e-200, 1e-154, 3e-9, 1.0, 0.75, 7e12, 1e154, 1e300])
    r = _pow2_inverse(x)
    assert np.isfinite(r).all() and (r <= 2.0**511).all() and (r >= 2.0**-511).all()
    assert r[0] == 1.0  # an empty row or column keeps 1
    inside = (x >= 2.0**-511) & (x < 2.0**511)
    scaled = x[inside] * r[inside]
    assert ((scaled >= 0.5) & (scaled < 1.0)).all()
    assert np.array_equal(np.log2(r[inside]), np.round(np.log2(r[inside])))  # powers of 2
    assert np.isfinite(r[:, None] * r[None, :] * 0.0).all()
