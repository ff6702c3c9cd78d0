"""xlfuncs — multi-frequency circuit analysis (phasor superposition) for workbooks.

The public API lives here; modules are private unless listed in ``__all__``. Names are
loaded on first use (PEP 562), so that importing a part of the package (the worksheet
functions, the command line) does not pay for the rest; ``__version__`` is read from the
installed package's metadata only when asked for.
"""

import importlib as _importlib
import typing as _typing

if _typing.TYPE_CHECKING:
    from .api import impedance_scan, solve, system_of, transfer_impedance
    from .circuit import Circuit, Source
    from .errors import (
        InputError,
        NetworkError,
        SingularNetworkError,
        TableError,
        UnitError,
        WorkbookError,
        XlfuncsError,
    )
    from .solution import PeakResult, Solution, Spectrum, common_period, true_peak
    from .tables import Options, PartRow, SourceRow, read_options, read_parts, read_sources
    from .units import parse_number

    __version__: str

# public name -> the module that defines it
_WHERE = {
    "Circuit": "circuit",
    "InputError": "errors",
    "NetworkError": "errors",
    "Options": "tables",
    "PartRow": "tables",
    "PeakResult": "solution",
    "SingularNetworkError": "errors",
    "Solution": "solution",
    "Source": "circuit",
    "SourceRow": "tables",
    "Spectrum": "solution",
    "TableError": "errors",
    "UnitError": "errors",
    "WorkbookError": "errors",
    "XlfuncsError": "errors",
    "common_period": "solution",
    "impedance_scan": "api",
    "parse_number": "units",
    "read_options": "tables",
    "read_parts": "tables",
    "read_sources": "tables",
    "solve": "api",
    "system_of": "api",
    "transfer_impedance": "api",
    "true_peak": "solution",
}

__all__ = [
    "Circuit",
    "InputError",
    "NetworkError",
    "Options",
    "PartRow",
    "PeakResult",
    "SingularNetworkError",
    "Solution",
    "Source",
    "SourceRow",
    "Spectrum",
    "TableError",
    "UnitError",
    "WorkbookError",
    "XlfuncsError",
    "__version__",
    "common_period",
    "impedance_scan",
    "parse_number",
    "read_options",
    "read_parts",
    "read_sources",
    "solve",
    "system_of",
    "transfer_impedance",
    "true_peak",
]


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("xlfuncs")
    except PackageNotFoundError:  # pragma: no cover - running from a source tree
        return "0+unknown"


def __getattr__(name: str) -> _typing.Any:
    if name == "__version__":
        value: _typing.Any = _version()
    elif name in _WHERE:
        value = getattr(_importlib.import_module(f".{_WHERE[name]}", __name__), name)
    else:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    globals()[name] = value  # loaded once
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})
