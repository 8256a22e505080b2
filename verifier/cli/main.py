"""The command line: argument parsing and exit codes only (the work is in ``runner``).

Subcommands live in a small registry: a module listed in ``SUBCOMMAND_MODULES`` exposes
``register(subparsers) -> None``, which adds its parser and sets ``handler=<function(args) -> int>``
with ``parser.set_defaults``.  ``add_config_option`` and ``load_config_or_exit`` are shared helpers.

Exit status: 0 every claim proved (inconclusive allowed when configured to warn), 1 some claim refuted,
inconclusive or in error, 2 usage or configuration error.
"""
from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from verifier import __version__

EXIT_OK = 0
EXIT_FINDINGS = 1
EXIT_USAGE = 2

# Modules that add subcommands (each has ``register(subparsers)``); a missing one is skipped.
SUBCOMMAND_MODULES: tuple[str, ...] = ("verifier.cli.audit", "verifier.cli.explain")

FORMAT_CHOICES = ("text", "json", "github", "sarif", "junit")


class UsageError(Exception):
    """A bad option value or configuration; printed with the option or key named, exit status 2."""


# ---------------------------------------------------------------- shared helpers for subcommands


def add_config_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "--config", metavar="FILE", help="pyproject.toml to read [tool.idealcheck] from (default: the nearest one)"
    )


def load_config_or_exit(args: argparse.Namespace, start: Path | None = None) -> Any:
    """The config for ``args.config`` (or the nearest pyproject.toml); ``UsageError`` naming the key if bad."""
    from verifier.pipeline.config import ConfigError, load_config

    explicit = Path(args.config) if getattr(args, "config", None) else None
    if explicit is not None and not explicit.is_file():
        raise UsageError(f"--config: no such file: {explicit}")
    try:
        return load_config(start or Path.cwd(), explicit)
    except ConfigError as exc:
        raise UsageError(f"configuration error: {exc}") from exc


# ---------------------------------------------------------------- check


def _positive_float(option: str):
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} wants a number of seconds, got {text!r}") from None
        if not value > 0 or value != value or value == float("inf"):
            raise argparse.ArgumentTypeError(f"{option} wants a positive number, got {text!r}")
        return value

    return parse


def _positive_int(option: str):
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} wants a whole number, got {text!r}") from None
        if value < 1:
            raise argparse.ArgumentTypeError(f"{option} wants a number >= 1, got {text!r}")
        return value

    return parse


def _shard(text: str) -> tuple[int, int]:
    from verifier.pipeline.runner import parse_shard

    try:
        return parse_shard(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _register_check(subparsers: Any) -> None:
    parser = subparsers.add_parser(
        "check",
        help="decide every claim under the given paths",
        description="Find the idealcheck claims under PATH (default: .) and decide each one exactly.",
    )
    parser.add_argument("paths", nargs="*", metavar="PATH", help="files or folders (default: .); "
                        "a file selects the claims that depend on it, wherever they are in the project")
    parser.add_argument("--timeout", type=_positive_float("--timeout"), metavar="S", help="seconds per claim (config: timeout)")
    parser.add_argument("--memory-mb", type=_positive_int("--memory-mb"), metavar="N", help="memory per worker in MB (config: memory_mb)")
    parser.add_argument("--jobs", type=_positive_int("--jobs"), metavar="N", help="worker processes (config: jobs; default: number of cores)")
    parser.add_argument("--shard", type=_shard, metavar="K/N", help="decide only the K-th of N deterministic shares of the claims")
    parser.add_argument("--staged", action="store_true", help="read the git index and check only claims touched by staged files")
    parser.add_argument("--since", metavar="REF", help="check only claims touched by files changed since git revision REF")
    parser.add_argument("--no-cache", action="store_true", help="neither read nor write the result cache")
    parser.add_argument("--cache-dir", metavar="DIR", help="result cache folder (config: cache_dir; default .idealcheck_cache)")
    parser.add_argument("--on-inconclusive", choices=("fail", "warn"), help="whether an inconclusive claim fails the run (config: on_inconclusive)")
    parser.add_argument("--in-process", action="store_true", help=argparse.SUPPRESS)  # debugging: no workers, no limits
    add_config_option(parser)
    from verifier.cli.accuracy import add_accuracy_options

    add_accuracy_options(parser)  # --accuracy and its sampling settings
    from verifier.cli.report_options import add_report_options

    add_report_options(parser)  # --format, --output FORMAT=FILE, -q/-v, --color, --require-claims
    parser.set_defaults(handler=run_check)


def _cache_dir(args: argparse.Namespace, config: Any, cwd: Path) -> str | None:
    if args.no_cache:
        return None
    if args.cache_dir:
        return str(Path(args.cache_dir))
    configured = getattr(config, "cache_dir", ".idealcheck_cache") or ".idealcheck_cache"
    configured_path = Path(configured)
    if not configured_path.is_absolute():
        root = Path(getattr(config, "root", None) or cwd)
        configured_path = root / configured_path
    return os.path.relpath(configured_path.resolve(), cwd.resolve())


def config_start(paths: Sequence[str] | None, cwd: Path) -> Path:
    """Where the search for the nearest pyproject.toml starts: the first path checked (so that
    `idealcheck check some/project` uses that project's settings), else the working directory."""
    if paths:
        first = (cwd / paths[0])
        if first.exists():
            return first if first.is_dir() else first.parent
    return cwd


def run_options(args: argparse.Namespace, config: Any) -> Any:
    """The worker limits of a run: the command line over the config over the defaults."""
    from verifier.pipeline.runner import RunOptions

    return RunOptions(
        timeout=args.timeout if args.timeout is not None else float(getattr(config, "timeout", 10.0)),
        memory_mb=args.memory_mb if args.memory_mb is not None else int(getattr(config, "memory_mb", 2048)),
        jobs=args.jobs if args.jobs is not None else getattr(config, "jobs", None),
        progress=sys.stderr.isatty(),
        in_process=args.in_process,
    )


def run_check(args: argparse.Namespace) -> int:
    from verifier.cli.report_options import plan_outputs
    from verifier.report.sarif import render_sarif_failure

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


def _run_check(args: argparse.Namespace, stdout_format: str, targets: list[Any]) -> int:
    from verifier.cli.report_options import (
        detail_of,
        no_claims_message,
        repository_root,
        terminal_width,
        use_color,
    )
    from verifier.pipeline.runner import CheckRequest, check
    from verifier.report import fails_run, render

    if args.staged and args.since:
        raise UsageError("--staged and --since cannot be combined")
    cwd = Path.cwd()
    if not args.staged:  # with --staged the index decides what exists
        missing = [p for p in args.paths if not (cwd / p).exists()]
        if missing:
            raise UsageError(f"PATH: no such file or folder: {', '.join(missing)}")
    config = load_config_or_exit(args, config_start(args.paths, cwd))
    on_inconclusive = args.on_inconclusive or getattr(config, "on_inconclusive", "fail")
    options = run_options(args, config)
    request = CheckRequest(
        config=config,
        cwd=str(cwd),
        paths=tuple(args.paths) or (".",),
        staged=args.staged,
        since=args.since,
        shard=args.shard,
        cache_dir=_cache_dir(args, config, cwd),
        options=options,
        on_inconclusive=on_inconclusive,
    )
    from verifier.pipeline.discover import DiscoveryError

    texts: dict[str, str] = {}
    try:
        verdicts = check(request, texts_out=texts)
    except DiscoveryError as exc:
        raise UsageError(str(exc)) from exc
    if not args.quiet:
        _warn_near_misses(texts)
    from verifier.cli.accuracy import accuracy_report, accuracy_settings

    settings = accuracy_settings(args, config)
    section = accuracy_report(verdicts, settings) if settings is not None else ""

    root = repository_root(str(cwd)) or str(getattr(config, "root", None) or cwd)

    def report(fmt: str, color: bool = False, width: int | None = None) -> str:
        text = render(verdicts, fmt, version=__version__, on_inconclusive=on_inconclusive,  # type: ignore[arg-type]
                      detail=detail_of(args), color=color,  # type: ignore[arg-type]
                      cwd=str(cwd), repository_root=root, width=width)
        return text + section if fmt == "text" else text  # the accuracy section goes with text reports

    for target in targets:
        try:
            Path(target.path).write_text(report(target.fmt), encoding="utf-8")
        except OSError as exc:
            raise UsageError(f"--output: cannot write {target.path}: {exc.strerror or exc}") from exc
    if section and stdout_format != "text" and not any(t.fmt == "text" for t in targets):
        sys.stderr.write(section)  # beside machine output on stdout
    sys.stdout.write(report(stdout_format, use_color(args.color, sys.stdout), terminal_width(sys.stdout))
                     if stdout_format == "text" else report(stdout_format))
    sys.stdout.flush()
    if not verdicts:
        if not args.quiet or args.require_claims:
            print(no_claims_message(args.paths, args.require_claims), file=sys.stderr)
        if args.require_claims:
            return EXIT_FINDINGS
    return EXIT_FINDINGS if any(fails_run(v, on_inconclusive) for v in verdicts) else EXIT_OK


def _warn_near_misses(texts: dict[str, str]) -> None:
    """A warning on stderr for each comment that misspells the claim marker (it is silently no claim)."""
    from verifier.claims.near_miss import near_misses

    for path in sorted(texts):
        for miss in near_misses(path, texts[path]):
            print(f"{path}:{miss.line}:{miss.column}: warning: {miss.message()}", file=sys.stderr)


# ---------------------------------------------------------------- the parser and main


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="idealcheck",
        description="Decide the algebraic identities annotated in source files, exactly.",
    )
    parser.add_argument("--version", action="version", version=f"idealcheck {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    _register_check(subparsers)
    for name in SUBCOMMAND_MODULES:
        try:
            module = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name == name:
                continue
            raise
        module.register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    handler = getattr(args, "handler", None)
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
        return 130
