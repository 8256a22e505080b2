"""``idealcheck audit OPTIMIZED --against REFERENCE``: argument parsing and exit status of an audit."""
from __future__ import annotations

import argparse
import os
from pathlib import Path
from typing import TYPE_CHECKING

from verifier import __version__
from verifier.claims.language import ClaimSyntaxError, parse_conditions
from verifier.cli.options import (
    EXIT_FINDINGS,
    EXIT_OK,
    UsageError,
    accuracy_section,
    accuracy_settings,
    add_accuracy_options,
    add_config_option,
    add_format_options,
    add_run_mode_options,
    add_worker_options,
    emit_report,
    load_config_or_exit,
    on_inconclusive,
    run_options,
    single_output,
)
from verifier.features.audit import AuditError, plan_audit, run_audit
from verifier.model.claim import Condition, ExtractionContext
from verifier.model.paths import relative_path
from verifier.pipeline.config import Config
from verifier.report import Format, fails_run, render
from verifier.report.audit_text import render_audit_text

if TYPE_CHECKING:
    from verifier.cli.options import Subparsers


def register(subparsers: Subparsers, summary: str) -> None:
    parser = subparsers.add_parser(
        "audit",
        help=summary,
        description="Symbolically execute every function of OPTIMIZED that has a same-named function in "
                    "REFERENCE (files, or folders matched by relative module path) and decide whether both "
                    "return the same values for the same arguments (matched by position).",
    )
    parser.add_argument("optimized", metavar="OPTIMIZED", help="the Python file or folder to audit")
    parser.add_argument("--against", required=True, metavar="REFERENCE", help="the trusted Python file or folder")
    parser.add_argument("--given", action="append", default=[], metavar="COND",
                        help="conditions for every function, in the claim language (`x > 0, a != b`, or a named "
                             "set from the config), in the optimized function's parameter names; repeatable")
    add_format_options(parser, stdout_text="the text table")
    add_worker_options(parser, unit="function")
    add_run_mode_options(parser, unit="function")
    add_accuracy_options(parser)
    add_config_option(parser)
    parser.set_defaults(handler=run_audit_command)


def _given(texts: list[str], config: Config) -> tuple[Condition, ...]:
    named = {item.name: item for item in config.conditions}
    conditions: list[Condition] = []
    for text in texts:
        try:
            conditions.extend(parse_conditions(text, named))
        except ClaimSyntaxError as exc:
            raise UsageError(f"--given {text!r}: {exc.message}") from exc
    return tuple(dict.fromkeys(conditions))


def run_audit_command(args: argparse.Namespace) -> int:
    cwd = Path.cwd()
    config = load_config_or_exit(args, cwd)
    given = _given(args.given, config)
    failing = on_inconclusive(args, config)
    roots = []
    for path in (args.optimized, args.against):
        folder = path if os.path.isdir(path) else (os.path.dirname(path) or ".")
        roots.append(relative_path(folder, cwd))
    context = ExtractionContext(named_conditions=config.conditions, roots=tuple(dict.fromkeys(roots)))
    try:
        plan = plan_audit(args.optimized, args.against, context, given, cwd=str(cwd))
    except AuditError as exc:
        raise UsageError(str(exc)) from exc
    result = run_audit(plan, run_options(args, config))
    verdicts = list(result.verdicts)
    table = render_audit_text(result)

    def report(report_format: Format) -> str:
        if report_format == "text":
            return table
        return render(verdicts, report_format, version=__version__, on_inconclusive=failing)

    stdout_format, targets = single_output(args.format, args.output)
    emit_report(stdout_format, targets, report, text_beside_machine=True,
                extra=accuracy_section(verdicts, accuracy_settings(args, config), ("optimized", "reference")))
    return EXIT_FINDINGS if any(fails_run(v, failing) for v in verdicts) else EXIT_OK
