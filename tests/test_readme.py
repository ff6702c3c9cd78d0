"""The README's worked example and code are what the package does.

The printed numbers of the worked example are checked against the closed form of the RC
low-pass (V_out = V_in / (1 + jωRC), a textbook first-order divider; common practice) and
against CKT_SOLVE, to the digits the README prints. Its Python blocks are run.
"""

from __future__ import annotations

import cmath
import math
import re
from pathlib import Path

import pytest

from xlfuncs.functions import FUNCTIONS

README = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")

R_OHM, C_F = 1e3, 1e-6  # the worked example's parts: R1 = 1k, C1 = 1u
TONES = [(0.0, 12.0, 0.0), (50.0, 1.0, 0.0), (150.0, 0.2, 30.0)]  # freq, rms, phase


def _section(title: str) -> str:
    start = README.index(title)
    end = README.find("\n### ", start + len(title))
    return README[start:end]


def _tables(text: str) -> list[list[list[str]]]:
    tables, cur = [], []
    for line in text.splitlines():
        if line.startswith("|"):
            cells = [c.strip() for c in line.strip().strip("|").split("|")]
            if not all(set(c) <= set("-: ") for c in cells):
                cur.append(cells)
        elif cur:
            tables.append(cur)
            cur = []
    if cur:
        tables.append(cur)
    return tables


def _num(text: str) -> float:
    return float(text.replace("−", "-"))


def _printed_digits_agree(printed: str, value: float) -> bool:
    """``value`` rounds to ``printed`` at the number of significant digits printed."""
    p = _num(printed)
    if p == 0:
        return abs(value) < 0.5
    digits = len(re.sub(r"[^0-9]", "", printed.lstrip("−-0.").replace(".", "")))
    return float(f"{value:.{max(digits, 1)}g}") == pytest.approx(p, rel=1e-12)


def _closed_form(freq: float, rms: float, phase: float) -> complex:
    amp = rms if freq == 0 else rms * math.sqrt(2) * cmath.exp(1j * math.radians(phase))
    return amp / (1 + 1j * 2 * math.pi * freq * R_OHM * C_F)


def test_worked_example_tables_are_the_ones_computed():
    parts, sources, spill = _tables(_section("### Worked example"))[:3]
    assert parts[1:] == [["R1", "R", "in", "out", "1k"], ["C1", "C", "out", "GND", "1u"]]
    tones = [(_num(r[4]), _num(r[5]), _num(r[6]) if r[6] else 0.0) for r in sources[1:]]
    assert tones == TONES
    got = FUNCTIONS["CKT_SOLVE"].call(parts, [sources[0], *sources[1:]], "out")
    assert got[0] == spill[0] == ["freq_hz", "peak", "rms", "phase_deg"]
    for row_readme, row_ours, (f, rms, ph) in zip(spill[1:4], got[1:4], TONES, strict=True):
        x = _closed_form(f, rms, ph)
        peak = abs(x)
        exact = [f, peak, peak if f == 0 else peak / math.sqrt(2), math.degrees(cmath.phase(x))]
        for printed, ours, ref in zip(row_readme, row_ours, exact, strict=True):
            assert ours == pytest.approx(ref, rel=1e-12, abs=1e-12)
            assert _printed_digits_agree(printed, ref), (printed, ref)
    total = spill[4]
    rms_total = math.sqrt(sum(abs(_closed_form(*t)) ** 2 / (1 if t[0] == 0 else 2) for t in TONES))
    assert total[0] == "total" and total[3] == got[4][3] == "peak exact"
    assert _printed_digits_agree(total[2], rms_total)
    assert got[4][2] == pytest.approx(rms_total, rel=1e-12)
    # the true peak: dense sampling of the closed-form waveform over the common period (20 ms)
    n = 200_000
    peak = max(
        abs(
            sum(
                (x := _closed_form(*t)).real * math.cos(2 * math.pi * t[0] * k * 0.02 / n)
                - x.imag * math.sin(2 * math.pi * t[0] * k * 0.02 / n)
                for t in TONES
            )
        )
        for k in range(0, n, 50)
    )
    assert _printed_digits_agree(total[1], peak)  # 4000 samples: within 1e-5 of the peak
    assert got[4][1] == pytest.approx(peak, rel=1e-5)


def test_worked_example_scalars():
    text = _section("### Worked example")
    parts, sources = _tables(text)[:2]
    x1, x3 = _closed_form(*TONES[1]), _closed_form(*TONES[2])
    thd = abs(x3) / abs(x1)  # only the 3rd harmonic beside the 50 Hz fundamental
    assert re.search(r"`=CKT_THD\(A1:E3, G1:M4, \"out\"\)` → 0\.15256", text)
    assert _printed_digits_agree("0.15256", thd)
    assert FUNCTIONS["CKT_THD"].call(parts, sources, "out") == pytest.approx(thd, rel=1e-12)
    # power in R1: Σ |V_in − V_out|² / R over the tones (DC: none, C1 is open)
    p = sum(
        abs(
            (rms * math.sqrt(2) * cmath.exp(1j * math.radians(ph)) if f else rms)
            - _closed_form(f, rms, ph)
        )
        ** 2
        / (R_OHM if f == 0 else 2 * R_OHM)
        for f, rms, ph in TONES
    )
    assert "→ 0.00010865 W" in text and _printed_digits_agree("0.00010865", p)
    assert FUNCTIONS["CKT_POWER"].call(parts, sources, "R1") == pytest.approx(p, rel=1e-12)
    bad = [r[:] for r in parts]
    bad[2][4] = "1q"
    msg = FUNCTIONS["CKT_RMS"].call(bad, sources, "out")
    assert msg in text and msg.startswith("ERROR: parts row 3, column value: '1q'")


def _csv(path: Path) -> list[list[object]]:
    import csv

    with path.open(newline="", encoding="utf-8") as fh:
        return [[c if c != "" else None for c in row] for row in csv.reader(fh)]


def test_python_blocks_run(capsys):
    blocks = re.findall(r"```python\n(.*?)```", README, flags=re.S)
    (api,) = [b for b in blocks if b.startswith("import xlfuncs\n")]
    exec(compile(api, "README.md", "exec"), {})
    out = capsys.readouterr().out
    assert "13.53" in out and "0.1525" in out
    # the three-phase snippet, on the invented plant of examples/power
    (power,) = [b for b in blocks if "harmonic_study" in b]
    demo = Path(__file__).resolve().parents[1] / "examples" / "power"
    names = {
        "equipment_rows": _csv(demo / "equipment.csv"),
        "spectra_rows": _csv(demo / "spectra.csv"),
    }
    exec(compile(power, "README.md", "exec"), names)
    assert names["st"].resonances("PCC")
