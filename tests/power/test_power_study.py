"""The study object: fundamental results, checks, duty, scans, and its refusals."""

from __future__ import annotations

import cmath
import math

import numpy as np
import plants
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from plants import converter, row, supply, table, transformer

import xlfuncs
from xlfuncs import InputError, NetworkError
from xlfuncs.power import expand_network, harmonic_study, sequence_impedance
from xlfuncs.power.views import branch_table, bus_table

W1 = 2 * math.pi * 60


def plant(**over):
    eq = table(
        supply(mva_sc=200, x_r=10),
        transformer("T1", "PCC", "LV", "Dyn11", kva=1500, z_pct=6, x_r=7),
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
        row(name="M1", kind="motor", bus="LV", kv=0.48, kva=150, x_pct=17, x_r=10),
        converter("D1", "LV", kw=over.get("kw", 500), pf=0.93, pulses=6),
    )
    return eq


def test_converter_current_lags_its_bus_voltage_by_the_displacement_angle():
    # displacement power factor: cos of the angle between V1 and I1 (IEEE Std 1459-2010)
    st = harmonic_study(plant(), options=plants.OPTIONS)
    fr = st.fundamental
    v = fr.bus_voltage["LV"]
    i = fr.device_current["D1"]
    assert math.degrees(cmath.phase(v / i)) == pytest.approx(
        math.degrees(math.acos(0.93)), abs=1e-9
    )
    assert 1.5 * v * i.conjugate() == pytest.approx(
        complex(500e3, 500e3 * math.tan(math.acos(0.93))), rel=1e-9
    )
    assert fr.theta1_deg["D1"] == pytest.approx(math.degrees(cmath.phase(i)), abs=1e-12)
    assert fr.iterations >= 2 and fr.mismatch <= 1e-9


def test_network_tables_carry_zone_frames_and_notes():
    st = harmonic_study(plant(), options=plants.OPTIONS)
    f = st.network("fundamental")
    assert f.sources is not None and f.orders == (1,)
    assert not any(r[0].startswith("M1.") for r in f.parts[1:])  # motors: harmonics only
    pos = st.network("+")
    assert any(r[0] == "M1.R" for r in pos.parts[1:])
    assert pos.orders == (7, 13, 19, 25, 31, 37, 43, 49)
    assert st.network("0").parts == [pos.parts[0]] and st.network("0").sources is None
    head = pos.parts[0]
    assert head[-3:] == ["zone_shift_deg", "item", "note"]
    assert expand_network(plant(), "-", plants.OPTIONS) == st.network("-").parts


def test_thd_of_the_table_matches_the_spectrum():
    st = harmonic_study(plant(), options=plants.OPTIONS)
    t = bus_table(st, "LV")
    assert t[0] == ["order", "freq_hz", "sequence", "v_rms", "v_pct", "angle_deg"]
    assert t[-1][0] == "total"
    assert t[-1][4] == pytest.approx(100 * st.bus_voltage("LV").thd(), rel=1e-12)
    assert t[-1][3] == pytest.approx(st.bus_voltage("LV").rms_total, rel=1e-12)
    b = branch_table(st, "D1")
    assert b[2][4] == pytest.approx(100 / 5, rel=1e-12)  # ideal 5th: I1/5


def test_ieee519_checks_take_the_bus_voltage_from_the_equipment():
    st = harmonic_study(plant(), options=plants.OPTIONS)
    lv = st.check_voltage("LV")
    hv = st.check_voltage("PCC")
    # IEEE Std 519-2014 Table 1: V ≤ 1 kV → 5 % / 8 %; 1–69 kV → 3 % / 5 %
    assert lv.rows[-1][0] == "THD" and lv.rows[-1][2] == 8.0 and lv.rows[0][2] == 5.0
    assert hv.rows[-1][2] == 5.0 and hv.rows[0][2] == 3.0
    cur = st.check_current("U1", i_l=60, i_sc=8000)
    assert "13.8 kV" in cur.basis and cur.rows[-1][0] == "TDD"


def test_capacitor_duty_at_the_fundamental_follows_v_squared():
    # no converter: a capacitor at V draws Q = (V/V_rated)²·Q_rated (Q = V²ωC)
    eq = table(
        supply(kv=0.5, mva_sc=40, x_r=8),
        row(
            name="C1",
            kind="capacitor",
            bus="PCC",
            kv=0.48,
            kvar=300,
            steps=3,
            steps_on=2,
            connection="D",
        ),
        row(name="C2", kind="capacitor", bus="PCC", kv=0.48, kvar=100, connection="YN"),
    )
    st = harmonic_study(eq, options=plants.OPTIONS)
    v = abs(st.fundamental.bus_voltage["PCC"]) / math.sqrt(2) * math.sqrt(3)  # V line-line
    for name in ("C1", "C2"):
        duty = {r[0]: r for r in st.capacitor_duty(name).rows}
        assert duty["rms voltage"][3] == pytest.approx(v / 480, rel=1e-12)
        assert duty["kvar"][3] == pytest.approx((v / 480) ** 2, rel=1e-12)
        assert duty["rms current"][3] == pytest.approx(v / 480, rel=1e-12)
        assert duty["peak voltage"][3] == pytest.approx(v / 480, rel=1e-12)
    assert {r[0]: r for r in st.capacitor_duty("C1").rows}["kvar"][2] == pytest.approx(200 / 3)


def test_scans_match_the_closed_form_of_supply_and_bank():
    eq = table(
        supply(bus="B1", kv=13.8, mva_sc=125, x_r=10),
        row(name="C1", kind="capacitor", bus="B1", kv=13.8, kvar=5000, connection="YN"),
    )
    f = np.array([60.0, 180.0, 300.0, 420.0])
    z = 13.8e3**2 / 125e6
    r = z / math.sqrt(101)
    zl = r + 1j * 2 * np.pi * f * (10 * r / W1)
    zc = 1 / (1j * 2 * np.pi * f * 5e6 / (W1 * 13.8e3**2))
    want = zl * zc / (zl + zc)
    _f, got = sequence_impedance(eq, "B1", f, "+", plants.OPTIONS)
    assert got == pytest.approx(want, rel=1e-12)
    st = harmonic_study(eq, options=plants.OPTIONS)
    assert st.impedance_scan("B1", f, "-")[1] == pytest.approx(want, rel=1e-12)
    with pytest.raises(InputError, match="zero-sequence network"):
        st.impedance_scan("B1", f, "0")


def test_refusals_of_the_study_api():
    st = harmonic_study(plant(), options=plants.OPTIONS)
    with pytest.raises(InputError, match="no bus of that name"):
        st.bus_voltage("LV9")
    with pytest.raises(InputError, match="no item of that name"):
        st.branch_current("X")
    with pytest.raises(InputError, match="running current at the fundamental is not modelled"):
        st.branch_current("M1")
    m = st.branch_current("M1", harmonics_only=True)
    assert m.freqs_hz[0] == 300 and np.all(np.isfinite(m.phasors))
    with pytest.raises(InputError, match="bus_to only for transformers and cables"):
        st.branch_current("C1", "bus_to")
    with pytest.raises(InputError, match=r"capacitor 'C1' \(D\) has no grounded star point"):
        st.neutral_current("C1")
    with pytest.raises(InputError, match="expected a capacitor or filter"):
        st.capacitor_duty("T1")
    with pytest.raises(InputError, match="expected \\+, - or 0"):
        st.network("2")
    assert st.neutral_current("T1").rms_total == 0  # no triplens: no neutral current
    yy = harmonic_study(
        table(supply(mva_sc_1ph=200), transformer("T1", "PCC", "LV", "YNyn0")),
        options=plants.OPTIONS,
    )
    with pytest.raises(InputError, match="two grounded windings"):
        yy.neutral_current("T1")
    assert yy.neutral_current("T1", "bus_to").rms_total == 0


def test_an_overloaded_network_is_refused_not_solved():
    eq = table(
        supply(kv=0.48, mva_sc=5, x_r=5),
        converter("D1", "PCC", kw=4000, pf=0.9, pulses=6),
    )
    with pytest.raises(NetworkError, match="did not converge"):
        harmonic_study(eq, options=plants.OPTIONS)


def test_results_never_hold_non_finite_values():
    st = harmonic_study(plant(), options=plants.OPTIONS)
    for b in st.equipment.buses:
        assert np.all(np.isfinite(st.bus_voltage(b).phasors))
    for t in (bus_table(st, "LV"), branch_table(st, "C1"), branch_table(st, "T1", "bus_to")):
        for r in t:
            for c in r:
                assert not (isinstance(c, float) and not math.isfinite(c))


def test_study_and_core_agree_on_a_network_without_transformers():
    # one zone, no shifts: the expanded "+" network solved by the core is the study itself
    eq = table(
        supply(kv=0.48, mva_sc=30, x_r=6),
        row(name="C1", kind="capacitor", bus="PCC", kv=0.48, kvar=200, connection="Y"),
        converter("D1", "PCC", kw=300, pf=0.95, pulses=6),
    )
    st = harmonic_study(eq, options=plants.OPTIONS)
    net = st.network("-")
    sol = xlfuncs.solve(net.parts, net.sources, net.options)
    k = list(st.orders).index(5)
    assert st.bus_voltage("PCC").phasors[k] == pytest.approx(
        sol.voltage("PCC").phasors[0], rel=1e-15
    )


def test_a_second_supply_behind_a_transformer_is_synchronised_with_its_zone():
    # no load anywhere: two EMFs in phase with their zones' frames drive no current
    eq = table(
        supply(),
        transformer("T1", "PCC", "LV", "Dyn11"),
        supply(name="G1", bus="LV", kv=0.48, mva_sc=20, x_r=8),
    )
    st = harmonic_study(eq, options=plants.OPTIONS)
    i = st.branch_current("T1").phasors[0]
    assert abs(i) < 1e-9 * 2000 / (math.sqrt(3) * 13.8)
    v = st.fundamental.bus_voltage["LV"]
    assert math.degrees(cmath.phase(v)) == pytest.approx(30.0, abs=1e-9)  # Dyn11: +30°


def test_a_motor_with_a_running_load_draws_it_at_the_fundamental():
    eq = table(
        supply(kv=0.48, mva_sc=30, x_r=6),
        row(
            name="M1", kind="motor", bus="PCC", kv=0.48, kva=300, x_pct=17, x_r=10, kw=220, pf=0.87
        ),
    )
    st = harmonic_study(eq, options=plants.OPTIONS)
    v = st.fundamental.bus_voltage["PCC"]
    i = st.branch_current("M1").phasors[0]
    assert 1.5 * v * np.conj(i) == pytest.approx(
        complex(220e3, 220e3 * math.tan(math.acos(0.87))), rel=1e-9
    )


def test_harmonic_angles_are_referred_to_the_converter_fundamental():
    # the h-th current's angle is h·θ1 + phase_deg(h) (the convention of docs/THREE_PHASE.md; the ideal
    # spectrum has 180° at k·p − 1 and 0° at k·p + 1)
    st = harmonic_study(plant(), options=plants.OPTIONS)
    d1 = st.branch_current("D1")
    th = d1.phase_deg[0]
    for k, h in enumerate(st.orders[1:], start=1):
        want = h * th + (180.0 if h % 6 == 5 else 0.0)
        diff = (d1.phase_deg[k] - want + 180) % 360 - 180
        assert abs(diff) < 1e-9, h


def test_public_names_of_the_power_package():
    import doctest

    import xlfuncs.power as power
    import xlfuncs.power.vector_group as vg

    assert len(set(power.__all__)) == len(power.__all__)  # order: ruff RUF022 (make lint)
    for name in power.__all__:
        assert hasattr(power, name), name
    for mod in (power, vg):
        res = doctest.testmod(mod)
        assert res.attempted > 0 and res.failed == 0


@settings(max_examples=15, deadline=None)
@given(
    group=st.sampled_from(["Dyn11", "Dyn1", "YNd1", "Yyn0", "Dd0", "YNyn0"]),
    kva=st.floats(300, 3000),
    z_pct=st.floats(3, 9),
    kvar=st.floats(20, 600),
    kw=st.floats(20, 400),
)
def test_currents_into_every_bus_sum_to_zero(group, kva, z_pct, kvar, kw):
    # Kirchhoff's current law at each bus, every order, for random ratings
    eq = table(
        supply(mva_sc=200, x_r=10, mva_sc_1ph=150),
        transformer("T1", "PCC", "LV", group, kva=kva, z_pct=z_pct, x_r=6),
        row(name="C1", kind="capacitor", bus="LV", kv=0.48, kvar=kvar, connection="YN"),
        row(
            name="L1",
            kind="load",
            bus="LV",
            kv=0.48,
            kw=kw,
            pf=0.9,
            model="series",
            connection="YN",
        ),
        converter("D1", "LV", kw=kw, connection="YN", spectrum="S"),
    )
    spectra = [["spectrum", "order", "pct", "phase_deg"], ["S", 3, 30, 0], ["S", 5, 20, 90]]
    s = harmonic_study(eq, spectra, plants.OPTIONS)
    lv = (
        s.branch_current("T1", "bus_to").phasors
        + s.branch_current("C1").phasors
        + s.branch_current("L1").phasors
        + s.branch_current("D1").phasors
    )
    hv = s.branch_current("U1").phasors + s.branch_current("T1").phasors
    scale = abs(s.branch_current("T1", "bus_to").phasors).max()
    assert np.abs(lv).max() <= 1e-9 * scale and np.abs(hv).max() <= 1e-9 * scale
