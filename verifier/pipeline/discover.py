"""Which files to read: paths and folders, include/exclude globs, and git staged or changed files.

Folders are walked in sorted order, skipping version-control folders, virtual environments, caches and
build metadata.  A file that cannot be read as text (binary, not UTF-8, missing, unreadable) becomes a
``FileProblem``, never an exception.  Paths are reported relative to the working directory with forward
slashes.  Scanned files are only read, never imported or run.
"""
from __future__ import annotations

import os
import re
import subprocess
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Literal

from verifier.model.claim import FileProblem, Location
from verifier.model.paths import relative_path  # re-exported: discovery names files this way

# Folder names never walked into (explicitly named files inside them are still read).
SKIPPED_DIRS = frozenset({
    ".git", ".hg", ".svn", ".bzr", "_darcs", "CVS",
    ".venv", "__pycache__", "site-packages", "dist-packages", "node_modules",
    ".idealcheck_cache", ".tox", ".nox", ".eggs", ".mypy_cache", ".pytest_cache", ".ruff_cache", ".hypothesis",
})
SKIPPED_DIR_SUFFIXES = (".egg-info", ".dist-info")
MAX_FILE_BYTES = 50 * 1024 * 1024


class DiscoveryError(Exception):
    """The requested set of files cannot be determined (not a git repository, unknown revision ...)."""


@dataclass(frozen=True)
class SourceFile:
    path: str  # relative to the working directory, forward slashes
    text: str


@dataclass(frozen=True)
class Discovery:
    files: tuple[SourceFile, ...]
    problems: tuple[FileProblem, ...]


# ---------------------------------------------------------------- paths and globs


@lru_cache(maxsize=512)
def _glob_regex(pattern: str) -> re.Pattern[str]:
    """A glob as a regex over '/'-separated paths: ``*`` and ``?`` stay within one folder, ``**`` crosses folders."""
    out: list[str] = []
    i = 0
    while i < len(pattern):
        char = pattern[i]
        if pattern.startswith("**/", i):
            out.append("(?:.*/)?")
            i += 3
        elif pattern.startswith("**", i):
            out.append(".*")
            i += 2
        elif char == "*":
            out.append("[^/]*")
            i += 1
        elif char == "?":
            out.append("[^/]")
            i += 1
        elif char == "[":
            end = pattern.find("]", i + 2)
            if end < 0:
                out.append(re.escape(char))
                i += 1
            else:
                body = pattern[i + 1 : end]
                if body.startswith("!"):
                    body = "^" + body[1:]
                out.append("[" + body.replace("\\", "\\\\") + "]")
                i = end + 1
        else:
            out.append(re.escape(char))
            i += 1
    return re.compile("".join(out) + r"\Z")


def matches_glob(path: str, pattern: str) -> bool:
    """Whether the relative path ``path`` matches ``pattern``.

    Like ignore files in common practice: a pattern without ``/`` matches a file name or any folder name
    on the path (``*.md``, ``build``); a pattern with ``/`` is anchored at the root (``src/**/*.c``,
    ``docs/gen``) and also matches everything below a folder it names.
    """
    pattern = pattern.strip()
    if not pattern:
        return False
    path = path.replace(os.sep, "/")
    while path.startswith("./"):
        path = path[2:]
    pattern = pattern[2:] if pattern.startswith("./") else pattern
    pattern = pattern.lstrip("/")
    directory_only = pattern.endswith("/")
    pattern = pattern.rstrip("/")
    parts = path.split("/")
    regex = _glob_regex(pattern)
    if "/" not in pattern:
        candidates = parts[:-1] if directory_only else parts
        return any(regex.match(part) for part in candidates)
    prefixes = ["/".join(parts[:k]) for k in range(1, len(parts) + (0 if directory_only else 1))]
    return any(regex.match(prefix) for prefix in prefixes)


def selected(path: str, include: Sequence[str], exclude: Sequence[str]) -> bool:
    if include and not any(matches_glob(path, pattern) for pattern in include):
        return False
    return not any(matches_glob(path, pattern) for pattern in exclude)


def _skipped_dir(directory: Path, name: str) -> bool:
    if name in SKIPPED_DIRS or name.endswith(SKIPPED_DIR_SUFFIXES):
        return True
    # A virtual environment of any name, and caches that tag themselves (Cache Directory Tagging Specification).
    return (directory / name / "pyvenv.cfg").is_file() or (directory / name / "CACHEDIR.TAG").is_file()


# ---------------------------------------------------------------- reading text


def decode_source(data: bytes, path: str) -> tuple[str | None, FileProblem | None]:
    """The text of a file's bytes, or a problem saying why it is not readable text."""
    if b"\0" in data:
        line = data.count(b"\n", 0, data.index(b"\0")) + 1
        return None, FileProblem(Location(path, line, 1), "binary file (contains NUL bytes), not read")
    try:
        return data.decode("utf-8-sig"), None
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        column = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        byte = data[exc.start : exc.start + 1].hex()
        message = f"not UTF-8 text (byte 0x{byte} at line {line}), not read"
        return None, FileProblem(Location(path, line, column), message)


def _read_file(absolute: Path, path: str) -> tuple[str | None, FileProblem | None]:
    try:
        size = absolute.stat().st_size
        if size > MAX_FILE_BYTES:
            return None, FileProblem(Location(path, 1, 1), f"file too large ({size} bytes, limit {MAX_FILE_BYTES}), not read")
        data = absolute.read_bytes()
    except FileNotFoundError:
        return None, FileProblem(Location(path, 1, 1), "no such file (or a broken symbolic link)")
    except IsADirectoryError:
        return None, FileProblem(Location(path, 1, 1), "is a folder, not a file")
    except OSError as exc:
        return None, FileProblem(Location(path, 1, 1), f"cannot read the file: {exc.strerror or exc}")
    return decode_source(data, path)


# ---------------------------------------------------------------- the working tree


def _walk(directory: Path) -> Iterable[Path]:
    """Files under ``directory`` in sorted order (symbolic links to folders are not followed)."""
    try:
        entries = sorted(os.scandir(directory), key=lambda entry: entry.name)
    except OSError:
        return
    for entry in entries:
        try:
            is_dir = entry.is_dir(follow_symlinks=False)
        except OSError:
            continue
        if is_dir:
            if not _skipped_dir(directory, entry.name):
                yield from _walk(Path(entry.path))
        elif entry.is_file():  # follows a link to a file; links to folders and broken links are left out
            yield Path(entry.path)


class _Collector:
    def __init__(
        self, include: Sequence[str], exclude: Sequence[str], only: set[str] | None, cwd: Path, root: Path | None
    ) -> None:
        self.include = include
        self.exclude = exclude
        self.only = only
        self.cwd = cwd
        self.root = root
        self.files: dict[str, SourceFile] = {}
        self.problems: dict[str, FileProblem] = {}

    def wanted(self, path: str) -> bool:
        if path in self.files or path in self.problems:
            return False
        if self.only is not None and path not in self.only:
            return False
        if not self.include and not self.exclude:
            return True
        # globs are anchored at the config's folder when one is given, else at the working directory
        anchored = path if self.root is None else relative_path(self.cwd / path, self.root)
        return selected(anchored, self.include, self.exclude)

    def add(self, path: str, text: str | None, problem: FileProblem | None) -> None:
        if problem is not None:
            self.problems[path] = problem
        elif text is not None:
            self.files[path] = SourceFile(path, text)

    def discovery(self) -> Discovery:
        files = tuple(self.files[key] for key in sorted(self.files))
        problems = tuple(self.problems[key] for key in sorted(self.problems))
        return Discovery(files, problems)


def _collect_worktree(paths: Sequence[str], cwd: Path, collector: _Collector) -> None:
    for argument in paths:
        target = Path(cwd, argument)
        shown = relative_path(target, cwd)
        if target.is_dir():
            for file in _walk(target):
                path = relative_path(file, cwd)
                if collector.wanted(path):
                    collector.add(path, *_read_file(file, path))
        elif target.exists() or target.is_symlink():
            if collector.wanted(shown):
                collector.add(shown, *_read_file(target, shown))
        else:
            collector.problems.setdefault(shown, FileProblem(Location(shown, 1, 1), "no such file or folder"))


# ---------------------------------------------------------------- git


def _git(args: Sequence[str], cwd: Path, *, input_bytes: bytes | None = None) -> bytes:
    try:
        result = subprocess.run(
            ["git", *args], cwd=str(cwd), input=input_bytes, capture_output=True, check=False
        )
    except FileNotFoundError:
        raise DiscoveryError("git is not installed, but it is needed to read staged or changed files") from None
    except OSError as exc:
        raise DiscoveryError(f"cannot run git: {exc}") from None
    if result.returncode != 0:
        message = result.stderr.decode("utf-8", errors="replace").strip().splitlines()
        raise DiscoveryError(f"git {args[0]} failed: {message[0] if message else 'exit status ' + str(result.returncode)}")
    return result.stdout


def git_toplevel(cwd: Path | str) -> Path:
    """The top folder of the git working tree containing ``cwd``; ``DiscoveryError`` outside a repository."""
    cwd = Path(cwd)
    try:
        out = _git(["rev-parse", "--show-toplevel"], cwd)
    except DiscoveryError as exc:
        if "git is not installed" in str(exc):
            raise
        raise DiscoveryError(f"{cwd} is not inside a git repository (needed for staged or changed files)") from None
    return Path(out.decode("utf-8", errors="surrogateescape").strip())


def _split_z(out: bytes) -> list[str]:
    return [item.decode("utf-8", errors="surrogateescape") for item in out.split(b"\0") if item]


def _from_top(paths: Iterable[str], top: Path, cwd: Path) -> set[str]:
    return {relative_path(top / path, cwd) for path in paths}


def staged_paths(cwd: Path | str) -> set[str]:
    """Files added, copied, modified or renamed in the git index, relative to ``cwd``."""
    cwd = Path(cwd)
    top = git_toplevel(cwd)
    out = _git(["diff", "--cached", "--name-only", "-z", "--diff-filter=ACMR"], top)
    return _from_top(_split_z(out), top, cwd)


def changed_since(ref: str, cwd: Path | str) -> set[str]:
    """Files that differ between revision ``ref`` and the working tree, plus untracked files, relative to ``cwd``."""
    cwd = Path(cwd)
    top = git_toplevel(cwd)
    if ref.startswith("-"):
        raise DiscoveryError(f"unknown git revision {ref!r}")
    try:
        _git(["rev-parse", "--verify", "--quiet", "--end-of-options", f"{ref}^{{commit}}"], top)
    except DiscoveryError:
        raise DiscoveryError(f"unknown git revision {ref!r}") from None
    changed = _split_z(_git(["diff", "--name-only", "-z", ref, "--"], top))
    untracked = _split_z(_git(["ls-files", "--others", "--exclude-standard", "-z", "--full-name"], top))
    return _from_top(changed + untracked, top, cwd)


def _under(path: str, argument: str) -> bool:
    if argument in ("", "."):
        return path != ".." and not path.startswith("../")
    return path == argument or path.startswith(argument.rstrip("/") + "/")


def _in_skipped_dir(path: str, argument: str) -> bool:
    """Whether ``path`` lies in a skipped folder below the argument that selected it."""
    if path == argument:
        return False
    start = 0 if argument in ("", ".") else len(argument.rstrip("/").split("/"))
    folders = path.split("/")[:-1]
    return any(name in SKIPPED_DIRS or name.endswith(SKIPPED_DIR_SUFFIXES) for name in folders[start:])


def _collect_staged(paths: Sequence[str], cwd: Path, collector: _Collector) -> None:
    top = git_toplevel(cwd)
    listing = _split_z(_git(["ls-files", "--stage", "-z", "--full-name"], top))
    arguments = [relative_path(Path(cwd, argument), cwd) for argument in paths]
    wanted: list[tuple[str, str]] = []  # (relative path, blob id)
    indexed: set[str] = set()
    for entry in listing:
        meta, _, name = entry.partition("\t")
        mode, blob, stage = meta.split(" ")
        if stage != "0" or mode in ("160000", "120000"):  # conflicts, submodules, symbolic links
            continue
        path = relative_path(top / name, cwd)
        indexed.add(path)
        argument = next((a for a in arguments if _under(path, a)), None)
        if argument is None or _in_skipped_dir(path, argument) or not collector.wanted(path):
            continue
        wanted.append((path, blob))
    for argument in arguments:
        if not any(_under(path, argument) for path in indexed) and not Path(cwd, argument).is_dir():
            collector.problems.setdefault(
                argument, FileProblem(Location(argument, 1, 1), "not in the git index (no staged version to read)")
            )
    if not wanted:
        return
    request = b"".join(blob.encode() + b"\n" for _, blob in wanted)
    out = _git(["cat-file", "--batch"], top, input_bytes=request)
    position = 0
    for path, _blob in wanted:
        header_end = out.index(b"\n", position)
        header = out[position:header_end].split(b" ")
        if len(header) < 3:  # "<id> missing": the index names an object the repository lacks
            position = header_end + 1
            collector.problems[path] = FileProblem(Location(path, 1, 1), "the staged version cannot be read from git")
            continue
        size = int(header[2])
        data = out[header_end + 1 : header_end + 1 + size]
        position = header_end + 1 + size + 1
        collector.add(path, *decode_source(data, path))


# ---------------------------------------------------------------- entry point


def collect(
    paths: Sequence[str],
    *,
    include: Sequence[str] = (),
    exclude: Sequence[str] = (),
    cwd: Path | str | None = None,
    source: Literal["worktree", "staged"] = "worktree",
    only: Collection[str] | None = None,
    root: Path | str | None = None,
) -> Discovery:
    """The files to scan under ``paths`` (files or folders, relative to ``cwd``) and the ones that could not be read.

    ``include``/``exclude`` are globs on the path relative to ``root`` (the config's folder; default ``cwd``,
    see ``matches_glob``); they apply to explicitly named files too, while the skipped folders only apply
    when walking.  ``source="staged"``
    reads the file list and texts from the git index.  ``only`` restricts the result to these relative paths.
    """
    base = Path(cwd) if cwd is not None else Path.cwd()
    only_set = None if only is None else {relative_path(Path(base, p), base) for p in only}
    anchor = None if root is None else Path(base, root)
    collector = _Collector(tuple(include), tuple(exclude), only_set, base, anchor)
    if source == "staged":
        _collect_staged(paths or ["."], base, collector)
    elif source == "worktree":
        _collect_worktree(paths or ["."], base, collector)
    else:
        raise ValueError(f"unknown source {source!r}")
    return collector.discovery()
