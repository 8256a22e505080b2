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
from verifier.model.paths import relative_path
from verifier.pipeline.baseline import DEFAULT_BASELINE, Baseline, BaselineError, StaleEntry, load_baseline
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


def baseline_path(args: argparse.Namespace, config: Config, cwd: Path) -> tuple[Path | None, bool]:
    """(the baseline file, whether it was asked for explicitly); None with ``--no-baseline``."""
    if getattr(args, "no_baseline", False):
        return None, False
    if args.baseline:
        return cwd / args.baseline, True
    if config.baseline is not None:
        return config.root / config.baseline, True
    return config.root / DEFAULT_BASELINE, False


def load_for_check(args: argparse.Namespace, config: Config, cwd: Path) -> Baseline | None:
    """The baseline ``check`` applies (None when there is none); ``UsageError`` when it is unusable."""
    path, explicit = baseline_path(args, config, cwd)
    if path is None:
        return None
    if not path.exists() and not path.is_symlink():
        if explicit:
            raise UsageError(f"baseline: no such file: {relative_path(path, cwd)} (write it with `idealcheck baseline`)")
        return None
    try:
        return load_baseline(path, relative_path(path, cwd))
    except BaselineError as exc:
        raise UsageError(f"baseline error: {exc}") from exc


def warn_stale(stale: list[StaleEntry]) -> None:
    for item in stale:
        print(f"warning: {shown(item.message())}", file=sys.stderr)
