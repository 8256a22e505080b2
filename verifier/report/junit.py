"""JUnit XML: one testsuite, one testcase per claim (classname = path, name = "line N: text")."""
from __future__ import annotations

import xml.etree.ElementTree as ET
from collections.abc import Sequence

from verifier.model.skipped import Skipped
from verifier.model.verdict import Verdict
from verifier.report.common import OnInconclusive, fails_run, ordered, problem_message
from verifier.report.escape import xml_text


def _clean(element: ET.Element) -> None:
    """Every attribute and text made representable in XML 1.0 (control characters, undecodable bytes)."""
    for item in element.iter():
        for key, value in item.attrib.items():
            item.attrib[key] = xml_text(value)
        if item.text is not None:
            item.text = xml_text(item.text)


def render_junit(
    verdicts: Sequence[Verdict], *, version: str, on_inconclusive: OnInconclusive = "fail",
    skipped: Sequence[Skipped] = (),
) -> str:
    items = ordered(verdicts)
    failures = sum(1 for v in items if fails_run(v, on_inconclusive))
    total_seconds = sum(v.seconds for v in items)
    suites = ET.Element("testsuites", {"name": "idealcheck", "tests": str(len(items)), "failures": str(failures)})
    suite = ET.SubElement(
        suites,
        "testsuite",
        {
            "name": "idealcheck",
            "tests": str(len(items)),
            "failures": str(failures),
            "errors": "0",
            "skipped": "0",
            "time": f"{total_seconds:.3f}",
        },
    )
    properties = ET.SubElement(suite, "properties")
    ET.SubElement(properties, "property", {"name": "idealcheck.version", "value": version})
    for item in skipped:  # files and folders left out unread, with the reason
        ET.SubElement(properties, "property", {"name": "idealcheck.not-read", "value": f"{item.path}: {item.reason}"})
    for verdict in items:
        loc = verdict.claim.location
        case = ET.SubElement(
            suite,
            "testcase",
            {
                "classname": loc.path,
                "name": f"{'' if loc.cell is None else f'cell {loc.cell} '}line {loc.line}: {verdict.claim.text}",
                "file": loc.path,
                "line": str(loc.line),
                "time": f"{verdict.seconds:.3f}",
            },
        )
        if fails_run(verdict, on_inconclusive):
            failure = ET.SubElement(
                case, "failure", {"type": verdict.verdict, "message": f"{verdict.verdict}: {verdict.reason}"}
            )
            failure.text = problem_message(verdict)
        else:
            out = ET.SubElement(case, "system-out")
            out.text = problem_message(verdict) if verdict.verdict != "proved" else (
                f"proved ({verdict.method})" if verdict.method else "proved"
            )
    _clean(suites)
    ET.indent(suites)
    return ET.tostring(suites, encoding="unicode", xml_declaration=True) + "\n"
