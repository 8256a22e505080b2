"""Run orchestration: claims -> verdicts in worker processes with time and memory limits, plus the cache.

Every claim is decided in a worker process that has an address-space limit (``RLIMIT_AS``) and is killed
when it overruns its time limit by more than a grace period; a claim whose worker dies or overruns gets an
``inconclusive`` verdict with the limit named, and the remaining claims are still decided (a new worker
replaces the dead one).  Verdicts come back in the order of the claims given, whatever the number of
workers, so a parallel run reports exactly what a serial one does.

Workers start from a ``forkserver`` that has already imported the algebra (cheap to start, and no fork
of a parent that may hold threads); where that context is missing they are spawned.
"""
from __future__ import annotations

import dataclasses
import hashlib
import multiprocessing
import os
import sys
import time
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field
from multiprocessing.connection import Connection, wait
from typing import Any, Protocol, TextIO

from verifier.model.claim import Claim, FileProblem, Problem
from verifier.model.verdict import Verdict

# Seconds a worker may run past the claim's own time limit before it is killed: ``decide`` checks its
# deadline itself and normally returns in time (with a more specific reason); the kill is for a single
# long step (one huge expansion) that does not come back to a deadline check.
KILL_GRACE_SECONDS = 0.25
DEFAULT_DECIDER = "verifier.pipeline.runner:decide_with_engine"


class VerdictCache(Protocol):
    """What the runner needs of a cache (``cache.ResultCache``): a plain-data slot per claim that the
    worker reads (re-checking every proof and witness) before deciding and writes after."""

    def slot(self, claim: Claim) -> Any: ...

    def record(self, verdict: Verdict, *, stored: bool) -> None: ...


@dataclass(frozen=True)
class RunOptions:
    timeout: float = 10.0  # seconds per claim
    memory_mb: int = 2048  # address-space limit of each worker process
    jobs: int | None = None  # worker processes; None = number of cores
    cache: VerdictCache | None = field(default=None, compare=False)
    progress: bool = False  # a progress line on stderr (the command line sets it when stderr is a terminal)
    progress_after: float = 1.0  # seconds before the line appears: short runs stay quiet
    kill_grace: float = KILL_GRACE_SECONDS
    in_process: bool = False  # decide in this process, without limits (debugging and tests only)
    decider: str = DEFAULT_DECIDER  # "module:function" taking (claim, timeout) -> Verdict; tests swap it


# ---------------------------------------------------------------- claims from files


def file_problem_claim(problem: FileProblem) -> Claim:
    """A pseudo-claim standing for a file that could not be read, so that it is reported as ``error``."""
    loc = problem.location
    return Claim(
        id=f"{loc.path}:{loc.line}:{loc.column}",
        location=loc,
        kind="expression",
        text="(file could not be read)",
        problem=Problem("error", problem.message),
        dependencies=(loc.path,),
    )


def collect_claims(discovery: Any, context: Any, *, extract: Callable[..., list[Claim]] | None = None) -> list[Claim]:
    """Every claim in the files of ``discovery`` (a ``discover.Discovery``), plus pseudo-claims for its problems.

    An unexpected failure of the extractor on one file becomes an ``error`` for that file; the other files
    are still read.
    """
    from verifier.model.claim import Location

    if extract is None:
        from verifier.claims import extract as extract_claims

        extract = extract_claims
    claims: list[Claim] = [file_problem_claim(p) for p in discovery.problems]
    for source in discovery.files:
        path = str(source.path)
        try:
            claims.extend(extract(path, source.text, context))
        except RecursionError:
            claims.append(file_problem_claim(FileProblem(Location(path, 1, 1), "the file is nested too deeply to read")))
        except Exception as exc:  # a bug in the extractor must not hide the other files
            message = f"internal error while reading claims: {type(exc).__name__}: {exc}"
            claims.append(file_problem_claim(FileProblem(Location(path, 1, 1), message)))
    return claims


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
    digest = hashlib.sha256(claim_id.encode("utf-8")).digest()
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


# ---------------------------------------------------------------- verdicts without the algebra


def limit_verdict(claim: Claim, reason: str, seconds: float) -> Verdict:
    return Verdict(claim, "inconclusive", None, reason, None, None, (), round(seconds, 3))


def time_limit_reason(timeout: float) -> str:
    return f"time limit of {timeout:g} s exceeded"


def memory_limit_reason(memory_mb: int) -> str:
    return f"memory limit of {memory_mb} MB exceeded"


def problem_verdict(claim: Claim) -> Verdict:
    assert claim.problem is not None
    return Verdict(claim, claim.problem.verdict, None, claim.problem.message, None, None, (), 0.0)


# ---------------------------------------------------------------- worker side


def _limit_memory(memory_mb: int) -> None:
    try:
        import resource
    except ImportError:  # not on this platform: the time limit still holds
        return
    limit = memory_mb * 1024 * 1024
    try:
        _soft, hard = resource.getrlimit(resource.RLIMIT_AS)
        if hard != resource.RLIM_INFINITY:
            limit = min(limit, hard)
        resource.setrlimit(resource.RLIMIT_AS, (limit, hard))
    except (ValueError, OSError):
        pass


def _resolve(decider: str) -> Callable[..., Verdict]:
    import importlib

    module_name, _, function_name = decider.partition(":")
    return getattr(importlib.import_module(module_name), function_name)


def decide_with_engine(claim: Claim, timeout: float) -> Verdict:
    from verifier.algebra.decide import Limits, decide

    return decide(claim, Limits(timeout=timeout))


def decide_guarded(claim: Claim, timeout: float, memory_mb: int, decider: str = DEFAULT_DECIDER) -> Verdict:
    """``decide`` with the failures that must not escape turned into verdicts."""
    start = time.monotonic()
    try:
        return _resolve(decider)(claim, timeout)
    except MemoryError:
        return limit_verdict(claim, memory_limit_reason(memory_mb), time.monotonic() - start)
    except RecursionError:
        return limit_verdict(claim, "the expression is nested too deeply to decide", time.monotonic() - start)
    except Exception as exc:  # an engine bug is reported on its claim, never as a crash of the run
        reason = f"internal error in the decision procedure: {type(exc).__name__}: {exc}"
        return Verdict(claim, "error", None, reason, None, None, (), round(time.monotonic() - start, 3))


def cached_or_decided(claim: Claim, slot: Any, timeout: float, memory_mb: int,
                      decider: str = DEFAULT_DECIDER) -> tuple[Verdict, bool]:
    """(verdict, stored): the re-checked cached verdict if there is one, else a fresh decision (then stored)."""
    if slot is not None:
        from verifier.pipeline.cache import load_entry

        start = time.monotonic()
        try:
            cached = load_entry(claim, slot)
        except MemoryError:
            return limit_verdict(claim, memory_limit_reason(memory_mb), time.monotonic() - start), False
        except Exception:  # a cache that cannot be read is a miss, never a failure
            cached = None
        if cached is not None:
            return cached, False
    verdict = decide_guarded(claim, timeout, memory_mb, decider)
    stored = False
    if slot is not None:
        from verifier.pipeline.cache import store_entry

        try:
            stored = store_entry(claim, verdict, slot)
        except Exception:
            stored = False
    return verdict, stored


def _worker_main(conn: Connection, timeout: float, memory_mb: int, decider: str) -> None:
    _limit_memory(memory_mb)
    while True:
        try:
            task = conn.recv()
        except (EOFError, OSError):
            return
        if task is None:
            return
        index, claim, slot = task
        verdict, stored = cached_or_decided(claim, slot, timeout, memory_mb, decider)
        try:
            conn.send((index, verdict, stored))
        except MemoryError:
            conn.send((index, limit_verdict(claim, memory_limit_reason(memory_mb), verdict.seconds), False))


# ---------------------------------------------------------------- parent side


def _context() -> multiprocessing.context.BaseContext:
    methods = multiprocessing.get_all_start_methods()
    if "forkserver" in methods:
        ctx = multiprocessing.get_context("forkserver")
        ctx.set_forkserver_preload(["verifier.pipeline.runner", "verifier.algebra.decide"])
        return ctx
    return multiprocessing.get_context("spawn")


@dataclass
class _Worker:
    process: Any
    conn: Connection
    task: tuple[int, Claim, Any] | None = None
    started: float = 0.0


class _Pool:
    def __init__(self, options: RunOptions, size: int) -> None:
        self.options = options
        self.size = size
        self.ctx = _context()
        self.workers: list[_Worker] = []

    def start_worker(self) -> _Worker:
        parent, child = self.ctx.Pipe(duplex=True)
        process = self.ctx.Process(
            target=_worker_main, args=(child, self.options.timeout, self.options.memory_mb, self.options.decider), daemon=True
        )
        process.start()
        child.close()
        worker = _Worker(process, parent)
        self.workers.append(worker)
        return worker

    def retire(self, worker: _Worker) -> None:
        self.workers.remove(worker)
        if worker.process.is_alive():
            worker.process.kill()
        worker.process.join(timeout=5)
        worker.conn.close()

    def close(self) -> None:
        for worker in list(self.workers):
            try:
                worker.conn.send(None)
            except (OSError, BrokenPipeError):
                pass
        deadline = time.monotonic() + 2
        for worker in list(self.workers):
            worker.process.join(timeout=max(0.0, deadline - time.monotonic()))
            if worker.process.is_alive():
                worker.process.kill()
                worker.process.join(timeout=5)
            worker.conn.close()
        self.workers.clear()


def _died_reason(exitcode: int | None, memory_mb: int) -> str:
    if exitcode is not None and exitcode < 0:
        # A worker that is killed by a signal it did not ask for has almost always hit its address-space
        # limit inside native code (allocation failure) or been chosen by the kernel's out-of-memory killer.
        return f"{memory_limit_reason(memory_mb)} (the worker process ended with signal {-exitcode})"
    return f"the worker process ended unexpectedly (exit status {exitcode})"


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
    size = max(1, min(options.jobs or os.cpu_count() or 1, len(pending)))
    pool = _Pool(options, size)
    queue = list(reversed(pending))  # pop() from the end takes the claims in order
    try:
        for _ in range(size):
            pool.start_worker()
        while queue or any(w.task is not None for w in pool.workers):
            for worker in pool.workers:
                if worker.task is None and queue:
                    worker.task = queue.pop()
                    worker.started = time.monotonic()
                    try:
                        worker.conn.send(worker.task)
                    except OSError:  # the worker died before taking work: its sentinel reports it below
                        pass
            busy = [w for w in pool.workers if w.task is not None]
            now = time.monotonic()
            limit = options.timeout + options.kill_grace
            wait_for = max(0.0, min(w.started + limit for w in busy) - now) if busy else 0.0
            ready = wait([obj for w in busy for obj in (w.conn, w.process.sentinel)], timeout=wait_for)
            now = time.monotonic()
            for worker in list(busy):
                assert worker.task is not None
                index, claim, _slot = worker.task
                if worker.conn in ready:
                    try:
                        got_index, verdict, stored = worker.conn.recv()
                    except (EOFError, OSError, ValueError, TypeError):
                        got_index, verdict, stored = None, None, False
                    if got_index == index and isinstance(verdict, Verdict):
                        results[index] = (verdict, bool(stored))
                        worker.task = None
                        progress.step()
                        continue
                if worker.process.sentinel in ready or worker.conn in ready or not worker.process.is_alive():
                    worker.process.join(timeout=5)
                    reason = _died_reason(worker.process.exitcode, options.memory_mb)
                    results[index] = (limit_verdict(claim, reason, now - worker.started), False)
                elif now - worker.started >= limit:
                    timed_out = limit_verdict(claim, time_limit_reason(options.timeout), now - worker.started)
                    results[index] = (timed_out, False)
                else:
                    continue
                worker.task = None
                progress.step()
                pool.retire(worker)
                if queue:
                    pool.start_worker()
    finally:
        pool.close()
    return results


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
        slot = options.cache.slot(claim) if options.cache is not None else None
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

    config: Any  # verifier.pipeline.config.Config
    cwd: str = "."
    paths: tuple[str, ...] = (".",)
    staged: bool = False  # read texts from the git index; only claims touched by staged files
    since: str | None = None  # only claims touched by files changed since this git revision
    shard: tuple[int, int] | None = None
    cache_dir: str | None = None  # None: no cache
    options: RunOptions = RunOptions()
    on_inconclusive: str = "fail"  # cached inconclusive results are reused only when they fail the run


def _relative(path: str, cwd: str) -> str:
    absolute = os.path.abspath(os.path.join(cwd, path))
    return normalize_path(os.path.relpath(absolute, os.path.abspath(cwd)))


def _under(path: str, directory: str) -> bool:
    return directory == "." or path == directory or path.startswith(directory.rstrip("/") + "/")


def gather_claims(request: CheckRequest) -> tuple[list[Claim], dict[str, str]]:
    """The selected claims of a request (changed-only filters and shard applied) and the texts read.

    File arguments (as a hook passes them) select the claims whose dependencies include one of those
    files, so the project root is scanned too: a claim elsewhere that inlines a function of a changed
    file is re-checked.  Directory arguments select every claim under them.
    """
    from verifier.pipeline import discover
    from verifier.model.claim import ExtractionContext

    cwd = request.cwd
    config = request.config
    args = [_relative(p, cwd) for p in request.paths] or ["."]
    directories = [p for p in args if os.path.isdir(os.path.join(cwd, p))]
    files = [p for p in args if p not in directories]
    scan = list(directories) + list(files)
    root = _relative(str(getattr(config, "root", cwd) or cwd), cwd)
    if files and not any(_under(root, d) for d in directories):
        scan.append(root)
    discovery = discover.collect(
        tuple(scan),
        include=tuple(getattr(config, "include", ()) or ()),
        exclude=tuple(getattr(config, "exclude", ()) or ()),
        cwd=cwd,
        source="staged" if request.staged else "worktree",
    )
    roots = tuple(dict.fromkeys(directories + [root] if files or not directories else directories))
    context = ExtractionContext(named_conditions=tuple(getattr(config, "conditions", ()) or ()), roots=roots)
    texts = {normalize_path(str(f.path)): f.text for f in discovery.files}
    claims = collect_claims(discovery, context)
    unique: dict[str, Claim] = {}
    for claim in claims:
        unique.setdefault(claim.id, claim)
    claims = list(unique.values())
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
    return claims, texts


def warm_up_workers(options: RunOptions) -> None:
    """Start the process that forks the workers now, so that its imports overlap with reading the claims."""
    if options.in_process:
        return
    ctx = _context()
    if ctx.get_start_method() == "forkserver":
        from multiprocessing import forkserver

        try:
            forkserver.ensure_running()
        except (OSError, ValueError):  # the workers will start it themselves (or report why not)
            pass


def with_cache(request: CheckRequest, texts: dict[str, str]) -> RunOptions:
    """The request's run options with the result cache of ``request.cache_dir`` (unchanged without one);
    ``texts`` are the files already read (``gather_claims``), other dependencies are read from disk."""
    options = request.options
    if request.cache_dir is None:
        return options
    from verifier import __version__
    from verifier.pipeline.cache import ResultCache

    def dependency_text(path: str) -> str | None:
        key = normalize_path(path)
        if key in texts:
            return texts[key]
        try:
            with open(os.path.join(request.cwd, key), encoding="utf-8", errors="surrogateescape") as handle:
                return handle.read()
        except OSError:
            return None

    cache = ResultCache(
        os.path.join(request.cwd, request.cache_dir),
        version=__version__,
        conditions=tuple(getattr(request.config, "conditions", ()) or ()),
        dependency_text=dependency_text,
        limits=(options.timeout, options.memory_mb),
        reuse_inconclusive=request.on_inconclusive == "fail",
    )
    return dataclasses.replace(options, cache=cache)


def check(request: CheckRequest, *, texts_out: dict[str, str] | None = None) -> list[Verdict]:
    """Run a whole check and return the verdicts (in the order the claims were found).

    ``texts_out``, when given, receives the texts of the files read (the command line warns about
    misspelt claim markers in them)."""
    warm_up_workers(request.options)
    claims, texts = gather_claims(request)
    if texts_out is not None:
        texts_out.update(texts)
    return run(claims, with_cache(request, texts))
