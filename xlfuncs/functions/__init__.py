"""Every ``CKT_`` worksheet function, grouped by domain, free of any Excel dependency.

Importing this package imports each domain module, which registers its functions in
:data:`FUNCTIONS` (see :mod:`.registry`). Front ends take them from there:
``xlfuncs.worksheet`` (xlwings), the headless engine (``xlfuncs.workbook``) and the
function reference (``xlfuncs.docgen``).
"""

from . import core, duty, frequency, power, studies  # noqa: F401  (each module registers its functions)
from .cache import cache_clear, cache_info
from .registry import ARGS, CATEGORY, ERROR_PREFIX, FUNCTIONS, FunctionDoc

__all__ = [
    "ARGS",
    "CATEGORY",
    "ERROR_PREFIX",
    "FUNCTIONS",
    "FunctionDoc",
    "cache_clear",
    "cache_info",
]
