"""CI formats from one run, through the command line: SARIF (validated against the published OASIS 2.1.0
schema in tests/data), JUnit XML (the classification CI tools give <failure>, <error> and <skipped>, common
practice), several outputs from one run, and the SARIF file of a run stopped by a configuration error.
"""
from __future__ import annotations

import json
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest

from verifier.cli.main import main

SCHEMA = json.loads((Path(__file__).resolve().parents[1] / "data" / "sarif-schema-2.1.0.json").read_text())
# The binomial square (common practice), the same without its cross term (false at a = b = 1), and x == 5
# under Motzkin's polynomial plus 1 == 0 (no real point, but not a sum of squares: undecided).
TRUE_C = "// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_C = "int f(void);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"
OPEN_C = "// idealcheck: x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0\n"
BROKEN_C = "// idealcheck: a == (b\n"


@pytest.fixture()
def repo(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """A git repository whose project (with the pyproject.toml) is the sub-folder ``proj``."""
    subprocess.run(["git", "init", "-q", str(tmp_path)], check=True)
    project = tmp_path / "proj"
    (project / "src").mkdir(parents=True)
    (project / "pyproject.toml").write_text("[project]\nname = 'scratch'\n")
    (project / "src" / "true.c").write_text(TRUE_C)
    (project / "src" / "false.c").write_text(FALSE_C)
    (project / "src" / "open.c").write_text(OPEN_C)
    (project / "src" / "broken.c").write_text(BROKEN_C)
    monkeypatch.chdir(project)
    return tmp_path


def _check(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    status = main(["check", "--jobs", "1", "--no-cache", *argv])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_one_run_writes_every_report(repo: Path, capsys) -> None:
    status, out, _ = _check(capsys, "--format", "github", "--output", "sarif=out.sarif",
                            "--output", "junit=out.xml", "--output", "json=out.json")
    assert status == 1
    assert out.startswith("::error ") and "::notice " in out  # stdout: the chosen --format
    sarif = json.loads(Path("out.sarif").read_text())
    jsonschema.validate(sarif, SCHEMA, cls=jsonschema.Draft4Validator)
    junit = ET.fromstring(Path("out.xml").read_text())
    claims = json.loads(Path("out.json").read_text())["claims"]
    assert len(claims) == 4 and len(junit.findall("testsuite/testcase")) == 4
    assert len(sarif["runs"][0]["results"]) == 3  # the proved claim is no alert


def test_a_bare_output_file_keeps_its_old_meaning(repo: Path, capsys) -> None:
    _, out, _ = _check(capsys, "--format", "sarif", "--output", "old.sarif")
    assert json.loads(Path("old.sarif").read_text())["version"] == "2.1.0"
    assert out.splitlines()[-1].startswith("4 claims:")  # the text report on stdout


def test_an_unknown_output_format_is_a_usage_error(repo: Path, capsys) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["check", "--output", "yaml=x.yml"])
    assert stop.value.code == 2 and "unknown format `yaml`" in capsys.readouterr().err


def test_sarif_rules_help_fingerprints_and_repository_relative_uris(repo: Path, capsys) -> None:
    _check(capsys, "--output", "sarif=out.sarif")
    run = json.loads(Path("out.sarif").read_text())["runs"][0]
    rules = run["tool"]["driver"]["rules"]
    assert [r["name"] for r in rules] == ["ClaimRefuted", "ClaimInconclusive", "ClaimError", "ExpectedVerdictChanged"]
    for rule in rules:
        assert rule["help"]["text"] and rule["help"]["markdown"]
    base = run["originalUriBaseIds"]["%SRCROOT%"]
    assert base["uri"] == repo.resolve().as_uri() + "/"
    uris = sorted(r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] for r in run["results"])
    assert uris == ["proj/src/broken.c", "proj/src/false.c", "proj/src/open.c"]  # from the repository root
    before = {r["properties"]["claimText"]: r["partialFingerprints"] for r in run["results"]}

    # the same claim two lines lower, after an edit above it: the same fingerprint
    Path("src/false.c").write_text("int g(void);\nint h(void);\n" + FALSE_C)
    _check(capsys, "--output", "sarif=moved.sarif")
    moved = json.loads(Path("moved.sarif").read_text())["runs"][0]["results"]
    after = {r["properties"]["claimText"]: r["partialFingerprints"] for r in moved}
    assert after == before
    line = next(r for r in moved if "b**2" in r["properties"]["claimText"])
    assert line["locations"][0]["physicalLocation"]["region"]["startLine"] == 4


def test_sarif_is_written_and_valid_when_the_configuration_is_wrong(repo: Path, capsys) -> None:
    Path("pyproject.toml").write_text("[tool.idealcheck]\ntimeout = \"soon\"\n")
    status, _, err = _check(capsys, "--output", "sarif=out.sarif", "--output", "junit=out.xml")
    assert status == 2 and "timeout" in err
    sarif = json.loads(Path("out.sarif").read_text())
    jsonschema.validate(sarif, SCHEMA, cls=jsonschema.Draft4Validator)
    invocation = sarif["runs"][0]["invocations"][0]
    assert invocation["executionSuccessful"] is False
    notification = invocation["toolExecutionNotifications"][0]
    assert notification["level"] == "error" and "timeout" in notification["message"]["text"]
    assert sarif["runs"][0]["results"] == []


def test_junit_classifies_failures_errors_and_skips_with_stable_names(repo: Path, capsys) -> None:
    _check(capsys, "--output", "junit=fail.xml")
    suite = ET.fromstring(Path("fail.xml").read_text()).find("testsuite")
    kinds = {case.get("classname"): [child.tag for child in case if child.tag != "system-out"]
             for case in suite.findall("testcase")}
    assert kinds == {"src/true.c": [], "src/false.c": ["failure"], "src/open.c": ["failure"],
                     "src/broken.c": ["error"]}
    assert (suite.get("failures"), suite.get("errors"), suite.get("skipped")) == ("2", "1", "0")
    names = {(case.get("classname"), case.get("name")) for case in suite.findall("testcase")}
    assert ("src/false.c", "(a+b)**2 == a**2 + b**2") in names

    _check(capsys, "--output", "junit=warn.xml", "--on-inconclusive", "warn")
    suite = ET.fromstring(Path("warn.xml").read_text()).find("testsuite")
    open_case = next(c for c in suite.findall("testcase") if c.get("classname") == "src/open.c")
    assert open_case.find("skipped") is not None and suite.get("skipped") == "1"

    Path("src/false.c").write_text("\n\n\n" + FALSE_C)  # moved: the test's name stays
    _check(capsys, "--output", "junit=moved.xml")
    moved = {(c.get("classname"), c.get("name")) for c in ET.parse("moved.xml").getroot().iter("testcase")}
    assert moved == names


def test_an_accepted_result_is_skipped_in_junit_and_suppressed_in_sarif(repo: Path, capsys) -> None:
    Path("src/open.c").write_text("// idealcheck: x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0 expect inconclusive: no real point\n")
    _check(capsys, "--output", "junit=out.xml", "--output", "sarif=out.sarif")
    case = next(c for c in ET.parse("out.xml").getroot().iter("testcase") if c.get("classname") == "src/open.c")
    assert "accepted: expected inconclusive (no real point)" in case.find("skipped").get("message")
    sarif = json.loads(Path("out.sarif").read_text())
    jsonschema.validate(sarif, SCHEMA, cls=jsonschema.Draft4Validator)
    result = next(r for r in sarif["runs"][0]["results"] if r["properties"]["claimText"].startswith("x == 5"))
    assert result["suppressions"] == [{"kind": "inSource", "justification": "no real point"}]
    assert result["level"] == "warning"
