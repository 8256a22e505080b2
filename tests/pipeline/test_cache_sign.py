"""Cached proofs by the sign argument and by contradictory hypotheses: round trip, and tampering.

Facts used (common practice): sqrt(x**2) == x exactly when x >= 0; the hypotheses a > b and a <= b
cannot hold together.
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from verifier.algebra.decide import Limits, decide
from verifier.pipeline.cache import ResultCache
from verifier.claims.language import parse_claim_text
from verifier.model.certificate import RealSquareCertificate, ShiftContradictionCertificate
from verifier.model.claim import Claim, Location, Obligation


def _claim(line: int, text: str) -> Claim:
    parsed = parse_claim_text(text, {})
    return Claim(f"k.c:{line}:1", Location("k.c", line, 1), "expression", text,
                 (Obligation(parsed.sides[0], parsed.sides[1], parsed.conditions),), dependencies=("k.c",))


SIGN_TRUE = _claim(1, "sqrt(x**2) == x given x >= 0")
SIGN_FALSE = _claim(2, "sqrt(x**2) == x given x >= -1")
VACUOUS = _claim(3, "y == 1 given a > b, a <= b")
NOT_VACUOUS = _claim(4, "y == 1 given a >= b, a <= b")


def _cache(directory: Path) -> ResultCache:
    return ResultCache(directory, version="1.0", conditions=())


@pytest.fixture(scope="module")
def decided():
    out = {c.text: decide(c, Limits(timeout=20)) for c in (SIGN_TRUE, SIGN_FALSE, VACUOUS, NOT_VACUOUS)}
    assert out[SIGN_TRUE.text].verdict == "proved" and out[SIGN_TRUE.text].method == "sign"
    assert out[VACUOUS.text].verdict == "proved" and out[VACUOUS.text].obligations[0].vacuous
    assert out[SIGN_FALSE.text].verdict == "refuted" and out[NOT_VACUOUS.text].verdict == "refuted"
    return out


@pytest.mark.parametrize("claim", [SIGN_TRUE, VACUOUS], ids=["sign", "contradiction"])
def test_round_trip_keeps_the_proof(tmp_path: Path, decided, claim) -> None:
    cache = _cache(tmp_path)
    cache.store(claim, decided[claim.text])
    loaded = cache.load(claim)
    assert loaded is not None and loaded.verdict == "proved" and loaded.method == "sign"


@pytest.mark.parametrize("true_claim,false_claim", [(SIGN_TRUE, SIGN_FALSE), (VACUOUS, NOT_VACUOUS)],
                         ids=["sign", "contradiction"])
def test_a_borrowed_proof_never_passes_the_false_claim(tmp_path: Path, decided, true_claim, false_claim) -> None:
    cache = _cache(tmp_path)
    cache.store(true_claim, decided[true_claim.text])
    cache.store(false_claim, decided[false_claim.text])
    stolen = json.loads(cache.entry_path(true_claim).read_text(encoding="utf-8"))
    stolen["key"] = cache.key(false_claim)
    cache.entry_path(false_claim).write_text(json.dumps(stolen), encoding="utf-8")
    loaded = cache.load(false_claim)
    assert loaded is None or loaded.verdict != "proved"


def test_a_widened_sign_fact_is_rejected(tmp_path: Path, decided) -> None:
    cache = _cache(tmp_path)
    cache.store(SIGN_FALSE, decided[SIGN_FALSE.text])
    cache.store(SIGN_TRUE, decided[SIGN_TRUE.text])
    document = json.loads(cache.entry_path(SIGN_TRUE).read_text(encoding="utf-8"))
    # claim the certificate for the false claim, whose hypothesis x >= -1 does not make x nonnegative
    document["key"] = cache.key(SIGN_FALSE)
    cache.entry_path(SIGN_FALSE).write_text(json.dumps(document), encoding="utf-8")
    loaded = cache.load(SIGN_FALSE)
    assert loaded is None or loaded.verdict != "proved"


REAL_SQUARE = _claim(5, "x == 0 given x**2 + y**2 == 0")


def test_a_real_square_proof_survives_the_round_trip(tmp_path: Path) -> None:
    verdict = decide(REAL_SQUARE, Limits(timeout=20))
    assert verdict.verdict == "proved" and isinstance(verdict.obligations[0].certificate, RealSquareCertificate)
    cache = _cache(tmp_path)
    cache.store(REAL_SQUARE, verdict)
    loaded = cache.load(REAL_SQUARE)
    assert loaded is not None and loaded.verdict == "proved"
    # a tampered remainder (now negative) is rejected
    document = json.loads(cache.entry_path(REAL_SQUARE).read_text(encoding="utf-8"))
    remainder = document["obligations"][0]["certificate"]["remainder"]
    remainder[0][0] = "-" + remainder[0][0]
    cache.entry_path(REAL_SQUARE).write_text(json.dumps(document), encoding="utf-8")
    loaded = cache.load(REAL_SQUARE)
    assert loaded is None or loaded.verdict != "proved"


SHIFTED = _claim(6, "y == 5 given r > 1, r*r <= 1")


def test_a_shifted_contradiction_survives_the_round_trip(tmp_path: Path) -> None:
    verdict = decide(SHIFTED, Limits(timeout=20))
    assert verdict.verdict == "proved" and isinstance(verdict.obligations[0].certificate, ShiftContradictionCertificate)
    cache = _cache(tmp_path)
    cache.store(SHIFTED, verdict)
    loaded = cache.load(SHIFTED)
    assert loaded is not None and loaded.verdict == "proved"
    document = json.loads(cache.entry_path(SHIFTED).read_text(encoding="utf-8"))
    document["obligations"][0]["certificate"]["bound_strict"] = False
    cache.entry_path(SHIFTED).write_text(json.dumps(document), encoding="utf-8")
    loaded = cache.load(SHIFTED)
    assert loaded is None or loaded.verdict != "proved"
