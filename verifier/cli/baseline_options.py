"""The baseline options ``check`` and ``baseline`` share: which file, and loading it for a check.

Which file: ``--baseline FILE``, else ``baseline`` in ``[tool.idealcheck]`` (relative to the
pyproject.toml), else ``.idealcheck-baseline.json`` beside the pyproject.toml (or in the working folder
without one).  ``check`` uses the default file only when it exists; a file it is told to use must exist.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from verifier.cli.options import UsageError
from verifier.pipeline.baseline import (DEFAULT_BASELINE, Baseline, BaselineError, StaleEntry, baseline_for_check,
                                        baseline_location)
from verifier.pipeline.config import Config
from verifier.report.escape import shown


def add_baseline_options(parser: argparse.ArgumentParser, *, writing: bool = False) -> None:
    help_text = ("the file to write (default: config `baseline`, else " + DEFAULT_BASELINE + " beside the "
                 "pyproject.toml)") if writing else (
        "accept the known results recorded in FILE (config: baseline; default: " + DEFAULT_BASELINE
        + " beside the pyproject.toml, when it exists)")
    parser.add_argument("--baseline", metavar="FILE", help=help_text)
    if not writing:
        parser.add_argument("--no-baseline", action="store_true", help="use no baseline file")


def baseline_path(args: argparse.Namespace, config: Config, cwd: Path) -> Path:
    """The baseline file ``idealcheck baseline`` writes."""
    return baseline_location(config, cwd, Path(args.baseline) if args.baseline else None)[0]


def load_for_check(args: argparse.Namespace, config: Config, cwd: Path) -> Baseline | None:
    """The baseline ``check`` applies (None when there is none); ``UsageError`` when it is unusable."""
    if args.no_baseline:
        return None
    try:
        return baseline_for_check(config, cwd, Path(args.baseline) if args.baseline else None)
    except BaselineError as exc:
        raise UsageError(f"baseline error: {exc}") from exc


def warn_stale(stale: list[StaleEntry]) -> None:
    for item in stale:
        print(f"warning: {shown(item.message())}", file=sys.stderr)
