"""Accepting known results with a baseline file, end to end through the command line, in the scratch
project of a first run (tests/first_run_project.py) kept in a git repository.

The known results are two claims the tool leaves undecided, each for a reason a reader can check by
hand (common knowledge): ``log(x*y) == log(x) + log(y)`` holds only for positive x and y, which the claim
does not say; and ``returns 1 given x**4 == 1, x > 0`` for a function returning x is true (the real
fourth roots of 1 are 1 and -1) but needs sign reasoning beyond the tool.  Changing that function to
return ``x**4`` makes it provable (x**4 - 1 is in the ideal), to return 2 makes it false (x = 1).
"""
from __future__ import annotations

import json
import shutil
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

from first_run_project import json_report, scratch_project, write

if TYPE_CHECKING:
    from conftest import Cli, GitRepo

needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")

TANK = """\
# idealcheck: log(x*y) == log(x) + log(y)

# idealcheck: returns 1 given x**4 == 1, x > 0
def level(x):
    return {body}
"""
BASELINE = ".idealcheck-baseline.json"


def tank(root: Path, body: str = "x", above: str = "") -> None:
    write(root, "src/tank.py", above + TANK.format(body=body))


def verdicts(report: dict) -> dict[str, tuple[str, bool | None]]:
    return {c["text"]: (c["verdict"], c.get("expected", {}).get("met")) for c in report["claims"]}


@pytest.fixture()
def project(git_repo: GitRepo) -> Path:
    scratch_project(git_repo.path)
    tank(git_repo.path)
    git_repo("add", "-A")
    return git_repo.path


@needs_git
def test_a_baseline_lets_known_inconclusive_claims_pass_and_reports_a_change(cli: Cli, project: Path) -> None:
    code, report = json_report(cli, project)
    assert code == 1
    assert {c["text"] for c in report["claims"] if c["verdict"] == "inconclusive"} == {
        "log(x*y) == log(x) + log(y)", "returns 1 given x**4 == 1, x > 0"}
    written = cli("baseline", "--no-cache", cwd=project)
    assert written.code == 0, written.err
    assert written.out.startswith(f"wrote {BASELINE}: 2 accepted (2 inconclusive); 2 new, 0 removed")
    entries = json.loads((project / BASELINE).read_text())["claims"]
    assert [(e["path"], e["claim"], e["verdict"]) for e in entries] == [
        ("src/tank.py", "log(x*y) == log(x) + log(y)", "inconclusive"),
        ("src/tank.py", "returns 1 given x**4 == 1, x > 0", "inconclusive")]

    out = project.parent / "reports"
    out.mkdir()
    text = cli("check", "--no-cache", "--output", f"json={out / 'r.json'}", "--output", f"junit={out / 'r.xml'}",
               "--output", f"sarif={out / 'r.sarif'}", cwd=project)
    assert text.code == 0 and "(2 as expected)" in text.out.splitlines()[-1]
    assert f"accepted by the baseline {BASELINE}: inconclusive" in text.out
    accepted = [c for c in json.loads((out / "r.json").read_text())["claims"] if "expected" in c]
    assert len(accepted) == 2 and all(c["expected"]["met"] and c["expected"]["baseline"] == BASELINE
                                      for c in accepted)
    assert (out / "r.xml").read_text().count("<skipped") == 2
    sarif = json.loads((out / "r.sarif").read_text())
    kinds = [s["kind"] for r in sarif["runs"][0]["results"] for s in r.get("suppressions", [])]
    assert kinds == ["external", "external"]

    # keyed by file and claim text: code moving down the file changes nothing (results from the cache too)
    tank(project, above="import math\n\n\n")
    assert cli("check", cwd=project).code == 0
    cached = cli("check", cwd=project)
    assert cached.code == 0 and "from cache" in cached.out.splitlines()[-1]

    # the verdict changes: now provable, then false; each is reported and fails the run
    tank(project, body="x**4")
    code, report = json_report(cli, project)
    assert code == 1 and verdicts(report)["returns 1 given x**4 == 1, x > 0"] == ("proved", False)
    text = cli("check", "--no-cache", cwd=project)
    assert (f"the baseline {BASELINE} accepts inconclusive, now proved: run `idealcheck baseline` to drop "
            "the entry") in text.out
    tank(project, body="2 + 0*x")
    code, report = json_report(cli, project)
    assert code == 1 and verdicts(report)["returns 1 given x**4 == 1, x > 0"] == ("refuted", False)


@needs_git
def test_a_stale_entry_is_reported_and_an_update_removes_it(cli: Cli, project: Path) -> None:
    assert cli("baseline", "--no-cache", cwd=project).code == 0
    write(project, "src/tank.py", TANK.format(body="x").split("\n", 2)[2])  # the log claim is deleted
    result = cli("check", "--no-cache", cwd=project)
    assert result.code == 0
    assert (f"warning: {BASELINE}:4: stale baseline entry: no claim `log(x*y) == log(x) + log(y)` in "
            "src/tank.py any more (accepted inconclusive); run `idealcheck baseline` to update the file") in result.err
    # a hook passes file names: the whole project is still read, so no entry looks stale by mistake
    write(project, "src/tank.py", TANK.format(body="x"))
    hook = cli("check", "--no-cache", "src/wave.py", cwd=project)
    assert hook.code == 0 and "stale" not in hook.err
    write(project, "src/tank.py", TANK.format(body="x").split("\n", 2)[2])
    updated = cli("baseline", "--no-cache", cwd=project)
    assert "1 accepted (1 inconclusive); 0 new, 1 removed, 1 unchanged" in updated.out
    assert "stale" not in cli("check", "--no-cache", cwd=project).err


@needs_git
def test_reasons_are_kept_and_entries_outside_the_paths_stay(cli: Cli, project: Path) -> None:
    write(project, "notes.md", "<!-- idealcheck: log(p**2) == 2*log(p) -->\n")  # needs p > 0 too
    assert cli("baseline", "--no-cache", cwd=project).code == 0
    document = json.loads((project / BASELINE).read_text())
    for entry in document["claims"]:
        entry["reason"] = "holds for positive arguments only; the solver leaves it open"
    (project / BASELINE).write_text(json.dumps(document, indent=1))
    assert cli("baseline", "--no-cache", "src", cwd=project).code == 0  # notes.md is not under src
    entries = json.loads((project / BASELINE).read_text())["claims"]
    assert {e["path"] for e in entries} == {"notes.md", "src/tank.py"}
    assert all(e["reason"].startswith("holds for positive") for e in entries)
    text = cli("check", "--no-cache", cwd=project)
    assert text.code == 0 and "inconclusive (holds for positive arguments only" in text.out


@needs_git
def test_refuted_claims_are_accepted_only_when_asked_and_inline_markers_are_left_alone(cli: Cli, project: Path) -> None:
    write(project, "src/lesson.py", "# idealcheck: (a + b)**2 == a**2 + b**2\n"
          "# idealcheck: sqrt(x**2) == x expect refuted: wrong on purpose, for the tutorial\n")
    written = cli("baseline", "--no-cache", cwd=project)
    assert "1 refuted claim is not accepted" in written.out
    assert json_report(cli, project)[0] == 1
    assert cli("baseline", "--no-cache", "--accept-refuted", cwd=project).code == 0
    entries = json.loads((project / BASELINE).read_text())["claims"]
    assert [e["claim"] for e in entries if e["path"] == "src/lesson.py"] == ["(a + b)**2 == a**2 + b**2"]
    assert json_report(cli, project)[0] == 0


@needs_git
def test_the_baseline_file_is_chosen_and_checked_strictly(cli: Cli, project: Path) -> None:
    write(project, "pyproject.toml", '[tool.idealcheck]\nbaseline = "ci/accepted.json"\n')
    missing = cli("check", "--no-cache", cwd=project)
    assert missing.code == 2 and "baseline error: no such file: ci/accepted.json" in missing.err
    (project / "ci").mkdir()
    assert cli("baseline", "--no-cache", cwd=project).code == 0
    assert (project / "ci/accepted.json").is_file() and not (project / BASELINE).exists()
    assert cli("check", "--no-cache", cwd=project).code == 0
    assert cli("check", "--no-cache", "--no-baseline", cwd=project).code == 1
    (project / "ci/accepted.json").write_text('{"idealcheck_baseline": 1, "claims": [\n  {"path": "a.py",\n')
    broken = cli("check", "--no-cache", cwd=project)
    assert broken.code == 2 and "baseline error: ci/accepted.json:3:" in broken.err
    (project / "ci/accepted.json").write_text(
        '{"idealcheck_baseline": 1, "claims": [{"path": "a.py", "claim": "x == x", "verdict": "proved"}]}')
    wrong = cli("check", "--no-cache", cwd=project)
    assert wrong.code == 2 and "entry 1: \"verdict\" must be one of refuted, inconclusive, error" in wrong.err
    other = cli("check", "--no-cache", "--baseline", "nowhere.json", cwd=project)
    assert other.code == 2 and "no such file: nowhere.json" in other.err
