"""Command line: ``xlfuncs <command>``. Uses only the public API.

Each command lives in a module of this package that adds its parser with ``register``
and sets ``run`` (a function of the parsed arguments returning the exit status). Errors —
a bad argument included — print one line on stderr and exit with status 2; Ctrl-C prints
one line and exits with 130; no traceback reaches a user.
"""

from __future__ import annotations

import argparse
import contextlib
import importlib
import os
import sys
from collections.abc import Sequence
from typing import NoReturn

from .. import __version__
from ..errors import XlfuncsError
from .common import XlfuncsFileError, eng, format_table, read_csv_table

__all__ = ["XlfuncsFileError", "eng", "format_table", "main", "read_csv_table"]

# modules of this package that add commands, in the order `--help` lists them
COMMAND_MODULES = ("network", "frequency", "workbooks", "duty", "power")


class _Parser(argparse.ArgumentParser):
    """Usage errors in one line, naming the argument and where to look."""

    def error(self, message: str) -> NoReturn:
        print(f"xlfuncs: error: {message} (see `{self.prog} --help`)", file=sys.stderr)
        raise SystemExit(2)


def _parser() -> argparse.ArgumentParser:
    ap = _Parser(
        prog="xlfuncs", description="Multi-frequency circuit analysis by phasor superposition."
    )
    ap.add_argument("--version", action="version", version=f"xlfuncs {__version__}")
    sub = ap.add_subparsers(dest="command", required=True, parser_class=_Parser)
    for name in COMMAND_MODULES:
        importlib.import_module(f"{__name__}.{name}").register(sub)
    return ap


def _safe_streams() -> None:
    """Characters the console cannot show (Ω on a legacy code page) are escaped rather
    than ending the run."""
    for stream in (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            with contextlib.suppress(OSError, ValueError):
                reconfigure(errors="backslashreplace")


def main(argv: Sequence[str] | None = None) -> int:
    _safe_streams()
    args = _parser().parse_args(argv)
    try:
        return int(args.run(args) or 0)
    except XlfuncsError as exc:
        print(f"xlfuncs: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        report = getattr(exc, "report", None)
        if report is not None:
            print(
                f"xlfuncs: interrupted: {report.done} cases run this time, "
                f"{report.done + report.skipped} of {report.total} recorded in "
                f"{report.summary_csv}; run the same command again to resume",
                file=sys.stderr,
            )
        else:
            print("xlfuncs: interrupted; no file was left half-written", file=sys.stderr)
        return 130
    except MemoryError:
        print("xlfuncs: error: out of memory (a smaller input?)", file=sys.stderr)
        return 2
    except BrokenPipeError:
        # the reader of our output went away (`xlfuncs … | head`): as other command-line
        # tools do, stop quietly; stdout goes to devnull so the interpreter's own flush at
        # exit cannot fail again
        with contextlib.suppress(OSError):
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        return 141  # 128 + SIGPIPE, as a shell reports a process ended by it
    except OSError as exc:
        where = f" {exc.filename!r}" if getattr(exc, "filename", None) else ""
        print(f"xlfuncs: error: cannot use{where}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    except Exception as exc:  # a bug of ours: still one line (XLFUNCS_TRACEBACK=1 shows it)
        if os.environ.get("XLFUNCS_TRACEBACK"):
            raise
        text = " ".join(str(exc).split())[:300]
        print(
            f"xlfuncs: internal error {type(exc).__name__}: {text} (a bug: please report it "
            "with the command that caused it; XLFUNCS_TRACEBACK=1 shows where)",
            file=sys.stderr,
        )
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
