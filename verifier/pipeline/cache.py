"""The proof-carrying result cache.

An entry is a JSON file under ``<cache_dir>/v1/<2 hex>/<key>.json``; the key is the sha256 of the claim's
canonical form (the ``repr`` of its obligations, which are frozen dataclasses), the text of every file it
depends on, the named condition sets and the tool version.  Decisive results (``proved``, ``refuted``)
are stored under that key; ``inconclusive`` ones under a key that also covers the time and memory limits,
and only when no limit was hit (a result of a busy machine must not stick).  An inconclusive entry cannot
be re-checked, so it is read back only when inconclusive fails the run anyway (``on_inconclusive =
"fail"``): a forged one can turn a failure into another failure, never into a pass.

Nothing read back is trusted: the file may have been edited by hand or by an attacker.  It is parsed as
JSON (never evaluated, never unpickled), read field by field by the kernel's strict codec
(``algebra/kernel/codec.py``), and then
- a ``proved`` obligation is accepted only if its certificate belongs to this claim's translation and
  re-checks by plain expansion (``algebra.decide.certificate_matches``);
- a ``refuted`` obligation only if its witness re-checks against the obligation
  (``algebra.witness.check_witness``).
The claim's verdict is then combined afresh from the accepted obligation results, so a flipped top-level
field has no effect.  Any failure means a cache miss: the claim is decided again and the entry rewritten.
"""
from __future__ import annotations

import hashlib
import json
import os
import tempfile
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from verifier.algebra.kernel.codec import result_from_json, to_json
from verifier.model.claim import Claim, NamedConditionSet
from verifier.model.limits import DEFAULT_MEMORY_MB, DEFAULT_TIMEOUT_SECONDS
from verifier.model.verdict import ObligationResult, Verdict, Witness

FORMAT = 1
CACHEDIR_TAG = "Signature: 8a477f597d28d172789f06886806bc55\n# idealcheck result cache; safe to delete.\n"


class Invalid(Exception):
    """A cache entry that does not have the expected shape."""


# ---------------------------------------------------------------- key


def claim_key(
    claim: Claim,
    *,
    version: str,
    conditions: Sequence[NamedConditionSet],
    dependency_text: Callable[[str], str | None],
) -> str:
    """sha256 over everything a claim's verdict depends on (its location is deliberately left out)."""
    dependencies = sorted(set(claim.dependencies) | {claim.location.path})
    digests = []
    for path in dependencies:
        text = dependency_text(path)
        digest = "missing" if text is None else hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()
        digests.append([path, digest])
    material = json.dumps(
        [
            "idealcheck-result",
            FORMAT,
            version,
            claim.kind,
            claim.text,
            repr(claim.obligations),
            repr(claim.notes),
            digests,
            repr(tuple(conditions)),
        ],
        ensure_ascii=True,
    )
    return hashlib.sha256(material.encode("ascii")).hexdigest()


# ---------------------------------------------------------------- JSON <-> results


def _list(value: Any) -> list:
    if not isinstance(value, list):
        raise Invalid("expected a list")
    return value


def result_to_json(result: ObligationResult) -> dict[str, Any]:
    """An obligation result as JSON data (the strict codec of the trusted kernel)."""
    return to_json(result)  # type: ignore[no-any-return]


# reading one back is ``result_from_json`` of the kernel's codec (CodecError, a ValueError, when malformed)


# ---------------------------------------------------------------- re-checking what was read


def _proof_holds(claim: Claim, index: int, result: ObligationResult) -> bool:
    # the algebra (sympy) loads only when a cached proof is re-checked: keeps `idealcheck --help` fast
    from verifier.algebra.decide import certificate_matches

    single = replace(claim, obligations=(claim.obligations[index],))
    try:
        return bool(certificate_matches(single, (result,)))
    except Exception:  # a malformed certificate that slipped through the shape checks: not a proof
        return False


def _rechecked_refutation(claim: Claim, index: int, result: ObligationResult) -> ObligationResult | None:
    """The result with its witness re-verified (sides recomputed), or None if the witness does not refute."""
    from verifier.algebra.witness import check_witness

    if result.witness is None or result.counter_normal_form is None:
        return None
    names = [name for name, _value in result.witness.values]
    if len(set(names)) != len(names):
        return None
    obligation = claim.obligations[index]
    try:
        witness = check_witness(obligation.left, obligation.right, obligation.conditions, dict(result.witness.values))
    except Exception:  # an unreadable value is not a witness
        return None
    if not isinstance(witness, Witness):
        return None
    return replace(result, witness=witness)


def accept(
    claim: Claim, results: Sequence[ObligationResult], seconds: float, *, allow_inconclusive: bool = False
) -> Verdict | None:
    """The verdict rebuilt from results read back from the cache, or None if any check fails.

    Every proof and every witness is re-checked; an ``inconclusive`` claim (which cannot be re-checked)
    is accepted only when ``allow_inconclusive``, i.e. when inconclusive fails the run anyway.
    """
    # the algebra (sympy) loads only when cached results are read back: keeps `idealcheck --help` fast
    from verifier.algebra.decide import combine

    if claim.problem is not None or len(results) != len(claim.obligations) or not results:
        return None
    checked: list[ObligationResult] = []
    for index, (obligation, result) in enumerate(zip(claim.obligations, results)):
        if result.label != obligation.label:
            return None
        if result.verdict == "proved":
            if not _proof_holds(claim, index, result):
                return None
        elif result.verdict == "refuted":
            rechecked = _rechecked_refutation(claim, index, result)
            if rechecked is None:
                return None
            result = rechecked
        elif result.verdict != "inconclusive":
            return None
        checked.append(result)
    verdict = combine(claim, tuple(checked), round(seconds, 3))
    wanted = ("proved", "refuted", "inconclusive") if allow_inconclusive else ("proved", "refuted")
    if verdict.verdict not in wanted:
        return None
    return replace(verdict, cached=True)


# ---------------------------------------------------------------- the cache


def _hit_a_limit(verdict: Verdict) -> bool:
    texts = [verdict.reason] + [r.reason for r in verdict.obligations]
    return any("time limit" in t or "memory limit" in t for t in texts)


@dataclass
class CacheStats:
    hits: int = 0
    misses: int = 0
    rejected: int = 0  # entries that were read but failed validation or the re-check
    stored: int = 0


@dataclass(frozen=True)
class EntrySlot:
    """Where a claim's results live, as plain data a worker process can receive."""

    directory: str
    decisive: str  # key of the proved/refuted entry
    inconclusive: str  # key of the inconclusive entry (it also covers the limits)
    reuse_inconclusive: bool
    version: str

    def path(self, *, inconclusive: bool = False) -> Path:
        key = self.inconclusive if inconclusive else self.decisive
        return Path(self.directory) / f"v{FORMAT}" / key[:2] / f"{key}.json"


def _load_one(claim: Claim, slot: EntrySlot, inconclusive: bool) -> tuple[Verdict | None, bool]:
    """(verdict, rejected): the re-checked verdict of one entry, and whether an entry was there but refused."""
    start = time.monotonic()
    path = slot.path(inconclusive=inconclusive)
    try:
        raw = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        return None, False
    try:
        document = json.loads(raw)
        if not isinstance(document, dict) or document.get("format") != FORMAT:
            raise Invalid("not a cache entry of this format")
        if document.get("key") != path.stem:
            raise Invalid("entry of another claim")
        results = tuple(result_from_json(r) for r in _list(document.get("obligations")))
        verdict = accept(claim, results, time.monotonic() - start, allow_inconclusive=inconclusive)
        if verdict is not None and (verdict.verdict == "inconclusive") != inconclusive:
            verdict = None
    except (Invalid, ValueError, TypeError, RecursionError):
        verdict = None
    return verdict, verdict is None


def load_entry(claim: Claim, slot: EntrySlot, stats: CacheStats | None = None) -> Verdict | None:
    """The cached verdict of ``claim`` after every check, or None (then the claim must be decided)."""
    stats = stats if stats is not None else CacheStats()
    if claim.problem is not None or not claim.obligations:
        return None
    for inconclusive in ((False, True) if slot.reuse_inconclusive else (False,)):
        verdict, rejected = _load_one(claim, slot, inconclusive)
        if rejected:
            stats.rejected += 1
        if verdict is not None:
            stats.hits += 1
            return verdict
    stats.misses += 1
    return None


def store_entry(claim: Claim, verdict: Verdict, slot: EntrySlot) -> bool:
    """Write a fresh verdict (atomically); False when there is nothing worth storing or the disk refuses."""
    if not verdict.obligations or verdict.cached:
        return False
    if verdict.verdict == "inconclusive":
        if _hit_a_limit(verdict):
            return False
        path = slot.path(inconclusive=True)
    elif verdict.verdict in ("proved", "refuted"):
        path = slot.path()
    else:
        return False
    document = {
        "format": FORMAT,
        "key": path.stem,
        "tool_version": slot.version,
        "claim": claim.id,
        "text": claim.text,
        "verdict": verdict.verdict,  # informative only: the verdict is recombined on reading
        "obligations": [result_to_json(r) for r in verdict.obligations],
    }
    try:
        _prepare(Path(slot.directory))
        path.parent.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=".tmp-", suffix=".json")
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            json.dump(document, out, ensure_ascii=False, indent=1)
        os.replace(temporary, path)
        return True
    except OSError:
        return False  # a read-only or full disk costs speed, never correctness


def _prepare(directory: Path) -> None:
    if (directory / "CACHEDIR.TAG").exists():
        return
    directory.mkdir(parents=True, exist_ok=True)
    (directory / "CACHEDIR.TAG").write_text(CACHEDIR_TAG, encoding="utf-8")
    (directory / ".gitignore").write_text("# written by idealcheck\n*\n", encoding="utf-8")


class ResultCache:
    """Results of decided claims on disk, re-checked on every read.

    ``slot(claim)`` gives the plain-data location that worker processes use with ``load_entry`` and
    ``store_entry``; ``load`` and ``store`` do the same in this process.
    """

    def __init__(
        self,
        directory: str | os.PathLike[str],
        *,
        version: str,
        conditions: Sequence[NamedConditionSet] = (),
        dependency_text: Callable[[str], str | None],
        limits: tuple[float, int] = (DEFAULT_TIMEOUT_SECONDS, DEFAULT_MEMORY_MB),
        reuse_inconclusive: bool = False,
    ) -> None:
        self.directory = Path(directory)
        self.limits = limits  # (timeout, memory_mb): part of the key of inconclusive entries
        self.reuse_inconclusive = reuse_inconclusive
        self.version = version
        self.conditions = tuple(conditions)
        self.dependency_text = dependency_text
        self.stats = CacheStats()
        self._keys: dict[str, str] = {}

    def key(self, claim: Claim) -> str:
        if claim.id not in self._keys:
            self._keys[claim.id] = claim_key(
                claim, version=self.version, conditions=self.conditions, dependency_text=self.dependency_text
            )
        return self._keys[claim.id]

    def slot(self, claim: Claim) -> EntrySlot:
        key = self.key(claim)
        material = json.dumps([key, "inconclusive", float(self.limits[0]), int(self.limits[1])])
        inconclusive = hashlib.sha256(material.encode("ascii")).hexdigest()
        return EntrySlot(str(self.directory), key, inconclusive, self.reuse_inconclusive, self.version)

    def entry_path(self, claim: Claim, *, inconclusive: bool = False) -> Path:
        return self.slot(claim).path(inconclusive=inconclusive)

    def load(self, claim: Claim) -> Verdict | None:
        return load_entry(claim, self.slot(claim), self.stats)

    def store(self, claim: Claim, verdict: Verdict) -> None:
        if store_entry(claim, verdict, self.slot(claim)):
            self.stats.stored += 1

    def record(self, verdict: Verdict, *, stored: bool) -> None:
        """Count what a worker process did with this cache's entries."""
        if verdict.cached:
            self.stats.hits += 1
        else:
            self.stats.misses += 1
            self.stats.stored += int(stored)
