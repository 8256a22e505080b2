"""Every look at the file system an extraction makes, and a record of what each one saw.

The claims layer reads files besides the scanned one (imported Python modules, kernels of other files,
`same as` references), probes for files (where an import resolves) and lists folders (where a kernel's
callee may be).  All of it goes through these three functions, so that the extraction cache can key an
entry on everything the extraction read: inside ``recording()`` each call adds an observation (the
sha256 of the bytes read, whether a path is a file, a folder's entries), and ``still_true`` tells later
whether each observation would be the same today.  Outside ``recording()`` they just do their job.
"""
from __future__ import annotations

import contextlib
import hashlib
import os
from collections.abc import Callable, Collection, Iterator
from dataclasses import dataclass
from typing import Literal, Union

ReadKind = Literal["file", "isfile", "folder"]
FolderEntry = tuple[str, bool, bool]  # name, is a folder (links followed), is a symbolic link


@dataclass(frozen=True)
class Observation:
    """One look: ``kind`` at ``path`` (as the extraction spelled it) gave ``seen``: the sha256 of the
    bytes or None (``file``), a boolean (``isfile``), the sorted entries or None (``folder``)."""

    kind: ReadKind
    path: str
    seen: Union[str, bool, tuple[FolderEntry, ...], None]


_active: list[list[Observation]] = []  # the logs being recorded, innermost last (one per extraction)


@contextlib.contextmanager
def recording() -> Iterator[list[Observation]]:
    """Record every look made inside the block, in order, into the list it yields."""
    log: list[Observation] = []
    _active.append(log)
    try:
        yield log
    finally:
        _active.remove(log)


def _note(observation: Observation) -> None:
    for log in _active:
        log.append(observation)


def _digest(data: bytes | None) -> str | None:
    return None if data is None else hashlib.sha256(data).hexdigest()


def _read(path: str) -> bytes | None:
    try:
        with open(path, "rb") as handle:
            return handle.read()
    except OSError:
        return None


def _is_file(path: str) -> bool:
    return os.path.isfile(path)


def _entries(path: str) -> tuple[FolderEntry, ...] | None:
    try:
        with os.scandir(path) as listing:
            found = []
            for entry in listing:
                try:
                    found.append((entry.name, entry.is_dir(), entry.is_symlink()))
                except OSError:  # vanished or unreadable while listed: not a folder to walk into
                    found.append((entry.name, False, False))
    except OSError:
        return None
    return tuple(sorted(found))


def read_bytes(path: str) -> bytes | None:
    """The bytes of the file at ``path``, or None when it cannot be read."""
    data = _read(path)
    if _active:
        _note(Observation("file", path, _digest(data)))
    return data


def is_file(path: str) -> bool:
    """``os.path.isfile``, recorded."""
    found = _is_file(path)
    if _active:
        _note(Observation("isfile", path, found))
    return found


def folder_entries(path: str) -> tuple[FolderEntry, ...] | None:
    """The entries of the folder ``path`` sorted by name, or None when it cannot be listed."""
    found = _entries(path)
    if _active:
        _note(Observation("folder", path, found))
    return found


def walk_files(root: str, wanted: Callable[[str], bool], skipped: Collection[str], limit: int) -> list[str]:
    """The files under ``root`` whose name is ``wanted`` (``root`` itself when it is a file), folders in
    sorted order parents first (as ``os.walk`` goes), without following links to folders and leaving out
    ``skipped`` and dot folders; the walk stops after the folder that brings the count past ``limit``."""
    if is_file(root):
        return [root]
    listing: list[str] = []
    stack = [root]
    while stack:
        directory = stack.pop()
        entries = folder_entries(directory)
        if entries is None:
            continue
        folders = [name for name, folder, link in entries
                   if folder and not link and name not in skipped and not name.startswith(".")]
        listing += [os.path.join(directory, name) for name, folder, _link in entries
                    if not folder and wanted(name)]
        if len(listing) > limit:
            break
        stack.extend(os.path.join(directory, name) for name in reversed(folders))
    return listing


def still_true(observation: Observation) -> bool:
    """Whether looking again now sees what ``observation`` saw."""
    if observation.kind == "file":
        return _digest(_read(observation.path)) == observation.seen
    if observation.kind == "isfile":
        return _is_file(observation.path) == observation.seen
    if observation.kind == "folder":
        return _entries(observation.path) == observation.seen
    return False
