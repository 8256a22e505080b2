"""The hooks, tested with real git repositories and real commits.

- hooks/pre-commit (plain git hook): checks the staged content, not the working tree;
- .pre-commit-hooks.yaml through the pre-commit framework (installed from PyPI by the [test] extra),
  configured from this checkout at its current commit.
"""
from __future__ import annotations

import shutil
import stat
import subprocess
import sys
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

if TYPE_CHECKING:
    from conftest import GitRepo

CHECKOUT = Path(__file__).resolve().parents[2]
BIN = Path(sys.executable).parent

# The binomial square (common practice) and the same square without its cross term (false at a = b = 1).
TRUE_C = "int square(int a, int b);\n// idealcheck: (a+b)**2 == a**2 + 2*a*b + b**2\n"
FALSE_C = "int square(int a, int b);\n// idealcheck: (a+b)**2 == a**2 + b**2\n"
TRUE_PY = "def half(x):\n    # idealcheck: (x + x)/2 == x\n    return x\n"


# ---------------------------------------------------------------- plain git hook


@pytest.fixture()
def plain_repo(git_repo: GitRepo) -> GitRepo:
    hook = git_repo.path / ".git" / "hooks" / "pre-commit"
    shutil.copyfile(CHECKOUT / "hooks" / "pre-commit", hook)
    hook.chmod(hook.stat().st_mode | stat.S_IXUSR | stat.S_IXGRP | stat.S_IXOTH)
    return git_repo


def test_plain_hook_accepts_true_claims(plain_repo: GitRepo) -> None:
    (plain_repo.path / "kernel.c").write_text(TRUE_C)
    (plain_repo.path / "util.py").write_text(TRUE_PY)
    plain_repo("add", "kernel.c", "util.py")
    result = plain_repo.commit("true claims")
    assert result.returncode == 0, result.stdout + result.stderr
    assert plain_repo("rev-list", "--count", "HEAD").stdout.strip() == "1"


def test_plain_hook_checks_the_staged_content_not_the_working_tree(plain_repo: GitRepo) -> None:
    kernel = plain_repo.path / "kernel.c"
    kernel.write_text(FALSE_C)
    plain_repo("add", "kernel.c")
    kernel.write_text(TRUE_C)  # fixed only in the working tree
    result = plain_repo.commit("wrong claim staged")
    output = result.stdout + result.stderr
    assert result.returncode != 0, output
    assert "refuted" in output and "counter-normal-form" in output and "kernel.c:2" in output
    assert plain_repo("rev-list", "--all", "--count").stdout.strip() == "0"
    # staging the fix lets the commit through
    plain_repo("add", "kernel.c")
    assert plain_repo.commit("fixed").returncode == 0


def test_plain_hook_passes_a_true_staged_claim_whatever_the_working_tree(plain_repo: GitRepo) -> None:
    kernel = plain_repo.path / "kernel.c"
    kernel.write_text(TRUE_C)
    plain_repo("add", "kernel.c")
    kernel.write_text(FALSE_C)  # broken only in the working tree: not what is committed
    result = plain_repo.commit("true claim staged")
    assert result.returncode == 0, result.stdout + result.stderr


def test_plain_hook_ignores_claims_in_files_the_commit_does_not_touch(plain_repo: GitRepo) -> None:
    (plain_repo.path / "old.c").write_text(FALSE_C)
    plain_repo("add", "old.c")
    assert plain_repo.commit("bypass", env=None).returncode != 0
    plain_repo("commit", "-q", "--no-verify", "-m", "known wrong claim, committed on purpose")
    (plain_repo.path / "new.c").write_text(TRUE_C)
    plain_repo("add", "new.c")
    result = plain_repo.commit("unrelated true claim")
    assert result.returncode == 0, result.stdout + result.stderr


# ---------------------------------------------------------------- pre-commit framework


def _checkout_commit() -> str | None:
    result = subprocess.run(["git", "rev-parse", "HEAD"], cwd=CHECKOUT, capture_output=True, text=True)
    if result.returncode != 0:
        return None
    committed = subprocess.run(["git", "cat-file", "-e", "HEAD:.pre-commit-hooks.yaml"], cwd=CHECKOUT,
                               capture_output=True)
    return result.stdout.strip() if committed.returncode == 0 else None


@pytest.fixture(scope="session")
def pre_commit_home(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return tmp_path_factory.mktemp("pre-commit-home")


def test_pre_commit_framework_blocks_a_false_claim_and_passes_true_ones(
    git_repo: GitRepo, pre_commit_home: Path
) -> None:
    sha = _checkout_commit()
    if sha is None:
        pytest.skip("the checkout is not a git repository with the hook manifest committed")
    pre_commit = BIN / "pre-commit"
    assert pre_commit.exists(), "pre-commit comes with the [test] extra"
    extra = {"PRE_COMMIT_HOME": str(pre_commit_home), "PRE_COMMIT_COLOR": "never"}
    env = git_repo.env(extra)
    repo = git_repo.path
    (repo / ".pre-commit-config.yaml").write_text(
        f"repos:\n  - repo: {CHECKOUT}\n    rev: {sha}\n    hooks:\n      - id: idealcheck\n"
    )
    installed = subprocess.run([str(pre_commit), "install"], cwd=repo, env=env, capture_output=True, text=True)
    assert installed.returncode == 0, installed.stdout + installed.stderr
    # The framework builds the hook's environment from the checkout, fetching the dependencies from the
    # package index; only a machine without network access may skip here, with the reason shown.
    built = subprocess.run([str(pre_commit), "install-hooks"], cwd=repo, env=env, capture_output=True, text=True)
    if built.returncode != 0:
        log = built.stdout + built.stderr
        offline = ("Failed to establish a new connection", "Temporary failure in name resolution",
                   "No matching distribution found", "Network is unreachable")
        if any(marker in log for marker in offline):
            pytest.skip("pre-commit could not fetch the hook's dependencies (no network):\n" + log[-500:])
        raise AssertionError(log)

    (repo / "kernel.c").write_text(TRUE_C)
    (repo / "util.py").write_text(TRUE_PY)
    git_repo("add", ".pre-commit-config.yaml", "kernel.c", "util.py", env=extra)
    result = git_repo.commit("true claims", env=extra)
    assert result.returncode == 0, result.stdout + result.stderr

    (repo / "blend.c").write_text(FALSE_C)
    git_repo("add", "blend.c", env=extra)
    result = git_repo.commit("a false claim", env=extra)
    output = result.stdout + result.stderr
    assert result.returncode != 0, output
    assert "counter-normal-form" in output and "blend.c:2" in output
    assert git_repo("rev-list", "--count", "HEAD", env=extra).stdout.strip() == "1"
