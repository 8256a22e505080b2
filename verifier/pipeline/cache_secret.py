"""The secret that signs extraction-cache entries, kept where a pull request cannot write it.

A cached extraction is trusted (its claims are decided as they are read), and the cache folder lies in
the checkout, where a pull request can commit or restore anything; so every entry carries an HMAC-SHA256
with a secret from outside the checkout:
- ``IDEALCHECK_CACHE_SECRET`` when set (a CI secret, which runs on pull requests from forks do not get);
- else a random secret made once per user in ``$XDG_CACHE_HOME/idealcheck/extraction-secret`` (default
  ``~/.cache``), created with mode 0600 in a folder of mode 0700 and read only when it is a regular
  file owned by this user, not a symbolic link.
Without either (no home, a read-only one, a file that looks tampered with) there is no secret and the
extraction cache is simply not used; the result cache, which re-checks everything it reads, still is.
"""
from __future__ import annotations

import os
import secrets
import stat
from pathlib import Path

ENVIRONMENT_VARIABLE = "IDEALCHECK_CACHE_SECRET"
FILE_NAME = "extraction-secret"
_LENGTH = 64  # hex digits: 32 random bytes
_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)


def secret_path() -> Path | None:
    base = os.environ.get("XDG_CACHE_HOME") or ""
    if not base:
        home = os.path.expanduser("~")
        if home == "~":
            return None
        base = os.path.join(home, ".cache")
    return Path(base) / "idealcheck" / FILE_NAME


def _read(path: Path) -> bytes | None:
    try:
        fd = os.open(path, os.O_RDONLY | _NOFOLLOW | getattr(os, "O_CLOEXEC", 0))
    except OSError:
        return None
    try:
        info = os.fstat(fd)
        owner_ok = not hasattr(os, "getuid") or info.st_uid == os.getuid()
        if not stat.S_ISREG(info.st_mode) or not owner_ok or info.st_mode & 0o077:
            return None
        data = os.read(fd, _LENGTH + 1)
    except OSError:
        return None
    finally:
        os.close(fd)
    text = data.decode("ascii", "replace")
    if len(text) != _LENGTH or any(ch not in "0123456789abcdef" for ch in text):
        return None
    return text.encode("ascii")


def _create(path: Path) -> None:
    try:
        path.parent.mkdir(mode=0o700, parents=True, exist_ok=True)
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | _NOFOLLOW | getattr(os, "O_CLOEXEC", 0), 0o600)
    except OSError:  # exists already (another run made it first) or cannot be made: read whatever is there
        return
    try:
        os.write(fd, secrets.token_hex(_LENGTH // 2).encode("ascii"))
    finally:
        os.close(fd)


def cache_secret() -> bytes | None:
    """The signing secret, or None when there is none to be had (then no extraction is cached)."""
    given = os.environ.get(ENVIRONMENT_VARIABLE)
    if given:
        return given.encode("utf-8", "surrogateescape")
    path = secret_path()
    if path is None:
        return None
    found = _read(path)
    if found is None and not os.path.lexists(path):
        _create(path)
        found = _read(path)
    return found
