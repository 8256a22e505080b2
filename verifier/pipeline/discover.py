"""Which files to read: paths and folders, include/exclude globs, and git staged or changed files.

In a git working tree a folder's files are those git lists (``git ls-files --cached --others
--exclude-standard``): what it tracks plus the untracked files it does not ignore, so ``.gitignore`` is
honoured.  Outside one (or without git) the folder is walked, and common build and environment folders
(``build``, ``dist``, ``venv``, ``env``, ``_build`` ...) are left out as well.  A file named on the command
line is always read.  Every file so selected is read unless the config's globs exclude it.  Whatever is
left out for another reason is listed as ``Skipped`` with the reason, so that a pull request cannot hide a
claim unseen: folders that are virtual environments, tool caches or build metadata (by name or by a marker
file such as ``pyvenv.cfg`` or ``CACHEDIR.TAG``), binary files (recognised by content, ``decoding``),
anything that is not a regular file (devices, FIFOs, sockets: never opened for reading, so nothing can
block or stream forever), symbolic links that are broken, loop, lead to a folder or out of the scanned
roots, and files over the size cap.  Version-control metadata (``.git`` and the like) is never tracked
content and is left out silently, as are files git ignores (the project's own choice, and never in a
commit).

A file that is read but cannot be decoded becomes a ``FileProblem`` (an ``error`` in the
report), never an exception.  Paths are reported relative to the working directory with forward slashes;
a name that is not valid UTF-8 keeps its bytes as surrogate escapes.  Scanned files are only read, never
imported or run.
"""
from __future__ import annotations

import errno
import os
import stat
from collections.abc import Callable, Collection, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from verifier.model.claim import FileProblem, Location
from verifier.model.paths import relative_path  # re-exported: discovery names files this way
from verifier.model.skipped import SkipKind, Skipped
from verifier.claims.decoding import MARKER, Decoded, decode_if_claimed
from verifier.pipeline.git_files import (  # re-exported: the git side of discovery
    DiscoveryError,
    run_git,
    split_z,
    changed_since,
    git_listing,
    git_toplevel,
    staged_paths,
)
from verifier.pipeline.globs import matches_glob, selected  # re-exported: globs select the files
from verifier.pipeline.reading import DEFAULT_MAX_FILE_BYTES, kind_of_file, read_scanned, too_large

CLAIM_MARKER = MARKER.decode("ascii")
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
# Outside a git working tree (where .gitignore cannot say what is generated), these common build and
# environment folders are left out too, and listed; in a git tree their tracked files are read.
WALK_SKIPPED_DIRS: dict[str, str] = {
    "build": "build output", "dist": "build output", "_build": "build output (docs/_build and the like)",
    "htmlcov": "coverage report", "venv": "virtual environment", "env": "virtual environment",
}


@dataclass(frozen=True)
class SourceFile:
    path: str  # relative to the working directory, forward slashes
    text: str | None  # None: the file's bytes hold no claim marker, so it was not decoded (it has no claims)

    def holds_claims(self) -> bool:
        return self.text is not None and CLAIM_MARKER in self.text


@dataclass(frozen=True)
class Discovery:
    files: tuple[SourceFile, ...]
    problems: tuple[FileProblem, ...]
    skipped: tuple[Skipped, ...] = ()
    notes: tuple[tuple[str, str], ...] = ()  # (path, note): how a file that is not UTF-8 was read
    claim_line_problems: tuple[FileProblem, ...] = ()  # claim lines of files read that cannot be decoded


def skipped_dir_reason(directory: Path, name: str, *, walking: bool = False) -> str | None:
    """Why the folder ``directory/name`` is not walked into, or None when it is walked; ``walking`` (no
    git listing) adds the common build and environment folders."""
    if name in SKIPPED_DIRS:
        return SKIPPED_DIRS[name]
    if walking and name in WALK_SKIPPED_DIRS:
        return WALK_SKIPPED_DIRS[name]
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
        max_bytes: int = DEFAULT_MAX_FILE_BYTES, on_claims: Callable[[], None] | None = None,
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
        self.notes: dict[str, str] = {}
        self.problem_lines: dict[tuple[str, int, int], FileProblem] = {}  # claim lines that cannot be decoded
        self.on_claims = on_claims  # called once, when the first file holding claims is read

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

    def add(self, path: str, decoded: Decoded) -> None:
        if decoded.skipped is not None:
            self.skipped[decoded.skipped.path] = decoded.skipped
        elif decoded.claim_free:
            self.files[path] = SourceFile(path, None)
        elif decoded.text is None:
            if decoded.problems:
                self.problems[path] = decoded.problems[0]
        else:
            source = SourceFile(path, decoded.text)
            self.files[path] = source
            if self.on_claims is not None and source.holds_claims():
                self.on_claims()
                self.on_claims = None
            for problem in decoded.problems:
                self.problem_lines[(path, problem.location.line, problem.location.column)] = problem
            if decoded.note is not None:
                self.notes[path] = decoded.note

    def skip(self, path: str, kind: SkipKind, reason: str) -> None:
        self.skipped.setdefault(path, Skipped(path, kind, reason))

    def discovery(self) -> Discovery:
        files = tuple(self.files[key] for key in sorted(self.files))
        problems = tuple(self.problems[key] for key in sorted(self.problems))
        lines = tuple(self.problem_lines[key] for key in sorted(self.problem_lines) if key[0] in self.files)
        skipped = tuple(self.skipped[key] for key in sorted(self.skipped))
        notes = tuple((path, self.notes[path]) for path in sorted(self.notes) if path in self.files)
        return Discovery(files, problems, skipped, notes, lines)


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
        shown = self.shown(directory)  # once per folder: the names below it are joined to it textually
        prefix = "" if shown == "." else shown + "/"
        for entry in entries:
            self.entry(directory, entry, prefix + entry.name)

    def entry(self, directory: Path, entry: os.DirEntry[str], path: str) -> None:
        try:
            # the kind from the listing itself where the file system gives it (no stat call per file);
            # the full mode only for what is neither folder, link nor regular file
            if entry.is_dir(follow_symlinks=False):
                mode = stat.S_IFDIR
            elif entry.is_symlink():
                mode = stat.S_IFLNK
            elif entry.is_file(follow_symlinks=False):
                mode = stat.S_IFREG
            else:
                mode = entry.stat(follow_symlinks=False).st_mode
        except OSError as exc:
            self.collector.skip(path, "unreadable", f"cannot read its metadata: {exc.strerror or exc}")
            return
        if stat.S_ISDIR(mode):
            if entry.name in VCS_DIRS or self.collector.folder_excluded(path):
                return
            reason = skipped_dir_reason(directory, entry.name, walking=True)
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
            self.collector.add(path, read_scanned(entry.path, path, self.collector.max_bytes))
        else:
            self.collector.skip(path, "not-regular", f"{kind_of_file(mode)}, not read")

    def listed(self, folder: Path, listing: Sequence[str]) -> None:
        """The files git lists under ``folder`` (paths relative to it): each is read as a walked file
        would be, except under a skipped folder (a virtual environment or cache committed or not ignored)."""
        reasons: dict[Path, str | None] = {}
        for relative in listing:
            parts = relative.rstrip("/").split("/")
            directory, skipped_at = folder, None
            for name in parts[:-1]:
                below = directory / name
                if below not in reasons:
                    reasons[below] = skipped_dir_reason(directory, name)
                if reasons[below] is not None:
                    skipped_at = below
                    break
                directory = below
            if skipped_at is not None:
                shown = self.shown(skipped_at)
                if not self.collector.folder_excluded(shown):
                    self.collector.skip(shown + "/", "folder", f"{reasons[skipped_at]}, not walked into")
                continue
            self.listed_file(folder / relative)

    def listed_file(self, target: Path) -> None:
        shown = self.shown(target)
        if not self.collector.wanted(shown):
            return
        try:
            mode = os.lstat(target).st_mode
        except FileNotFoundError:
            return  # tracked but deleted in the working tree: there is nothing to read
        except OSError as exc:
            self.collector.skip(shown, "unreadable", f"cannot read its metadata: {exc.strerror or exc}")
            return
        if stat.S_ISDIR(mode):
            self.collector.skip(shown + "/", "folder", "git submodule or another git repository, not walked into")
        elif stat.S_ISLNK(mode):
            self.link(str(target), shown)
        elif stat.S_ISREG(mode):
            self.collector.add(shown, read_scanned(str(target), shown, self.collector.max_bytes))
        else:
            self.collector.skip(shown, "not-regular", f"{kind_of_file(mode)}, not read")

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
            self.collector.add(path, read_scanned(real, path, self.collector.max_bytes))

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
            self.collector.add(shown, read_scanned(str(target), shown, self.collector.max_bytes))
        else:
            self.collector.skip(shown, "not-regular", f"{kind_of_file(mode)}, not read")


def _collect_worktree(paths: Sequence[str], cwd: Path, collector: _Collector, use_git: bool = True) -> None:
    folders = [os.path.realpath(Path(cwd, p)) for p in paths if Path(cwd, p).is_dir()]
    walker = _Walker(collector, folders or [os.path.realpath(cwd)])
    for argument in paths:
        target = Path(cwd, argument)
        listing = git_listing(target) if use_git and target.is_dir() and not target.is_symlink() else None
        if listing is not None:
            walker.listed(target, listing)
        else:
            walker.named(argument)


# ---------------------------------------------------------------- git


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
    listing = split_z(run_git(["ls-files", "--stage", "-z", "--full-name"], top))
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
    sizes = run_git(["cat-file", "--batch-check"], top,
                 input_bytes=b"".join(blob.encode() + b"\n" for _, blob in wanted)).splitlines()
    small: list[tuple[str, str]] = []
    for (path, blob), line in zip(wanted, sizes):
        fields = line.split(b" ")
        if len(fields) >= 3 and fields[2].isdigit() and int(fields[2]) > collector.max_bytes:
            collector.add(path, Decoded(None, skipped=too_large(path, int(fields[2]), collector.max_bytes)))
        else:
            small.append((path, blob))
    wanted = small
    if not wanted:
        return
    request = b"".join(blob.encode() + b"\n" for _, blob in wanted)
    out = run_git(["cat-file", "--batch"], top, input_bytes=request)
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
        collector.add(path, decode_if_claimed(data, path))


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
    use_git: bool = True,
    on_claims: Callable[[], None] | None = None,
) -> Discovery:
    """The files to scan under ``paths`` (files or folders, relative to ``cwd``) and the ones that could not be read.

    ``include``/``exclude`` are globs on the path relative to ``root`` (the config's folder; default ``cwd``,
    see ``matches_glob``); they apply to explicitly named files too, while the skipped folders only apply
    when walking.  ``source="staged"`` reads the file list and texts from the git index.  ``only`` restricts the result to these relative paths.
    ``max_file_bytes`` is the size cap; a larger file is listed in ``skipped``, not read.  ``use_git``
    (the default) takes a folder's files from git when it is in a working tree (see the module text).
    A file whose bytes hold no claim marker is listed without its text (``SourceFile.text`` is None);
    ``on_claims`` is called once, as soon as a file holding claims is read (the runner starts its workers).
    """
    base = Path(cwd) if cwd is not None else Path.cwd()
    only_set = None if only is None else {relative_path(Path(base, p), base) for p in only}
    anchor = None if root is None else Path(base, root)
    collector = _Collector(tuple(include), tuple(exclude), only_set, base, anchor, max_file_bytes, on_claims)
    if source == "staged":
        _collect_staged(paths or ["."], base, collector)
    elif source == "worktree":
        _collect_worktree(paths or ["."], base, collector, use_git)
    else:
        raise ValueError(f"unknown source {source!r}")
    return collector.discovery()
