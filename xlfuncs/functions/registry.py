"""The registry behind every ``CKT_`` worksheet function.

A domain module (``core``, ``studies``, …) declares each function once with
:func:`sheet_function`: its dialog texts, its arguments' descriptions (from :data:`ARGS`)
and whether Excel may run it while the user types in the function dialog. The registry
keeps the guarded callable (every failure becomes one line of text for the cell) and its
documentation; nothing here imports Excel or xlwings. ``xlfuncs.worksheet`` decorates the
registered callables for xlwings, the headless engine registers them with the formula
engine, and ``xlfuncs.docgen`` writes the function reference from the same records.
"""

from __future__ import annotations

import functools
import inspect
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, TypeVar

from ..errors import XlfuncsError

__all__ = [
    "ARGS",
    "CATEGORY",
    "ERROR_PREFIX",
    "FUNCTIONS",
    "FunctionDoc",
    "one_line",
    "register_args",
    "sheet_function",
]

CATEGORY = "xlfuncs"
ERROR_PREFIX = "ERROR: "

F = TypeVar("F", bound=Callable[..., Any])

# argument name -> (dialog text, ≤ 255 characters; xlwings conversion options)
ARGS: dict[str, tuple[str, dict[str, Any]]] = {}


def register_args(entries: dict[str, tuple[str, dict[str, Any]]]) -> None:
    """Add argument descriptions; a name already described must keep its description
    (one argument name means one thing across every function)."""
    for name, entry in entries.items():
        old = ARGS.get(name)
        if old is not None and old != entry:
            raise ValueError(f"argument {name!r} is already described differently")
        ARGS[name] = entry


@dataclass(frozen=True)
class FunctionDoc:
    """One worksheet function: what the reference and Excel's dialog say, and the
    guarded callable that every front end (xlwings, headless engine) calls.

    Attributes
    ----------
    args : tuple of (name, description, optional)
    ranges : tuple of bool
        Which arguments are read as 2-D ranges.
    call_in_wizard : bool
        False for expensive functions: Excel's function dialog then does not run them
        on every keystroke.
    """

    name: str
    summary: str
    returns: str
    args: tuple[tuple[str, str, bool], ...]
    call: Callable[..., Any] = field(repr=False, compare=False)
    ranges: tuple[bool, ...] = ()
    call_in_wizard: bool = True

    @property
    def required(self) -> int:
        return sum(not opt for _n, _d, opt in self.args)


FUNCTIONS: dict[str, FunctionDoc] = {}


def one_line(text: str) -> str:
    return " ".join(text.split())[:250]


def _guard(f: F) -> F:
    """Turn every failure into one line of text for the cell (never a traceback)."""

    @functools.wraps(f)
    def wrapper(*args: Any) -> Any:
        try:
            return f(*args)
        except XlfuncsError as exc:
            return ERROR_PREFIX + one_line(str(exc))
        except Exception as exc:  # a bug of ours: still one line, with its type
            return ERROR_PREFIX + one_line(f"internal error {type(exc).__name__}: {exc}")

    return wrapper  # type: ignore[return-value]


def sheet_function(summary: str, returns: str, *, call_in_wizard: bool = True) -> Callable[[F], F]:
    """Register ``f`` as the worksheet function of its own name.

    No type annotations on worksheet functions: xlwings would read them as converters.
    Every argument name must be described in :data:`ARGS` (see :func:`register_args`).
    """

    def deco(f: F) -> F:
        sig = inspect.signature(f)
        args = []
        ranges = []
        for name, prm in sig.parameters.items():
            if name not in ARGS:
                raise ValueError(f"{f.__name__}: argument {name!r} has no description")
            doc, opts = ARGS[name]
            args.append((name, doc, prm.default is not inspect.Parameter.empty))
            ranges.append(opts.get("ndim") == 2)
        if f.__name__ in FUNCTIONS:
            raise ValueError(f"{f.__name__} is registered twice")
        f.__doc__ = summary
        guarded = _guard(f)
        FUNCTIONS[f.__name__] = FunctionDoc(
            f.__name__, summary, returns, tuple(args), guarded, tuple(ranges), call_in_wizard
        )
        return guarded

    return deco
