"""Notebook, Markdown and reStructuredText claims through ``idealcheck check`` and the pre-commit hook entry,
compared with the Python API on the same scratch project (tests/prose_project.py)."""
from __future__ import annotations

import json
import shlex
import subprocess
import sys
from pathlib import Path

import pytest

from prose_project import EXPECTED, write_project, witness_values
from verifier import api

CHECKOUT = Path(__file__).resolve().parents[2]
IDEALCHECK = Path(sys.executable).parent / "idealcheck"


def _check(project: Path, *args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([str(IDEALCHECK), "check", "--no-cache", *args], cwd=project, capture_output=True,
                          text=True, timeout=600)


def _claims(document: dict) -> set[tuple[str, int | None, int, str]]:  # type: ignore[type-arg]
    return {(c["path"], c.get("cell"), c["line"], c["verdict"]) for c in document["claims"]}


@pytest.fixture()
def project(tmp_path: Path) -> Path:
    return write_project(tmp_path / "project")


def test_check_reports_notebook_claims_with_their_cell(project: Path) -> None:
    result = _check(project, "src/derivation.ipynb")
    assert result.returncode == 1, result.stderr
    out = result.stdout
    assert "src/derivation.ipynb:cell 1:3:6: proved: (1 - r)*(1 + r + r**2) == 1 - r**3" in out
    assert "src/derivation.ipynb:cell 3:1:3: proved: returns t**3 - t" in out
    assert "src/derivation.ipynb:cell 4:1:3: refuted: (p - q)*(p + q) == p**2 + q**2" in out
    assert "3 claims: 2 proved, 1 refuted" in out
    document = json.loads(_check(project, "src/derivation.ipynb", "--format", "json").stdout)
    refuted = [c for c in document["claims"] if c["verdict"] == "refuted"]
    assert [(c["cell"], c["line"]) for c in refuted] == [(4, 1)]
    values = witness_values(refuted[0]["witness"]["values"])
    p, q = values["p"], values["q"]
    assert (p - q) * (p + q) != p**2 + q**2  # the witness, checked here in exact arithmetic


def test_check_reads_markdown_and_rst_claims(project: Path) -> None:
    result = _check(project, "docs", "--format", "json")
    assert result.returncode == 1, result.stderr
    assert _claims(json.loads(result.stdout)) == {
        (e.path, e.cell, e.line, e.verdict) for e in EXPECTED if e.path.startswith("docs/")}
    text = _check(project, "docs").stdout
    assert "docs/notes.md:4:1: proved: sin(t)**2 + cos(t)**2 == 1" in text
    assert "docs/notes.md:12:6: refuted: (m + n)**2 == m**2 + n**2" in text
    assert "docs/theory.rst:4:4: proved: (h + k)**2 == h**2 + 2*h*k + k**2" in text


def test_a_malformed_notebook_is_an_error_with_its_file(project: Path) -> None:
    (project / "src" / "broken.ipynb").write_text('{"cells": [{"source": "# idealcheck: a == a"')
    result = _check(project, "src/broken.ipynb")
    assert result.returncode == 1
    assert "Traceback" not in result.stderr
    assert "src/broken.ipynb:1:1: error" in result.stdout and "not valid notebook JSON" in result.stdout


def _hook_files(project: Path) -> tuple[list[str], str]:
    """The files the pre-commit framework passes to the hook: its file typing against ``types`` (every tag
    required) and ``types_or`` (any tag), as the framework documents them."""
    yaml = pytest.importorskip("yaml")  # both come with pre-commit, in the [test] extra
    identify = pytest.importorskip("identify.identify")
    (hook,) = yaml.safe_load((CHECKOUT / ".pre-commit-hooks.yaml").read_text())
    every, some = set(hook.get("types", ["file"])), set(hook.get("types_or", []))
    files = sorted(str(p.relative_to(project)) for p in project.rglob("*") if p.is_file())

    def passed(name: str) -> bool:
        tags = identify.tags_from_path(str(project / name))
        return every <= tags and (not some or bool(some & tags))

    return [f for f in files if passed(f)], hook["entry"]


def test_check_the_api_and_the_hook_entry_find_the_same_claims(project: Path) -> None:
    wanted = {(e.path, e.cell, e.line, e.verdict) for e in EXPECTED}
    by_check = _claims(json.loads(_check(project, "src", "docs", "--format", "json").stdout))
    by_api = {(v.claim.location.path, v.claim.location.cell, v.claim.location.line, v.verdict)
              for v in api.check_paths(cwd=project, cache=False).verdicts}
    files, entry = _hook_files(project)
    assert {"src/derivation.ipynb", "docs/notes.md", "docs/theory.rst", "src/kernels.py"} <= set(files)
    command = [str(IDEALCHECK) if part == "idealcheck" else part for part in shlex.split(entry)]
    hooked = subprocess.run([*command, "--no-cache", "--format", "json", *files], cwd=project,
                            capture_output=True, text=True, timeout=600)
    assert hooked.returncode == 1, hooked.stderr
    by_hook = _claims(json.loads(hooked.stdout))
    assert by_check == by_api == by_hook == wanted
