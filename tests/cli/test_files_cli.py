"""The first run on a real checkout: which files are read, end to end through the command line.

A scratch project with the things a numeric project really holds: images and arrays, object files, a
virtual environment, build output, an old Fortran file with a Latin-1 name in a comment, a Python file
declaring ``# -*- coding: iso-8859-5 -*-`` (PEP 263), and a ``.gitignore``.  The facts relied on are
common practice: git's ``ls-files --cached --others --exclude-standard`` is what git tracks plus the
untracked files it does not ignore; a virtual environment holds ``pyvenv.cfg`` (PEP 405); the magic
numbers of PNG (``\\x89PNG\\r\\n\\x1a\\n``), NumPy's ``.npy`` (``\\x93NUMPY``), ELF (``\\x7fELF``) and gzip
(``\\x1f\\x8b``) files are those of their published formats; byte 0xE9 is "é" in Latin-1 and not valid
UTF-8 on its own.  The Cyrillic text is checked against Python's own iso-8859-5 codec.
"""
from __future__ import annotations

import shutil
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

from first_run_project import CYRILLIC_COMMENT, FALSE_PY, TRUE_PY, json_report, scratch_project, write
from verifier.claims.decoding import decode_source

if TYPE_CHECKING:
    from conftest import Cli, GitRepo

needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")


REAL_CLAIMS = {("notes.md", "proved"), ("src/cyr.py", "proved"), ("src/legacy.f90", "proved"),
               ("src/wave.py", "proved")}
BINARIES = {"data/heights.npy", "data/run.gz", "figures/tank.png"}


@needs_git
def test_in_a_git_repository_the_first_run_reports_only_the_real_claims(cli: Cli, git_repo: GitRepo) -> None:
    root = git_repo.path
    scratch_project(root)
    write(root, ".gitignore", (root / ".gitignore").read_text() + "generated/\n")
    write(root, "generated/tables.py", FALSE_PY)  # a folder name nothing else knows: only .gitignore says so
    git_repo("add", "-A")  # notes.md stays untracked: read, as git does not ignore it
    git_repo("rm", "-q", "--cached", "notes.md")
    code, report = json_report(cli, root)
    assert code == 0
    assert {(c["path"], c["verdict"]) for c in report["claims"]} == REAL_CLAIMS
    skipped = {item["path"]: item["kind"] for item in report["skipped"]}
    assert skipped == {path: "binary" for path in BINARIES}  # kernel.o is ignored by .gitignore: not listed
    # a file git tracks is read even inside an ignored folder (it is in every commit)
    git_repo("add", "-f", "build/lib/wave.py")
    _code, report = json_report(cli, root)
    assert ("build/lib/wave.py", "refuted") in {(c["path"], c["verdict"]) for c in report["claims"]}


@needs_git
def test_the_text_report_counts_binary_files_and_lists_them_with_verbose(cli: Cli, git_repo: GitRepo) -> None:
    root = git_repo.path
    scratch_project(root)
    result = cli("check", "--no-cache", cwd=root)
    assert result.code == 0
    summary = result.out.splitlines()[-1]
    assert summary.startswith("4 claims: 4 proved") and "3 binary files not read (-v lists them)" in summary
    assert "tank.png" not in result.out
    verbose = cli("check", "--no-cache", "-v", cwd=root)
    assert "figures/tank.png: binary file (PNG image), not read" in verbose.out
    assert "data/heights.npy: binary file (NumPy array), not read" in verbose.out
    # the Latin-1 file says how it was read; the declared iso-8859-5 file needs no such note
    legacy = verbose.out.split("src/legacy.f90:2:3: proved")[1].split("\nsrc/")[0]
    assert "read as Latin-1" in legacy
    cyrillic = verbose.out.split("src/cyr.py:3:3: proved")[1].split("\nsrc/")[0]
    assert "Latin-1" not in cyrillic


@needs_git
def test_check_dot_and_the_tracked_files_by_name_find_the_same_claims(cli: Cli, git_repo: GitRepo) -> None:
    """What a hook framework passes (every tracked text file by name) and `check .` agree."""
    root = git_repo.path
    scratch_project(root)
    git_repo("add", "-A")
    tracked = git_repo("ls-files").stdout.split()
    text_files = [p for p in tracked if p not in BINARIES]
    _code, whole = json_report(cli, root)
    _code, by_name = json_report(cli, root, *text_files)
    assert {(c["id"], c["verdict"]) for c in whole["claims"]} == {(c["id"], c["verdict"]) for c in by_name["claims"]}


def test_outside_a_repository_build_and_environment_folders_are_left_out_and_listed(
        cli: Cli, tmp_path: Path) -> None:
    scratch_project(tmp_path)
    code, report = json_report(cli, tmp_path)
    assert code == 0
    assert {(c["path"], c["verdict"]) for c in report["claims"]} == REAL_CLAIMS
    skipped = {item["path"]: item["kind"] for item in report["skipped"]}
    assert {"build/", "dist/", "docs/_build/", "venv/"} <= set(skipped)
    assert {path for path, kind in skipped.items() if kind == "binary"} == BINARIES | {"kernel.o"}


def test_an_explicitly_named_file_is_always_read(cli: Cli, tmp_path: Path) -> None:
    scratch_project(tmp_path)
    _code, report = json_report(cli, tmp_path, "build/lib/wave.py")
    assert [(c["path"], c["verdict"]) for c in report["claims"]] == [("build/lib/wave.py", "refuted")]


def test_only_a_claim_line_that_is_not_utf8_is_an_error(cli: Cli, tmp_path: Path) -> None:
    write(tmp_path, "old.f90", ("! r\u00e9sum\u00e9 of the method\n"
                                "! idealcheck: (x - 1)*(x + 1) == x**2 - 1\n"
                                "! idealcheck: x*\u00e9 == \u00e9*x\n"
                                "! idealcheck: (u + v)**2 == u**2 + v**2 + \\\n"
                                "!   2*u*v + 0*\u00e9\n").encode("latin-1"))
    code, report = json_report(cli, tmp_path)
    assert code == 1
    found = [(c["line"], c["verdict"]) for c in report["claims"]]
    assert found == [(2, "proved"), (3, "error"), (5, "error")]
    errors = [c for c in report["claims"] if c["verdict"] == "error"]
    assert all("claim line is not UTF-8 (byte 0xe9" in c["reason"] for c in errors)
    assert {c["text"] for c in errors} == {"(claim could not be read)"}
    assert errors[0]["column"] == len("! idealcheck: x*") + 1


def test_a_binary_file_that_holds_the_marker_is_an_error_not_a_silent_skip(cli: Cli, tmp_path: Path) -> None:
    write(tmp_path, "packed.py", b"\x00\x01" + TRUE_PY.encode())
    code, report = json_report(cli, tmp_path)
    assert code == 1
    [claim] = report["claims"]
    assert claim["verdict"] == "error" and "holds the claim marker" in claim["reason"]


def test_a_coding_declaration_is_honoured_as_the_interpreter_does() -> None:
    data = ("# -*- coding: iso-8859-5 -*-\n" + CYRILLIC_COMMENT).encode("iso-8859-5")
    decoded = decode_source(data, "cyr.py")
    assert decoded.text == data.decode("iso-8859-5") and decoded.note is None and decoded.problems == ()
    # the same bytes in a file that is not Python are read with the stated fallback
    other = decode_source(data, "cyr.txt")
    assert other.text == data.decode("latin-1") and other.note is not None
    # an unknown declared encoding is an error at its line, not a guess
    bad = decode_source(b"#!/usr/bin/env python\n# coding: no-such-codec\nx = 1\n", "bad.py")
    assert bad.text is None and bad.problems[0].location.line == 2
    assert "bad coding declaration" in bad.problems[0].message
    # a UTF-8 declaration that the bytes contradict: refused, as Python refuses the file
    wrong = decode_source(b"# coding: utf-8\n# caf\xe9\n", "wrong.py")
    assert wrong.text is None and wrong.problems[0].location.line == 2
