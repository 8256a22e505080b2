"""The command line: options, exit status, report files, changed-only runs, shards, jobs and the cache."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from verifier import __version__
from verifier.cli.main import main

# The binomial square (common practice), the same square without its cross term (false at a = b = 1),
# and a claim under a condition with no real solution (nothing to refute, nothing to prove).
TRUE_C = "// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_C = "int f(void);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"
OPEN_JL = "# idealcheck: x == 5 given x**2 + 1 == 0\n"


@pytest.fixture()
def tree(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    (tmp_path / "src").mkdir()
    (tmp_path / "src" / "kernel.c").write_text(TRUE_C)
    (tmp_path / "src" / "wrong.c").write_text(FALSE_C)
    (tmp_path / "pyproject.toml").write_text("[project]\nname = 'scratch'\n")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _json(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, dict]:
    status = main(["check", "--format", "json", "--jobs", "1", *argv])
    return status, json.loads(capsys.readouterr().out)


# ---------------------------------------------------------------- usage


def test_version(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0
    assert capsys.readouterr().out.strip() == f"idealcheck {__version__}"


def test_no_command_is_a_usage_error(capsys: pytest.CaptureFixture[str]) -> None:
    assert main([]) == 2


@pytest.mark.parametrize(
    "argv, named",
    [
        (["--jobs", "0"], "--jobs"),
        (["--timeout", "-1"], "--timeout"),
        (["--memory-mb", "lots"], "--memory-mb"),
        (["--shard", "3/2"], "--shard"),
        (["--format", "yaml"], "--format"),
        (["--on-inconclusive", "maybe"], "--on-inconclusive"),
    ],
)
def test_bad_option_values_exit_2_naming_the_option(argv: list[str], named: str, tree: Path,
                                                    capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["check", *argv])
    assert stop.value.code == 2
    assert named in capsys.readouterr().err


def test_staged_and_since_together_are_a_usage_error(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "--staged", "--since", "HEAD"]) == 2
    assert "--staged" in capsys.readouterr().err


def test_a_bad_config_exits_2_naming_the_key(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\non_inconclusive = \"shrug\"\n")
    assert main(["check"]) == 2
    assert "on_inconclusive" in capsys.readouterr().err


def test_a_missing_path_exits_2(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "src", "nowhere/"]) == 2
    assert "nowhere/" in capsys.readouterr().err


def test_a_missing_config_file_exits_2(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "--config", "nowhere.toml"]) == 2
    assert "--config" in capsys.readouterr().err


# ---------------------------------------------------------------- verdicts and exit status


def test_exit_status_follows_the_verdicts(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "--jobs", "1", "src/kernel.c"]) == 0
    out = capsys.readouterr().out
    assert "src/kernel.c:1:4: proved:" in out
    assert main(["check", "--jobs", "1"]) == 1
    captured = capsys.readouterr()
    out = captured.out
    assert "src/wrong.c:2:4: refuted: (a+b)**2 == a**2 + b**2" in out
    assert "counter-normal-form" in out
    assert "2 claims: 1 proved, 1 refuted, 0 inconclusive, 0 error" in out
    assert "claims decided" not in captured.err  # no progress line: stderr is not a terminal


def test_inconclusive_fails_unless_configured_to_warn(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (tree / "src" / "wrong.c").unlink()
    (tree / "src" / "open.jl").write_text(OPEN_JL)
    status, report = _json(capsys)
    assert report["summary"]["inconclusive"] == 1 and status == 1
    status, _ = _json(capsys, "--on-inconclusive", "warn")
    assert status == 0
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\non_inconclusive = \"warn\"\n")
    status, _ = _json(capsys)
    assert status == 0
    status, _ = _json(capsys, "--on-inconclusive", "fail")
    assert status == 1


def test_output_file_gets_the_format_and_stdout_the_text(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status = main(["check", "--jobs", "1", "--format", "sarif", "--output", "out.sarif"])
    assert status == 1
    out = capsys.readouterr().out
    assert "refuted:" in out and "claims:" in out  # the text report
    sarif = json.loads((tree / "out.sarif").read_text())
    assert sarif["version"] == "2.1.0" and len(sarif["runs"][0]["results"]) == 1


def test_github_and_junit_formats_end_to_end(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    import xml.etree.ElementTree as ET

    assert main(["check", "--jobs", "1", "--format", "github"]) == 1
    lines = capsys.readouterr().out.splitlines()
    errors = [line for line in lines if line.startswith("::error ")]
    assert len(errors) == 1 and errors[0].startswith("::error file=src/wrong.c,line=2,col=4,title=")
    assert main(["check", "--jobs", "1", "--format", "junit", "--output", "report.xml"]) == 1
    suite = ET.parse(tree / "report.xml").getroot().find("testsuite")
    cases = suite.findall("testcase")
    assert len(cases) == 2 and sum(c.find("failure") is not None for c in cases) == 1


def test_python_dash_m_runs_the_command(tree: Path) -> None:
    result = subprocess.run([sys.executable, "-m", "verifier", "check", "--format", "json", "--jobs", "2"],
                            cwd=tree, capture_output=True, text=True)
    assert result.returncode == 1, result.stderr
    report = json.loads(result.stdout)
    assert [c["verdict"] for c in report["claims"]] == ["proved", "refuted"]


def test_a_pathological_claim_ends_within_its_limit_and_the_rest_is_reported(
        tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (tree / "src" / "huge.c").write_text(
        "// idealcheck: (a+b+c+d+e+f)**200 == (a+b+c+d+e+f)**199*(a+b+c+d+e+f) + 1\n")
    status, report = _json(capsys, "--timeout", "1", "--jobs", "2")
    verdicts = {c["path"]: c for c in report["claims"]}
    assert status == 1
    assert verdicts["src/huge.c"]["verdict"] == "inconclusive"
    assert "limit" in verdicts["src/huge.c"]["reason"]
    assert verdicts["src/kernel.c"]["verdict"] == "proved" and verdicts["src/wrong.c"]["verdict"] == "refuted"


# ---------------------------------------------------------------- jobs, shards


def _without_seconds(report: dict) -> dict:
    for claim in report["claims"]:
        claim.pop("seconds")
    return report


def test_parallel_report_equals_serial_report(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    for index in range(6):
        (tree / "src" / f"more{index}.c").write_text(TRUE_C + FALSE_C.replace("b**2", f"b**2 + {index}"))
    _, serial = _json(capsys, "--no-cache")
    status = main(["check", "--format", "json", "--jobs", "3", "--no-cache"])
    parallel = json.loads(capsys.readouterr().out)
    assert status == 1
    assert _without_seconds(parallel) == _without_seconds(serial)


def test_shards_split_the_claims_without_overlap(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    for index in range(8):
        (tree / "src" / f"more{index}.c").write_text(TRUE_C)
    _, whole = _json(capsys)
    ids = [c["id"] for c in whole["claims"]]
    shares = []
    for k in (1, 2, 3):
        _, part = _json(capsys, "--shard", f"{k}/3")
        shares.append([c["id"] for c in part["claims"]])
    assert sorted(i for share in shares for i in share) == sorted(ids)
    assert sum(len(s) for s in shares) == len(ids)


# ---------------------------------------------------------------- cache


def test_second_run_comes_from_the_cache(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", "--jobs", "1"]) == 1
    assert "from cache" not in capsys.readouterr().out
    assert (tree / ".idealcheck_cache" / "CACHEDIR.TAG").is_file()
    assert main(["check", "--jobs", "1"]) == 1
    assert "(2 from cache)" in capsys.readouterr().out


def test_no_cache_and_cache_dir(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    main(["check", "--jobs", "1", "--no-cache"])
    assert not (tree / ".idealcheck_cache").exists()
    main(["check", "--jobs", "1", "--cache-dir", "elsewhere"])
    assert (tree / "elsewhere" / "CACHEDIR.TAG").is_file()
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\ncache_dir = \"from-config\"\n")
    main(["check", "--jobs", "1"])
    assert (tree / "from-config" / "CACHEDIR.TAG").is_file()
    assert not (tree / ".idealcheck_cache").exists()


# ---------------------------------------------------------------- changed-only runs


def _git(repo: Path, *args: str) -> None:
    env = dict(os.environ, GIT_AUTHOR_NAME="T", GIT_AUTHOR_EMAIL="t@example.invalid",
               GIT_COMMITTER_NAME="T", GIT_COMMITTER_EMAIL="t@example.invalid")
    subprocess.run(["git", *args], cwd=repo, env=env, check=True, capture_output=True)


def test_since_checks_only_claims_touched_since_the_revision(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    _git(tree, "init", "-q", "-b", "main")
    _git(tree, "add", "src", "pyproject.toml")
    _git(tree, "commit", "-q", "-m", "first")
    (tree / "src" / "kernel.c").write_text(TRUE_C + "// idealcheck: a*b == b*a\n")
    _git(tree, "commit", "-q", "-am", "second")
    status, report = _json(capsys, "--since", "HEAD~1")
    assert status == 0  # the wrong claim in the untouched file is not checked
    assert {c["path"] for c in report["claims"]} == {"src/kernel.c"} and len(report["claims"]) == 2


def test_staged_checks_the_index(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    _git(tree, "init", "-q", "-b", "main")
    _git(tree, "add", "src/kernel.c", "pyproject.toml")
    _git(tree, "commit", "-q", "-m", "first")
    (tree / "src" / "kernel.c").write_text(FALSE_C)
    _git(tree, "add", "src/kernel.c")
    (tree / "src" / "kernel.c").write_text(TRUE_C)  # working tree differs from the index
    status, report = _json(capsys, "--staged")
    assert status == 1
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("src/kernel.c", "refuted")]


def test_staged_outside_a_git_repository_is_a_usage_error(tree: Path, capsys: pytest.CaptureFixture[str],
                                                           monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tree.parent))
    assert main(["check", "--staged"]) == 2
    assert "git" in capsys.readouterr().err


def test_a_file_argument_selects_the_claims_of_that_file(tree: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, report = _json(capsys, "src/wrong.c")
    assert status == 1 and [c["path"] for c in report["claims"]] == ["src/wrong.c"]


HELPER = "def norm2(x, y):\n    return x*x + y*y\n"
USER = "from geo.helpers import norm2\n\n\n# idealcheck: returns x**2 + y**2\ndef length2(x, y):\n    return norm2(x, y)\n"


@pytest.fixture()
def python_tree(tree: Path) -> Path:
    (tree / "geo").mkdir()
    (tree / "geo" / "helpers.py").write_text(HELPER)
    (tree / "geo" / "use.py").write_text(USER)
    return tree


def test_a_file_argument_selects_the_claims_that_depend_on_it(python_tree: Path,
                                                              capsys: pytest.CaptureFixture[str]) -> None:
    # what a hook does with pass_filenames: the changed helper re-checks the claim that inlines it
    status, report = _json(capsys, "geo/helpers.py")
    assert status == 0
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "proved")]


def test_a_changed_helper_re_checks_every_claim_using_it(python_tree: Path,
                                                         capsys: pytest.CaptureFixture[str]) -> None:
    _git(python_tree, "init", "-q", "-b", "main")
    _git(python_tree, "add", ".")
    _git(python_tree, "commit", "-q", "-m", "first")
    (python_tree / "geo" / "helpers.py").write_text(HELPER.replace("y*y", "y*x"))  # a wrong rewrite
    status, report = _json(capsys, "--since", "HEAD")
    assert status == 1
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "refuted")]
    _git(python_tree, "add", "geo/helpers.py")
    status, report = _json(capsys, "--staged")
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "refuted")]
