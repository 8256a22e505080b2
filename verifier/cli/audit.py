"""``idealcheck audit OPTIMIZED --against REFERENCE``: argument parsing and exit status of an audit."""
from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import Any

from verifier.cli.accuracy import (
    accuracy_report,
    accuracy_settings,
    add_accuracy_options,
)


def register(subparsers: Any) -> None:
    from verifier.cli.main import (
        FORMAT_CHOICES,
        _positive_float,
        _positive_int,
        add_config_option,
    )

    parser = subparsers.add_parser(
        "audit",
        help="check that every function of one module version equals the same-named function of another",
        description="Symbolically execute every function of OPTIMIZED that has a same-named function in "
                    "REFERENCE (files, or folders matched by relative module path) and decide whether both "
                    "return the same values for the same arguments (matched by position).",
    )
    parser.add_argument("optimized", metavar="OPTIMIZED", help="the Python file or folder to audit")
    parser.add_argument("--against", required=True, metavar="REFERENCE", help="the trusted Python file or folder")
    parser.add_argument("--given", action="append", default=[], metavar="COND",
                        help="conditions for every function, in the claim language (`x > 0, a != b`, or a named "
                             "set from the config), in the optimized function's parameter names; repeatable")
    parser.add_argument("--format", choices=FORMAT_CHOICES, default="text", help="report format (default: text)")
    parser.add_argument("--output", metavar="FILE",
                        help="write the report in --format to FILE; the text table goes to stdout")
    parser.add_argument("--timeout", type=_positive_float("--timeout"), metavar="S", help="seconds per function (config: timeout)")
    parser.add_argument("--memory-mb", type=_positive_int("--memory-mb"), metavar="N", help="memory per worker in MB (config: memory_mb)")
    parser.add_argument("--jobs", type=_positive_int("--jobs"), metavar="N", help="worker processes (config: jobs)")
    parser.add_argument("--on-inconclusive", choices=("fail", "warn"), help="whether an inconclusive function fails the run")
    parser.add_argument("--in-process", action="store_true", help=argparse.SUPPRESS)
    add_accuracy_options(parser)
    add_config_option(parser)
    parser.set_defaults(handler=run_audit_command)


def _given(texts: list[str], config: Any):
    from verifier.claims.language import ClaimSyntaxError, parse_conditions
    from verifier.cli.main import UsageError

    named = {item.name: item for item in (getattr(config, "conditions", ()) or ())}
    conditions = []
    for text in texts:
        try:
            conditions.extend(parse_conditions(text, named))
        except ClaimSyntaxError as exc:
            raise UsageError(f"--given {text!r}: {exc.message}") from exc
    return tuple(dict.fromkeys(conditions))


def run_audit_command(args: argparse.Namespace) -> int:
    from verifier import __version__
    from verifier.cli.main import (
        EXIT_FINDINGS,
        EXIT_OK,
        UsageError,
        load_config_or_exit,
        run_options,
    )
    from verifier.features.audit import AuditError, plan_audit, run_audit
    from verifier.model.claim import ExtractionContext
    from verifier.report import fails_run, render
    from verifier.report.audit_text import render_audit_text

    cwd = Path.cwd()
    config = load_config_or_exit(args, cwd)
    given = _given(args.given, config)
    on_inconclusive = args.on_inconclusive or getattr(config, "on_inconclusive", "fail")
    roots = []
    for path in (args.optimized, args.against):
        folder = path if os.path.isdir(path) else (os.path.dirname(path) or ".")
        roots.append(os.path.relpath(os.path.abspath(folder), cwd).replace(os.sep, "/"))
    context = ExtractionContext(named_conditions=tuple(getattr(config, "conditions", ()) or ()),
                                roots=tuple(dict.fromkeys(roots)))
    try:
        plan = plan_audit(args.optimized, args.against, context, given, cwd=str(cwd))
    except AuditError as exc:
        raise UsageError(str(exc)) from exc
    options = run_options(args, config)
    result = run_audit(plan, options)
    verdicts = list(result.verdicts)
    table = render_audit_text(result)
    settings = accuracy_settings(args, config)
    accuracy_text = accuracy_report(verdicts, settings, ("optimized", "reference")) if settings is not None else ""
    if args.output:
        report = table if args.format == "text" else render(verdicts, args.format, version=__version__,
                                                            on_inconclusive=on_inconclusive)
        try:
            Path(args.output).write_text(report, encoding="utf-8")
        except OSError as exc:
            raise UsageError(f"--output: cannot write {args.output}: {exc.strerror or exc}") from exc
        sys.stdout.write(table + accuracy_text)
    elif args.format == "text":
        sys.stdout.write(table + accuracy_text)
    else:
        # the machine-readable report owns stdout; the table and accuracy figures go to stderr
        sys.stdout.write(render(verdicts, args.format, version=__version__, on_inconclusive=on_inconclusive))
        sys.stderr.write(table + accuracy_text)
    sys.stdout.flush()
    return EXIT_FINDINGS if any(fails_run(v, on_inconclusive) for v in verdicts) else EXIT_OK
