"""Three-phase studies against references from outside the sequence machinery.

Sources beside each check. Tolerances: the core solves each network by LU (round-off
~1e-15 × the condition number, here ≤ ~1e6) and the fundamental fixed point stops at a
change of 1e-12 of the supply voltage, so results that go through the same networks agree
to 1e-12 relative; results from the separately built three-phase (a, b, c) network to
1e-9 of the largest value of each spectrum.
"""

from __future__ import annotations

import cmath
import math

import abc_reference as ref
import numpy as np
import plants
import pytest
from plants import converter, row, supply, table, transformer
from scipy import integrate, optimize

import xlfuncs
from xlfuncs.power import harmonic_study, ideal_spectrum, sequence_resonances

F1 = 60.0
W1 = 2 * math.pi * F1


def _parts(study, seq="+"):
    net = study.network(seq)
    head = net.parts[0]
    return {r[0]: dict(zip(head, r, strict=True)) for r in net.parts[1:]}


# ------------------------------------------------------------------ ratings → ohms
def test_impedances_from_ratings_follow_the_per_unit_relations():
    eq = table(
        supply(kv=13.8, mva_sc=250, x_r=12),
        transformer(
            "T1", "PCC", "LV", "Dyn11", kva=2000, kv_hv=13.8, kv_lv=0.48, z_pct=5.75, x_r=8
        ),
        row(
            name="C1",
            kind="capacitor",
            bus="LV",
            kv=0.48,
            kvar=300,
            steps=3,
            steps_on=2,
            connection="D",
        ),
        row(
            name="F1",
            kind="filter",
            bus="LV",
            kv=0.48,
            kvar=100,
            p_pct=7,
            q_factor=50,
            connection="Y",
        ),
        row(name="L1", kind="load", bus="LV", kv=0.48, kw=300, pf=0.8, model="parallel"),
    )
    p = _parts(harmonic_study(eq, options=plants.OPTIONS))
    # supply: Z = kV²/MVA_sc (per-unit relation Z_base = kV²/MVA; common practice)
    z_u = 13.8**2 / 250
    r_u = z_u / math.sqrt(1 + 12**2)
    assert p["U1.R"]["value"] == pytest.approx(r_u, rel=1e-12)
    assert p["U1.L"]["value"] * W1 == pytest.approx(12 * r_u, rel=1e-12)
    # transformer: Z = (z%/100)·kV²/MVA at the LV side, ideal ratio kV_hv/kV_lv
    z_t = 0.0575 * 0.48**2 / 2.0
    r_t = z_t / math.sqrt(1 + 8**2)
    assert p["T1.R"]["value"] == pytest.approx(r_t, rel=1e-12)
    assert p["T1.L"]["value"] * W1 == pytest.approx(8 * r_t, rel=1e-12)
    assert p["T1.R"]["r_exponent"] == 0.5  # R ∝ √h (common practice)
    assert p["T1.ratio"]["value"] == pytest.approx(13.8 / 0.48, rel=1e-15)
    # capacitor: Q = V²·ωC of the steps in service (200 of 300 kvar)
    assert p["C1.C"]["value"] == pytest.approx(200e3 / (W1 * 480**2), rel=1e-12)
    # filter: X_C = V²/Q, X_L = p·X_C, tuned order 1/√p (common practice; the detuned
    # reactor relations of published capacitor-application notes)
    xc = 480**2 / 100e3
    assert 1 / (W1 * p["F1.C"]["value"]) == pytest.approx(xc, rel=1e-12)
    assert p["F1.L"]["value"] * W1 == pytest.approx(0.07 * xc, rel=1e-12)
    assert p["F1.R"]["value"] == pytest.approx(xc * math.sqrt(0.07) / 50, rel=1e-12)
    # load, parallel form: R = V²/P, X = V²/Q with Q = P·tan(acos pf)
    assert p["L1.R"]["value"] == pytest.approx(480**2 / 300e3, rel=1e-12)
    assert p["L1.L"]["value"] * W1 == pytest.approx(480**2 / 225e3, rel=1e-12)
    # zones: the Dyn11 LV side leads by 30° in the positive sequence (IEC 60076-1)
    assert p["C1.C"]["zone_shift_deg"] == 30 and p["U1.R"]["zone_shift_deg"] == 0
    assert _parts(harmonic_study(eq, options=plants.OPTIONS), "-")["C1.C"]["zone_shift_deg"] == -30


def test_parallel_resonance_order_is_root_of_mva_over_mvar():
    # common practice (power-quality notes): 13.8 kV bus, 125 MVA short-circuit, 5 Mvar → 5.0
    eq = table(
        supply(bus="B1", kv=13.8, mva_sc=125, x_r=1e4),
        row(name="C1", kind="capacitor", bus="B1", kv=13.8, kvar=5000, connection="Y"),
    )
    res = sequence_resonances(eq, "B1", 60, 600, options=plants.OPTIONS)
    orders = [r.order for r in res if r.kind == "parallel"]
    assert orders == [pytest.approx(5.0, rel=1e-6)]
    assert xlfuncs.studies.resonance_order_rule(125, 5) == pytest.approx(5.0, rel=1e-12)


def test_resonance_with_losses_matches_the_closed_form_maximum():
    # |Z| of (R + jωL) ∥ 1/(jωC), maximised by scipy on the closed form (independent)
    xr = 8.0
    eq = table(
        supply(bus="B1", kv=13.8, mva_sc=125, x_r=xr),
        row(name="C1", kind="capacitor", bus="B1", kv=13.8, kvar=5000, connection="YN"),
    )
    z = 13.8e3**2 / 125e6
    r = z / math.sqrt(1 + xr**2)
    l_ = r * xr / W1
    c = 5e6 / (W1 * 13.8e3**2)

    def neg_abs_z(f):
        w = 2 * math.pi * f
        zl = r + 1j * w * l_
        zc = 1 / (1j * w * c)
        return -abs(zl * zc / (zl + zc))

    best = optimize.minimize_scalar(
        neg_abs_z, bounds=(200, 400), method="bounded", options={"xatol": 1e-9}
    )
    st = harmonic_study(eq, options=plants.OPTIONS)
    found = [r_ for r_ in st.resonances("B1") if r_.kind == "parallel"]
    assert len(found) == 1
    assert found[0].freq_hz == pytest.approx(best.x, rel=1e-6)
    assert found[0].z_ohm == pytest.approx(-best.fun, rel=1e-9)


# ------------------------------------------------------------------ 12-pulse principle
def test_twelve_pulse_pair_cancels_5_7_17_19_and_adds_11_13_in_the_feeder():
    # characteristic orders 12k ± 1 of a 12-pulse arrangement (IEEE Std 519-2014, "p-pulse
    # converters: h = k·p ± 1"; any power-electronics text)
    st = harmonic_study(plants.twelve_pulse(), options=plants.OPTIONS)
    feeder = st.branch_current("U1")
    t1 = st.branch_current("T1")
    t2 = st.branch_current("T2")
    orders = list(st.orders)
    for h in (5, 7, 17, 19, 29, 31, 41, 43):
        k = orders.index(h)
        assert abs(t1.phasors[k]) == pytest.approx(abs(t2.phasors[k]), rel=1e-12)
        assert abs(feeder.phasors[k]) < 1e-12 * abs(t1.phasors[k]), h
    for h in (11, 13, 23, 25, 35, 37, 47, 49):
        k = orders.index(h)
        assert abs(feeder.phasors[k]) == pytest.approx(
            abs(t1.phasors[k]) + abs(t2.phasors[k]), rel=1e-12
        ), h
    # each converter draws the ideal I1/h (common practice for the ideal six-pulse bridge)
    d1 = st.branch_current("D1")
    for h in (5, 7, 11, 13):
        k = orders.index(h)
        assert abs(d1.phasors[k]) == pytest.approx(abs(d1.phasors[0]) / h, rel=1e-12)
    # the two LV buses are 30° apart at the fundamental (Dyn11 against Yyn0)
    v = st.fundamental.bus_voltage
    assert math.degrees(cmath.phase(v["LV1"] / v["LV2"])) == pytest.approx(30.0, abs=1e-9)


def test_ideal_spectrum_is_the_fourier_series_of_the_rectangular_current():
    # ideal six-pulse line current: +1 for |θ| < 60°, −1 for |θ − 180°| < 60° (120° blocks);
    # Fourier cosine coefficients by numerical quadrature (scipy), independent of the
    # closed form used by ideal_spectrum
    def coef(h):
        def one(_t):
            return 1.0

        kw = {"weight": "cos", "wvar": h, "epsabs": 1e-13, "epsrel": 1e-12}
        a = integrate.quad(one, -math.pi / 3, math.pi / 3, **kw)[0]
        b = integrate.quad(one, 2 * math.pi / 3, 4 * math.pi / 3, **kw)[0]
        return (a - b) / math.pi

    a1 = coef(1)
    for h, pct, phase in ideal_spectrum(6, 25):
        ah = coef(h)
        assert abs(ah) / a1 * 100 == pytest.approx(pct, rel=1e-9)
        assert (0.0 if ah > 0 else 180.0) == phase
    assert [h for h, _p, _a in ideal_spectrum(12, 50)] == [11, 13, 23, 25, 35, 37, 47, 49]


# ------------------------------------------------------------------ triplens and deltas
def _triplen_plant(extra=()):
    return table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        converter("D1", "LV", kw=300, pf=0.97, connection="YN", spectrum="S"),
        *extra,
    )


SPECTRUM = [
    ["spectrum", "order", "pct", "phase_deg"],
    ["S", 3, 80, 30],
    ["S", 5, 50, 0],
    ["S", 9, 20, -45],
]


def test_triplen_currents_return_through_the_neutral_and_stay_out_of_the_hv_lines():
    # neutral current = 3 × the phase current of a zero-sequence order (common practice);
    # a delta winding circulates it, so the HV lines carry none of it
    st = harmonic_study(_triplen_plant(), SPECTRUM, plants.OPTIONS)
    orders = list(st.orders)
    d1 = st.branch_current("D1")
    neutral = st.neutral_current("T1")
    hv = st.branch_current("T1", "bus")
    lv = st.branch_current("T1", "bus_to")
    for h in (3, 9):
        k = orders.index(h)
        assert abs(neutral.phasors[k]) == pytest.approx(3 * abs(d1.phasors[k]), rel=1e-12)
        assert hv.phasors[k] == 0  # no zero-sequence path through the delta: exactly open
        assert st.branch_current("U1").phasors[k] == 0
        assert lv.phasors[k] == pytest.approx(-d1.phasors[k], rel=1e-12)  # KCL at LV
    k5 = orders.index(5)
    assert neutral.phasors[k5] == 0 and abs(hv.phasors[k5]) > 0
    assert st.sequence(3) == "0" and st.sequence(5) == "-" and st.sequence(7) == "+"


def test_a_grounded_capacitor_shares_the_triplen_current():
    cap = row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=300, connection="YN")
    st = harmonic_study(_triplen_plant([cap]), SPECTRUM, plants.OPTIONS)
    k = list(st.orders).index(3)
    i_t = st.neutral_current("T1").phasors[k]
    i_c = st.neutral_current("C1").phasors[k]
    i_d = st.neutral_current("D1").phasors[k]
    # every neutral current flows from its star point into earth: what the converter sends
    # into earth comes back out through the transformer's and the bank's neutrals (KCL)
    assert i_t + i_c == pytest.approx(-i_d, rel=1e-12)
    assert abs(i_c) > 0.01 * abs(i_d)


# ------------------------------------------------------------------ per-phase plant by hand
HAND_SPECTRUM = [
    ["spectrum", "order", "pct", "phase_deg"],
    ["SP", 5, 30, 175],
    ["SP", 7, 12, -5],
    ["SP", 11, 7, 160],
    ["SP", 13, 5, 10],
    ["SP", 19, 2.5, 0],
    ["SP", 25, 1.5, 90],
]


def _hand_plant():
    return table(
        supply(kv=13.8, mva_sc=150, x_r=10),
        row(
            name="K1",
            kind="cable",
            bus="PCC",
            bus_to="MV",
            length_km=0.8,
            r_ohm_km=0.15,
            x_ohm_km=0.12,
            c_uf_km=0.3,
        ),
        transformer("T1", "MV", "LV", "Dyn11", kva=1500, z_pct=6, x_r=7),
        row(
            name="C1",
            kind="capacitor",
            bus="LV",
            kv=0.48,
            kvar=400,
            steps=4,
            steps_on=2,
            connection="D",
        ),
        row(
            name="F1",
            kind="filter",
            bus="LV",
            kv=0.48,
            kvar=200,
            p_pct=7,
            q_factor=30,
            connection="D",
        ),
        row(name="L1", kind="load", bus="LV", kv=0.48, kw=300, pf=0.8, model="series"),
        row(name="M1", kind="motor", bus="LV", kv=0.48, kva=200, x_pct=16, x_r=10),
        converter("D1", "LV", kw=500, pf=0.94, spectrum="SP"),
    )


def _hand_parts(harmonic):
    """The per-phase network of _hand_plant written out by hand (textbook relations), in
    the frame of the supply side; the LV side carries the Dyn11 shift in its sources."""
    z_u = 13.8e3**2 / 150e6
    r_u = z_u / math.sqrt(101)
    z_t = 0.06 * 480**2 / 1.5e6
    r_t = z_t / math.sqrt(50)
    xc_f = 480**2 / 200e3
    p, q = 300e3, 300e3 * 0.75
    s2 = p * p + q * q
    x_m = 0.16 * 480**2 / 200e3
    rows = [
        ["name", "kind", "from", "to", "value", "sec_from", "sec_to", "r_exponent"],
        ["Lu", "L", "PCC", "u", 10 * r_u / W1, None, None, None],
        ["Ru", "R", "u", "e" if not harmonic else "GND", r_u, None, None, None],
        ["Rk", "R", "PCC", "k", 0.8 * 0.15, None, None, 0.5],
        ["Lk", "L", "k", "MV", 0.8 * 0.12 / W1, None, None, None],
        ["Cka", "C", "PCC", "GND", 0.4 * 0.3e-6, None, None, None],
        ["Ckb", "C", "MV", "GND", 0.4 * 0.3e-6, None, None, None],
        ["Tx", "XFMR", "MV", "GND", 13.8 / 0.48, "t1", "GND", None],
        ["Rt", "R", "t1", "t2", r_t, None, None, 0.5],
        ["Lt", "L", "t2", "LV", 7 * r_t / W1, None, None, None],
        ["Cc", "C", "LV", "GND", 200e3 / (W1 * 480**2), None, None, None],
        ["Lf", "L", "LV", "f1", 0.07 * xc_f / W1, None, None, None],
        ["Rf", "R", "f1", "f2", xc_f * math.sqrt(0.07) / 30, None, None, None],
        ["Cf", "C", "f2", "GND", 1 / (W1 * xc_f), None, None, None],
        ["Rl", "R", "LV", "l1", 480**2 * p / s2, None, None, None],
        ["Ll", "L", "l1", "GND", 480**2 * q / s2 / W1, None, None, None],
    ]
    if harmonic:
        rows += [
            ["Rm", "R", "LV", "m1", x_m / 10, None, None, None],
            ["Lm", "L", "m1", "GND", x_m / W1, None, None, None],
        ]
    return rows


def test_hand_built_per_phase_plant_gives_the_same_numbers():
    st = harmonic_study(_hand_plant(), HAND_SPECTRUM, plants.OPTIONS)
    opts = [["key", "value"], ["fundamental_hz", F1]]
    i1 = st.fundamental.device_current["D1"]  # physical frame
    lv = cmath.exp(-1j * math.radians(30))  # Dyn11: LV leads HV by 30° (positive sequence)
    # fundamental: the study's converged current, injected into the hand network, draws
    # exactly the converter's kW and kvar
    src = [
        ["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"],
        ["E", "V", "e", "GND", F1, math.sqrt(2) * 13.8e3 / math.sqrt(3), 0.0],
    ]
    il = i1 * lv
    src.append(["D", "I", "LV", "GND", F1, abs(il), math.degrees(cmath.phase(il))])
    sol = xlfuncs.solve(_hand_parts(False), src, opts)
    s = 1.5 * sol.voltage("LV").phasors[0] * np.conj(sol.current("D").phasors[0])
    p_spec = 500e3
    q_spec = p_spec * math.tan(math.acos(0.94))
    assert s.real == pytest.approx(p_spec, rel=1e-10)
    assert s.imag == pytest.approx(q_spec, rel=1e-10)
    # harmonics: I_h at h·θ1 + phase(h), LV frame shifted −30° (positive) or +30° (negative)
    theta1 = cmath.phase(i1)
    src = [["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"]]
    for _n, h, pct, ph in HAND_SPECTRUM[1:]:
        i_h = pct / 100 * abs(i1) * cmath.exp(1j * (h * theta1 + math.radians(ph)))
        i_h *= lv if h % 3 == 1 else lv.conjugate()
        src.append(["D", "I", "LV", "GND", h * F1, abs(i_h), math.degrees(cmath.phase(i_h))])
    sol = xlfuncs.solve(_hand_parts(True), src, opts)
    orders = list(st.orders)
    for bus in ("PCC", "MV", "LV"):
        mine = st.bus_voltage(bus).phasors
        hand = sol.voltage(bus).phasors
        for j, (_n, h, _p, _ph) in enumerate(HAND_SPECTRUM[1:]):
            back = 1 / lv if (bus == "LV" and h % 3 == 1) else (lv if bus == "LV" else 1)
            want = hand[j] * back
            assert abs(mine[orders.index(h)] - want) <= 1e-12 * abs(want), (bus, h)
    cap = st.branch_current("C1").phasors
    for j, (_n, h, _p, _ph) in enumerate(HAND_SPECTRUM[1:]):
        want = sol.current("Cc").phasors[j] * (1 / lv if h % 3 == 1 else lv)
        assert abs(cap[orders.index(h)] - want) <= 1e-12 * abs(want)


def test_expanded_tables_resolved_by_the_core_give_the_study_numbers():
    st = harmonic_study(_hand_plant(), HAND_SPECTRUM, plants.OPTIONS)
    for seq in ("+", "-"):
        net = st.network(seq)
        sol = xlfuncs.solve(net.parts, net.sources, net.options)
        shift = 30 if seq == "+" else -30
        mine = st.bus_voltage("LV")
        for j, h in enumerate(net.orders):
            k = list(st.orders).index(h)
            want = sol.voltage("LV").phasors[j] * cmath.exp(1j * math.radians(shift))
            assert abs(mine.phasors[k] - want) <= 1e-12 * abs(want)


# ------------------------------------------------------------------ full three-phase reference
def _abc_compare(eq, spectra, items, neutrals, options=None):
    opts = options or plants.OPTIONS
    st = harmonic_study(eq, spectra, opts)
    f1 = opts["fundamental_hz"]
    # converter currents: the study's converged fundamental, and the harmonic currents
    # formed here from θ1 and the spectra (|I_h| = pct·|I1|, angle h·θ1 + phase_deg)
    lines = {}
    for r in spectra[1:] if spectra else []:
        lines.setdefault(r[0], []).append(tuple(r[1:4]))
    tones = {}
    for it in ref.rows_of(eq):
        if it["kind"] != "converter":
            continue
        i1 = st.fundamental.device_current[it["name"]]
        th = cmath.phase(i1)
        spec = lines.get(it.get("spectrum")) or [
            (h, p, a) for h, p, a in ideal_spectrum(it["pulses"], 50)
        ]
        tones[it["name"]] = [(f1, i1)] + [
            (h * f1, p / 100 * abs(i1) * cmath.exp(1j * (h * th + math.radians(a))))
            for h, p, a in spec
        ]
    fa = ref.build(eq, f1, tones, True)
    fs = ref.solve(fa)
    ha = ref.build(eq, f1, tones, False)
    hs = ref.solve(ha)
    # the three-phase network draws each converter's kW and kvar at the fundamental
    for it in ref.rows_of(eq):
        if it["kind"] == "converter":
            s = sum(
                0.5
                * fs.voltage(f"{it['bus']}.{p}").phasors[0]
                * np.conj(fs.current(f"{it['name']}.I{p}").phasors[0])
                for p in ref.PH
            )
            q = it["kw"] * 1e3 * math.tan(math.acos(it["pf"]))
            assert s == pytest.approx(complex(it["kw"] * 1e3, q), rel=1e-9)
    assert hs.freqs_hz[0] == f1 and np.allclose(hs.freqs_hz[1:], st.freqs_hz[1:], rtol=1e-12)

    def both(get):
        return np.concatenate([get(fs, fa)[:1], get(hs, ha)[1:]])

    def close(mine, theirs, what):
        scale = np.abs(theirs).max()
        assert np.abs(mine - theirs).max() <= 1e-9 * scale, what

    for bus in st.equipment.buses:
        close(
            st.bus_voltage(bus).phasors, both(lambda s, a, b=bus: s.voltage(f"{b}.a").phasors), bus
        )
    for item, end in items:
        close(
            st.branch_current(item, end).phasors,
            both(lambda s, a, i=item, e=end: ref.line_current(s, a, i, e)),
            (item, end),
        )
    for item, key in neutrals:
        close(
            st.neutral_current(item).phasors,
            both(lambda s, a, k=key: ref.neutral_current(s, a, k)),
            key,
        )
    return st


def test_mixed_plant_equals_the_three_phase_network():
    eq = table(
        supply(mva_sc=250, x_r=12, mva_sc_1ph=200),
        row(
            name="K1",
            kind="cable",
            bus="PCC",
            bus_to="MV",
            length_km=2,
            r_ohm_km=0.1,
            x_ohm_km=0.12,
            c_uf_km=0.3,
        ),
        transformer("T1", "MV", "LV1", "Dyn11"),
        transformer("T2", "MV", "LV2", "Yyn0", kva=1500, z_pct=6, x_r=7),
        transformer("T3", "MV", "LV3", "YNd1", kva=1000, kv_lv=4.16, z_pct=6, x_r=9),
        row(name="C1", kind="capacitor", bus="LV1", kv=0.48, kvar=300, connection="YN"),
        row(name="C2", kind="capacitor", bus="LV2", kv=0.48, kvar=200, connection="D"),
        row(name="C3", kind="capacitor", bus="MV", kv=13.8, kvar=1200, connection="Y"),
        row(
            name="L2",
            kind="load",
            bus="LV2",
            kv=0.48,
            kw=300,
            pf=0.85,
            model="parallel",
            connection="YN",
        ),
        row(
            name="L3",
            kind="load",
            bus="LV3",
            kv=4.16,
            kw=500,
            pf=0.8,
            model="parallel",
            connection="YN",
        ),
        row(name="M3", kind="motor", bus="LV3", kv=4.16, kva=600, x_pct=17, x_r=20),
        converter("D1", "LV1", kw=800, connection="YN", spectrum="S3"),
        converter("D2", "LV2", kw=600, pf=0.93, pulses=6),
        converter("D3", "LV3", kw=400, pf=0.96, kv=4.16, pulses=12),
    )
    spectra = [
        ["spectrum", "order", "pct", "phase_deg"],
        ["S3", 2, 3, 45],
        ["S3", 3, 40, 10],
        ["S3", 5, 20, 170],
        ["S3", 7, 10, -20],
        ["S3", 9, 5, 0],
        ["S3", 11, 6, 100],
    ]
    items = [
        ("U1", "bus"),
        ("K1", "bus"),
        ("T1", "bus"),
        ("T1", "bus_to"),
        ("T2", "bus"),
        ("T2", "bus_to"),
        ("T3", "bus"),
        ("T3", "bus_to"),
        ("C1", "bus"),
        ("C2", "bus"),
        ("C3", "bus"),
        ("L3", "bus"),
    ]
    _abc_compare(eq, spectra, items, [("T1", "T1.lv")])


def test_zero_sequence_through_ynyn_and_cables_equals_the_three_phase_network():
    # zero-sequence current from LV4 passes a YNyn0, a cable with Z0 = Z1, and returns
    # through a YNd grounding path, a YN bank and the supply's own Z0 (neutral impedance)
    eq = table(
        supply(mva_sc=250, x_r=12, mva_sc_1ph=180),
        row(
            name="K1",
            kind="cable",
            bus="PCC",
            bus_to="MV",
            length_km=1.5,
            r_ohm_km=0.12,
            x_ohm_km=0.1,
            c_uf_km=0.25,
            r0_ohm_km=0.12,
            x0_ohm_km=0.1,
        ),
        transformer("T3", "MV", "LV3", "YNd11", kva=1000, kv_lv=4.16),
        transformer("T4", "MV", "LV4", "YNyn0", kva=1500, kv_lv=0.48),
        transformer("T5", "MV", "LV5", "YNyn6", kva=800, kv_lv=0.48),
        row(name="C3", kind="capacitor", bus="MV", kv=13.8, kvar=900, connection="YN"),
        row(
            name="L3",
            kind="load",
            bus="LV3",
            kv=4.16,
            kw=300,
            pf=0.9,
            model="parallel",
            connection="YN",
        ),
        row(
            name="L5",
            kind="load",
            bus="LV5",
            kv=0.48,
            kw=200,
            pf=0.9,
            model="parallel",
            connection="YN",
        ),
        converter("D4", "LV4", kw=500, connection="YN", spectrum="T"),
        converter("D5", "LV5", kw=300, connection="YN", spectrum="T"),
    )
    spectra = [
        ["spectrum", "order", "pct", "phase_deg"],
        ["T", 3, 60, 20],
        ["T", 5, 30, 180],
        ["T", 7, 15, 0],
        ["T", 9, 10, -30],
    ]
    items = [
        ("U1", "bus"),
        ("K1", "bus"),
        ("K1", "bus_to"),
        ("T3", "bus"),
        ("T4", "bus"),
        ("T4", "bus_to"),
        ("T5", "bus"),
        ("T5", "bus_to"),
        ("C3", "bus"),
    ]
    st = _abc_compare(eq, spectra, items, [])
    k3 = list(st.orders).index(3)
    assert abs(st.branch_current("U1").phasors[k3]) > 0  # the triplens reach the supply


@pytest.mark.parametrize(
    "group",
    [
        "Dyn11",
        "Dyn1",
        "Dyn5",
        "Dyn7",
        "YNd1",
        "YNd11",
        "Yd5",
        "Dd0",
        "Dd2",
        "Dd6",
        "Yyn0",
        "YNyn0",
        "YNyn6",
        "Yyn6",
        "YNy0",
        "Dy1",
    ],
)
def test_every_vector_group_equals_the_three_phase_network(group):
    eq = table(
        supply(mva_sc=200, x_r=10, mva_sc_1ph=150),
        transformer("T1", "PCC", "LV", group, kva=1500, z_pct=6, x_r=8),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=250, connection="YN"),
        row(
            name="L1",
            kind="load",
            bus="LV",
            kv=0.48,
            kw=400,
            pf=0.85,
            model="parallel",
            connection="YN",
        ),
        converter("D1", "LV", kw=500, connection="YN", spectrum="S"),
    )
    _abc_compare(eq, SPECTRUM, [("U1", "bus"), ("T1", "bus"), ("T1", "bus_to")], [])
