"""Worker processes with time and memory limits: every piece of work on a claim runs in one of them.

Reading the claims of a file (including the symbolic execution of Python functions) and deciding a claim
are jobs.  Each job runs in a worker process that has an address-space limit (``RLIMIT_AS``) and is
killed when its CPU time overruns the job's time limit by more than a grace period (read from
``/proc/PID/stat``; wall time where that is not available), or when its wall time passes
``WALL_SAFETY_FACTOR`` times the limit (a job blocked in a wait): a busy machine does not change verdicts; a job whose worker dies or overruns
gets a result from ``on_limit`` naming the limit, and the remaining jobs still run (a new worker replaces
the dead one).  Results come back keyed by the job's index, whatever the number of workers.

A worker is considered dead when its end of the pipe closes, not when the fork server says so: a fork
server that dies must not make live workers look dead.  A worker that cannot be started (the fork server
is gone, no file descriptors are left) is retried, then started another way; when none can be started at
all, the jobs left get ``on_limit`` results saying why.  Workers ignore Ctrl-C: the parent handles it,
kills them and reports one interruption.

The jobs, their settings and the limit messages are plain data in ``job.py``: the runner and the command
line use them without loading this module's process machinery.

Workers start from a ``forkserver`` that has already imported the algebra and the claim readers (cheap
to start, and no fork of a parent that may hold threads); where that context is missing they are spawned.
"""
from __future__ import annotations

import multiprocessing
import os
import pickle
import signal
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from multiprocessing.connection import Connection, wait
from typing import Any

from verifier.model.limits import WALL_SAFETY_FACTOR
from verifier.model.verdict import Limit
from verifier.pipeline.job import (
    Job,
    OnLimit,
    Perform,
    PoolSettings,
    Unsendable,
    allow_long_integers,
    memory_limit_reason,
    time_limit_reason,
)

START_ATTEMPTS = 3
DESCRIPTORS_PER_WORKER = 4  # pipe ends and sentinel here, the child's descriptor in the fork server
DESCRIPTOR_RESERVE = 10  # for the fork server's own connections and the files the parent reads
FORKSERVER_DESCRIPTORS = 24  # with fewer free, workers are spawned: a fork server short of them crashes
PRELOAD = ["verifier.pipeline.preload", "verifier.pipeline.workers", "verifier.algebra.decide", "verifier.claims"]


def limit_memory(memory_mb: int) -> None:
    try:
        import resource
    except ImportError:  # not on this platform: the time limit still holds
        return
    try:
        limit = memory_mb * 1024 * 1024
        _soft, hard = resource.getrlimit(resource.RLIMIT_AS)
        if hard != resource.RLIM_INFINITY:
            limit = min(limit, hard)
        resource.setrlimit(resource.RLIMIT_AS, (limit, hard))
    except (ValueError, OSError, OverflowError):
        pass


# ---------------------------------------------------------------- worker side




def _worker_main(conn: Connection, settings: PoolSettings, perform: Perform, unsendable: Unsendable) -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent handles Ctrl-C and ends the workers
    allow_long_integers()
    limit_memory(settings.memory_mb)
    while True:
        try:
            task = conn.recv()
        except (EOFError, OSError):
            return
        except Exception:  # a task that cannot be read: the parent times it out and starts a new worker
            continue
        if task is None:
            return
        index, job = task
        result = perform(job, settings)
        try:
            data = pickle.dumps((index, result), protocol=pickle.HIGHEST_PROTOCOL)
        except Exception as exc:  # RecursionError, a number too long to write, MemoryError ...
            try:
                data = pickle.dumps((index, unsendable(job, result, exc, settings)), protocol=pickle.HIGHEST_PROTOCOL)
            except Exception:
                data = pickle.dumps((index, None))  # the parent reports the job as not passed back
        try:
            conn.send_bytes(data)
        except (OSError, ValueError):
            return


# ---------------------------------------------------------------- parent side


def worker_context() -> multiprocessing.context.BaseContext:
    methods = multiprocessing.get_all_start_methods()
    free = _free_descriptors()
    if "forkserver" in methods and (free is None or free >= FORKSERVER_DESCRIPTORS):
        ctx = multiprocessing.get_context("forkserver")
        ctx.set_forkserver_preload(PRELOAD)
        return ctx
    return multiprocessing.get_context("spawn")


@dataclass
class _Worker:
    process: Any
    conn: Connection
    task: tuple[int, Job] | None = None
    started: float = 0.0
    cpu_started: float | None = None  # the worker's CPU seconds when it was given its task


class _Pool:
    def __init__(self, settings: PoolSettings, perform: Perform, unsendable: Unsendable) -> None:
        self.settings = settings
        self.perform = perform
        self.unsendable = unsendable
        self.ctx = worker_context()
        self.workers: list[_Worker] = []
        self.start_error: str | None = None

    def _start_once(self, ctx: Any) -> _Worker:
        parent, child = ctx.Pipe(duplex=True)
        try:
            process = ctx.Process(target=_worker_main, args=(child, self.settings, self.perform, self.unsendable),
                                  daemon=True)
            process.start()
        except BaseException:
            parent.close()
            raise
        finally:
            child.close()
        return _Worker(process, parent)

    def start_worker(self) -> _Worker | None:
        """A new worker, or None when none can be started (``start_error`` says why)."""
        for attempt in range(START_ATTEMPTS + 1):
            if attempt == START_ATTEMPTS:
                self.ctx = multiprocessing.get_context("spawn")  # no fork server at all
            try:
                worker = self._start_once(self.ctx)
            except (OSError, EOFError, ValueError, RuntimeError) as exc:
                self.start_error = f"{type(exc).__name__}: {getattr(exc, 'strerror', None) or exc}"
                time.sleep(0.05 * (attempt + 1))  # a dying fork server is restarted once it is gone
                continue
            self.workers.append(worker)
            return worker
        return None

    def retire(self, worker: _Worker) -> None:
        self.workers.remove(worker)
        try:
            if worker.process.is_alive():
                worker.process.kill()
            worker.process.join(timeout=5)
        except (OSError, ValueError):
            pass
        worker.conn.close()

    def close(self, *, at_once: bool = False) -> None:
        if not at_once:
            for worker in list(self.workers):
                try:
                    worker.conn.send(None)
                except (OSError, ValueError):
                    pass
        deadline = time.monotonic() + (0.0 if at_once else 2.0)
        for worker in list(self.workers):
            try:
                worker.process.join(timeout=max(0.0, deadline - time.monotonic()))
                if worker.process.is_alive():
                    worker.process.kill()
                    worker.process.join(timeout=5)
            except (OSError, ValueError):
                pass
            worker.conn.close()
        self.workers.clear()


def _died_reason(exitcode: int | None, memory_mb: int) -> tuple[Limit | None, str]:
    if exitcode is not None and exitcode < 0:
        # A worker that is killed by a signal it did not ask for has almost always hit its address-space
        # limit inside native code (allocation failure) or been chosen by the kernel's out-of-memory killer.
        return "memory", f"{memory_limit_reason(memory_mb)} (the worker process ended with signal {-exitcode})"
    return None, f"the worker process ended unexpectedly (exit status {exitcode})"


_CLOCK_TICKS = os.sysconf("SC_CLK_TCK") if hasattr(os, "sysconf") and "SC_CLK_TCK" in os.sysconf_names else 100


def process_cpu_seconds(pid: int | None) -> float | None:
    """User plus system CPU seconds of process ``pid`` (Linux ``/proc``), None where they cannot be read."""
    if pid is None:
        return None
    try:
        with open(f"/proc/{pid}/stat", "rb") as handle:
            fields = handle.read().rsplit(b")", 1)[1].split()
        return (int(fields[11]) + int(fields[12])) / _CLOCK_TICKS  # utime, stime (fields 14 and 15)
    except (OSError, IndexError, ValueError):
        return None


def _left(worker: _Worker, grace: float, now: float) -> float:
    """Seconds left before the worker overruns its task: CPU seconds against the time limit, wall seconds
    against the safety net (wall seconds against the limit where CPU time cannot be read)."""
    assert worker.task is not None
    seconds = worker.task[1].seconds
    wall_left = worker.started + seconds * WALL_SAFETY_FACTOR + grace - now
    cpu_now = process_cpu_seconds(worker.process.pid) if worker.cpu_started is not None else None
    if cpu_now is None or worker.cpu_started is None:
        return min(wall_left, worker.started + seconds + grace - now)
    return min(wall_left, seconds + grace - (cpu_now - worker.cpu_started))


def _free_descriptors() -> int | None:
    """File descriptors this process may still open (None: no limit known)."""
    try:
        import resource

        soft, _hard = resource.getrlimit(resource.RLIMIT_NOFILE)
    except (ImportError, OSError, ValueError):
        return None
    if soft == resource.RLIM_INFINITY:
        return None
    try:
        used = len(os.listdir("/proc/self/fd"))
    except OSError:
        used = 16  # a guess where the count is not available
    return soft - used


def descriptor_budget(size: int) -> int:
    """At most ``size`` workers, fewer when the open-file limit would not hold them all: each worker holds
    descriptors here and in the fork server, and running out makes both fail (``ulimit -n`` in CI)."""
    free = _free_descriptors()
    if free is None:
        return size
    return max(1, min(size, (free - DESCRIPTOR_RESERVE) // DESCRIPTORS_PER_WORKER))


def run_jobs(jobs: Sequence[Job], settings: PoolSettings, on_limit: OnLimit,
             on_done: Callable[[], None] = lambda: None, *, perform: Perform,
             unsendable: Unsendable) -> dict[int, Any]:
    """index -> result of every job (in ``jobs`` order by index), each run in a limited worker process."""
    results: dict[int, Any] = {}
    if not jobs:
        return results
    size = descriptor_budget(max(1, min(settings.jobs or os.cpu_count() or 1, len(jobs))))
    pool = _Pool(settings, perform, unsendable)
    queue = list(reversed(list(enumerate(jobs))))  # pop() from the end takes the jobs in order
    interrupted = False
    try:
        for _ in range(size):
            if pool.start_worker() is None:
                break
        while queue or any(w.task is not None for w in pool.workers):
            if not pool.workers and pool.start_worker() is None:
                reason = f"no worker process could be started ({pool.start_error})"
                while queue:
                    index, job = queue.pop()
                    results[index] = on_limit(index, job, None, reason, 0.0)
                    on_done()
                break
            _hand_out(pool, queue, results, on_limit, on_done)
            _collect(pool, queue, results, settings, on_limit, on_done)
    except KeyboardInterrupt:
        interrupted = True
        raise
    finally:
        pool.close(at_once=interrupted)
    return results


def _hand_out(pool: _Pool, queue: list[tuple[int, Job]], results: dict[int, Any], on_limit: OnLimit,
              on_done: Callable[[], None]) -> None:
    for worker in pool.workers:
        if worker.task is None and queue:
            index, job = queue.pop()
            try:
                data = pickle.dumps((index, job), protocol=pickle.HIGHEST_PROTOCOL)
            except Exception as exc:  # the job itself cannot be passed on (nested too deeply ...)
                results[index] = on_limit(index, job, None, f"the work cannot be passed to a worker: {exc}", 0.0)
                on_done()
                continue
            worker.task = (index, job)
            worker.started = time.monotonic()
            worker.cpu_started = process_cpu_seconds(worker.process.pid)
            try:
                worker.conn.send_bytes(data)
            except (OSError, ValueError):  # the worker died before taking work: its pipe reports it
                pass


def _collect(pool: _Pool, queue: list[tuple[int, Job]], results: dict[int, Any], settings: PoolSettings,
             on_limit: OnLimit, on_done: Callable[[], None]) -> None:
    busy = [w for w in pool.workers if w.task is not None]
    if not busy:
        return
    now = time.monotonic()
    # CPU time grows at most as fast as wall time: what is left of the CPU budget is a safe wait
    wait_for = max(0.005, min(_left(w, settings.kill_grace, now) for w in busy))
    ready = wait([w.conn for w in busy], timeout=wait_for)
    now = time.monotonic()
    for worker in busy:
        assert worker.task is not None
        index, job = worker.task
        limit, reason = None, ""
        if worker.conn in ready:
            try:
                got_index, result = worker.conn.recv()
            except (EOFError, OSError):
                try:
                    worker.process.join(timeout=1)
                except (OSError, ValueError):
                    pass
                limit, reason = _died_reason(worker.process.exitcode, settings.memory_mb)
            except Exception as exc:  # a result that cannot be read back (too deep, too long a number)
                results[index] = on_limit(index, job, None, f"the result cannot be read back: {exc}",
                                          now - worker.started)
                worker.task = None
                on_done()
                continue
            else:
                if got_index == index and result is None:
                    results[index] = on_limit(index, job, None, "the result cannot be passed back",
                                              now - worker.started)
                    worker.task = None
                    on_done()
                    continue
                if got_index == index:
                    results[index] = result
                    worker.task = None
                    on_done()
                    continue
                reason = "the worker process answered out of turn"
        elif _left(worker, settings.kill_grace, now) <= 0:
            limit, reason = "time", time_limit_reason(job.seconds)
            if now - worker.started >= job.seconds * WALL_SAFETY_FACTOR + settings.kill_grace:
                reason += f" (wall-clock safety net of {job.seconds * WALL_SAFETY_FACTOR:g} s)"
        else:
            continue
        results[index] = on_limit(index, job, limit, reason, now - worker.started)
        worker.task = None
        on_done()
        pool.retire(worker)
        if queue:
            pool.start_worker()
