"""xlfuncs — multi-frequency circuit analysis (phasor superposition) for workbooks.

The public API lives here; modules are private unless listed in ``__all__``.
"""

from importlib.metadata import PackageNotFoundError as _PackageNotFoundError
from importlib.metadata import version as _version

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

try:
    __version__ = _version("xlfuncs")
except _PackageNotFoundError:  # pragma: no cover - running from a source tree
    __version__ = "0+unknown"

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
