"""The command line: the parser of every subcommand and the exit status (the work is below, in the
features and the pipeline).

Each subcommand is one module (``check``, ``baseline``, ``audit``, ``explain``) with
``register(subparsers, summary)``, which adds its parser and sets ``handler=<function(args) -> int>``; the
options they share and where reports go are in ``options``.  Only the module of the subcommand named on
the command line is imported (the others appear in ``--help`` by their one-line summary), so a run of
``check`` loads nothing of the audit or the explanations; nothing here imports sympy or libcst, so
``idealcheck --help`` stays fast.

Exit status: 0 every claim proved (inconclusive allowed when configured to warn), 1 some claim refuted,
inconclusive or in error, 2 usage or configuration error, 130 interrupted.
"""
from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Callable, Sequence

from verifier import __version__
from verifier.cli.options import EXIT_INTERRUPTED, EXIT_USAGE, UsageError

# name -> (module with ``register``, the one-line summary ``idealcheck --help`` lists)
SUBCOMMANDS: dict[str, tuple[str, str]] = {
    "check": ("verifier.cli.check", "decide every claim under the given paths"),
    "baseline": ("verifier.cli.baseline", "record the current inconclusive and error results as accepted"),
    "audit": ("verifier.cli.audit",
              "check that every function of one module version equals the same-named function of another"),
    "explain": ("verifier.cli.explain", "show the algebra behind the verdict of one claim"),
}


def named_subcommand(argv: Sequence[str]) -> str | None:
    """The subcommand ``argv`` names: its first word that is not an option (the top-level options take
    no value), or None."""
    return next((word for word in argv if not word.startswith("-")), None)


def build_parser(argv: Sequence[str] | None = None) -> argparse.ArgumentParser:
    """The parser for ``argv``: the full parser of the subcommand it names (every one without ``argv``),
    a summary-only entry for the others."""
    parser = argparse.ArgumentParser(
        prog="idealcheck",
        description="Decide the algebraic identities annotated in source files, exactly.",
    )
    parser.add_argument("--version", action="version", version=f"idealcheck {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    chosen = None if argv is None else named_subcommand(argv)
    for name, (module, summary) in SUBCOMMANDS.items():
        if argv is None or name == chosen:
            importlib.import_module(module).register(subparsers, summary)
        else:
            subparsers.add_parser(name, help=summary)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    words = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser(words)
    args = parser.parse_args(words)
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
