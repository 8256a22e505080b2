"""Helpers shared by every report format: ordering, counting and whether a verdict fails the run."""
from __future__ import annotations

from collections.abc import Sequence
from decimal import Decimal, InvalidOperation
from typing import Literal

from verifier.model.claim import Claim
from verifier.model.verdict import Verdict, Witness

OnInconclusive = Literal["fail", "warn"]
VERDICT_NAMES: tuple[str, ...] = ("proved", "refuted", "inconclusive", "error")

# Why this line is in every text report: a proof here is about real numbers in exact arithmetic.
EXACTNESS_REMINDER = (
    "note: proofs are exact-arithmetic results over the real numbers; they say nothing about "
    "floating-point rounding, overflow or branch cuts."
)
# The same caution said once and briefly at the end of the people's report (the README has the long form).
BRIEF_CAUTION = "note: proved means exact over the reals; floating-point rounding is not checked (see --accuracy)"

# Witness values for people: this many significant digits (the JSON and SARIF properties keep every digit).
PEOPLE_DIGITS = 12


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


def expectation_met(verdict: Verdict) -> bool | None:
    """None without an inline ``expect``; else whether the verdict is the expected one."""
    expected = verdict.claim.expected
    if expected is None:
        return None
    return verdict.verdict == expected.verdict


def expectation_note(verdict: Verdict) -> str | None:
    """What the report says about an inline ``expect`` (None without one)."""
    expected = verdict.claim.expected
    if expected is None:
        return None
    if expected.baseline is not None:  # a baseline entry's reason is optional
        why = f" ({expected.reason})" if expected.reason else ""
        if verdict.verdict == expected.verdict:
            return f"accepted by the baseline {expected.baseline}: {expected.verdict}{why}"
        fix = ("run `idealcheck baseline` to drop the entry" if verdict.verdict == "proved"
               else "run `idealcheck baseline` to record the new verdict if it is known")
        return f"the baseline {expected.baseline} accepts {expected.verdict}{why}, now {verdict.verdict}: {fix}"
    if verdict.verdict == expected.verdict:
        return f"accepted: expected {expected.verdict} ({expected.reason})"
    fix = ("remove the `expect` marker" if verdict.verdict == "proved"
           else f"update the marker to `expect {verdict.verdict}: REASON` if this is known")
    return f"expected {expected.verdict} ({expected.reason}), now {verdict.verdict}: {fix}"


def fails_run(verdict: Verdict, on_inconclusive: OnInconclusive = "fail") -> bool:
    """True when this verdict makes the run fail (exit status 1).

    A claim with an inline ``expect`` passes exactly when its verdict is the expected one.
    """
    met = expectation_met(verdict)
    if met is not None:
        return not met
    if verdict.verdict == "proved":
        return False
    if verdict.verdict == "inconclusive":
        return on_inconclusive != "warn"
    return True


def rounded_for_people(value: str, digits: int = PEOPLE_DIGITS) -> str:
    """A decimal with more than ``digits`` significant digits rounded to that many; anything else unchanged.

    Integers and fractions (``3/4``) are exact and short already; only long decimal expansions are rounded.
    """
    text = value.strip()
    if "." not in text or "/" in text:
        return value
    try:
        number = Decimal(text)
    except InvalidOperation:
        return value
    if not number.is_finite() or len(number.as_tuple().digits) <= digits:
        return value
    return format(number, f".{digits}g")


def witness_values_text(witness: Witness, *, for_people: bool = False) -> str:
    def shown(value: str) -> str:
        return rounded_for_people(value) if for_people else value

    return ", ".join(f"{name} = {shown(value)}" for name, value in witness.values)


def outcome_counts(verdicts: Sequence[Verdict], on_inconclusive: OnInconclusive = "fail") -> dict[str, int]:
    """How many verdicts were accepted by an inline ``expect`` and how many inconclusive ones only warn."""
    accepted = sum(1 for v in verdicts if expectation_met(v))
    warned = sum(1 for v in verdicts if v.claim.expected is None and v.verdict == "inconclusive"
                 and not fails_run(v, on_inconclusive))
    return {"accepted": accepted, "warned": warned}


def summary_line(verdicts: Sequence[Verdict]) -> str:
    counts = summary_counts(verdicts)
    total = len(verdicts)
    noun = "claim" if total == 1 else "claims"
    parts = ", ".join(f"{counts[name]} {name}" for name in VERDICT_NAMES)
    cached = sum(1 for v in verdicts if v.cached)
    accepted = sum(1 for v in verdicts if expectation_met(v))
    extras = [f"{accepted} as expected" if accepted else "", f"{cached} from cache" if cached else ""]
    tail = "; ".join(extra for extra in extras if extra)
    return f"{total} {noun}: {parts}" + (f" ({tail})" if tail else "")


def problem_message(verdict: Verdict) -> str:
    """A multi-line plain description of a non-proved verdict (used by github, sarif and junit)."""
    lines = [f"{verdict.verdict}: {verdict.claim.text}"]
    note = expectation_note(verdict)
    if note:
        lines.append(note)
    if verdict.reason:
        lines.append(f"reason: {verdict.reason}")
    if verdict.counter_normal_form is not None:
        lines.append(f"counter-normal-form: {verdict.counter_normal_form}")
    if verdict.witness is not None:  # rounded for people; the exact values are in JSON and SARIF properties
        lines.append(f"witness: {witness_values_text(verdict.witness, for_people=True)}")
        left_name, right_name = side_names(verdict.claim)
        lines.append(f"  {left_name} = {rounded_for_people(verdict.witness.left)}")
        lines.append(f"  {right_name} = {rounded_for_people(verdict.witness.right)}")
    if verdict.assumed:
        lines.append("assumed: " + "; ".join(verdict.assumed))
    return "\n".join(lines)


def side_names(claim: Claim) -> tuple[str, str]:
    """What the report calls the two sides of a claim: which is the code and which is the claim."""
    text = claim.text.strip()
    if claim.kind == "function" and text.startswith("same as"):
        other = text[len("same as"):].split(" given ", 1)[0].strip() or "the other function"
        return "this function", other
    if claim.kind == "function":
        return "the function", "the claim"
    if claim.kind == "statement":
        return "the code", "the claim"
    return "left", "right"
