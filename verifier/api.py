"""The Python API: check paths, decide one claim, render a report; verdicts are the frozen dataclasses of
``verifier.model``.  These names are stable:

- ``check_paths(paths=None, config=None, ...) -> RunResult``: every claim under ``paths``, decided;
- ``find_claims(...) -> ClaimSet`` and ``decide_claims(claim_set, claims=None)``: the same in two steps
  (the pytest plugin collects first and decides item by item);
- ``decide_claim(text, conditions=(), ...) -> ClaimResult``: one claim given as text, read by the same
  parser as claims in files (never evaluated);
- ``render_report(result, format="text") -> str``: text, json, sarif, junit or github, as the command line
  writes them;
- ``load_config(start=".", explicit=None)``: ``[tool.idealcheck]`` of the nearest pyproject.toml.

The runs go through ``verifier.pipeline.runner`` exactly as ``idealcheck check`` does: worker processes
with the time and memory limits of the configuration, and the proof-carrying result cache.
"""
from __future__ import annotations

import os
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal, Union

from verifier import __version__
from verifier.model.claim import Claim, ExtractionContext
from verifier.model.verdict import Verdict, VerdictName
from verifier.pipeline.baseline import Baseline, BaselineError, StaleEntry, baseline_for_check
from verifier.pipeline.config import Config, ConfigError
from verifier.pipeline.config import load_config as _load_config
from verifier.pipeline.discover import DiscoveryError
from verifier.pipeline.runner import CheckRequest, RunOptions, gather_claims, run, warm_up_workers, with_cache
from verifier.report import fails_run, render, summary_counts

ReportFormat = Literal["text", "json", "sarif", "junit", "github"]
ConfigArg = Union[Config, str, "os.PathLike[str]", None]
PathArg = Union[str, "os.PathLike[str]"]
OnInconclusive = Literal["fail", "warn"]
DECIDED_CLAIM_PATH = "<claim>"  # the path shown for a claim given to ``decide_claim`` as text

# Worst first: a claim of several links (a == b == c) has the verdict of its worst link.
_SEVERITY: dict[str, int] = {"error": 3, "refuted": 2, "inconclusive": 1, "proved": 0}

__all__ = [
    "BaselineError", "ClaimResult", "ClaimSet", "ConfigError", "DiscoveryError", "RunResult",
    "check_paths", "decide_claim", "decide_claims", "find_claims", "load_config", "render_report",
]


@dataclass(frozen=True)
class RunResult:
    """The verdicts of a run, in the order the claims were found."""

    verdicts: tuple[Verdict, ...]
    on_inconclusive: OnInconclusive = "fail"

    @property
    def ok(self) -> bool:
        """True when no verdict fails the run (what exit status 0 of ``idealcheck check`` means)."""
        return not any(fails_run(v, self.on_inconclusive) for v in self.verdicts)

    @property
    def counts(self) -> dict[str, int]:
        return summary_counts(self.verdicts)

    def with_verdict(self, name: VerdictName) -> tuple[Verdict, ...]:
        return tuple(v for v in self.verdicts if v.verdict == name)


@dataclass(frozen=True)
class ClaimResult:
    """The decision of one claim given as text: one verdict per link (``a == b == c`` has two)."""

    text: str
    verdicts: tuple[Verdict, ...]
    on_inconclusive: OnInconclusive = "fail"

    @property
    def verdict(self) -> VerdictName:
        """The worst verdict of the links (error > refuted > inconclusive > proved)."""
        return max((v.verdict for v in self.verdicts), key=lambda name: _SEVERITY[name])

    @property
    def proved(self) -> bool:
        return self.verdict == "proved"

    @property
    def ok(self) -> bool:
        return not any(fails_run(v, self.on_inconclusive) for v in self.verdicts)


@dataclass(frozen=True)
class ClaimSet:
    """Claims found under some paths, with what is needed to decide them like ``idealcheck check`` would."""

    claims: tuple[Claim, ...]
    request: CheckRequest = field(repr=False)
    texts: Mapping[str, str] = field(repr=False, compare=False, default_factory=dict)
    stale: tuple[StaleEntry, ...] = ()  # baseline entries that match no claim found

    @property
    def on_inconclusive(self) -> OnInconclusive:
        return self.request.on_inconclusive  # type: ignore[return-value]


# ---------------------------------------------------------------- configuration


def load_config(start: PathArg = ".", explicit: PathArg | None = None) -> Config:
    """``[tool.idealcheck]`` of ``explicit`` or of the nearest pyproject.toml at or above ``start``."""
    return _load_config(Path(start), Path(explicit) if explicit is not None else None)


def _config(config: ConfigArg, start: Path) -> Config:
    if isinstance(config, Config):
        return config
    if config is None:
        return _load_config(start)
    return _load_config(start, Path(config))


def _relative_to(path: Path, cwd: Path) -> str:
    return os.path.relpath(path.resolve(), cwd.resolve()).replace(os.sep, "/")


def default_paths(config: Config, cwd: PathArg = ".") -> tuple[str, ...]:
    """What is checked when no path is given: ``paths`` of the configuration (relative to its folder),
    else the configuration's folder when there is a configuration file, else ``cwd``."""
    base = Path(cwd)
    if config.paths:
        return tuple(_relative_to(config.root / p, base) for p in config.paths)
    if config.path is not None:
        return (_relative_to(config.root, base),)
    return (".",)


def _cache_dir(config: Config, cwd: Path) -> str:
    configured = Path(config.cache_dir or ".idealcheck_cache")
    if not configured.is_absolute():
        configured = config.root / configured
    return os.path.relpath(configured.resolve(), cwd.resolve())


# ---------------------------------------------------------------- checking paths


def find_claims(
    paths: Iterable[PathArg] | None = None,
    config: ConfigArg = None,
    *,
    cwd: PathArg | None = None,
    timeout: float | None = None,
    memory_mb: int | None = None,
    jobs: int | None = None,
    cache: bool = True,
    on_inconclusive: OnInconclusive | None = None,
    in_process: bool = False,
    baseline: PathArg | bool = True,
) -> ClaimSet:
    """The claims under ``paths`` (files or folders, relative to ``cwd``), read but not decided.

    ``config`` is a ``Config``, the path of a pyproject.toml, or None for the nearest one (searched from
    the first path).  The limits default to the configuration's; ``cache=False`` neither reads nor writes
    the result cache.  A file argument selects the claims that depend on it, as on the command line.
    ``baseline`` is the accepted-results file to apply (relative to ``cwd``), ``True`` for the one
    ``idealcheck check`` would use (the configured one, else the default file when it exists) or ``False``
    for none; its entries that match no claim are in ``ClaimSet.stale``.
    Raises ``ConfigError`` for a bad configuration, ``BaselineError`` for an unusable baseline and
    ``DiscoveryError`` when the files cannot be listed.
    """
    base = Path(cwd) if cwd is not None else Path.cwd()
    given = tuple(str(p) for p in paths) if paths is not None else ()
    start = base
    if given and (base / given[0]).exists():
        first = base / given[0]
        start = first if first.is_dir() else first.parent
    settings = _config(config, start)
    selected = given or default_paths(settings, base)
    options = RunOptions(
        timeout=float(timeout if timeout is not None else settings.timeout),
        memory_mb=int(memory_mb if memory_mb is not None else settings.memory_mb),
        jobs=jobs if jobs is not None else settings.jobs,
        in_process=in_process,
    )
    request = CheckRequest(
        config=settings,
        cwd=str(base),
        paths=selected,
        cache_dir=_cache_dir(settings, base) if cache else None,
        options=options,
        on_inconclusive=on_inconclusive or settings.on_inconclusive,
        baseline=_baseline(baseline, settings, base),
    )
    warm_up_workers(options)
    stale: list[StaleEntry] = []
    claims, texts, _skipped = gather_claims(request, stale_out=stale)
    return ClaimSet(tuple(claims), request, texts, tuple(stale))


def _baseline(baseline: PathArg | bool, config: Config, cwd: Path) -> Baseline | None:
    if baseline is False:
        return None
    return baseline_for_check(config, cwd, None if baseline is True else Path(baseline))


def decide_claims(claim_set: ClaimSet, claims: Sequence[Claim] | None = None) -> tuple[Verdict, ...]:
    """Verdicts of ``claims`` (default: all of ``claim_set``), in that order, with its limits and cache."""
    chosen = claim_set.claims if claims is None else tuple(claims)
    options, _refused = with_cache(claim_set.request)
    return tuple(run(chosen, options))


def check_paths(
    paths: Iterable[PathArg] | None = None,
    config: ConfigArg = None,
    *,
    cwd: PathArg | None = None,
    timeout: float | None = None,
    memory_mb: int | None = None,
    jobs: int | None = None,
    cache: bool = True,
    on_inconclusive: OnInconclusive | None = None,
    in_process: bool = False,
    baseline: PathArg | bool = True,
) -> RunResult:
    """Find and decide every claim under ``paths`` (see ``find_claims`` for the arguments)."""
    found = find_claims(paths, config, cwd=cwd, timeout=timeout, memory_mb=memory_mb, jobs=jobs, cache=cache,
                        on_inconclusive=on_inconclusive, in_process=in_process, baseline=baseline)
    return RunResult(decide_claims(found), found.on_inconclusive)


# ---------------------------------------------------------------- one claim as text


def _claims_of_text(text: str, context: ExtractionContext) -> list[Claim]:
    # function-level import: the claim language is read by the claims layer, as for a comment in a file
    from verifier.claims.comments import CommentClaim
    from verifier.claims.expression import expression_claims

    comment = CommentClaim(line=1, column=1, text=text, end_line=1, trailing=False, pieces=((0, 1, 1),))
    return expression_claims(comment, DECIDED_CLAIM_PATH, context)


def claim_text(text: str, conditions: Iterable[str] = ()) -> str:
    """``text`` with ``conditions`` added after ``given`` (joined with commas)."""
    extra = [c.strip() for c in conditions]
    if not extra:
        return text.strip()
    from verifier.claims.language import split_given

    _head, given, _offset = split_given(text)
    joiner = ", " if given is not None else " given "
    return text.strip() + joiner + ", ".join(extra)


def decide_claim(
    text: str,
    conditions: Iterable[str] = (),
    *,
    config: ConfigArg = None,
    timeout: float | None = None,
    memory_mb: int | None = None,
    in_process: bool = False,
) -> ClaimResult:
    """Decide ``LEFT == RIGHT`` (a chain ``a == b == c`` is one verdict per link) under ``conditions``.

    ``text`` and the ``conditions`` (e.g. ``"x > 0"``, ``"c**2 == a**2 + b**2"``, or a named set of the
    configuration) are read by the claim parser, never evaluated.  A malformed text gives an ``error``
    verdict that says what is wrong, as in a file.  The claim is decided in a worker process with the
    configuration's time and memory limits (``in_process=True`` decides here, without limits).
    """
    settings = _config(config, Path.cwd())
    full = claim_text(text, conditions)
    context = ExtractionContext(named_conditions=settings.conditions)
    options = RunOptions(
        timeout=float(timeout if timeout is not None else settings.timeout),
        memory_mb=int(memory_mb if memory_mb is not None else settings.memory_mb),
        jobs=1,
        in_process=in_process,
    )
    verdicts = run(_claims_of_text(full, context), options)
    return ClaimResult(full, tuple(verdicts), settings.on_inconclusive)


# ---------------------------------------------------------------- reports


def render_report(
    result: RunResult | ClaimResult | Sequence[Verdict],
    format: ReportFormat = "text",
    *,
    on_inconclusive: OnInconclusive | None = None,
) -> str:
    """The report ``idealcheck check --format FORMAT`` would write for these verdicts."""
    if isinstance(result, (RunResult, ClaimResult)):
        verdicts: Sequence[Verdict] = result.verdicts
        policy = on_inconclusive or result.on_inconclusive
    else:
        verdicts = tuple(result)
        policy = on_inconclusive or "fail"
    return render(verdicts, format, version=__version__, on_inconclusive=policy)
