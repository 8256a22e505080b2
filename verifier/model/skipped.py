"""Plain data for what a run did not read: files and folders left out for a reason other than the config.

A pull request must not be able to hide a claim by making its file unreadable in some way (a marker file
in its folder, a symbolic link out of the checkout, a device, a size beyond the cap): whatever discovery
leaves out is listed here and shown in every report, with the reason.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

SkipKind = Literal[
    "folder",  # a folder not walked into (virtual environment, tool cache, build metadata)
    "not-regular",  # a device, FIFO or socket: never opened for reading
    "link",  # a symbolic link that is broken, loops, leads to a folder or out of the scanned roots
    "too-large",  # a file over the size cap (``max_file_kb``)
    "binary",  # a binary file, recognised by its content (counted in the text report, listed with -v)
    "unreadable",  # the file system refused (permissions, too many open files ...)
    "cache",  # the result cache folder was refused, so no result was read from or written to it
]


@dataclass(frozen=True)
class Skipped:
    """One path the run left out; ``path`` is relative to the working directory, with forward slashes
    (a folder ends in ``/``)."""

    path: str
    kind: SkipKind
    reason: str
