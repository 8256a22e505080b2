"""The proof-carrying result cache.

An entry is a JSON file under ``<cache_dir>/v1/<2 hex>/<key>.json``; the key is the sha256 of the claim's
canonical form (the ``repr`` of its obligations, which are frozen dataclasses), the text of every file it
depends on, the named condition sets and the tool version.  Decisive results (``proved``, ``refuted``)
are stored under that key; ``inconclusive`` ones under a key that also covers the time and memory limits,
and only when no limit was hit (a result of a busy machine must not stick).  An inconclusive entry cannot
be re-checked, so it is read back only when inconclusive fails the run anyway (``on_inconclusive =
"fail"``): a forged one can turn a failure into another failure, never into a pass.

Nothing read back is trusted: the file may have been edited by hand or by an attacker.  It is parsed as
JSON (never evaluated, never unpickled), checked field by field, and then
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
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from verifier.model.certificate import (
    Certificate,
    RealSquare,
    ShiftContradiction,
    SignArgument,
    SignContradiction,
)
from verifier.model.claim import Claim, NamedConditionSet
from verifier.model.verdict import ObligationResult, Verdict, Witness
from verifier.pipeline.cache_store import CACHEDIR_TAG, directory_refusal, read_entry_text, write_entry

__all__ = ["CACHEDIR_TAG", "ResultCache", "load_entry", "store_entry", "claim_key", "accept"]

FORMAT = 1
_VERDICTS = ("proved", "refuted", "inconclusive", "error")
_METHODS = (None, "expansion", "ideal", "saturation", "radical", "sign")


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


def _poly_to_json(poly: Any) -> list:
    return [[coefficient, list(exponents)] for coefficient, exponents in poly]


def _certificate_to_json(cert: Certificate) -> dict[str, Any]:
    data: dict[str, Any] = {
        "symbols": list(cert.symbols),
        "target": _poly_to_json(cert.target),
        "power": cert.power,
        "generators": [_poly_to_json(g) for g in cert.generators],
        "cofactors": [_poly_to_json(c) for c in cert.cofactors],
    }
    if cert.sign is not None:
        arg = cert.sign
        data["sign"] = {
            "root": arg.root,
            "multiplier": _poly_to_json(arg.multiplier),
            "nonnegative": _poly_to_json(arg.nonnegative),
            "nonnegative_cofactors": [_poly_to_json(c) for c in arg.nonnegative_cofactors],
            "nonnegative_symbols": list(arg.nonnegative_symbols),
            "hypotheses": [[_poly_to_json(h), lam] for h, lam in arg.hypotheses],
        }
    if cert.shift_contradiction is not None:
        shifted = cert.shift_contradiction
        data["shift_contradiction"] = {
            "bound": _poly_to_json(shifted.bound),
            "bound_strict": shifted.bound_strict,
            "variable": shifted.variable,
            "shift": shifted.shift,
            "other": _poly_to_json(shifted.other),
            "other_strict": shifted.other_strict,
            "nonnegative_symbols": list(shifted.nonnegative_symbols),
        }
    if cert.real_square is not None:
        data["real_square"] = {
            "remainder": _poly_to_json(cert.real_square.remainder),
            "nonnegative_symbols": list(cert.real_square.nonnegative_symbols),
        }
    if cert.contradiction is not None:
        con = cert.contradiction
        data["contradiction"] = {
            "first": _poly_to_json(con.first),
            "first_strict": con.first_strict,
            "second": _poly_to_json(con.second),
            "second_strict": con.second_strict,
            "ratio": con.ratio,
            "constant": con.constant,
        }
    return data


def _witness_to_json(witness: Witness | None) -> dict[str, Any] | None:
    if witness is None:
        return None
    return {
        "values": [[name, value] for name, value in witness.values],
        "left": witness.left,
        "right": witness.right,
        "exact": witness.exact,
    }


def result_to_json(result: ObligationResult) -> dict[str, Any]:
    return {
        "label": result.label,
        "verdict": result.verdict,
        "method": result.method,
        "reason": result.reason,
        "counter_normal_form": result.counter_normal_form,
        "witness": _witness_to_json(result.witness),
        "assumed": list(result.assumed),
        "certificate": None if result.certificate is None else _certificate_to_json(result.certificate),
        "vacuous": result.vacuous,
    }


def _str(value: Any) -> str:
    if not isinstance(value, str):
        raise Invalid("expected a string")
    return value


def _opt_str(value: Any) -> str | None:
    return None if value is None else _str(value)


def _int(value: Any) -> int:
    if not isinstance(value, int) or isinstance(value, bool):
        raise Invalid("expected an integer")
    return value


def _list(value: Any) -> list:
    if not isinstance(value, list):
        raise Invalid("expected a list")
    return value


def _poly_from_json(value: Any, width: int) -> tuple[tuple[str, tuple[int, ...]], ...]:
    terms = []
    for term in _list(value):
        pair = _list(term)
        if len(pair) != 2:
            raise Invalid("a term is [coefficient, exponents]")
        coefficient = _str(pair[0])
        exponents = tuple(_int(e) for e in _list(pair[1]))
        if len(exponents) != width or any(e < 0 for e in exponents):
            raise Invalid("exponent vector of the wrong shape")
        terms.append((coefficient, exponents))
    return tuple(terms)


def _certificate_from_json(value: Any) -> Certificate | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("certificate must be an object")
    symbols = tuple(_str(s) for s in _list(value.get("symbols")))
    width = len(symbols)
    power = _int(value.get("power"))
    if power < 1:
        raise Invalid("certificate power must be >= 1")
    generators = tuple(_poly_from_json(g, width) for g in _list(value.get("generators")))
    cofactors = tuple(_poly_from_json(c, width) for c in _list(value.get("cofactors")))
    if len(generators) != len(cofactors):
        raise Invalid("one cofactor per generator")
    return Certificate(symbols, _poly_from_json(value.get("target"), width), power, generators, cofactors,
                       _sign_from_json(value.get("sign"), width), _contradiction_from_json(value.get("contradiction"), width),
                       _real_square_from_json(value.get("real_square"), width),
                       _shift_from_json(value.get("shift_contradiction"), width))


def _shift_from_json(value: Any, width: int) -> ShiftContradiction | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("shift_contradiction must be an object")
    return ShiftContradiction(
        bound=_poly_from_json(value.get("bound"), width),
        bound_strict=_bool(value.get("bound_strict")),
        variable=_str(value.get("variable")),
        shift=_str(value.get("shift")),
        other=_poly_from_json(value.get("other"), width),
        other_strict=_bool(value.get("other_strict")),
        nonnegative_symbols=tuple(_str(s) for s in _list(value.get("nonnegative_symbols"))),
    )


def _real_square_from_json(value: Any, width: int) -> RealSquare | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("real_square must be an object")
    return RealSquare(_poly_from_json(value.get("remainder"), width),
                      tuple(_str(s) for s in _list(value.get("nonnegative_symbols"))))


def _bool(value: Any) -> bool:
    if not isinstance(value, bool):
        raise Invalid("expected a boolean")
    return value


def _sign_from_json(value: Any, width: int) -> SignArgument | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("sign must be an object")
    hypotheses = []
    for item in _list(value.get("hypotheses", [])):
        pair = _list(item)
        if len(pair) != 2:
            raise Invalid("a sign hypothesis is [polynomial, weight]")
        hypotheses.append((_poly_from_json(pair[0], width), _str(pair[1])))
    return SignArgument(
        root=_str(value.get("root")),
        multiplier=_poly_from_json(value.get("multiplier"), width),
        nonnegative=_poly_from_json(value.get("nonnegative"), width),
        nonnegative_cofactors=tuple(_poly_from_json(c, width) for c in _list(value.get("nonnegative_cofactors"))),
        nonnegative_symbols=tuple(_str(s) for s in _list(value.get("nonnegative_symbols"))),
        hypotheses=tuple(hypotheses),
    )


def _contradiction_from_json(value: Any, width: int) -> SignContradiction | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("contradiction must be an object")
    return SignContradiction(
        first=_poly_from_json(value.get("first"), width),
        first_strict=_bool(value.get("first_strict")),
        second=_poly_from_json(value.get("second"), width),
        second_strict=_bool(value.get("second_strict")),
        ratio=_str(value.get("ratio")),
        constant=_str(value.get("constant")),
    )


def _witness_from_json(value: Any) -> Witness | None:
    if value is None:
        return None
    if not isinstance(value, dict):
        raise Invalid("witness must be an object")
    values = []
    for item in _list(value.get("values")):
        pair = _list(item)
        if len(pair) != 2:
            raise Invalid("a witness value is [name, value]")
        values.append((_str(pair[0]), _str(pair[1])))
    exact = value.get("exact")
    if not isinstance(exact, bool):
        raise Invalid("witness.exact must be a boolean")
    return Witness(tuple(values), _str(value.get("left")), _str(value.get("right")), exact)


def result_from_json(value: Any) -> ObligationResult:
    if not isinstance(value, dict):
        raise Invalid("an obligation result must be an object")
    verdict = value.get("verdict")
    method = value.get("method")
    if verdict not in _VERDICTS or method not in _METHODS:
        raise Invalid("unknown verdict or method")
    vacuous = value.get("vacuous", False)
    if not isinstance(vacuous, bool):
        raise Invalid("vacuous must be a boolean")
    return ObligationResult(
        label=_str(value.get("label")),
        verdict=verdict,
        method=method,
        reason=_str(value.get("reason")),
        counter_normal_form=_opt_str(value.get("counter_normal_form")),
        witness=_witness_from_json(value.get("witness")),
        assumed=tuple(_str(a) for a in _list(value.get("assumed"))),
        certificate=_certificate_from_json(value.get("certificate")),
        vacuous=vacuous,
    )


# ---------------------------------------------------------------- re-checking what was read


def _proof_holds(claim: Claim, index: int, result: ObligationResult) -> bool:
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
    claim: Claim, results: Sequence[ObligationResult], seconds: float, *, allow_inconclusive: bool = False,
    timeout: float = 10.0,
) -> Verdict | None:
    """The verdict rebuilt from results read back from the cache, or None if any check fails.

    Every proof and every witness is re-checked, and every text is derived again (``cache_texts``); an
    ``inconclusive`` claim (which cannot be re-checked) is accepted only when ``allow_inconclusive``,
    i.e. when inconclusive fails the run anyway.  ``timeout`` bounds recomputing the counter-normal-form.
    """
    from verifier.algebra.decide import combine
    from verifier.pipeline.cache_texts import inconclusive_texts, proved_texts, refuted_texts

    if claim.problem is not None or len(results) != len(claim.obligations) or not results:
        return None
    checked: list[ObligationResult] = []
    for index, (obligation, result) in enumerate(zip(claim.obligations, results)):
        if result.label != obligation.label:
            return None
        if result.verdict == "proved":
            if not _proof_holds(claim, index, result):
                return None
            texts = proved_texts(obligation, result)
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
        dependency_text: Callable[[str], str | None],
        limits: tuple[float, int] = (10.0, 2048),
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
        # why this folder must not be used (a symbolic link, a folder of someone else's), or None
        self.refused: str | None = directory_refusal(self.directory)

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
