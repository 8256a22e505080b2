"""Include and exclude globs over '/'-separated relative paths, with the semantics of ignore files."""
from __future__ import annotations

import os
import re
from collections.abc import Sequence
from functools import lru_cache


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
