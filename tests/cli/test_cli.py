"""The command line: options, exit status, report files, changed-only runs, shards, jobs and the cache."""
from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

from verifier import __version__

if TYPE_CHECKING:
    from conftest import Cli, GitRepo

# The binomial square (common practice), the same square without its cross term (false at a = b = 1),
# and a claim under a condition with no real solution (nothing to refute, nothing to prove).
TRUE_C = "// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_C = "int f(void);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"
OPEN_JL = "# idealcheck: x == 5 given x**4*y**2 + x**2*y**4 - 3*x**2*y**2 + 2 == 0\n"


@pytest.fixture()
def tree(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    (tmp_path / "src").mkdir()
    (tmp_path / "src" / "kernel.c").write_text(TRUE_C)
    (tmp_path / "src" / "wrong.c").write_text(FALSE_C)
    (tmp_path / "pyproject.toml").write_text("[project]\nname = 'scratch'\n")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _json(cli: Cli, *argv: str) -> tuple[int, dict]:
    run = cli("check", "--format", "json", "--jobs", "1", *argv)
    return run.code, json.loads(run.out)


# ---------------------------------------------------------------- usage


def test_version(cli: Cli) -> None:
    run = cli("--version")
    assert run.code == 0
    assert run.out.strip() == f"idealcheck {__version__}"


def test_no_command_is_a_usage_error(cli: Cli) -> None:
    run = cli()
    assert run.code == 2


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
def test_bad_option_values_exit_2_naming_the_option(argv: list[str], named: str, tree: Path, cli: Cli) -> None:
    run = cli("check", *argv)
    assert run.code == 2
    assert named in run.err


def test_staged_and_since_together_are_a_usage_error(tree: Path, cli: Cli) -> None:
    run = cli("check", "--staged", "--since", "HEAD")
    assert run.code == 2
    assert "--staged" in run.err


def test_a_bad_config_exits_2_naming_the_key(tree: Path, cli: Cli) -> None:
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\non_inconclusive = \"shrug\"\n")
    run = cli("check")
    assert run.code == 2
    assert "on_inconclusive" in run.err


def test_a_missing_path_exits_2(tree: Path, cli: Cli) -> None:
    run = cli("check", "src", "nowhere/")
    assert run.code == 2
    assert "nowhere/" in run.err


def test_a_missing_config_file_exits_2(tree: Path, cli: Cli) -> None:
    run = cli("check", "--config", "nowhere.toml")
    assert run.code == 2
    assert "--config" in run.err


# ---------------------------------------------------------------- verdicts and exit status


def test_exit_status_follows_the_verdicts(tree: Path, cli: Cli) -> None:
    run = cli("check", "--jobs", "1", "src/kernel.c")
    assert run.code == 0
    out = run.out
    assert "src/kernel.c:1:4: proved:" in out
    run = cli("check", "--jobs", "1")
    assert run.code == 1
    captured = run
    out = captured.out
    assert "src/wrong.c:2:4: refuted: (a+b)**2 == a**2 + b**2" in out
    assert "counter-normal-form" in out
    assert "2 claims: 1 proved, 1 refuted, 0 inconclusive, 0 error" in out
    assert "claims decided" not in captured.err  # no progress line: stderr is not a terminal


def test_inconclusive_fails_unless_configured_to_warn(tree: Path, cli: Cli) -> None:
    (tree / "src" / "wrong.c").unlink()
    (tree / "src" / "open.jl").write_text(OPEN_JL)
    status, report = _json(cli)
    assert report["summary"]["inconclusive"] == 1 and status == 1
    status, _ = _json(cli, "--on-inconclusive", "warn")
    assert status == 0
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\non_inconclusive = \"warn\"\n")
    status, _ = _json(cli)
    assert status == 0
    status, _ = _json(cli, "--on-inconclusive", "fail")
    assert status == 1


def test_output_file_gets_the_format_and_stdout_the_text(tree: Path, cli: Cli) -> None:
    run = cli("check", "--jobs", "1", "--format", "sarif", "--output", "out.sarif")
    status = run.code
    assert status == 1
    out = run.out
    assert "refuted:" in out and "claims:" in out  # the text report
    sarif = json.loads((tree / "out.sarif").read_text())
    assert sarif["version"] == "2.1.0" and len(sarif["runs"][0]["results"]) == 1


def test_github_and_junit_formats_end_to_end(tree: Path, cli: Cli) -> None:
    import xml.etree.ElementTree as ET

    run = cli("check", "--jobs", "1", "--format", "github")
    assert run.code == 1
    lines = run.out.splitlines()
    errors = [line for line in lines if line.startswith("::error ")]
    assert len(errors) == 1 and errors[0].startswith("::error file=src/wrong.c,line=2,col=4,title=")
    run = cli("check", "--jobs", "1", "--format", "junit", "--output", "report.xml")
    assert run.code == 1
    suite = ET.parse(tree / "report.xml").getroot().find("testsuite")
    cases = suite.findall("testcase")
    assert len(cases) == 2 and sum(c.find("failure") is not None for c in cases) == 1


def test_python_dash_m_runs_the_command(tree: Path, cli: Cli) -> None:
    result = cli("check", "--format", "json", "--jobs", "2", cwd=tree, fresh_process=True)
    assert result.code == 1, result.err
    report = json.loads(result.out)
    assert [c["verdict"] for c in report["claims"]] == ["proved", "refuted"]


def test_a_pathological_claim_ends_within_its_limit_and_the_rest_is_reported(
        tree: Path, cli: Cli) -> None:
    (tree / "src" / "huge.c").write_text(
        "// idealcheck: (a+b+c+d+e+f)**200 == (a+b+c+d+e+f)**199*(a+b+c+d+e+f) + 1\n")
    status, report = _json(cli, "--timeout", "1", "--jobs", "2")
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


def test_parallel_report_equals_serial_report(tree: Path, cli: Cli) -> None:
    for index in range(6):
        (tree / "src" / f"more{index}.c").write_text(TRUE_C + FALSE_C.replace("b**2", f"b**2 + {index}"))
    _, serial = _json(cli, "--no-cache")
    run = cli("check", "--format", "json", "--jobs", "3", "--no-cache")
    status = run.code
    parallel = json.loads(run.out)
    assert status == 1
    assert _without_seconds(parallel) == _without_seconds(serial)


def test_shards_split_the_claims_without_overlap(tree: Path, cli: Cli) -> None:
    for index in range(8):
        (tree / "src" / f"more{index}.c").write_text(TRUE_C)
    _, whole = _json(cli)
    ids = [c["id"] for c in whole["claims"]]
    shares = []
    for k in (1, 2, 3):
        _, part = _json(cli, "--shard", f"{k}/3")
        shares.append([c["id"] for c in part["claims"]])
    assert sorted(i for share in shares for i in share) == sorted(ids)
    assert sum(len(s) for s in shares) == len(ids)


# ---------------------------------------------------------------- cache


def test_second_run_comes_from_the_cache(tree: Path, cli: Cli) -> None:
    run = cli("check", "--jobs", "1")
    assert run.code == 1
    assert "from cache" not in run.out
    assert (tree / ".idealcheck_cache" / "CACHEDIR.TAG").is_file()
    run = cli("check", "--jobs", "1")
    assert run.code == 1
    assert "(2 from cache)" in run.out


def test_no_cache_and_cache_dir(tree: Path, cli: Cli) -> None:
    run = cli("check", "--jobs", "1", "--no-cache")
    assert not (tree / ".idealcheck_cache").exists()
    run = cli("check", "--jobs", "1", "--cache-dir", "elsewhere")
    assert (tree / "elsewhere" / "CACHEDIR.TAG").is_file()
    (tree / "pyproject.toml").write_text("[tool.idealcheck]\ncache_dir = \"from-config\"\n")
    run = cli("check", "--jobs", "1")
    assert (tree / "from-config" / "CACHEDIR.TAG").is_file()
    assert not (tree / ".idealcheck_cache").exists()


# ---------------------------------------------------------------- changed-only runs


def test_since_checks_only_claims_touched_since_the_revision(tree: Path, cli: Cli, git_repo: GitRepo) -> None:
    git_repo("add", "src", "pyproject.toml")
    git_repo("commit", "-q", "-m", "first")
    (tree / "src" / "kernel.c").write_text(TRUE_C + "// idealcheck: a*b == b*a\n")
    git_repo("commit", "-q", "-am", "second")
    status, report = _json(cli, "--since", "HEAD~1")
    assert status == 0  # the wrong claim in the untouched file is not checked
    assert {c["path"] for c in report["claims"]} == {"src/kernel.c"} and len(report["claims"]) == 2


def test_staged_checks_the_index(tree: Path, cli: Cli, git_repo: GitRepo) -> None:
    git_repo("add", "src/kernel.c", "pyproject.toml")
    git_repo("commit", "-q", "-m", "first")
    (tree / "src" / "kernel.c").write_text(FALSE_C)
    git_repo("add", "src/kernel.c")
    (tree / "src" / "kernel.c").write_text(TRUE_C)  # working tree differs from the index
    status, report = _json(cli, "--staged")
    assert status == 1
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("src/kernel.c", "refuted")]


def test_staged_outside_a_git_repository_is_a_usage_error(tree: Path, monkeypatch: pytest.MonkeyPatch, cli: Cli) -> None:
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tree.parent))
    run = cli("check", "--staged")
    assert run.code == 2
    assert "git" in run.err


def test_a_file_argument_selects_the_claims_of_that_file(tree: Path, cli: Cli) -> None:
    status, report = _json(cli, "src/wrong.c")
    assert status == 1 and [c["path"] for c in report["claims"]] == ["src/wrong.c"]


HELPER = "def norm2(x, y):\n    return x*x + y*y\n"
USER = "from geo.helpers import norm2\n\n\n# idealcheck: returns x**2 + y**2\ndef length2(x, y):\n    return norm2(x, y)\n"


@pytest.fixture()
def python_tree(tree: Path) -> Path:
    (tree / "geo").mkdir()
    (tree / "geo" / "helpers.py").write_text(HELPER)
    (tree / "geo" / "use.py").write_text(USER)
    return tree


def test_a_file_argument_selects_the_claims_that_depend_on_it(python_tree: Path, cli: Cli) -> None:
    # what a hook does with pass_filenames: the changed helper re-checks the claim that inlines it
    status, report = _json(cli, "geo/helpers.py")
    assert status == 0
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "proved")]


def test_a_changed_helper_re_checks_every_claim_using_it(python_tree: Path, cli: Cli, git_repo: GitRepo) -> None:
    git_repo("add", ".")
    git_repo("commit", "-q", "-m", "first")
    (python_tree / "geo" / "helpers.py").write_text(HELPER.replace("y*y", "y*x"))  # a wrong rewrite
    status, report = _json(cli, "--since", "HEAD")
    assert status == 1
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "refuted")]
    git_repo("add", "geo/helpers.py")
    status, report = _json(cli, "--staged")
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("geo/use.py", "refuted")]
