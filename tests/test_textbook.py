"""A published worked example with a dependent source, rebuilt and matched.

C. K. Alexander, M. N. O. Sadiku, *Fundamentals of Electric Circuits*, 5th ed.
(McGraw-Hill, 2013), Example 10.1 (AC nodal analysis): 20 cos 4t V source behind 10 Ω;
node 1 to ground 0.1 F (current i_x); node 1 to node 2 a 1 H inductor; node 2 to ground a
0.5 H inductor and a dependent current source 2·i_x into node 2. Printed answers:
V1 = 18.97∠18.43° V, V2 = 13.91∠198.3° V, i_x = 7.59 cos(4t + 108.4°) A.
The circuit and digits are recalled from the book (from memory, not re-read from a copy);
they are cross-checked below by solving the book's own two node equations with sympy.
"""

import math

import numpy as np
import pytest
import sympy as sp
from helpers import parts

import xlfuncs

W = 4.0  # rad/s


def _solution():
    p = parts(
        ["R1", "R", "s", "1", 10.0],
        ["C1", "C", "1", "GND", 0.1],
        ["L1", "L", "1", "2", 1.0],
        ["L2", "L", "2", "GND", 0.5],
        ["F1", "CCCS", "GND", "2", 2.0],
        header=["name", "kind", "from", "to", "value"],
    )
    p[0].append("ctrl_part")
    for row in p[1:]:
        row.append("C1" if row[0] == "F1" else None)
    s = [
        ["name", "kind", "from", "to", "omega_rad_s", "peak", "phase_deg"],
        ["Vs", "V", "s", "GND", W, 20.0, 0.0],
    ]
    return xlfuncs.solve(p, s)


@pytest.mark.parametrize(
    ("target", "mag", "ang", "mag_digits"),
    [
        ("1", 18.97, 18.43, 0.005),  # printed V1 = 18.97∠18.43° V
        ("2", 13.91, 198.3, 0.005),  # printed V2 = 13.91∠198.3° V
    ],
)
def test_node_voltages_match_printed_digits(target, mag, ang, mag_digits):
    v = _solution().voltage(target).phasors[0]
    assert abs(abs(v) - mag) <= mag_digits
    assert abs((math.degrees(np.angle(v)) - ang + 180) % 360 - 180) <= 0.15


def test_dependent_current_matches_printed_ix():
    i = _solution().current("C1").phasors[0]  # i_x flows through the capacitor to ground
    assert abs(abs(i) - 7.59) <= 0.005  # printed 7.59 A
    assert abs(math.degrees(np.angle(i)) - 108.4) <= 0.05  # printed 108.4°


def test_matches_exact_solution_of_the_books_node_equations():
    # Node equations as the book writes them, solved exactly by sympy:
    # (1 + j1.5)V1 + j2.5 V2 = 20 ;  11 V1 + 15 V2 = 0
    v1, v2 = sp.symbols("V1 V2")
    j = sp.I
    res = sp.solve(
        [
            sp.Eq((1 + j * sp.Rational(3, 2)) * v1 + j * sp.Rational(5, 2) * v2, 20),
            sp.Eq(11 * v1 + 15 * v2, 0),
        ],
        [v1, v2],
    )
    sol = _solution()
    for name, sym in (("1", v1), ("2", v2)):
        exact = complex(sp.N(res[sym], 30))
        got = sol.voltage(name).phasors[0]
        assert abs(got - exact) <= 1e-12 * abs(exact)
