"""Call worksheet functions through xlwings' own code paths (no Excel needed).

* :func:`xlwings_udfs` decorates ``xlfuncs.worksheet`` with ``xlwings.udfs`` (the Windows
  UDF server, its Windows-only imports stubbed) exactly as the add-in's "Import
  Functions" does; ``generate_vba_wrapper`` can then write the VBA Excel would receive;
* :func:`call` passes each argument through ``xlwings.conversion.read`` with the
  argument's declared options and the result through ``xlwings.conversion.write``, as
  ``xlwings.udfs.call_udf`` does; :data:`MISSING` is what Excel passes for an omitted
  optional argument.

Use it from any test module with a module-scoped fixture::

    from xlwings_harness import MISSING, call, one, xlwings_udfs

    @pytest.fixture(scope="module")
    def udf():
        with xlwings_udfs() as ns:
            yield ns

    def test_my_function(udf):
        assert one(udf, "CKT_RMS", parts, sources, "out") == ...
"""

from __future__ import annotations

import contextlib
import importlib
import sys
import types
from collections.abc import Iterator
from typing import Any

__all__ = ["COM_ERRORS", "MISSING", "call", "one", "windows_value_engine", "xlwings_udfs"]

# What Excel hands a UDF for an optional argument left out: the COM error
# DISP_E_PARAMNOTFOUND, which xlwings.udfs.call_udf tests for (value taken from there).
MISSING = -2147352572

# Excel error cells as COM delivers them: VT_ERROR codes 0x800A0000 + the CVErr number
# (CVErr numbers of the xlCVError enumeration, from memory; the first seven are the
# ones xlwings' own ``cell_errors`` table in xlwings/_xlwindows.py translates).
COM_ERRORS = {
    "#NULL!": -2146826288,
    "#DIV/0!": -2146826281,
    "#VALUE!": -2146826273,
    "#REF!": -2146826265,
    "#NAME?": -2146826259,
    "#NUM!": -2146826252,
    "#N/A": -2146826246,
    "#SPILL!": -2146826243,
    "#CALC!": -2146826238,
}


def windows_value_engine() -> Any:
    """xlwings' own Windows-engine value cleaning, lifted from ``xlwings/_xlwindows.py``.

    That module needs pywin32 and ctypes.windll to import, so the few pure-Python pieces
    the conversion pipeline calls (``cell_errors``, ``_clean_value_data_element`` and the
    ``Engine`` static methods) are taken from its source with ``ast`` and executed here.
    """
    import ast
    import datetime as dt
    from pathlib import Path

    import numpy as np
    import xlwings

    src = Path(xlwings.__file__).with_name("_xlwindows.py").read_text(encoding="utf-8")
    tree = ast.parse(src)
    keep: list[ast.stmt] = []
    for node in tree.body:
        if (
            isinstance(node, ast.Assign)
            and any(isinstance(t, ast.Name) and t.id == "cell_errors" for t in node.targets)
        ) or (isinstance(node, ast.FunctionDef) and node.name == "_clean_value_data_element"):
            keep.append(node)
        elif isinstance(node, ast.ClassDef) and node.name == "Engine":
            node.body = [
                b
                for b in node.body
                if isinstance(b, ast.FunctionDef)
                and b.name in ("prepare_xl_data_element", "clean_value_data", "name", "type")
            ]
            keep.append(node)
    ns: dict[str, Any] = {
        "np": np,
        "pd": None,
        "dt": dt,
        "time_types": (dt.date, dt.datetime),
        "_com_time_to_datetime": lambda v, b: v,
        "_datetime_to_com_time": lambda v: v,
    }
    exec(compile(ast.Module(body=keep, type_ignores=[]), "xlwings/_xlwindows.py", "exec"), ns)
    return xlwings.main.Engine(impl=ns["Engine"]())


@contextlib.contextmanager
def xlwings_udfs() -> Iterator[types.SimpleNamespace]:
    """``xlfuncs.worksheet`` as decorated by xlwings' Windows UDF machinery.

    Yields a namespace with ``module`` (the decorated module) and ``udfs``
    (``xlwings.udfs``); everything patched is restored on exit.
    """
    import xlwings

    added_engine = "excel" not in xlwings.engines.engines_by_name
    if added_engine:
        xlwings.engines.add(windows_value_engine())

    stubs = {
        "pythoncom": types.SimpleNamespace(CoInitialize=lambda: None),
        "pywintypes": types.SimpleNamespace(com_error=type("com_error", (Exception,), {})),
        "win32com": types.ModuleType("win32com"),
        "win32com.client": types.SimpleNamespace(Dispatch=lambda *a, **k: None),
    }
    saved_mods = {k: sys.modules.get(k) for k in stubs}
    saved_attrs = {k: getattr(xlwings, k) for k in ("func", "arg", "ret")}
    sys.modules.update(stubs)  # type: ignore[arg-type]
    try:
        udfs = importlib.import_module("xlwings.udfs")
        xlwings.func, xlwings.arg, xlwings.ret = udfs.xlfunc, udfs.xlarg, udfs.xlret
        import xlfuncs.worksheet as ws

        module = importlib.reload(ws)
        yield types.SimpleNamespace(module=module, udfs=udfs)
    finally:
        if added_engine:
            eng = xlwings.engines.engines_by_name.pop("excel")
            xlwings.engines.engines.remove(eng)
        for k, v in saved_attrs.items():
            setattr(xlwings, k, v)
        import xlfuncs.worksheet as ws

        importlib.reload(ws)
        for k, v in saved_mods.items():
            if v is None:
                sys.modules.pop(k, None)
            else:
                sys.modules[k] = v
        sys.modules.pop("xlwings.udfs", None)


def call(udf: types.SimpleNamespace, name: str, *excel_args: Any) -> Any:
    """Excel → Python → Excel for one call, as ``xlwings.udfs.call_udf`` does it: an
    omitted optional argument (:data:`MISSING`, or fewer arguments than declared) becomes
    the argument's default, every other value goes through ``conversion.read`` with the
    argument's options, the result through ``conversion.write``."""
    from xlwings import conversion

    func = getattr(udf.module, name)
    info = func.__xlfunc__
    args_info = info["args"]
    args = []
    for i, value in enumerate(excel_args):
        arg_info = args_info[min(i, len(args_info) - 1)]
        if isinstance(value, int) and value == MISSING:
            args.append(arg_info.get("optional", None))
        else:
            args.append(conversion.read(None, value, arg_info["options"]))
    args += [a.get("optional") for a in args_info[len(excel_args) :]]
    return conversion.write(func(*args), None, info["ret"]["options"])


def one(udf: types.SimpleNamespace, name: str, *excel_args: Any) -> Any:
    """A function that returns one value: Excel receives it as a 1×1 array."""
    out = call(udf, name, *excel_args)
    assert isinstance(out, list) and len(out) == 1 and len(out[0]) == 1, out
    return out[0][0]
