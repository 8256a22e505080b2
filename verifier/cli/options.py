"""What the subcommands share: exit status, option parsers, the config, the limits, ``--accuracy`` and
where a report goes.

Every option that more than one subcommand takes is added here, so its spelling, help and validation
are the same everywhere; the command line overrides ``[tool.idealcheck]``, which overrides the defaults
(``pipeline/config.py``).  ``emit_report`` is the one place that decides which stream or file gets the
machine-readable report and which the text for people.

``--accuracy-range`` takes ``LO:HI`` (every variable) or ``NAME=LO:HI`` (one variable) and may be given
several times; write a negative low end as ``--accuracy-range=-5:5`` so it is not read as an option.
"""
from __future__ import annotations

import argparse
import math
import os
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from verifier.cli.report_options import OutputTarget
from verifier.model.accuracy import DEFAULT_RANGE, DEFAULT_SAMPLES, AccuracySettings
from verifier.model.verdict import Verdict
from verifier.pipeline.config import MAX_ACCURACY_SAMPLES, Config, ConfigError, OnInconclusive, load_config
from verifier.pipeline.runner import RunOptions
from verifier.pipeline.job import MAX_MEMORY_MB
from verifier.report import FORMATS, Format

if TYPE_CHECKING:
    Subparsers = argparse._SubParsersAction[argparse.ArgumentParser]

EXIT_OK = 0
EXIT_FINDINGS = 1  # some claim refuted, inconclusive (unless configured to warn) or in error
EXIT_USAGE = 2  # a bad option value or configuration
EXIT_INTERRUPTED = 130  # the shell's status for a run stopped by Ctrl-C

FORMAT_CHOICES = FORMATS
ON_INCONCLUSIVE_CHOICES = ("fail", "warn")


class UsageError(Exception):
    """A bad option value or configuration; printed with the option or key named, exit status 2."""


# ---------------------------------------------------------------- value parsers


def positive_float(option: str) -> Callable[[str], float]:
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} wants a number of seconds, got {text!r}") from None
        if not value > 0 or value != value or value == float("inf"):
            raise argparse.ArgumentTypeError(f"{option} wants a positive number, got {text!r}")
        return value

    return parse


def positive_int(option: str) -> Callable[[str], int]:
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} wants a whole number, got {text!r}") from None
        if value < 1:
            raise argparse.ArgumentTypeError(f"{option} wants a number >= 1, got {text!r}")
        return value

    return parse


def _memory_mb(text: str) -> int:
    value = positive_int("--memory-mb")(text)
    if value > MAX_MEMORY_MB:
        raise argparse.ArgumentTypeError(f"--memory-mb wants at most {MAX_MEMORY_MB}, got {text!r}")
    return value


def _accuracy_samples(text: str) -> int:
    value = positive_int("--accuracy-samples")(text)
    if value > MAX_ACCURACY_SAMPLES:
        raise argparse.ArgumentTypeError(f"--accuracy-samples wants at most {MAX_ACCURACY_SAMPLES}, got {text!r}")
    return value


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


# ---------------------------------------------------------------- options


def add_format_options(parser: argparse.ArgumentParser, *, stdout_text: str) -> None:
    """``--format`` and ``--output``; ``stdout_text`` names what goes to stdout when ``--output`` is given."""
    parser.add_argument("--format", choices=FORMAT_CHOICES, default="text", help="report format (default: text)")
    parser.add_argument("--output", metavar="FILE",
                        help=f"write the report in --format to FILE; {stdout_text} goes to stdout")


def add_timeout_option(parser: argparse.ArgumentParser, help_text: str) -> None:
    parser.add_argument("--timeout", type=positive_float("--timeout"), metavar="S", help=help_text)


def add_worker_options(parser: argparse.ArgumentParser, *, unit: str) -> None:
    """``--timeout``, ``--memory-mb`` and ``--jobs``: the limits of the workers that decide each ``unit``."""
    add_timeout_option(parser, f"seconds per {unit} (config: timeout)")
    parser.add_argument("--memory-mb", type=_memory_mb, metavar="N",
                        help="memory per worker in MB (config: memory_mb)")
    parser.add_argument("--jobs", type=positive_int("--jobs"), metavar="N",
                        help="worker processes (config: jobs; default: number of cores)")


def add_run_mode_options(parser: argparse.ArgumentParser, *, unit: str) -> None:
    """``--on-inconclusive`` and the hidden ``--in-process`` (debugging: no workers, no limits)."""
    parser.add_argument("--on-inconclusive", choices=ON_INCONCLUSIVE_CHOICES,
                        help=f"whether an inconclusive {unit} fails the run (config: on_inconclusive)")
    parser.add_argument("--in-process", action="store_true", help=argparse.SUPPRESS)


def add_config_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "--config", metavar="FILE", help="pyproject.toml to read [tool.idealcheck] from (default: the nearest one)"
    )


def add_accuracy_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("floating-point accuracy (a sampled estimate, not a bound)")
    group.add_argument("--accuracy", action="store_true",
                       help="for proved claims, estimate the rounding error of each side in IEEE double")
    group.add_argument("--accuracy-samples", type=_accuracy_samples, metavar="N",
                       help=f"points per claim (config: accuracy.samples; default {DEFAULT_SAMPLES})")
    group.add_argument("--accuracy-seed", type=_seed, metavar="S", help="random seed (config: accuracy.seed; default 0)")
    group.add_argument("--accuracy-range", type=parse_range, action="append", default=[], metavar="[NAME=]LO:HI",
                       help="sampling range for every variable or one, repeatable (config: accuracy.range and "
                            f"accuracy.ranges; default {DEFAULT_RANGE[0]:g}:{DEFAULT_RANGE[1]:g})")


# ---------------------------------------------------------------- the command line over the config


def load_config_or_exit(args: argparse.Namespace, start: Path | None = None) -> Config:
    """The config for ``args.config`` (or the nearest pyproject.toml); ``UsageError`` naming the key if bad."""
    explicit = Path(args.config) if args.config else None
    if explicit is not None and not explicit.is_file():
        raise UsageError(f"--config: no such file: {explicit}")
    try:
        return load_config(start or Path.cwd(), explicit)
    except ConfigError as exc:
        raise UsageError(f"configuration error: {exc}") from exc


def on_inconclusive(args: argparse.Namespace, config: Config) -> OnInconclusive:
    chosen: OnInconclusive | None = args.on_inconclusive
    return chosen or config.on_inconclusive


def timeout(args: argparse.Namespace, config: Config) -> float:
    return float(args.timeout) if args.timeout is not None else config.timeout


def run_options(args: argparse.Namespace, config: Config) -> RunOptions:
    """The worker limits of a run: the command line over the config over the defaults."""
    return RunOptions(
        timeout=timeout(args, config),
        memory_mb=args.memory_mb if args.memory_mb is not None else config.memory_mb,
        jobs=args.jobs if args.jobs is not None else config.jobs,
        progress=sys.stderr.isatty(),
        in_process=args.in_process,
    )


def accuracy_settings(args: argparse.Namespace, config: Config) -> AccuracySettings | None:
    """The settings for ``--accuracy`` (None without it): command line over ``[tool.idealcheck.accuracy]``."""
    if not args.accuracy:
        return None
    configured = config.accuracy
    samples: int = args.accuracy_samples or configured.samples or DEFAULT_SAMPLES
    seed: int | None = args.accuracy_seed
    if seed is None:
        seed = configured.seed or 0
    default = configured.range or DEFAULT_RANGE
    per_variable: dict[str, tuple[float, float]] = {name: (low, high) for name, low, high in configured.ranges}
    for name, low, high in args.accuracy_range:
        if name is None:
            default = (low, high)
        else:
            per_variable[name] = (low, high)
    return AccuracySettings(samples=samples, seed=seed, default_range=default,
                            ranges=tuple((name, low, high) for name, (low, high) in per_variable.items()))


# ---------------------------------------------------------------- where the report goes


def accuracy_section(verdicts: Sequence[Verdict], settings: AccuracySettings | None,
                     side_names: tuple[str, str] | None = None, options: RunOptions | None = None) -> str:
    """The ``--accuracy`` text section for the proved verdicts ("" without ``--accuracy``); without
    ``side_names`` each claim's sides are named after it (the function, the claim)."""
    if settings is None:
        return ""
    # mpmath (through the evaluators) loads only when accuracy is asked for: keeps --help fast
    from verifier.features.accuracy import estimate_verdicts
    from verifier.report.accuracy_text import render_accuracy_section
    from verifier.report.common import side_names as names_of

    items = estimate_verdicts(verdicts, settings, options)
    if side_names is not None:
        return render_accuracy_section(items, side_names)
    per_item = [names_of(v.claim) for v in verdicts if v.verdict == "proved"]
    return render_accuracy_section(items, names_per_item=per_item)


def single_output(report_format: Format, output: str | None) -> tuple[Format, list[OutputTarget]]:
    """The stdout format and files of the plain ``--format F --output FILE`` pair: FILE gets F, stdout
    then gets the text for people."""
    if not output:
        return report_format, []
    return "text", [OutputTarget(report_format, output)]


def emit_report(
    stdout_format: Format,
    targets: Sequence[OutputTarget],
    render: Callable[[Format], str],
    *,
    extra: str = "",
    text_beside_machine: bool = False,
    render_for_terminal: Callable[[], str] | None = None,
) -> None:
    """Write a report where the options say.

    ``render(format)`` gives the report in a format ("text": the report for people); ``extra`` is text
    that only people read (the accuracy section), so it goes with every text report.  Each target file
    gets its format; stdout gets ``stdout_format`` (the text from ``render_for_terminal`` when given, which
    may add colour).  When stdout is machine-readable, the extra text (and the text report, if
    ``text_beside_machine``) goes to stderr so that stdout stays parseable - unless a text file has it.
    """
    for target in targets:
        written = render(target.fmt) + (extra if target.fmt == "text" else "")  # type: ignore[arg-type]
        try:
            Path(target.path).write_text(written, encoding="utf-8")
        except OSError as exc:
            raise UsageError(f"--output: cannot write {target.path}: {exc.strerror or exc}") from exc
    if stdout_format == "text":
        write_stdout((render_for_terminal() if render_for_terminal else render("text")) + extra)
        return
    write_stdout(render(stdout_format))
    text_in_file = any(t.fmt == "text" for t in targets)
    aside = "" if text_in_file else (render("text") if text_beside_machine else "") + extra
    if aside:
        sys.stderr.write(aside)


def write_stdout(text: str) -> None:
    """Write a report to stdout; a device that refuses it (full, closed) is a usage error, not a traceback."""
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except OSError as exc:
        try:  # nothing more can reach stdout: keep the interpreter from failing again at exit
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
            os.close(devnull)
        except (OSError, ValueError):
            pass
        raise UsageError(f"cannot write the report to standard output: {exc.strerror or exc}") from None
