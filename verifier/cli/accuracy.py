"""Command-line options for ``--accuracy`` (shared by check, audit and explain) and the glue that runs it.

``--accuracy-range`` takes ``LO:HI`` (every variable) or ``NAME=LO:HI`` (one variable) and may be given
several times; write a negative low end as ``--accuracy-range=-5:5`` so it is not read as an option.
"""
from __future__ import annotations

import argparse
import math
from collections.abc import Sequence
from typing import Any

from verifier.features.accuracy import estimate_accuracy
from verifier.model.accuracy import (
    DEFAULT_RANGE,
    DEFAULT_SAMPLES,
    AccuracyEstimate,
    AccuracySettings,
)
from verifier.model.verdict import Verdict


def parse_range(text: str) -> tuple[str | None, float, float]:
    """``LO:HI`` or ``NAME=LO:HI`` -> (name or None, low, high); ArgumentTypeError when malformed."""
    name: str | None = None
    body = text
    if "=" in text:
        name, body = (part.strip() for part in text.split("=", 1))
        if not name:
            raise argparse.ArgumentTypeError(f"--accuracy-range wants NAME=LO:HI or LO:HI, got {text!r}")
    low_text, sep, high_text = body.partition(":")
    try:
        low, high = float(low_text), float(high_text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--accuracy-range wants numbers LO:HI, got {text!r}") from None
    if not sep or not (math.isfinite(low) and math.isfinite(high)) or not low < high:
        raise argparse.ArgumentTypeError(f"--accuracy-range wants finite LO < HI, got {text!r}")
    return name, low, high


def _seed(text: str) -> int:
    try:
        return int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--accuracy-seed wants a whole number, got {text!r}") from None


def add_accuracy_options(parser: argparse.ArgumentParser) -> None:
    from verifier.cli.main import _positive_int

    group = parser.add_argument_group("floating-point accuracy (a sampled estimate, not a bound)")
    group.add_argument("--accuracy", action="store_true",
                       help="for proved claims, estimate the rounding error of each side in IEEE double")
    group.add_argument("--accuracy-samples", type=_positive_int("--accuracy-samples"), metavar="N",
                       help=f"points per claim (config: accuracy.samples; default {DEFAULT_SAMPLES})")
    group.add_argument("--accuracy-seed", type=_seed, metavar="S", help="random seed (config: accuracy.seed; default 0)")
    group.add_argument("--accuracy-range", type=parse_range, action="append", default=[], metavar="[NAME=]LO:HI",
                       help="sampling range for every variable or one, repeatable (config: accuracy.range and "
                            f"accuracy.ranges; default {DEFAULT_RANGE[0]:g}:{DEFAULT_RANGE[1]:g})")


def accuracy_settings(args: argparse.Namespace, config: Any = None) -> AccuracySettings | None:
    """The settings for ``--accuracy`` (None without it): command line over ``[tool.idealcheck.accuracy]``."""
    if not getattr(args, "accuracy", False):
        return None
    configured = getattr(config, "accuracy", None)
    samples = getattr(args, "accuracy_samples", None) or getattr(configured, "samples", None) or DEFAULT_SAMPLES
    seed = getattr(args, "accuracy_seed", None)
    if seed is None:
        seed = getattr(configured, "seed", None) or 0
    default = getattr(configured, "range", None) or DEFAULT_RANGE
    per_variable: dict[str, tuple[float, float]] = {
        name: (low, high) for name, low, high in (getattr(configured, "ranges", ()) or ())
    }
    for name, low, high in getattr(args, "accuracy_range", []) or []:
        if name is None:
            default = (low, high)
        else:
            per_variable[name] = (low, high)
    return AccuracySettings(samples=samples, seed=seed, default_range=default,
                            ranges=tuple((name, low, high) for name, (low, high) in per_variable.items()))


def estimates_for(verdicts: Sequence[Verdict], settings: AccuracySettings) -> list[tuple[str, list[AccuracyEstimate]]]:
    """(heading, estimates) for every proved verdict, one estimate per obligation."""
    items: list[tuple[str, list[AccuracyEstimate]]] = []
    for verdict in verdicts:
        if verdict.verdict != "proved":
            continue
        claim = verdict.claim
        estimates = [estimate_accuracy(ob, settings) for ob in claim.obligations]
        items.append((f"{claim.location}: {claim.text}", estimates))
    return items


def accuracy_report(
    verdicts: Sequence[Verdict], settings: AccuracySettings, side_names: tuple[str, str] | None = None
) -> str:
    """The accuracy section; without ``side_names`` each claim's sides are named (the function, the claim)."""
    from verifier.report.accuracy_text import render_accuracy_section
    from verifier.report.common import side_names as names_of

    items = estimates_for(verdicts, settings)
    if side_names is not None:
        return render_accuracy_section(items, side_names)
    per_item = [names_of(v.claim) for v in verdicts if v.verdict == "proved"]
    return render_accuracy_section(items, names_per_item=per_item)
