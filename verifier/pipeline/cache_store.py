"""The result cache as files: a folder idealcheck owns, entries written atomically, read with bounds.

The cache path may come from a pull request (a committed ``.idealcheck_cache`` symbolic link, a
``cache_dir`` in the config), so:
- a cache path that is a symbolic link, not a folder, or a non-empty folder without idealcheck's
  ``CACHEDIR.TAG`` is refused (``directory_refusal``): nothing is read from it or written to it;
- below the cache folder every folder is opened without following symbolic links (``O_NOFOLLOW``) and
  every file is created relative to its folder's descriptor, so no link planted inside can lead a write
  outside;
- the marker files are only ever created, never overwritten;
- an entry is read only if it is a regular file of at most ``MAX_ENTRY_BYTES`` (a FIFO or a link to a
  device is refused without blocking), and a temporary file is removed on any failure to write.
"""
from __future__ import annotations

import os
import secrets
import stat
from pathlib import Path

CACHEDIR_TAG = "Signature: 8a477f597d28d172789f06886806bc55\n# idealcheck result cache; safe to delete.\n"
GITIGNORE = "# written by idealcheck\n*\n"
MAX_ENTRY_BYTES = 32 * 1024 * 1024
_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)
_DIRECTORY = getattr(os, "O_DIRECTORY", 0)
_READ_FLAGS = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | _NOFOLLOW | getattr(os, "O_CLOEXEC", 0)
_CREATE_FLAGS = os.O_WRONLY | os.O_CREAT | os.O_EXCL | _NOFOLLOW | getattr(os, "O_CLOEXEC", 0)


def _our_tag(directory: Path) -> bool:
    tag = directory / "CACHEDIR.TAG"
    try:
        if not stat.S_ISREG(os.lstat(tag).st_mode):
            return False
        fd = os.open(tag, _READ_FLAGS)
        try:
            return os.read(fd, len(CACHEDIR_TAG) + 1).decode("utf-8", "replace") == CACHEDIR_TAG
        finally:
            os.close(fd)
    except OSError:
        return False


def directory_refusal(directory: Path) -> str | None:
    """Why ``directory`` must not be used as the cache, or None when it may (it may not exist yet)."""
    try:
        mode = os.lstat(directory).st_mode
    except FileNotFoundError:
        return None
    except OSError as exc:
        return f"the cache folder cannot be examined ({exc.strerror or exc}); the cache is not used"
    if stat.S_ISLNK(mode):
        return "the cache path is a symbolic link; the cache is not used"
    if not stat.S_ISDIR(mode):
        return "the cache path is not a folder; the cache is not used"
    if _our_tag(directory):
        return None
    try:
        empty = not any(True for _ in os.scandir(directory))
    except OSError as exc:
        return f"the cache folder cannot be listed ({exc.strerror or exc}); the cache is not used"
    if empty:
        return None
    return "the cache path is a folder idealcheck did not create (no CACHEDIR.TAG of its own); the cache is not used"


def _open_folder(name: str, parent_fd: int | None, *, create: bool) -> int:
    """A descriptor of folder ``name`` (relative to ``parent_fd``), never through a symbolic link."""
    if create:
        try:
            os.mkdir(name, 0o755, dir_fd=parent_fd) if parent_fd is not None else os.mkdir(name, 0o755)
        except FileExistsError:
            pass
    flags = os.O_RDONLY | _DIRECTORY | _NOFOLLOW | getattr(os, "O_CLOEXEC", 0)
    return os.open(name, flags, dir_fd=parent_fd) if parent_fd is not None else os.open(name, flags)


def _create_file(name: str, folder_fd: int, text: str) -> None:
    """Create ``name`` with ``text`` in the folder; an existing file (or link) is left alone."""
    try:
        fd = os.open(name, _CREATE_FLAGS, 0o644, dir_fd=folder_fd)
    except FileExistsError:
        return
    with os.fdopen(fd, "w", encoding="utf-8") as out:
        out.write(text)


def supported() -> bool:
    """Folder-relative operations exist on this platform (not on Windows: there the cache is not written)."""
    return os.open in os.supports_dir_fd and os.mkdir in os.supports_dir_fd and os.rename in os.supports_dir_fd


def write_entry(directory: Path, parts: tuple[str, ...], text: str) -> bool:
    """Write ``text`` to ``directory/parts...`` atomically; False when refused or the disk fails."""
    if not supported() or directory_refusal(directory) is not None:
        return False
    directory.parent.mkdir(parents=True, exist_ok=True)
    fds: list[int] = []
    temporary: str | None = None
    try:
        fds.append(_open_folder(str(directory), None, create=True))
        _create_file("CACHEDIR.TAG", fds[0], CACHEDIR_TAG)
        _create_file(".gitignore", fds[0], GITIGNORE)
        for folder in parts[:-1]:
            fds.append(_open_folder(folder, fds[-1], create=True))
        temporary = f".tmp-{secrets.token_hex(8)}.json"
        fd = os.open(temporary, _CREATE_FLAGS, 0o644, dir_fd=fds[-1])
        with os.fdopen(fd, "w", encoding="utf-8") as out:
            out.write(text)
        os.replace(temporary, parts[-1], src_dir_fd=fds[-1], dst_dir_fd=fds[-1])
        temporary = None
        return True
    except (OSError, ValueError):  # a read-only or full disk, a link in the way: costs speed, never correctness
        return False
    finally:
        if temporary is not None and fds:
            try:
                os.unlink(temporary, dir_fd=fds[-1])
            except OSError:
                pass
        for fd in fds:
            os.close(fd)


def read_entry_text(path: Path) -> str | None:
    """The text of one entry when it is a regular file of bounded size, else None (never blocks)."""
    try:
        fd = os.open(path, _READ_FLAGS)
    except OSError:
        return None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode) or info.st_size > MAX_ENTRY_BYTES:
            return None
        chunks: list[bytes] = []
        size = 0
        while size <= MAX_ENTRY_BYTES:
            chunk = os.read(fd, min(1 << 20, MAX_ENTRY_BYTES + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        if size > MAX_ENTRY_BYTES:
            return None
        return b"".join(chunks).decode("utf-8")
    except (OSError, UnicodeDecodeError):
        return None
    finally:
        os.close(fd)
