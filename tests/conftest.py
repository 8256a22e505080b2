"""What many test files share: one way to run the command line, one way to make a git repository.

- ``cli(*args, cwd=None, fresh_process=False)`` runs ``idealcheck`` and returns its exit status and
  output: in this process by default (fast), or as ``python -m verifier`` in a fresh interpreter when
  the test is about the program as installed (start-up, module guard, environment);
  ``cli.verdicts(folder, file_name, texts, *args)`` writes each text as a ``# idealcheck:`` comment line of
  one Python file, checks it and returns each claim text's verdict;
- ``git_repo`` is an empty git repository in the test's ``tmp_path`` with a fixed identity, no commit
  signing and no system configuration; call it to run git there.

The expression stand-in that tests use instead of the claim parser is ``tests/exprs.py`` (a conftest
is not meant to be imported by test modules).
"""
from __future__ import annotations

import contextlib
import io
import json
import os
import subprocess
import sys
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import NamedTuple

import pytest

ROOT = Path(__file__).resolve().parents[1]
BIN = Path(sys.executable).parent  # the virtual environment's scripts: idealcheck, pre-commit


class CliResult(NamedTuple):
    """Exit status and output; unpacks as ``code, out, err``."""

    code: int
    out: str
    err: str


class Cli:
    """Runs ``idealcheck ARGS`` in ``cwd`` (default: the current folder)."""

    def __call__(self, *args: str, cwd: Path | str | None = None, fresh_process: bool = False,
                 timeout: float = 600.0) -> CliResult:
        if fresh_process:
            done = subprocess.run([sys.executable, "-m", "verifier", *args], cwd=cwd, capture_output=True,
                                  text=True, timeout=timeout, env=dict(os.environ))
            return CliResult(done.returncode, done.stdout, done.stderr)
        from verifier.cli.main import main

        out, err = io.StringIO(), io.StringIO()
        previous = os.getcwd()
        try:
            if cwd is not None:
                os.chdir(cwd)
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                try:
                    code = main(list(args))
                except SystemExit as stop:  # --help and --version end with argparse's exit
                    code = stop.code if isinstance(stop.code, int) else (0 if stop.code is None else 1)
        finally:
            os.chdir(previous)
        return CliResult(code, out.getvalue(), err.getvalue())

    def verdicts(self, folder: Path, file_name: str, texts: Iterable[str], *args: str) -> dict[str, str]:
        """Each claim text's verdict, from a JSON report of one file of ``# idealcheck:`` comments."""
        (folder / file_name).write_text("".join(f"# idealcheck: {text}\n" for text in texts))
        result = self("check", "--no-cache", "--format", "json", *args, file_name, cwd=folder)
        return {claim["text"]: claim["verdict"] for claim in json.loads(result.out)["claims"]}


def write_file(root: Path, relative: str, content: str | bytes) -> Path:
    """Write ``content`` (text as UTF-8, or bytes) to ``root/relative``, making the folders."""
    path = root / relative
    path.parent.mkdir(parents=True, exist_ok=True)
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def cli() -> Cli:
    return Cli()


@pytest.fixture(scope="session", autouse=True)
def _user_cache_home(tmp_path_factory: pytest.TempPathFactory) -> Iterable[Path]:
    """The per-user cache folder (where the extraction cache's signing secret is made) inside the test's
    temporary folders, so that tests never write to the home folder; fresh processes inherit it."""
    folder = tmp_path_factory.mktemp("user-cache")
    previous = os.environ.get("XDG_CACHE_HOME")
    os.environ["XDG_CACHE_HOME"] = str(folder)
    yield folder
    if previous is None:
        os.environ.pop("XDG_CACHE_HOME", None)
    else:
        os.environ["XDG_CACHE_HOME"] = previous


def git_env(extra: Mapping[str, str] | None = None) -> dict[str, str]:
    """The environment git runs in: a fixed identity, no system configuration, and this environment's
    scripts first on PATH (hooks call ``idealcheck``)."""
    env = dict(os.environ)
    env["PATH"] = str(BIN) + os.pathsep + env.get("PATH", "")
    env.update({
        "GIT_AUTHOR_NAME": "Test", "GIT_AUTHOR_EMAIL": "test@example.invalid",
        "GIT_COMMITTER_NAME": "Test", "GIT_COMMITTER_EMAIL": "test@example.invalid",
        "GIT_CONFIG_NOSYSTEM": "1",
    })
    env.pop("GIT_DIR", None)
    env.pop("GIT_INDEX_FILE", None)
    env.update(extra or {})
    return env


class GitRepo:
    """A git repository in ``path``; calling it runs git there."""

    def __init__(self, path: Path) -> None:
        self.path = path

    def __call__(self, *args: str, env: Mapping[str, str] | None = None,
                 check: bool = True) -> subprocess.CompletedProcess[str]:
        done = subprocess.run(["git", *args], cwd=self.path, env=git_env(env), capture_output=True, text=True)
        if check and done.returncode != 0:
            raise AssertionError(f"git {' '.join(args)} failed:\n{done.stdout}\n{done.stderr}")
        return done

    def env(self, extra: Mapping[str, str] | None = None) -> dict[str, str]:
        """The environment git runs in here, for other programs that call git (hook frameworks)."""
        return git_env(extra)

    def commit(self, message: str, env: Mapping[str, str] | None = None) -> subprocess.CompletedProcess[str]:
        """``git commit`` that may fail (a hook may refuse it): the caller looks at the result."""
        return self("commit", "-q", "-m", message, env=env, check=False)


@pytest.fixture()
def git_repo(tmp_path: Path) -> GitRepo:
    repo = GitRepo(tmp_path)
    repo("init", "-q", "-b", "main")
    repo("config", "commit.gpgsign", "false")
    return repo
