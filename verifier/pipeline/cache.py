"""The proof-carrying result cache.

An entry is a JSON file under ``<cache_dir>/v1/<2 hex>/<key>.json``; the key is the sha256 of the claim's
canonical form (the ``repr`` of its obligations, which are frozen dataclasses: what the code it depends
on was executed into), the paths of the files they came from, the named condition sets and the tool
version; not the texts of those files, so an edit elsewhere in a file keeps every other claim's entry.  Decisive results (``proved``, ``refuted``)
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
field has no effect, and every text reported for a cached result (method, reason, assumptions, the
counter-normal-form, "vacuously") is derived again from the claim and the re-checked certificate or
witness, never taken from the stored words.  Any failure means a cache miss: the claim is decided again
and the entry rewritten.

The store (``cache_store``) never writes outside the cache folder: it refuses a cache path that is a
symbolic link or a folder it did not create, walks into its subfolders without following links, writes
each entry atomically and removes its temporary file on any failure, and reads only regular files of
bounded size.
"""
from __future__ import annotations

import hashlib
import json
import os
import time
from collections.abc import Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from verifier.algebra.kernel.codec import result_from_json, to_json
from verifier.model.claim import Claim, NamedConditionSet
from verifier.model.limits import DEFAULT_MEMORY_MB, DEFAULT_TIMEOUT_SECONDS
from verifier.model.verdict import ObligationResult, Verdict, Witness
from verifier.pipeline.cache_store import CACHEDIR_TAG, directory_refusal, read_entry_text, write_entry

__all__ = ["CACHEDIR_TAG", "ResultCache", "load_entry", "store_entry", "claim_key", "accept"]

FORMAT = 2  # 2: one certificate class per proof kind (entries of format 1 are misses)


class Invalid(Exception):
    """A cache entry that does not have the expected shape."""


# ---------------------------------------------------------------- key


def claim_key(claim: Claim, *, version: str, conditions: Sequence[NamedConditionSet]) -> str:
    """sha256 over everything a claim's verdict depends on: its text and kind, its obligations (the
    expressions and conditions the code was executed into, so the code it depends on, inlined helpers
    included), the files they came from, the named condition sets and the tool version.  The texts of
    those files are deliberately left out, as is the location: editing a comment or another function of
    the file, or moving the code, leaves the key as it is."""
    material = json.dumps(
        [
            "idealcheck-result",
            FORMAT,
            version,
            claim.kind,
            claim.text,
            repr(claim.obligations),
            repr(claim.notes),
            sorted(set(claim.dependencies) | {claim.location.path}),
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


def _proof_translation(claim: Claim, index: int, result: ObligationResult) -> Any:
    """The obligation's translation when the result's certificate belongs to it and re-checks (as
    ``algebra.decide.certificate_matches`` decides), else None; translated once, and the texts are
    derived from the same translation."""
    # the algebra (sympy) loads only when a cached proof is re-checked: keeps `idealcheck --help` fast
    from verifier.algebra.facts import claim_facts
    from verifier.algebra.kernel.tie import certificate_fits
    from verifier.algebra.translate import TranslationError, translate

    if claim.problem is not None or result.verdict != "proved" or result.certificate is None:
        return None
    try:
        tr = translate(claim.obligations[index])
        return tr if certificate_fits(result.certificate, claim_facts(tr)) else None
    except (TranslationError, RecursionError):
        return None
    except Exception:  # a malformed certificate that slipped through the shape checks: not a proof
        return None


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
    claim: Claim, results: Sequence[ObligationResult], seconds: float, *, allow_inconclusive: bool = False,
    timeout: float = 10.0,
) -> Verdict | None:
    """The verdict rebuilt from results read back from the cache, or None if any check fails.

    Every proof and every witness is re-checked, and every text is derived again (``cache_texts``); an
    ``inconclusive`` claim (which cannot be re-checked) is accepted only when ``allow_inconclusive``,
    i.e. when inconclusive fails the run anyway.  ``timeout`` bounds recomputing the counter-normal-form.
    """
    # the algebra (sympy) loads only when cached results are read back: keeps `idealcheck --help` fast
    from verifier.algebra.decide import combine
    from verifier.pipeline.cache_texts import inconclusive_texts, proved_texts, refuted_texts

    if claim.problem is not None or len(results) != len(claim.obligations) or not results:
        return None
    checked: list[ObligationResult] = []
    for index, (obligation, result) in enumerate(zip(claim.obligations, results)):
        if result.label != obligation.label:
            return None
        if result.verdict == "proved":
            translation = _proof_translation(claim, index, result)
            if translation is None:
                return None
            texts = proved_texts(obligation, result, translation)
            if texts is None:
                return None
            result = texts
        elif result.verdict == "refuted":
            rechecked = _rechecked_refutation(claim, index, result)
            if rechecked is None:
                return None
            result = refuted_texts(obligation, rechecked, timeout)
        elif result.verdict == "inconclusive":
            result = inconclusive_texts(result)
        else:
            return None
        checked.append(result)
    verdict = combine(claim, tuple(checked), round(seconds, 3))
    wanted = ("proved", "refuted", "inconclusive") if allow_inconclusive else ("proved", "refuted")
    if verdict.verdict not in wanted:
        return None
    return replace(verdict, cached=True)


# ---------------------------------------------------------------- the cache


def _hit_a_limit(verdict: Verdict) -> bool:
    return verdict.limit is not None or any(r.limit is not None for r in verdict.obligations)


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

    def parts(self, *, inconclusive: bool = False) -> tuple[str, str, str]:
        key = self.inconclusive if inconclusive else self.decisive
        return f"v{FORMAT}", key[:2], f"{key}.json"

    def path(self, *, inconclusive: bool = False) -> Path:
        return Path(self.directory).joinpath(*self.parts(inconclusive=inconclusive))


def _load_one(claim: Claim, slot: EntrySlot, inconclusive: bool, timeout: float) -> tuple[Verdict | None, bool]:
    """(verdict, rejected): the re-checked verdict of one entry, and whether an entry was there but refused."""
    start = time.monotonic()
    path = slot.path(inconclusive=inconclusive)
    if not os.path.lexists(path):
        return None, False
    raw = read_entry_text(path)  # None for anything but a regular file of bounded size
    if raw is None:
        return None, True
    try:
        document = json.loads(raw)
        if not isinstance(document, dict) or document.get("format") != FORMAT:
            raise Invalid("not a cache entry of this format")
        if document.get("key") != path.stem:
            raise Invalid("entry of another claim")
        results = tuple(result_from_json(r) for r in _list(document.get("obligations")))
        verdict = accept(claim, results, time.monotonic() - start, allow_inconclusive=inconclusive, timeout=timeout)
        if verdict is not None and (verdict.verdict == "inconclusive") != inconclusive:
            verdict = None
    except (Invalid, ValueError, TypeError, RecursionError):
        verdict = None
    return verdict, verdict is None


def load_entry(claim: Claim, slot: EntrySlot, stats: CacheStats | None = None, *, timeout: float = 10.0) -> Verdict | None:
    """The cached verdict of ``claim`` after every check, or None (then the claim must be decided)."""
    stats = stats if stats is not None else CacheStats()
    if claim.problem is not None or not claim.obligations:
        return None
    for inconclusive in ((False, True) if slot.reuse_inconclusive else (False,)):
        verdict, rejected = _load_one(claim, slot, inconclusive, timeout)
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
    if _hit_a_limit(verdict):
        return False
    inconclusive = verdict.verdict == "inconclusive"
    if verdict.verdict not in ("proved", "refuted", "inconclusive"):
        return False
    parts = slot.parts(inconclusive=inconclusive)
    document = {
        "format": FORMAT,
        "key": parts[-1][: -len(".json")],
        "tool_version": slot.version,
        "claim": claim.id,
        "text": claim.text,
        "verdict": verdict.verdict,  # informative only: the verdict is recombined on reading
        "obligations": [result_to_json(r) for r in verdict.obligations],
    }
    try:
        text = json.dumps(document, ensure_ascii=True, indent=1)  # ASCII: names that are not UTF-8 survive
    except (ValueError, TypeError, RecursionError):
        return False
    return write_entry(Path(slot.directory), parts, text)


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
        limits: tuple[float, int] = (DEFAULT_TIMEOUT_SECONDS, DEFAULT_MEMORY_MB),
        reuse_inconclusive: bool = False,
    ) -> None:
        self.directory = Path(directory)
        self.limits = limits  # (timeout, memory_mb): part of the key of inconclusive entries
        self.reuse_inconclusive = reuse_inconclusive
        self.version = version
        self.conditions = tuple(conditions)
        self.stats = CacheStats()
        self._keys: dict[str, str] = {}
        # why this folder must not be used (a symbolic link, a folder of someone else's), or None
        self.refused: str | None = directory_refusal(self.directory)

    def key(self, claim: Claim) -> str:
        if claim.id not in self._keys:
            self._keys[claim.id] = claim_key(claim, version=self.version, conditions=self.conditions)
        return self._keys[claim.id]

    def slot(self, claim: Claim) -> EntrySlot:
        key = self.key(claim)
        material = json.dumps([key, "inconclusive", float(self.limits[0]), int(self.limits[1])])
        inconclusive = hashlib.sha256(material.encode("ascii")).hexdigest()
        return EntrySlot(str(self.directory), key, inconclusive, self.reuse_inconclusive, self.version)

    def entry_path(self, claim: Claim, *, inconclusive: bool = False) -> Path:
        return self.slot(claim).path(inconclusive=inconclusive)

    def load(self, claim: Claim) -> Verdict | None:
        if self.refused is not None:
            return None
        return load_entry(claim, self.slot(claim), self.stats, timeout=float(self.limits[0]))

    def store(self, claim: Claim, verdict: Verdict) -> None:
        if self.refused is None and store_entry(claim, verdict, self.slot(claim)):
            self.stats.stored += 1

    def record(self, verdict: Verdict, *, stored: bool) -> None:
        """Count what a worker process did with this cache's entries."""
        if verdict.cached:
            self.stats.hits += 1
        else:
            self.stats.misses += 1
            self.stats.stored += int(stored)
