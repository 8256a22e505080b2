"""github workflow commands, SARIF 2.1.0 (validated against the OASIS schema) and JUnit XML."""
from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest

from report_samples import claim, every_kind, inconclusive, proved, refuted
from verifier.model.verdict import Verdict
from verifier.report import render
from verifier.report.github import escape_data, escape_property

SCHEMA = Path(__file__).resolve().parents[1] / "data" / "sarif-schema-2.1.0.json"


# ---------------------------------------------------------------- github


def test_github_escapes_follow_the_workflow_command_rules() -> None:
    # Escapes of the GitHub Actions toolkit's workflow commands (common practice): data escapes % CR LF,
    # properties also escape : and ,
    assert escape_data("50% a\r\nb") == "50%25 a%0D%0Ab"
    assert escape_property("x: a, b%") == "x%3A a%2C b%25"


def test_github_annotations_only_for_findings() -> None:
    out = render(every_kind(), "github", version="9.9").splitlines()
    errors = [line for line in out if line.startswith("::error ")]
    assert len(errors) == 4  # error, inconclusive (fail mode), refuted, refuted component
    assert not any("src/a.py" in line for line in out[:-1])  # proved claims are silent
    assert out[-1].startswith("::notice ")
    wrong = next(line for line in errors if "file=src/b.c" in line)
    props, message = wrong[len("::error "):].split("::", 1)
    assert props.split(",")[:3] == ["file=src/b.c", "line=10", "col=4"]
    assert "title=idealcheck refuted%3A (a+b)**2 == a**2 + b**2" in props
    assert "\n" not in message and "counter-normal-form%3A" not in message
    assert "%0Acounter-normal-form: 2*a*b" in message


def test_github_inconclusive_is_a_warning_in_warn_mode() -> None:
    out = render([inconclusive()], "github", version="1", on_inconclusive="warn")
    assert out.startswith("::warning file=src/c.jl,line=7,col=2,")


# ---------------------------------------------------------------- sarif


def _sarif(verdicts: list[Verdict], **kw: str) -> dict:
    return json.loads(render(verdicts, "sarif", version="9.9", **kw))


def test_sarif_validates_against_the_published_schema() -> None:
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    document = _sarif(every_kind())
    jsonschema.validate(document, schema, cls=jsonschema.Draft4Validator)
    jsonschema.validate(_sarif([]), schema, cls=jsonschema.Draft4Validator)


def test_sarif_schema_rejects_a_broken_document() -> None:
    # guards the validation above: the schema really is applied
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    document = _sarif(every_kind())
    document["runs"][0]["results"][0]["level"] = "fatal"
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(document, schema, cls=jsonschema.Draft4Validator)


def test_sarif_results_rules_and_locations() -> None:
    run = _sarif(every_kind())["runs"][0]
    driver = run["tool"]["driver"]
    assert driver["name"] == "idealcheck" and driver["version"] == "9.9"
    rule_ids = [r["id"] for r in driver["rules"]]
    assert rule_ids == ["IC-REFUTED", "IC-INCONCLUSIVE", "IC-ERROR", "IC-CHANGED"]
    results = run["results"]
    assert len(results) == 4  # the proved claim is not a result
    for result in results:
        assert driver["rules"][result["ruleIndex"]]["id"] == result["ruleId"]
        artifact = result["locations"][0]["physicalLocation"]["artifactLocation"]
        assert artifact["uriBaseId"] == "%SRCROOT%" and not artifact["uri"].startswith("/")
    wrong = next(r for r in results if r["properties"]["claimId"] == "src/b.c:10:4")
    assert wrong["ruleId"] == "IC-REFUTED" and wrong["level"] == "error"
    assert wrong["locations"][0]["physicalLocation"]["region"] == {"startLine": 10, "startColumn": 4}
    assert "counter-normal-form: 2*a*b" in wrong["message"]["text"]


def test_sarif_uri_is_percent_encoded() -> None:
    verdict = refuted()
    odd = Verdict(claim("dir with space/x#1.c", 2, 1, "a == b"), "refuted", None, "r", "a - b",
                  verdict.witness, (), 0.0)
    uri = _sarif([odd])["runs"][0]["results"][0]["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
    assert uri == "dir%20with%20space/x%231.c"


# ---------------------------------------------------------------- junit


def test_junit_one_testcase_per_claim_and_failures_parse_back() -> None:
    root = ET.fromstring(render(every_kind(), "junit", version="9.9"))
    suites = root.findall("testsuite")
    assert len(suites) == 1
    cases = suites[0].findall("testcase")
    assert len(cases) == 5
    # the claim in error is an <error>, not a <failure> (JUnit's distinction, common practice in CI tools)
    assert suites[0].get("tests") == "5" and suites[0].get("failures") == "3" and suites[0].get("errors") == "1"
    names = {(c.get("classname"), c.get("name")) for c in cases}
    assert ("src/b.c", "(a+b)**2 == a**2 + b**2") in names  # no line number: stable when code moves
    ok = next(c for c in cases if c.get("classname") == "src/a.py")
    assert ok.find("failure") is None
    wrong = next(c for c in cases if c.get("classname") == "src/b.c")
    failure = wrong.find("failure")
    assert failure is not None and failure.get("type") == "refuted"
    assert "counter-normal-form: 2*a*b" in (failure.text or "")


def test_junit_warn_mode_skips_inconclusive_claims() -> None:
    root = ET.fromstring(render([inconclusive(), proved()], "junit", version="1", on_inconclusive="warn"))
    assert root.find("testsuite").get("failures") == "0" and root.find("testsuite").get("skipped") == "1"
    assert all(c.find("failure") is None for c in root.iter("testcase"))
    skipped = [c for c in root.iter("testcase") if c.find("skipped") is not None]
    assert [c.get("classname") for c in skipped] == ["src/c.jl"]


def test_junit_escapes_markup_in_claim_text() -> None:
    odd = Verdict(claim("a.tex", 1, 1, "x < y & y > z"), "inconclusive", None, "<sign>", None, None, (), 0.0)
    root = ET.fromstring(render([odd], "junit", version="1"))
    assert root.find("testsuite/testcase").get("name") == "x < y & y > z"
