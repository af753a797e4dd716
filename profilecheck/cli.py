"""Command line: ``profilecheck SUBCOMMAND ...`` (also ``python -m profilecheck``).

A thin shell: parse, call the library, write deterministic JSON. Each subcommand lives in
its own module under ``profilecheck/commands/`` exposing ``register(subparsers)``, which
adds its parser and sets ``func`` to a callable ``func(args) -> int``.

Exit status (``../shared/design.md``): 0 measured (and within limits if a spec was given);
1 measured but outside or undecided against the limits; 2 could not measure (bad input:
one line on stderr, no traceback, no output file written or changed).
"""

from __future__ import annotations

import argparse
import importlib
import sys
from typing import Sequence

from .errors import ProfilecheckError

__all__ = ["main", "build_parser", "COMMANDS"]

#: Subcommand modules, in the order ``--help`` lists them.
COMMANDS = ("spec", "calibrate", "thread", "tool", "height", "check", "log", "demo", "view")


class _Parser(argparse.ArgumentParser):
    """argparse with usage errors as one line and exit status 2."""

    def error(self, message: str) -> None:  # pragma: no cover - exercised via CLI tests
        self.exit(2, f"profilecheck: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    from . import __version__

    parser = _Parser(prog="profilecheck",
                     description="Calibrated camera measurement of screw threads, threading "
                                 "tools and centre height.")
    parser.add_argument("--version", action="version", version=f"profilecheck {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for name in COMMANDS:
        try:
            mod = importlib.import_module(f"profilecheck.commands.{name}")
        except ModuleNotFoundError as e:  # a command whose module is not present
            if e.name == f"profilecheck.commands.{name}":
                continue
            raise
        mod.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.func(args))
    except ProfilecheckError as e:
        msg = " ".join(str(e).split())
        print(f"profilecheck {args.command}: {msg}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("profilecheck: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
