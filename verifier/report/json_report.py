"""The machine-readable report of design.md; keys in the documented order, claims in report order."""
from __future__ import annotations

import json
from collections.abc import Sequence
from typing import Any

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import ordered, summary_counts
from verifier.report.escape import portable_tree


def claim_object(verdict: Verdict) -> dict[str, Any]:
    claim = verdict.claim
    witness = None
    if verdict.witness is not None:
        witness = {
            "values": {name: value for name, value in verdict.witness.values},
            "left": verdict.witness.left,
            "right": verdict.witness.right,
        }
    cell = {} if claim.location.cell is None else {"cell": claim.location.cell}  # notebooks: line is in the cell
    # an inline `expect VERDICT: REASON`, only when the claim has one (and whether it holds)
    expected = {} if claim.expected is None else {"expected": {
        "verdict": claim.expected.verdict, "reason": claim.expected.reason,
        "met": verdict.verdict == claim.expected.verdict,
        **({} if claim.expected.baseline is None else {"baseline": claim.expected.baseline})}}
    return {
        "id": claim.id,
        "path": claim.location.path,
        **cell,
        "line": claim.location.line,
        "column": claim.location.column,
        "kind": claim.kind,
        "text": claim.text,
        "verdict": verdict.verdict,
        "method": verdict.method,
        "reason": verdict.reason,
        "counter_normal_form": verdict.counter_normal_form,
        "witness": witness,
        "assumed": list(verdict.assumed),
        **expected,
        "seconds": round(verdict.seconds, 3),
    }


def skipped_object(item: Skipped) -> dict[str, Any]:
    return {"path": item.path, "kind": item.kind, "reason": item.reason}


def render_json(verdicts: Sequence[Verdict], *, version: str, skipped: Sequence[Skipped] = ()) -> str:
    document = {
        "tool": {"name": "idealcheck", "version": version},
        "claims": [claim_object(v) for v in ordered(verdicts)],
        "summary": summary_counts(verdicts),
        "skipped": [skipped_object(item) for item in skipped],  # not read, with the reason
    }
    # names that are not UTF-8 appear as \\xNN escapes: the document always encodes
    return json.dumps(portable_tree(document), indent=2, ensure_ascii=False) + "\n"
