"""SARIF 2.1.0 (OASIS standard): one run, one rule per kind of finding, one result per non-proved claim.

Proved claims are left out (SARIF consumers show results as alerts); the JUnit and JSON reports list them.
Locations are relative URIs against the base id ``%SRCROOT%`` (the checkout root in CI).
"""
from __future__ import annotations

import json
from collections.abc import Sequence
from typing import Any
from urllib.parse import quote

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import OnInconclusive, fails_run, ordered, problem_message
from verifier.report.escape import portable_tree

SCHEMA_URI = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
SOURCE_ROOT = "%SRCROOT%"

RULES: tuple[tuple[str, str, str, str], ...] = (
    # (verdict, rule id, short description, full description)
    (
        "refuted",
        "IC-REFUTED",
        "Annotated identity is false",
        "The two sides differ at a real point that satisfies every condition; the counter-normal-form "
        "and the witness are in the message.",
    ),
    (
        "inconclusive",
        "IC-INCONCLUSIVE",
        "Annotated identity was not decided",
        "The claim could be neither proved nor refuted (sign reasoning needed, unsupported construct, "
        "time or memory limit); the reason is in the message.",
    ),
    (
        "error",
        "IC-ERROR",
        "Claim or file could not be read",
        "The claim text is malformed or the file could not be read; the message says what and where.",
    ),
)
RULE_INDEX = {verdict: index for index, (verdict, *_rest) in enumerate(RULES)}


def _rule_objects() -> list[dict[str, Any]]:
    return [
        {
            "id": rule_id,
            "name": rule_id.replace("IC-", "Claim").title().replace("-", ""),
            "shortDescription": {"text": short},
            "fullDescription": {"text": full},
        }
        for _verdict, rule_id, short, full in RULES
    ]


def _result(verdict: Verdict, on_inconclusive: OnInconclusive) -> dict[str, Any]:
    loc = verdict.claim.location
    index = RULE_INDEX[verdict.verdict]
    result: dict[str, Any] = {
        "ruleId": RULES[index][1],
        "ruleIndex": index,
        "level": "error" if fails_run(verdict, on_inconclusive) else "warning",
        "message": {"text": problem_message(verdict)},
        "locations": [
            {
                "physicalLocation": {
                    "artifactLocation": {"uri": uri(loc.path), "uriBaseId": SOURCE_ROOT},
                    "region": {"startLine": max(1, loc.line), "startColumn": max(1, loc.column)},
                }
            }
        ],
        "properties": {"claimId": verdict.claim.id, "claimText": verdict.claim.text},
    }
    if loc.cell is not None:  # a notebook: the region's lines count within this cell's source
        result["locations"][0]["message"] = {"text": f"cell {loc.cell}"}
        result["properties"]["cell"] = loc.cell
    if verdict.counter_normal_form is not None:
        result["properties"]["counterNormalForm"] = verdict.counter_normal_form
    if verdict.witness is not None:
        result["properties"]["witness"] = {name: value for name, value in verdict.witness.values}
    return result


def uri(path: str) -> str:
    """A relative URI of the path's bytes (a name that is not UTF-8 keeps its bytes as %XX)."""
    return quote(path.encode("utf-8", "surrogateescape"))


def _notification(item: Skipped) -> dict[str, Any]:
    location = {"physicalLocation": {"artifactLocation": {"uri": uri(item.path), "uriBaseId": SOURCE_ROOT}}}
    return {"level": "warning", "message": {"text": f"not read: {item.path}: {item.reason}"},
            "locations": [location]}


def render_sarif(
    verdicts: Sequence[Verdict], *, version: str, on_inconclusive: OnInconclusive = "fail",
    skipped: Sequence[Skipped] = (),
) -> str:
    document = {
        "$schema": SCHEMA_URI,
        "version": "2.1.0",
        "runs": [
            {
                "tool": {"driver": {"name": "idealcheck", "version": version, "rules": _rule_objects()}},
                "results": [
                    _result(v, on_inconclusive) for v in ordered(verdicts) if v.verdict != "proved"
                ],
                "columnKind": "unicodeCodePoints",
            }
        ],
    }
    if skipped:  # files and folders left out unread, as tool execution notifications
        document["runs"][0]["invocations"] = [
            {"executionSuccessful": True, "toolExecutionNotifications": [_notification(i) for i in skipped]}
        ]
    return json.dumps(portable_tree(document), indent=2, ensure_ascii=False) + "\n"
