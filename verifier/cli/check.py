"""``idealcheck check [PATH ...]``: argument parsing and exit status of a check (the work is in ``runner``)."""
from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from verifier import __version__
from verifier.cli.options import (
    EXIT_FINDINGS,
    EXIT_OK,
    UsageError,
    accuracy_section,
    accuracy_settings,
    add_accuracy_options,
    add_config_option,
    add_run_mode_options,
    add_worker_options,
    emit_report,
    load_config_or_exit,
    on_inconclusive,
    run_options,
)
from verifier.claims.near_miss import near_misses
from verifier.cli.baseline_options import add_baseline_options, load_for_check, warn_stale
from verifier.cli.report_options import (
    OutputTarget,
    add_report_options,
    detail_of,
    no_claims_message,
    plan_outputs,
    repository_root,
    terminal_width,
    use_color,
)
from verifier.pipeline.config import Config
from verifier.pipeline.baseline import StaleEntry
from verifier.pipeline.discover import DiscoveryError
from verifier.pipeline.runner import CheckRequest, check_run, parse_shard
from verifier.report import Format, fails_run, render
from verifier.report.escape import shown
from verifier.report.sarif import render_sarif_failure

if TYPE_CHECKING:
    from verifier.cli.options import Subparsers
    from verifier.pipeline.extraction_cache import CacheNote


def _shard(text: str) -> tuple[int, int]:
    try:
        return parse_shard(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def register(subparsers: Subparsers, summary: str) -> None:
    parser = subparsers.add_parser(
        "check",
        help=summary,
        description="Find the idealcheck claims under PATH (default: .) and decide each one exactly.",
    )
    parser.add_argument("paths", nargs="*", metavar="PATH", help="files or folders (default: .); "
                        "a file selects the claims that depend on it, wherever they are in the project")
    add_worker_options(parser, unit="claim")
    parser.add_argument("--shard", type=_shard, metavar="K/N", help="decide only the K-th of N deterministic shares of the claims")
    parser.add_argument("--staged", action="store_true", help="read the git index and check only claims touched by staged files")
    parser.add_argument("--since", metavar="REF", help="check only claims touched by files changed since git revision REF")
    parser.add_argument("--no-cache", action="store_true", help="neither read nor write the result cache")
    parser.add_argument("--cache-dir", metavar="DIR", help="result cache folder (config: cache_dir; default .idealcheck_cache)")
    add_run_mode_options(parser, unit="claim")
    add_config_option(parser)
    add_baseline_options(parser)
    add_accuracy_options(parser)
    add_report_options(parser)  # --format, --output FORMAT=FILE, -q/-v, --color, --require-claims
    parser.set_defaults(handler=run_check)


def cache_dir(args: argparse.Namespace, config: Config, cwd: Path) -> str | None:
    """The cache folder relative to ``cwd`` (None with ``--no-cache``); a configured one is relative to
    the folder of the pyproject.toml."""
    if args.no_cache:
        return None
    if args.cache_dir:
        return str(Path(args.cache_dir))
    configured_path = Path(config.cache_dir)
    if not configured_path.is_absolute():
        configured_path = config.root / configured_path
    # not resolved: a cache path that is a symbolic link must be seen as one (and refused)
    return os.path.relpath(os.path.abspath(configured_path), os.path.abspath(cwd))


def config_start(paths: Sequence[str] | None, cwd: Path) -> Path:
    """Where the search for the nearest pyproject.toml starts: the first path checked (so that
    `idealcheck check some/project` uses that project's settings), else the working directory."""
    if paths:
        first = (cwd / paths[0])
        if first.exists():
            return first if first.is_dir() else first.parent
    return cwd


def run_check(args: argparse.Namespace) -> int:
    stdout_format, targets = plan_outputs(args)
    try:
        return _run_check(args, stdout_format, targets)
    except UsageError as exc:
        # CI uploads the SARIF file whatever happened: give it a valid one that says why the run stopped
        for target in targets:
            if target.fmt == "sarif":
                try:
                    Path(target.path).write_text(render_sarif_failure(f"idealcheck: {exc}", version=__version__),
                                                 encoding="utf-8")
                except OSError:
                    pass
        raise


def _run_check(args: argparse.Namespace, stdout_format: Format, targets: list[OutputTarget]) -> int:
    if args.staged and args.since:
        raise UsageError("--staged and --since cannot be combined")
    cwd = Path.cwd()
    if not args.staged:  # with --staged the index decides what exists
        missing = [p for p in args.paths if not (cwd / p).exists()]
        if missing:
            raise UsageError(f"PATH: no such file or folder: {', '.join(missing)}")
    config = load_config_or_exit(args, config_start(args.paths, cwd))
    failing = on_inconclusive(args, config)
    request = CheckRequest(
        config=config,
        cwd=str(cwd),
        paths=tuple(args.paths) or (".",),
        staged=args.staged,
        since=args.since,
        shard=args.shard,
        cache_dir=cache_dir(args, config, cwd),
        options=run_options(args, config),
        on_inconclusive=failing,
        baseline=load_for_check(args, config, cwd),
    )
    texts: dict[str, str] = {}
    stale: list[StaleEntry] = []
    notes: list[CacheNote] = []
    try:
        result = check_run(request, texts_out=texts, stale_out=stale, notes_out=notes)
    except DiscoveryError as exc:
        raise UsageError(str(exc)) from exc
    verdicts, skipped = list(result.verdicts), result.skipped
    warn_stale(stale)
    for note in notes:
        print(f"note: {shown(note.message())}", file=sys.stderr)
    if not args.quiet:
        _warn_near_misses(texts)
    root = repository_root(str(cwd)) or str(config.root)
    detail = detail_of(args)

    def report(report_format: Format, color: bool = False, width: int | None = None) -> str:
        return render(verdicts, report_format, version=__version__, on_inconclusive=failing, skipped=skipped,
                      detail=detail, color=color, cwd=str(cwd), repository_root=root, width=width)  # type: ignore[arg-type]

    emit_report(
        stdout_format,
        targets,
        report,
        extra=accuracy_section(verdicts, accuracy_settings(args, config), options=request.options),
        render_for_terminal=lambda: report("text", use_color(args.color, sys.stdout), terminal_width(sys.stdout)),
    )
    if not verdicts:
        if not args.quiet or args.require_claims:
            print(no_claims_message(args.paths, args.require_claims), file=sys.stderr)
        if args.require_claims:
            return EXIT_FINDINGS
    return EXIT_FINDINGS if any(fails_run(v, failing) for v in verdicts) else EXIT_OK


def _warn_near_misses(texts: dict[str, str]) -> None:
    """A warning on stderr for each comment that misspells the claim marker (it is silently no claim)."""
    for path in sorted(texts):
        for miss in near_misses(path, texts[path]):
            print(f"{path}:{miss.line}:{miss.column}: warning: {shown(miss.message())}", file=sys.stderr)
