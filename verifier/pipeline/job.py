"""One piece of work for a worker process and the limits it runs under: plain data and messages, no process
machinery (that is ``workers.py``, which loads multiprocessing: a run without claims has no job and loads
none of it).
"""
from __future__ import annotations

import sys
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from verifier.model.verdict import Limit

# Seconds a worker may run past the job's own time limit before it is killed: ``decide`` checks its
# deadline itself and normally returns in time (with a more specific reason); the kill is for a single
# long step (one huge expansion) that does not come back to a deadline check.
KILL_GRACE_SECONDS = 0.25
# Digits an integer may have when it is converted to or from text (Python's default is 4300).  Claims may
# hold long exact constants; every conversion in a worker is bounded by the worker's limits, and a
# constant past this many digits is reported on its claim.
MAX_INTEGER_DIGITS = 100_000
# The largest memory limit the address-space limit can express (bytes in a signed 64-bit number).
MAX_MEMORY_MB = (2**63 - 1) // (1024 * 1024)


@dataclass(frozen=True)
class Job:
    kind: str  # a key of the worker's job table (``jobs.JOB_KINDS``)
    payload: tuple[Any, ...]
    seconds: float  # time limit of the job (the worker is killed after it plus the grace period)


@dataclass(frozen=True)
class PoolSettings:
    timeout: float  # seconds per claim, handed to the job
    memory_mb: int
    jobs: int | None
    kill_grace: float
    decider: str


OnLimit = Callable[[int, Job, "Limit | None", str, float], Any]


def allow_long_integers() -> None:
    setter = getattr(sys, "set_int_max_str_digits", None)  # Python 3.10.7 and later
    if setter is not None:
        setter(MAX_INTEGER_DIGITS)


def time_limit_reason(timeout: float) -> str:
    return f"time limit of {timeout:g} s exceeded"


def memory_limit_reason(memory_mb: int) -> str:
    return f"memory limit of {memory_mb} MB exceeded"


# What a worker does with a job, and what it sends back when the result cannot be serialised; given by
# the caller (``pipeline.jobs``) so that the pool knows nothing of the kinds of work it runs.
Perform = Callable[[Job, PoolSettings], Any]
Unsendable = Callable[[Job, Any, BaseException, PoolSettings], Any]
