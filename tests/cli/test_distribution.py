"""The distribution: licence, metadata and one version source, the changelog, the workflow example as a
user copies it, the hook manifest's file selection and the hooks' quiet output, and the demo's report
fitting on one screen.
"""
from __future__ import annotations

import importlib.metadata
import os
import re
import shlex
import shutil
import stat
import subprocess
import sys
import venv
from pathlib import Path

import pytest
import yaml
from packaging.requirements import Requirement

import verifier

CHECKOUT = Path(__file__).resolve().parents[2]
BIN = Path(sys.executable).parent
FALSE_C = "int square(int a, int b);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"  # false at a = b = 1
TRUE_C = "int square(int a, int b);\n// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"  # common practice
# A terminal window of common size is about 50 lines; main's demo grew to 27 claims (CUDA and C kernels,
# one with three failing components), so the bound is a tall window now.
SCREEN_LINES = 60


def test_licence_is_bsd_3_clause_of_the_authors() -> None:
    text = (CHECKOUT / "LICENSE").read_text()
    assert text.startswith("BSD 3-Clause License") and "the idealcheck authors" in text
    assert "Neither the name of the copyright holder" in text  # the third clause
    meta = importlib.metadata.metadata("idealcheck")
    assert meta["License"] == "BSD-3-Clause" and "License :: OSI Approved :: BSD License" in meta.get_all("Classifier")


def test_the_version_has_one_source() -> None:
    pyproject = (CHECKOUT / "pyproject.toml").read_text()
    assert re.search(r'^dynamic = \["version"\]', pyproject, re.MULTILINE)
    assert not re.search(r"^version\s*=\s*\"", pyproject, re.MULTILINE)  # no second literal version
    assert 'version = {attr = "verifier.__version__"}' in pyproject
    assert importlib.metadata.version("idealcheck") == verifier.__version__
    changelog = (CHECKOUT / "CHANGELOG.md").read_text()
    assert f"## {verifier.__version__}" in changelog and "## Unreleased" in changelog


def _workflow() -> dict:
    return yaml.safe_load((CHECKOUT / "hooks" / "github-workflow.yml").read_text())


def _steps() -> list[dict]:
    return _workflow()["jobs"]["claims"]["steps"]


def test_the_workflow_names_the_one_value_to_fill_in_and_runs_once_per_shard() -> None:
    workflow = _workflow()
    assert list(workflow["env"]) == ["IDEALCHECK_SOURCE"]
    requirement = Requirement("idealcheck @ " + workflow["env"]["IDEALCHECK_SOURCE"])
    assert requirement.name == "idealcheck" and requirement.url.startswith("git+https://")
    install = next(s for s in _steps() if s.get("name") == "Install idealcheck")["run"]
    assert "${IDEALCHECK_SOURCE}" in install and "pip install ." not in install
    runs = [s["run"] for s in _steps() if "run" in s and "idealcheck check" in s["run"]]
    assert len(runs) == 1  # every report from one run
    argv = shlex.split(runs[0].replace("${{ matrix.shard }}", "1"))
    assert argv[:4] == ["idealcheck", "check", "--shard", "1/2"]
    outputs = [argv[i + 1] for i, arg in enumerate(argv) if arg == "--output"]
    assert outputs == ["sarif=idealcheck.sarif", "junit=idealcheck-junit.xml"]
    uploaded = {s["with"].get("sarif_file") or s["with"].get("path") for s in _steps() if "with" in s and "uses" in s
                and ("upload" in s["uses"])}
    assert uploaded == {"idealcheck.sarif", "idealcheck-junit.xml"}


def _committed_head() -> str | None:
    head = subprocess.run(["git", "rev-parse", "HEAD"], cwd=CHECKOUT, capture_output=True, text=True)
    has = subprocess.run(["git", "cat-file", "-e", "HEAD:hooks/github-workflow.yml"], cwd=CHECKOUT, capture_output=True)
    return head.stdout.strip() if head.returncode == 0 and has.returncode == 0 else None


def test_the_workflow_install_step_installs_idealcheck_from_the_named_source(tmp_path: Path) -> None:
    sha = _committed_head()
    if sha is None:
        pytest.skip("the checkout is not a git repository with the workflow committed")
    environment = tmp_path / "env"
    venv.EnvBuilder(with_pip=True).create(environment)
    install = next(s for s in _steps() if s.get("name") == "Install idealcheck")["run"]
    # The step exactly as written, run by a shell in a fresh environment, with the one value filled in
    # (a local clone's URL; the `localhost` form is what pip's URL check accepts for file URLs).
    env = dict(os.environ, PATH=str(environment / "bin") + os.pathsep + os.environ.get("PATH", ""),
               IDEALCHECK_SOURCE=f"git+file://localhost{CHECKOUT}@{sha}", PIP_NO_DEPS="1",
               PIP_DISABLE_PIP_VERSION_CHECK="1")
    env.pop("VIRTUAL_ENV", None)
    result = subprocess.run(["sh", "-c", install], cwd=tmp_path, env=env, capture_output=True, text=True)
    if result.returncode != 0:
        log = result.stdout + result.stderr
        if any(m in log for m in ("No matching distribution found", "Failed to establish a new connection")):
            pytest.skip("pip could not fetch the build backend (no package index):\n" + log[-500:])
        raise AssertionError(log)
    # without its dependencies (PIP_NO_DEPS keeps the test off the package index) the command cannot run;
    # the installed distribution is read instead
    probe = ("import importlib.metadata as m, importlib.util as u; "
             "print(m.version('idealcheck'), u.find_spec('verifier.cli.main') is not None, "
             "[e.value for e in m.entry_points(group='console_scripts') if e.name == 'idealcheck'])")
    found = subprocess.run([str(environment / "bin" / "python"), "-c", probe], cwd=tmp_path, capture_output=True,
                           text=True)
    assert found.stdout.strip() == f"{verifier.__version__} True ['verifier.cli.main:main']", found.stderr


def test_the_hook_passes_every_text_file_and_runs_quietly() -> None:
    manifest = yaml.safe_load((CHECKOUT / ".pre-commit-hooks.yaml").read_text())[0]
    assert manifest["types"] == ["text"] and "types_or" not in manifest and "files" not in manifest
    assert manifest["entry"] == "idealcheck check -q" and manifest["pass_filenames"] is True


def test_the_readme_documents_a_pre_commit_rev() -> None:
    readme = (CHECKOUT / "README.md").read_text()
    block = re.search(r"```yaml\n(.*?)```", readme[readme.index("pre-commit framework"):], re.DOTALL).group(1)
    config = yaml.safe_load(block)
    assert config["repos"][0]["rev"] == f"v{verifier.__version__}"
    assert config["repos"][0]["hooks"][0]["id"] == "idealcheck"


# ---------------------------------------------------------------- the hooks' output


def _repo(path: Path) -> tuple[Path, dict[str, str]]:
    env = dict(os.environ, PATH=str(BIN) + os.pathsep + os.environ.get("PATH", ""), GIT_AUTHOR_NAME="T",
               GIT_AUTHOR_EMAIL="t@example.invalid", GIT_COMMITTER_NAME="T", GIT_COMMITTER_EMAIL="t@example.invalid",
               GIT_CONFIG_NOSYSTEM="1")
    subprocess.run(["git", "init", "-q", "-b", "main", str(path)], check=True, env=env)
    subprocess.run(["git", "config", "commit.gpgsign", "false"], cwd=path, check=True, env=env)
    hook = path / ".git" / "hooks" / "pre-commit"
    shutil.copyfile(CHECKOUT / "hooks" / "pre-commit", hook)
    hook.chmod(hook.stat().st_mode | stat.S_IXUSR)
    return path, env


def test_the_plain_hook_prints_only_what_fails_and_a_summary(tmp_path: Path) -> None:
    repo, env = _repo(tmp_path / "project")
    (repo / "good.c").write_text(TRUE_C)
    (repo / "bad.c").write_text(FALSE_C)
    subprocess.run(["git", "add", "good.c", "bad.c"], cwd=repo, check=True, env=env)
    result = subprocess.run(["git", "commit", "-q", "-m", "x"], cwd=repo, env=env, capture_output=True, text=True)
    output = result.stdout + result.stderr
    assert result.returncode != 0
    assert "bad.c:2:4: refuted" in output and "good.c" not in output and ": proved" not in output
    assert "2 claims: 1 proved, 1 refuted, 0 inconclusive, 0 error" in output
    subprocess.run(["git", "rm", "-q", "--cached", "bad.c"], cwd=repo, check=True, env=env)
    result = subprocess.run(["git", "commit", "-q", "-m", "x"], cwd=repo, env=env, capture_output=True, text=True)
    assert result.returncode == 0
    quiet = (result.stdout + result.stderr).strip().splitlines()
    assert len(quiet) == 1 and quiet[0].startswith("1 claim: 1 proved, 0 refuted, 0 inconclusive, 0 error")


def test_the_plain_hook_says_when_the_tool_is_not_installed(tmp_path: Path) -> None:
    repo, env = _repo(tmp_path / "project")
    (repo / "good.c").write_text(TRUE_C)
    subprocess.run(["git", "add", "good.c"], cwd=repo, check=True, env=env)
    bare = tmp_path / "bin"
    bare.mkdir()
    for tool in ("git", "python3", "sh"):  # a python3 without the tool installed, and no idealcheck command
        found = shutil.which(tool, path="/usr/bin:/bin")
        if found is None:
            pytest.skip(f"no system {tool}")
        (bare / tool).symlink_to(found)
    if subprocess.run([str(bare / "python3"), "-c", "import verifier"], capture_output=True,
                      cwd=tmp_path).returncode == 0:
        pytest.skip("the system python3 has idealcheck installed")
    env = dict(env, PATH=str(bare))
    env.pop("PYTHONPATH", None)
    result = subprocess.run(["git", "commit", "-q", "-m", "x"], cwd=repo, env=env, capture_output=True, text=True)
    assert result.returncode == 1
    assert "the tool is not installed" in result.stderr and "No module named" not in result.stderr


# ---------------------------------------------------------------- the demo on one screen


def test_the_demo_report_fits_on_one_screen_with_failures_first() -> None:
    result = subprocess.run([sys.executable, "-m", "verifier", "check", "fixtures/demo", "--no-cache"],
                            cwd=CHECKOUT, capture_output=True, text=True)
    # a "not read" block for a left-over .idealcheck_cache folder depends on earlier runs: not counted
    lines = [line for line in result.stdout.splitlines()
             if not line.startswith("not read (") and not line.endswith("result cache, not walked into")]
    assert result.returncode == 1 and len(lines) <= SCREEN_LINES, len(lines)
    verdicts = [m.group(1) for line in lines if (m := re.match(r"\S+:\d+:\d+: (\w+): ", line))]
    first_proved = verdicts.index("proved")
    assert set(verdicts[:first_proved]) == {"refuted"} and set(verdicts[first_proved:]) == {"proved"}
    assert lines[-1].startswith("27 claims: 19 proved, 8 refuted")
