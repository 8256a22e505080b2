"""JUnit XML: one testsuite, one testcase per claim.

Names do not hold line numbers, so CI test history survives code moving: ``classname`` is the file and
``name`` the claim text (``cell N: `` first in a notebook; a repeated text gets `` (2)``, `` (3)``).
A refuted or inconclusive claim that fails the run is a ``<failure>``, a claim in error an ``<error>``,
and an inconclusive claim that only warns, or any claim accepted by its inline ``expect``, ``<skipped>``.
"""
from __future__ import annotations

import xml.etree.ElementTree as ET
from collections.abc import Sequence

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import (
    OnInconclusive,
    expectation_met,
    expectation_note,
    fails_run,
    ordered,
    problem_message,
)
from verifier.report.escape import xml_text

Outcome = str  # "passed", "failure", "error", "skipped"


def _clean(element: ET.Element) -> None:
    """Every attribute and text made representable in XML 1.0 (control characters, undecodable bytes)."""
    for item in element.iter():
        for key, value in item.attrib.items():
            item.attrib[key] = xml_text(value)
        if item.text is not None:
            item.text = xml_text(item.text)


def outcome(verdict: Verdict, on_inconclusive: OnInconclusive) -> Outcome:
    if fails_run(verdict, on_inconclusive):
        return "error" if verdict.verdict == "error" else "failure"
    if verdict.verdict == "proved":
        return "passed"
    return "skipped"  # accepted by `expect`, or inconclusive under on_inconclusive = warn


def test_names(verdicts: Sequence[Verdict]) -> list[str]:
    """Stable, unique-per-file test names: the claim text, never the line."""
    seen: dict[tuple[str, str], int] = {}
    names: list[str] = []
    for verdict in verdicts:
        loc = verdict.claim.location
        name = ("" if loc.cell is None else f"cell {loc.cell}: ") + verdict.claim.text
        count = seen.get((loc.path, name), 0) + 1
        seen[(loc.path, name)] = count
        names.append(name if count == 1 else f"{name} ({count})")
    return names


def render_junit(
    verdicts: Sequence[Verdict], *, version: str, on_inconclusive: OnInconclusive = "fail",
    skipped: Sequence[Skipped] = (),
) -> str:
    items = ordered(verdicts)
    outcomes = [outcome(v, on_inconclusive) for v in items]
    counts = {kind: outcomes.count(kind) for kind in ("failure", "error", "skipped")}
    total_seconds = sum(v.seconds for v in items)
    suites = ET.Element("testsuites", {"name": "idealcheck", "tests": str(len(items)),
                                       "failures": str(counts["failure"]), "errors": str(counts["error"]),
                                       "skipped": str(counts["skipped"])})
    suite = ET.SubElement(
        suites,
        "testsuite",
        {
            "name": "idealcheck",
            "tests": str(len(items)),
            "failures": str(counts["failure"]),
            "errors": str(counts["error"]),
            "skipped": str(counts["skipped"]),
            "time": f"{total_seconds:.3f}",
        },
    )
    properties = ET.SubElement(suite, "properties")
    ET.SubElement(properties, "property", {"name": "idealcheck.version", "value": version})
    for item in skipped:  # files and folders left out unread, with the reason
        ET.SubElement(properties, "property", {"name": "idealcheck.not-read", "value": f"{item.path}: {item.reason}"})
    for verdict, name, kind in zip(items, test_names(items), outcomes):
        loc = verdict.claim.location
        case = ET.SubElement(
            suite,
            "testcase",
            {
                "classname": loc.path,
                "name": name,
                "file": loc.path,
                "line": str(loc.line),  # an attribute for jumping to the claim; not part of the name
                "time": f"{verdict.seconds:.3f}",
            },
        )
        if kind in ("failure", "error"):
            summary = expectation_note(verdict) if expectation_met(verdict) is False else verdict.reason
            element = ET.SubElement(case, kind, {"type": verdict.verdict, "message": f"{verdict.verdict}: {summary}"})
            element.text = problem_message(verdict)
        elif kind == "skipped":
            why = expectation_note(verdict) if expectation_met(verdict) else (
                f"inconclusive (allowed by on_inconclusive = warn): {verdict.reason}")
            ET.SubElement(case, "skipped", {"message": why or verdict.verdict})
            out = ET.SubElement(case, "system-out")
            out.text = problem_message(verdict)
        else:
            out = ET.SubElement(case, "system-out")
            out.text = f"proved ({verdict.method})" if verdict.method else "proved"
    _clean(suites)
    ET.indent(suites)
    return ET.tostring(suites, encoding="unicode", xml_declaration=True) + "\n"
