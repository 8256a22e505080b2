"""The human-readable report: failures first with their details, then one line per passing claim.

``detail`` picks how much: ``quiet`` shows only what fails (the rest is counted in the summary), ``normal``
adds one line per passing claim, ``verbose`` gives every claim in full (method, assumptions, obligations).
Colour is an ANSI escape around the verdict word only; the caller decides whether the terminal wants it.
"""
from __future__ import annotations

from collections.abc import Sequence
from typing import Literal

from verifier.model.skipped import Skipped
from verifier.model.verdict import ObligationResult, Verdict, Witness
from verifier.report.escape import shown
from verifier.report.common import (
    BRIEF_CAUTION,
    OnInconclusive,
    expectation_met,
    expectation_note,
    fails_run,
    ordered,
    rounded_for_people,
    side_names,
    summary_line,
    witness_values_text,
)

Detail = Literal["quiet", "normal", "verbose"]
INDENT = "    "

# SGR codes (ECMA-48): green, bold red, yellow, bold magenta.
_COLOURS = {"proved": "32", "refuted": "1;31", "inconclusive": "33", "error": "1;35"}
# The specific part of a refutation's reason follows this generic opening (the algebra layer's wording).
_GENERIC_REFUTATION = "the sides differ at the witness, where every condition holds; "


class Escaped(str):
    """A line whose pieces from the code under review are already escaped, so it may hold our colour codes."""


def coloured(word: str, color: bool) -> str:
    code = _COLOURS.get(word)
    return f"\x1b[{code}m{word}\x1b[0m" if color and code else word


def _witness_lines(witness: Witness, indent: str, names: tuple[str, str]) -> list[str]:
    how = "checked exactly" if witness.exact else "checked with high-precision arithmetic"
    width = max(len(name) for name in names)
    return [
        f"{indent}witness: {witness_values_text(witness, for_people=True)} ({how})",
        f"{indent}    {names[0]:<{width}} = {rounded_for_people(witness.left)}",
        f"{indent}    {names[1]:<{width}} = {rounded_for_people(witness.right)}",
    ]


def _witness_line(witness: Witness, indent: str, names: tuple[str, str]) -> str:
    """The witness and both sides' values on one line (the short report)."""
    how = "exact" if witness.exact else "high precision"
    return (f"{indent}witness: {witness_values_text(witness, for_people=True)} ({how}); "
            f"{names[0]} = {rounded_for_people(witness.left)}, {names[1]} = {rounded_for_people(witness.right)}")


def _obligation_lines(result: ObligationResult, names: tuple[str, str], *, color: bool,
                      short: bool = False) -> list[str]:
    label = result.label or "obligation"
    head = f"{INDENT}- {shown(label)}: {coloured(result.verdict, color)}"
    if result.method:
        head += f" ({shown(result.method)})"
    lines: list[str] = [Escaped(head)]
    inner = INDENT + "  "
    reason, cnf = result.reason, result.counter_normal_form
    if short and cnf is not None and reason.startswith(_GENERIC_REFUTATION):
        # as for a one-obligation claim: the specific part of the reason beside the counter-normal-form
        lines.append(f"{inner}counter-normal-form: {cnf} ({reason[len(_GENERIC_REFUTATION):]})")
        reason, cnf = "", None
    if result.verdict != "proved" and reason:
        lines.append(f"{inner}reason: {reason}")
    if cnf is not None:
        lines.append(f"{inner}counter-normal-form: {cnf}")
    if result.witness is not None:
        if short:
            lines.append(_witness_line(result.witness, inner, names))
        else:
            lines.extend(_witness_lines(result.witness, inner, names))
    return lines


def _header(verdict: Verdict, color: bool) -> str:
    location, text = shown(str(verdict.claim.location)), shown(verdict.claim.text)
    return Escaped(f"{location}: {coloured(verdict.verdict, color)}: {text}")


def verdict_lines(verdict: Verdict, *, color: bool = False) -> list[str]:
    """Every detail of one verdict (the ``-v`` report, the pytest plugin and the audit report)."""
    claim = verdict.claim
    names = side_names(claim)
    lines = [_header(verdict, color)]
    note = expectation_note(verdict)
    if note:
        lines.append(f"{INDENT}{note}")
    if verdict.method:
        method_text: str = verdict.method
        if verdict.cached:
            method_text += " (from cache, certificate re-checked)" if verdict.verdict == "proved" else " (from cache)"
        lines.append(f"{INDENT}method: {method_text}")
    elif verdict.cached:  # only a refutation carries evidence to re-check; other results are kept as they were
        lines.append(f"{INDENT}from cache (witness re-checked)" if verdict.witness is not None else f"{INDENT}from cache")
    if verdict.reason:
        lines.append(f"{INDENT}reason: {verdict.reason}")
    several = len(verdict.obligations) > 1
    if not several:
        if verdict.counter_normal_form is not None:
            lines.append(f"{INDENT}counter-normal-form: {verdict.counter_normal_form}")
        if verdict.witness is not None:
            lines.extend(_witness_lines(verdict.witness, INDENT, names))
    if verdict.assumed:
        lines.append(f"{INDENT}assumed: " + "; ".join(verdict.assumed))
    for claim_note in claim.notes:
        lines.append(f"{INDENT}note: {claim_note}")
    if several:
        lines.append(f"{INDENT}obligations:")
        for result in verdict.obligations:
            lines.extend(_obligation_lines(result, names, color=color))
    return lines


def failure_lines(verdict: Verdict, *, color: bool = False) -> list[str]:
    """A failing verdict in a few lines: what is wrong, the counter-normal-form and the witness."""
    names = side_names(verdict.claim)
    lines = [_header(verdict, color)]
    note = expectation_note(verdict)
    if note:
        lines.append(f"{INDENT}{note}")
    several = len(verdict.obligations) > 1
    reason = verdict.reason
    cnf = None if several else verdict.counter_normal_form
    if cnf is not None and reason.startswith(_GENERIC_REFUTATION):
        lines.append(f"{INDENT}counter-normal-form: {cnf} ({reason[len(_GENERIC_REFUTATION):]})")
    else:
        # with several obligations each failing one shows its own reason (which the summary repeats)
        repeated = several and any(r.reason and reason.endswith(r.reason) for r in verdict.obligations)
        if reason and not (several and reason.startswith("all ")) and not repeated:
            lines.append(f"{INDENT}reason: {reason}")
        if cnf is not None:
            lines.append(f"{INDENT}counter-normal-form: {cnf}")
    if not several and verdict.witness is not None:
        lines.append(_witness_line(verdict.witness, INDENT, names))
    if several:
        for result in verdict.obligations:
            if result.verdict != "proved":
                lines.extend(_obligation_lines(result, names, color=color, short=True))
    return lines


def passing_line(verdict: Verdict, *, color: bool = False, width: int | None = None) -> str:
    """One line for a claim that does not fail the run (proved, or a result accepted as known).

    With ``width`` (a terminal's columns) a long claim text is cut to fit, ending in ``...``."""
    if verdict.verdict == "proved":
        tail = f" ({verdict.method})" if verdict.method else ""
    else:
        note = expectation_note(verdict) if expectation_met(verdict) else None
        tail = f" ({note or 'allowed by on_inconclusive = warn: ' + verdict.reason})"
    # Escaped piece by piece (not line by line) so that the colour codes around the verdict survive.
    text, location, tail = shown(verdict.claim.text), shown(str(verdict.claim.location)), shown(tail)
    head = f"{location}: {verdict.verdict}: "
    if width is not None and len(head) + len(text) + len(tail) > width:
        room = max(12, width - len(head) - len(tail) - 3)
        text = text[:room].rstrip() + "..." if len(text) > room else text
    return Escaped(f"{location}: {coloured(verdict.verdict, color)}: {text}{tail}")


# Left out by their nature, not by anything odd: counted in the summary, listed with -v only.
COUNTED_ONLY_KINDS = frozenset({"binary"})


def skipped_lines(skipped: Sequence[Skipped], detail: Detail = "verbose") -> list[str]:
    """What was left out unread, one line each (nothing when everything was read); below ``verbose`` the
    binary files are only counted (``binary_count_text``)."""
    if detail != "verbose":
        skipped = [item for item in skipped if item.kind not in COUNTED_ONLY_KINDS]
    if not skipped:
        return []
    noun = "path" if len(skipped) == 1 else "paths"
    lines = [f"not read ({len(skipped)} {noun}; claims in them, if any, were not checked):"]
    lines.extend(f"{INDENT}{item.path}: {item.reason}" for item in skipped)
    return lines


def binary_count_text(skipped: Sequence[Skipped], detail: Detail) -> str:
    """``"; 3 binary files not read"`` for the summary line ("" when there are none)."""
    count = sum(1 for item in skipped if item.kind == "binary")
    if not count:
        return ""
    noun = "binary file" if count == 1 else "binary files"
    return f"; {count} {noun} not read" + ("" if detail == "verbose" else " (-v lists them)")


def render_text(
    verdicts: Sequence[Verdict],
    *,
    version: str,
    detail: Detail = "normal",
    color: bool = False,
    on_inconclusive: OnInconclusive = "fail",
    width: int | None = None,
    skipped: Sequence[Skipped] = (),
) -> str:
    """The report; ``width`` (a terminal's columns) cuts long claim texts of the one-line passing claims;
    ``skipped`` lists what was not read."""
    items = ordered(verdicts)
    failing = [v for v in items if fails_run(v, on_inconclusive)]
    passing = [v for v in items if not fails_run(v, on_inconclusive)]
    lines: list[str] = []
    if detail == "verbose":
        for verdict in failing + passing:
            lines.extend(verdict_lines(verdict, color=color))
    else:
        for verdict in failing:
            lines.extend(failure_lines(verdict, color=color))
        if detail == "normal":
            if failing and passing:
                lines.append("")
            lines.extend(passing_line(v, color=color, width=width) for v in passing)
    lines.extend(skipped_lines(skipped, detail))
    if detail != "quiet" and any(v.verdict == "proved" for v in items):
        lines.append(BRIEF_CAUTION)
    lines.append(summary_line(verdicts) + binary_count_text(skipped, detail))
    # Lines from the code under review are escaped here; Escaped lines were escaped piece by piece.
    return "\n".join(line if isinstance(line, Escaped) else shown(line) for line in lines) + "\n"
