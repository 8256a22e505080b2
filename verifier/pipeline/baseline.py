"""Accepted known results kept in a file (the baseline): each entry names a claim by its file and its text,
not its line, so that an entry survives code moving, and says which verdict is accepted for it.

A claim matched by an entry gets that entry as its ``Expectation`` (as an inline ``expect`` would give):
it passes while its verdict is the accepted one, and any other verdict, a proof included, is reported
and fails, so the baseline cannot silently go out of date.  An entry that matches no claim any more
(the claim was edited, moved to another file or deleted) is stale and reported.  Several claims with the
same text in one file are matched to the entries in order.  A claim with an inline ``expect`` is left to
that marker.

The file is JSON, one entry per line so that its diffs read well::

    {
      "idealcheck_baseline": 1,
      "claims": [
        {"path": "src/tank.py", "claim": "sqrt(h**2) == h", "verdict": "inconclusive", "reason": ""}
      ]
    }

Paths are relative to the baseline file's folder, with forward slashes.  The file comes from the
repository (possibly from a pull request), so it is read as data only, with a size cap, and checked
strictly: any mistake is a ``BaselineError`` naming the file and the entry.
"""
from __future__ import annotations

import dataclasses
import json
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from verifier.model.claim import Claim, Expectation
from verifier.model.paths import relative_path
from verifier.model.verdict import Verdict
from verifier.pipeline.config import Config
from verifier.pipeline.reading import read_regular_bytes

FORMAT_KEY = "idealcheck_baseline"
FORMAT_VERSION = 1
DEFAULT_BASELINE = ".idealcheck-baseline.json"  # in the folder of the pyproject.toml
MAX_BASELINE_BYTES = 16 * 1024 * 1024
ENTRY_KEYS = ("path", "claim", "verdict", "reason")
AcceptedVerdict = Literal["refuted", "inconclusive", "error"]
ACCEPTED_VERDICTS: tuple[AcceptedVerdict, ...] = ("refuted", "inconclusive", "error")


class BaselineError(Exception):
    """The baseline file cannot be used; the message names the file (and the entry)."""


@dataclass(frozen=True)
class BaselineEntry:
    path: str  # relative to the baseline's folder, forward slashes
    claim: str  # the claim text, as the reports print it
    verdict: AcceptedVerdict
    reason: str = ""
    line: int = 0  # where the entry is in the file (for messages); 0 when not known


@dataclass(frozen=True)
class Baseline:
    shown: str  # the file as messages name it (relative to the working directory)
    folder: Path  # the file's folder: entry paths are relative to it
    entries: tuple[BaselineEntry, ...] = ()


@dataclass(frozen=True)
class StaleEntry:
    """An entry that matches no claim of the files it names."""

    baseline: str
    entry: BaselineEntry

    def message(self) -> str:
        where = f"{self.baseline}:{self.entry.line}" if self.entry.line else self.baseline
        return (f"{where}: stale baseline entry: no claim `{self.entry.claim}` in {self.entry.path} any more "
                f"(accepted {self.entry.verdict}); run `idealcheck baseline` to update the file")


# ---------------------------------------------------------------- reading


def load_baseline(path: Path, shown: str) -> Baseline:
    """The baseline in ``path`` (``shown`` names it in messages)."""
    data, problem, skipped = read_regular_bytes(str(path), shown, MAX_BASELINE_BYTES)
    if data is None:
        why = problem.message if problem is not None else (skipped.reason if skipped is not None else "not read")
        raise BaselineError(f"{shown}: {why}")
    try:
        text = data.decode("utf-8")
        document = json.loads(text)
    except UnicodeDecodeError:
        raise BaselineError(f"{shown}: not UTF-8 text") from None
    except json.JSONDecodeError as exc:
        raise BaselineError(f"{shown}:{exc.lineno}:{exc.colno}: not valid JSON: {exc.msg}") from None
    except RecursionError:
        raise BaselineError(f"{shown}: nested too deeply") from None
    if not isinstance(document, dict) or document.get(FORMAT_KEY) != FORMAT_VERSION:
        raise BaselineError(f"{shown}: not an idealcheck baseline (it needs \"{FORMAT_KEY}\": {FORMAT_VERSION})")
    items = document.get("claims")
    if not isinstance(items, list):
        raise BaselineError(f"{shown}: \"claims\" must be a list of entries")
    lines = text.splitlines()
    entries = [_entry(item, index, shown, lines) for index, item in enumerate(items)]
    return Baseline(shown, path.parent, tuple(entries))


def baseline_location(config: Config, cwd: Path, explicit: Path | None = None) -> tuple[Path, bool]:
    """(the baseline file, whether it was named): ``explicit`` (relative to ``cwd``), else ``baseline`` of
    the configuration (relative to its pyproject.toml), else the default file beside the pyproject.toml."""
    if explicit is not None:
        return cwd / explicit, True
    if config.baseline is not None:
        return config.root / config.baseline, True
    return config.root / DEFAULT_BASELINE, False


def baseline_for_check(config: Config, cwd: Path, explicit: Path | None = None) -> Baseline | None:
    """The baseline a check applies: the default file only when it exists, a named one always (a missing
    named file is a ``BaselineError``)."""
    path, named = baseline_location(config, cwd, explicit)
    if not path.exists() and not path.is_symlink():
        if named:
            raise BaselineError(f"no such file: {relative_path(path, cwd)} (write it with `idealcheck baseline`)")
        return None
    return load_baseline(path, relative_path(path, cwd))


def _entry(item: object, index: int, shown: str, lines: list[str]) -> BaselineEntry:
    where = f"{shown}: entry {index + 1}"
    if not isinstance(item, dict):
        raise BaselineError(f"{where}: must be an object with {', '.join(ENTRY_KEYS)}")
    unknown = [key for key in item if key not in ENTRY_KEYS]
    if unknown:
        raise BaselineError(f"{where}: unknown key {unknown[0]!r} (known: {', '.join(ENTRY_KEYS)})")
    for key in ("path", "claim"):
        if not isinstance(item.get(key), str) or not item[key].strip():
            raise BaselineError(f"{where}: \"{key}\" must be a non-empty string")
    verdict = item.get("verdict")
    if verdict not in ACCEPTED_VERDICTS:
        raise BaselineError(f"{where}: \"verdict\" must be one of {', '.join(ACCEPTED_VERDICTS)}, found {verdict!r}")
    reason = item.get("reason", "")
    if not isinstance(reason, str):
        raise BaselineError(f"{where}: \"reason\" must be a string")
    claim_json = json.dumps(item["claim"], ensure_ascii=False)
    line = next((number for number, text in enumerate(lines, start=1) if claim_json in text), 0)
    path = item["path"].replace("\\", "/")
    return BaselineEntry(path, item["claim"], verdict, reason, line)


# ---------------------------------------------------------------- matching


def _key(claim: Claim, baseline_folder: Path, cwd: str) -> tuple[str, str]:
    return relative_path(Path(cwd, claim.location.path), baseline_folder), claim.text


def _place(claim: Claim) -> tuple[str, int, int, int, str]:
    loc = claim.location
    return loc.path, loc.cell or 0, loc.line, loc.column, claim.id


def _under(path: str, scanned: Sequence[str]) -> bool:
    for argument in scanned:
        argument = argument.rstrip("/")
        if argument in ("", "."):
            if path != ".." and not path.startswith("../"):
                return True
        elif path == argument or path.startswith(argument + "/"):
            return True
    return False


def apply_baseline(claims: Sequence[Claim], baseline: Baseline, cwd: str,
                   scanned: Sequence[str]) -> tuple[list[Claim], list[StaleEntry]]:
    """The claims with the baseline's accepted verdicts attached, and the stale entries among those whose
    file lies under ``scanned`` (paths relative to ``cwd``; entries for files not scanned are not judged)."""
    pending: dict[tuple[str, str], list[BaselineEntry]] = {}
    for entry in baseline.entries:
        pending.setdefault((entry.path, entry.claim), []).append(entry)
    matched: dict[int, Expectation] = {}
    for index in sorted(range(len(claims)), key=lambda i: _place(claims[i])):
        claim = claims[index]
        if claim.expected is not None:
            continue
        queue = pending.get(_key(claim, baseline.folder, cwd))
        if queue:
            entry = queue.pop(0)
            matched[index] = Expectation(entry.verdict, entry.reason, baseline=baseline.shown)
    out = [dataclasses.replace(c, expected=matched[i]) if i in matched else c for i, c in enumerate(claims)]
    stale = [StaleEntry(baseline.shown, entry) for queue in pending.values() for entry in queue
             if _under(relative_path(baseline.folder / entry.path, cwd), scanned)]
    stale.sort(key=lambda item: (item.entry.line, item.entry.path, item.entry.claim))
    return out, stale


# ---------------------------------------------------------------- writing


@dataclass(frozen=True)
class BaselineUpdate:
    """What ``idealcheck baseline`` wrote: the entries and how they differ from the file before."""

    entries: tuple[BaselineEntry, ...]
    added: int
    removed: int
    kept: int
    refuted_left_out: int  # refuted claims not accepted (no --accept-refuted)


def updated_baseline(verdicts: Sequence[Verdict], previous: Baseline | None, folder: Path, cwd: str,
                     scanned: Sequence[str], *, accept_refuted: bool = False) -> BaselineUpdate:
    """The entries for a run's verdicts: every claim that is inconclusive or in error (and refuted with
    ``accept_refuted``) and has no inline ``expect``; an old entry's reason is kept when its claim keeps
    its verdict, and old entries for files outside ``scanned`` stay as they were."""
    old: dict[tuple[str, str, str], list[BaselineEntry]] = {}
    for entry in previous.entries if previous is not None else ():
        old.setdefault((entry.path, entry.claim, entry.verdict), []).append(entry)
    fresh: list[BaselineEntry] = []
    left_out = 0
    for verdict in sorted(verdicts, key=lambda v: _place(v.claim)):
        claim = verdict.claim
        if claim.expected is not None and claim.expected.baseline is None:
            continue  # an inline marker accepts it already
        if verdict.verdict == "refuted" and not accept_refuted:
            left_out += 1
            continue
        if verdict.verdict not in ACCEPTED_VERDICTS:
            continue
        path, text = _key(claim, folder, cwd)
        earlier = old.get((path, text, verdict.verdict))
        reason = earlier.pop(0).reason if earlier else ""
        fresh.append(BaselineEntry(path, text, verdict.verdict, reason))  # type: ignore[arg-type]
    outside = [entry for entry in (previous.entries if previous is not None else ())
               if not _under(relative_path(folder / entry.path, cwd), scanned)]
    entries = tuple(sorted(outside + fresh, key=lambda e: e.path))  # stable: claims keep their order in a file
    before = {(e.path, e.claim, e.verdict) for e in (previous.entries if previous is not None else ())}
    after = {(e.path, e.claim, e.verdict) for e in entries}
    return BaselineUpdate(entries, len(after - before), len(before - after), len(after & before), left_out)


def baseline_text(entries: Sequence[BaselineEntry]) -> str:
    """The file's text: one entry per line, keys in a fixed order."""
    rows = [json.dumps({"path": e.path, "claim": e.claim, "verdict": e.verdict, "reason": e.reason},
                       ensure_ascii=False) for e in entries]
    body = ",\n".join(f"    {row}" for row in rows)
    return (f"{{\n  \"{FORMAT_KEY}\": {FORMAT_VERSION},\n  \"claims\": [\n" + body + ("\n" if rows else "")
            + "  ]\n}\n")


def write_baseline(path: Path, entries: Sequence[BaselineEntry]) -> None:
    """Write the file atomically (a new file renamed over the old one: a symbolic link planted at the
    path is replaced, never followed)."""
    # function-level import: tempfile (with shutil, bz2, lzma, random) serves writing only, so a check
    # that merely reads the baseline does not load it
    import tempfile

    fd, temporary = tempfile.mkstemp(prefix=".idealcheck-baseline-", suffix=".tmp", dir=str(path.parent))
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as out:
            out.write(baseline_text(entries))
        os.replace(temporary, path)
    except BaseException:
        try:
            os.unlink(temporary)
        except OSError:
            pass
        raise
