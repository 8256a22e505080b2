"""Helpers shared by every report format: ordering, counting and whether a verdict fails the run."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Literal

from verifier.model.verdict import Verdict, Witness

OnInconclusive = Literal["fail", "warn"]
VERDICT_NAMES: tuple[str, ...] = ("proved", "refuted", "inconclusive", "error")

# Why this line is in every text report: a proof here is about real numbers in exact arithmetic.
EXACTNESS_REMINDER = (
    "note: proofs are exact-arithmetic results over the real numbers; they say nothing about "
    "floating-point rounding, overflow or branch cuts."
)


def ordered(verdicts: Sequence[Verdict]) -> list[Verdict]:
    """Deterministic report order: by path, (notebook cell,) line, column, then claim id."""
    return sorted(
        verdicts,
        key=lambda v: (v.claim.location.path, v.claim.location.cell or 0, v.claim.location.line,
                       v.claim.location.column, v.claim.id),
    )


def summary_counts(verdicts: Sequence[Verdict]) -> dict[str, int]:
    counts = {name: 0 for name in VERDICT_NAMES}
    for verdict in verdicts:
        counts[verdict.verdict] = counts.get(verdict.verdict, 0) + 1
    return counts


def fails_run(verdict: Verdict, on_inconclusive: OnInconclusive = "fail") -> bool:
    """True when this verdict makes the run fail (exit status 1)."""
    if verdict.verdict == "proved":
        return False
    if verdict.verdict == "inconclusive":
        return on_inconclusive != "warn"
    return True


def witness_values_text(witness: Witness) -> str:
    return ", ".join(f"{name} = {value}" for name, value in witness.values)


def summary_line(verdicts: Sequence[Verdict]) -> str:
    counts = summary_counts(verdicts)
    total = len(verdicts)
    noun = "claim" if total == 1 else "claims"
    parts = ", ".join(f"{counts[name]} {name}" for name in VERDICT_NAMES)
    cached = sum(1 for v in verdicts if v.cached)
    tail = f" ({cached} from cache)" if cached else ""
    return f"{total} {noun}: {parts}{tail}"


def problem_message(verdict: Verdict) -> str:
    """A multi-line plain description of a non-proved verdict (used by github, sarif and junit)."""
    lines = [f"{verdict.verdict}: {verdict.claim.text}"]
    if verdict.reason:
        lines.append(f"reason: {verdict.reason}")
    if verdict.counter_normal_form is not None:
        lines.append(f"counter-normal-form: {verdict.counter_normal_form}")
    if verdict.witness is not None:
        lines.append(f"witness: {witness_values_text(verdict.witness)}")
        lines.append(f"  left  = {verdict.witness.left}")
        lines.append(f"  right = {verdict.witness.right}")
    if verdict.assumed:
        lines.append("assumed: " + "; ".join(verdict.assumed))
    return "\n".join(lines)
