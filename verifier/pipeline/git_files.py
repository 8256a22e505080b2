"""The git commands discovery uses: a folder's listing (tracked plus untracked, not ignored), the staged
files and the files changed since a revision.  git runs as a program (no shell), and its failures are
``DiscoveryError`` with git's own message, or a ``None`` listing where walking the folder is the fallback.
"""
from __future__ import annotations

import os
import subprocess
from collections.abc import Iterable, Sequence
from pathlib import Path

from verifier.model.paths import relative_path

# git without the hook-time variables that point it at another repository or index: the listing is of
# the working tree the folder is in.
_GIT_REDIRECTS = ("GIT_DIR", "GIT_WORK_TREE", "GIT_INDEX_FILE", "GIT_NAMESPACE", "GIT_PREFIX")


class DiscoveryError(Exception):
    """The requested set of files cannot be determined (not a git repository, unknown revision ...)."""


def run_git(args: Sequence[str], cwd: Path, *, input_bytes: bytes | None = None) -> bytes:
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
        out = run_git(["rev-parse", "--show-toplevel"], cwd)
    except DiscoveryError as exc:
        if "git is not installed" in str(exc):
            raise
        raise DiscoveryError(f"{cwd} is not inside a git repository (needed for staged or changed files)") from None
    return Path(out.decode("utf-8", errors="surrogateescape").strip())


def split_z(out: bytes) -> list[str]:
    return [item.decode("utf-8", errors="surrogateescape") for item in out.split(b"\0") if item]


def _from_top(paths: Iterable[str], top: Path, cwd: Path) -> set[str]:
    return {relative_path(top / path, cwd) for path in paths}


def staged_paths(cwd: Path | str) -> set[str]:
    """Files added, copied, modified or renamed in the git index, relative to ``cwd``."""
    cwd = Path(cwd)
    top = git_toplevel(cwd)
    out = run_git(["diff", "--cached", "--name-only", "-z", "--diff-filter=ACMR"], top)
    return _from_top(split_z(out), top, cwd)


def changed_since(ref: str, cwd: Path | str) -> set[str]:
    """Files that differ between revision ``ref`` and the working tree, plus untracked files, relative to ``cwd``."""
    cwd = Path(cwd)
    top = git_toplevel(cwd)
    if ref.startswith("-"):
        raise DiscoveryError(f"unknown git revision {ref!r}")
    try:
        run_git(["rev-parse", "--verify", "--quiet", "--end-of-options", f"{ref}^{{commit}}"], top)
    except DiscoveryError:
        raise DiscoveryError(f"unknown git revision {ref!r}") from None
    changed = split_z(run_git(["diff", "--name-only", "-z", ref, "--"], top))
    untracked = split_z(run_git(["ls-files", "--others", "--exclude-standard", "-z", "--full-name"], top))
    return _from_top(changed + untracked, top, cwd)


def git_listing(folder: Path) -> list[str] | None:
    """The files under ``folder`` that git tracks or would track (untracked and not ignored), relative to
    it with forward slashes; None when git is missing, the folder is not in a working tree, git fails
    (then the folder is walked, which leaves nothing out unlisted), or the folder itself is ignored (it was
    asked for by name: it is walked)."""
    env = {key: value for key, value in os.environ.items() if key not in _GIT_REDIRECTS}
    # no file-system monitor hook: listing files must not start another program
    base = ["git", "-c", "core.fsmonitor=false"]
    try:
        listed = subprocess.run([*base, "ls-files", "-z", "--cached", "--others", "--exclude-standard"],
                                cwd=str(folder), env=env, capture_output=True, check=False)
        if listed.returncode != 0:
            return None
        ignored = subprocess.run([*base, "check-ignore", "-q", "--", "."], cwd=str(folder), env=env,
                                 capture_output=True, check=False)
    except OSError:  # git is not installed (or cannot start)
        return None
    if ignored.returncode == 0:
        return None
    return list(dict.fromkeys(split_z(listed.stdout)))  # an unmerged file is listed once per stage
