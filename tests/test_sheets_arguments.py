"""Scalar worksheet arguments: every value is either usable or refused in one line that
names the argument — never an internal error, never a silently truncated or
non-finite value."""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from xlfuncs.functions import FUNCTIONS, cache_clear

PARTS = [
    ["name", "kind", "from", "to", "value", "tolerance"],
    ["R1", "R", "in", "bus", "1", "10%"],
    ["C1", "C", "bus", "GND", "100u", None],
    ["R2", "R", "bus", "GND", "10", None],
]
SOURCES = [
    ["name", "kind", "from", "to", "harmonic", "rms"],
    ["V", "V", "in", "GND", 1.0, 230.0],
    ["I5", "I", "GND", "bus", 5.0, 2.0],
]
OPTS = [["fundamental_hz", 50.0]]

# a valid call of every function of the core and studies modules
CASES = {
    "CKT_SOLVE": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_RMS": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_PEAK": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_THD": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_DC": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_CREST": (PARTS, SOURCES, "bus", None, OPTS),
    "CKT_POWER": (PARTS, SOURCES, "R2", OPTS),
    "CKT_REPORT": (PARTS, SOURCES, OPTS),
    "CKT_NODES": (PARTS, SOURCES, OPTS),
    "CKT_WAVE": (PARTS, SOURCES, "bus", None, 64.0, OPTS),
    "CKT_SCAN": (PARTS, "bus", 10.0, 5000.0, 16.0, OPTS, SOURCES),
    "CKT_IMPEDANCE": (PARTS, "bus", [[250.0, 0.0]], OPTS, SOURCES),
    "CKT_V519": (PARTS, SOURCES, "bus", 0.4, OPTS),
    "CKT_I519": (PARTS, SOURCES, "R2", 5000.0, 100.0, 0.4, 2014.0, OPTS),
    "CKT_V519_LIMITS": (0.4,),
    "CKT_I519_LIMIT": (11.0, 75.0, 13.8, 2022.0),
    "CKT_CAPDUTY": (PARTS, SOURCES, "C1", 1.7, 230.0, OPTS),
    "CKT_DETUNE": (80.0, 525.0, 50.0, 0.07),
    "CKT_DRIVE": ("Id", "GND", "bus", 100.0, 12.0, 49.0, 30.0, None),
    "CKT_TOLERANCE": (PARTS, SOURCES, "bus", "rms", 64.0, None, OPTS),
    "CKT_VERSION": (),
}
NUMERIC = {
    "f_start",
    "f_stop",
    "points",
    "bus_kv",
    "i_sc",
    "i_l",
    "edition",
    "order",
    "isc_il",
    "rated_kvar",
    "rated_v",
    "kvar",
    "volts",
    "fundamental_hz",
    "p_or_order",
    "i1_rms",
    "pulses",
    "max_order",
    "phase_deg",
    "samples",
}
NAMES = {"target", "part", "node", "source_name", "node_from", "node_to"}
BAD = [math.inf, -math.inf, math.nan, 1e308, -1e308, 5e-324, -1.0, 0.0, 0.5, 6.5, True, "x"]
OURS = ("xlfuncs.functions.core", "xlfuncs.functions.studies")
# a value may be refused for its relation to another argument, named instead
RELATED = {"i_l": ("i_sc",), "f_start": ("f_stop",)}


def _ok_or_names(out, arg):
    """A usable result (no non-finite number in it), or one line naming ``arg``."""
    if isinstance(out, str) and out.startswith("ERROR"):
        assert "internal error" not in out, out
        assert "\n" not in out and len(out) <= 255, out
        names = (arg, *RELATED.get(arg, ()))
        return any(out.startswith(f"ERROR: argument {a}:") for a in names)
    cells = out if isinstance(out, list) else [[out]]
    return all(not (isinstance(c, float) and not math.isfinite(c)) for r in cells for c in r)


def test_every_function_of_these_modules_has_a_case():
    ours = {n for n, fd in FUNCTIONS.items() if fd.call.__module__ in OURS}
    assert ours == set(CASES)


def _positions(name):
    return [(i, a) for i, (a, _d, _o) in enumerate(FUNCTIONS[name].args) if a in NUMERIC | NAMES]


@pytest.mark.parametrize("name", sorted(CASES))
def test_bad_scalar_values_are_refused_naming_the_argument(name):
    base = CASES[name]
    good = FUNCTIONS[name].call(*base)
    assert not (isinstance(good, str) and good.startswith("ERROR")), good
    for i, arg in _positions(name):
        for v in BAD:
            args = list(base)
            args[i] = v
            out = FUNCTIONS[name].call(*args)
            assert _ok_or_names(out, arg), (name, arg, v, out)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data())
def test_any_float_is_usable_or_refused(data):
    name = data.draw(st.sampled_from(sorted(n for n in CASES if _positions(n))))
    i, arg = data.draw(st.sampled_from(_positions(name)))
    if arg in ("samples", "points"):  # a valid count may be large: the grid above covers them
        return
    v = data.draw(st.floats(allow_nan=False))
    args = list(CASES[name])
    args[i] = v
    out = FUNCTIONS[name].call(*args)
    assert _ok_or_names(out, arg), (name, arg, v, out)


@pytest.mark.parametrize(
    ("name", "args", "message"),
    [
        # internal errors before: OverflowError for 1e308 V, ZeroDivisionError for 1e-308 V
        (
            "CKT_DETUNE",
            (80.0, 1e308, 50.0, 0.07),
            "ERROR: argument volts: 1e+308 — expected a number from 1 to 1200000 V",
        ),
        (
            "CKT_DETUNE",
            (80.0, 1e-308, 50.0, 0.07),
            "ERROR: argument volts: 1e-308 — expected a number from 1 to 1200000 V",
        ),
        (
            "CKT_DETUNE",
            (80.0, 525.0, 50.0, 1e308),
            "ERROR: argument p_or_order: 1e+308 — expected a tuned order > 1 and ≤ 100",
        ),
        # silently truncated before: 6.5 pulses became 6, edition 2014.5 became 2014
        (
            "CKT_DRIVE",
            ("Id", "GND", "bus", 100.0, 6.5),
            "ERROR: argument pulses: 6.5 — expected one of 6, 12, 18, 24",
        ),
        (
            "CKT_DRIVE",
            ("Id", "GND", "bus", 100.0, 6.0, 25.7),
            "ERROR: argument max_order: 25.7 — expected a whole number from 2 to 200",
        ),
        (
            "CKT_I519_LIMIT",
            (11.0, 75.0, None, 2014.5),
            "ERROR: argument edition: 2014.5 — expected one of 2014, 2022",
        ),
        (
            "CKT_I519",
            (PARTS, SOURCES, "R2", 50.0, 100.0, 0.4, None, OPTS),
            "ERROR: argument i_sc: 50.0 — expected a short-circuit current ≥ i_l (100 A)",
        ),
        (
            "CKT_V519_LIMITS",
            (1e308,),
            "ERROR: argument bus_kv: 1e+308 — expected a number > 0 and ≤ 1200 kV",
        ),
        (
            "CKT_SCAN",
            (PARTS, "bus", 1e308, 2e308),
            "ERROR: argument f_start: 1e+308 — expected a frequency from 1e-06 to 1e+12 Hz",
        ),
        (
            "CKT_SCAN",
            (PARTS, "bus", 10.0, 1e4, 5.5),
            "ERROR: argument points: 5.5 — expected a whole number from 2 to 100000",
        ),
        (
            "CKT_IMPEDANCE",
            (PARTS, "bus", [[5e-324]]),
            "ERROR: argument freqs: 5e-324 — expected 0 Hz (DC) or a frequency from "
            "1e-06 to 1e+12 Hz",
        ),
        (
            "CKT_TOLERANCE",
            (PARTS, SOURCES, "bus", "rms", 1e7, None, OPTS),
            "ERROR: argument samples: 10000000.0 — expected a whole number from 2 to 1000000",
        ),
        (
            "CKT_RMS",
            (PARTS, SOURCES, True, None, OPTS),
            "ERROR: argument target: True — expected a name",
        ),
    ],
)
def test_range_messages(name, args, message):
    cache_clear()
    assert FUNCTIONS[name].call(*args) == message


def test_spectrum_cells_are_checked_where_the_user_sees_them():
    call = FUNCTIONS["CKT_DRIVE"].call
    head = ["order", "pct"]
    assert call("Id", "GND", "bus", 100.0, None, None, None, [head, [1, 100], [5.0, True]]) == (
        "ERROR: spectrum row 3, column pct: True — expected a percentage of I1 (a number ≥ 0)"
    )
    assert call("Id", "GND", "bus", 100.0, None, None, None, [head, [1, 100], [1e9, 3]]) == (
        "ERROR: spectrum row 3, column order: 1000000000.0 — expected at most 100,000 (the "
        "tables' range)"
    )
    assert call("Id", "GND", "bus", 100.0, None, None, None, [head, [1, 100], [500, 3]]) == (
        "ERROR: spectrum, column order: 500.0 — expected orders up to 200"
    )
    assert call("Id", "GND", "bus", 100.0, None, None, None, [head, [1, 100]]) == (
        "ERROR: spectrum, column order — no harmonic above order 1"
    )
