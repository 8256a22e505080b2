"""The Python API (verifier/api.py) on the scratch project of tests/prose_project.py and on single claims.

Identities are common practice (binomial square, difference of squares, sqrt(x**2) = x for x >= 0); every
reported witness is re-checked here with plain rational arithmetic.
"""
from __future__ import annotations

import dataclasses
import json
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from prose_project import EXPECTED, write_project, witness_values
from verifier import api
from verifier.model.verdict import Verdict


@pytest.fixture()
def project(tmp_path: Path) -> Path:
    return write_project(tmp_path / "project")


def _summary(verdicts: tuple[Verdict, ...]) -> list[tuple[str, int | None, int, str]]:
    return [(v.claim.location.path, v.claim.location.cell, v.claim.location.line, v.verdict) for v in verdicts]


def test_check_paths_finds_every_claim_of_the_configured_paths(project: Path) -> None:
    result = api.check_paths(cwd=project, cache=False, jobs=2)
    assert isinstance(result, api.RunResult)
    assert sorted(_summary(result.verdicts), key=str) == sorted(
        [(e.path, e.cell, e.line, e.verdict) for e in EXPECTED], key=str)
    assert not result.ok
    assert result.counts == {"proved": 6, "refuted": 3, "inconclusive": 0, "error": 0}
    for verdict in result.with_verdict("refuted"):
        place = verdict.claim.location
        expected = next(e for e in EXPECTED if (e.path, e.cell, e.line) == (place.path, place.cell, place.line))
        assert expected.sides is not None and verdict.witness is not None
        left, right = expected.sides(witness_values(dict(verdict.witness.values)))
        assert left != right
    # the verdicts are the model's frozen dataclasses
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.verdicts[0].verdict = "proved"  # type: ignore[misc]


def test_explicit_paths_and_a_config_object(project: Path) -> None:
    config = api.load_config(project)
    assert config.paths == ("src", "docs")
    result = api.check_paths(["docs/theory.rst"], config, cwd=project, cache=False, in_process=True)
    # a file argument selects the claims that depend on it
    assert _summary(result.verdicts) == [("docs/theory.rst", None, 4, "proved")]
    assert result.ok


def test_find_then_decide_a_subset(project: Path) -> None:
    found = api.find_claims(cwd=project, cache=False)
    assert len(found.claims) == len(EXPECTED)
    notebook = [c for c in found.claims if c.location.cell is not None]
    verdicts = api.decide_claims(found, notebook)
    assert _summary(verdicts) == [("src/derivation.ipynb", 1, 3, "proved"), ("src/derivation.ipynb", 3, 1, "proved"),
                                  ("src/derivation.ipynb", 4, 1, "refuted")]


def test_the_result_cache_is_the_tools_own(project: Path) -> None:
    first = api.check_paths(["docs"], cwd=project)
    second = api.check_paths(["docs"], cwd=project)
    assert (project / ".idealcheck_cache").is_dir()
    assert [v.verdict for v in first.verdicts] == [v.verdict for v in second.verdicts]
    assert all(v.cached for v in second.verdicts) and not any(v.cached for v in first.verdicts)


def test_decide_claim_with_conditions() -> None:
    proved = api.decide_claim("sqrt(x**2) == x", ["x >= 0"], in_process=True)
    assert proved.text == "sqrt(x**2) == x given x >= 0"
    assert proved.verdict == "proved" and proved.proved and proved.ok
    refuted = api.decide_claim("sqrt(x**2) == x", in_process=True)
    assert refuted.verdict == "refuted"
    witness = refuted.verdicts[0].witness
    assert witness is not None and float(dict(witness.values)["x"]) < 0  # sqrt(x**2) = |x| != x exactly there
    combined = api.decide_claim("sqrt(x**2) == x given x > 0", ["x < 5"], in_process=True)
    assert combined.text == "sqrt(x**2) == x given x > 0, x < 5" and combined.proved


def test_decide_claim_chains_have_a_verdict_per_link() -> None:
    result = api.decide_claim("(a + b)**2 == a**2 + 2*a*b + b**2 == a**2 + b**2", in_process=True)
    assert [v.verdict for v in result.verdicts] == ["proved", "refuted"]
    assert result.verdict == "refuted"


def test_decide_claim_never_evaluates_its_text(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    marker = tmp_path / "ran"
    result = api.decide_claim(f"__import__('pathlib').Path({str(marker)!r}).touch() == 1", in_process=True)
    assert result.verdict == "error" and not marker.exists()
    assert "unsupported call" in result.verdicts[0].reason or "unknown function" in result.verdicts[0].reason


def test_decide_claim_uses_the_named_condition_sets_of_the_config(tmp_path: Path) -> None:
    (tmp_path / "pyproject.toml").write_text(
        '[tool.idealcheck.conditions.unit]\nvars = ["c", "s"]\ngiven = ["c**2 + s**2 == 1"]\n')
    result = api.decide_claim("(c**2 + s**2)**2 == 1", ["unit(c, s)"], config=tmp_path / "pyproject.toml",
                              in_process=True)
    assert result.proved


def test_render_report_in_every_format(project: Path) -> None:
    result = api.check_paths(["src/derivation.ipynb"], cwd=project, cache=False, in_process=True)
    text = api.render_report(result)
    assert "src/derivation.ipynb:cell 4:1:3: refuted: (p - q)*(p + q) == p**2 + q**2" in text
    document = json.loads(api.render_report(result, "json"))
    cells = [(c["cell"], c["line"], c["verdict"]) for c in document["claims"]]
    assert cells == [(1, 3, "proved"), (3, 1, "proved"), (4, 1, "refuted")]
    sarif = json.loads(api.render_report(result, "sarif"))
    (finding,) = sarif["runs"][0]["results"]
    location = finding["locations"][0]
    assert location["physicalLocation"]["region"]["startLine"] == 1
    assert location["message"]["text"] == "cell 4" and finding["properties"]["cell"] == 4
    junit = ET.fromstring(api.render_report(result, "junit"))
    names = [case.get("name") for case in junit.iter("testcase")]
    assert "cell 4: (p - q)*(p + q) == p**2 + q**2" in names  # no line number: stable when code moves
    assert api.render_report(result.verdicts, "text") == text
    with pytest.raises(ValueError):
        api.render_report(result, "yaml")  # type: ignore[arg-type]


def test_a_bad_configuration_raises_config_error(tmp_path: Path) -> None:
    (tmp_path / "pyproject.toml").write_text('[tool.idealcheck]\npaths = "src"\n')
    with pytest.raises(api.ConfigError, match="paths"):
        api.check_paths(cwd=tmp_path)


def test_the_stable_names() -> None:
    assert set(api.__all__) >= {"check_paths", "decide_claim", "render_report", "find_claims", "decide_claims",
                                "load_config", "RunResult", "ClaimResult", "ClaimSet"}


def _accept_refuted(project: Path, *extra: dict[str, str]) -> None:
    """A baseline beside the pyproject.toml that accepts every refuted claim of the project, and ``extra``."""
    refuted = [{"path": e.path, "claim": c.text, "verdict": "refuted", "reason": "kept for the tutorial"}
               for e in EXPECTED if e.verdict == "refuted"
               for c in api.find_claims([e.path], cwd=project, cache=False, baseline=False).claims
               if (c.location.cell, c.location.line) == (e.cell, e.line)]
    assert len(refuted) == 3
    document = {"idealcheck_baseline": 1, "claims": refuted + list(extra)}
    (project / ".idealcheck-baseline.json").write_text(json.dumps(document, indent=1), encoding="utf-8")


def test_the_baseline_applies_as_on_the_command_line(project: Path) -> None:
    stale = {"path": "src/kernels.py", "claim": "q == q + 1", "verdict": "refuted", "reason": ""}
    _accept_refuted(project, stale)
    accepted = api.check_paths(cwd=project, cache=False, in_process=True)
    assert accepted.ok and accepted.counts["refuted"] == 3
    assert all(v.claim.expected is not None for v in accepted.with_verdict("refuted"))
    found = api.find_claims(cwd=project, cache=False)
    assert [s.entry.claim for s in found.stale] == ["q == q + 1"]
    assert not api.check_paths(cwd=project, cache=False, in_process=True, baseline=False).ok
    moved = project / "ci-accepted.json"
    (project / ".idealcheck-baseline.json").rename(moved)
    assert not api.check_paths(cwd=project, cache=False, in_process=True).ok  # the default file is gone
    assert api.check_paths(cwd=project, cache=False, in_process=True, baseline="ci-accepted.json").ok
    with pytest.raises(api.BaselineError, match="no such file: nowhere.json"):
        api.find_claims(cwd=project, cache=False, baseline="nowhere.json")
