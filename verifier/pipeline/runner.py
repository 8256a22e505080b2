"""Run orchestration: files -> claims -> verdicts, every step on a claim in a limited worker process.

Reading the claims of each file (symbolic execution of Python functions included) and deciding each
claim run as jobs in worker processes (``workers``) under the claim's time and memory limits, so
``--timeout`` bounds the whole run (about claims x timeout / jobs).  A file's reading job may take the
timeout once per claim comment in it.  A job cut short or crashed becomes the result of its file or claim
(``inconclusive`` with the limit named, or ``error``), and the rest is still reported.  Verdicts come back
in the order of the claims given, whatever the number of workers, so a parallel run reports exactly what a
serial one does.
"""
from __future__ import annotations

import dataclasses
import hashlib
import os
import sys
import time
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Protocol, TextIO

from verifier.model.claim import Claim, ExtractionContext, FileProblem, Location
from verifier.model.limits import DEFAULT_MEMORY_MB, DEFAULT_TIMEOUT_SECONDS
from verifier.model.paths import relative_path
from verifier.model.run import RunResult
from verifier.model.skipped import Skipped
from verifier.model.verdict import Limit, Verdict
from verifier.pipeline.baseline import Baseline, StaleEntry, apply_baseline
from verifier.pipeline.jobs import (  # re-exported: the runner's public names
    DEFAULT_DECIDER,
    cached_or_decided,
    decide_guarded,
    extract_guarded,
    extract_recorded,
    file_problem_claim,
    limit_verdict,
    perform,
    problem_verdict,
    unsendable,
)
from verifier.pipeline.job import (
    KILL_GRACE_SECONDS,
    Job,
    OnLimit,
    Perform,
    PoolSettings,
    Unsendable,
    allow_long_integers,
    memory_limit_reason,
    time_limit_reason,
)
from verifier.pipeline.reading import DEFAULT_MAX_FILE_BYTES

if TYPE_CHECKING:  # the config module is only a type here; workers need not import it
    from verifier.pipeline.config import Config
    from verifier.pipeline.extraction_cache import CacheNote, ExtractionCache

CLAIM_MARKER = "idealcheck:"


class VerdictCache(Protocol):
    """What the runner needs of a cache (``cache.ResultCache``): a plain-data slot per claim that the
    worker reads (re-checking every proof and witness) before deciding and writes after."""

    def slot(self, claim: Claim) -> Any: ...

    def record(self, verdict: Verdict, *, stored: bool) -> None: ...


@dataclass(frozen=True)
class RunOptions:
    timeout: float = DEFAULT_TIMEOUT_SECONDS  # seconds per claim
    memory_mb: int = DEFAULT_MEMORY_MB  # address-space limit of each worker process
    jobs: int | None = None  # worker processes; None = number of cores
    cache: VerdictCache | None = field(default=None, compare=False)
    progress: bool = False  # a progress line on stderr (the command line sets it when stderr is a terminal)
    progress_after: float = 1.0  # seconds before the line appears: short runs stay quiet
    kill_grace: float = KILL_GRACE_SECONDS
    in_process: bool = False  # decide in this process, without limits (debugging and tests only)
    decider: str = DEFAULT_DECIDER  # "module:function" taking (claim, timeout) -> Verdict; tests swap it

    def pool(self) -> PoolSettings:
        return PoolSettings(self.timeout, self.memory_mb, self.jobs, self.kill_grace, self.decider)


def decide_with_engine(claim: Claim, timeout: float) -> Verdict:
    # the algebra (sympy) loads in the workers only: keeps `idealcheck --help` fast
    from verifier.algebra.decide import Limits, decide

    return decide(claim, Limits(timeout=timeout))


# ---------------------------------------------------------------- claims from files


def reading_seconds(text: str, timeout: float) -> float:
    """The time limit of reading one file's claims: the claim timeout once per claim comment in it."""
    return timeout * max(1, text.count(CLAIM_MARKER))


def run_in_workers(jobs: Sequence[Job], settings: PoolSettings, on_limit: OnLimit,
                   on_done: Callable[[], None] = lambda: None, *, perform: Perform, unsendable: Unsendable) -> dict[int, Any]:
    """``workers.run_jobs``, with the process pool loaded only when there is a job to run."""
    if not jobs:
        return {}
    # function-level import: the process pool (multiprocessing, pickle, sockets) loads only once a file
    # holds claims, so a run over files without any loads none of it
    from verifier.pipeline.workers import run_jobs

    return run_jobs(jobs, settings, on_limit, on_done, perform=perform, unsendable=unsendable)


def collect_claims(discovery: Any, context: Any, *, extract: Callable[..., list[Claim]] | None = None,
                   options: RunOptions | None = None, cache: ExtractionCache | None = None) -> list[Claim]:
    """Every claim in the files of ``discovery`` (a ``discover.Discovery``), plus pseudo-claims for its problems.

    With ``options`` (and not ``in_process``) each file is read in a worker process under the time and
    memory limits; a file whose reading fails or overruns becomes one pseudo-claim saying so, and the
    other files are still read.  ``extract`` (in this process) is for tests.  With ``cache`` a file
    whose entry is still valid is not read at all, and every completed reading is stored.
    """
    claims: list[Claim] = [file_problem_claim(p) for p in discovery.problems]
    claims += [file_problem_claim(p, text="(claim could not be read)") for p in discovery.claim_line_problems]
    files = [source for source in discovery.files if source.holds_claims()]  # no marker, no claims: not parsed
    if extract is not None:
        for source in files:
            path = str(source.path)
            try:
                claims.extend(extract(path, source.text, context))
            except RecursionError:
                claims.append(file_problem_claim(FileProblem(Location(path, 1, 1), "the file is nested too deeply to read")))
            except Exception as exc:  # a bug in the extractor must not hide the other files
                message = f"internal error while reading claims: {type(exc).__name__}: {exc}"
                claims.append(file_problem_claim(FileProblem(Location(path, 1, 1), message)))
        return claims
    found: dict[int, list[Claim]] = {}
    if cache is not None:
        for index, source in enumerate(files):
            hit = cache.load(str(source.path), source.text, context)
            if hit is not None:
                found[index] = hit
    todo = [(index, source) for index, source in enumerate(files) if index not in found]
    if options is None or options.in_process:
        done = [extract_recorded(str(source.path), source.text, context, 0) for _index, source in todo]
    else:
        done = _extract_in_workers([source for _index, source in todo], context, options)
    for (index, source), (read, reads) in zip(todo, done):
        found[index] = read
        if cache is not None and reads is not None:
            cache.store(str(source.path), source.text, context, read, reads)
    for index in range(len(files)):
        claims.extend(found[index])
    return claims


def _extract_in_workers(files: list[Any], context: Any, options: RunOptions) -> list[tuple[list[Claim], Any]]:
    """(claims, reads or None) of each file, read in worker processes under the limits."""
    jobs = [Job("extract_recorded", (str(f.path), f.text, context), reading_seconds(f.text, options.timeout))
            for f in files]

    def on_limit(index: int, job: Job, limit: Limit | None, reason: str, seconds: float) -> tuple[list[Claim], None]:
        path = job.payload[0]
        if limit == "time":
            reason = (f"time limit of {job.seconds:g} s exceeded while reading the claims of this file "
                      f"({options.timeout:g} s per claim comment in it)")
        else:
            reason += " while reading the claims of this file"
        return [file_problem_claim(FileProblem(Location(path, 1, 1), reason),
                                   "inconclusive" if limit is not None else "error")], None

    results = run_in_workers(jobs, options.pool(), on_limit, perform=perform, unsendable=unsendable)
    return [results[index] for index in range(len(jobs))]


# ---------------------------------------------------------------- selection


def parse_shard(text: str) -> tuple[int, int]:
    """``"K/N"`` -> (K, N) with 1 <= K <= N; ValueError with a readable message otherwise."""
    parts = text.split("/")
    if len(parts) != 2 or not parts[0].strip().isdigit() or not parts[1].strip().isdigit():
        raise ValueError(f"--shard wants K/N with whole numbers, got {text!r}")
    k, n = int(parts[0]), int(parts[1])
    if n < 1 or not 1 <= k <= n:
        raise ValueError(f"--shard wants 1 <= K <= N, got {text!r}")
    return k, n


def shard_of(claim_id: str, count: int) -> int:
    """The 1-based shard of a claim: a hash of its id that is the same on every machine and Python."""
    digest = hashlib.sha256(claim_id.encode("utf-8", "surrogateescape")).digest()
    return int.from_bytes(digest[:8], "big") % count + 1


def select_shard(claims: Sequence[Claim], shard: tuple[int, int] | None) -> list[Claim]:
    if shard is None:
        return list(claims)
    k, n = shard
    return [c for c in claims if shard_of(c.id, n) == k]


def depends_on(claim: Claim, changed: Iterable[str]) -> bool:
    """True when the claim's file or any file it depends on is among ``changed`` (relative posix paths)."""
    wanted = {normalize_path(p) for p in changed}
    deps = {normalize_path(p) for p in claim.dependencies} | {normalize_path(claim.location.path)}
    return not wanted.isdisjoint(deps)


def normalize_path(path: str) -> str:
    text = str(path).replace(os.sep, "/")
    while text.startswith("./"):
        text = text[2:]
    return os.path.normpath(text).replace(os.sep, "/") if text else "."


# ---------------------------------------------------------------- deciding


class _Progress:
    """``idealcheck: 12/40 claims decided`` rewritten in place on stderr, then erased."""

    def __init__(self, total: int, stream: TextIO | None, after: float = 1.0) -> None:
        self.total = total
        self.stream = stream
        self.done = 0
        self.start = time.monotonic()
        self.after = after
        self.last = 0.0
        self.shown = False

    def step(self, count: int = 1) -> None:
        self.done += count
        if self.stream is None:
            return
        now = time.monotonic()
        if now - self.start < self.after or (now - self.last < 0.1 and self.done < self.total):
            return
        self.last = now
        self.shown = True
        self.stream.write(f"\ridealcheck: {self.done}/{self.total} claims decided")
        self.stream.flush()

    def finish(self) -> None:
        if self.stream is not None and self.shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()


def _decide_all(
    pending: list[tuple[int, Claim, Any]], options: RunOptions, progress: _Progress
) -> dict[int, tuple[Verdict, bool]]:
    """index -> (verdict, stored in the cache) for every pending claim."""
    results: dict[int, tuple[Verdict, bool]] = {}
    if not pending:
        return results
    if options.in_process:
        for index, claim, slot in pending:
            results[index] = cached_or_decided(claim, slot, options.timeout, options.memory_mb, options.decider)
            progress.step()
        return results
    jobs = [Job("decide", (claim, slot), options.timeout) for _index, claim, slot in pending]

    def on_limit(position: int, job: Job, limit: Limit | None, reason: str, seconds: float) -> tuple[Verdict, bool]:
        claim = job.payload[0]
        return limit_verdict(claim, reason, seconds, limit, "inconclusive" if limit is not None else "error"), False

    done = run_in_workers(jobs, options.pool(), on_limit, progress.step, perform=perform, unsendable=unsendable)
    for position, (index, _claim, _slot) in enumerate(pending):
        results[index] = done[position]
    return results


def run_limited(function: str, calls: Sequence[tuple[Any, ...]], options: RunOptions,
                fallback: Callable[[tuple[Any, ...], str], Any]) -> list[Any]:
    """``function(*args)`` ("module:function") for every ``args`` of ``calls``, each in a worker under the
    claim's time and memory limits; a call that fails or overruns gets ``fallback(args, why)``."""
    if options.in_process:
        outcomes = [perform(Job("call", (function, args), options.timeout), options.pool()) for args in calls]
    else:
        jobs = [Job("call", (function, args), options.timeout) for args in calls]

        def on_limit(index: int, job: Job, limit: Limit | None, reason: str, seconds: float) -> Any:
            return ("limit", reason)

        done = run_in_workers(jobs, options.pool(), on_limit, perform=perform, unsendable=unsendable)
        outcomes = [done[i] for i in range(len(jobs))]
    return [value if status == "ok" else fallback(args, value) for (status, value), args in zip(outcomes, calls)]


def _slot(cache: VerdictCache, claim: Claim) -> Any:
    try:
        return cache.slot(claim)
    except (RecursionError, ValueError, MemoryError):  # a claim too deep or too long to key: not cached
        return None


def run(claims: Sequence[Claim], options: RunOptions = RunOptions()) -> list[Verdict]:
    """Decide ``claims`` and return one verdict per claim, in the order given.

    Claims that carry a problem are answered directly; the others go to worker processes, which first
    read the cache (re-checking what they read, so that this work is spread over the cores too) and
    otherwise decide the claim and store the result.
    """
    stream = sys.stderr if options.progress else None
    progress = _Progress(len(claims), stream, options.progress_after)
    verdicts: dict[int, Verdict] = {}
    pending: list[tuple[int, Claim, Any]] = []
    for index, claim in enumerate(claims):
        if claim.problem is not None:
            verdicts[index] = problem_verdict(claim)
            progress.step()
            continue
        slot = _slot(options.cache, claim) if options.cache is not None else None
        pending.append((index, claim, slot))
    try:
        done = _decide_all(pending, options, progress)
    finally:
        progress.finish()
    for index, (verdict, stored) in done.items():
        verdicts[index] = verdict
        if options.cache is not None:
            options.cache.record(verdict, stored=stored)
    return [verdicts[i] for i in range(len(claims))]


# ---------------------------------------------------------------- the whole check: discover -> extract -> decide


@dataclass(frozen=True)
class CheckRequest:
    """What ``idealcheck check`` was asked to do, with the command line already merged into the config."""

    config: Config
    cwd: str = "."
    paths: tuple[str, ...] = (".",)
    staged: bool = False  # read texts from the git index; only claims touched by staged files
    since: str | None = None  # only claims touched by files changed since this git revision
    shard: tuple[int, int] | None = None
    cache_dir: str | None = None  # None: no cache
    options: RunOptions = RunOptions()
    on_inconclusive: str = "fail"  # cached inconclusive results are reused only when they fail the run
    baseline: Baseline | None = None  # accepted known results (``pipeline.baseline``)


def _relative(path: str, cwd: str) -> str:
    return relative_path(path, cwd)


def _under(path: str, directory: str) -> bool:
    return directory == "." or path == directory or path.startswith(directory.rstrip("/") + "/")


def gather_claims(request: CheckRequest, *, stale_out: list[StaleEntry] | None = None,
                  notes_out: list[CacheNote] | None = None,
                  ) -> tuple[list[Claim], dict[str, str], tuple[Skipped, ...]]:
    """The selected claims of a request (changed-only filters and shard applied), the texts read and
    what was left out unread.  With a baseline, its accepted verdicts are attached before any selection,
    and its entries that match no claim found go to ``stale_out``; extraction-cache entries that could
    not be used go to ``notes_out``.

    File arguments (as a hook passes them) select the claims whose dependencies include one of those
    files, so the project root is scanned too: a claim elsewhere that inlines a function of a changed
    file is re-checked.  Directory arguments select every claim under them.
    """
    from verifier.pipeline import discover

    cwd = request.cwd
    config = request.config
    args = [_relative(p, cwd) for p in request.paths] or ["."]
    directories = [p for p in args if os.path.isdir(os.path.join(cwd, p))]
    files = [p for p in args if p not in directories]
    scan = list(directories) + list(files)
    root = _relative(str(config.root), cwd)
    if files and not any(_under(root, d) for d in directories):
        scan.append(root)
    discovery = discover.collect(
        tuple(scan),
        include=config.include,
        exclude=config.exclude,
        cwd=cwd,
        source="staged" if request.staged else "worktree",
        max_file_bytes=max_file_bytes(config),
        on_claims=lambda: warm_up_workers(request.options),  # a tree without claims never starts them
    )
    roots = tuple(dict.fromkeys(directories + [root] if files or not directories else directories))
    context = ExtractionContext(named_conditions=config.conditions, roots=roots)
    texts = {normalize_path(str(f.path)): f.text for f in discovery.files if f.text is not None}
    cache = extraction_cache(request)
    claims = collect_claims(discovery, context, options=request.options, cache=cache)
    if cache is not None and notes_out is not None:
        notes_out.extend(cache.notes)
    claims = with_file_notes(claims, dict(discovery.notes))
    unique: dict[str, Claim] = {}
    for claim in claims:
        unique.setdefault(claim.id, claim)
    claims = list(unique.values())
    if request.baseline is not None:
        claims, stale = apply_baseline(claims, request.baseline, cwd, scan)
        if stale_out is not None:
            stale_out.extend(stale)
    if files:
        claims = [
            c for c in claims
            if depends_on(c, files) or any(_under(normalize_path(c.location.path), d) for d in directories)
        ]
    if request.staged:
        changed = {_relative(p, cwd) for p in discover.staged_paths(cwd)}
        claims = [c for c in claims if depends_on(c, changed)]
    if request.since is not None:
        changed = {_relative(p, cwd) for p in discover.changed_since(request.since, cwd)}
        claims = [c for c in claims if depends_on(c, changed)]
    claims = select_shard(claims, request.shard)
    return claims, texts, discovery.skipped


def extraction_cache(request: CheckRequest) -> ExtractionCache | None:
    """The extraction cache beside the result cache (None with ``--no-cache`` or without a secret)."""
    if request.cache_dir is None:
        return None
    from verifier.pipeline.extraction_cache import open_extraction_cache

    cache = open_extraction_cache(os.path.join(request.cwd, request.cache_dir))
    return cache if cache.usable else None


def with_file_notes(claims: list[Claim], notes: dict[str, str]) -> list[Claim]:
    """The claims with the note of their file (how a file that is not UTF-8 was read) added."""
    if not notes:
        return claims
    return [dataclasses.replace(c, notes=c.notes + (notes[c.location.path],)) if c.location.path in notes else c
            for c in claims]


def max_file_bytes(config: Config) -> int:
    kilobytes = config.max_file_kb
    return DEFAULT_MAX_FILE_BYTES if kilobytes is None else kilobytes * 1024


def warm_up_workers(options: RunOptions) -> None:
    """Start the process that forks the workers now, so that its imports overlap with finding the files
    (discovery calls this when it reads the first file holding claims)."""
    if options.in_process:
        return
    # function-level import: the process pool (multiprocessing) loads only once a file holds claims
    from verifier.pipeline.workers import worker_context

    ctx = worker_context()
    if ctx.get_start_method() == "forkserver":
        from multiprocessing import forkserver

        try:
            forkserver.ensure_running()
        except (OSError, ValueError, EOFError):  # the workers will start it themselves (or report why not)
            pass


def check(request: CheckRequest) -> list[Verdict]:
    """Run a whole check and return the verdicts (in the order the claims were found)."""
    return list(check_run(request).verdicts)


def with_cache(request: CheckRequest) -> tuple[RunOptions, tuple[Skipped, ...]]:
    """The request's run options with the result cache of ``request.cache_dir`` (unchanged without one),
    and the cache folder as a skipped entry when it is refused."""
    options = request.options
    if request.cache_dir is None:
        return options, ()
    from verifier import __version__
    from verifier.pipeline.cache import ResultCache

    cache = ResultCache(
        os.path.join(request.cwd, request.cache_dir),
        version=__version__,
        conditions=request.config.conditions,
        limits=(options.timeout, options.memory_mb),
        reuse_inconclusive=request.on_inconclusive == "fail",
    )
    if cache.refused is not None:
        return options, (Skipped(normalize_path(request.cache_dir) + "/", "cache", cache.refused),)
    return dataclasses.replace(options, cache=cache), ()


def check_run(request: CheckRequest, *, texts_out: dict[str, str] | None = None,
              stale_out: list[StaleEntry] | None = None, notes_out: list[CacheNote] | None = None) -> RunResult:
    """Run a whole check: the verdicts (in the order the claims were found) and what was not read.

    ``texts_out``, when given, receives the texts of the files read (the command line warns about
    misspelt claim markers in them); ``stale_out`` the baseline's stale entries; ``notes_out`` the
    extraction-cache entries that could not be used."""
    allow_long_integers()
    claims, texts, skipped = gather_claims(request, stale_out=stale_out, notes_out=notes_out)
    if texts_out is not None:
        texts_out.update(texts)
    options, refused = with_cache(request)
    return RunResult(tuple(run(claims, options)), skipped + refused)
