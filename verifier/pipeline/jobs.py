"""The work a worker process does: read the claims of one file, or decide one claim (cache first).

Every failure while handling one file or one claim becomes that file's or claim's result (``error``, or
``inconclusive`` with the limit named), never an exception that ends the run.  Results are checked to be
passable back to the parent (a claim nested too deeply to serialise is an ``error`` at its own line).
"""
from __future__ import annotations

import pickle
import time
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from verifier.model.limits import decision_clock
from verifier.model.claim import Claim, ExtractionContext, FileProblem, Location, Problem
from verifier.model.verdict import Limit, Verdict, VerdictName
from verifier.pipeline.job import Job, PoolSettings, memory_limit_reason

if TYPE_CHECKING:  # the record of reads is only a type here
    from verifier.claims.file_reads import Observation

DEFAULT_DECIDER = "verifier.pipeline.runner:decide_with_engine"
TOO_DEEP = "the claim is nested too deeply to handle"


def file_problem_claim(problem: FileProblem, verdict: str = "error", text: str | None = None) -> Claim:
    """A pseudo-claim standing for a file that could not be read (``error``) or whose claims could not be
    read within the limits (``inconclusive``), so that it is reported; ``text`` replaces its default text."""
    loc = problem.location
    default = "(claims of this file not read)" if verdict == "inconclusive" else "(file could not be read)"
    return Claim(
        id=f"{loc.path}:{loc.line}:{loc.column}",
        location=loc,
        kind="expression",
        text=text or default,
        problem=Problem("inconclusive" if verdict == "inconclusive" else "error", problem.message),
        dependencies=(loc.path,),
    )


def limit_verdict(claim: Claim, reason: str, seconds: float, limit: Limit | None = None,
                  verdict: str = "inconclusive") -> Verdict:
    name: VerdictName = "inconclusive" if verdict == "inconclusive" else "error"
    return Verdict(claim, name, None, reason, None, None, (), round(seconds, 3), limit=limit)


def problem_verdict(claim: Claim) -> Verdict:
    assert claim.problem is not None
    return Verdict(claim, claim.problem.verdict, None, claim.problem.message, None, None, (), 0.0)


# ---------------------------------------------------------------- deciding


def _resolve(decider: str) -> Callable[..., Verdict]:
    import importlib

    module_name, _, function_name = decider.partition(":")
    return getattr(importlib.import_module(module_name), function_name)


def decide_guarded(claim: Claim, timeout: float, memory_mb: int, decider: str = DEFAULT_DECIDER) -> Verdict:
    """``decide`` with the failures that must not escape turned into verdicts.

    A verdict that is not decisive and came back after the time limit ran out hit that limit: it is
    marked so (``limit="time"``), whatever its reason says, and is therefore never cached.
    """
    start = time.monotonic()
    cpu_start = decision_clock()
    try:
        verdict = _resolve(decider)(claim, timeout)
    except MemoryError:
        return limit_verdict(claim, memory_limit_reason(memory_mb), time.monotonic() - start, "memory")
    except RecursionError:
        return limit_verdict(claim, "the expression is nested too deeply to decide", time.monotonic() - start)
    except Exception as exc:  # an engine bug is reported on its claim, never as a crash of the run
        reason = f"internal error in the decision procedure: {type(exc).__name__}: {exc}"
        return limit_verdict(claim, reason, time.monotonic() - start, verdict="error")
    if (verdict.limit is None and verdict.verdict == "inconclusive"
            and decision_clock() - cpu_start >= timeout):  # CPU seconds, as the limit counts them
        from dataclasses import replace

        verdict = replace(verdict, limit="time")
    return verdict


def cached_or_decided(claim: Claim, slot: Any, timeout: float, memory_mb: int,
                      decider: str = DEFAULT_DECIDER) -> tuple[Verdict, bool]:
    """(verdict, stored): the re-checked cached verdict if there is one, else a fresh decision (then stored)."""
    if slot is not None:
        from verifier.pipeline.cache import load_entry

        start = time.monotonic()
        try:
            cached = load_entry(claim, slot, timeout=timeout)
        except MemoryError:
            return limit_verdict(claim, memory_limit_reason(memory_mb), time.monotonic() - start, "memory"), False
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


# ---------------------------------------------------------------- reading claims


def _sendable(claims: list[Claim]) -> list[Claim]:
    """The claims, with any that cannot be passed to another process replaced by an ``error`` at its line."""
    try:
        pickle.dumps(claims, protocol=pickle.HIGHEST_PROTOCOL)
        return claims
    except Exception:
        pass
    out: list[Claim] = []
    for claim in claims:
        try:
            pickle.dumps(claim, protocol=pickle.HIGHEST_PROTOCOL)
            out.append(claim)
        except Exception as exc:
            message = TOO_DEEP if isinstance(exc, RecursionError) else f"the claim cannot be handled: {exc}"
            out.append(Claim(claim.id, claim.location, claim.kind, _short(claim.text), problem=Problem("error", message),
                             dependencies=(claim.location.path,)))
    return out


def _short(text: str) -> str:
    return text if len(text) <= 200 else text[:197] + "..."


def extract_guarded(path: str, text: str, context: ExtractionContext, memory_mb: int) -> list[Claim]:
    """Every claim of one file; a failure becomes one ``error`` (or limit) pseudo-claim for the file."""
    return extract_recorded(path, text, context, memory_mb)[0]


def extract_recorded(path: str, text: str, context: ExtractionContext,
                     memory_mb: int) -> tuple[list[Claim], list[Observation] | None]:
    """``extract_guarded`` and every look at other files the reading made (``claims.file_reads``), for the
    extraction cache; None instead of the looks when the reading failed or a claim could not be passed
    back (such a result depends on the limits, so it is not cached)."""
    from verifier.claims import extract
    from verifier.claims.file_reads import recording

    where = Location(path, 1, 1)
    try:
        with recording() as reads:
            claims = extract(path, text, context)
        sendable = _sendable(claims)
        return sendable, (reads if sendable is claims else None)
    except MemoryError:
        message = f"{memory_limit_reason(memory_mb)} while reading the claims of this file"
        return [file_problem_claim(FileProblem(where, message), "inconclusive")], None
    except RecursionError:
        return [file_problem_claim(FileProblem(where, "the file is nested too deeply to read"))], None
    except Exception as exc:  # a bug in the extractor must not hide the other files
        message = f"internal error while reading claims: {type(exc).__name__}: {exc}"
        return [file_problem_claim(FileProblem(where, message))], None


# ---------------------------------------------------------------- dispatch


def perform(job: Job, settings: PoolSettings) -> Any:
    if job.kind == "decide":
        claim, slot = job.payload
        return cached_or_decided(claim, slot, settings.timeout, settings.memory_mb, settings.decider)
    if job.kind == "extract":
        path, text, context = job.payload
        return extract_guarded(path, text, context, settings.memory_mb)
    if job.kind == "extract_recorded":
        path, text, context = job.payload
        return extract_recorded(path, text, context, settings.memory_mb)
    if job.kind == "call":  # a named function of a higher layer (accuracy sampling), like the decider
        function, args = job.payload
        try:
            return ("ok", _resolve(function)(*args))
        except MemoryError:
            return ("memory", memory_limit_reason(settings.memory_mb))
        except Exception as exc:
            return ("error", f"{type(exc).__name__}: {exc}")
    raise ValueError(f"unknown job kind {job.kind!r}")


def unsendable(job: Job, result: Any, exc: BaseException, settings: PoolSettings) -> Any:
    """What to send instead of a result that cannot be serialised."""
    why = TOO_DEEP if isinstance(exc, RecursionError) else f"the result cannot be passed back: {exc}"
    if job.kind == "decide":
        claim = job.payload[0]
        return limit_verdict(claim, why, getattr(result[0], "seconds", 0.0), verdict="error"), False
    if job.kind == "call":
        return ("error", why)
    path = job.payload[0]
    claims = [file_problem_claim(FileProblem(Location(path, 1, 1), why))]
    return (claims, None) if job.kind == "extract_recorded" else claims
