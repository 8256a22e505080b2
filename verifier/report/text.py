"""The human-readable report: one header line per claim, indented details, a summary and a reminder."""
from __future__ import annotations

from collections.abc import Sequence

from verifier.model.skipped import Skipped
from verifier.model.verdict import ObligationResult, Verdict, Witness
from verifier.report.escape import shown_lines
from verifier.report.common import (
    EXACTNESS_REMINDER,
    ordered,
    summary_line,
    witness_values_text,
)

INDENT = "    "


def _witness_lines(witness: Witness, indent: str) -> list[str]:
    how = "checked exactly" if witness.exact else "checked with high-precision arithmetic"
    return [
        f"{indent}witness: {witness_values_text(witness)} ({how})",
        f"{indent}    left  = {witness.left}",
        f"{indent}    right = {witness.right}",
    ]


def _obligation_lines(result: ObligationResult) -> list[str]:
    label = result.label or "obligation"
    head = f"{INDENT}- {label}: {result.verdict}"
    if result.method:
        head += f" ({result.method})"
    lines = [head]
    inner = INDENT + "  "
    if result.verdict != "proved" and result.reason:
        lines.append(f"{inner}reason: {result.reason}")
    if result.counter_normal_form is not None:
        lines.append(f"{inner}counter-normal-form: {result.counter_normal_form}")
    if result.witness is not None:
        lines.extend(_witness_lines(result.witness, inner))
    return lines


def verdict_lines(verdict: Verdict) -> list[str]:
    claim = verdict.claim
    lines = [f"{claim.location}: {verdict.verdict}: {claim.text}"]
    if verdict.method:
        method_text: str = verdict.method
        if verdict.cached:
            method_text += " (from cache, certificate re-checked)" if verdict.verdict == "proved" else " (from cache)"
        lines.append(f"{INDENT}method: {method_text}")
    elif verdict.cached:
        lines.append(f"{INDENT}from cache (witness re-checked)")
    if verdict.reason:
        lines.append(f"{INDENT}reason: {verdict.reason}")
    several = len(verdict.obligations) > 1
    if not several:
        if verdict.counter_normal_form is not None:
            lines.append(f"{INDENT}counter-normal-form: {verdict.counter_normal_form}")
        if verdict.witness is not None:
            lines.extend(_witness_lines(verdict.witness, INDENT))
    if verdict.assumed:
        lines.append(f"{INDENT}assumed: " + "; ".join(verdict.assumed))
    for note in claim.notes:
        lines.append(f"{INDENT}note: {note}")
    if several:
        lines.append(f"{INDENT}obligations:")
        for result in verdict.obligations:
            lines.extend(_obligation_lines(result))
    return lines


def skipped_lines(skipped: Sequence[Skipped]) -> list[str]:
    """What was left out unread, one line each (nothing when everything was read)."""
    if not skipped:
        return []
    noun = "path" if len(skipped) == 1 else "paths"
    lines = [f"not read ({len(skipped)} {noun}; claims in them, if any, were not checked):"]
    lines.extend(f"{INDENT}{item.path}: {item.reason}" for item in skipped)
    return lines


def render_text(verdicts: Sequence[Verdict], *, version: str, skipped: Sequence[Skipped] = ()) -> str:
    lines: list[str] = []
    for verdict in ordered(verdicts):
        lines.extend(verdict_lines(verdict))
    lines.extend(skipped_lines(skipped))
    lines.append(summary_line(verdicts))
    lines.append(EXACTNESS_REMINDER)
    return shown_lines(lines)
