"""``idealcheck explain FILE:LINE``: argument parsing for the explanation of one claim."""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from verifier.cli.options import (
    EXIT_FINDINGS,
    EXIT_OK,
    UsageError,
    accuracy_settings,
    add_accuracy_options,
    add_config_option,
    add_timeout_option,
    load_config_or_exit,
    timeout,
)
from verifier.model.claim import ExtractionContext
from verifier.model.paths import relative_path
from verifier.report import fails_run
from verifier.report.explain_text import render_explanation

if TYPE_CHECKING:
    from verifier.cli.options import Subparsers


def register(subparsers: Subparsers, summary: str) -> None:
    parser = subparsers.add_parser(
        "explain",
        help=summary,
        description="Decide the claim starting on FILE:LINE and show its condition ideal, reduced Groebner "
                    "basis, leading-term ideal, dimension, normal forms and the certificate or witness.",
    )
    parser.add_argument("target", metavar="FILE:LINE[:COL]",
                        help="the file and the line the claim starts on (the place the check report prints works too)")
    add_timeout_option(parser, "seconds for the decision and again for the explanation (config: timeout)")
    add_accuracy_options(parser)
    add_config_option(parser)
    parser.set_defaults(handler=run_explain)


def run_explain(args: argparse.Namespace) -> int:
    # the explanation works on sympy polynomials: loaded only when a claim is explained, keeps --help fast
    from verifier.features.explain import ExplainError, explain

    cwd = Path.cwd()
    config = load_config_or_exit(args, cwd)
    context = ExtractionContext(named_conditions=config.conditions, roots=(relative_path(config.root, cwd),))
    try:
        explanation = explain(args.target, context, cwd=str(cwd), timeout=timeout(args, config),
                              accuracy=accuracy_settings(args, config))
    except ExplainError as exc:
        raise UsageError(str(exc)) from exc
    sys.stdout.write(render_explanation(explanation))
    sys.stdout.flush()
    failed = any(fails_run(item.verdict, config.on_inconclusive) for item in explanation.claims)
    return EXIT_FINDINGS if failed else EXIT_OK
