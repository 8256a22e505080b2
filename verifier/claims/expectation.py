"""Inline acceptance of a known result: ``idealcheck: CLAIM expect VERDICT: REASON``.

The clause is split off the comment before the claim is read, so the claim's text (its identity in the
cache and in CI test names) does not change when the clause is added.  VERDICT is ``inconclusive``,
``refuted`` or ``error``; REASON is required and says why the result is accepted.  The claim then passes
while it keeps that verdict, and any other verdict, a proof included, is reported and fails the run.
"""
from __future__ import annotations

import re
from dataclasses import replace

from verifier.claims.comments import CommentClaim
from verifier.model.claim import Claim, Expectation, Location, Problem

EXPECTABLE = ("inconclusive", "refuted", "error")
_CLAUSE = re.compile(r"(?<![\w.])expect\s+(?P<verdict>[A-Za-z_]+)\s*(?P<colon>:?)")
_OPENING = "([{"
_CLOSING = ")]}"


def _top_level_clause(text: str) -> re.Match[str] | None:
    """The last ``expect WORD`` outside brackets (a name ``expect`` inside an expression stays there)."""
    depth = 0
    depth_at: list[int] = []
    for char in text:
        depth_at.append(depth)
        if char in _OPENING:
            depth += 1
        elif char in _CLOSING:
            depth = max(0, depth - 1)
    found = None
    for match in _CLAUSE.finditer(text):
        if depth_at[match.start()] == 0:
            found = match
    return found


def split_expectation(text: str) -> tuple[str, Expectation | None, str | None, int]:
    """``(claim text, expectation, problem, offset)``: the clause removed, or why it is malformed and where."""
    match = _top_level_clause(text)
    if match is None:
        return text, None, None, 0
    head = text[: match.start()].rstrip()
    verdict = match.group("verdict")
    reason = text[match.end():].strip()
    usage = "write `expect inconclusive: REASON` (or refuted, error) after the claim"
    if verdict == "proved":
        return head, None, ("`expect proved` is what every claim expects already: remove the clause"), match.start()
    if verdict not in EXPECTABLE:
        return head, None, f"`expect {verdict}`: unknown verdict; {usage}", match.start("verdict")
    if not match.group("colon") or not reason:
        return head, None, f"`expect {verdict}` needs a reason after a colon; {usage}", match.end()
    if not head:
        return head, None, f"nothing to check before `expect`; {usage}", match.start()
    return head, Expectation(verdict, reason), None, 0  # type: ignore[arg-type]


def strip_expectations(
    comments: list[CommentClaim],
) -> tuple[list[CommentClaim], dict[tuple[int, int], Expectation], dict[tuple[int, int], tuple[str, int]]]:
    """The comments without their ``expect`` clauses, the expectations and the malformed clauses by place."""
    stripped: list[CommentClaim] = []
    expectations: dict[tuple[int, int], Expectation] = {}
    problems: dict[tuple[int, int], tuple[str, int]] = {}
    for comment in comments:
        if "expect" not in comment.text:
            stripped.append(comment)
            continue
        head, expectation, problem, offset = split_expectation(comment.text)
        if expectation is None and problem is None:
            stripped.append(comment)
            continue
        stripped.append(replace(comment, text=head))
        place = (comment.line, comment.column)
        if expectation is not None:
            expectations[place] = expectation
        else:
            problems[place] = (problem or "", offset)
    return stripped, expectations, problems


def comment_place(claim: Claim, path: str) -> tuple[int, int] | None:
    """The comment (line, column) that ``claim`` came from, read from its id ``path:line:col[#k]``."""
    prefix = f"{path}:"
    if not claim.id.startswith(prefix):
        return None
    rest = claim.id[len(prefix):].split("#", 1)[0]
    line, _, column = rest.partition(":")
    if not (line.isdigit() and column.isdigit()):
        return None
    return int(line), int(column)


def attach_expectations(
    claims: list[Claim],
    path: str,
    comments: list[CommentClaim],
    expectations: dict[tuple[int, int], Expectation],
    problems: dict[tuple[int, int], tuple[str, int]],
) -> list[Claim]:
    """Each claim with the expectation of its comment; a malformed clause makes the claim an error."""
    if not expectations and not problems:
        return claims
    by_place = {(c.line, c.column): c for c in comments}
    result: list[Claim] = []
    for claim in claims:
        place = comment_place(claim, path)
        if place in problems:
            message, offset = problems[place]
            comment = by_place.get(place)
            line, column = comment.position(offset) if comment is not None else place
            result.append(replace(claim, obligations=(), location=Location(claim.location.path, line, column),
                                  problem=Problem("error", f"{message} (column {column})")))
        elif place in expectations:
            result.append(replace(claim, expected=expectations[place]))
        else:
            result.append(claim)
    return result


__all__ = ["EXPECTABLE", "attach_expectations", "comment_place", "split_expectation", "strip_expectations"]
