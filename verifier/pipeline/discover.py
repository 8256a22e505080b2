"""Which files to read: paths and folders, include/exclude globs, and git staged or changed files.

Every file under the scanned paths is read unless the config's globs exclude it.  Whatever is left out
for another reason is listed as ``Skipped`` with the reason, so that a pull request cannot hide a claim
unseen: folders that are virtual environments, tool caches or build metadata (by name or by a marker file
such as ``pyvenv.cfg`` or ``CACHEDIR.TAG``), anything that is not a regular file (devices, FIFOs, sockets:
never opened for reading, so nothing can block or stream forever), symbolic links that are broken, loop,
lead to a folder or out of the scanned roots, and files over the size cap.  Version-control metadata
(``.git`` and the like) is never tracked content and is left out silently.

A file that is read but is not text (binary, not UTF-8) becomes a ``FileProblem`` (an ``error`` in the
report), never an exception.  Paths are reported relative to the working directory with forward slashes;
a name that is not valid UTF-8 keeps its bytes as surrogate escapes.  Scanned files are only read, never
imported or run.
"""
from __future__ import annotations

import errno
import os
import re
import stat
import subprocess
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Literal

from verifier.model.claim import FileProblem, Location
from verifier.model.paths import relative_path  # re-exported: discovery names files this way
from verifier.model.skipped import SkipKind, Skipped
from verifier.pipeline.reading import DEFAULT_MAX_FILE_BYTES, decode_source, kind_of_file, read_regular_file, too_large

# Version-control metadata: never tracked content, so never listed.
VCS_DIRS = frozenset({".git", ".hg", ".svn", ".bzr", "_darcs", "CVS"})
# Folder names not walked into (listed in the report; explicitly named files inside them are still read).
SKIPPED_DIRS: dict[str, str] = {
    ".venv": "virtual environment",
    "__pycache__": "Python byte-code cache",
    "site-packages": "installed packages",
    "dist-packages": "installed packages",
    "node_modules": "installed packages",
    ".idealcheck_cache": "idealcheck result cache",
    ".tox": "tool cache", ".nox": "tool cache", ".eggs": "tool cache", ".mypy_cache": "tool cache",
    ".pytest_cache": "tool cache", ".ruff_cache": "tool cache", ".hypothesis": "tool cache",
}
SKIPPED_DIR_SUFFIXES = (".egg-info", ".dist-info")


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
    skipped: tuple[Skipped, ...] = ()


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


def skipped_dir_reason(directory: Path, name: str) -> str | None:
    """Why the folder ``directory/name`` is not walked into, or None when it is walked."""
    if name in SKIPPED_DIRS:
        return SKIPPED_DIRS[name]
    if name.endswith(SKIPPED_DIR_SUFFIXES):
        return "package build metadata"
    # A virtual environment of any name, and caches that tag themselves (Cache Directory Tagging Specification).
    if (directory / name / "pyvenv.cfg").is_file():
        return "virtual environment (it holds pyvenv.cfg)"
    if (directory / name / "CACHEDIR.TAG").is_file():
        return "cache folder (it holds CACHEDIR.TAG)"
    return None


# ---------------------------------------------------------------- the working tree


class _Collector:
    def __init__(
        self, include: Sequence[str], exclude: Sequence[str], only: set[str] | None, cwd: Path, root: Path | None,
        max_bytes: int = DEFAULT_MAX_FILE_BYTES,
    ) -> None:
        self.include = include
        self.exclude = exclude
        self.only = only
        self.cwd = cwd
        self.root = root
        self.max_bytes = max_bytes
        self.files: dict[str, SourceFile] = {}
        self.problems: dict[str, FileProblem] = {}
        self.skipped: dict[str, Skipped] = {}

    def wanted(self, path: str) -> bool:
        if path in self.files or path in self.problems or path in self.skipped:
            return False
        if self.only is not None and path not in self.only:
            return False
        if not self.include and not self.exclude:
            return True
        # globs are anchored at the config's folder when one is given, else at the working directory
        anchored = path if self.root is None else relative_path(self.cwd / path, self.root)
        return selected(anchored, self.include, self.exclude)

    def folder_excluded(self, path: str) -> bool:
        """Whether the config's globs (or ``only``) leave out everything in the folder ``path``."""
        if self.only is not None:
            prefix = path.rstrip("/") + "/"
            return not any(item.startswith(prefix) for item in self.only)
        if not self.exclude:
            return False
        inside = path.rstrip("/") + "/\0"  # a name no file has: matches only globs covering the whole folder
        anchored = inside if self.root is None else relative_path(self.cwd / inside, self.root)
        return any(matches_glob(anchored, pattern) for pattern in self.exclude)

    def add(self, path: str, text: str | None, problem: FileProblem | None, skipped: Skipped | None = None) -> None:
        if skipped is not None:
            self.skipped[skipped.path] = skipped
        elif problem is not None:
            self.problems[path] = problem
        elif text is not None:
            self.files[path] = SourceFile(path, text)

    def skip(self, path: str, kind: SkipKind, reason: str) -> None:
        self.skipped.setdefault(path, Skipped(path, kind, reason))

    def discovery(self) -> Discovery:
        files = tuple(self.files[key] for key in sorted(self.files))
        problems = tuple(self.problems[key] for key in sorted(self.problems))
        skipped = tuple(self.skipped[key] for key in sorted(self.skipped))
        return Discovery(files, problems, skipped)


def _inside(real: str, roots: Sequence[str]) -> bool:
    return any(real == root or real.startswith(root.rstrip(os.sep) + os.sep) for root in roots)


class _Walker:
    """The working tree under the scanned folders: regular files are read, everything else is listed."""

    def __init__(self, collector: _Collector, roots: Sequence[str]) -> None:
        self.collector = collector
        self.cwd = collector.cwd
        self.roots = tuple(roots)  # real paths: symbolic links may lead anywhere inside them
        self.seen: set[tuple[int, int]] = set()  # (device, inode) of folders walked: no folder twice

    def shown(self, path: Path | str) -> str:
        return relative_path(path, self.cwd)

    def folder(self, directory: Path) -> None:
        try:
            info = os.stat(directory)
            if (info.st_dev, info.st_ino) in self.seen:
                return
            self.seen.add((info.st_dev, info.st_ino))
            with os.scandir(directory) as listing:
                entries = sorted(listing, key=lambda entry: entry.name)
        except OSError as exc:
            self.collector.skip(self.shown(directory) + "/", "unreadable",
                                f"cannot list the folder: {exc.strerror or exc}")
            return
        for entry in entries:
            self.entry(directory, entry)

    def entry(self, directory: Path, entry: os.DirEntry[str]) -> None:
        path = self.shown(entry.path)
        try:
            mode = entry.stat(follow_symlinks=False).st_mode
        except OSError as exc:
            self.collector.skip(path, "unreadable", f"cannot read its metadata: {exc.strerror or exc}")
            return
        if stat.S_ISDIR(mode):
            if entry.name in VCS_DIRS or self.collector.folder_excluded(path):
                return
            reason = skipped_dir_reason(directory, entry.name)
            if reason is not None:
                self.collector.skip(path + "/", "folder", f"{reason}, not walked into")
            else:
                self.folder(Path(entry.path))
            return
        if not self.collector.wanted(path):
            return
        if stat.S_ISLNK(mode):
            self.link(entry.path, path)
        elif stat.S_ISREG(mode):
            self.collector.add(path, *read_regular_file(entry.path, path, self.collector.max_bytes))
        else:
            self.collector.skip(path, "not-regular", f"{kind_of_file(mode)}, not read")

    def link(self, absolute: str, path: str) -> None:
        """A symbolic link to a regular file inside the scanned roots is read; any other is listed."""
        try:
            real = os.path.realpath(absolute, strict=True)
            mode = os.stat(real).st_mode
        except OSError as exc:
            if exc.errno == errno.ELOOP:
                self.collector.skip(path, "link", "symbolic link loop, not followed")
            elif isinstance(exc, FileNotFoundError):
                self.collector.skip(path, "link", "broken symbolic link")
            else:
                self.collector.skip(path, "link", f"symbolic link that cannot be followed: {exc.strerror or exc}")
            return
        if not _inside(real, self.roots):
            self.collector.skip(path, "link", "symbolic link leading out of the scanned folders, not followed")
        elif stat.S_ISDIR(mode):
            self.collector.skip(path + "/", "link", "symbolic link to a folder, not followed")
        elif not stat.S_ISREG(mode):
            self.collector.skip(path, "not-regular", f"symbolic link to {kind_of_file(mode)}, not read")
        else:
            self.collector.add(path, *read_regular_file(real, path, self.collector.max_bytes))

    def named(self, argument: str) -> None:
        target = Path(self.cwd, argument)
        shown = self.shown(target)
        try:
            mode = os.lstat(target).st_mode
        except OSError:
            self.collector.problems.setdefault(shown, FileProblem(Location(shown, 1, 1), "no such file or folder"))
            return
        if stat.S_ISDIR(mode):
            self.folder(target)
        elif not self.collector.wanted(shown):
            return
        elif stat.S_ISLNK(mode):
            self.link(str(target), shown)
        elif stat.S_ISREG(mode):
            self.collector.add(shown, *read_regular_file(str(target), shown, self.collector.max_bytes))
        else:
            self.collector.skip(shown, "not-regular", f"{kind_of_file(mode)}, not read")


def _collect_worktree(paths: Sequence[str], cwd: Path, collector: _Collector) -> None:
    folders = [os.path.realpath(Path(cwd, p)) for p in paths if Path(cwd, p).is_dir()]
    walker = _Walker(collector, folders or [os.path.realpath(cwd)])
    for argument in paths:
        walker.named(argument)


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


def _skipped_folder_of(path: str, argument: str) -> tuple[str, str] | None:
    """(folder, reason) when ``path`` lies in a skipped folder below the argument that selected it."""
    if path == argument:
        return None
    start = 0 if argument in ("", ".") else len(argument.rstrip("/").split("/"))
    folders = path.split("/")[:-1]
    for depth in range(start, len(folders)):
        name = folders[depth]
        if name in SKIPPED_DIRS:
            return "/".join(folders[: depth + 1]), SKIPPED_DIRS[name]
        if name.endswith(SKIPPED_DIR_SUFFIXES):
            return "/".join(folders[: depth + 1]), "package build metadata"
    return None


def _collect_staged(paths: Sequence[str], cwd: Path, collector: _Collector) -> None:
    top = git_toplevel(cwd)
    listing = _split_z(_git(["ls-files", "--stage", "-z", "--full-name"], top))
    arguments = [relative_path(Path(cwd, argument), cwd) for argument in paths]
    wanted: list[tuple[str, str]] = []  # (relative path, blob id)
    indexed: set[str] = set()
    for entry in listing:
        meta, _, name = entry.partition("\t")
        mode, blob, stage = meta.split(" ")
        path = relative_path(top / name, cwd)
        indexed.add(path)
        argument = next((a for a in arguments if _under(path, a)), None)
        if argument is None or not collector.wanted(path):
            continue
        folder = _skipped_folder_of(path, argument)
        if folder is not None:
            collector.skip(folder[0] + "/", "folder", f"{folder[1]}, not walked into")
        elif stage != "0":
            collector.skip(path, "unreadable", "unmerged in the git index (a conflict), not read")
        elif mode == "160000":
            collector.skip(path + "/", "folder", "git submodule, not read")
        elif mode == "120000":
            collector.skip(path, "link", "symbolic link in the git index, not followed")
        else:
            wanted.append((path, blob))
    for argument in arguments:
        if not any(_under(path, argument) for path in indexed) and not Path(cwd, argument).is_dir():
            collector.problems.setdefault(
                argument, FileProblem(Location(argument, 1, 1), "not in the git index (no staged version to read)")
            )
    if not wanted:
        return
    sizes = _git(["cat-file", "--batch-check"], top,
                 input_bytes=b"".join(blob.encode() + b"\n" for _, blob in wanted)).splitlines()
    small: list[tuple[str, str]] = []
    for (path, blob), line in zip(wanted, sizes):
        fields = line.split(b" ")
        if len(fields) >= 3 and fields[2].isdigit() and int(fields[2]) > collector.max_bytes:
            collector.add(path, None, None, too_large(path, int(fields[2]), collector.max_bytes))
        else:
            small.append((path, blob))
    wanted = small
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
    max_file_bytes: int = DEFAULT_MAX_FILE_BYTES,
) -> Discovery:
    """The files to scan under ``paths`` (files or folders, relative to ``cwd``) and the ones that could not be read.

    ``include``/``exclude`` are globs on the path relative to ``root`` (the config's folder; default ``cwd``,
    see ``matches_glob``); they apply to explicitly named files too, while the skipped folders only apply
    when walking.  ``source="staged"`` reads the file list and texts from the git index.  ``only`` restricts the result to these relative paths.
    ``max_file_bytes`` is the size cap; a larger file is listed in ``skipped``, not read.
    """
    base = Path(cwd) if cwd is not None else Path.cwd()
    only_set = None if only is None else {relative_path(Path(base, p), base) for p in only}
    anchor = None if root is None else Path(base, root)
    collector = _Collector(tuple(include), tuple(exclude), only_set, base, anchor, max_file_bytes)
    if source == "staged":
        _collect_staged(paths or ["."], base, collector)
    elif source == "worktree":
        _collect_worktree(paths or ["."], base, collector)
    else:
        raise ValueError(f"unknown source {source!r}")
    return collector.discovery()
