"""``idealcheck explain FILE:LINE``: argument parsing for the explanation of one claim."""
from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import Any

from verifier.cli.accuracy import accuracy_settings, add_accuracy_options


def register(subparsers: Any) -> None:
    from verifier.cli.main import _positive_float, add_config_option

    parser = subparsers.add_parser(
        "explain",
        help="show the algebra behind the verdict of one claim",
        description="Decide the claim starting on FILE:LINE and show its condition ideal, reduced Groebner "
                    "basis, leading-term ideal, dimension, normal forms and the certificate or witness.",
    )
    parser.add_argument("target", metavar="FILE:LINE[:COL]",
                        help="the file and the line the claim starts on (the place the check report prints works too)")
    parser.add_argument("--timeout", type=_positive_float("--timeout"), metavar="S",
                        help="seconds for the decision and again for the explanation (config: timeout)")
    add_accuracy_options(parser)
    add_config_option(parser)
    parser.set_defaults(handler=run_explain)


def run_explain(args: argparse.Namespace) -> int:
    from verifier.cli.main import (
        EXIT_FINDINGS,
        EXIT_OK,
        UsageError,
        load_config_or_exit,
    )
    from verifier.features.explain import ExplainError, explain
    from verifier.model.claim import ExtractionContext
    from verifier.report.explain_text import render_explanation

    cwd = Path.cwd()
    config = load_config_or_exit(args, cwd)
    timeout = args.timeout if args.timeout is not None else float(getattr(config, "timeout", 10.0))
    root = os.path.relpath(os.path.abspath(str(getattr(config, "root", None) or cwd)), cwd).replace(os.sep, "/")
    context = ExtractionContext(named_conditions=tuple(getattr(config, "conditions", ()) or ()), roots=(root,))
    try:
        explanation = explain(args.target, context, cwd=str(cwd), timeout=timeout, accuracy=accuracy_settings(args, config))
    except ExplainError as exc:
        raise UsageError(str(exc)) from exc
    sys.stdout.write(render_explanation(explanation))
    sys.stdout.flush()
    on_inconclusive = getattr(config, "on_inconclusive", "fail")
    from verifier.report import fails_run

    failed = any(fails_run(item.verdict, on_inconclusive) for item in explanation.claims)
    return EXIT_FINDINGS if failed else EXIT_OK
