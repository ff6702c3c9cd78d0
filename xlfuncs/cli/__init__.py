"""Command line: ``xlfuncs <command>``. Uses only the public API.

Each command lives in a module of this package that adds its parser with ``register``
and sets ``run`` (a function of the parsed arguments returning the exit status). Errors
print one line on stderr and exit with status 2; no traceback reaches a user.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from .. import __version__
from ..errors import XlfuncsError
from .common import XlfuncsFileError, format_table, read_csv_table

__all__ = ["XlfuncsFileError", "format_table", "main", "read_csv_table"]

# modules of this package that add commands, in the order `--help` lists them
COMMAND_MODULES = ("network", "frequency", "workbooks", "duty", "power")


def _parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(
        prog="xlfuncs", description="Multi-frequency circuit analysis by phasor superposition."
    )
    ap.add_argument("--version", action="version", version=f"xlfuncs {__version__}")
    sub = ap.add_subparsers(dest="command", required=True)
    for name in COMMAND_MODULES:
        importlib.import_module(f"{__name__}.{name}").register(sub)
    return ap


def main(argv: Sequence[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        return int(args.run(args) or 0)
    except XlfuncsError as exc:
        print(f"xlfuncs: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("xlfuncs: interrupted; everything already written is kept", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
