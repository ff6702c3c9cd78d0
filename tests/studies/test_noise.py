"""Noise against closed forms and an independent per-source sum of |H_i|²·S_i.

References:
* Thermal noise 4kTR V²/Hz (J. B. Johnson, Phys. Rev. 32, 97, 1928; H. Nyquist, Phys.
  Rev. 32, 110, 1928); k = 1.380649e-23 J/K exact (BIPM, The International System of
  Units, 9th ed., 2019, §2.2).
* RC low-pass over all frequencies: v² = kT/C whatever R (any circuits/noise text, e.g.
  P. Horowitz, W. Hill, The Art of Electronics, 3rd ed., §8.1 — section from memory).
* Band-limited RC: ∫ 4kTR/(1 + (2πfRC)²) df = (2kT/(πC))·[atan(2πfRC)] between the band
  edges (elementary integral).
* Divider: the midpoint density is √(4kT·R1‖R2) (Thévenin equivalent of two resistors).
* 1/f: ∫ d²(1 + f_c/f) df = d²·[(f₂ − f₁) + f_c·ln(f₂/f₁)] (elementary integral).
* An amplifier stage (VCVS of gain A) with source, feedback and gain resistors, a
  capacitor, a voltage noise source in series and a current noise source: each source's
  |H_i|² from the stage's three nodal equations written out below, solved with numpy.
"""

import doctest
import math
from dataclasses import dataclass

import numpy as np
import pytest

import xlfuncs.studies.noise
from xlfuncs.cli import main
from xlfuncs.errors import InputError, NetworkError
from xlfuncs.functions import FUNCTIONS
from xlfuncs.studies import BOLTZMANN, noise_density, noise_rms

HEAD = ["name", "kind", "from", "to", "value"]
SUP = [["name", "kind", "from", "to", "freq_hz", "peak"], ["Vs", "V", "in", "GND", 0, 1.0]]


@dataclass(frozen=True)
class Noise:
    """A noise row as the sources table's parser delivers it (row, name, kind, nodes,
    density, corner_hz: the contract of the sources table's noise rows)."""

    row: int
    name: str
    kind: str
    from_node: str
    to_node: str
    density: float
    corner_hz: float = 0.0


def test_docstring_examples_run():
    res = doctest.testmod(xlfuncs.studies.noise)
    assert res.attempted > 0 and res.failed == 0


def test_boltzmann_constant_is_the_exact_si_value():
    assert BOLTZMANN == 1.380649e-23


@pytest.mark.parametrize(
    ("r", "c", "t_c"), [(1e3, 1e-9, 26.85), (50.0, 1e-6, -40.0), (1e6, 10e-12, 125.0)]
)
def test_rc_low_pass_over_all_frequencies_is_kt_over_c(r, c, t_c):
    parts = [HEAD, ["R", "R", "in", "out", r], ["C", "C", "out", "GND", c]]
    res = noise_rms(parts, SUP, "out", 0, math.inf, t_c)
    assert res.rms_v == pytest.approx(math.sqrt(BOLTZMANN * (t_c + 273.15) / c), rel=1e-9)
    assert res.rel_error < 1e-9


def test_band_limited_rc_closed_form():
    r, c, t = 1e3, 1e-9, 300.0
    f1, f2 = 10e3, 1e6
    parts = [HEAD, ["R", "R", "in", "out", r], ["C", "C", "out", "GND", c]]
    res = noise_rms(parts, SUP, "out", f1, f2, t - 273.15)
    a = 2 * math.pi * r * c
    exact = 2 * BOLTZMANN * t / (math.pi * c) * (math.atan(a * f2) - math.atan(a * f1))
    assert res.rms_v**2 == pytest.approx(exact, rel=1e-9)


def test_divider_density_and_contributions():
    r1, r2, t = 3e3, 1e3, 290.0
    parts = [HEAD, ["R1", "R", "in", "mid", r1], ["R2", "R", "mid", "GND", r2]]
    s = noise_density(parts, SUP, "mid", [1.0, 1e3, 1e6], t - 273.15)
    par = r1 * r2 / (r1 + r2)
    assert s.density == pytest.approx(np.full(3, math.sqrt(4 * BOLTZMANN * t * par)), rel=1e-12)
    # each resistor's current noise 4kT/R through R1 ‖ R2
    assert s.contributions[:, 0] == pytest.approx(4 * BOLTZMANN * t / r1 * par**2, rel=1e-12)
    assert s.names == ("R1", "R2") and s.kinds == ("R", "R")


def test_amplifier_stage_matches_an_independent_sum_per_source():
    a_gain, rsrc, rf, rg, cp = 1000.0, 1e3, 9e3, 1e3, 10e-9
    t = 300.0
    parts = [
        [*HEAD, "ctrl_from", "ctrl_to"],
        ["Rsrc", "R", "x", "p", rsrc, None, None],
        ["Cp", "C", "p", "GND", cp, None, None],
        ["E", "VCVS", "out", "GND", a_gain, "p", "n"],
        ["Rf", "R", "out", "n", rf, None, None],
        ["Rg", "R", "n", "GND", rg, None, None],
    ]
    noise = [
        Noise(3, "en", "V", "in", "x", 4e-9),  # in series between the source and Rsrc
        Noise(4, "inp", "I", "GND", "p", 2e-12),  # current noise into the + input
    ]
    f = np.geomspace(10, 1e7, 50)
    s = noise_density(parts, SUP, "out", f, t - 273.15, noise_sources=noise)
    four_kt = 4 * BOLTZMANN * t

    def stage(w, vx, ip, i_n):
        """V(out) from the nodal equations of p, n and the amplifier (V(x) given)."""
        m = np.zeros((w.size, 3, 3), dtype=complex)
        b = np.zeros((w.size, 3), dtype=complex)
        m[:, 0, 0] = 1 / rsrc + 1j * w * cp  # node p
        b[:, 0] = ip + vx / rsrc
        m[:, 1, 1] = 1 / rf + 1 / rg  # node n
        m[:, 1, 2] = -1 / rf
        b[:, 1] = i_n
        m[:, 2, 2] = 1.0  # out = A·(p − n)
        m[:, 2, 0] = -a_gain
        m[:, 2, 1] = a_gain
        return np.linalg.solve(m, b[..., None])[..., 0][:, 2]

    w = 2 * np.pi * f
    ref = {
        "en": np.abs(stage(w, 1.0, 0.0, 0.0)) ** 2 * (4e-9) ** 2,
        "inp": np.abs(stage(w, 0.0, 1.0, 0.0)) ** 2 * (2e-12) ** 2,
        "Rsrc": np.abs(stage(w, 0.0, 1.0, 0.0)) ** 2 * four_kt / rsrc,
        "Rf": np.abs(stage(w, 0.0, 0.0, 1.0)) ** 2 * four_kt / rf,
        "Rg": np.abs(stage(w, 0.0, 0.0, 1.0)) ** 2 * four_kt / rg,
    }
    for name, val in ref.items():
        k = s.names.index(name)
        assert s.contributions[:, k] == pytest.approx(val, rel=1e-10), name
    assert s.density == pytest.approx(np.sqrt(sum(ref.values())), rel=1e-10)


def test_one_over_f_noise_row_closed_form():
    r, d, fc = 100.0, 2e-12, 1e3
    parts = [HEAD, ["R", "R", "n", "GND", r]]
    res = noise_rms(
        parts, None, "n", 10.0, 1e5, 25.0, noise_sources=[Noise(2, "in1", "I", "GND", "n", d, fc)]
    )
    by = {c.name: c for c in res.contributions}
    exact = d * d * r * r * ((1e5 - 10.0) + fc * math.log(1e5 / 10.0))
    assert by["in1"].rms_v ** 2 == pytest.approx(exact, rel=1e-9)
    thermal = 4 * BOLTZMANN * 298.15 * r * (1e5 - 10.0)
    assert by["R"].rms_v ** 2 == pytest.approx(thermal, rel=1e-9)
    assert res.rms_v**2 == pytest.approx(exact + thermal, rel=1e-9)
    assert sum(c.share for c in res.contributions) == pytest.approx(1.0, rel=1e-12)
    assert [c.rms_v for c in res.contributions] == sorted(
        (c.rms_v for c in res.contributions), reverse=True
    )


def test_resistance_law_thermal_density():
    # open-circuit noise of one resistor following R(f) = R·(f/f1)^x: 4kT·R(f)
    f1, x, r, t = 50.0, 0.5, 10.0, 300.0
    parts = [[*HEAD, "r_exponent"], ["R", "R", "n", "GND", r, x]]
    f = np.array([10.0, 50.0, 800.0])
    s = noise_density(parts, None, "n", f, t - 273.15, options=[["fundamental_hz", f1]])
    rf = r * np.maximum(1.0, f / f1) ** x
    assert s.density**2 == pytest.approx(4 * BOLTZMANN * t * rf, rel=1e-12)


def test_refusals_name_the_argument():
    rc = [HEAD, ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-9]]
    with pytest.raises(InputError, match=r"argument f_start.*1/f noise"):
        noise_rms(
            rc,
            SUP,
            "out",
            0,
            1e3,
            25.0,
            noise_sources=[Noise(2, "in1", "I", "GND", "out", 1e-12, 10.0)],
        )
    divider = [HEAD, ["R1", "R", "in", "mid", 1e3], ["R2", "R", "mid", "GND", 1e3]]
    with pytest.raises(InputError, match=r"argument f_stop.*R1.*without roll-off"):
        noise_rms(divider, SUP, "mid", 0, math.inf, 25.0)
    law = [
        [*HEAD, "r_exponent"],
        ["R", "R", "in", "out", 1e3, 0.5],
        ["C", "C", "out", "GND", 1e-9, None],
    ]
    with pytest.raises(InputError, match=r"argument f_stop.*resistance law"):
        noise_rms(law, SUP, "out", 1, math.inf, 25.0, options=[["fundamental_hz", 50]])
    with pytest.raises(InputError, match=r"argument temperature_c.*absolute zero"):
        noise_rms(rc, SUP, "out", 1, 1e3, -300.0)
    with pytest.raises(InputError, match="nothing makes noise"):
        noise_rms(
            [HEAD, ["C", "C", "out", "GND", 1e-9], ["L", "L", "out", "GND", 1e-3]],
            None,
            "out",
            1,
            10,
            25.0,
        )


def test_voltage_noise_row_across_a_voltage_source_is_refused():
    # a noise voltage source in parallel with the supply: a loop of voltage sources
    rc = [HEAD, ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-9]]
    with pytest.raises(NetworkError, match=r"loop made only of voltage sources.*Vs, en"):
        noise_rms(
            rc, SUP, "out", 1, 1e3, 25.0, noise_sources=[Noise(3, "en", "V", "in", "GND", 1e-9)]
        )


def test_worksheet_and_cli(capsys, tmp_path):
    rc = [HEAD, ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-9]]
    v = FUNCTIONS["CKT_NOISE_RMS"].call(rc, SUP, "out", 0.0, "inf", 26.85, None)
    assert v == pytest.approx(math.sqrt(BOLTZMANN * 300 / 1e-9), rel=1e-9)
    spill = FUNCTIONS["CKT_NOISE"].call(rc, SUP, "out", 10.0, 1e6, 26.85, 3.0)
    assert spill[0] == ["freq_hz", "density_v_rthz"] and len(spill) == 4
    assert spill[1][1] == pytest.approx(math.sqrt(4 * BOLTZMANN * 300 * 1e3), rel=1e-6)
    ranked = FUNCTIONS["CKT_NOISE_PARTS"].call(rc, SUP, "out", 0.0, "inf", 26.85)
    assert ranked[0] == ["name", "kind", "rms_v", "share_pct"]
    assert ranked[1][:2] == ["R", "R"] and ranked[-1][0] == "total"
    assert ranked[-1][2] == pytest.approx(v, rel=1e-12)
    p, s = tmp_path / "p.csv", tmp_path / "s.csv"
    p.write_text("name,kind,from,to,value\nR,R,in,out,1k\nC,C,out,GND,1n\n")
    s.write_text("name,kind,from,to,freq_hz,peak\nVs,V,in,GND,0,1\n")
    args = ["noise", str(p), str(s), "--node", "out", "--f-start", "0", "--f-stop", "inf"]
    assert main([*args, "--temperature-c", "26.85", "--points", "3"]) == 0
    text = capsys.readouterr().out
    assert "2.03518e-06" in text and "density_v_rthz" in text


def test_noise_rows_of_the_sources_table():
    # the sources table's noise rows (density, corner_hz) reach the study as records: the
    # same result as the records given directly
    rc = [HEAD, ["R", "R", "in", "out", 1e3], ["C", "C", "out", "GND", 1e-9]]
    table = [
        ["name", "kind", "from", "to", "freq_hz", "peak", "density", "corner_hz"],
        ["Vs", "V", "in", "GND", 0, 1.0, None, None],
        ["in1", "I", "GND", "out", None, None, "2p", "1k"],
    ]
    a = noise_rms(rc, table, "out", 10.0, 1e5, 25.0)
    b = noise_rms(
        rc,
        SUP,
        "out",
        10.0,
        1e5,
        25.0,
        noise_sources=[Noise(3, "in1", "I", "GND", "out", 2e-12, 1e3)],
    )
    assert a.rms_v == pytest.approx(b.rms_v, rel=1e-12)
    assert {c.name for c in a.contributions} == {"R", "in1"}


def test_voltage_noise_row_in_series_through_a_helper_resistor():
    # divider R1/R2 with the noise source in series with R1 (across a 1 mΩ helper): the
    # output sees d·R2/(R1 + R2) exactly (the source shorts the helper), the helper nothing
    r1, r2, d = 3e3, 1e3, 5e-9
    parts = [
        HEAD,
        ["Rh", "R", "in", "x", 1e-3],
        ["R1", "R", "x", "mid", r1],
        ["R2", "R", "mid", "GND", r2],
    ]
    table = [
        ["name", "kind", "from", "to", "freq_hz", "peak", "density"],
        ["Vs", "V", "in", "GND", 0, 1.0, None],
        ["en", "V", "in", "x", None, None, d],
    ]
    s = noise_density(parts, table, "mid", [1e3], 25.0)
    k = s.names.index("en")
    assert s.contributions[0, k] == pytest.approx((d * r2 / (r1 + r2)) ** 2, rel=1e-12)
    assert s.contributions[0, s.names.index("Rh")] < 1e-30


def test_instrument_example_runs(capsys):
    import runpy
    from pathlib import Path

    path = Path(__file__).parents[2] / "examples" / "instrument" / "anti_alias.py"
    mod = runpy.run_path(str(path))
    assert mod["main"]() == 0
    out = capsys.readouterr().out
    assert "DEMO DATA" in out and "Alias rejection" in out and "dynamic range" in out
