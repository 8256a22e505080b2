"""Reading one scanned file safely: only a regular file, at most a size cap, then decoded (``decoding``).

A hostile checkout may hold a FIFO, a device (``/dev/zero``, ``/proc/kmsg``) or a link swapped in between
a check and a read; none of them is ever read, and no read can block or grow without bound.
"""
from __future__ import annotations

import errno
import os
import stat

from verifier.model.claim import FileProblem, Location
from verifier.model.skipped import Skipped
from verifier.claims.decoding import Decoded, decode_if_claimed, decode_source

DEFAULT_MAX_FILE_BYTES = 10 * 1024 * 1024  # config: max_file_kb
# Open flags that keep a read from blocking (FIFOs, terminals) or following a link planted after the check.
_OPEN_FLAGS = (os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOFOLLOW", 0)
               | getattr(os, "O_NOCTTY", 0) | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_BINARY", 0))


def kind_of_file(mode: int) -> str:
    if stat.S_ISFIFO(mode):
        return "a FIFO"
    if stat.S_ISSOCK(mode):
        return "a socket"
    if stat.S_ISCHR(mode):
        return "a character device"
    if stat.S_ISBLK(mode):
        return "a block device"
    if stat.S_ISDIR(mode):
        return "a folder"
    return "not a regular file"


Outcome = tuple[str | None, FileProblem | None, Skipped | None]
BytesOutcome = tuple[bytes | None, FileProblem | None, Skipped | None]


def read_regular_file(absolute: str, path: str, max_bytes: int) -> Outcome:
    """(text, problem, skipped) for one file (the first problem only; ``read_decoded`` gives them all)."""
    decoded = read_decoded(absolute, path, max_bytes)
    return decoded.text, (decoded.problems[0] if decoded.problems else None), decoded.skipped


def read_decoded(absolute: str, path: str, max_bytes: int) -> Decoded:
    """One file read (``read_regular_bytes``) and decoded (``decoding.decode_source``)."""
    data, problem, skipped = read_regular_bytes(absolute, path, max_bytes)
    if data is None:
        return Decoded(None, (problem,) if problem is not None else (), skipped)
    return decode_source(data, path)


def read_scanned(absolute: str, path: str, max_bytes: int) -> Decoded:
    """One scanned file read (``read_regular_bytes``) and decoded only when its bytes may hold a claim
    (``decoding.decode_if_claimed``)."""
    data, problem, skipped = read_regular_bytes(absolute, path, max_bytes)
    if data is None:
        return Decoded(None, (problem,) if problem is not None else (), skipped)
    return decode_if_claimed(data, path)


def read_regular_bytes(absolute: str, path: str, max_bytes: int) -> BytesOutcome:
    """(bytes, problem, skipped) for one file: only a regular file is read, and at most ``max_bytes``.

    The file is opened without following a final symbolic link and without blocking, and checked with
    ``fstat`` on the open descriptor, so a FIFO, a device or a link swapped in meanwhile is never read.
    """
    try:
        fd = os.open(absolute, _OPEN_FLAGS)
    except FileNotFoundError:
        return None, FileProblem(Location(path, 1, 1), "no such file (or a broken symbolic link)"), None
    except IsADirectoryError:
        return None, FileProblem(Location(path, 1, 1), "is a folder, not a file"), None
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return None, None, Skipped(path, "link", "symbolic link, not followed")
        if exc.errno == errno.ENXIO:  # a FIFO or socket with nobody at the other end
            return None, None, Skipped(path, "not-regular", "not a regular file, not read")
        return None, FileProblem(Location(path, 1, 1), f"cannot read the file: {exc.strerror or exc}"), None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            if stat.S_ISDIR(info.st_mode):
                return None, FileProblem(Location(path, 1, 1), "is a folder, not a file"), None
            return None, None, Skipped(path, "not-regular", f"{kind_of_file(info.st_mode)}, not read")
        if info.st_size > max_bytes:
            return None, None, too_large(path, info.st_size, max_bytes)
        chunks: list[bytes] = []
        size = 0
        want = info.st_size + 1  # the whole file and the end in one read, unless it grows meanwhile
        while size <= max_bytes:  # the file may grow while it is read: never more than the cap
            asked = min(want, max_bytes + 1 - size)
            chunk = os.read(fd, asked)
            want = 1 << 20
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
            if len(chunk) < asked and size == info.st_size:
                break  # all of the size fstat gave and short of the byte past it: the end, without a read more
        if size > max_bytes:
            return None, None, too_large(path, size, max_bytes)
    except OSError as exc:
        return None, FileProblem(Location(path, 1, 1), f"cannot read the file: {exc.strerror or exc}"), None
    finally:
        os.close(fd)
    return b"".join(chunks), None, None


def too_large(path: str, size: int, max_bytes: int) -> Skipped:
    limit_kb = max_bytes // 1024
    more = "more than " if size > max_bytes else ""
    return Skipped(path, "too-large", f"{more}{size} bytes, over the limit of {limit_kb} KB (max_file_kb), not read")
