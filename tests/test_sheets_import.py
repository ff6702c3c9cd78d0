"""What importing the worksheet functions costs: nothing that only some functions need.

Import times themselves are figures for the benchmark (benchmarks/bench_latency.py);
here, only which modules load.
"""

from __future__ import annotations

import subprocess
import sys

import xlfuncs


def _loaded_after(statement: str) -> set[str]:
    code = f"import sys; {statement}; print('\\n'.join(sorted(sys.modules)))"
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    ).stdout
    return set(out.split())


def _package(loaded, name):
    return {m for m in loaded if m == name or m.startswith(name + ".")}


def test_importing_the_worksheet_functions_leaves_scipy_and_metadata_alone():
    loaded = _loaded_after("import xlfuncs.worksheet")
    assert "xlfuncs.worksheet" in loaded
    assert not _package(loaded, "scipy")
    assert "importlib.metadata" not in loaded


# the calculation modules load on a function's first call, not when Excel imports the
# functions (the three-phase study alone pulls in every study module)
LAZY = (
    "xlfuncs.power",
    "xlfuncs.studies",
    "xlfuncs.api",
    "xlfuncs.solver",
    "xlfuncs.solution",
    "xlfuncs.views",
)


def test_importing_the_worksheet_functions_loads_no_calculation_module():
    loaded = _loaded_after("import xlfuncs.worksheet")
    assert "xlfuncs.functions.power" in loaded and "xlfuncs.functions.frequency" in loaded
    for name in LAZY:
        assert not _package(loaded, name), name


def test_the_calculation_modules_load_on_first_use():
    call = (
        "import xlfuncs.worksheet; from xlfuncs.functions import FUNCTIONS; "
        "out = FUNCTIONS['CKT_EXPAND'].call([['name', 'kind', 'bus', 'kv', 'mva_sc', 'x_r'], "
        "['U1', 'supply', 'B1', 13.8, 125.0, 10.0]], '+', [['fundamental_hz', 60.0]]); "
        "assert out[1][0] == 'U1.L', out"
    )
    loaded = _loaded_after(call)
    assert _package(loaded, "xlfuncs.power") and _package(loaded, "xlfuncs.studies")


def test_the_version_is_read_when_asked_for():
    from importlib.metadata import version

    assert xlfuncs.__version__ == version("xlfuncs")


def test_every_public_name_loads_on_first_use():
    loaded = _loaded_after("import xlfuncs")
    assert "xlfuncs.solver" not in loaded  # nothing but the package itself yet
    for name in xlfuncs.__all__:
        assert getattr(xlfuncs, name) is not None, name
