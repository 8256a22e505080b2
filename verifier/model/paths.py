"""Paths as reports show them: relative to the working directory, with forward slashes."""
from __future__ import annotations

import os
from pathlib import Path


def relative_path(path: Path | str, cwd: Path | str) -> str:
    """``path`` (absolute, or relative to ``cwd``) relative to ``cwd`` with forward slashes.

    Purely textual: symbolic links are not followed, so a file is named by the path it was reached
    through, the same way by every command (``..`` segments for paths outside ``cwd``).
    """
    absolute = os.path.abspath(os.path.join(str(cwd), str(path)))
    relative = os.path.relpath(absolute, os.path.abspath(str(cwd)))
    return relative.replace(os.sep, "/")
