"""File discovery: walking, skipped folders, globs, unreadable files, and git staged/changed files.

Folder conventions (VCS folders, `pyvenv.cfg` marking a virtual environment as in PEP 405, `CACHEDIR.TAG`
from the Cache Directory Tagging Specification, `*.egg-info` build metadata) are common practice; the git
commands used are those of the git documentation (`git diff --cached`, `git ls-files`).
"""
from __future__ import annotations

import shutil
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

from conftest import write_file
from verifier.pipeline.discover import DiscoveryError, changed_since, collect, matches_glob, staged_paths

if TYPE_CHECKING:
    from conftest import GitRepo


def write(root: Path, relative: str, content: str | bytes = "// idealcheck: a == a\n") -> Path:
    return write_file(root, relative, content)


def paths(discovery) -> list[str]:
    return [f.path for f in discovery.files]


def test_walks_in_sorted_order_with_relative_forward_slash_paths(tmp_path: Path) -> None:
    for name in ["src/b.c", "src/a.c", "src/sub/z.f90", "main.rs", "docs/x.tex"]:
        write(tmp_path, name)
    discovery = collect(["."], cwd=tmp_path)
    assert paths(discovery) == ["docs/x.tex", "main.rs", "src/a.c", "src/b.c", "src/sub/z.f90"]
    assert discovery.problems == ()
    assert paths(collect(["src"], cwd=str(tmp_path))) == ["src/a.c", "src/b.c", "src/sub/z.f90"]
    assert paths(collect(["src/sub/z.f90", "src/a.c", "src/a.c"], cwd=tmp_path)) == ["src/a.c", "src/sub/z.f90"]


def test_paths_are_relative_to_cwd(tmp_path: Path) -> None:
    write(tmp_path, "project/k.c")
    write(tmp_path, "other/o.c")
    discovery = collect(["k.c", "../other/o.c"], cwd=tmp_path / "project")
    assert paths(discovery) == ["../other/o.c", "k.c"]


def test_skipped_folders(tmp_path: Path) -> None:
    write(tmp_path, "keep/k.c")
    for folder in [".git", ".hg", ".svn", "__pycache__", "node_modules", ".idealcheck_cache", ".tox",
                   "pkg.egg-info", ".venv", "lib/site-packages"]:
        write(tmp_path, f"{folder}/skipped.c")
    write(tmp_path, "myenv/pyvenv.cfg", "home = /usr/bin\n")
    write(tmp_path, "myenv/lib/skipped.c")
    write(tmp_path, "cache/CACHEDIR.TAG", "Signature: 8a477f597d28d172789f06886806bc55\n")
    write(tmp_path, "cache/skipped.c")
    # outside a git working tree the common build and environment folders are left out too (listed)
    for folder in ["env", "venv", "build", "dist", "docs/_build"]:
        write(tmp_path, f"{folder}/skipped.c")
    discovery = collect(["."], cwd=tmp_path)
    assert paths(discovery) == ["keep/k.c"]
    listed = {item.path for item in discovery.skipped}
    assert {"env/", "venv/", "build/", "dist/", "docs/_build/", "myenv/", "cache/", ".venv/"} <= listed


def test_explicit_file_in_a_skipped_folder_is_read(tmp_path: Path) -> None:
    write(tmp_path, "node_modules/lib.js", "// idealcheck: b == b\n")
    assert paths(collect(["node_modules/lib.js"], cwd=tmp_path)) == ["node_modules/lib.js"]


def test_binary_undecodable_and_missing_files_are_problems_not_crashes(tmp_path: Path) -> None:
    write(tmp_path, "ok.c")
    write(tmp_path, "blob.bin", b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    write(tmp_path, "latin1.c", "// caf\u00e9\n// idealcheck: a == a\n".encode("latin-1"))
    write(tmp_path, "bom.c", "\ufeff// idealcheck: a == a\n".encode("utf-8"))
    discovery = collect([".", "missing.c", "gone"], cwd=tmp_path)
    # a binary file is skipped and listed; a Latin-1 file is read (its claim line is ASCII)
    assert paths(discovery) == ["bom.c", "latin1.c", "ok.c"]
    assert discovery.files[0].text == "// idealcheck: a == a\n"  # byte-order mark dropped
    assert discovery.files[1].text == "// caf\u00e9\n// idealcheck: a == a\n"
    assert [(item.path, item.kind) for item in discovery.skipped] == [("blob.bin", "binary")]
    assert dict(discovery.notes)["latin1.c"].startswith("this file is not UTF-8")
    problems = {p.location.path: p for p in discovery.problems}
    assert sorted(problems) == ["gone", "missing.c"]
    assert "no such file" in problems["missing.c"].message


@pytest.mark.parametrize(
    "path, pattern, expected",
    [
        ("README.md", "README.md", True),
        ("docs/README.md", "README.md", True),
        ("docs/a.md", "*.md", True),
        ("src/a.c", "*.md", False),
        ("src/gen/a.c", "src/gen", True),
        ("src/gen/a.c", "gen", True),
        ("other/src/gen/a.c", "src/gen", False),
        ("src/a/b/c.c", "src/**/*.c", True),
        ("src/c.c", "src/**/*.c", True),
        ("src/c.h", "src/**/*.c", False),
        ("src/a/c.c", "src/*.c", False),
        ("tests/x/y.py", "tests/**", True),
        ("a/b.py", "./a/*.py", True),
        ("build/x.c", "build/", True),
        ("build", "build/", False),
        ("k1.c", "k[0-9].c", True),
        ("kx.c", "k[!0-9].c", True),
        ("k1.c", "k?.c", True),
    ],
)
def test_glob_semantics(path: str, pattern: str, expected: bool) -> None:
    assert matches_glob(path, pattern) is expected


def test_include_and_exclude(tmp_path: Path) -> None:
    for name in ["src/a.c", "src/gen/g.c", "docs/notes.md", "docs/x.tex", "README.md"]:
        write(tmp_path, name)
    assert paths(collect(["."], cwd=tmp_path, exclude=["*.md", "src/gen"])) == ["docs/x.tex", "src/a.c"]
    assert paths(collect(["."], cwd=tmp_path, include=["src/**"])) == ["src/a.c", "src/gen/g.c"]
    assert paths(collect(["."], cwd=tmp_path, include=["src/**"], exclude=["g.c"])) == ["src/a.c"]
    # globs apply to files named explicitly too
    assert paths(collect(["README.md", "src/a.c"], cwd=tmp_path, exclude=["*.md"])) == ["src/a.c"]


def test_only_restricts_the_files(tmp_path: Path, git_repo: GitRepo) -> None:
    for name in ["a.c", "b.c", "sub/c.c"]:
        write(tmp_path, name)
    assert paths(collect(["."], cwd=tmp_path, only={"b.c", "./sub/c.c"})) == ["b.c", "sub/c.c"]


# ---------------------------------------------------------------- git

needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed")


@pytest.fixture
def repo(git_repo: GitRepo) -> Path:
    tmp_path = git_repo.path
    write(tmp_path, "lib/a.c", "// idealcheck: a == a\n")
    write(tmp_path, "lib/b.c", "// idealcheck: b == b\n")
    write(tmp_path, ".gitignore", "ignored.c\n")
    git_repo("add", ".")
    git_repo("commit", "-q", "-m", "first")
    return tmp_path


@needs_git
def test_staged_texts_come_from_the_index(repo: Path, git_repo: GitRepo) -> None:
    write(repo, "lib/a.c", "// idealcheck: staged == staged\n")
    git_repo("add", "lib/a.c")
    write(repo, "lib/a.c", "// idealcheck: worktree == worktree\n")  # unstaged edit on top
    write(repo, "lib/new.c", "// idealcheck: untracked == untracked\n")  # not in the index
    write(repo, "lib/bin.dat", b"\x00\x01")
    git_repo("add", "lib/bin.dat")
    discovery = collect(["lib"], cwd=repo, source="staged")
    texts = {f.path: f.text for f in discovery.files}
    assert texts == {"lib/a.c": "// idealcheck: staged == staged\n", "lib/b.c": "// idealcheck: b == b\n"}
    assert discovery.problems == () and [(s.path, s.kind) for s in discovery.skipped] == [("lib/bin.dat", "binary")]
    assert staged_paths(repo) == {"lib/a.c", "lib/bin.dat"}
    assert staged_paths(repo / "lib") == {"a.c", "bin.dat"}
    assert paths(collect(["."], cwd=repo / "lib", source="staged")) == ["a.c", "b.c"]


@needs_git
def test_staged_in_a_repository_without_commits(git_repo: GitRepo) -> None:
    tmp_path = git_repo.path
    write(tmp_path, "k.c")
    git_repo("add", "k.c")
    assert staged_paths(tmp_path) == {"k.c"}
    assert paths(collect(["."], cwd=tmp_path, source="staged")) == ["k.c"]


@needs_git
def test_changed_since_includes_worktree_changes_and_untracked_files(repo: Path, git_repo: GitRepo) -> None:
    assert changed_since("HEAD", repo) == set()
    write(repo, "lib/b.c", "// idealcheck: b == 2*b - b\n")
    write(repo, "lib/new.c")
    write(repo, "ignored.c")
    assert changed_since("HEAD", repo) == {"lib/b.c", "lib/new.c"}
    git_repo("add", ".")
    git_repo("commit", "-q", "-m", "second")
    assert changed_since("HEAD", repo) == set()
    assert changed_since("HEAD~1", repo / "lib") == {"b.c", "new.c"}


@needs_git
def test_git_errors_are_clear(repo: Path, tmp_path_factory: pytest.TempPathFactory) -> None:
    with pytest.raises(DiscoveryError, match="unknown git revision 'no-such-branch'"):
        changed_since("no-such-branch", repo)
    with pytest.raises(DiscoveryError, match="unknown git revision"):
        changed_since("--output=/tmp/x", repo)
    outside = tmp_path_factory.mktemp("plain")
    with pytest.raises(DiscoveryError, match="not inside a git repository"):
        staged_paths(outside)
    with pytest.raises(DiscoveryError, match="not inside a git repository"):
        collect(["."], cwd=outside, source="staged")


def test_symbolic_links_to_folders_are_not_followed(tmp_path: Path) -> None:
    write(tmp_path, "src/a.c")
    try:
        (tmp_path / "src" / "loop").symlink_to(tmp_path / "src", target_is_directory=True)
        (tmp_path / "src" / "link.c").symlink_to(tmp_path / "src" / "a.c")
        (tmp_path / "src" / "broken.c").symlink_to(tmp_path / "nowhere.c")
    except OSError:
        pytest.skip("symbolic links are not available here")
    discovery = collect(["."], cwd=tmp_path)
    assert paths(discovery) == ["src/a.c", "src/link.c"] and discovery.problems == ()


def test_globs_can_be_anchored_at_the_config_folder(tmp_path: Path) -> None:
    for name in ["proj/src/gen/g.c", "proj/src/a.c"]:
        write(tmp_path, name)
    cwd = tmp_path / "proj" / "src"
    # from inside src/, "src/gen" only matches when anchored at the project folder
    assert paths(collect(["."], cwd=cwd, exclude=["src/gen"])) == ["a.c", "gen/g.c"]
    assert paths(collect(["."], cwd=cwd, exclude=["src/gen"], root=tmp_path / "proj")) == ["a.c"]
