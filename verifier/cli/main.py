"""The command line: the parser of every subcommand and the exit status (the work is below, in the
features and the pipeline).

Each subcommand is one module (``check``, ``audit``, ``explain``) with ``register(subparsers)``, which
adds its parser and sets ``handler=<function(args) -> int>``; the options they share and where reports
go are in ``options``.  Nothing here imports sympy or libcst, so ``idealcheck --help`` stays fast.

Exit status: 0 every claim proved (inconclusive allowed when configured to warn), 1 some claim refuted,
inconclusive or in error, 2 usage or configuration error, 130 interrupted.
"""
from __future__ import annotations

import argparse
import sys
from collections.abc import Callable, Sequence

from verifier import __version__
from verifier.cli import audit, baseline, check, explain
from verifier.cli.options import EXIT_INTERRUPTED, EXIT_USAGE, UsageError

SUBCOMMANDS = (check, baseline, audit, explain)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="idealcheck",
        description="Decide the algebraic identities annotated in source files, exactly.",
    )
    parser.add_argument("--version", action="version", version=f"idealcheck {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    for subcommand in SUBCOMMANDS:
        subcommand.register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    handler: Callable[[argparse.Namespace], int] | None = getattr(args, "handler", None)  # absent: no subcommand
    if handler is None:
        parser.print_help(sys.stderr)
        return EXIT_USAGE
    try:
        return int(handler(args))
    except UsageError as exc:
        print(f"idealcheck: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("idealcheck: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
