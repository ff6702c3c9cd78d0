"""Every shared argument description is true for every function that uses it.

One argument name has one description across the registry, so a description that fits
one function and not another misleads the user of the other. These tests call every
function that uses ``node``, ``f_start`` or ``f_stop`` at the edges the descriptions
state (the reference node, 0 Hz, the text ``inf``, a 13-decade band) and check that
exactly the functions a description names as exceptions behave differently. The edges
are facts of the quantities (0 Hz is DC; a band to infinity has no finite stop).
"""

from __future__ import annotations

import re

import pytest

from xlfuncs.functions import ARGS, FUNCTIONS, cache_clear

PARTS = [
    ["name", "kind", "from", "to", "value"],
    ["L1", "L", "in", "out", 1e-3],
    ["C1", "C", "out", "GND", 1e-6],
    ["RL", "R", "out", "GND", 10.0],
]
SOURCES = [["name", "kind", "from", "to", "freq_hz", "rms"], ["Vs", "V", "in", "GND", 50.0, 1.0]]
OPTS = [["fundamental_hz", 50.0]]
EQUIPMENT = [
    ["name", "kind", "bus", "kv", "mva_sc", "x_r", "kvar", "connection"],
    ["U1", "supply", "B1", 13.8, 125.0, 10.0, None, None],
    ["C1", "capacitor", "B1", 13.8, None, None, 5000.0, "Y"],
]
STUDY = [["key", "value"], ["fundamental_hz", 60.0]]

# the arguments of every function with a band, F0 / F1 standing for f_start / f_stop
BAND = {
    "CKT_SCAN": (PARTS, "out", "F0", "F1", 20.0, OPTS, SOURCES),
    "CKT_RESONANCES": (PARTS, "out", "F0", "F1", None, OPTS, SOURCES),
    "CKT_GAIN": (PARTS, SOURCES, "Vs", "out", "F0", "F1", 20.0, None, OPTS),
    "CKT_PORT_Z": (PARTS, "out", "GND", "F0", "F1", 20.0, OPTS, SOURCES),
    "CKT_TWOPORT_Z": (PARTS, "in", "out", "RL", "F0", "F1", 20.0, OPTS, SOURCES),
    "CKT_FILTER_MARGIN": (PARTS, "out", 12.0, 10.0, "F0", "F1", None, OPTS, SOURCES),
    "CKT_MARGIN_SCAN": (PARTS, "out", 12.0, 10.0, "F0", "F1", 20.0, OPTS, SOURCES),
    "CKT_NOISE": (PARTS, SOURCES, "out", "F0", "F1", 25.0, 20.0, OPTS),
    "CKT_NOISE_RMS": (PARTS, SOURCES, "out", "F0", "F1", 25.0, OPTS),
    "CKT_NOISE_PARTS": (PARTS, SOURCES, "out", "F0", "F1", 25.0, OPTS),
    "CKT_BUS_SCAN": (EQUIPMENT, "B1", "F0", "F1", 20.0, None, STUDY),
    "CKT_BUS_RESONANCES": (EQUIPMENT, "B1", "F0", "F1", None, None, STUDY),
}
NODE = {
    "CKT_SCAN": (PARTS, "N", 10.0, 1e4, 20.0, OPTS, SOURCES),
    "CKT_IMPEDANCE": (PARTS, "N", [[50.0]], OPTS, SOURCES),
    "CKT_V519": (PARTS, SOURCES, "N", 0.4, OPTS),
    "CKT_RESONANCES": (PARTS, "N", 10.0, 1e4, None, OPTS, SOURCES),
    "CKT_NOISE": (PARTS, SOURCES, "N", 10.0, 1e4, 25.0, 20.0, OPTS),
    "CKT_NOISE_RMS": (PARTS, SOURCES, "N", 10.0, 1e4, 25.0, OPTS),
    "CKT_NOISE_PARTS": (PARTS, SOURCES, "N", 10.0, 1e4, 25.0, OPTS),
}


def _users(arg):
    return {n for n, fd in FUNCTIONS.items() if arg in [a[0] for a in fd.args]}


def _call(name, f0, f1):
    cache_clear()
    args = [f0 if a == "F0" else f1 if a == "F1" else a for a in BAND[name]]
    return FUNCTIONS[name].call(*args)


def _refused(out, column):
    return isinstance(out, str) and out.startswith(f"ERROR: argument {column}:")


def _named(arg):
    return set(re.findall(r"CKT_[A-Z0-9_]+", ARGS[arg][0]))


def test_every_function_with_a_band_or_a_node_is_covered_here():
    assert _users("f_start") == _users("f_stop") == set(BAND)
    assert _users("node") == set(NODE)


@pytest.mark.parametrize("name", sorted(BAND))
def test_an_ordinary_band_is_accepted(name):
    out = _call(name, 10.0, 1e4)
    assert not (isinstance(out, str) and out.startswith("ERROR")), out


@pytest.mark.parametrize("name", sorted(BAND))
def test_f_start_zero_only_where_the_description_says(name):
    out = _call(name, 0.0, 1e4)
    if name in _named("f_start"):
        assert isinstance(out, (float, list)), out
    else:
        assert _refused(out, "f_start"), out


@pytest.mark.parametrize("name", sorted(BAND))
def test_f_stop_inf_only_where_the_description_says(name):
    out = _call(name, 10.0, "inf")
    allowed = _named("f_stop") - {"CKT_SCAN", "CKT_BUS_SCAN"}  # those two: the decade rule
    if name in allowed:
        assert isinstance(out, (float, list)), out
    else:
        assert _refused(out, "f_stop"), out


@pytest.mark.parametrize("name", sorted(BAND))
def test_thirteen_decades_are_refused_except_in_the_two_scans(name):
    out = _call(name, 1e-3, 1e10)
    if name in ("CKT_SCAN", "CKT_BUS_SCAN"):
        assert isinstance(out, list) and len(out) == 21, out
    else:
        assert _refused(out, "f_stop") and "12 decades" in out, out


def test_the_descriptions_state_the_edges_the_functions_take():
    assert _named("f_start") == {"CKT_NOISE_RMS", "CKT_NOISE_PARTS"}
    assert "also take 0" in ARGS["f_start"][0]
    assert _named("f_stop") == {"CKT_SCAN", "CKT_BUS_SCAN", "CKT_NOISE_RMS", "CKT_NOISE_PARTS"}
    assert "12 decades" in ARGS["f_stop"][0] and "inf" in ARGS["f_stop"][0]
    assert "other than the reference" in ARGS["node"][0]
    assert "impedance" in ARGS["node"][0] and "noise" in ARGS["node"][0]


@pytest.mark.parametrize("name", sorted(NODE))
def test_node_is_any_node_but_the_reference(name):
    cache_clear()
    out = FUNCTIONS[name].call(*["GND" if a == "N" else a for a in NODE[name]])
    assert _refused(out, "node") and "other than the reference 'GND'" in out, out
    cache_clear()
    out = FUNCTIONS[name].call(*["out" if a == "N" else a for a in NODE[name]])
    assert not (isinstance(out, str) and out.startswith("ERROR")), out


def test_every_description_fits_the_function_dialog():
    # Excel's function dialog shows at most 255 characters of an argument's text
    # (common practice: the limit of the registration call's strings)
    assert all(len(text) <= 255 for text, _opts in ARGS.values())
