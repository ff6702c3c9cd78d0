"""An independent reference for the three-phase studies: the same plant as a full
three-phase (a, b, c) network of real parts in our ordinary tables, solved by the core.

Nothing here uses the sequence machinery of ``xlfuncs.power``: transformers are three
single-phase units whose windings are wired delta or star by matching winding-voltage
angles of a positive-sequence set (the definition of the clock number: the LV phase-to-
neutral voltage lags the HV one by clock × 30°, IEC 60076-1), impedances are computed here
from the ratings with the textbook per-unit relations, and the balanced harmonic sources
of each phase follow from phase a by the time shift of a third of a period
(phase b: × e^(−j·h·120°), phase c: × e^(+j·h·120°)). Zero-sequence blocking, the phase
shifts and the neutral currents then come out of Kirchhoff's laws alone.
"""

from __future__ import annotations

import cmath
import math
from typing import Any

import xlfuncs

PH = ("a", "b", "c")
HV = ("A", "B", "C")
SHIFT = {"a": 0.0, "b": -120.0, "c": 120.0}
PARTS = ["name", "kind", "from", "to", "value", "sec_from", "sec_to", "r_exponent"]
SOURCES = ["name", "kind", "from", "to", "freq_hz", "peak", "phase_deg"]


def rows_of(table: list[list[Any]]) -> list[dict[str, Any]]:
    head = [str(h).strip().lower() for h in table[0]]
    return [
        {h: v for h, v in zip(head, r, strict=False) if v is not None and v != ""}
        for r in table[1:]
    ]


def _group(text: str) -> tuple[str, str, int]:
    t = text.upper()
    hv = "YN" if t.startswith("YN") else t[0]
    rest = t[len(hv) :]
    lv = "YN" if rest.startswith("YN") else rest[0]
    return hv, lv, int(rest[len(lv) :])


def _angle(z: complex) -> float:
    return math.degrees(cmath.phase(z)) % 360


class Abc:
    """Builder of the three-phase network; ``parts``/``sources`` are 2-D tables."""

    def __init__(self, f1: float) -> None:
        self.f1 = f1
        self.w1 = 2 * math.pi * f1
        self.parts: list[list[Any]] = [PARTS]
        self.sources: list[list[Any]] = [SOURCES]
        self.lines: dict[tuple[str, str], list[tuple[str, float]]] = {}
        self.neutral: dict[str, list[tuple[str, float]]] = {}

    def part(self, name, kind, a, b, value, sec=(None, None), r_exp=None):
        self.parts.append([name, kind, a, b, value, sec[0], sec[1], r_exp])
        return name

    def rl(self, name, a, b, r, x, r_exp=None):
        m = f"{name}.m"
        self.part(f"{name}.R", "R", a, m, r, r_exp=r_exp)
        self.part(f"{name}.L", "L", m, b, x / self.w1)
        return f"{name}.R"

    def line(self, item, end, phase, element, sign):
        self.lines.setdefault((item, end), []).append((phase, element, sign))

    # ------------------------------------------------------------------ items
    def supply(self, it):
        v = it["kv"] * 1e3
        z1 = v * v / (it["mva_sc"] * 1e6)
        r = z1 / math.sqrt(1 + it["x_r"] ** 2)
        x = r * it["x_r"]
        star = "GND"
        if "mva_sc_1ph" in it:
            z0 = 3 * v * v / (it["mva_sc_1ph"] * 1e6) - 2 * z1
            zn = (z0 - z1) / 3  # Z0 = Z1 + 3·Zn
            assert zn > 0
            star = f"{it['name']}.n"
            self.rl(
                f"{it['name']}.Zn",
                star,
                "GND",
                zn / math.sqrt(1 + it["x_r"] ** 2),
                zn * it["x_r"] / math.sqrt(1 + it["x_r"] ** 2),
            )
        for p in PH:
            e = f"{it['name']}.e{p}"
            m = f"{it['name']}.m{p}"
            self.part(f"{it['name']}.L{p}", "L", f"{it['bus']}.{p}", m, x / self.w1)
            self.part(f"{it['name']}.R{p}", "R", m, e, r)
            self.sources.append(
                [
                    f"{it['name']}.E{p}",
                    "V",
                    e,
                    star,
                    self.f1,
                    math.sqrt(2) * v / math.sqrt(3),
                    SHIFT[p],
                ]
            )
            self.line(it["name"], "bus", p, f"{it['name']}.L{p}", 1.0)

    def transformer(self, it):
        hv, lv, k = _group(it["connection"])
        name = it["name"]
        s = it["kva"] * 1e3
        vh, vl = it["kv_hv"] * 1e3, it["kv_lv"] * 1e3
        zy = it["z_pct"] / 100 * vl * vl / s  # star-equivalent leakage at LV
        # positive-sequence reference voltages of the HV terminals and the LV phases
        vhv = {X: cmath.exp(1j * math.radians(SHIFT[p])) for X, p in zip(HV, PH, strict=True)}
        n_hv = "GND" if hv == "YN" else f"{name}.N"
        n_lv = "GND" if lv == "YN" else f"{name}.n"
        if hv == "D":
            cand = [(X, Y) for X in HV for Y in HV if X != Y]
        else:
            cand = [(X, "N") for X in HV] + [("N", X) for X in HV]
        volt = dict(vhv, N=0)

        def hv_node(t):
            return n_hv if t == "N" else f"{it['bus']}.{PH[HV.index(t)]}"

        lvb = it["bus_to"]
        if lv == "D":
            legs = [("a", "b"), ("b", "c"), ("c", "a")]
            want = {leg: -30 * k + SHIFT[leg[0]] + 30 for leg in legs}
            leg_v, zleg = vl, 3 * zy
        else:
            legs = [(p, "n") for p in PH]
            want = {leg: -30 * k + SHIFT[leg[0]] for leg in legs}
            leg_v, zleg = vl / math.sqrt(3), zy
        hv_v = vh if hv == "D" else vh / math.sqrt(3)
        r = zleg / math.sqrt(1 + it["x_r"] ** 2)
        x = r * it["x_r"]
        for leg in legs:
            match = [
                c
                for c in cand
                if abs((_angle(volt[c[0]] - volt[c[1]]) - want[leg] % 360 + 180) % 360 - 180)
                < 1e-6
            ]
            assert len(match) == 1, (it["connection"], leg, match)
            X, Y = match[0]
            a_lv = f"{lvb}.{leg[0]}"
            b_lv = n_lv if leg[1] == "n" else f"{lvb}.{leg[1]}"
            tag = f"{name}.{leg[0]}{leg[1]}"
            rname = self.rl(tag, a_lv, f"{tag}.w", r, x, r_exp=0.5)
            wname = self.part(
                f"{tag}.X", "XFMR", hv_node(X), hv_node(Y), hv_v / leg_v, sec=(f"{tag}.w", b_lv)
            )
            # line currents: into the unit at its terminals
            if X != "N":
                self.line(name, "bus", PH[HV.index(X)], wname, 1.0)
            if Y != "N":
                self.line(name, "bus", PH[HV.index(Y)], wname, -1.0)
            self.line(name, "bus_to", leg[0], rname, 1.0)
            if leg[1] != "n":
                self.line(name, "bus_to", leg[1], rname, -1.0)
            elif lv == "YN":
                self.neutral.setdefault(f"{name}.lv", []).append((rname, 1.0))

    def cable(self, it):
        n = it["length_km"]
        assert it.get("r0_ohm_km", it["r_ohm_km"]) == it["r_ohm_km"]
        assert it.get("x0_ohm_km", it["x_ohm_km"]) == it["x_ohm_km"]
        c = it.get("c_uf_km", 0) * n * 1e-6
        for p in PH:
            a, b = f"{it['bus']}.{p}", f"{it['bus_to']}.{p}"
            rname = self.rl(f"{it['name']}.{p}", a, b, it["r_ohm_km"] * n, it["x_ohm_km"] * n, 0.5)
            self.line(it["name"], "bus", p, rname, 1.0)
            self.line(it["name"], "bus_to", p, f"{it['name']}.{p}.L", -1.0)
            if c:
                ca = self.part(f"{it['name']}.Ca{p}", "C", a, "GND", c / 2)
                self.line(it["name"], "bus", p, ca, 1.0)
                cb = self.part(f"{it['name']}.Cb{p}", "C", b, "GND", c / 2)
                self.line(it["name"], "bus_to", p, cb, 1.0)

    def _star(self, it):
        return "GND" if it.get("connection", "Y") == "YN" else f"{it['name']}.n"

    def capacitor(self, it):
        q = it["kvar"] * 1e3 * it.get("steps_on", 1) / it.get("steps", 1)
        cy = q / (self.w1 * (it["kv"] * 1e3) ** 2)
        for i, p in enumerate(PH):
            a = f"{it['bus']}.{p}"
            if it["connection"] == "D":
                q_ = PH[(i + 1) % 3]
                name = self.part(f"{it['name']}.C{p}{q_}", "C", a, f"{it['bus']}.{q_}", cy / 3)
                self.line(it["name"], "bus", p, name, 1.0)
                self.line(it["name"], "bus", q_, name, -1.0)
            else:
                name = self.part(f"{it['name']}.C{p}", "C", a, self._star(it), cy)
                self.line(it["name"], "bus", p, name, 1.0)

    def load(self, it):
        assert it["model"] == "parallel"
        p_w = it["kw"] * 1e3
        q = it["kvar"] * 1e3 if "kvar" in it else p_w * math.tan(math.acos(it["pf"]))
        v2 = (it["kv"] * 1e3) ** 2
        for p in PH:
            a = f"{it['bus']}.{p}"
            self.line(
                it["name"],
                "bus",
                p,
                self.part(f"{it['name']}.R{p}", "R", a, self._star(it), v2 / p_w),
                1.0,
            )
            self.line(
                it["name"],
                "bus",
                p,
                self.part(f"{it['name']}.L{p}", "L", a, self._star(it), v2 / (q * self.w1)),
                1.0,
            )

    def motor(self, it):
        v = it["kv"] * 1e3
        x = it["x_pct"] / 100 * v * v / (it["kva"] * 1e3)
        for p in PH:
            rname = self.rl(
                f"{it['name']}.{p}", f"{it['bus']}.{p}", f"{it['name']}.n", x / it["x_r"], x
            )
            self.line(it["name"], "bus", p, rname, 1.0)

    def converter(self, it, tones):
        """``tones``: (freq_hz, phase-a peak phasor drawn from the bus) of every order."""
        for p in PH:
            name = f"{it['name']}.I{p}"
            for f, ia in tones:
                h = round(f / self.f1)
                ip = ia * cmath.exp(1j * math.radians(h * SHIFT[p]))
                self.sources.append(
                    [
                        name,
                        "I",
                        f"{it['bus']}.{p}",
                        "GND",
                        f,
                        abs(ip),
                        math.degrees(cmath.phase(ip)),
                    ]
                )
            self.line(it["name"], "bus", p, name, 1.0)


def build(equipment, f1, converter_tones, fundamental):
    """The three-phase network for the fundamental (``fundamental=True``: motors left
    out, converters' fundamental tones only) or for the harmonic orders (motors as their
    subtransient impedance, converters' harmonic tones; the supply EMF stays, at f1)."""
    abc = Abc(f1)
    for it in rows_of(equipment):
        kind = it["kind"]
        if kind == "converter":
            tones = [
                (f, i)
                for f, i in converter_tones[it["name"]]
                if (abs(f - f1) < 1e-9 * f1) == fundamental
            ]
            abc.converter(it, tones)
        elif kind == "motor":
            if not fundamental:
                abc.motor(it)
        else:
            getattr(abc, kind)(it)
    return abc


def solve(abc: Abc):
    opts = [["key", "value"], ["fundamental_hz", abc.f1]]
    return xlfuncs.solve(abc.parts, abc.sources, opts)


def line_current(sol, abc: Abc, item: str, end: str, phase: str = "a"):
    """Phasors (F,) of the line current of ``phase`` into ``item`` at ``end``."""
    total = 0
    for p, element, sign in abc.lines[(item, end)]:
        if p == phase:
            total = total + sign * sol.current(element).phasors
    return total


def neutral_current(sol, abc: Abc, key: str):
    return sum(sign * sol.current(e).phasors for e, sign in abc.neutral[key])
