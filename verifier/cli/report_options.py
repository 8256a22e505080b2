"""The report options of ``check``: detail (-q/-v), colour, several outputs, and claims being required.

Kept apart from the option parsing of the limits so that the two can evolve separately.
"""
from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import IO, Any

from verifier.report import FORMATS as FORMAT_CHOICES
from verifier.report import Format


@dataclass(frozen=True)
class OutputTarget:
    """One report to write: ``fmt`` to ``path`` (``--output FORMAT=FILE``, or ``--output FILE`` with --format)."""

    fmt: Format
    path: str


def _output(text: str) -> tuple[Format | None, str]:
    name, sep, path = text.partition("=")
    if sep and name in FORMAT_CHOICES:
        if not path:
            raise argparse.ArgumentTypeError(f"--output {text}: a file name is missing after `=`")
        return name, path  # type: ignore[return-value]  # checked against FORMAT_CHOICES
    if sep and name and "/" not in name and "." not in name:
        raise argparse.ArgumentTypeError(
            f"--output {text}: unknown format `{name}`; use FORMAT=FILE with FORMAT one of {', '.join(FORMAT_CHOICES)}")
    return None, text


def add_report_options(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--format", choices=FORMAT_CHOICES, default=None,
                        help="report format on stdout (default: text)")
    parser.add_argument("--output", action="append", type=_output, default=[], metavar="FORMAT=FILE",
                        help="also write the report in FORMAT to FILE (repeatable: sarif=a.sarif, junit=b.xml, ...); "
                             "a bare FILE takes --format and leaves the text report on stdout")
    detail = parser.add_mutually_exclusive_group()
    detail.add_argument("-q", "--quiet", action="store_true",
                        help="text report: only what fails, the rest counted in the summary")
    detail.add_argument("-v", "--verbose", action="store_true",
                        help="text report: every claim in full (method, assumptions, obligations, notes)")
    parser.add_argument("--color", choices=("auto", "always", "never"), default="auto",
                        help="colour the verdict words (auto: on a terminal; NO_COLOR and FORCE_COLOR are honoured)")
    parser.add_argument("--require-claims", action="store_true",
                        help="fail (exit status 1) when no claim is found")


def detail_of(args: argparse.Namespace) -> str:
    return "quiet" if args.quiet else "verbose" if args.verbose else "normal"


def use_color(choice: str, stream: IO[str] | Any = None, environ: Mapping[str, str] | None = None) -> bool:
    """Whether to colour: ``always``/``never`` win; ``auto`` honours NO_COLOR, then FORCE_COLOR, then a terminal."""
    if choice == "always":
        return True
    if choice == "never":
        return False
    env = os.environ if environ is None else environ
    if env.get("NO_COLOR", ""):  # no-color.org: any non-empty value
        return False
    if env.get("FORCE_COLOR", "") not in ("", "0", "false"):
        return True
    stream = sys.stdout if stream is None else stream
    isatty = getattr(stream, "isatty", None)
    return bool(isatty and isatty()) and env.get("TERM", "") != "dumb"


def terminal_width(stream: IO[str] | Any) -> int | None:
    """The columns of the terminal ``stream`` writes to (None when it is a file or a pipe, or with -v)."""
    isatty = getattr(stream, "isatty", None)
    if not (isatty and isatty()):
        return None
    import shutil

    return shutil.get_terminal_size().columns


def plan_outputs(args: argparse.Namespace) -> tuple[Format, list[OutputTarget]]:
    """The stdout format and the files to write.

    A bare ``--output FILE`` keeps the old meaning: FILE gets ``--format`` and stdout the text report.
    """
    stdout_format: Format = args.format or "text"
    targets: list[OutputTarget] = []
    for fmt, path in args.output:
        if fmt is None:
            targets.append(OutputTarget(args.format or "text", path))
            stdout_format = "text"
        else:
            targets.append(OutputTarget(fmt, path))
    return stdout_format, targets


def repository_root(start: str) -> str | None:
    """The nearest folder at or above ``start`` holding ``.git`` (a folder, or a file in a worktree)."""
    current = os.path.abspath(start)
    while True:
        if os.path.exists(os.path.join(current, ".git")):
            return current
        parent = os.path.dirname(current)
        if parent == current:
            return None
        current = parent


def no_claims_message(paths: Sequence[str], required: bool) -> str:
    where = ", ".join(paths) or "."
    tail = "; --require-claims makes this fail" if not required else ""
    return (f"idealcheck: no claims found in {where} (a claim is a comment starting with `idealcheck:`, "
            f"see the README){tail}")


__all__ = ["FORMAT_CHOICES", "OutputTarget", "add_report_options", "detail_of", "no_claims_message",
           "plan_outputs", "repository_root", "terminal_width", "use_color"]
