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


def test_importing_the_worksheet_functions_leaves_scipy_and_metadata_alone():
    loaded = _loaded_after("import xlfuncs.worksheet")
    assert "xlfuncs.worksheet" in loaded
    assert not {m for m in loaded if m == "scipy" or m.startswith("scipy.")}
    assert "importlib.metadata" not in loaded


def test_the_version_is_read_when_asked_for():
    from importlib.metadata import version

    assert xlfuncs.__version__ == version("xlfuncs")


def test_every_public_name_loads_on_first_use():
    loaded = _loaded_after("import xlfuncs")
    assert "xlfuncs.solver" not in loaded  # nothing but the package itself yet
    for name in xlfuncs.__all__:
        assert getattr(xlfuncs, name) is not None, name
