"""The content-keyed caches of the worksheet functions: exact keys, shared results that
nobody can alter, refusals kept, bugs not kept, bounded size."""

from __future__ import annotations

import math
import pickle

import pytest

from xlfuncs.functions import FUNCTIONS, cache_clear, cache_info
from xlfuncs.functions import cache as cache_module

PARTS = [
    ["name", "kind", "from", "to", "value"],
    ["R1", "R", "in", "out", 1.0],
    ["R2", "R", "out", "GND", 3.0],
]
SOURCES = [["name", "kind", "from", "to", "freq_hz", "peak"], ["Vs", "V", "in", "GND", 50.0, 4.0]]
RMS_OUT = 0.75 * 4.0 / math.sqrt(2)  # divider 3/(1+3), RMS = peak/√2 (common practice)


@pytest.fixture(autouse=True)
def fresh():
    cache_clear()
    yield
    cache_clear()


def test_a_true_cell_never_shares_the_entry_of_a_one():
    # TRUE == 1.0 in Python (and hashes alike): keyed by value alone, the TRUE table got
    # the number solved for 1 Ω instead of its refusal
    assert FUNCTIONS["CKT_RMS"].call(PARTS, SOURCES, "out") == pytest.approx(RMS_OUT, rel=1e-12)
    boolean = [r[:] for r in PARTS]
    boolean[1][4] = True
    out = FUNCTIONS["CKT_RMS"].call(boolean, SOURCES, "out")
    assert out == "ERROR: parts row 2, column value: True — expected a number, not TRUE/FALSE"


def test_keys_tell_types_and_shapes_apart():
    key = cache_module.content_key
    assert key(([[1.0]],)) != key(([[True]],))
    assert key(([[1.0]],)) != key(([[1]],))
    assert key(([["ab"]],)) != key((["ab"],))  # a 2-D range vs a flat row of text
    assert key(([[None, 2.0]],)) == key(([[None, 2.0]],))
    assert key(([[1.0, 2.0]],)) != key(([[1.0], [2.0]],))


def test_a_repeated_call_is_a_hit_and_its_table_cannot_be_altered():
    fd = FUNCTIONS["CKT_SOLVE"]
    first = fd.call(PARTS, SOURCES, "out")
    second = fd.call([r[:] for r in PARTS], [r[:] for r in SOURCES], "out")
    assert cache_info()["results"].hits == 1 and second == first
    for change in (
        lambda t: t.append([1.0]),
        lambda t: t[1].__setitem__(1, 0.0),
        lambda t: t.sort(),
        lambda t: t[0].clear(),
    ):
        with pytest.raises(TypeError, match="read-only"):
            change(second)
    copy = list(map(list, second))
    copy[1][1] = 0.0  # a copy is the caller's own
    assert fd.call(PARTS, SOURCES, "out") == first
    assert type(pickle.loads(pickle.dumps(first))) is list  # plain lists across processes
    assert pickle.loads(pickle.dumps(first)) == first


def test_internal_errors_are_not_kept(monkeypatch):
    from xlfuncs import views

    real = views.solve_table
    monkeypatch.setattr(views, "solve_table", lambda *a: 1 / 0)
    out = FUNCTIONS["CKT_SOLVE"].call(PARTS, SOURCES, "out")
    assert out == "ERROR: internal error ZeroDivisionError: division by zero"
    monkeypatch.setattr(views, "solve_table", real)
    assert FUNCTIONS["CKT_SOLVE"].call(PARTS, SOURCES, "out")[0][0] == "freq_hz"


def test_non_finite_results_never_leave(monkeypatch):
    from xlfuncs import views

    table = [["freq_hz", "peak"], [50.0, math.inf]]
    monkeypatch.setattr(views, "solve_table", lambda *a: table)
    out = FUNCTIONS["CKT_SOLVE"].call(PARTS, SOURCES, "out")
    assert out == (
        "ERROR: result row 2, column peak: inf — not a finite number: check the inputs' magnitudes"
    )


def test_cells_that_cannot_be_hashed_are_computed_without_the_cache():
    parts = [r[:] for r in PARTS]
    parts[1].append({"note": 1})  # an extra, ignored column holding something odd
    parts[0].append("notes")
    assert FUNCTIONS["CKT_RMS"].call(parts, SOURCES, "out") == pytest.approx(RMS_OUT, rel=1e-12)
    assert cache_info()["results"].currsize == 0


def test_the_caches_are_bounded():
    store = cache_module.RESULTS
    for k in range(store.max_entries + 50):
        FUNCTIONS["CKT_V519_LIMITS"].call(0.1 + k * 1e-3)
    assert cache_info()["results"].currsize == store.max_entries
    big = cache_module._Store(max_entries=8, max_cells=100)
    for k in range(20):
        big.put(k, "x", 12)
    assert len(big._data) == 8 and big._cells <= 100
    big.put("huge", "x", 60)  # over a quarter of the budget: not kept
    assert big.get("huge") == (False, None)
