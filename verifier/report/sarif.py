"""SARIF 2.1.0 (OASIS standard): one run, one rule per kind of finding, one result per non-proved claim.

Proved claims are left out (SARIF consumers show results as alerts); the JUnit and JSON reports list them.
A claim accepted by an inline ``expect`` is a result with an in-source suppression carrying its reason.
Locations are URIs relative to the repository root, against the base id ``%SRCROOT%`` (described in
``originalUriBaseIds``).  ``partialFingerprints`` hash the file and the claim text, not the line, so an
alert follows its claim when code moves.  A run that stops on a configuration error still gives a valid
file with the error as a tool-execution notification.
"""
from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any
from urllib.parse import quote

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import (
    OnInconclusive,
    expectation_met,
    fails_run,
    ordered,
    problem_message,
)
from verifier.report.escape import portable_tree

SCHEMA_URI = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
SOURCE_ROOT = "%SRCROOT%"
FINGERPRINT_KEY = "idealcheckClaim/v1"

# (kind, rule id, rule name, short description, full description, help in Markdown)
RULES: tuple[tuple[str, str, str, str, str, str], ...] = (
    (
        "refuted",
        "IC-REFUTED",
        "ClaimRefuted",
        "Annotated identity is false",
        "The two sides differ at a real point that satisfies every condition; the counter-normal-form "
        "and the witness are in the message.",
        "The claim's two sides are different functions: the **counter-normal-form** (the difference reduced "
        "modulo the conditions) is not zero, and the **witness** is a point where every condition holds "
        "and the sides differ.\n\nFix the code or the claim so that the sides agree, or add the missing "
        "condition with `given ...`. Re-run `idealcheck explain FILE:LINE` to see the algebra.",
    ),
    (
        "inconclusive",
        "IC-INCONCLUSIVE",
        "ClaimInconclusive",
        "Annotated identity was not decided",
        "The claim could be neither proved nor refuted (sign reasoning needed, unsupported construct, "
        "time or memory limit); the reason is in the message.",
        "The tool could neither prove nor refute the claim; the message gives the specific reason.\n\n"
        "Options: state the missing hypothesis with `given ...`, raise `--timeout`, rewrite the code "
        "into a supported form, or accept the known result on the claim itself with "
        "`expect inconclusive: REASON`. `--on-inconclusive warn` makes every such claim a warning.",
    ),
    (
        "error",
        "IC-ERROR",
        "ClaimError",
        "Claim or file could not be read",
        "The claim text is malformed or the file could not be read; the message says what and where.",
        "The claim text does not parse, names something unknown, or its file cannot be read; the "
        "message names the problem, the place and the fix.\n\nThe claim language is described in the "
        "README (`LEFT == RIGHT [given CONDITIONS]`, `returns EXPR`, `same as OTHER`, `== EXPR`).",
    ),
    (
        "changed",
        "IC-CHANGED",
        "ExpectedVerdictChanged",
        "An accepted known result changed",
        "The claim carries `expect VERDICT: REASON`, and its verdict is now a different one.",
        "The claim was accepted with an inline `expect VERDICT: REASON`, and the verdict is no longer "
        "that one.\n\nIf the claim is now **proved**, remove the `expect` clause. Otherwise check the "
        "new verdict in the message and update or remove the clause.",
    ),
)
RULE_INDEX = {kind: index for index, (kind, *_rest) in enumerate(RULES)}


def _rule_objects() -> list[dict[str, Any]]:
    return [
        {
            "id": rule_id,
            "name": name,
            "shortDescription": {"text": short},
            "fullDescription": {"text": full},
            "help": {"text": full + " " + help_markdown.replace("**", "").replace("`", ""),
                     "markdown": help_markdown},
            "defaultConfiguration": {"level": "error"},
        }
        for _kind, rule_id, name, short, full, help_markdown in RULES
    ]


def _kind(verdict: Verdict) -> str:
    if expectation_met(verdict) is False:
        return "changed"
    return verdict.verdict


def repository_uri(path: str, cwd: str | None, repository_root: str | None) -> str:
    """``path`` (relative to ``cwd``) relative to the repository root, percent-encoded, forward slashes."""
    if cwd is not None and repository_root is not None:
        absolute = os.path.normpath(os.path.join(cwd, path))
        relative = os.path.relpath(absolute, repository_root)
        if not relative.startswith(".."):
            path = relative
    # a name that is not UTF-8 keeps its bytes as %XX
    return quote(path.replace(os.sep, "/").encode("utf-8", "surrogateescape"))


def _fingerprint(uri: str, text: str, occurrence: int) -> str:
    # the file and the claim text (and which of several identical claims): a line change keeps it
    digest = hashlib.sha256(f"{uri}\0{text}\0{occurrence}".encode("utf-8", "surrogatepass")).hexdigest()
    return digest[:32]


def _result(verdict: Verdict, on_inconclusive: OnInconclusive, uri: str, occurrence: int) -> dict[str, Any]:
    loc = verdict.claim.location
    kind = _kind(verdict)
    index = RULE_INDEX[kind]
    result: dict[str, Any] = {
        "ruleId": RULES[index][1],
        "ruleIndex": index,
        "level": "error" if fails_run(verdict, on_inconclusive) else "warning",
        "message": {"text": problem_message(verdict)},
        "locations": [
            {
                "physicalLocation": {
                    "artifactLocation": {"uri": uri, "uriBaseId": SOURCE_ROOT},
                    "region": {"startLine": max(1, loc.line), "startColumn": max(1, loc.column)},
                }
            }
        ],
        "partialFingerprints": {FINGERPRINT_KEY: _fingerprint(uri, verdict.claim.text, occurrence)},
        "properties": {"claimId": verdict.claim.id, "claimText": verdict.claim.text, "verdict": verdict.verdict},
    }
    expected = verdict.claim.expected
    if expected is not None:
        result["properties"]["expected"] = {"verdict": expected.verdict, "reason": expected.reason}
        if expectation_met(verdict):
            # an inline marker is in the source; a baseline entry is kept outside it (SARIF suppression kinds)
            kind = "inSource" if expected.baseline is None else "external"
            justification = expected.reason or f"accepted by the baseline {expected.baseline}"
            result["suppressions"] = [{"kind": kind, "justification": justification}]
    if loc.cell is not None:  # a notebook: the region's lines count within this cell's source
        result["locations"][0]["message"] = {"text": f"cell {loc.cell}"}
        result["properties"]["cell"] = loc.cell
    if verdict.counter_normal_form is not None:
        result["properties"]["counterNormalForm"] = verdict.counter_normal_form
    if verdict.witness is not None:  # exact values here; the message rounds them for people
        result["properties"]["witness"] = {name: value for name, value in verdict.witness.values}
    return result


def _base_ids(repository_root: str | None) -> dict[str, Any]:
    if repository_root is None:
        return {SOURCE_ROOT: {"description": {"text": "The root of the checked repository."}}}
    return {SOURCE_ROOT: {"uri": Path(repository_root).resolve().as_uri().rstrip("/") + "/",
                          "description": {"text": "The root of the checked repository."}}}


def _notification(item: Skipped, cwd: str | None, repository_root: str | None) -> dict[str, Any]:
    artifact = {"uri": repository_uri(item.path, cwd, repository_root), "uriBaseId": SOURCE_ROOT}
    return {"level": "warning", "message": {"text": f"not read: {item.path}: {item.reason}"},
            "locations": [{"physicalLocation": {"artifactLocation": artifact}}]}


def _document(version: str, results: list[dict[str, Any]], invocation: dict[str, Any],
              repository_root: str | None) -> str:
    document = {
        "$schema": SCHEMA_URI,
        "version": "2.1.0",
        "runs": [
            {
                "tool": {"driver": {"name": "idealcheck", "version": version, "semanticVersion": version,
                                    "rules": _rule_objects()}},
                "invocations": [invocation],
                "originalUriBaseIds": _base_ids(repository_root),
                "results": results,
                "columnKind": "unicodeCodePoints",
            }
        ],
    }
    return json.dumps(portable_tree(document), indent=2, ensure_ascii=False) + "\n"


def render_sarif(
    verdicts: Sequence[Verdict],
    *,
    version: str,
    on_inconclusive: OnInconclusive = "fail",
    cwd: str | None = None,
    repository_root: str | None = None,
    skipped: Sequence[Skipped] = (),
) -> str:
    """The SARIF log; with ``cwd`` and ``repository_root`` the URIs are relative to the repository root.

    ``skipped`` (files and folders left out unread) become tool-execution notifications."""
    results: list[dict[str, Any]] = []
    seen: dict[tuple[str, str], int] = {}
    for verdict in ordered(verdicts):
        if verdict.verdict == "proved" and verdict.claim.expected is None:
            continue
        uri = repository_uri(verdict.claim.location.path, cwd, repository_root)
        key = (uri, verdict.claim.text)
        occurrence = seen.get(key, 0)
        seen[key] = occurrence + 1
        results.append(_result(verdict, on_inconclusive, uri, occurrence))
    invocation: dict[str, Any] = {"executionSuccessful": True}
    if skipped:
        invocation["toolExecutionNotifications"] = [_notification(i, cwd, repository_root) for i in skipped]
    return _document(version, results, invocation, repository_root)


def render_sarif_failure(message: str, *, version: str, repository_root: str | None = None) -> str:
    """A valid SARIF log for a run that stopped before deciding anything (a usage or configuration error)."""
    invocation = {
        "executionSuccessful": False,
        "exitCode": 2,
        "toolExecutionNotifications": [{"level": "error", "message": {"text": message}}],
    }
    return _document(version, [], invocation, repository_root)
