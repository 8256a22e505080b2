"""``idealcheck baseline [PATH ...]``: write or update the file of accepted known results
(``pipeline.baseline``; which file: ``baseline_options``).
"""
from __future__ import annotations

import argparse
from pathlib import Path
from typing import TYPE_CHECKING

from verifier.cli.baseline_options import add_baseline_options, baseline_path
from verifier.cli.check import cache_dir, config_start
from verifier.cli.options import (
    EXIT_OK,
    UsageError,
    add_config_option,
    add_run_mode_options,
    add_worker_options,
    load_config_or_exit,
    on_inconclusive,
    run_options,
)
from verifier.model.paths import relative_path
from verifier.pipeline.baseline import Baseline, BaselineError, load_baseline, updated_baseline, write_baseline
from verifier.pipeline.discover import DiscoveryError
from verifier.pipeline.runner import CheckRequest, check_run
from verifier.report.escape import shown

if TYPE_CHECKING:
    from verifier.cli.options import Subparsers


def register(subparsers: Subparsers, summary: str) -> None:
    parser = subparsers.add_parser(
        "baseline",
        help=summary,
        description="Check the claims under PATH (default: .) and write the baseline file: every claim that "
                    "is inconclusive or in error (refuted too with --accept-refuted) is accepted while its "
                    "verdict stays the same.  Reasons written into the file are kept while the verdict is "
                    "unchanged; entries for files outside PATH are kept as they are.",
    )
    parser.add_argument("paths", nargs="*", metavar="PATH", help="files or folders (default: .)")
    add_baseline_options(parser, writing=True)
    parser.add_argument("--accept-refuted", action="store_true",
                        help="accept refuted claims too (a claim known to be wrong on purpose)")
    add_worker_options(parser, unit="claim")
    parser.add_argument("--no-cache", action="store_true", help="neither read nor write the result cache")
    parser.add_argument("--cache-dir", metavar="DIR", help="result cache folder (config: cache_dir)")
    add_run_mode_options(parser, unit="claim")
    add_config_option(parser)
    parser.set_defaults(handler=run_baseline)


def run_baseline(args: argparse.Namespace) -> int:
    cwd = Path.cwd()
    missing = [p for p in args.paths if not (cwd / p).exists()]
    if missing:
        raise UsageError(f"PATH: no such file or folder: {', '.join(missing)}")
    config = load_config_or_exit(args, config_start(args.paths, cwd))
    path = baseline_path(args, config, cwd)
    assert path is not None  # the writing command has no --no-baseline
    shown_path = relative_path(path, cwd)
    previous: Baseline | None = None
    if path.exists() or path.is_symlink():
        try:
            previous = load_baseline(path, shown_path)
        except BaselineError as exc:
            raise UsageError(f"baseline error: {exc} (fix or delete the file, then run again)") from exc
    paths = tuple(args.paths) or (".",)
    request = CheckRequest(config=config, cwd=str(cwd), paths=paths, cache_dir=cache_dir(args, config, cwd),
                           options=run_options(args, config), on_inconclusive=on_inconclusive(args, config))
    try:
        result = check_run(request)
    except DiscoveryError as exc:
        raise UsageError(str(exc)) from exc
    scanned = [relative_path(cwd / p, cwd) for p in paths]
    update = updated_baseline(result.verdicts, previous, path.parent, str(cwd), scanned,
                              accept_refuted=args.accept_refuted)
    try:
        write_baseline(path, update.entries)
    except OSError as exc:
        raise UsageError(f"baseline: cannot write {shown_path}: {exc.strerror or exc}") from exc
    counts = {name: sum(1 for e in update.entries if e.verdict == name) for name in ("inconclusive", "error", "refuted")}
    what = ", ".join(f"{count} {name}" for name, count in counts.items() if count) or "nothing"
    print(f"wrote {shown(shown_path)}: {len(update.entries)} accepted ({what}); "
          f"{update.added} new, {update.removed} removed, {update.kept} unchanged")
    if update.refuted_left_out:
        noun = "claim is" if update.refuted_left_out == 1 else "claims are"
        print(f"{update.refuted_left_out} refuted {noun} not accepted (fix them, or use --accept-refuted "
              "if they are wrong on purpose)")
    return EXIT_OK
